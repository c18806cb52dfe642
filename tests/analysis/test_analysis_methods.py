"""Analysis methods against hand-worked cases, closed forms and the forward model (optogen.analysis)."""
import dataclasses

import numpy as np
import pytest
from scipy.signal import savgol_filter

from optogen import materials
from optogen.analysis.implied import implied_from_rates, model_rates
from optogen.analysis.iron import crossover_cm3, iron_density_zoth_bergholz1990, iron_prefactor_cm3_s
from optogen.analysis.j0 import j0_kane_swanson1985, weighted_line
from optogen.analysis.model import mechanisms
from optogen.analysis.photoconductance import (excess_density_cm3, lifetime_generalised_nagel1999, local_polynomial,
                                               photoconductance_of)
from optogen.analysis.sample import sample
from optogen.recombination import DEFECTS, Defect, Recombination
from optogen.steady_state import implied_jv, lifetime_curve

SI = materials.get("Si")


def test_kane_swanson_slope_on_a_hand_worked_case():
    # Hand case: n0 = 1e15, p0 = 1e5 cm^-3 (n0 p0 = n_i^2 = 1e20 cm^-6), W = 0.02 cm, J0 = 10 fA/cm^2
    # (both surfaces), bulk 1/tau_SRH = 500 1/s, no injection narrowing:
    #   1/tau_corr = 500 + J0 (n0 + p0 + dn) / (q n_i^2 W)
    #   slope J0/(q n_i^2 W) = 10e-15 / (1.602176634e-19 * 1e20 * 0.02) = 10e-15 / 0.32043533
    #                        = 3.12076e-14 cm^3/s  (analytic; q from CODATA 2018, exact)
    n0, p0, W = 1e15, 1e5, 0.02
    dn = np.linspace(5e15, 5e16, 12)
    slope_hand = 3.12076e-14
    inv = 500.0 + slope_hand * (n0 + p0 + dn)
    ks = j0_kane_swanson1985(dn, inv, n0, p0, W)
    assert ks.J0_fA_cm2 == pytest.approx(10.0, rel=2e-6)          # hand value, 6 digits of the slope
    assert ks.slope_cm3_s == pytest.approx(slope_hand, rel=1e-9)
    assert ks.inv_tau_bulk_s == pytest.approx(500.0, rel=1e-6)
    assert ks.J0_std_fA_cm2 < 1e-6                                # exact line: no scatter


def test_weighted_line_matches_numpy_polyfit():
    # reference library: numpy.polyfit (unweighted) on the same scattered points
    rng = np.random.default_rng(0)
    x = np.linspace(1, 10, 20)
    y = 3 + 2 * x + rng.normal(0, 0.1, x.size)
    a, b, cov = weighted_line(x, y)
    (b_ref, a_ref), cov_ref = np.polyfit(x, y, 1, cov=True)
    assert (a, b) == pytest.approx((a_ref, b_ref), rel=1e-10)
    # np.polyfit scales its covariance by RSS/(N - deg - 1) = RSS/(N - 2) (numpy documentation), as we do
    assert cov[1, 1] == pytest.approx(cov_ref[0, 0], rel=1e-8)
    assert cov[0, 0] == pytest.approx(cov_ref[1, 1], rel=1e-8)


def test_generalised_analysis_steady_state_limit():
    # constant G and constant dn = G tau: d dn/dt = 0, tau = dn/G exactly (Nagel et al. 1999, QSS limit)
    t = np.linspace(0, 1e-3, 101)
    G, tau = 1e20, 2e-4
    tau_out, _, ddt = lifetime_generalised_nagel1999(t, np.full(t.size, G * tau), np.full(t.size, G), 11, 2)
    assert np.allclose(tau_out, tau, rtol=1e-12)
    assert np.allclose(ddt, 0.0, atol=1e-6 * G)


def test_generalised_analysis_transient_limit():
    # G = 0 and dn = dn0 exp(-t/tau): tau = -dn/(d dn/dt) (analytic; transient limit of Nagel et al. 1999)
    tau = 1e-4
    t = np.linspace(0, 5e-4, 501)                    # 1 us steps, window 11 points = 0.1 tau
    dn = 1e16 * np.exp(-t / tau)
    tau_out, _, _ = lifetime_generalised_nagel1999(t, dn, np.zeros(t.size), 11, 2)
    # quadratic over 11 points of an exponential: error of order (h/tau)^2 (window/tau)^... < 1e-3
    assert np.allclose(tau_out, tau, rtol=1e-3)


def test_generalised_analysis_with_a_decaying_flash():
    # d dn/dt = G0 e^(-t/tf) - dn/tau, dn(0) = 0 has the closed form
    # dn = G0 tau tf/(tf - tau) (e^(-t/tf) - e^(-t/tau))  (analytic, linear ODE)
    G0, tau, tf = 1e21, 1e-4, 3e-4
    t = np.linspace(0, 2e-3, 2001)
    dn = G0 * tau * tf / (tf - tau) * (np.exp(-t / tf) - np.exp(-t / tau))
    tau_out, _, _ = lifetime_generalised_nagel1999(t, dn, G0 * np.exp(-t / tf), 9, 3)
    sel = t > 5e-5
    assert np.allclose(tau_out[sel], tau, rtol=1e-4)


def test_local_polynomial_equals_savitzky_golay_on_uniform_samples():
    # reference library: scipy.signal.savgol_filter (mode "interp" = the same end treatment)
    rng = np.random.default_rng(1)
    t = np.linspace(0, 1, 200)
    y = np.sin(5 * t) + 0.01 * rng.standard_normal(t.size)
    ys, dy = local_polynomial(t, y, 15, 3)
    assert np.allclose(ys, savgol_filter(y, 15, 3, mode="interp"), atol=1e-10)
    assert np.allclose(dy, savgol_filter(y, 15, 3, deriv=1, delta=t[1] - t[0], mode="interp"), atol=1e-7)


def test_photoconductance_to_excess_density_inverts_the_forward_photoconductance():
    # forward: optogen.transport.photoconductance_S with Klaassen mobilities at each injection
    smp = sample(SI, 300.0, 0.0, 2e15, 0.018)
    dn = np.logspace(12, 17, 21)
    pc = photoconductance_of(smp, dn)
    assert np.allclose(excess_density_cm3(smp, pc), dn, rtol=1e-9)


def test_model_equals_the_forward_lifetime_curve():
    smp = sample(SI, 300.0, 0.0, 1e15, 0.018)
    rec = Recombination(defects=(Defect("x", energy_eV=0.8, tau_n0_s=2e-4, tau_p0_s=1e-3),), front_J0_fA_cm2=6.0,
                        rear_J0_fA_cm2=4.0, J0_reference_K=None)
    dn = np.logspace(12, 17, 30)
    ref = lifetime_curve(SI, smp.eq, rec, 0.018, dn).tau_eff_s
    m = mechanisms(smp, dn)
    assert np.allclose(1.0 / m.inv_tau_eff_s(10.0, 2e-4, 1e-3, 0.8), ref, rtol=1e-12)


def test_implied_figures_on_the_grid_equal_steady_state_implied_jv():
    # the grid method of optogen.analysis.implied against optogen.steady_state.implied_jv (bracketed solve,
    # golden-section maximum power) for the same recombination
    smp = sample(SI, 300.0, 0.0, 1e15, 0.018)
    rec = Recombination(defects=(Defect("x", tau_n0_s=3e-4, tau_p0_s=3e-3),), front_J0_fA_cm2=10.0,
                        J0_reference_K=None)
    et = 0.5 * float(smp.eq.effective_gap_eV)
    r = model_rates(smp, 10.0, 3e-4, 3e-3, et)
    imp = implied_from_rates(smp, sum(r.values()), 40.0)
    jv = implied_jv(SI, smp.eq, rec, 0.018, 40.0)
    assert imp.voc_V[0] == pytest.approx(float(jv.voc_V), abs=2e-5)
    assert imp.ff[0] == pytest.approx(float(jv.ff), abs=1e-4)


def _srh_closed_form(n0, p0, dn, sigma_n, sigma_p, vn, vp, n1, p1):
    """1/tau of one level per unit density [cm^3/s], written out: Shockley & Read 1952, Hall 1952,
    tau_x0 = 1/(sigma_x v_x N_t) with N_t = 1: 1/tau = (n0 + p0 + dn) / (tau_p0 (n0 + n1 + dn) + tau_n0 (p0 + p1 + dn))."""
    tn, tp = 1.0 / (sigma_n * vn), 1.0 / (sigma_p * vp)
    return (n0 + p0 + dn) / (tp * (n0 + n1 + dn) + tn * (p0 + p1 + dn))


def test_iron_prefactor_against_the_closed_form_with_published_parameters():
    # Published levels (Istratov, Hieslmair & Weber 1999; Macdonald & Geerligs 2004; from memory):
    # Fe_i: Ev + 0.38 eV, sigma_n = 5e-14, sigma_p = 7e-17 cm^2; FeB: Ec - 0.26 eV, sigma_n = 5e-15, sigma_p = 3e-15 cm^2
    assert (DEFECTS["Fe_i"].energy_eV, DEFECTS["Fe_i"].sigma_n_cm2, DEFECTS["Fe_i"].sigma_p_cm2) == (0.38, 5e-14, 7e-17)
    assert (DEFECTS["FeB"].energy_eV, DEFECTS["FeB"].energy_ref, DEFECTS["FeB"].sigma_n_cm2,
            DEFECTS["FeB"].sigma_p_cm2) == (0.26, "Ec", 5e-15, 3e-15)
    smp = sample(SI, 300.0, 0.0, 1e16, 0.018, Recombination(bgn_model="none"))
    eq = smp.eq
    kT = 8.617333262e-5 * 300.0                       # Boltzmann constant, CODATA 2018 [eV/K]
    eg, nc, nv = float(eq.effective_gap_eV), float(eq.nc_cm3), float(eq.nv_cm3)
    vn, vp = SI.vth_cm_s(300.0)
    dn = np.logspace(12, 16, 9)
    f_fei = _srh_closed_form(smp.n0_cm3, smp.p0_cm3, dn, 5e-14, 7e-17, vn, vp,
                             nc * np.exp((0.38 - eg) / kT), nv * np.exp(-0.38 / kT))
    f_feb = _srh_closed_form(smp.n0_cm3, smp.p0_cm3, dn, 5e-15, 3e-15, vn, vp,
                             nc * np.exp(-0.26 / kT), nv * np.exp(-(eg - 0.26) / kT))
    C = iron_prefactor_cm3_s(smp, dn)
    assert np.allclose(C, 1.0 / (f_fei - f_feb), rtol=1e-7)
    # the two curves cross near 1-2e14 cm^-3 for ~1 ohm cm p-type Si (Macdonald, Geerligs & Azzizi 2004, from
    # memory); a wide band
    assert 5e13 < crossover_cm3(smp) < 5e14


def test_iron_round_trip_recovers_the_density():
    # forward model: the same wafer with 1.2e11 cm^-3 iron as FeB and as Fe_i, J0 and noise (invented, demo only)
    smp = sample(SI, 300.0, 0.0, 1e16, 0.018)
    rng = np.random.default_rng(5)
    dn = np.logspace(12.5, 15.8, 35)
    taus = {}
    for st in ("FeB", "Fe_i"):
        rec = Recombination(defects=(dataclasses.replace(DEFECTS[st], density_cm3=1.2e11),),
                            front_J0_fA_cm2=15.0, J0_reference_K=None)
        taus[st] = lifetime_curve(SI, smp.eq, rec, 0.018, dn).tau_eff_s * (1 + 0.01 * rng.standard_normal(dn.size))
    m = mechanisms(smp, dn)
    res = iron_density_zoth_bergholz1990(smp, dn, taus["FeB"], taus["Fe_i"], m.shift,
                                         np.full(dn.size, 0.01), np.full(dn.size, 0.01))
    assert abs(res.density_cm3 - 1.2e11) <= 3 * res.density_std_cm3
    assert res.density_std_cm3 < 0.05 * 1.2e11


def test_srh_basis_and_surface_term_against_the_closed_forms():
    # without narrowing (shift 0): n p - n0 p0 = dn (n0 + p0 + dn), so (Shockley & Read 1952; Hall 1952)
    #   tau_SRH = [tau_p0 (n0 + n1 + dn) + tau_n0 (p0 + p1 + dn)] / (n0 + p0 + dn),
    #   n1 = Nc exp((E_t - E_g)/kT), p1 = Nv exp(-E_t/kT);
    # and the surface term (Kane & Swanson 1985, from memory) J0 (n0 + p0 + dn) / (q n0 p0 W)
    smp = sample(SI, 300.0, 1e15, 0.0, 0.018, Recombination(bgn_model="none"))
    dn = np.logspace(11, 17, 13)
    m = mechanisms(smp, dn)
    assert np.all(m.shift == 0.0)
    kT = 8.617333262e-5 * 300.0                        # Boltzmann constant, CODATA 2018 [eV/K]
    eq = smp.eq
    eg, nc, nv = float(eq.effective_gap_eV), float(eq.nc_cm3), float(eq.nv_cm3)
    n0, p0 = smp.n0_cm3, smp.p0_cm3
    levels = np.array([0.2, 0.56, 0.95])
    A, B = m.srh_basis(levels)
    for i, et in enumerate(levels):
        n1, p1 = nc * np.exp((et - eg) / kT), nv * np.exp(-et / kT)
        hand = (1e-3 * (n0 + n1 + dn) + 2e-4 * (p0 + p1 + dn)) / (n0 + p0 + dn)
        assert np.allclose(2e-4 * A[i] + 1e-3 * B[i], hand, rtol=1e-8)
        assert np.allclose(1.0 / m.inv_tau_srh_s(2e-4, 1e-3, et), hand, rtol=1e-10)
    q = 1.602176634e-19                                # elementary charge, CODATA 2018 (exact) [C]
    assert np.allclose(m.x_j0, 1e-15 * (n0 + p0 + dn) / (q * n0 * p0 * 0.018), rtol=1e-10)


def test_implied_voc_of_a_constant_lifetime_against_the_closed_form():
    # U = dn/tau with tau constant: open circuit at dn_oc = J_gen tau/(q W); with Boltzmann statistics and no
    # narrowing, Voc = kT/q ln((n0 + dn_oc)(p0 + dn_oc)/(n0 p0)) (analytic; q, k_B from CODATA 2018).  The
    # splitting of steady_state.state_at uses Fermi-Dirac statistics: at 1.4e16 cm^-3 << Nc the difference is
    # below 1e-5 V (n/Nc ~ 5e-4)
    smp = sample(SI, 300.0, 1e15, 0.0, 0.018, Recombination(bgn_model="none"))
    from optogen.analysis.implied import GRID_CM3
    tau, jgen, q, kT = 1e-3, 40.0, 1.602176634e-19, 8.617333262e-5 * 300.0
    dn_oc = jgen * 1e-3 * tau / (q * 0.018)
    voc_hand = kT * np.log((smp.n0_cm3 + dn_oc) * (smp.p0_cm3 + dn_oc) / (smp.n0_cm3 * smp.p0_cm3))
    imp = implied_from_rates(smp, GRID_CM3 / tau, jgen)
    assert imp.delta_n_oc_cm3[0] == pytest.approx(dn_oc, rel=1e-4)
    assert imp.voc_V[0] == pytest.approx(voc_hand, abs=2e-5)
