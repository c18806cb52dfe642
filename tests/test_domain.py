"""The physical domain (issue 15): every point of intrinsic..1e20 cm^-3, 0..1e4 suns, 4..1000 K converges
to a finite, physically admissible answer; points the models cannot support are flagged, never printed.

A random property test over the core (equilibrium + steady state), a deterministic grid over the domain
corners through the whole pipeline, and the pipeline's answers where a quantity does not apply (light below
the gap, a material without mobilities, population inversion).  A larger scan is
tests/benchmarks/domain_scan.py.
"""
import json
import math
import warnings

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import optogen
from optogen import materials
from optogen.constants import hc_eV_nm, kT_eV
from optogen.equilibrium import equilibrium, inverse_log_fermi_dirac_half
from optogen.errors import InputError
from optogen.recombination import Defect, Recombination
from optogen.steady_state import solve, state_at

#: 1 sun of absorbed light as a generation rate: 40 mA/cm^2 (AM1.5G absorbed in Si; common practice)
#: spread over 100 um, q = 1.602e-19 C -> 2.5e19 cm^-3 s^-1; thinner absorbers raise it (factor 1..100)
G_SUN = 2.5e19

#: (material, composition x, narrowing model); Si with each model (its statistics follow the model)
CASES = [("Si", None, "schenk1998"), ("Si", None, "klaassen1992"), ("Si", None, "none"), ("GaAs", None, None),
         ("Ge", None, None), ("InSb", None, None), ("HgCdTe", 0.22, None), ("HgCdTe", 0.3, None)]
MATS = {(m, x): materials.get(m, x) for m, x, _ in CASES}


def _t_max(mat):
    """Top of the temperature range: 1000 K, or where the material's gap falls below 30 meV (InSb ~ 790 K)."""
    T = np.linspace(4.0, 1000.0, 997)
    return float(T[np.asarray(mat.bandgap_eV(T)) > 0.03].max())


def _log(x):
    with np.errstate(divide="ignore"):
        return np.log(x)


def _fd_minus_boltzmann(ln_y):
    """F_1/2^-1(y) - ln y for y = exp(ln_y) [-] (0 in the Boltzmann limit)."""
    return inverse_log_fermi_dirac_half(ln_y) - ln_y


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=st.sampled_from(CASES), t_frac=st.floats(0.0, 1.0), log_N=st.floats(10.0, 20.0),
       doping_kind=st.sampled_from(["intrinsic", "n", "p"]), log_suns=st.floats(-6.0, 4.0),
       dark=st.booleans(), thin=st.floats(0.0, 2.0), with_srh=st.booleans())
def test_random_point_of_the_domain(case, t_frac, log_N, doping_kind, log_suns, dark, thin, with_srh):
    name, x, bgn = case
    mat = MATS[(name, x)]
    T = 4.0 + t_frac * (_t_max(mat) - 4.0)
    N = 10.0 ** log_N
    nd, na = {"intrinsic": (0.0, 0.0), "n": (N, 0.0), "p": (0.0, N)}[doping_kind]
    G = 0.0 if dark else G_SUN * 10.0 ** (log_suns + thin)
    rec = Recombination(bgn_model=bgn, front_S_cm_s=10.0 if with_srh else None,
                        defects=(Defect(tau_n0_s=1e-5, tau_p0_s=1e-4),) if with_srh else ())
    eq = equilibrium(mat, T, nd, na, bgn_model=bgn)
    kT = float(kT_eV(T))

    # charge neutrality n0 + N_A^- = p0 + N_D^+ to 1e-10 (analytic), in logs (densities may underflow at 4 K)
    neg = np.logaddexp(eq.ln_n0_cm3, _log(eq.ionised_acceptors_cm3))
    pos = np.logaddexp(eq.ln_p0_cm3, _log(eq.ionised_donors_cm3))
    assert abs(neg - pos) <= 1e-10

    # dark mass action in the statistics of the narrowing model (analytic):
    #   Boltzmann (klaassen1992, an apparent narrowing): n0 p0 = n_i,eff^2;
    #   Fermi-Dirac (schenk1998, none): F^-1(n0/Nc) + F^-1(p0/Nv) = -Eg_eff/kT (F^-1 against mpmath in
    #   test_fermi_dirac.py)
    if eq.statistics == "boltzmann":
        assert eq.ln_n0_cm3 + eq.ln_p0_cm3 == pytest.approx(2 * eq.ln_ni_eff_cm3, rel=1e-12, abs=1e-10)
    else:
        eta_sum = (inverse_log_fermi_dirac_half(eq.ln_n0_cm3 - np.log(eq.nc_cm3))
                   + inverse_log_fermi_dirac_half(eq.ln_p0_cm3 - np.log(eq.nv_cm3)))
        assert eta_sum == pytest.approx(-eq.effective_gap_eV / kT, rel=1e-10)

    with warnings.catch_warnings():
        warnings.simplefilter("error")            # no RuntimeWarning (or any other) from the core
        ss = solve(mat, eq, rec, G, 0.01)
    assert bool(ss.converged)

    # residual |G - U| <= 1e-10 G, with the public rates
    u = sum(rec.rates(mat, eq, float(ss.delta_n_cm3), 0.01).values())
    assert abs(G - u) <= 1e-10 * G
    if G == 0:
        assert ss.delta_n_cm3 == 0 and ss.splitting_eV == 0 and ss.np_over_ni2 == 1.0

    # every level is a finite number; the documented infinities only where they are infinite
    for k in ("delta_n_cm3", "n_cm3", "p_cm3", "splitting_eV", "electron_qfl_eV", "hole_qfl_eV",
              "log10_np_over_ni2", "effective_gap_eV"):
        assert math.isfinite(getattr(ss, k)), k
    assert math.isfinite(ss.np_over_ni2) or ss.log10_np_over_ni2 > 308       # beyond the float range only
    # FF: not applicable in the dark, nor where the splitting falls as Delta n rises (an unstable uniform
    # plasma, the electron-hole liquid regime; checked with the public state at Delta n (1 -+ 1e-3))
    if not (math.isfinite(ss.implied_ff) or G == 0):
        dn = float(ss.delta_n_cm3) * np.array([0.999, 1.001])
        assert np.diff(state_at(mat, eq, rec, dn, 0.01)["splitting_eV"])[0] < 0
    assert ss.tau_eff_s > 0 and not math.isnan(ss.tau_eff_s)
    assert not math.isnan(ss.injection_ratio)

    # n p / n_i,eff^2 against exp(splitting / kT) in the model's statistics (analytic):
    #   Boltzmann: splitting = kT ln(n p / n_i,eff^2) exactly;
    #   Fermi-Dirac: splitting / kT = ln(n p / n_i,eff^2) + sum over n, p of [F^-1(y) - ln y] minus the same
    #   for the dark n0, p0 (n_i,eff^2 is the dark product n0 p0 times the injection narrowing factor)
    ln_ratio = ss.log10_np_over_ni2 * math.log(10.0)
    if G == 0:
        pass                                      # the dark: both sides are 0 (checked above)
    elif eq.statistics == "boltzmann":
        assert ss.splitting_eV / kT == pytest.approx(ln_ratio, rel=1e-10, abs=1e-9)
    else:
        lnc, lnv = float(np.log(eq.nc_cm3)), float(np.log(eq.nv_cm3))
        corr = (_fd_minus_boltzmann(math.log(ss.n_cm3) - lnc) + _fd_minus_boltzmann(math.log(ss.p_cm3) - lnv)
                - _fd_minus_boltzmann(eq.ln_n0_cm3 - lnc) - _fd_minus_boltzmann(eq.ln_p0_cm3 - lnv))
        assert ss.splitting_eV / kT == pytest.approx(ln_ratio + corr, rel=1e-9, abs=1e-6)

    # no splitting above the gap unless degenerate (Fermi-Dirac: splitting - Eg = kT (eta_n + eta_p) > 0
    # needs a level inside a band; analytic)
    assert ss.splitting_eV <= ss.effective_gap_eV or bool(ss.degenerate)


# --------------------------------------------------------------------------- domain corners, whole pipeline

GRID = """
title = "domain corners"
[absorber]
{material}
thickness_um = 100
[light]
source = "AM1.5G"
suns = 1
[recombination]
[sweep]
"absorber.temperature_K" = {temps}
"absorber.{dopant}" = [0, 1e20]
"light.suns" = [0, 1e-6, 1, 1e4]
"""


@pytest.mark.parametrize("material,temps,dopant,outside", [
    ('material = "Si"', "[4, 77, 300, 1000]", "donors_cm3", False),
    ('material = "Si"', "[4, 77, 300, 1000]", "acceptors_cm3", False),
    ('material = "HgCdTe"\ncomposition_x = 0.22', "[4, 77, 300, 1000]", "acceptors_cm3", False),
    # 1e20 donors in HgCdTe (Nc ~ 4e16 cm^-3 at 300 K): E_F lies eV deep in the conduction band, so the
    # photons of the source lie below the splitting (band filling): outside the model, flagged
    ('material = "HgCdTe"\ncomposition_x = 0.22', "[4, 77, 300, 1000]", "donors_cm3", True),
    ('material = "InSb"', "[4, 77, 300, 700]", "acceptors_cm3", False),    # InSb's gap closes near 800 K
])
def test_domain_corners_through_the_pipeline(material, temps, dopant, outside):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = optogen.run(optogen.load_scenario(GRID.format(material=material, temps=temps, dopant=dopant)),
                          progress=False)
    assert not [w for w in caught if issubclass(w.category, RuntimeWarning)]
    ds = res.to_dataset()
    ok = ds["converged"].values
    shape = ok.shape
    suns = ds["light_suns"].values[None, None, :] * np.ones(shape)
    doping = ds[f"absorber_{dopant}"].values[None, :, None] * np.ones(shape)
    assert bool((~ok).any()) == outside
    if outside:                                    # flagged points warn and carry no levels
        assert res.warnings and np.all(np.isnan(ds["splitting_eV"].values[~ok]))
        assert np.all(doping[~ok] == 1e20) and np.all(suns[~ok] > 0)
        # only where the dark Fermi level already lies inside the conduction band (band filling; analytic)
        above_ec = np.broadcast_to(ds["fermi_level_eV"].values > ds["bandgap_eV"].values, shape)
        assert np.all(above_ec[~ok])
    lit = suns > 0
    dark_floor = (ds["n0_cm3"].values == 0) & (ds["p0_cm3"].values == 0)     # both below the float range
    # finite, or null (NaN in the Dataset) with a documented reason: the lifetime of an absent mechanism
    # (no SRH level, no surface here) is infinite; in the dark at 4 K a low-injection lifetime can lie beyond
    # the float range (infinite), as does the injection ratio dn / max(n0, p0) where n0 and p0 do (intrinsic
    # Si at 4 K); FF does not apply in the dark; n p / n_i,eff^2 is infinite beyond 1.8e308
    # (log10_np_over_ni2 carries it)
    for name, da in ds.data_vars.items():
        if da.dtype.kind != "f":
            continue
        v = np.where(ok, da.values, 0.0)
        if name in ("tau_srh_s", "tau_surface_s", "generation_background_average_cm3_s"):
            assert np.all(np.isnan(da.values)), name                 # absent mechanism / no [background]
        elif name.startswith("tau_"):
            assert np.all(np.isfinite(v) | ~lit), name
        elif name == "injection_ratio":
            assert np.all(np.isfinite(v) | dark_floor), name
        elif name == "implied_ff":
            # null in the dark, and (with a warning) where the splitting falls with Delta n: Si at 4 K,
            # below the ~25 K critical temperature of its electron-hole liquid (Rice 1977, from memory)
            falls = ok & lit & ~np.isfinite(da.values)
            assert np.all(np.isfinite(v[ok & ~falls]) == lit[ok & ~falls]), name
            assert np.all(ds["absorber_temperature_K"].values[:, None, None] * np.ones(shape) < 25.0, where=falls)
            assert not falls.any() or any("electron-hole liquid" in str(w.message) for w in caught)
        elif name == "np_over_ni2":
            assert np.all(np.isfinite(v) | (ds["log10_np_over_ni2"].values > 308)), name
        else:
            assert np.all(np.isfinite(v)), name
    # splitting at most the (unnarrowed) gap unless degenerate; dark points exactly 0
    split, gap = np.where(ok, ds["splitting_eV"].values, 0.0), ds["bandgap_eV"].values
    assert np.all((split <= gap) | ds["degenerate"].values)
    assert np.all(split[suns == 0] == 0)
    json.dumps(res.to_dict(), allow_nan=False)


# --------------------------------------------------------------------------- quantities that do not apply

LASER = """
title = "sub-gap laser"
[absorber]
material = "Si"
thickness_um = 200
donors_cm3 = 1e15
[light]
source = "laser"
wavelength_nm = 1550
power_W = 0.01
spot_area_cm2 = 1
"""


def test_sub_gap_laser_warns_and_stays_dark():
    # Si at 300 K: Eg = 1.12 eV, cut-off hc/Eg ~ 1.1 um (Sze & Ng 2007), so 1550 nm is not absorbed:
    # no generation, the dark state (splitting 0 V), no FF or implied J-V, and a warning naming both
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = optogen.run(optogen.load_scenario(LASER))
    msgs = [str(w.message) for w in caught]
    assert not [w for w in caught if issubclass(w.category, RuntimeWarning)]
    below = [m for m in msgs if "below the band gap" in m]
    assert below and "1550 nm" in below[0] and "cut-off" in below[0]
    cut = float(below[0].split("hc/Eg = ")[1].split(" nm")[0])
    eg = float(materials.get("Si").bandgap_eV(300.0))
    assert cut == pytest.approx(hc_eV_nm / eg, rel=1e-4)
    d = res.to_dict()
    assert d["steady_state"]["splitting_eV"] == 0.0 and d["steady_state"]["implied_ff"] is None
    assert "implied_jv" not in d
    json.dumps(d, allow_nan=False)


CUSTOM = """
title = "custom material without mobilities"
[absorber]
thickness_um = 100
[absorber.custom]
name = "Mystery"
eg0_eV = 1.4
varshni_alpha_eV_K = 5e-4
varshni_beta_K = 200
me_dos_m0 = 0.1
mh_dos_m0 = 0.5
permittivity = 12
radiative_B_cm3_s = 1e-10
edge_A_cm1_eV05 = 3e4
urbach_eV = 0.01
[light]
source = "AM1.5G"
suns = 1
"""


def test_custom_material_without_mobilities():
    # mobilities are optional: the carrier physics runs; the photoconductance (needs them) is null with a
    # warning; a depth-resolved run (diffusion needs them) is one InputError naming the missing field
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = optogen.run(optogen.load_scenario(CUSTOM))
    assert any("photoconductance_S is null" in str(w.message) for w in caught)
    d = res.to_dict()["steady_state"]
    assert d["photoconductance_S"] is None and d["converged"] is True and d["splitting_eV"] > 0.5
    with pytest.raises(InputError, match=r"absorber\.custom\.mobility_e"):
        optogen.run(optogen.load_scenario(CUSTOM + "[solver]\ndepth_resolved = true\n"))


GAAS = """
title = "GaAs pumped at 810 nm, 4 K"
[absorber]
material = "GaAs"
thickness_um = 2
temperature_K = 4
[light]
source = "laser"
wavelength_nm = 810
irradiance_W_m2 = 1e7
"""


def test_population_inversion_is_flagged_not_printed():
    # GaAs at 4 K, Eg = 1.519 eV (Sze & Ng 2007), pumped at 810 nm (h nu = 1.531 eV) with 1 kW/cm^2 in 2 um:
    # the uniform answer would split the quasi-Fermi levels by more than h nu, where the absorber amplifies
    # instead of absorbing (Bernard-Duraffourg, from memory): outside the model, so flagged and null
    hv = hc_eV_nm / 810.0
    res = optogen.run(optogen.load_scenario(GAAS))
    d = res.to_dict()
    assert d["steady_state"]["converged"] is False and d["steady_state"]["splitting_eV"] is None
    assert any("population inversion" in w for w in d["warnings"])
    # the same light at a tenth of a microwatt per cm^2 stays far below h nu and is a number again
    low = optogen.run(optogen.load_scenario(GAAS.replace("1e7", "1e-3"))).to_dict()
    assert low["steady_state"]["converged"] is True and low["steady_state"]["splitting_eV"] < hv
    assert 0 < low["implied_jv"]["efficiency"] <= 1.0


def test_closed_gap_is_an_input_error():
    # InSb's Varshni gap (Vurgaftman 2001 parameters) closes near 810 K: a semimetal, not in the domain
    with pytest.raises(InputError, match=r"absorber\.temperature_K.*band gap"):
        equilibrium(materials.get("InSb"), 900.0)


# --------------------------------------------------------------------------- issue 15 fuzz findings (a)-(e)

def _scenario_text(name, drop=(), replace=()):
    """A bundled scenario's TOML text without the sections `drop`, with (old, new) text replacements."""
    from pathlib import Path
    text = (Path(__file__).resolve().parents[1] / "scenarios" / name).read_text()   # the checkout's demos
    blocks = text.split("\n[")
    text = "\n[".join(b for b in blocks if not any(b.startswith(f"{s}]") for s in drop))
    for old, new in replace:
        assert old in text
        text = text.replace(old, new)
    return text


def _one(a):
    """The single value of a one-point array [-]."""
    return float(np.ravel(a)[0])


def _core_state(res):
    """The solver's own answer at a single-point result: (steady state, G) from its equilibrium and G."""
    d = res.to_dict()
    G = d["generation"]["average_cm3_s"] + (d["generation"]["background_average_cm3_s"] or 0.0)
    setup = res.details["setup"]
    return solve(setup.material, res.details["equilibrium"], setup.recombination, G, setup.thickness_cm), G


def test_cold_blackbody_on_cooled_hgcdte_is_flagged_with_its_reason():
    # (a) 20 K HgCdTe pixel under a 5 K blackbody, no [background]/[detector]: G ~ 2 cm^-3 s^-1.  The solve
    # itself converges (|G - U| <= 1e-10 G); the point is outside the model because the photons lie far below
    # the gap and below the splitting they would cause (Bernard-Duraffourg, from memory)
    text = _scenario_text("cooled_hgcdte_pixel.toml", drop=("detector", "background", "sweep"),
                          replace=(("temperature_K = 800", "temperature_K = 5"),
                                   ("temperature_K = 77", "temperature_K = 20")))
    res = optogen.run(optogen.load_scenario(text))
    d = res.to_dict()
    ss, G = _core_state(res)
    assert 1.0 < G < 5.0
    assert bool(np.all(ss.converged)) and np.all(ss.residual <= 1e-10)
    # mean photon energy of a blackbody's photon flux: Gamma(4) zeta(4) / (Gamma(3) zeta(3)) kT = 2.701 kT
    # (analytic, Planck); the 5 K source's photons sit below the splitting the solve gives
    mean_photon_eV = 6 * 1.0823232337 / (2 * 1.2020569032) * kT_eV(5.0)
    assert _one(ss.splitting_eV) > 3 * mean_photon_eV
    assert d["steady_state"]["converged"] is False and d["steady_state"]["splitting_eV"] is None
    assert any("sub-gap tail" in w for w in d["warnings"])


@pytest.mark.parametrize("T", [60.0, 160.0])
def test_degenerate_insb_is_flagged_degenerate_with_band_filling(T):
    # (b) InSb with 9.2e18 donors: E_F lies deep in the conduction band.  Degenerate limit of F_1/2:
    # F_1/2(eta) -> 4 eta^(3/2) / (3 sqrt(pi)) (Blakemore 1982, analytic), so E_F - Ec ~ kT (3 sqrt(pi) n0/(4 Nc))^(2/3)
    text = _scenario_text("insb_midwave_photodiode.toml", drop=("sweep",),
                          replace=(("donors_cm3 = 1e15", "donors_cm3 = 9.2e18"),
                                   ("temperature_K = 77", f"temperature_K = {T}")))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)     # detector figures (not the steady state)
        res = optogen.run(optogen.load_scenario(text))
    d = res.to_dict()
    eq = res.details["equilibrium"]
    kT = kT_eV(T)
    eta = (3 * math.sqrt(math.pi) * _one(eq.n0_cm3) / (4 * _one(eq.nc_cm3))) ** (2 / 3)
    assert _one(eq.fermi_level_eV - eq.effective_gap_eV) == pytest.approx(kT * eta, rel=1e-3)
    ss, _ = _core_state(res)
    assert bool(np.all(ss.converged)) and np.all(ss.residual <= 1e-10) and bool(np.all(ss.degenerate))
    # the splitting exceeds the 4 um photons (h nu = hc / 4000 nm): band filling blocks their absorption
    assert _one(ss.splitting_eV) > hc_eV_nm / 4000.0
    st = d["steady_state"]
    assert st["degenerate"] is True and st["converged"] is False and st["splitting_eV"] is None
    assert any("already degenerate" in w for w in d["warnings"])


def test_ingaas_at_4K_flags_sub_gap_light_with_its_reason():
    # (c) InGaAs at 4 K: its gap exceeds the 1550 nm photon (hc/1550 nm = 0.7999 eV), so the light is absorbed
    # only in the model's sub-gap tail, and any measurable excitation of the n-type layer splits the levels by
    # more than h nu: flagged at both powers, with the reason (also in a sweep, where it comes as a warning)
    text = _scenario_text("ingaas_receiver_1550.toml", drop=("sweep", "detector"),
                          replace=(("temperature_K = 300", "temperature_K = 4"),))
    for power in ("1e-9", "1e-3"):
        res = optogen.run(optogen.load_scenario(text.replace("power_W = 1e-6", f"power_W = {power}")))
        d = res.to_dict()
        ss, _ = _core_state(res)
        assert _one(res.details["equilibrium"].effective_gap_eV) > hc_eV_nm / 1550.0
        assert bool(np.all(ss.converged)) and np.all(ss.residual <= 1e-10)
        assert _one(ss.splitting_eV) > hc_eV_nm / 1550.0
        assert d["steady_state"]["converged"] is False
        assert any("sub-gap tail" in w for w in d["warnings"])
    sweep = text + '[sweep]\n"light.power_W" = [1e-9, 1e-3]\n'
    with pytest.warns(UserWarning, match="sub-gap tail"):
        optogen.run(optogen.load_scenario(sweep))


def test_smallest_positive_irradiance_gives_the_linear_answer():
    # (d) light.suns = 5e-324: Delta n lies below 1e-304 cm^-3.  Linear response (analytic): for
    # Delta n << n0 + p0 every rate is linear, U = Delta n / tau, so Delta n = G tau with tau the
    # low-injection lifetime, here U(d)/d at d = 1e-250 cm^-3
    text = _scenario_text("rooftop_n_wafer.toml", replace=(("suns = 1.0", "suns = 5e-324"),))
    res = optogen.run(optogen.load_scenario(text))
    st = res.to_dict()["steady_state"]
    ss, G = _core_state(res)
    assert st["converged"] is True and bool(np.all(ss.converged))
    setup = res.details["setup"]
    d = 1e-250
    u = sum(setup.recombination.rates(setup.material, res.details["equilibrium"], d, setup.thickness_cm).values())
    assert st["delta_n_cm3"] == pytest.approx(G * d / _one(u), rel=1e-12)
    assert st["splitting_eV"] == 0.0 or 0.0 < st["splitting_eV"] < 1e-290


def test_si_at_10K_one_splitting_for_levels_and_implied_jv():
    # (e) rooftop wafer at 10 K: holes degenerate under light.  The splitting is electron_qfl - hole_qfl and
    # the implied J-V's Voc is the same number; J(Voc) = 0.  Hole level against mpmath: p = Nv F_1/2(eta_p),
    # F_1/2(eta) = -Li_3/2(-e^eta) (Blakemore 1982 normalisation, analytic)
    import mpmath
    text = _scenario_text("rooftop_n_wafer.toml", replace=(("temperature_K = 298.15", "temperature_K = 10"),))
    res = optogen.run(optogen.load_scenario(text))
    d = res.to_dict()
    st, jv = d["steady_state"], d["implied_jv"]
    assert st["converged"] is True and st["hole_qfl_eV"] is not None and st["splitting_eV"] is not None
    assert st["splitting_eV"] == pytest.approx(st["electron_qfl_eV"] - st["hole_qfl_eV"], abs=1e-15)
    assert jv["voc_V"] == pytest.approx(st["splitting_eV"], rel=1e-15)
    assert st["splitting_eV"] < d["equilibrium"]["bandgap_eV"]
    kT = kT_eV(10.0)
    y = st["p_cm3"] / _one(res.details["equilibrium"].nv_cm3)
    eta = float(mpmath.findroot(lambda e: -mpmath.polylog(1.5, -mpmath.exp(e)) - y, math.log(y)))
    assert st["hole_qfl_eV"] == pytest.approx(-kT * eta, rel=1e-9)
    curve = res.details["implied_jv"]
    assert _one(np.ravel(curve.current_mA_cm2)[-1]) == pytest.approx(0.0, abs=1e-9 * _one(curve.jsc_mA_cm2))
