"""Detector noise, the background limit D*_BLIP, the photodiode junction and the optics keys (issue 10).

Expected values come from Planck's law integrated here with scipy.integrate.quad,
textbook formulas (A. Rogalski, Infrared Detectors, 2nd ed., CRC 2011 (from memory);
S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed., Wiley 2007
(from memory)), analytic identities worked in the comments, and scipy.constants.
"""
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import constants as sc
from scipy import integrate

import optogen
from optogen import detector as det
from optogen import light
from optogen.cli import main
from optogen.errors import InputError

ROOT = Path(__file__).resolve().parents[1]
Q, K_B, H, C = sc.e, sc.k, sc.h, sc.c


def run_dict(text):
    return optogen.run(optogen.load_scenario(text), progress=False).to_dict()


def planck_photon_flux_cm2_s(T_K, lo_nm, hi_nm, f_number=None):
    """Photon flux on a flat detector from a blackbody through an f/F cone and an ideal band filter.

    Planck's photon radiance 2c / lambda^4 / (exp(hc / lambda kT) - 1), times the projected solid
    angle pi sin^2(theta) = pi / (1 + 4F^2) (Rogalski 2011 ch. 3, from memory), integrated with quad.
    """
    view = math.pi if f_number is None else math.pi / (1.0 + 4.0 * f_number**2)
    radiance = lambda lam: 2.0 * C / lam**4 / math.expm1(H * C / (lam * K_B * T_K))   # noqa: E731
    value, _ = integrate.quad(radiance, lo_nm * 1e-9, hi_nm * 1e-9, epsabs=0.0, epsrel=1e-12, limit=200)
    return view * value * 1e-4                                              # m^-2 -> cm^-2


# A cold InSb pixel: 50 um thick, single pass, front reflectance 0.1, so every photon of the
# 3.2-3.8 um band that enters is absorbed (alpha W > 15) and eta = 1 - R = 0.9 (analytic).  The
# background passes an f/2 shield and a 3.2-3.8 um cold filter; the 3.5 um laser signal is tiny.
BLIP = """
title = "background-limited InSb pixel"
[absorber]
material = "InSb"
thickness_um = 50
temperature_K = 50
donors_cm3 = 1e14
[light]
source = "laser"
wavelength_nm = 3500
power_W = 1e-16
spot_area_cm2 = 1e-4
[background]
temperature_K = 300
f_number = 2
cuton_nm = 3200
cutoff_nm = 3800
[optics]
front_reflectance = 0.1
rear_reflectance = 0.0
light_path = "single"
[recombination]
front_S_cm_s = 100
rear_S_cm_s = 100
[[recombination.defects]]
tau_n0_s = 1e-6
tau_p0_s = 1e-6
[detector]
mode = "{mode}"
electrode_spacing_um = 50
width_um = 50
bias_V = {bias}
"""
ETA = 0.9                     # analytic: 1 - front reflectance, thick absorber
LAMBDA_CM = 3500e-7


@pytest.mark.parametrize("mode,bias", [("photodiode", 0.0), ("photoconductor", 10.0)])
def test_blip_detectivity_against_planck(mode, bias):
    d = run_dict(BLIP.format(mode=mode, bias=bias))["detector"]
    q_b = planck_photon_flux_cm2_s(300.0, 3200.0, 3800.0, f_number=2.0)
    if mode == "photodiode":
        # Rogalski 2011 ch. 3 (from memory): D*_BLIP = (lambda / hc) sqrt(eta / (2 Q_B))
        expected = LAMBDA_CM / (H * C * 100.0) * math.sqrt(ETA / (2.0 * q_b))
    else:
        # Rogalski 2011 ch. 3 and 9 (from memory): photoconductor (lambda / 2hc) sqrt(eta / Q_B)
        expected = LAMBDA_CM / (2.0 * H * C * 100.0) * math.sqrt(ETA / q_b)
    assert d["quantum_efficiency"] == pytest.approx(ETA, rel=1e-6)          # analytic, e^-(alpha W) < 1e-6
    assert d["background_absorbed_flux_cm2_s"] == pytest.approx(ETA * q_b, rel=1e-5)
    # trapezoid on 2000 log-spaced points against quad: ~1e-7; eta flat over the band to ~1e-7
    assert d["detectivity_blip_cm_Hz05_W"] == pytest.approx(expected, rel=1e-5)
    # at 50 K the thermal, Johnson and signal noise together are < 1e-4 of the background noise
    assert d["background_limited"]
    assert d["detectivity_cm_Hz05_W"] == pytest.approx(expected, rel=1e-4)
    assert d["detectivity_cm_Hz05_W"] <= d["detectivity_blip_cm_Hz05_W"]


def test_photoconductor_blip_is_sqrt2_below_photodiode():
    # Rogalski 2011 ch. 3 (from memory): recombination noise doubles the noise power of a photoconductor
    pd = run_dict(BLIP.format(mode="photodiode", bias=0.0))["detector"]
    pc = run_dict(BLIP.format(mode="photoconductor", bias=10.0))["detector"]
    assert pd["detectivity_blip_cm_Hz05_W"] / pc["detectivity_blip_cm_Hz05_W"] == pytest.approx(math.sqrt(2), rel=1e-9)


# --- D* never above D*_BLIP: random cases through the core ------------------------------------------

def _logs(lo, hi):
    return st.floats(lo, hi, allow_nan=False).map(lambda e: 10.0**e)


@settings(max_examples=200, deadline=None)
@given(L=_logs(0, 4), w=_logs(0, 4), bias=_logs(-2, 2), t=_logs(-5, -1), T=st.floats(20, 400),
       n0=_logs(8, 18), p0=_logs(0, 18), dn=_logs(-5, 18), mu_e=_logs(1, 6), mu_h=_logs(0, 5),
       tau=_logs(-10, -2), tau_d=_logs(-10, -2), g_opt=_logs(5, 25), g_bg=_logs(5, 25), irr=_logs(-6, 4))
def test_photoconductor_detectivity_never_above_blip(L, w, bias, t, T, n0, p0, dn, mu_e, mu_h, tau, tau_d,
                                                     g_opt, g_bg, irr):
    pc = det.Detector("photoconductor", electrode_spacing_um=L, width_um=w, bias_V=bias)
    f = det.photoconductor_figures(pc, t, T, n0, p0, n0 + dn, p0 + dn, (mu_e, mu_h), (mu_e, mu_h), tau, tau_d,
                                   g_opt, g_bg, irr)
    # the limit worked here from the inputs alone (not from the function's own background term):
    # gain g = tau (mu_e + mu_h) V / L^2 (Rose 1963, from memory); R = q g G_opt t / E (signal current
    # q g G_opt L w t over the power E L w, E in W/cm^2); background g-r noise 4 q^2 g^2 G_bg L w t
    # (Rogalski 2011 ch. 3, from memory) is one term of the total, so
    # D* = R sqrt(L w) / i_total <= R / (2 q g sqrt(G_bg t))
    L_cm = L * 1e-4
    g = tau * (mu_e + mu_h) * bias / L_cm**2
    R = Q * g * g_opt * t / (irr * 1e-4)
    limit = R / (2.0 * Q * g * math.sqrt(g_bg * t))
    assert f["detectivity_cm_Hz05_W"] <= limit * (1.0 + 1e-9)
    assert f["detectivity_blip_cm_Hz05_W"] == pytest.approx(limit, rel=1e-9)
    # background_limited <=> background noise above the rest <=> D*/D*_BLIP > 1/sqrt(2) (definition)
    if abs(f["detectivity_over_blip"] - 2**-0.5) > 1e-9:
        assert bool(f["background_limited"]) == (f["detectivity_over_blip"] > 2**-0.5)


@settings(max_examples=200, deadline=None)
@given(side=_logs(0, 3), bias=st.floats(-2.0, 0.3), W=_logs(-4, -1), T=st.floats(20, 400), ni=_logs(0, 14),
       N=_logs(13, 18), nj=_logs(15, 19), D=_logs(-1, 3), tau=_logs(-10, -3), S=_logs(-2, 7),
       jph=_logs(-12, 2), g_bg=_logs(5, 25), irr=_logs(-6, 4), eg=st.floats(0.05, 1.5), eps=st.floats(8, 20),
       m=st.floats(0.005, 0.5), tau_g=st.one_of(st.none(), _logs(-10, -3)))
def test_photodiode_detectivity_never_above_blip(side, bias, W, T, ni, N, nj, D, tau, S, jph, g_bg, irr, eg, eps,
                                                 m, tau_g):
    pd = det.Detector("photodiode", electrode_spacing_um=side, width_um=side, bias_V=bias,
                      junction_side_doping_cm3=nj, generation_lifetime_s=tau_g)
    n0, p0 = N, ni**2 / N
    args = (pd, W, T, ni, n0, p0, n0, p0, D, tau, S, jph, 1e19, g_bg, irr)
    kw = dict(bandgap_eV=eg, permittivity=eps, electron_mass_m0=m)
    # a forward bias (> 0) at or above V_bi - 3kT/q is refused, zero and reverse bias never;
    # V_bi = kT/q ln(N nj / ni^2) capped to [0, Eg] (Sze & Ng 2007 sec. 2.2, from memory)
    kT = K_B * T / Q
    # the base doping is the majority density max(n0, p0) (= N when extrinsic; the draws allow ni > N)
    vbi = min(max(kT * (math.log(max(n0, p0)) + math.log(nj) - 2 * math.log(ni)), 0.0), eg)
    if bias > 0 and bias >= vbi - 3 * kT * (1 - 1e-12):
        if bias > (vbi - 3 * kT) * (1 + 1e-9) + 1e-12:
            with pytest.raises(InputError, match="detector.bias_V"):
                det.photodiode_figures(*args, **kw)
        return
    f = det.photodiode_figures(*args, **kw)
    # the limit from the inputs alone: R = J_ph / E (mA/cm^2 -> A/cm^2 over W/cm^2); background shot
    # noise 2 q (q G_bg W) A (Schottky 1918, from memory) is one term of the total, so
    # D* = R sqrt(A) / i_total <= R / (q sqrt(2 G_bg W))
    R = jph * 1e-3 / (irr * 1e-4)
    limit = R / (Q * math.sqrt(2.0 * g_bg * W))
    assert f["detectivity_cm_Hz05_W"] <= limit * (1.0 + 1e-9)
    assert f["detectivity_blip_cm_Hz05_W"] == pytest.approx(limit, rel=1e-9)
    assert f["r0a_ohm_cm2"] > 0 and f["dark_current_density_mA_cm2"] >= 0


# --- turning the background off --------------------------------------------------------------------

def _without_background(text):
    head, rest = text.split("[background]", 1)
    return head + rest[rest.index("\n["):] if "\n[" in rest else head


@pytest.mark.parametrize("path,temps", [("cooled_hgcdte_pixel.toml", [77.0, 110.0, 160.0]),
                                        ("insb_midwave_photodiode.toml", [60.0, 100.0, 150.0])])
def test_background_off_never_lowers_detectivity(path, temps):
    text = (ROOT / "scenarios" / path).read_text().split("[sweep]")[0]
    sweep = '[sweep]\n"absorber.temperature_K" = [' + ", ".join(map(repr, temps)) + "]\n"
    on = optogen.run(optogen.load_scenario(text + sweep), progress=False).dataset
    off = optogen.run(optogen.load_scenario(_without_background(text) + sweep), progress=False).dataset
    # a noise source removed can only raise D* (issue 10; common practice)
    assert np.all(off["detectivity_cm_Hz05_W"].values >= on["detectivity_cm_Hz05_W"].values * (1 - 1e-12))


@pytest.mark.parametrize("mode,bias", [("photodiode", 0.0), ("photoconductor", 10.0)])
def test_responsivity_does_not_depend_on_background_in_linear_regime(mode, bias):
    text = BLIP.format(mode=mode, bias=bias).replace("temperature_K = 50", "temperature_K = 77", 1)
    on = run_dict(text)
    off = run_dict(_without_background(text))
    # the operating point is linear: the background's excess carriers are < 1e-3 of the majority density
    assert on["steady_state"]["delta_n_cm3"] < 1e-3 * on["equilibrium"]["n0_cm3"]
    # photodiode: R from the signal generation alone (exact); photoconductor: through tau_eff, which in
    # the linear regime moves by less than delta n / n0
    rel = 1e-12 if mode == "photodiode" else 1e-3
    assert on["detector"]["responsivity_A_W"] == pytest.approx(off["detector"]["responsivity_A_W"], rel=rel)


# --- photodiode junction ----------------------------------------------------------------------------

def test_built_in_potential_and_depletion_width_by_hand():
    # Sze & Ng 2007 eq. 2.10 (from memory): V_bi = kT/q ln(Na Nd / ni^2); Si-like 300 K case, n_i = 1e10:
    # 0.025852 V * ln(1e18 * 1e16 / 1e20) = 0.025852 * 32.236 = 0.8334 V
    vbi = det.built_in_potential_V(300.0, 1e18, 1e16, 1e10, 1.12)
    assert vbi == pytest.approx(K_B * 300.0 / Q * math.log(1e14), rel=1e-12)
    assert vbi == pytest.approx(0.8334, abs=1e-4)
    # Sze & Ng 2007 eq. 2.24 (from memory): W = sqrt(2 eps (Vbi - V)(1/Na + 1/Nd) / q); one-sided limit
    # with eps = 11.7, Vbi - V = 0.8 V, N = 1e16: sqrt(2 * 11.7 * 8.854e-14 * 0.8 / (1.602e-19 * 1e16))
    # = sqrt(1.0346e-9) = 3.217e-5 cm (about 0.3 um at 1e16, common practice)
    w = det.depletion_width_cm(11.7, 0.8, 0.0, 1e30, 1e16)
    assert w == pytest.approx(math.sqrt(2 * 11.7 * sc.epsilon_0 / 100 * 0.8 / (Q * 1e16)), rel=1e-9)
    assert w == pytest.approx(3.217e-5, rel=1e-3)
    # analytic: reverse bias widens as sqrt(Vbi - V); the built-in potential is capped at the gap
    assert det.depletion_width_cm(11.7, 0.8, -2.4, 1e30, 1e16) == pytest.approx(2.0 * w, rel=1e-9)
    assert det.built_in_potential_V(77.0, 1e20, 1e20, 1e5, 0.2) == pytest.approx(0.2)


def test_sah_noyce_shockley_limits():
    # analytic: reverse saturation -q n_i W / tau_g (Sze & Ng 2007 sec. 2.4.3, from memory) and
    # ideality 2 forward: J(V) + J0 = J0 e^{qV/2kT}
    ni, W, tau, T = 1e10, 1e-4, 1e-6, 300.0
    j_sat = 1e3 * Q * ni * W / tau
    assert det.depletion_current_sah_noyce_shockley_mA_cm2(ni, W, tau, -5.0, T) == pytest.approx(-j_sat, rel=1e-12)
    v = 0.3
    fwd = det.depletion_current_sah_noyce_shockley_mA_cm2(ni, W, tau, v, T)
    assert fwd + j_sat == pytest.approx(j_sat * math.exp(Q * v / (2 * K_B * T)), rel=1e-12)


def test_photodiode_noise_is_nyquist_at_zero_bias_and_shot_under_reverse_bias():
    T, j0, jgr, A = 77.0, 1e-6, 3e-5, 1e-4          # mA/cm^2, cm^2
    r0a = det.r0a_ohm_cm2(T, j0, jgr)
    # analytic: 1/R0A = q J0 / kT + q J_gr0 / (2 kT)
    assert 1.0 / r0a == pytest.approx(1e-3 * Q * (j0 + jgr / 2) / (K_B * T), rel=1e-12)
    shot, johnson = det.photodiode_thermal_noise_A_Hz05(T, 0.0, j0, jgr, A)
    # Nyquist (thermal equilibrium): the zero-bias noise is 4kT/R0 and nothing else
    assert shot == 0.0
    assert johnson**2 == pytest.approx(4 * K_B * T * A / r0a, rel=1e-12)
    # strong reverse bias: full shot noise 2 q (J0 + J_gr0) A of the saturated currents (Schottky)
    shot, johnson = det.photodiode_thermal_noise_A_Hz05(T, -1.0, j0, jgr, A)
    assert shot**2 + johnson**2 == pytest.approx(2 * Q * 1e-3 * (j0 + jgr) * A, rel=1e-9)
    assert johnson < 1e-6 * shot
    # diffusion alone, any bias: forward and reverse fluxes 2 q J0 (e^x + 1) (van der Ziel 1959, from memory)
    for v in (-0.02, 0.0, 0.01, 0.05):
        x = Q * v / (K_B * T)
        shot, johnson = det.photodiode_thermal_noise_A_Hz05(T, v, j0, 0.0, A)
        assert shot**2 + johnson**2 == pytest.approx(2 * Q * 1e-3 * j0 * (math.exp(x) + 1) * A, rel=1e-12)


INSB = (ROOT / "scenarios" / "insb_midwave_photodiode.toml").read_text().split("[sweep]")[0]


def test_johnson_limited_photodiode_detectivity():
    # zero bias, no background, a vanishing signal (its shot noise < 1e-7 of the Johnson noise):
    # D* = R sqrt(R0A / (4 k T)) (Rogalski 2011 ch. 3, from memory; analytic from i_n^2 = 4kT/R0)
    text = _without_background(INSB).replace("power_W = 1e-12", "power_W = 1e-18")
    d = run_dict(text)["detector"]
    expected = d["responsivity_A_W"] * math.sqrt(d["r0a_ohm_cm2"] / (4 * K_B * 77.0))
    assert d["detectivity_cm_Hz05_W"] == pytest.approx(expected, rel=1e-6)
    assert d["detectivity_blip_cm_Hz05_W"] is None and d["detectivity_over_blip"] is None


def test_arrhenius_slopes_depletion_half_gap_diffusion_full_gap():
    # By hand: n_i ~ T^1.5 exp(-Eg(T) / 2kT) with Eg(T) = Eg(0) - a T^2 / (T + b) (Varshni).  With
    # beta = 1/kT, Eg(T)/(2kT) = beta Eg(0)/2 - a T / (2k (T + b)) and dT/dbeta = -k T^2, so
    # -d ln n_i / d beta = Eg(0)/2 + a b T^2 / (2 (T + b)^2) + 1.5 kT.
    # InSb (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), from memory; the material's own
    # optogen.materials values): Eg(0) = 0.235 eV, a = 0.32 meV/K, b = 170 K.  At 80 K:
    # kT = 6.894 meV; Varshni term 3.2e-4 * 170 * 6400 / (2 * 250^2) = 348.16 / 125000 = 2.785 meV;
    # depletion current q n_i W / tau_g (fixed tau_g): 0.1175 + 0.0028 + 0.0103 = 0.1306 eV;
    # diffusion q n_i^2 sqrt(D / tau) / N: twice the n_i terms, Eg(0) + 2 * 2.785 meV + 3 kT = 0.2613 eV.
    # The secant over 70-90 K, W(T), D(T) and tau(T) move the slopes by about 0.1 kT here (tolerance 0.3 kT).
    text = INSB.replace("junction_side_doping_cm3 = 1e18", "junction_side_doping_cm3 = 1e18\ngeneration_lifetime_s = 1e-7")
    text += '[sweep]\n"absorber.temperature_K" = [70.0, 90.0]\n'
    ds = optogen.run(optogen.load_scenario(text), progress=False).dataset
    inv_kT = Q / (K_B * ds["absorber_temperature_K"].values)
    kT = K_B * 80.0 / Q
    eg0, a, b = 0.235, 3.2e-4, 170.0                                         # Vurgaftman 2001 (from memory)
    varshni = a * b * 80.0**2 / (2 * (80.0 + b)**2)                           # 2.785 meV, worked above
    slope = lambda v: -np.diff(np.log(v))[0] / np.diff(inv_kT)[0]          # noqa: E731
    e_gr = slope(ds["j0_depletion_mA_cm2"].values)
    e_diff = slope(ds["j0_thin_base_mA_cm2"].values)
    assert e_gr == pytest.approx(eg0 / 2 + varshni + 1.5 * kT, abs=0.3 * kT)
    assert e_diff == pytest.approx(eg0 + 2 * varshni + 3 * kT, abs=0.3 * kT)


def test_tunnelling_caution_for_heavily_doped_narrow_gap_junction():
    # common practice (Rogalski 2011 ch. 12, from memory): a narrow-gap junction on a heavily doped
    # base under reverse bias leaks by band-to-band tunnelling; a lightly doped one at zero bias does not
    heavy = INSB.replace('material = "InSb"', 'material = "HgCdTe"\ncomposition_x = 0.2').replace(
        "donors_cm3 = 1e15", "donors_cm3 = 1e17").replace("bias_V = 0", "bias_V = -0.5").replace(
        "cuton_nm = 3000\ncutoff_nm = 5000\n", "")
    assert run_dict(heavy)["detector"]["tunnelling_may_dominate"] is True
    assert run_dict(INSB)["detector"]["tunnelling_may_dominate"] is False


def test_tunnelling_caution_is_printed(tmp_path, capsys):
    heavy = INSB.replace('material = "InSb"', 'material = "HgCdTe"\ncomposition_x = 0.2').replace(
        "donors_cm3 = 1e15", "donors_cm3 = 1e17").replace("bias_V = 0", "bias_V = -0.5").replace(
        "cuton_nm = 3000\ncutoff_nm = 5000\n", "")
    path = tmp_path / "heavy.toml"
    path.write_text(heavy)
    assert main(["run", str(path), "--quiet"]) == 0
    assert "Note: Tunnelling" in capsys.readouterr().out      # one line among the run's cautions


# --- optics keys: f-number and cold filter ----------------------------------------------------------

def test_f_number_cone():
    # Rogalski 2011 ch. 3 (from memory): theta = arctan(1/(2F)), sin^2(theta) = 1/(1 + 4F^2);
    # Stefan-Boltzmann (analytic): the total is sigma T^4 / (1 + 4F^2)
    bb = light.blackbody(300.0, f_number=2.0)
    assert bb.irradiance_W_m2 == pytest.approx(sc.sigma * 300.0**4 / 17.0, rel=1e-5)
    same = light.blackbody(300.0, field_of_view_deg=math.degrees(math.atan(0.25)))
    np.testing.assert_allclose(bb.irradiance_W_m2_nm, same.irradiance_W_m2_nm, rtol=1e-12)


def test_cold_filter_band_photon_flux_against_planck():
    bb = light.blackbody(300.0, f_number=2.0, cuton_nm=3000.0, cutoff_nm=5000.0)
    assert bb.wavelength_nm[0] == pytest.approx(3000.0) and bb.wavelength_nm[-1] == pytest.approx(5000.0)
    # Planck's photon radiance integrated with quad (M. Planck 1901; scipy)
    assert bb.photon_flux_cm2_s == pytest.approx(planck_photon_flux_cm2_s(300.0, 3000.0, 5000.0, 2.0), rel=1e-6)


@pytest.mark.parametrize("changes,field", [
    ({"background.f_number": 0.5}, "background.f_number"),
    ({"background.f_number": 0.3}, "background.f_number"),
    ({"background.f_number": 150.0}, "background.f_number"),
    ({"background.field_of_view_deg": 30.0}, "background.f_number"),          # both given
    ({"background.cuton_nm": 5000.0, "background.cutoff_nm": 3000.0},
     ("background.cuton_nm", "background.cutoff_nm")),                                    # reversed: either edge
    ({"background.cuton_nm": 8000.0, "background.cutoff_nm": 9000.0}, "background.cuton_nm"),    # beyond InSb's cut-off
    ({"detector.generation_lifetime_s": -1e-7}, "detector.generation_lifetime_s"),
])
def test_bad_optics_and_junction_input_names_the_field(changes, field):
    with pytest.raises(InputError) as err:       # raised when the value is set or, at the latest, by run
        optogen.run(optogen.load_scenario(INSB).with_values(changes))
    assert err.value.field in ((field,) if isinstance(field, str) else field)
    assert "\n" not in str(err.value)                                        # one clear line


def test_check_exits_2_on_bad_filter_band(tmp_path, capsys):
    path = tmp_path / "bad.toml"
    path.write_text(INSB.replace("cutoff_nm = 5000", "cutoff_nm = 2000"))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "background.cut" in err and len(err.strip().splitlines()) == 1        # one line naming the band


# --- spectral response curve ------------------------------------------------------------------------

def test_spectral_response_curve_matches_the_point(tmp_path):
    assert main(["run", str(_write(tmp_path, INSB)), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    import pandas as pd
    curve = pd.read_csv(tmp_path / "out" / "spectral_response.csv")
    assert (tmp_path / "out" / "spectral_response.png").stat().st_size > 0
    point = run_dict(INSB)["detector"]
    # analytic: the QE of a line is the absorbed fraction at its wavelength (same optics, same absorptance)
    eta_4um = np.interp(4000.0, curve["wavelength_nm"], curve["quantum_efficiency"])
    # linear interpolation on the curve's grid (35.5 nm steps at 4 um): |error| <= h^2/8 |eta''| / eta
    # = 35.5^2 / 8 * 1.8e-8 nm^-2 / 0.931 = 3.0e-6 (eta'' from the curve's own second difference; analytic
    # bound of linear interpolation), the CSV's 10 digits add 1e-10
    assert eta_4um == pytest.approx(point["quantum_efficiency"], rel=4e-6)
    # analytic: R = eta q lambda / (h c) for a photodiode (gain 1)
    np.testing.assert_allclose(curve["responsivity_A_W"],
                               curve["quantum_efficiency"] * curve["wavelength_nm"] * 1e-9 * Q / (H * C), rtol=1e-9)
    # beyond the cut-off hc/Eg(77 K) (~5.4 um for InSb, common practice) the QE falls off
    assert curve["quantum_efficiency"].iloc[-1] < 0.01 * curve["quantum_efficiency"].max()


def _write(tmp_path, text):
    p = tmp_path / "point.toml"
    p.write_text(text)
    return p


# --- plots of a detector sweep ------------------------------------------------------------------------

def test_detectivity_plot_on_arrhenius_axis_with_blip_line():
    text = INSB + '[sweep]\n"absorber.temperature_K" = [60.0, 100.0, 140.0]\n'
    ds = optogen.run(optogen.load_scenario(text), progress=False).dataset
    from optogen import plots
    ax = plots.detector_detectivity(ds)                      # plot functions return their Axes
    assert ax.get_yscale() == "log" and ax.get_xlabel() == "1000 / T (K^-1)"
    # analytic: the Arrhenius axis is 1000/T of the swept temperatures
    np.testing.assert_allclose(ax.lines[0].get_xdata(), 1000.0 / np.array([60.0, 100.0, 140.0]), rtol=1e-12)
    assert [t.get_text() for t in ax.get_legend().get_texts()] == ["D*", "D*_BLIP (background limit)"]
    # D* never above the BLIP line (the property of test_*_detectivity_never_above_blip, as drawn)
    assert np.all(ax.lines[0].get_ydata() <= ax.lines[1].get_ydata() * (1 + 1e-12))
    for fn in (plots.detector_responsivity, plots.detector_nep, plots.detector_noise, plots.detector_dark_current):
        assert fn(ds).get_xlabel() == "1000 / T (K^-1)"
    # a sweep of another key keeps its own axis
    text = INSB + '[sweep]\n"detector.bias_V" = [0.0, -0.1]\n'
    ds = optogen.run(optogen.load_scenario(text), progress=False).dataset
    assert "1000 / T" not in plots.detector_detectivity(ds).get_xlabel()


def test_built_in_potential_when_n_i_is_below_the_float_range():
    # analytic: V_bi = (kT/q) ln(N_A N_D / n_i^2) grows without bound as n_i -> 0 and is capped at Eg/q;
    # an n_i that underflows to 0 (InGaAs at 4 K: n_i ~ exp(-Eg/2kT) ~ 1e-510 cm^-3) must give the cap, no warning
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        v = det.built_in_potential_V(4.0, 1e18, 1e15, 0.0, 0.81)
    assert float(v) == 0.81


def test_implied_jv_with_a_background_ends_at_the_reported_splitting():
    # analytic: the steady state is lit by the source and the background together, so the implied J-V
    # built from the same total generation ends at Voc = the steady-state splitting; P_max against the
    # source's irradiance alone is not an efficiency (null)
    d = run_dict(INSB)
    assert d["implied_jv"]["voc_V"] == pytest.approx(d["steady_state"]["splitting_eV"], rel=1e-9)
    assert d["implied_jv"]["efficiency"] is None
