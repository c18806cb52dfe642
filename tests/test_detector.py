"""Tests of optogen.detector against analytic identities and textbook relations."""
import numpy as np
import pytest
from scipy import constants as sc

from optogen import detector as det
from optogen.errors import InputError

Q = sc.e
HC_Q_UM = sc.h * sc.c / sc.e * 1e6     # hc/q in V um (= 1.2398), scipy.constants


# --- photoconductor -----------------------------------------------------------

def test_gain_hand_worked():
    # analytic: L = 0.1 cm, mu_e + mu_h = 1000 cm^2/Vs, V = 10 V
    # t_tr = 0.01 cm^2 / (1000 * 10) = 1e-6 s; tau = 1e-4 s -> gain = 100
    t_tr = det.transit_time_s(0.1, 1000.0, 10.0)
    assert t_tr == pytest.approx(1e-6, rel=1e-12)
    assert det.photoconductive_gain(1e-4, t_tr) == pytest.approx(100.0, rel=1e-12)


def test_gain_equals_photocurrent_over_generation_current():
    # analytic: I_ph = q dn (mu_e + mu_h) (V/L) w t with dn = G tau; carriers generated per
    # second = G L w t, so I_ph / (q G L w t) = tau (mu_e + mu_h) V / L^2 = tau / t_tr
    G, tau, mu_e, mu_h = 1e19, 2e-5, 1300.0, 450.0
    L, w, t, V = 0.05, 0.02, 0.001, 3.0
    dsigma = Q * G * tau * (mu_e + mu_h)
    i_ph = det.bar_current_A(dsigma, V, L, w, t)
    gain = det.photoconductive_gain(tau, det.transit_time_s(L, mu_e + mu_h, V))
    assert i_ph / (Q * G * L * w * t) == pytest.approx(gain, rel=1e-12)


def test_bar_current_and_contrast_by_hand():
    # analytic: I = sigma V / L * w t = 0.1 S/cm * (2 V / 0.1 cm) * 0.05 cm * 0.01 cm = 1e-3 A
    assert det.bar_current_A(0.1, 2.0, 0.1, 0.05, 0.01) == pytest.approx(1e-3, rel=1e-12)
    # analytic: (0.15 - 0.1) / 0.1 = 0.5
    assert det.conductivity_contrast(0.15, 0.1) == pytest.approx(0.5, rel=1e-12)


@pytest.mark.parametrize("wavelength_nm", [633.0, 1000.0, 1550.0, 10600.0])
def test_ideal_responsivity_is_lambda_over_1p24(wavelength_nm):
    # analytic: R = q lambda / (h c) = lambda[um] / 1.2398 A/W at unity QE and gain (hc/q from scipy)
    assert det.responsivity_A_W(wavelength_nm) == pytest.approx(wavelength_nm * 1e-3 / HC_Q_UM, rel=1e-12)


def test_responsivity_1550_common_value():
    # common practice: an ideal detector at 1550 nm gives 1.25 A/W
    assert det.responsivity_A_W(1550.0) == pytest.approx(1.25, abs=0.005)


def test_broadband_responsivity():
    # analytic: 2 mA from 4 mW -> 0.5 A/W
    assert det.responsivity_broadband_A_W(2e-3, 4e-3) == pytest.approx(0.5, rel=1e-12)


# --- photodiode J0 ----------------------------------------------------------------

NI, N, D, TAU = 1e10, 1e16, 12.0, 1e-3     # invented base: L = sqrt(12e-3) = 0.1095 cm


def test_j0_thick_base_by_hand():
    # analytic: q n_i^2 D / (N L) = 1.602e-19 * 1e4 * 12 / 0.10954 = 1.755e-13 A/cm^2 = 1.755e-10 mA/cm^2
    expected = 1e3 * Q * NI**2 * D / (N * np.sqrt(D * TAU))
    assert det.j0_thick_base_mA_cm2(NI, N, D, TAU) == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(1.755e-10, rel=1e-3)


@pytest.mark.parametrize("S", [0.0, 10.0, 1e4, np.inf])
def test_j0_thin_base_tends_to_thick_base(S):
    # analytic: W >> L (W = 50 L) -> the thick-base J0 for any back-surface S
    W = 50.0 * np.sqrt(D * TAU)
    assert det.j0_base_mA_cm2(NI, N, D, TAU, W, S) == pytest.approx(det.j0_thick_base_mA_cm2(NI, N, D, TAU), rel=1e-12)


def test_j0_short_base_limits():
    W = 1e-4 * np.sqrt(D * TAU)     # W << L
    # analytic: S = 0 -> tanh(W/L) ~ W/L -> q n_i^2 W / (N tau)
    assert det.j0_base_mA_cm2(NI, N, D, TAU, W, 0.0) == pytest.approx(1e3 * Q * NI**2 * W / (N * TAU), rel=1e-7)
    # analytic: S = inf (ohmic back contact) -> coth(W/L) ~ L/W -> q n_i^2 D / (N W)
    assert det.j0_base_mA_cm2(NI, N, D, TAU, W, np.inf) == pytest.approx(1e3 * Q * NI**2 * D / (N * W), rel=1e-7)
    # analytic: S = D/L makes the base look infinitely thick: (s + t)/(1 + s t) = 1 at s = 1
    assert det.j0_base_mA_cm2(NI, N, D, TAU, W, D / np.sqrt(D * TAU)) == pytest.approx(
        det.j0_thick_base_mA_cm2(NI, N, D, TAU), rel=1e-12)


# --- generation, noise ---------------------------------------------------------------

def test_thermal_generation_limits():
    # analytic: extrinsic -> minority / tau = n_i^2 / (N tau); intrinsic -> n_i / (2 tau)
    assert det.thermal_generation_cm3_s(1e16, 1e4, 1e-6) == pytest.approx(1e4 / 1e-6, rel=1e-10)
    assert det.thermal_generation_cm3_s(1e13, 1e13, 1e-6) == pytest.approx(1e13 / 2e-6, rel=1e-12)


def test_gr_detectivity_blip_photoconductor():
    # Rogalski, Infrared Detectors 2nd ed. (2011), ch. 3 (from memory): BLIP photoconductor
    # D* = (lambda / 2hc) sqrt(eta / Phi_B); with G t = eta Phi_B (background only)
    lam, eta, phi, t = 10e-6, 0.7, 1e17, 10e-4     # m, -, photons cm^-2 s^-1, cm
    G = eta * phi / t
    expected = lam / (2.0 * sc.h * sc.c) * np.sqrt(eta / phi)
    assert det.detectivity_gr_cm_Hz05_W(10000.0, G, t, eta) == pytest.approx(expected, rel=1e-12)


def test_shot_detectivity_zero_bias_equals_johnson():
    # analytic: at zero bias R0 A = kT / (q J0) and D* = R_i sqrt(R0 A / (4 k T)) (Johnson
    # limit, Rogalski 2011 ch. 3, from memory) equals R_i / sqrt(4 q J0)
    J0_A = 1e-9
    R0A = sc.k * 77.0 / (Q * J0_A)
    johnson = det.responsivity_A_W(5000.0, 0.8) * np.sqrt(R0A / (4.0 * sc.k * 77.0))
    assert det.detectivity_shot_cm_Hz05_W(5000.0, J0_A * 1e3, 0.8, zero_bias=True) == pytest.approx(johnson, rel=1e-12)
    # analytic: under bias the shot term is 2 q J -> sqrt(2) higher
    assert det.detectivity_shot_cm_Hz05_W(5000.0, 1e-6, 0.8) == pytest.approx(
        np.sqrt(2.0) * det.detectivity_shot_cm_Hz05_W(5000.0, 1e-6, 0.8, zero_bias=True), rel=1e-12)


def test_nep_by_hand():
    # analytic: NEP = sqrt(A df) / D* = sqrt(1e-4 cm^2 * 1e4 Hz) / 1e11 = 1e-11 W
    assert det.noise_equivalent_power_W(1e11, 1e-4, 1e4) == pytest.approx(1e-11, rel=1e-12)


def test_field_of_view_factor():
    # analytic: sin^2 of the half-angle
    np.testing.assert_allclose(det.field_of_view_factor([90.0, 30.0]), [1.0, 0.25], rtol=1e-12)
    for bad in (0.0, -5.0, 91.0):
        with pytest.raises(InputError, match="background.field_of_view_deg"):
            det.field_of_view_factor(bad)


# --- background limit --------------------------------------------------------------------

E_A, A, G_BG = 0.1, 1e25, 1e18     # synthetic: G_th = A exp(-E/kT), G_bg constant


def _synthetic(T):
    T = np.asarray(T, dtype=float)
    return A * np.exp(-E_A / (sc.k / sc.e * T)), np.full_like(T, G_BG)


def test_background_limit_temperature_synthetic():
    # analytic: A exp(-E/kT*) = G_bg -> T* = E / (k ln(A / G_bg)) = 0.1 / (8.617e-5 * 16.118) = 72.0 K
    expected = E_A / (sc.k / sc.e * np.log(A / G_BG))
    res = det.background_limit_temperature_K(_synthetic, 20.0, 300.0)
    assert res.found
    assert res.temperature_K == pytest.approx(expected, rel=1e-7)
    assert "below" in res.note
    # analytic: background-limited below T*, not above
    g_th, g_bg = _synthetic(np.array([0.9 * expected, 1.1 * expected]))
    assert det.background_limited(g_th, g_bg).tolist() == [True, False]


def test_background_limit_no_crossing_is_reported():
    res = det.background_limit_temperature_K(_synthetic, 100.0, 300.0)
    assert not res.found and np.isnan(res.temperature_K)
    assert "never background-limited" in res.note
    res = det.background_limit_temperature_K(_synthetic, 1.0, 50.0)   # G_th underflows to 0 at 1 K: exp(-1160)
    assert not res.found and "background-limited throughout" in res.note
    assert res.to_dict()["background_limit_temperature_K"] is None


def test_background_limit_bad_range():
    with pytest.raises(InputError, match="T_high_K"):
        det.background_limit_temperature_K(_synthetic, 200.0, 100.0)


# --- bad input and modes ------------------------------------------------------------------

def test_bad_geometry_and_bias():
    with pytest.raises(InputError, match="detector.electrode_spacing_um"):
        det.transit_time_s(0.0, 1000.0, 1.0)
    with pytest.raises(InputError, match="detector.electrode_spacing_um"):
        det.Detector(electrode_spacing_um=-10.0)
    with pytest.raises(InputError, match="detector.bias_V"):
        det.transit_time_s(0.1, 1000.0, -1.0)
    with pytest.raises(InputError, match="detector.bias_V"):
        det.Detector(bias_V=-2.0)                                  # photoconductor: a magnitude
    assert det.Detector(mode="photodiode", bias_V=-1.0).bias_V == -1.0   # photodiode: reverse bias is fine
    with pytest.raises(InputError, match="detector.bandwidth_Hz"):
        det.Detector(bandwidth_Hz=0.0)
    with pytest.raises(InputError, match="detector.junction_side_doping_cm3"):
        det.Detector(mode="photodiode", junction_side_doping_cm3=-1e18)
    with pytest.raises(InputError, match="detector.generation_lifetime_s"):
        det.Detector(mode="photodiode", generation_lifetime_s=0.0)
    with pytest.raises(InputError, match="detector.generation_lifetime_s"):
        det.Detector(mode="photoconductor", generation_lifetime_s=1e-6)      # no junction in a bar
    with pytest.raises(InputError, match="detector.mode"):
        det.Detector(mode="bolometer")
    with pytest.raises(InputError, match="detector.spacing_um"):
        det.detector_from_table({"spacing_um": 10.0})


def test_photodiode_quantity_in_photoconductor_mode():
    pc = det.detector_from_table({"mode": "Photoconductor", "electrode_spacing_um": 500.0})
    assert pc.mode == "photoconductor" and pc.electrode_spacing_cm == pytest.approx(0.05)
    with pytest.raises(InputError, match="photodiode quantity"):
        det.require_mode(pc, "photodiode", "J0 (diffusion-limited dark current)")
    det.require_mode(det.Detector(mode="photodiode"), "photodiode", "J0")   # no error


def test_photoconductor_figures_consistency():
    # analytic, hand case: constant mobilities, dn = dp = G tau, no background; monochromatic
    # 1550 nm photon flux Phi with G t = eta Phi
    pc = det.Detector("photoconductor", electrode_spacing_um=1000.0, width_um=200.0, bias_V=5.0)
    t, tau, G, T = 20e-4, 1e-5, 1e20, 300.0
    mu = (1300.0, 450.0)
    n0, p0 = 1e15, 1e5
    dn = G * tau
    eta = 0.6
    phi = G * t / eta                                     # photons cm^-2 s^-1
    irr = phi * sc.h * sc.c / 1550e-9 * 1e4               # W m^-2
    f = det.photoconductor_figures(pc, t, T, n0, p0, n0 + dn, p0 + dn, mu, mu, tau, tau, G, 0.0, irr)
    L, w = 0.1, 0.02
    gain = tau * (mu[0] + mu[1]) * 5.0 / L**2             # = 1e-5 * 1750 * 5 / 0.01 = 8.75
    assert f["photoconductive_gain"] == pytest.approx(8.75, rel=1e-12)
    # analytic: I = q g G (L w t); with dn = G tau this is also the Delta sigma bar current
    assert f["signal_current_A"] == pytest.approx(Q * G * L * w * t * gain, rel=1e-12)
    assert f["photocurrent_A"] == pytest.approx(Q * G * L * w * t * gain, rel=1e-9)
    assert f["background_current_A"] == 0.0
    assert f["conductivity_contrast"] == pytest.approx(dn * 1750.0 / (n0 * 1300.0 + p0 * 450.0), rel=1e-9)
    assert f["minority_ratio"] == pytest.approx((p0 + dn) / p0, rel=1e-12)
    # analytic: R = eta g q lambda / (h c) for a line source (Rogalski 2011 ch. 3, from memory)
    assert f["responsivity_A_W"] == pytest.approx(det.responsivity_A_W(1550.0, eta, gain), rel=1e-9)
    # g-r noise of the signal 4 q^2 g^2 G V (Rogalski 2011 ch. 3, from memory); Johnson 4kT/R_bar of the
    # illuminated bar, R_bar = L / (sigma w t) (Johnson 1928, Nyquist 1928)
    V = L * w * t
    assert f["noise_signal_A_Hz05"] == pytest.approx(np.sqrt(4 * Q**2 * gain**2 * G * V), rel=1e-12)
    sigma = Q * ((n0 + dn) * mu[0] + (p0 + dn) * mu[1])
    johnson = np.sqrt(4 * sc.k * T * sigma * w * t / L)
    assert f["noise_johnson_A_Hz05"] == pytest.approx(johnson, rel=1e-12)
    g_th = n0 * p0 / ((n0 + p0) * tau)                    # Kinch 2007: thermal generation (analytic limit)
    total = np.sqrt(4 * Q**2 * gain**2 * (G + g_th) * V + johnson**2)
    assert f["noise_total_A_Hz05"] == pytest.approx(total, rel=1e-9)
    assert f["detectivity_cm_Hz05_W"] == pytest.approx(f["responsivity_A_W"] * np.sqrt(L * w) / total, rel=1e-9)
    # every added noise term lowers D* below the signal-g-r-only figure of Rogalski's eq.
    assert f["detectivity_cm_Hz05_W"] < det.detectivity_gr_cm_Hz05_W(1550.0, G, t, eta)
    # no background: no background limit (null), never background-limited
    assert np.isnan(f["detectivity_blip_cm_Hz05_W"]) and np.isnan(f["detectivity_over_blip"])
    assert not f["background_limited"]
    with pytest.raises(InputError, match="detector.mode"):
        det.photoconductor_figures(det.Detector("photodiode"), t, T, n0, p0, n0, p0, mu, mu, tau, tau, G, 0.0, irr)
