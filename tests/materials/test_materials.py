"""Materials: built-in records against handbook values, HgCdTe relations, custom tables.

Every expected value names its source beside it; "(from memory)" marks a
value recalled without the paper in hand.  Tolerances are the spread between
sources, not fitted to our numbers.
"""
import dataclasses
import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import constants as sc

from optogen import materials as M
from optogen.errors import InputError

KB_EV = sc.k / sc.e


# ---------------------------------------------------------------------------
# Band gaps and densities of states at 300 K
# ---------------------------------------------------------------------------

def test_si_gap_300K():
    # 1.1242 eV at 300 K, Green, J. Appl. Phys. 67, 2944 (1990) (from memory); the spread between
    # published fits (Thurmond 1975, Green 1990, Bludau 1974) is ~2 meV.
    assert M.get("Si").bandgap_eV(300.0) == pytest.approx(1.1242, abs=0.002)


@pytest.mark.parametrize("name, eg300, tol", [
    ("Ge", 0.66, 0.005),      # Sze & Ng, Physics of Semiconductor Devices 3rd ed., Appendix G: 0.66 eV (from memory)
    ("GaAs", 1.424, 0.003),   # Sze & Ng, Appendix G: 1.424 eV (from memory)
    ("InP", 1.344, 0.010),    # Levinshtein handbook 1.344 eV; Vurgaftman 2001 fit 1.353 eV (from memory)
])
def test_gap_300K_handbook(name, eg300, tol):
    assert M.get(name).bandgap_eV(300.0) == pytest.approx(eg300, abs=tol)


@pytest.mark.parametrize("name, nc, nv", [
    ("GaAs", 4.7e17, 9.0e18),   # Sze & Ng, Appendix G (from memory; REFERENCES.md)
    ("Ge", 1.04e19, 6.0e18),    # Sze & Ng, Appendix G (from memory; REFERENCES.md)
    ("Si", 2.86e19, 3.10e19),   # Green 1990 (from memory; REFERENCES.md)
])
def test_nc_nv_300K_handbook(name, nc, nv):
    m = M.get(name)
    assert m.nc_cm3(300.0) == pytest.approx(nc, rel=1e-9)
    assert m.nv_cm3(300.0) == pytest.approx(nv, rel=1e-9)


def test_nc_scales_as_T_to_1p5():
    # Nc = 2 (2 pi m k T / h^2)^(3/2) for a constant mass (analytic)
    m = M.get("GaAs")
    assert m.nc_cm3(600.0) / m.nc_cm3(300.0) == pytest.approx(2.0**1.5, rel=1e-12)


def test_nc_formula_from_scipy_constants():
    # Nc for m* = m0 at 300 K from scipy.constants (analytic: 2 (2 pi m0 k T / h^2)^1.5, in cm^-3)
    expected = 2.0 * (2.0 * math.pi * sc.m_e * sc.k * 300.0 / sc.h**2) ** 1.5 * 1e-6
    assert M.get("Si").with_(me_dos_m0=1.0).nc_cm3(300.0) == pytest.approx(expected, rel=1e-12)


# ---------------------------------------------------------------------------
# HgCdTe
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("x, T, expected", [
    # Hansen, Schmit & Casselman 1982 worked by hand:
    # x=0.2, 77 K: -0.302 + 0.386 - 0.0324 + 0.006656 + 5.35e-4*77*0.6 = 0.058256 + 0.024717 = 0.082973 eV
    (0.2, 77.0, 0.082973),
    # x=0.3, 300 K: -0.302 + 0.579 - 0.0729 + 0.022464 + 5.35e-4*300*0.4 = 0.226564 + 0.0642 = 0.290764 eV
    (0.3, 300.0, 0.290764),
])
def test_hgcdte_gap_hansen1982(x, T, expected):
    assert M.get("HgCdTe", composition_x=x).bandgap_eV(T) == pytest.approx(expected, abs=1e-6)


@pytest.mark.parametrize("x, T", [(0.2, 77.0), (0.3, 300.0), (0.3, 77.0), (0.22, 20.0)])
def test_hgcdte_ni_from_masses_matches_hansen_schmit1983(x, T):
    # n_i from our Kane masses, sqrt(Nc Nv) exp(-Eg/2kT), against Hansen & Schmit, J. Appl. Phys. 54,
    # 1639 (1983) (from memory, REFERENCES.md):
    # n_i = (5.585 - 3.82x + 1.753e-3 T - 1.364e-3 x T) 1e14 Eg^0.75 T^1.5 exp(-Eg/2kT).
    # The fit and the parabolic-band estimate differ by up to ~20 % (non-parabolicity, mh spread).
    m = M.get("HgCdTe", composition_x=x)
    Eg = m.bandgap_eV(T)
    ours = math.sqrt(m.nc_cm3(T) * m.nv_cm3(T)) * math.exp(-Eg / (2 * KB_EV * T))
    hs = (5.585 - 3.82 * x + 1.753e-3 * T - 1.364e-3 * x * T) * 1e14 * Eg**0.75 * T**1.5 * math.exp(-Eg / (2 * KB_EV * T))
    assert ours == pytest.approx(hs, rel=0.25)


def test_weiler_mass_limits():
    # x = 1 is CdTe: electron mass 0.09-0.10 m0 (Sze & Ng / Levinshtein handbook, from memory)
    assert M.electron_mass_weiler1981(M.bandgap_hansen1982(1.0, 300.0)) == pytest.approx(0.095, abs=0.006)
    # x = 0.2 at 77 K: m_e ~ 0.0065 m0 (Rogalski, Rep. Prog. Phys. 68, 2267 (2005); ~0.071 Eg rule, from memory)
    assert M.get("HgCdTe", composition_x=0.2).electron_mass_m0(77.0) == pytest.approx(0.0065, rel=0.2)


def test_hydrogenic_binding_is_rydberg():
    # Ry = 13.605693 eV (CODATA via scipy.constants)
    ry = sc.physical_constants["Rydberg constant times hc in eV"][0]
    assert M.hydrogenic_binding_eV(1.0, 1.0) == pytest.approx(ry, rel=1e-9)


def test_auger1_is_blakemore_lifetime_rearranged():
    # Cn = 1 / (2 n_i^2 tau_A1i) with tau_A1i in the Beattie-Landsberg/Blakemore form (analytic rearrangement)
    m = M.get("HgCdTe", composition_x=0.25)
    T = 120.0
    Eg, me, mh, eps = m.bandgap_eV(T), m.electron_mass_m0(T), m.mh_dos_m0, m.permittivity
    kT = KB_EV * T
    mu = me / mh
    tau = (3.8e-18 * eps**2 * math.sqrt(1 + mu) * (1 + 2 * mu) * math.exp((1 + 2 * mu) / (1 + mu) * Eg / kT)
           / (me * 0.2**2 * (kT / Eg) ** 1.5))
    ni2 = m.nc_cm3(T) * m.nv_cm3(T) * math.exp(-Eg / kT)
    cn, cp = m.auger_coefficients_cm6_s(T)
    assert cn == pytest.approx(1.0 / (2 * ni2 * tau), rel=1e-9)
    assert cp == pytest.approx(cn / 20.0, rel=1e-12)


@pytest.mark.parametrize("name, x", [("HgCdTe", 0.2), ("HgCdTe", 0.3), ("InSb", None)])
def test_narrow_gap_sensible_20_to_300K(name, x):
    # "sensible" (common practice): a positive gap that moves monotonically, finite positive Nc,
    # radiative and Auger coefficients, no overflow or warnings from 20 K to 300 K
    m = M.get(name, composition_x=x)
    T = np.linspace(20.0, 300.0, 57)
    Eg = m.bandgap_eV(T)
    assert np.all(Eg > 0.05)
    assert np.all(np.diff(Eg) > 0) or np.all(np.diff(Eg) < 0)
    for arr in (m.nc_cm3(T), m.nv_cm3(T), m.radiative_coefficient_cm3_s(T), *m.auger_coefficients_cm6_s(T),
                *m.vth_cm_s(T)):
        assert np.all(np.isfinite(arr)) and np.all(arr > 0)


# ---------------------------------------------------------------------------
# Cut-off wavelengths (detector view)
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("name, T, lo, hi", [
    ("InGaAs", 300.0, 1.65, 1.70),   # In0.53Ga0.47As cut-off ~1.65-1.7 um at 300 K (handbook, common practice)
    ("InSb", 77.0, 5.3, 5.6),        # InSb ~5.5 um at 77 K (Eg ~0.23 eV; REFERENCES.md, from memory)
    ("InSb", 300.0, 6.9, 7.4),       # InSb ~7 um at 300 K (Eg ~0.17 eV; REFERENCES.md, from memory)
])
def test_cutoff_wavelength(name, T, lo, hi):
    lam_c = 1.24 / M.get(name).bandgap_eV(T)     # 1.24/Eg [um], the trade's rule
    assert lo <= lam_c <= hi


def test_ingaas_gap_range():
    # In0.53Ga0.47As Eg ~0.74-0.75 eV at 300 K (REFERENCES.md, from memory)
    assert 0.73 <= M.get("In0.53Ga0.47As").bandgap_eV(300.0) <= 0.755


# ---------------------------------------------------------------------------
# Records: sources, validity, conventions
# ---------------------------------------------------------------------------

_SOURCED = ("me_dos_m0", "mh_dos_m0", "permittivity", "vth_e_300K_cm_s", "vth_h_300K_cm_s",
            "radiative_B_cm3_s", "auger_Cn_cm6_s", "auger_Cp_cm6_s", "mobility_e", "mobility_h",
            "refractive_index", "optical_page")


@pytest.mark.parametrize("name", M.names())
def test_every_parameter_has_a_source(name):
    m = M.get(name, composition_x=0.3 if name == "HgCdTe" else None)
    for f in _SOURCED:
        assert m.sources.get(f), f"{name}.{f} has no source"
    gap_keys = ("bandgap_model",) if m.bandgap_model == "hansen1982" else ("eg0_eV", "varshni_alpha_eV_K", "varshni_beta_K")
    for f in gap_keys:
        assert m.sources.get(f), f"{name}.{f} has no source"
    assert m.dopants and all(d.source for d in m.dopants)
    assert m.default_dopant("donor") is not None and m.default_dopant("acceptor") is not None
    M.validate(m)


@pytest.mark.parametrize("name", M.names())
def test_dopant_degeneracy_convention(name):
    # g = 2 for shallow donors, 4 for acceptors in cubic semiconductors (common practice)
    m = M.get(name, composition_x=0.3 if name == "HgCdTe" else None)
    for d in m.dopants:
        assert d.degeneracy == (2.0 if d.kind == "donor" else 4.0)


def test_default_model_names():
    assert M.get("Si").ni_model == "misiakos1993" and M.get("Si").bgn_model == "schenk1998"
    assert M.get("HgCdTe", composition_x=0.2).ni_model == "hansen_schmit1983"
    assert M.get("GaAs").ni_model == "nc_nv_eg" and M.get("GaAs").bgn_model == "none"


# ---------------------------------------------------------------------------
# get(): names, aliases, errors
# ---------------------------------------------------------------------------

def test_aliases_and_case():
    assert M.get("In0.53Ga0.47As") is M.get("InGaAs")
    assert M.get("gaas") is M.get("GaAs")
    assert M.get("hgcdte", composition_x=0.3).composition_x == 0.3


def test_unknown_material_lists_names():
    with pytest.raises(InputError) as e:
        M.get("Unobtainium")
    msg = str(e.value)
    assert "absorber.material" in msg
    for name in M.names():
        assert name in msg


def test_misspelt_material_hint():
    with pytest.raises(InputError, match="did you mean 'GaAs'"):
        M.get("GaAz")


@pytest.mark.parametrize("name, x", [("HgCdTe", None), ("HgCdTe", 1.2), ("HgCdTe", 0.1), ("Si", 0.3)])
def test_composition_errors(name, x):
    with pytest.raises(InputError, match="absorber.composition_x"):
        M.get(name, composition_x=x)


# ---------------------------------------------------------------------------
# Custom materials
# ---------------------------------------------------------------------------

def _as_table(m):
    t = {f.name: getattr(m, f.name) for f in dataclasses.fields(m) if f.name != "sources"}
    t["dopants"] = [dataclasses.asdict(d) for d in m.dopants]
    t["mobility_e"] = dataclasses.asdict(m.mobility_e)
    t["mobility_h"] = dataclasses.asdict(m.mobility_h)
    t["optical_page"] = "/".join(m.optical_page)
    return {k: v for k, v in t.items() if v is not None}


@pytest.mark.parametrize("name", ["Si", "GaAs", "InSb"])
def test_custom_round_trip(name):
    m = M.get(name)
    again = M.material_from_table(_as_table(m))
    assert again == m            # dataclass equality ignores `sources`
    assert again.sources["permittivity"] == "user input ([absorber.custom])"


def test_custom_base_tweak():
    base = M.get("GaAs")
    m = M.material_from_table({"permittivity": 13.1, "dopants": [
        {"name": "Sn", "kind": "donor", "energy_eV": 0.006, "degeneracy": 2}]}, base=base)
    assert m.permittivity == 13.1 and m.dopant("Sn").energy_eV == 0.006
    assert m.name == "GaAs"       # a tweaked built-in keeps its name (Si-only models stay usable)
    assert m.bandgap_eV(300.0) == base.bandgap_eV(300.0)
    assert m.sources["permittivity"] == "user input ([absorber.custom])"
    assert m.sources["eg0_eV"] == base.sources["eg0_eV"]


def test_custom_hgcdte_composition_rebuilds():
    m = M.material_from_table({"composition_x": 0.4}, base=M.get("HgCdTe", composition_x=0.2))
    assert m.bandgap_eV(77.0) == pytest.approx(M.get("HgCdTe", composition_x=0.4).bandgap_eV(77.0))
    assert m.permittivity == pytest.approx(M.permittivity_hgcdte(0.4))


def test_custom_unknown_key_hint():
    with pytest.raises(InputError, match=r"absorber\.custom\.permitivity.*did you mean 'permittivity'"):
        M.material_from_table({"permitivity": 12.0}, base=M.get("Si"))


def test_custom_missing_required_named():
    with pytest.raises(InputError) as e:
        M.material_from_table({"name": "X", "eg0_eV": 1.0})
    for key in ("varshni_alpha_eV_K", "varshni_beta_K", "me_dos_m0", "mh_dos_m0", "permittivity"):
        assert key in str(e.value)


@pytest.mark.parametrize("change, field", [
    ({"me_dos_m0": -0.1}, "me_dos_m0"),
    ({"permittivity": 0.0}, "permittivity"),
    ({"refractive_index": 0.5}, "refractive_index"),
    ({"auger_Cn_cm6_s": -1e-30}, "auger_Cn_cm6_s"),
    ({"eg0_eV": 0.01}, "eg0_eV"),            # Si Varshni drop of ~45 meV closes this gap by 300 K
    ({"dopants": [{"name": "Q", "kind": "donnor", "energy_eV": 0.01, "degeneracy": 2}]}, "dopants[0].kind"),
    ({"dopants": [{"name": "Q", "kind": "donor", "energy_eV": 0.01}]}, "dopants[0]"),
    ({"mobility_e": {"mu_min_cm2_Vs": 500, "mu_max_cm2_Vs": 100, "n_ref_cm3": 1e17, "alpha": 0.7}},
     "mobility_e.mu_min_cm2_Vs"),
    ({"mobility_e": {"mu_min": 1}}, "mobility_e.mu_min"),
    ({"auger_model": "beattie"}, "auger_model"),
    ({"optical_page": "Green-2008"}, "optical_page"),
    ({"permittivity": "high"}, "permittivity"),
])
def test_custom_impossible_values(change, field):
    with pytest.raises(InputError, match=r"absorber\.custom\." + field.replace("[", r"\[").replace("]", r"\]")):
        M.material_from_table(change, base=M.get("Si"))


@settings(max_examples=40, deadline=None)
@given(me=st.floats(0.01, 3.0), mh=st.floats(0.01, 3.0), eps=st.floats(1.0, 30.0), eg=st.floats(0.1, 3.0))
def test_custom_fresh_material_valid(me, mh, eps, eg):
    m = M.material_from_table({"name": "X", "eg0_eV": eg, "varshni_alpha_eV_K": 0.0, "varshni_beta_K": 100.0,
                               "me_dos_m0": me, "mh_dos_m0": mh, "permittivity": eps})
    # constant gap when alpha = 0 (analytic); Nc from the mass (analytic)
    assert m.bandgap_eV(77.0) == eg
    assert m.nc_cm3(300.0) == pytest.approx(M.get("Si").with_(me_dos_m0=me).nc_cm3(300.0))


# ---------------------------------------------------------------------------
# describe()
# ---------------------------------------------------------------------------

def test_describe_rows():
    m = M.get("Si")
    rows = M.describe(m, 300.0)
    by = {r["field"]: r for r in rows}
    assert all(set(r) == {"field", "value", "unit", "source"} for r in rows)
    assert by["bandgap_eV"]["value"] == pytest.approx(m.bandgap_eV(300.0))
    assert by["nc_cm3"]["value"] == pytest.approx(2.86e19, rel=1e-9)     # Green 1990 (from memory)
    assert by["radiative_B_cm3_s"]["value"] == pytest.approx(4.73e-15)    # Trupke et al. 2003
    assert by["auger_Cn_cm6_s"]["value"] == pytest.approx(2.8e-31)       # Dziewior & Schmid 1977
    assert by["optical_page"]["value"] == "main/Si/Green-2008"
    assert "dopant.P" in by and "mobility_e.mu_max_cm2_Vs" in by and "permittivity" in by
    assert by["permittivity"]["source"]


def test_describe_bad_temperature():
    with pytest.raises(InputError, match="temperature_K"):
        M.describe(M.get("Si"), 0.0)
