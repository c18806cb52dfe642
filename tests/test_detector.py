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


def test_nep_by_hand():
    # analytic: NEP = sqrt(A df) / D* = sqrt(1e-4 cm^2 * 1e4 Hz) / 1e11 = 1e-11 W
    assert det.noise_equivalent_power_W(1e11, 1e-4, 1e4) == pytest.approx(1e-11, rel=1e-12)


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
    # core functions name their own arguments (with the unit they take); the record names scenario keys
    with pytest.raises(InputError, match="^electrode_spacing_cm"):
        det.transit_time_s(0.0, 1000.0, 1.0)
    with pytest.raises(InputError, match="detector.electrode_spacing_um"):
        det.Detector(electrode_spacing_um=-10.0)
    with pytest.raises(InputError, match="^bias_V"):
        det.transit_time_s(0.1, 1000.0, -1.0)
    with pytest.raises(InputError, match="^bias_V"):
        det.transit_time_s(0.1, 1000.0, 0.0)                      # no drift field, no transit
    with pytest.raises(InputError, match="detector.bias_V"):
        det.Detector(bias_V=-2.0)                                  # photoconductor: a magnitude
    with pytest.raises(InputError, match="detector.bias_V"):
        det.Detector(bias_V=0.0)                                   # ... and > 0 (finding 4)
    assert det.Detector(mode="photodiode", bias_V=0.0).bias_V == 0.0    # a photodiode at zero bias is fine
    with pytest.raises(InputError, match="^width_cm"):
        det.bar_current_A(0.1, 1.0, 0.1, 0.0, 0.01)
    with pytest.raises(InputError, match="^thickness_cm"):
        det.bar_current_A(0.1, 1.0, 0.1, 0.01, -1.0)
    with pytest.raises(InputError, match="^quantum_efficiency"):
        det.responsivity_A_W(1000.0, 1.5)
    with pytest.raises(InputError, match="^area_cm2"):
        det.noise_equivalent_power_W(1e10, 0.0, 1.0)
    with pytest.raises(InputError, match="^base_width_cm"):
        det.j0_base_mA_cm2(NI, N, D, TAU, 0.0, 1.0)
    with pytest.raises(InputError, match="^rear_S_cm_s"):
        det.j0_base_mA_cm2(NI, N, D, TAU, 1e-3, -1.0)
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
    # every added noise term lowers D* below the signal-g-r-only figure eta lambda / (2 h c sqrt(G t))
    # (Rogalski 2011 ch. 3, from memory; the gain cancels between R and the g-r noise)
    assert f["detectivity_cm_Hz05_W"] < eta * 1550e-9 / (2 * sc.h * sc.c * np.sqrt(G * t))
    # no background: no background limit (null), never background-limited
    assert np.isnan(f["detectivity_blip_cm_Hz05_W"]) and np.isnan(f["detectivity_over_blip"])
    assert not f["background_limited"]
    with pytest.raises(InputError, match="detector.mode"):
        det.photoconductor_figures(det.Detector("photodiode"), t, T, n0, p0, n0, p0, mu, mu, tau, tau, G, 0.0, irr)


# --- review of issue 10 -----------------------------------------------------------------------

def test_j0_without_bulk_recombination():
    # analytic: tau -> inf (L -> inf) in (q n_i^2 D/(N L)) (s + tanh u)/(1 + s tanh u), s = S L/D, u = W/L:
    # D/L -> 0, s tanh u -> S W / D, so J0 -> q n_i^2 S / (N (1 + S W / D)); S = 0 -> 0; S = inf -> q n_i^2 D/(N W)
    W, S = 1e-3, 100.0
    assert det.j0_base_mA_cm2(NI, N, D, np.inf, W, S) == pytest.approx(1e3 * Q * NI**2 * S / (N * (1 + S * W / D)),
                                                                    rel=1e-12)
    assert det.j0_base_mA_cm2(NI, N, D, np.inf, W, 0.0) == 0.0
    assert det.j0_base_mA_cm2(NI, N, D, np.inf, W, np.inf) == pytest.approx(1e3 * Q * NI**2 * D / (N * W), rel=1e-12)
    assert det.j0_thick_base_mA_cm2(NI, N, D, np.inf) == 0.0
    # analytic: the S = inf form is the limit of large S (relative difference D / (S W) = 1.2e-5 at S = 1e9)
    assert det.j0_base_mA_cm2(NI, N, D, TAU, W, 1e9) == pytest.approx(det.j0_base_mA_cm2(NI, N, D, TAU, W, np.inf),
                                                                   rel=2e-5)


def test_bulk_lifetime_adds_rates():
    # analytic: 1 / (1/1e-6 + 1/4e-6 + 1/4e-6) = 1 / 1.5e6 = 6.667e-7 s; an absent channel (inf) drops out
    assert det.bulk_lifetime_s(1e-6, 4e-6, 4e-6) == pytest.approx(1e-6 / 1.5, rel=1e-12)
    assert det.bulk_lifetime_s(np.inf, 2e-6, np.inf) == pytest.approx(2e-6, rel=1e-12)
    assert det.bulk_lifetime_s(np.inf, np.inf, np.inf) == np.inf


def test_minority_ratio_from_logarithms_without_warnings():
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        # analytic: p0 = exp(-750) underflows a double (smallest subnormal exp(-744.4)); p = 1e-300:
        # p/p0 = exp(ln 1e-300 + 750) = exp(59.23) = 5.3e25
        r = det.minority_ratio(np.log(1e19), -750.0, 1e19, 1e-300)
        assert r == pytest.approx(np.exp(np.log(1e-300) + 750.0), rel=1e-12)
        # beyond the largest double: null (NaN), no overflow warning
        assert np.isnan(det.minority_ratio(np.log(1e19), -900.0, 1e19, 1e5))
        # dark (p = 0 after an underflow too): the ratio is 1 by definition
        assert det.minority_ratio(np.log(1e19), -900.0, 1e19, 0.0) == 1.0
        # p-type: n / n0 (analytic 3e5 / 1e5 = 3)
        assert det.minority_ratio(np.log(1e5), np.log(1e17), 3e5, 1e17) == pytest.approx(3.0, rel=1e-12)


def test_depletion_saturation_and_noise_without():
    # analytic: q n_i W / tau_g = 1.602e-19 * 1e10 * 1e-4 / 1e-6 = 1.602e-8 A/cm^2 = 1.602e-5 mA/cm^2
    assert det.depletion_saturation_mA_cm2(1e10, 1e-4, 1e-6) == pytest.approx(1e3 * Q * 1e10 * 1e-4 / 1e-6, rel=1e-12)
    assert det.depletion_saturation_mA_cm2(1e10, 1e-4, np.inf) == 0.0
    # analytic: sqrt(5^2 - 3^2) = 4; round-off below zero floors at 0
    assert det.noise_without_A_Hz05(5.0, 3.0) == pytest.approx(4.0, rel=1e-15)
    assert det.noise_without_A_Hz05(1.0, 1.0 + 1e-16) == 0.0


def test_forward_bias_at_the_built_in_potential_is_an_input_error():
    # analytic: V_bi = kT/q ln(N nj / ni^2) = 6.6354 mV * ln(1e15 * 1e18 / 1e20) = 6.6354e-3 * 29.934 = 0.1986 V
    # (below the 0.2 eV gap cap) at 77 K; limit V_bi - 3 kT/q = 0.1986 - 0.0199 = 0.1787 V
    T, ni, N_b, nj = 77.0, 1e10, 1e15, 1e18
    kT = sc.k * T / sc.e                                       # scipy.constants
    vbi = kT * np.log(N_b * nj / ni**2)                        # Sze & Ng 2007 sec. 2.2 (from memory)
    limit = vbi - 3 * kT
    assert limit == pytest.approx(0.1787, abs=2e-4)
    assert det.forward_bias_limit_V(det.built_in_potential_V(T, N_b, nj, ni, 0.2), T) == pytest.approx(limit, rel=1e-12)
    args = (20e-4, T, ni, N_b, ni**2 / N_b, N_b, ni**2 / N_b, 10.0, 1e-6, 100.0, 0.0, 0.0, 0.0, 0.0)
    kw = dict(bandgap_eV=0.2, permittivity=16.8, electron_mass_m0=0.014)
    ok = det.photodiode_figures(det.Detector("photodiode", bias_V=0.99 * limit), *args, **kw)
    assert np.isfinite(ok["dark_current_A"])
    with pytest.raises(InputError, match="detector.bias_V") as err:
        det.photodiode_figures(det.Detector("photodiode", bias_V=1.01 * limit), *args, **kw)
    assert f"{limit:.4g} V" in str(err.value) and "77 K" in str(err.value)
    nan = det.photodiode_figures(det.Detector("photodiode", bias_V=1.01 * limit), *args, **kw,
                                 beyond_bias_limit="nan")
    assert np.isnan(nan["dark_current_A"]) and np.isnan(nan["detectivity_cm_Hz05_W"])
    # zero and reverse bias are always allowed, even where V_bi - 3kT/q < 0: analytic V_bi =
    # kT ln(1e14 * 1e14 / 1e14^2) = 0 for an intrinsic base (N = n_i) with nj = n_i at 300 K
    hot = (20e-4, 300.0, 1e14, 1e14, 1e14, 1e14, 1e14, 10.0, 1e-6, 100.0, 0.0, 0.0, 0.0, 0.0)
    for bias in (0.0, -0.5):
        f = det.photodiode_figures(det.Detector("photodiode", bias_V=bias, junction_side_doping_cm3=1e14), *hot, **kw)
        assert f["forward_bias_limit_V"] < 0 and np.isfinite(f["r0a_ohm_cm2"])


def test_high_field_caution_criteria():
    # analytic: L = 0.01 cm, V = 1 V -> E = 100 V/cm; minority drift length mu_h E tau = 400 * 100 * 1e-7
    # = 4e-3 cm < L: no sweep-out; tau = 1e-6 s -> 4e-2 cm > L: swept out (Rittner 1956, from memory)
    assert not det.high_field_caution(1.0, 0.01, 1e4, 400.0, 1e-7)
    assert det.high_field_caution(1.0, 0.01, 1e4, 400.0, 1e-6)
    # analytic: mu_e E = 1e4 * 2e3 = 2e7 cm/s > 1e7 cm/s (saturation velocity, common practice), no sweep-out
    assert det.high_field_caution(20.0, 0.01, 1e4, 400.0, 1e-12)
    assert not det.high_field_caution(5.0, 0.01, 1e4, 400.0, 1e-12)         # 5e6 cm/s
