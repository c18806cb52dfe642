"""Recombination rates: SRH, radiative, Auger/intrinsic, surfaces, inputs."""
import math

import numpy as np
import pytest

from optogen import materials
from optogen.constants import kT_eV, q_C
from optogen.equilibrium import bgn_eV, equilibrium
from optogen.errors import InputError
from optogen.recombination import (DEFECTS, Defect, Recombination, defect_from_table, excess_product_cm6,
                                   intrinsic_rates_cm3_s, radiative_b_trupke2003, srh_shockley_read_hall1952,
                                   surface_j0)

SI = materials.get("Si")
W = 0.016   # 160 um wafer [cm]


# --------------------------------------------------------------------------- SRH

def test_srh_midgap_symmetric_low_and_high_injection():
    # analytic: level at E_i (n1 = p1 = n_i), tau_n0 = tau_p0 = tau:
    # tau_SRH = tau (n + p + 2 n_i) / (n0 + p0 + dn) -> tau (low injection), 2 tau (high injection)
    tau, n0, ni = 1e-3, 1e16, 1e10
    p0 = ni**2 / n0
    for dn, expected in ((1e8, tau), (1e21, 2 * tau)):
        u = srh_shockley_read_hall1952(n0, p0, dn, tau, tau, ni, ni)
        assert dn / u == pytest.approx(expected, rel=1e-4)   # corrections dn/n0, n0/dn <= 1e-5


def test_srh_midgap_via_recombination_on_real_equilibrium():
    # analytic, as above; "mid-gap if absent": no energy -> level at E_i
    eq = equilibrium(SI, 300.0, 1e16, 0.0, bgn_model="none")
    rec = Recombination(defects=(Defect("mid", tau_n0_s=1e-4, tau_p0_s=1e-4),), intrinsic="constant", bgn_model="none",
                        B_rel=0.0)
    si0 = SI.with_(auger_Cn_cm6_s=0.0, auger_Cp_cm6_s=0.0)
    r = rec.rates(si0, eq, np.array([1e8, 1e21]), W)
    tau = np.array([1e8, 1e21]) / r["srh"]
    assert tau == pytest.approx([1e-4, 2e-4], rel=1e-4)
    assert np.all(r["auger"] == 0) and np.all(r["radiative"] == 0) and np.all(r["surface"] == 0)


def test_fe_i_low_injection_lifetime_p_type():
    # analytic: Fe_i (Ev+0.38 eV) in p-type, low injection: tau = 1/(sigma_n v_th,e N_t) (p1/p0 ~ 1e-3)
    # sigma_n = 5e-14 cm^2 (Istratov 1999, from memory); v_th,e(300 K) = 2.05e7 cm/s (Green 1990, from memory)
    eq = equilibrium(SI, 300.0, 0.0, 1e16, bgn_model="none")
    d = defect_from_table({"name": "Fe_i", "density_cm3": 1e12})
    r = Recombination(defects=(d,), bgn_model="none").rates(SI, eq, 1e9, W)
    assert 1e9 / r["srh"] == pytest.approx(1.0 / (5e-14 * 2.05e7 * 1e12), rel=3e-3)


def test_trap_levels_and_n1_p1_product():
    # analytic: n1 p1 = Nc Nv exp(-Eg_eff/kT) = n_i,eff^2, whatever the level
    from optogen.recombination import trap_densities_cm3
    eq = equilibrium(SI, 300.0, 1e15, 0.0)
    for d in DEFECTS.values():
        et = d.level_from_ev_eV(eq.effective_gap_eV, eq.intrinsic_level_eV)
        n1, p1 = trap_densities_cm3(et, eq.effective_gap_eV, eq.nc_cm3, eq.nv_cm3, 300.0)
        assert n1 * p1 == pytest.approx(float(eq.ni_eff_cm3) ** 2, rel=1e-10)
    # FeB at Ec - 0.26 eV: Et - Ev = Eg_eff - 0.26 (analytic)
    feb = DEFECTS["FeB"].level_from_ev_eV(eq.effective_gap_eV, eq.intrinsic_level_eV)
    assert feb == pytest.approx(float(eq.effective_gap_eV) - 0.26)


def test_defect_library_values():
    # Istratov et al. 1999; Macdonald et al. 2004 (from memory), as listed in REFERENCES.md
    fe = DEFECTS["Fe_i"]
    assert (fe.energy_eV, fe.energy_ref, fe.sigma_n_cm2, fe.sigma_p_cm2) == (0.38, "Ev", 5e-14, 7e-17)
    feb = DEFECTS["FeB"]
    assert (feb.energy_eV, feb.energy_ref, feb.sigma_n_cm2, feb.sigma_p_cm2) == (0.26, "Ec", 5e-15, 3e-15)
    assert all(d.source for d in DEFECTS.values())


# --------------------------------------------------------------------------- radiative

def test_radiative_coefficient_trupke2003():
    # B(300 K) = 4.73e-15 cm^3/s (Trupke et al. 2003, J. Appl. Phys. 94, 4930)
    assert radiative_b_trupke2003(300.0) == pytest.approx(4.73e-15, rel=1e-12)
    # Trupke 2003: B rises as the temperature falls (from memory)
    T = np.array([77.0, 150.0, 250.0, 300.0, 350.0])
    assert np.all(np.diff(radiative_b_trupke2003(T)) < 0)


def test_radiative_photon_recycling_and_b_rel():
    # analytic: U = B_rel B (1 - f_PR)(n p - n_i^2)
    eq = equilibrium(SI, 300.0, 1e15, 0.0, bgn_model="none")
    base = Recombination(bgn_model="none").rates(SI, eq, 1e14, W)["radiative"]
    scaled = Recombination(bgn_model="none", B_rel=0.5, photon_recycling=0.2).rates(SI, eq, 1e14, W)["radiative"]
    assert scaled == pytest.approx(0.5 * 0.8 * base, rel=1e-12)
    n0, p0 = float(eq.n0_cm3), float(eq.p0_cm3)
    assert base == pytest.approx(4.73e-15 * ((n0 + 1e14) * (p0 + 1e14) - n0 * p0), rel=1e-10)


# --------------------------------------------------------------------------- intrinsic

def test_richter2012_hand_worked_n_type():
    # Richter et al. 2012, PRB 86, 165202 (formula constants from memory), 300 K, B_rel = 1:
    # n0 = 1e15, p0 = 1e5 (negligible), dn = 1e15 -> n p - ni^2 ~ (n0 + dn) dn = 2e30 cm^-6
    # g_eeh = 1 + 13 (1 - tanh((1e15/3.3e17)^0.66)) = 1 + 13 (1 - tanh(0.021765)) = 13.7171
    # 2.5e-31 g_eeh n0 = 3.4293e-15;  3.0e-29 dn^0.92 = 3e-29 * 6.3096e13 = 1.8929e-15; B_low = 4.73e-15
    # sum = 1.00521e-14 -> U = 2.01043e16 -> tau = 1e15 / 2.01043e16 = 4.9741e-2 s
    aug, rad = intrinsic_rates_cm3_s("richter2012", 1e15, 1e5, 1e15, T_K=300.0)
    assert 1e15 / (aug + rad) == pytest.approx(4.9741e-2, rel=2e-4)    # hand rounding
    # shares: radiative part is B_low (n p - ni^2) (analytic split)
    assert rad == pytest.approx(4.73e-15 * 2e30, rel=1e-6)


def test_richter2012_hand_worked_p_type():
    # Richter 2012 (from memory), p0 = 1e16, n0 = 1e4, dn = 1e14: n p - ni^2 = (p0 + dn) dn = 1.01e30
    # g_ehh = 1 + 7.5 (1 - tanh((1e16/7e17)^0.63)) = 7.98481; 8.5e-32 g_ehh p0 = 6.7871e-15
    # 3.0e-29 (1e14)^0.92 = 2.2757e-16; + 4.73e-15 -> 1.17447e-14; U = 1.18621e16; tau = 8.4302e-3 s
    aug, rad = intrinsic_rates_cm3_s("richter2012", 1e4, 1e16, 1e14, T_K=300.0)
    assert 1e14 / (aug + rad) == pytest.approx(8.4302e-3, rel=2e-4)


def test_kerr_cuevas2002_hand_worked():
    # Kerr & Cuevas 2002, JAP 91, 2473 (from memory): n0 = 1e15, p0 = 1e5, dn = 1e15, n p = 2e30
    # 1.8e-24 (1e15)^0.65 = 1.8e-24 * 5.6234e9 = 1.01221e-14; 6e-25 (1e5)^0.65 = 1.1e-21 (negligible)
    # 3e-27 (1e15)^0.8 = 3.0e-15; + 9.5e-15 -> 2.26221e-14; U = 4.52443e16; tau = 2.2102e-2 s
    aug, rad = intrinsic_rates_cm3_s("kerr_cuevas2002", 1e15, 1e5, 1e15)
    assert 1e15 / (aug + rad) == pytest.approx(2.2102e-2, rel=2e-4)
    # p-type 1e16, dn = 1e14: 6e-25 (1e16)^0.65 = 1.50713e-14; 3e-27 (1e14)^0.8 = 4.7547e-16;
    # + 9.5e-15 -> 2.50468e-14; n p = 1.01e30 -> tau = 1e14 / 2.52973e16 = 3.9530e-3 s
    aug, rad = intrinsic_rates_cm3_s("kerr_cuevas2002", 1e4, 1e16, 1e14)
    assert 1e14 / (aug + rad) == pytest.approx(3.9530e-3, rel=2e-4)


def test_dziewior_schmid_high_injection_ambipolar():
    # Dziewior & Schmid 1977: Cn = 2.8e-31, Cp = 9.9e-32 cm^6/s; high injection tau = 1/((Cn + Cp) dn^2) (analytic)
    dn = 1e18
    auger = intrinsic_rates_cm3_s("dziewior_schmid1977", 1e3, 1e3, dn)[0]
    assert dn / auger == pytest.approx(1 / ((2.8e-31 + 9.9e-32) * dn**2), rel=1e-9)
    # low injection n-type: tau = 1/(Cn n0^2) (analytic)
    auger = intrinsic_rates_cm3_s("dziewior_schmid1977", 1e18, 1e2, 1e10)[0]
    assert 1e10 / auger == pytest.approx(1 / (2.8e-31 * 1e36), rel=1e-6)
    # the "constant" model with the Si record's Cn, Cp (Dziewior & Schmid 1977 values) is the same formula
    assert SI.auger_Cn_cm6_s == 2.8e-31 and SI.auger_Cp_cm6_s == 9.9e-32
    assert intrinsic_rates_cm3_s("constant", 1e18, 1e2, 1e10, material=SI)[0] == pytest.approx(auger, rel=1e-12)


def test_rates_split_matches_published_total():
    # Richter 2012 total (from memory) = Auger share + radiative share reported separately; at 300 K
    # the rates of Recombination equal the published formula with B_rel = 1, no photon recycling
    eq = equilibrium(SI, 300.0, 1e15, 0.0, bgn_model="none")
    r = Recombination(bgn_model="none").rates(SI, eq, 1e15, W)
    n0, p0 = float(eq.n0_cm3), float(eq.p0_cm3)
    aug, rad = intrinsic_rates_cm3_s("richter2012", n0, p0, 1e15, 300.0)
    assert r["auger"] == pytest.approx(aug, rel=1e-12)
    assert r["radiative"] == pytest.approx(rad, rel=1e-12)
    assert r["srh"] == 0 and r["surface"] == 0


def test_dark_rates_are_zero_any_model():
    # analytic: every net rate vanishes at n p = n_i,eff^2 (dn = 0)
    for bgn in ("none", "schenk1998"):
        eq = equilibrium(SI, [250.0, 300.0, 77.0], [1e15, 0.0, 1e17], [0.0, 1e16, 0.0], bgn_model=bgn)
        rec = Recombination(bgn_model=bgn, defects=(Defect("x", tau_n0_s=1e-3, tau_p0_s=1e-3),),
                            front_J0_fA_cm2=10.0, rear_S_cm_s=5.0)
        for v in rec.rates(SI, eq, 0.0, W).values():
            assert np.all(v == 0)


# --------------------------------------------------------------------------- surfaces

def test_surface_j0_and_s_forms():
    # Kane & Swanson 1985: U_s = J0 (n p - n_i^2) / (q n_i^2 W); S form U_s = S dn / W (analytic)
    eq = equilibrium(SI, 298.15, 1e15, 0.0, bgn_model="none")    # at the J0 reference temperature
    n0, p0 = float(eq.n0_cm3), float(eq.p0_cm3)
    dn = 1e14
    r = Recombination(bgn_model="none", front_J0_fA_cm2=10.0, rear_S_cm_s=20.0).rates(SI, eq, dn, W)
    expect = 10e-15 * ((n0 + dn) * (p0 + dn) - n0 * p0) / (q_C * n0 * p0 * W) + 20.0 * dn / W
    assert r["surface"] == pytest.approx(expect, rel=1e-9)
    assert surface_j0(n0, p0, dn, 10.0, W, material=SI, T_K=298.15) == pytest.approx(expect - 20.0 * dn / W,
                                                                                 rel=1e-9)
    # a J0 already at T (no reference temperature) needs no material
    assert surface_j0(n0, p0, dn, 10.0, W, J0_reference_K=None) == pytest.approx(expect - 20.0 * dn / W, rel=1e-9)
    with pytest.raises(InputError, match="J0_reference_K"):
        surface_j0(n0, p0, dn, 10.0, W)         # J0 quoted at 298.15 K but no temperature to carry it to


@pytest.mark.parametrize("T", [250.0, 300.0, 350.0])
@pytest.mark.parametrize("bgn", ["none", "schenk1998"])
def test_public_surface_j0_equals_the_pipeline_rate_at_any_temperature(T, bgn):
    # Kane & Swanson 1985 (from memory): U_s = J0(T) (n p - n_i,eff^2) / (q n_i,eff^2 W), with J0 quoted at
    # 298.15 K and carried as n_i^2(T) = Nc Nv exp(-Eg/kT) (common practice).  Away from 298.15 K the public
    # function once missed that scaling (0.74x at 300 K); all three must agree at every T.
    eq = equilibrium(SI, T, 1e15, 0.0, bgn_model=bgn)
    n0, p0 = float(eq.n0_cm3), float(eq.p0_cm3)
    dn = 1e14
    rec = Recombination(bgn_model=bgn, front_J0_fA_cm2=4.0, rear_J0_fA_cm2=6.0)
    pipeline = float(rec.rates(SI, eq, dn, W)["surface"])
    prep = rec.prepare(SI, eq, W, shape=(1,))
    shift = float(np.ravel(prep.ni2_shift(np.array([dn])))[0])
    hot = float(prep.rates(np.array([dn]))[3][0])
    public = float(surface_j0(n0, p0, dn, 4.0, W, shift, material=SI, T_K=T)
                   + surface_j0(n0, p0, dn, 6.0, W, shift, material=SI, T_K=T))
    assert public == pytest.approx(pipeline, rel=1e-12)
    assert hot == pytest.approx(pipeline, rel=1e-12)
    if bgn == "none":                       # by the formula: n_i,eff^2 = n0 p0 without narrowing
        ni2 = lambda t: SI.nc_cm3(t) * SI.nv_cm3(t) * np.exp(-SI.bandgap_eV(t) / kT_eV(t))
        j0 = 10.0 * ni2(T) / ni2(298.15)
        expect = j0 * 1e-15 * dn * (n0 + p0 + dn) / (q_C * n0 * p0 * W)
        assert pipeline == pytest.approx(expect, rel=1e-9)


def test_excess_product_no_cancellation():
    # analytic: n p - n0 p0 = dn (n0 + p0 + dn), exact even for dn << p0 << n0
    assert excess_product_cm6(1e16, 1e4, 1e-3) == pytest.approx(1e-3 * (1e16 + 1e4 + 1e-3), rel=1e-15)


# --------------------------------------------------------------------------- injection-dependent BGN

def test_schenk_injection_bgn_enters_ni_eff():
    # analytic: with Schenk 1998 the rates vanish at n p = n_i^2 exp(dEg(n, p)/kT), not at n0 p0;
    # radiative U = B (n p - n_i,eff(n, p)^2) with dEg from optogen.equilibrium.bgn_eV
    eq = equilibrium(SI, 300.0, 1e15, 0.0, bgn_model="schenk1998")
    dn = 1e17
    r = Recombination(bgn_model="schenk1998").rates(SI, eq, dn, W)
    n, p = float(eq.n0_cm3) + dn, float(eq.p0_cm3) + dn
    d0 = bgn_eV(SI, 300.0, 1e15, 0.0, float(eq.n0_cm3), float(eq.p0_cm3), model="schenk1998")
    d1 = bgn_eV(SI, 300.0, 1e15, 0.0, n, p, model="schenk1998")
    ni2 = float(eq.n0_cm3 * eq.p0_cm3) * math.exp((d1 - d0) / float(kT_eV(300.0)))
    assert r["radiative"] == pytest.approx(radiative_b_trupke2003(300.0) * (n * p - ni2), rel=1e-9)


def test_excess_product_huge_shift_and_underflowed_dark_product():
    # analytic: with n0 p0 = 0 (below the float range, e.g. Si at 4 K) the narrowing term n0 p0 expm1(shift)
    # is 0 for any shift, so n p - n_i,eff^2 = dn^2 (no 0 x inf = NaN); a shift beyond the float range with
    # n0 p0 > 0 gives -inf (a product the model cannot support), never NaN
    assert excess_product_cm6(0.0, 0.0, 1e16, 1500.0) == 1e32
    assert excess_product_cm6(1e10, 1e10, 1e16, 1500.0) == -math.inf


def test_injection_shift_precise_in_low_injection():
    # The injection narrowing shift (dEg(n0 + dn, p0 + dn) - dEg(n0, p0)) / kT must stay accurate where dn is
    # far below the minority density (near-intrinsic Si at 965 K, n0 ~ p0 ~ 1.1e18 cm^-3): there it is
    # linear in dn (Taylor, analytic: the second-order term is ~ dn / (n0 + p0) ~ 5e-11 relative at 1e8), so
    # shift(dn) / dn is the same constant at 1e4 and 1e8 cm^-3 to 1e-9 (the plain difference of two narrowings
    # of ~20 meV is off by ~3 % at 1e4: one ulp of dEg / kT against a shift of ~1e-15), and at
    # dn = 1e-2 min(n0, p0) it agrees with the plain difference (no digits lost there) to 1e-10
    eq = equilibrium(SI, 965.0, 0.0, 6e11, bgn_model="schenk1998")
    prep = Recombination(bgn_model="schenk1998").prepare(SI, eq, W)
    s = [float(prep.ni2_shift(np.array([d]))[0]) / d for d in (1e4, 1e8)]
    assert s[0] == pytest.approx(s[1], rel=1e-9)
    edge = 0.999e-2 * min(float(eq.n0_cm3), float(eq.p0_cm3))
    plain = (prep._bgn(prep.n0 + edge, prep.p0 + edge) - prep.bgn0) / prep.kT
    assert float(prep.ni2_shift(np.array([edge]))[0]) == pytest.approx(float(plain[0]), rel=1e-10)


# --------------------------------------------------------------------------- inputs

def test_table_and_errors():
    rec = Recombination.from_table({"intrinsic": "Kerr-Cuevas", "bandgap_narrowing": "schenk1998",
                                    "front_J0_fA_cm2": 5, "rear_S_cm_s": 10,
                                    "defects": [{"name": "fe_i", "density_cm3": 1e11},
                                                {"energy_eV": 0.1, "energy_ref": "Ei", "tau_n0_s": 1e-3,
                                                 "tau_p0_s": 2e-3}]})
    assert rec.intrinsic_model(SI) == "kerr_cuevas2002"
    assert rec.defects[0].sigma_n_cm2 == 5e-14 and rec.defects[0].density_cm3 == 1e11
    with pytest.raises(InputError, match="recombination.front_J0"):
        Recombination.from_table({"front_J0_fA_cm2": -1})
    with pytest.raises(InputError, match="front_S_cm_s"):
        Recombination.from_table({"front_J0_fA_cm2": 1, "front_S_cm_s": 1})
    with pytest.raises(InputError, match="did you mean 'front_J0_fA_cm2'"):
        Recombination.from_table({"front_J0_fA_cm": 1})
    with pytest.raises(InputError, match=r"recombination\.defects\.0\.sigma_n_cm2"):
        Recombination.from_table({"defects": [{"energy_eV": 0.3, "sigma_n_cm2": -1e-15, "sigma_p_cm2": 1e-15,
                                               "density_cm3": 1e10}]})
    with pytest.raises(InputError, match=r"recombination\.defects\.1\.tau_p0_s"):
        Recombination.from_table({"defects": [{"name": "FeB", "density_cm3": 1},
                                              {"tau_n0_s": 1e-3, "tau_p0_s": -1.0}]})
    with pytest.raises(InputError, match=r"defects\.0\.density_cm3"):
        Recombination.from_table({"defects": [{"name": "Fe_i", "density_cm3": -5.0}]})
    with pytest.raises(InputError, match="Fe_i"):
        Recombination.from_table({"defects": [{"name": "Fe_x"}]})
    with pytest.raises(InputError, match="richter2012"):
        Recombination(intrinsic="richter2099")
    with pytest.raises(InputError, match="photon_recycling"):
        Recombination(photon_recycling=1.0)


def test_level_outside_gap_and_model_material_mismatch():
    eq = equilibrium(SI, 300.0, 1e15, 0.0)
    rec = Recombination.from_table({"defects": [{"energy_eV": 1.3, "sigma_n_cm2": 1e-15, "sigma_p_cm2": 1e-15,
                                                 "density_cm3": 1e10}]})
    with pytest.raises(InputError, match=r"defects\.0\.energy_eV.*inside the gap"):
        rec.rates(SI, eq, 1e14, W)
    other = SI.with_(name="NotSi")
    with pytest.raises(InputError, match="recombination.intrinsic"):
        Recombination(intrinsic="richter2012").rates(other, eq, 1e14, W)
    nothing = SI.with_(name="NotSi", auger_Cn_cm6_s=0.0, auger_Cp_cm6_s=0.0, radiative_B_cm3_s=0.0)
    with pytest.raises(InputError, match="at least one recombination mechanism"):
        Recombination().rates(nothing, eq, 1e14, W)


def test_j0_scales_with_ni2_away_from_reference():
    # common practice: a surface J0 is proportional to n_i^2; quoted at 298.15 K by default
    T = np.array([298.15, 350.0])
    eq = equilibrium(SI, T, 1e15, 0.0, bgn_model="none")
    us = Recombination(bgn_model="none", front_J0_fA_cm2=10.0).rates(SI, eq, 1e13, W)["surface"]
    fixed = Recombination(bgn_model="none", front_J0_fA_cm2=10.0, J0_reference_K=None).rates(SI, eq, 1e13, W)["surface"]
    assert us[0] == pytest.approx(fixed[0], rel=1e-12)
    ni2 = SI.nc_cm3(T) * SI.nv_cm3(T) * np.exp(-SI.bandgap_eV(T) / kT_eV(T))
    assert us[1] / fixed[1] == pytest.approx(ni2[1] / ni2[0], rel=1e-12)


def test_j0_temperature_scaling_can_be_switched_off():
    # analytic: without the reference temperature, J0 is the value given at every temperature;
    # with it, J0 scales as n_i^2(T)/n_i^2(298.15 K), which rises with T
    fixed = Recombination.from_table({"front_J0_fA_cm2": 10.0, "J0_reference_K": False})
    scaled = Recombination.from_table({"front_J0_fA_cm2": 10.0})
    assert fixed.j0_at_fA_cm2(SI, 350.0, "front") == 10.0
    # n_i^2 rises about 1800x from 298 to 350 K (Misiakos & Tsamakis 1993 n_i(T), from memory)
    assert scaled.j0_at_fA_cm2(SI, 350.0, "front") > 10.0 * 100


def test_vanishing_defect_density_is_an_infinite_lifetime():
    # tau = 1 / (sigma v_th N) (Shockley & Read 1952): with N = 1e-308 cm^-3 the product is
    # subnormal and tau exceeds the float range: +inf (no SRH), with no RuntimeWarning (pytest
    # turns those into errors); found by the mutation test (density set to 1e-308)
    from optogen.recombination import DEFECTS
    import dataclasses
    fe = dataclasses.replace(DEFECTS["FeB"], density_cm3=1e-308)
    tau_n, tau_p = fe.tau_s(materials.get("Si"), 300.0)
    assert np.isinf(tau_n) and np.isinf(tau_p)
