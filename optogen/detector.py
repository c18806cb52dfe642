"""Detector figures: photoconductor gain and currents, responsivity, photodiode
dark current density, noise-limited detectivity and the background limit.

Pure numpy functions that broadcast over any shape; `Detector` only gathers
the `[detector]` scenario settings.  Lengths [cm] in the core (the `Detector`
record keeps micrometres, named so), currents [A], current densities
[mA cm^-2], rates [cm^-3 s^-1], detectivity [cm Hz^1/2 W^-1] (Jones).
"""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np
from scipy.optimize import brentq

from .constants import h_J_s, c_m_s, hc_eV_nm, k_B_eV_K, q_C
from .transport import conductivity_S_cm
from .errors import InputError, check_range, did_you_mean

__all__ = [
    "MODES", "Detector", "detector_from_table", "require_mode",
    "electric_field_V_cm", "transit_time_s", "photoconductive_gain", "bar_current_A",
    "conductivity_contrast", "responsivity_A_W", "responsivity_broadband_A_W",
    "noise_equivalent_power_W", "j0_thick_base_mA_cm2", "j0_base_mA_cm2", "thermal_generation_cm3_s",
    "detectivity_gr_cm_Hz05_W", "detectivity_shot_cm_Hz05_W", "field_of_view_factor",
    "background_limited", "BackgroundLimit", "background_limit_temperature_K",
    "photoconductor_figures",
]

MODES = ("photoconductor", "photodiode")


def _arr(x):
    return np.asarray(x, dtype=float)


def _spacing(electrode_spacing_cm):
    return _arr(check_range("detector.electrode_spacing_um", electrode_spacing_cm, 0.0, low_open=True, unit="(given in cm)"))


def _bias(bias_V, allow_zero):
    return _arr(check_range("detector.bias_V", bias_V, 0.0, low_open=not allow_zero, unit="V (bias magnitude)"))


# ---------------------------------------------------------------------------
# Scenario record
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Detector:
    """The `[detector]` settings.

    mode: "photoconductor" or "photodiode" [-]
    electrode_spacing_um: distance between the electrodes of a photoconductor bar [um]
    width_um: bar (or pixel) width across the current [um]
    bias_V: photoconductor: bias magnitude across the electrodes (>= 0);
        photodiode: applied bias, negative = reverse [V]
    junction_side_doping_cm3: doping of the heavily doped side of a one-sided
        junction (photodiode); its own J0 share is neglected in the one-sided
        approximation [cm^-3]
    bandwidth_Hz: noise bandwidth for noise currents and NEP [Hz]
    rear_S_cm_s: back-surface recombination velocity of the base for the
        thin-base J0 (None: take it from [recombination]) [cm/s]
    """

    mode: str = "photoconductor"
    electrode_spacing_um: float = 1000.0
    width_um: float = 1000.0
    bias_V: float = 1.0
    junction_side_doping_cm3: float | None = None
    bandwidth_Hz: float = 1.0
    rear_S_cm_s: float | None = None

    def __post_init__(self):
        mode = str(self.mode).strip().lower()
        if mode not in MODES:
            raise InputError("detector.mode", self.mode, " or ".join(MODES), did_you_mean(mode, MODES))
        object.__setattr__(self, "mode", mode)
        check_range("detector.electrode_spacing_um", self.electrode_spacing_um, 0.0, low_open=True, unit="um")
        check_range("detector.width_um", self.width_um, 0.0, low_open=True, unit="um")
        if mode == "photoconductor":
            check_range("detector.bias_V", self.bias_V, 0.0, unit="V (a photoconductor takes a bias magnitude)")
        else:
            check_range("detector.bias_V", self.bias_V, unit="V")
        for key in ("junction_side_doping_cm3", "rear_S_cm_s"):
            if getattr(self, key) is not None and mode == "photoconductor":
                raise InputError(f"detector.{key}", getattr(self, key), 'only with mode = "photodiode"',
                                 "a photoconductor bar has no junction (surfaces go in [recombination])")
        if self.junction_side_doping_cm3 is not None:
            check_range("detector.junction_side_doping_cm3", self.junction_side_doping_cm3, 0.0,
                        low_open=True, unit="cm^-3")
        check_range("detector.bandwidth_Hz", self.bandwidth_Hz, 0.0, low_open=True, unit="Hz")
        if self.rear_S_cm_s is not None:
            check_range("detector.rear_S_cm_s", self.rear_S_cm_s, 0.0, np.inf, unit="cm/s")

    @property
    def electrode_spacing_cm(self):
        """Electrode spacing [cm]."""
        return self.electrode_spacing_um * 1e-4

    @property
    def width_cm(self):
        """Bar width [cm]."""
        return self.width_um * 1e-4

    @property
    def area_cm2(self):
        """Optical area of the bar or pixel, electrode spacing x width [cm^2]."""
        return self.electrode_spacing_cm * self.width_cm


_DETECTOR_KEYS = tuple(f.name for f in fields(Detector))


def detector_from_table(table: dict) -> Detector:
    """A `Detector` from a scenario's `[detector]` table (keys = `Detector` fields)."""
    for key in table:
        if key not in _DETECTOR_KEYS:
            raise InputError(f"detector.{key}", table[key], "a key of [detector]: " + ", ".join(_DETECTOR_KEYS),
                             did_you_mean(key, _DETECTOR_KEYS))
    return Detector(**table)


def require_mode(detector: Detector, mode: str, quantity: str) -> None:
    """Raise InputError unless `detector.mode` is `mode` (`quantity` names what was asked)."""
    if detector.mode != mode:
        raise InputError("detector.mode", detector.mode, f'"{mode}" for {quantity}',
                         f"{quantity} is a {mode} quantity; set detector.mode = \"{mode}\"")


# ---------------------------------------------------------------------------
# Photoconductor
# ---------------------------------------------------------------------------

def electric_field_V_cm(bias_V, electrode_spacing_cm):
    """Uniform field E = V / L_el [V/cm].  bias_V [V] (>= 0); electrode_spacing_cm [cm] (> 0)."""
    return _bias(bias_V, True) / _spacing(electrode_spacing_cm)


def transit_time_s(electrode_spacing_cm, mobility_cm2_Vs, bias_V):
    """Transit time between the electrodes t_tr = L_el^2 / (mu V) [s].

    For the photoconductive gain of a bar with ohmic contacts (no sweep-out,
    Delta_n = Delta_p) pass mu = mu_e + mu_h: then tau/t_tr equals
    I_ph / (q x carriers generated per second), with I_ph = q Delta_n
    (mu_e + mu_h) E A (A. Rose, Concepts in Photoconductivity and Allied
    Problems, Interscience 1963; S. M. Sze and K. K. Ng, Physics of
    Semiconductor Devices, 3rd ed., Wiley 2007, sec. 13.2, where
    gain = tau mu_n (1 + mu_p/mu_n) E / L).  Pass a single mobility for the
    transit time of that carrier alone.

    electrode_spacing_cm [cm] (> 0); mobility_cm2_Vs [cm^2 V^-1 s^-1]; bias_V [V] (> 0).
    """
    L = _spacing(electrode_spacing_cm)
    return L**2 / (_arr(mobility_cm2_Vs) * _bias(bias_V, False))


def photoconductive_gain(tau_s, transit_time_s):
    """Photoconductive gain g = tau / t_tr [-] (Rose 1963; Sze & Ng 2007 sec. 13.2).

    tau_s: effective excess-carrier lifetime [s]; transit_time_s [s].
    """
    return _arr(tau_s) / _arr(transit_time_s)


def bar_current_A(conductivity_S_cm, bias_V, electrode_spacing_cm, width_cm, thickness_cm):
    """Current through a bar I = sigma E A = sigma (V / L_el) w t [A].

    With sigma = sigma_0 this is the dark current, with sigma = Delta_sigma the
    photocurrent.  conductivity_S_cm [S/cm]; bias_V [V] (>= 0);
    electrode_spacing_cm, width_cm, thickness_cm [cm].
    """
    w = _arr(check_range("detector.width_um", width_cm, 0.0, low_open=True, unit="(length)"))
    t = _arr(check_range("absorber.thickness_um", thickness_cm, 0.0, low_open=True, unit="(length)"))
    return _arr(conductivity_S_cm) * electric_field_V_cm(bias_V, electrode_spacing_cm) * w * t


def conductivity_contrast(sigma_light_S_cm, sigma_dark_S_cm):
    """Conductivity contrast Delta_sigma / sigma_0 = (sigma_light - sigma_dark) / sigma_dark [-].

    sigma_light_S_cm, sigma_dark_S_cm [S/cm].
    """
    dark = _arr(sigma_dark_S_cm)
    return (_arr(sigma_light_S_cm) - dark) / dark


def responsivity_A_W(wavelength_nm, quantum_efficiency=1.0, gain=1.0):
    """Current responsivity to a line source R = eta g q lambda / (h c) [A/W].

    q lambda / (h c) = lambda[nm] / (hc/q [V nm]), i.e. lambda[um]/1.2398 A/W
    (e.g. A. Rogalski, Infrared Detectors, 2nd ed., CRC 2011, ch. 3).
    wavelength_nm [nm]; quantum_efficiency [-]; gain [-].
    """
    lam = check_range("light.wavelength_nm", wavelength_nm, 0.0, low_open=True, unit="nm")
    eta = check_range("detector.quantum_efficiency", quantum_efficiency, 0.0, 1.0)
    return _arr(eta) * _arr(gain) * _arr(lam) / hc_eV_nm


def responsivity_broadband_A_W(photocurrent_A, incident_power_W):
    """Responsivity to a broadband source R = I_ph / P_incident [A/W].

    photocurrent_A [A]; incident_power_W [W] (> 0): the light power on the
    detector area (before reflection).
    """
    P = check_range("light.power_W", incident_power_W, 0.0, low_open=True, unit="W")
    return _arr(photocurrent_A) / _arr(P)


# ---------------------------------------------------------------------------
# Photodiode dark current
# ---------------------------------------------------------------------------

def j0_thick_base_mA_cm2(ni_cm3, base_doping_cm3, D_cm2_s, tau_s):
    """Diffusion-limited saturation current density of a one-sided junction, thick base [mA/cm^2].

    J0 = q n_i^2 D / (N L),  L = sqrt(D tau)   (base width W >> L)
    (W. Shockley, Bell Syst. Tech. J. 28, 435 (1949); Sze & Ng 2007, eq. 2.64).

    ni_cm3: intrinsic density (n_i,eff where narrowing matters) [cm^-3];
    base_doping_cm3: net base doping N [cm^-3]; D_cm2_s, tau_s: minority-carrier
    diffusion coefficient [cm^2/s] and lifetime [s] in the base.
    """
    ni, N, D, tau = (_arr(x) for x in (ni_cm3, base_doping_cm3, D_cm2_s, tau_s))
    L = np.sqrt(D * tau)
    return 1e3 * q_C * ni * (ni / N) * D / L


def j0_base_mA_cm2(ni_cm3, base_doping_cm3, D_cm2_s, tau_s, base_width_cm, rear_S_cm_s):
    """Saturation current density of a one-sided junction on a base of finite width [mA/cm^2].

    J0 = (q n_i^2 D / (N L)) [ (S L/D) cosh(W/L) + sinh(W/L) ] / [ (S L/D) sinh(W/L) + cosh(W/L) ]
       = (q n_i^2 D / (N L)) (s + tanh(W/L)) / (1 + s tanh(W/L)),  s = S L / D
    (evaluated in the tanh form, which does not overflow for W >> L).
    Limits: W >> L -> thick base; S -> inf (ohmic back contact) -> coth(W/L),
    and W << L -> q n_i^2 D/(N W); S = 0 -> tanh(W/L), and W << L ->
    q n_i^2 W / (N tau).  Source: e.g. M. A. Green, Solar Cells: Operating
    Principles, Technology and System Applications (Prentice-Hall 1982), ch. 4;
    J. L. Gray in A. Luque and S. Hegedus (eds.), Handbook of Photovoltaic
    Science and Engineering (Wiley 2003), ch. 3 (from memory).

    ni_cm3 [cm^-3]; base_doping_cm3 [cm^-3]; D_cm2_s [cm^2/s]; tau_s [s];
    base_width_cm: quasi-neutral base width W [cm]; rear_S_cm_s: back-surface
    recombination velocity S (>= 0, inf allowed) [cm/s].
    """
    W = _arr(check_range("absorber.thickness_um", base_width_cm, 0.0, low_open=True, unit="(length)"))
    S = _arr(check_range("recombination.rear_S_cm_s", rear_S_cm_s, 0.0, np.inf, unit="cm/s"))
    D, tau = _arr(D_cm2_s), _arr(tau_s)
    L = np.sqrt(D * tau)
    th = np.tanh(W / L)
    s = S * L / D
    with np.errstate(invalid="ignore"):
        ratio = np.where(np.isinf(s), 1.0 / th, (s + th) / (1.0 + s * th))
    return j0_thick_base_mA_cm2(ni_cm3, base_doping_cm3, D, tau) * ratio


# ---------------------------------------------------------------------------
# Generation, noise and the background limit
# ---------------------------------------------------------------------------

def thermal_generation_cm3_s(n0_cm3, p0_cm3, tau_s):
    """Thermal generation rate G_th = n0 p0 / ((n0 + p0) tau) [cm^-3 s^-1].

    For a net recombination of the form U = K (n p - n_i^2), the low-injection
    lifetime is tau = 1 / (K (n0 + p0)) and the thermal generation is
    K n_i^2 = n0 p0 / ((n0 + p0) tau).  In extrinsic material this is the
    minority density over the lifetime, n_i^2 / (N tau) (M. A. Kinch,
    Fundamentals of Infrared Detector Materials, SPIE 2007, ch. 3; Rogalski
    2011 ch. 9); intrinsic material gives n_i / (2 tau).

    n0_cm3, p0_cm3: equilibrium densities [cm^-3]; tau_s: lifetime [s].
    """
    n0, p0 = _arr(n0_cm3), _arr(p0_cm3)
    return (n0 * p0 / (n0 + p0)) / _arr(tau_s)


def detectivity_gr_cm_Hz05_W(wavelength_nm, generation_cm3_s, thickness_cm, quantum_efficiency=1.0,
                             recombination_cm3_s=None):
    """Generation-recombination-noise-limited detectivity of a photoconductor [cm Hz^1/2 W^-1].

    D* = eta lambda / (h c) / sqrt(2 (G + R) t)
    from the g-r noise current i_n^2 = 2 q^2 g^2 (G + R) A t df and the
    responsivity eta g q lambda/(h c); the gain g cancels.  In steady state
    R = G (the default), giving D* = eta lambda / (2 h c sqrt(G t)); with
    G t = eta Phi_B (background only) this is the photoconductor BLIP limit
    D* = (lambda / 2hc) sqrt(eta / Phi_B), a factor sqrt(2) below a photodiode
    (A. Rogalski, Infrared Detectors, 2nd ed., CRC 2011, ch. 3 and 9;
    M. A. Kinch, Fundamentals of Infrared Detector Materials, SPIE 2007).

    wavelength_nm [nm]; generation_cm3_s: total generation, thermal + optical
    + background [cm^-3 s^-1]; thickness_cm: absorber thickness t [cm];
    quantum_efficiency [-]; recombination_cm3_s [cm^-3 s^-1] (default = G).
    """
    lam_m = _arr(check_range("light.wavelength_nm", wavelength_nm, 0.0, low_open=True, unit="nm")) * 1e-9
    G = _arr(generation_cm3_s)
    R = G if recombination_cm3_s is None else _arr(recombination_cm3_s)
    t = _arr(check_range("absorber.thickness_um", thickness_cm, 0.0, low_open=True, unit="(length)"))
    return _arr(quantum_efficiency) * lam_m / (h_J_s * c_m_s) / np.sqrt(2.0 * (G + R) * t)


def detectivity_shot_cm_Hz05_W(wavelength_nm, dark_current_mA_cm2, quantum_efficiency=1.0, zero_bias=False):
    """Shot-noise-limited detectivity of a photodiode [cm Hz^1/2 W^-1].

    D* = R_i / sqrt(2 q J),  R_i = eta q lambda / (h c)
    under bias (J = dark current density).  At zero bias the forward and
    reverse diffusion currents both contribute: i_n^2 = 4 q J0 A df
    (= 4 k T A df / (R0 A), the Johnson noise of R0 A = kT/(q J0)), so
    D* = R_i / sqrt(4 q J0) when zero_bias is True (Rogalski 2011, ch. 3 and 12).

    wavelength_nm [nm]; dark_current_mA_cm2 [mA/cm^2] (> 0); quantum_efficiency [-].
    """
    J = _arr(check_range("detector.dark_current_mA_cm2", dark_current_mA_cm2, 0.0, low_open=True,
                         unit="mA/cm^2")) * 1e-3
    factor = 4.0 if zero_bias else 2.0
    return responsivity_A_W(wavelength_nm, quantum_efficiency) / np.sqrt(factor * q_C * J)


def noise_equivalent_power_W(detectivity_cm_Hz05_W, area_cm2, bandwidth_Hz):
    """Noise-equivalent power NEP = sqrt(A df) / D* [W] (Rogalski 2011, ch. 3).

    detectivity_cm_Hz05_W [cm Hz^1/2 W^-1]; area_cm2: detector area [cm^2];
    bandwidth_Hz: noise bandwidth [Hz].
    """
    A = check_range("detector.area_cm2", area_cm2, 0.0, low_open=True, unit="cm^2")
    df = check_range("detector.bandwidth_Hz", bandwidth_Hz, 0.0, low_open=True, unit="Hz")
    return np.sqrt(_arr(A) * _arr(df)) / _arr(detectivity_cm_Hz05_W)


def field_of_view_factor(field_of_view_deg):
    """Fraction of hemispherical background flux seen through a cold shield, sin^2(theta) [-].

    theta is the field-of-view half-angle; 90 deg = the full hemisphere
    (Rogalski 2011, ch. 3).  field_of_view_deg [deg], in (0, 90].
    """
    th = check_range("background.field_of_view_deg", field_of_view_deg, 0.0, 90.0, low_open=True, unit="deg")
    return np.sin(np.radians(_arr(th))) ** 2


def background_limited(thermal_generation_cm3_s, background_generation_cm3_s):
    """True where background (optical) generation exceeds thermal generation [bool].

    thermal_generation_cm3_s, background_generation_cm3_s [cm^-3 s^-1].
    """
    return _arr(background_generation_cm3_s) > _arr(thermal_generation_cm3_s)


@dataclass(frozen=True)
class BackgroundLimit:
    """Where a pixel becomes background-limited.

    temperature_K: crossing temperature, nan when none was found [K]
    found: whether a crossing lies in the scanned range [-]
    note: plain-language statement of the result [-]
    """

    temperature_K: float
    found: bool
    note: str

    def to_dict(self):
        """Keys for the detector block; the temperature is None when not found [K]."""
        return {"background_limit_temperature_K": None if not self.found else self.temperature_K,
                "background_limit_found": self.found, "background_limit_note": self.note}


_LOG_CLIP = 1e3


def _log_ratio(fn, T):
    g_th, g_bg = fn(T)
    with np.errstate(divide="ignore", invalid="ignore"):
        d = np.log(_arr(g_th)) - np.log(_arr(g_bg))
    if np.any(np.isnan(d)):
        raise InputError("background", "nan", "finite, non-negative thermal and background generation rates")
    return np.clip(d, -_LOG_CLIP, _LOG_CLIP)


def background_limit_temperature_K(fn, T_low_K, T_high_K, points=256, xtol_K=1e-6):
    """Temperature at which thermal generation equals background generation [K].

    fn(T) takes an array of temperatures [K] and returns (thermal, background)
    generation rates [cm^-3 s^-1] of the same shape.  d(T) = ln G_th - ln G_bg
    is scanned on `points` temperatures in one vectorised call; the highest
    sign change (the temperature a cooled pixel reaches first on the way
    down) is refined with Brent's method (scipy.optimize.brentq).  Without a
    sign change the result has found=False, temperature nan and a note saying
    whether the pixel is background-limited over the whole range or nowhere.

    T_low_K, T_high_K: scan range, 0 < T_low < T_high [K]; points: scan
    resolution [-]; xtol_K: root tolerance [K].
    """
    lo = check_range("background_limit.T_low_K", T_low_K, 0.0, low_open=True, unit="K")
    hi = check_range("background_limit.T_high_K", T_high_K, lo, low_open=True, unit="K (and > T_low_K)")
    T = np.linspace(lo, hi, int(points))
    d = _log_ratio(fn, T)
    thermal = d > 0.0
    change = np.flatnonzero(thermal[1:] != thermal[:-1])
    if change.size == 0:
        where = "thermally limited (never background-limited)" if thermal[0] else "background-limited throughout"
        return BackgroundLimit(float("nan"), False, f"no crossing between {lo:g} K and {hi:g} K: {where}")
    i = change[-1]
    Tc = brentq(lambda t: float(_log_ratio(fn, np.array([t])).ravel()[0]), T[i], T[i + 1], xtol=xtol_K)
    direction = "below" if thermal[i + 1] else "above"
    note = f"background-limited {direction} {Tc:.4g} K"
    if change.size > 1:
        note += f" ({change.size} crossings in {lo:g}-{hi:g} K; the highest is reported)"
    return BackgroundLimit(float(Tc), True, note)


# ---------------------------------------------------------------------------
# The photoconductor block
# ---------------------------------------------------------------------------

def photoconductor_figures(detector, thickness_cm, n0_cm3, p0_cm3, n_cm3, p_cm3,
                           mu_dark_cm2_Vs, mu_light_cm2_Vs, tau_eff_s, tau_dark_s,
                           optical_generation_cm3_s, background_generation_cm3_s,
                           irradiance_W_m2):
    """The detector figures of a photoconductor bar, as a dict of arrays (units in the keys).

    detector: `Detector` in photoconductor mode; thickness_cm [cm];
    n0_cm3, p0_cm3: dark densities [cm^-3]; n_cm3, p_cm3: illuminated densities
    [cm^-3]; mu_dark_cm2_Vs, mu_light_cm2_Vs: (mu_e, mu_h) pairs of the dark and
    illuminated states [cm^2 V^-1 s^-1]; tau_eff_s: effective lifetime under
    light [s]; tau_dark_s: low-injection lifetime for the thermal generation
    [s]; optical_generation_cm3_s, background_generation_cm3_s: average
    generation by the source and by the background [cm^-3 s^-1];
    irradiance_W_m2: incident irradiance of the source on the bar [W m^-2].

    sigma from `optogen.transport.conductivity_S_cm`; currents `bar_current_A`;
    gain tau_eff/t_tr with t_tr for mu_e + mu_h of the illuminated state
    (`transit_time_s`); responsivity I_ph / P on the bar area L_el w; the g-r
    limited D* = R / (2 q g sqrt(G t)) with G = thermal + optical + background
    (equal to `detectivity_gr_cm_Hz05_W` for a line source); minority ratio =
    illuminated / dark minority density.  Responsivity and D* are nan where
    irradiance_W_m2 is 0 (no source: undefined, reported as null by the caller).
    """
    require_mode(detector, "photoconductor", "photoconductor_figures")
    L, w = detector.electrode_spacing_cm, detector.width_cm
    V, t = detector.bias_V, _arr(thickness_cm)
    n0, p0, n, p = (_arr(x) for x in (n0_cm3, p0_cm3, n_cm3, p_cm3))
    sigma0 = conductivity_S_cm(n0, p0, *mu_dark_cm2_Vs)
    sigma = conductivity_S_cm(n, p, *mu_light_cm2_Vs)
    i_dark = bar_current_A(sigma0, V, L, w, t)
    i_ph = bar_current_A(sigma - sigma0, V, L, w, t)
    t_tr = transit_time_s(L, _arr(mu_light_cm2_Vs[0]) + _arr(mu_light_cm2_Vs[1]), V)
    gain = photoconductive_gain(tau_eff_s, t_tr)
    power = _arr(irradiance_W_m2) * 1e-4 * L * w
    with np.errstate(divide="ignore", invalid="ignore"):
        resp = np.where(power > 0, i_ph / np.where(power > 0, power, 1.0), np.nan)
    g_th = thermal_generation_cm3_s(n0, p0, tau_dark_s)
    g_opt, g_bg = _arr(optical_generation_cm3_s), _arr(background_generation_cm3_s)
    d_star = resp / (2.0 * q_C * gain * np.sqrt((g_th + g_opt + g_bg) * t))
    minority_ratio = np.where(n0 >= p0, p / p0, n / n0)
    return {
        "sigma_dark_S_cm": sigma0, "sigma_light_S_cm": sigma,
        "conductivity_contrast": conductivity_contrast(sigma, sigma0),
        "dark_current_A": i_dark, "photocurrent_A": i_ph,
        "responsivity_A_W": resp, "transit_time_s": t_tr, "photoconductive_gain": gain,
        "minority_ratio": minority_ratio,
        "thermal_generation_cm3_s": g_th, "optical_generation_cm3_s": g_opt,
        "background_generation_cm3_s": g_bg,
        "background_limited": background_limited(g_th, g_bg),
        "detectivity_cm_Hz05_W": d_star,
    }


def photodiode_figures(detector, thickness_cm, T_K, ni_eff_cm3, n0_cm3, p0_cm3, n_cm3, p_cm3,
                       minority_D_cm2_s, tau_dark_s, rear_S_cm_s, photocurrent_mA_cm2,
                       optical_generation_cm3_s, background_generation_cm3_s, irradiance_W_m2):
    """The detector figures of a one-sided junction on this absorber (the base), units in the keys.

    Dark current density: the diffusion-limited J0 of the base, thick-base
    (`j0_thick_base_mA_cm2`) and thin-base with the rear recombination velocity
    (`j0_base_mA_cm2`), at the bias V as J_dark = J0 |exp(qV/kT) - 1| (ideal
    diode, Shockley 1949; Sze & Ng 2007 eq. 2.64).  Photocurrent: every
    photogenerated carrier collected (the generation layer's photocurrent,
    an upper bound).  Responsivity = J_ph / irradiance.  D*: shot-noise limit
    R / sqrt(2 q J_dark) under bias, R / sqrt(4 q J0) at zero bias
    (`detectivity_shot_cm_Hz05_W`; Rogalski 2011, ch. 3 and 12).

    thickness_cm: base width [cm]; T_K [K]; ni_eff_cm3 [cm^-3]; n0_cm3, p0_cm3,
    n_cm3, p_cm3: dark and illuminated densities [cm^-3]; minority_D_cm2_s:
    minority diffusivity in the base [cm^2/s]; tau_dark_s: low-injection lifetime [s];
    rear_S_cm_s [cm/s]; photocurrent_mA_cm2 [mA/cm^2]; optical_/background_generation_cm3_s
    [cm^-3 s^-1]; irradiance_W_m2: incident irradiance of the source [W m^-2].
    """
    require_mode(detector, "photodiode", "photodiode_figures")
    n0, p0 = _arr(n0_cm3), _arr(p0_cm3)
    N = np.abs(n0 - p0)
    j0_thick = j0_thick_base_mA_cm2(ni_eff_cm3, N, minority_D_cm2_s, tau_dark_s)
    j0_thin = j0_base_mA_cm2(ni_eff_cm3, N, minority_D_cm2_s, tau_dark_s, thickness_cm, rear_S_cm_s)
    v_over_kT = detector.bias_V / (k_B_eV_K * _arr(T_K))
    j_dark = j0_thin * np.abs(np.expm1(v_over_kT))
    zero_bias = detector.bias_V == 0
    j_noise = j0_thin if zero_bias else j_dark
    jph = _arr(photocurrent_mA_cm2)
    irr = _arr(irradiance_W_m2)
    with np.errstate(divide="ignore", invalid="ignore"):
        resp = np.where(irr > 0, jph * 1e-3 / np.where(irr > 0, irr * 1e-4, 1.0), np.nan)
        d_star = resp / np.sqrt((4.0 if zero_bias else 2.0) * q_C * j_noise * 1e-3)
    g_th = thermal_generation_cm3_s(n0, p0, tau_dark_s)
    g_bg = _arr(background_generation_cm3_s)
    return {
        "dark_current_density_thick_base_mA_cm2": j0_thick * np.abs(np.expm1(v_over_kT)),
        "dark_current_density_mA_cm2": j_dark, "j0_thick_base_mA_cm2": j0_thick, "j0_thin_base_mA_cm2": j0_thin,
        "dark_current_A": j_dark * 1e-3 * detector.area_cm2, "photocurrent_A": jph * 1e-3 * detector.area_cm2,
        "responsivity_A_W": resp, "detectivity_cm_Hz05_W": d_star,
        "minority_ratio": np.where(n0 >= p0, _arr(p_cm3) / p0, _arr(n_cm3) / n0),
        "thermal_generation_cm3_s": g_th, "optical_generation_cm3_s": _arr(optical_generation_cm3_s),
        "background_generation_cm3_s": g_bg, "background_limited": background_limited(g_th, g_bg),
    }
