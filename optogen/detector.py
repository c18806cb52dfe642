"""Detector figures: photoconductor gain and currents, responsivity, photodiode
dark current (diffusion and depletion region), R0A, the noise terms, D*, the
background-limited D*_BLIP, NEP and the background-limit temperature.

Pure numpy functions that broadcast over any shape; `Detector` only gathers
the `[detector]` scenario settings.  Lengths [cm] in the core (the `Detector`
record keeps micrometres, named so), currents [A], current densities
[mA cm^-2], rates [cm^-3 s^-1], detectivity [cm Hz^(1/2) W^-1] (Jones), noise currents
[A Hz^(-1/2)].
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from .constants import eps0_F_cm, h_J_s, hc_eV_nm, k_B_eV_K, k_B_J_K, m0_kg, q_C
from .transport import conductivity_S_cm
from . import schema as _schema
from .errors import InputError, check_range, did_you_mean

__all__ = [
    "MODES", "Detector", "detector_from_table", "require_mode",
    "electric_field_V_cm", "transit_time_s", "photoconductive_gain", "bar_current_A",
    "conductivity_contrast", "responsivity_A_W", "high_field_caution", "SATURATION_VELOCITY_cm_s",
    "noise_equivalent_power_W", "j0_thick_base_mA_cm2", "j0_base_mA_cm2", "thermal_generation_cm3_s",
    "bulk_lifetime_s", "minority_ratio",
    "background_limited", "BackgroundLimit", "background_limit_temperature_K",
    "shot_noise_A_Hz05", "gr_noise_photoconductor_A_Hz05", "johnson_noise_A_Hz05", "total_noise_A_Hz05",
    "noise_without_A_Hz05", "detectivity_from_noise_cm_Hz05_W", "detectivity_blip_cm_Hz05_W",
    "built_in_potential_V", "forward_bias_limit_V", "depletion_width_cm", "depletion_saturation_mA_cm2",
    "depletion_current_sah_noyce_shockley_mA_cm2", "r0a_ohm_cm2", "photodiode_thermal_noise_A_Hz05", "tunnelling_moll1964_mA_cm2", "spectral_response",
    "JUNCTION_SIDE_DOPING_DEFAULT_cm3", "photoconductor_figures", "photodiode_figures",
]

MODES = ("photoconductor", "photodiode")


def _arr(x):
    return np.asarray(x, dtype=float)


def _spacing(electrode_spacing_cm):
    return _arr(check_range("electrode_spacing_cm", electrode_spacing_cm, 0.0, low_open=True, unit="cm"))


def _bias(bias_V, allow_zero):
    return _arr(check_range("bias_V", bias_V, 0.0, low_open=not allow_zero, unit="V (bias magnitude)"))


# ---------------------------------------------------------------------------
# Scenario record
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Detector:
    """The `[detector]` settings.

    Parameters
    ----------
    mode : str
        "photoconductor" or "photodiode" [-].
    electrode_spacing_um : float
        Distance between the electrodes of a photoconductor bar [um].
    width_um : float
        Bar (or pixel) width across the current [um].
    bias_V : float
        Photoconductor: bias magnitude across the electrodes (> 0: the gain needs a drift
        field); photodiode: applied bias, negative = reverse [V].
    junction_side_doping_cm3 : float, optional
        Doping of the heavily doped side of a one-sided junction (photodiode); its own J0
        share is neglected in the one-sided approximation [cm^-3].
    bandwidth_Hz : float
        Noise bandwidth for noise currents and NEP [Hz].
    rear_S_cm_s : float, optional
        Back-surface recombination velocity of the base for the thin-base J0 (None: take it
        from [recombination]) [cm s^-1].
    generation_lifetime_s : float, optional
        Generation lifetime tau_g in the depletion region for the Sah-Noyce-Shockley current
        (photodiode; None: the SRH lifetime of the base's dark low-injection state, see
        `photodiode_figures`) [s].
    """

    mode: str = "photoconductor"
    electrode_spacing_um: float = 1000.0
    width_um: float = 1000.0
    bias_V: float = 1.0
    junction_side_doping_cm3: float | None = None
    bandwidth_Hz: float = 1.0
    rear_S_cm_s: float | None = None
    generation_lifetime_s: float | None = None

    def __post_init__(self):
        mode = str(self.mode).strip().lower()
        if mode not in MODES:
            raise InputError("detector.mode", self.mode, " or ".join(MODES), did_you_mean(mode, MODES))
        object.__setattr__(self, "mode", mode)
        check_range("detector.electrode_spacing_um", self.electrode_spacing_um, 0.0, low_open=True, unit="um")
        check_range("detector.width_um", self.width_um, 0.0, low_open=True, unit="um")
        if mode == "photoconductor":
            check_range("detector.bias_V", self.bias_V, 0.0, low_open=True,
                        unit="V (a photoconductor takes a bias magnitude; without one there is no photocurrent)")
        else:
            check_range("detector.bias_V", self.bias_V, unit="V")
        for key in ("junction_side_doping_cm3", "rear_S_cm_s", "generation_lifetime_s"):
            if getattr(self, key) is not None and mode == "photoconductor":
                raise InputError(f"detector.{key}", getattr(self, key), 'only with mode = "photodiode"',
                                 "a photoconductor bar has no junction (surfaces go in [recombination])")
        if self.junction_side_doping_cm3 is not None:
            check_range("detector.junction_side_doping_cm3", self.junction_side_doping_cm3, 0.0,
                        low_open=True, unit="cm^-3")
        check_range("detector.bandwidth_Hz", self.bandwidth_Hz, 0.0, low_open=True, unit="Hz")
        if self.rear_S_cm_s is not None:
            check_range("detector.rear_S_cm_s", self.rear_S_cm_s, 0.0, np.inf, unit="cm s^-1")
        if self.generation_lifetime_s is not None:
            check_range("detector.generation_lifetime_s", self.generation_lifetime_s, 0.0, low_open=True, unit="s")

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


_DETECTOR_KEYS = _schema.section_keys("detector")       # declared once in optogen.schema (= Detector fields)


def detector_from_table(table: dict) -> Detector:
    """A `Detector` from a scenario's `[detector]` table.

    Parameters
    ----------
    table : dict
        The [detector] table, keys = `Detector` fields [-].

    Returns
    -------
    Detector
        The validated settings.
    """
    for key in table:
        if key not in _DETECTOR_KEYS:
            raise InputError(f"detector.{key}", table[key], "a key of [detector]: " + ", ".join(_DETECTOR_KEYS),
                             did_you_mean(key, _DETECTOR_KEYS))
    return Detector(**table)


def require_mode(detector: Detector, mode: str, quantity: str) -> None:
    """Raise InputError unless `detector.mode` is `mode`.

    Parameters
    ----------
    detector : Detector
        The settings.
    mode : str
        The mode required, "photoconductor" or "photodiode" [-].
    quantity : str
        What was asked, named in the error [-].

    Raises
    ------
    InputError
        Naming detector.mode.
    """
    if detector.mode != mode:
        raise InputError("detector.mode", detector.mode, f'"{mode}" for {quantity}',
                         f"{quantity} is a {mode} quantity; set detector.mode = \"{mode}\"")


# ---------------------------------------------------------------------------
# Photoconductor
# ---------------------------------------------------------------------------

def electric_field_V_cm(bias_V, electrode_spacing_cm):
    """Uniform field E = V / L_el.

    Parameters
    ----------
    bias_V : array_like
        Bias magnitude, >= 0 [V].
    electrode_spacing_cm : array_like
        Electrode spacing L_el, > 0 [cm].

    Returns
    -------
    ndarray
        Field E [V cm^-1].
    """
    return _bias(bias_V, True) / _spacing(electrode_spacing_cm)


def transit_time_s(electrode_spacing_cm, mobility_cm2_Vs, bias_V):
    """Transit time between the electrodes t_tr = L_el^2 / (mu V).

    For the photoconductive gain of a bar with ohmic contacts (no sweep-out,
    Delta_n = Delta_p) pass mu = mu_e + mu_h: then tau/t_tr equals
    I_ph / (q x carriers generated per second), with I_ph = q Delta_n
    (mu_e + mu_h) E A (Sze & Ng: gain = tau mu_n (1 + mu_p/mu_n) E / L).  Pass a single
    mobility for the transit time of that carrier alone.

    Parameters
    ----------
    electrode_spacing_cm : array_like
        Electrode spacing L_el, > 0 [cm].
    mobility_cm2_Vs : array_like
        Mobility mu [cm^2 V^-1 s^-1].
    bias_V : array_like
        Bias magnitude, > 0 [V].

    Returns
    -------
    ndarray
        t_tr [s].

    References
    ----------
    A. Rose, Concepts in Photoconductivity and Allied Problems (Interscience, 1963);
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 13.2 (both from memory).
    """
    L = _spacing(electrode_spacing_cm)
    return L**2 / (_arr(mobility_cm2_Vs) * _bias(bias_V, False))


def photoconductive_gain(tau_s, transit_time_s):
    """Photoconductive gain g = tau / t_tr.

    Parameters
    ----------
    tau_s : array_like
        Effective excess-carrier lifetime [s].
    transit_time_s : array_like
        Transit time t_tr (`transit_time_s`) [s].

    Returns
    -------
    ndarray
        Gain g [-].

    References
    ----------
    A. Rose, Concepts in Photoconductivity and Allied Problems (Interscience, 1963);
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 13.2 (both from memory).
    """
    return _arr(tau_s) / _arr(transit_time_s)


def bar_current_A(conductivity_S_cm, bias_V, electrode_spacing_cm, width_cm, thickness_cm):
    """Current through a bar I = sigma E A = sigma (V / L_el) w t.

    With sigma = sigma_0 this is the dark current, with sigma = Delta_sigma the
    photocurrent.

    Parameters
    ----------
    conductivity_S_cm : array_like
        Conductivity sigma [S cm^-1].
    bias_V : array_like
        Bias magnitude, >= 0 [V].
    electrode_spacing_cm, width_cm, thickness_cm : array_like
        Bar length L_el, width w and thickness t [cm].

    Returns
    -------
    ndarray
        Current I [A].
    """
    w = _arr(check_range("width_cm", width_cm, 0.0, low_open=True, unit="cm"))
    t = _arr(check_range("thickness_cm", thickness_cm, 0.0, low_open=True, unit="cm"))
    return _arr(conductivity_S_cm) * electric_field_V_cm(bias_V, electrode_spacing_cm) * w * t


def conductivity_contrast(sigma_light_S_cm, sigma_dark_S_cm):
    """Conductivity contrast Delta_sigma / sigma_0 = (sigma_light - sigma_dark) / sigma_dark.

    Parameters
    ----------
    sigma_light_S_cm, sigma_dark_S_cm : array_like
        Conductivity under light and in the dark [S cm^-1].

    Returns
    -------
    ndarray
        The contrast [-].
    """
    dark = _arr(sigma_dark_S_cm)
    return (_arr(sigma_light_S_cm) - dark) / dark


def responsivity_A_W(wavelength_nm, quantum_efficiency=1.0, gain=1.0):
    """Current responsivity to a line source R = eta g q lambda / (h c).

    q lambda / (h c) = lambda[nm] / (hc/q [V nm]), i.e. lambda[um] / 1.2398 A W^-1.

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength [nm].
    quantum_efficiency : array_like
        Quantum efficiency eta, [0, 1] [-].
    gain : array_like
        Gain g [-].

    Returns
    -------
    ndarray
        Responsivity R [A W^-1].

    References
    ----------
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3.
    """
    lam = check_range("wavelength_nm", wavelength_nm, 0.0, low_open=True, unit="nm")
    eta = check_range("quantum_efficiency", quantum_efficiency, 0.0, 1.0)
    return _arr(eta) * _arr(gain) * _arr(lam) / hc_eV_nm


# ---------------------------------------------------------------------------
# Photodiode dark current
# ---------------------------------------------------------------------------

def j0_thick_base_mA_cm2(ni_cm3, base_doping_cm3, D_cm2_s, tau_s):
    """Diffusion-limited saturation current density of a one-sided junction, thick base.

    J0 = q n_i^2 D / (N L),  L = sqrt(D tau)   (base width W >> L).
    tau = inf (no bulk recombination) gives 0.

    Parameters
    ----------
    ni_cm3 : array_like
        Intrinsic density (n_i,eff where band-gap narrowing matters) [cm^-3].
    base_doping_cm3 : array_like
        Net base doping N [cm^-3].
    D_cm2_s : array_like
        Minority-carrier diffusion coefficient in the base [cm^2 s^-1].
    tau_s : array_like
        Minority-carrier lifetime in the base [s].

    Returns
    -------
    ndarray
        J0 [mA cm^-2].

    References
    ----------
    W. Shockley, Bell Syst. Tech. J. 28, 435 (1949), doi:10.1002/j.1538-7305.1949.tb03645.x
    (from memory); S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 2.3 (from memory).
    """
    ni, N, D, tau = (_arr(x) for x in (ni_cm3, base_doping_cm3, D_cm2_s, tau_s))
    return 1e3 * q_C * ni * (ni / N) * np.sqrt(D / tau)            # D / L = sqrt(D / tau)


def j0_base_mA_cm2(ni_cm3, base_doping_cm3, D_cm2_s, tau_s, base_width_cm, rear_S_cm_s):
    """Saturation current density of a one-sided junction on a base of finite width.

    J0 = (q n_i^2 D / (N L)) [ (S L/D) cosh(W/L) + sinh(W/L) ] / [ (S L/D) sinh(W/L) + cosh(W/L) ]
       = (q n_i^2 D / (N L)) (s + tanh(W/L)) / (1 + s tanh(W/L)),  s = S L / D
    Evaluated as (q n_i^2 / N) (S + (D/L) tanh u) / (1 + (S W / D) tanh(u)/u),
    u = W/L, which does not overflow for W >> L and holds for tau = inf
    (no bulk recombination: q n_i^2 S / (N (1 + S W / D))).
    Limits: W >> L -> thick base; S -> inf (ohmic back contact) -> coth(W/L),
    and W << L -> q n_i^2 D/(N W); S = 0 -> tanh(W/L), and W << L ->
    q n_i^2 W / (N tau).

    Parameters
    ----------
    ni_cm3 : array_like
        Intrinsic density (n_i,eff where band-gap narrowing matters) [cm^-3].
    base_doping_cm3 : array_like
        Net base doping N [cm^-3].
    D_cm2_s : array_like
        Minority-carrier diffusion coefficient D [cm^2 s^-1].
    tau_s : array_like
        Minority-carrier lifetime tau [s].
    base_width_cm : array_like
        Quasi-neutral base width W [cm].
    rear_S_cm_s : array_like
        Back-surface recombination velocity S (>= 0, inf allowed) [cm s^-1].

    Returns
    -------
    ndarray
        J0 [mA cm^-2].

    References
    ----------
    M. A. Green, Solar Cells: Operating Principles, Technology and System Applications
    (Prentice-Hall, 1982), ch. 4; J. L. Gray, in A. Luque and S. Hegedus (eds.), Handbook of
    Photovoltaic Science and Engineering (Wiley, 2003), ch. 3 (both from memory).
    """
    W = _arr(check_range("base_width_cm", base_width_cm, 0.0, low_open=True, unit="cm"))
    S = _arr(check_range("rear_S_cm_s", rear_S_cm_s, 0.0, np.inf, unit="cm s^-1"))
    ni, N, D, tau = (_arr(x) for x in (ni_cm3, base_doping_cm3, D_cm2_s, tau_s))
    u = W / np.sqrt(D * tau)                                   # W / L
    th = np.tanh(u)
    with np.errstate(invalid="ignore", divide="ignore"):
        thc = np.where(u > 1e-8, th / np.where(u > 1e-8, u, 1.0), 1.0)     # tanh(u)/u
        d_over_l = np.sqrt(D / tau)
        finite = (S + d_over_l * th) / (1.0 + S * W * thc / D)
        ratio = np.where(np.isinf(S), D / (W * thc), finite)
    return 1e3 * q_C * ni * (ni / N) * ratio


# ---------------------------------------------------------------------------
# Generation, noise and the background limit
# ---------------------------------------------------------------------------

def thermal_generation_cm3_s(n0_cm3, p0_cm3, tau_s):
    """Thermal generation rate G_th = n0 p0 / ((n0 + p0) tau).

    For a net recombination of the form U = K (n p - n_i^2), the low-injection
    lifetime is tau = 1 / (K (n0 + p0)) and the thermal generation is
    K n_i^2 = n0 p0 / ((n0 + p0) tau).  In extrinsic material this is the
    minority density over the lifetime, n_i^2 / (N tau); intrinsic material gives
    n_i / (2 tau).

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Equilibrium electron and hole densities [cm^-3].
    tau_s : array_like
        Low-injection lifetime [s].

    Returns
    -------
    ndarray
        G_th [cm^-3 s^-1].

    References
    ----------
    M. A. Kinch, Fundamentals of Infrared Detector Materials (SPIE, 2007), ch. 3;
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 9.
    """
    n0, p0 = _arr(n0_cm3), _arr(p0_cm3)
    return (n0 * p0 / (n0 + p0)) / _arr(tau_s)


def bulk_lifetime_s(tau_srh_s, tau_radiative_s, tau_auger_s):
    """Bulk lifetime 1 / (1/tau_SRH + 1/tau_rad + 1/tau_Auger) (surfaces left out).

    Parallel recombination channels add as rates (common practice); inf means
    the channel is absent, all inf gives inf.

    Parameters
    ----------
    tau_srh_s, tau_radiative_s, tau_auger_s : array_like
        Lifetimes of the three channels [s].

    Returns
    -------
    ndarray
        Bulk lifetime [s].
    """
    with np.errstate(divide="ignore"):
        rate = 1.0 / _arr(tau_srh_s) + 1.0 / _arr(tau_radiative_s) + 1.0 / _arr(tau_auger_s)
        return 1.0 / rate


def minority_ratio(ln_n0_cm3, ln_p0_cm3, n_cm3, p_cm3):
    """Illuminated over dark minority density, p/p0 (n-type) or n/n0 (p-type).

    Computed from the logarithms of the dark densities, so a dark minority
    density that underflows a double (degenerate narrow-gap material) gives no
    division by zero; a ratio above the largest double is NaN (null: the dark
    minority density is below 1e-308 of the illuminated one).

    Parameters
    ----------
    ln_n0_cm3, ln_p0_cm3 : array_like
        ln of the dark densities [ln cm^-3].
    n_cm3, p_cm3 : array_like
        Illuminated densities [cm^-3].

    Returns
    -------
    ndarray
        p/p0 (n-type) or n/n0 (p-type) [-].
    """
    ln_n0, ln_p0 = _arr(ln_n0_cm3), _arr(ln_p0_cm3)
    n_type = ln_n0 >= ln_p0
    ln_dark = np.where(n_type, ln_p0, ln_n0)
    light = np.where(n_type, _arr(p_cm3), _arr(n_cm3))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        ln_light = np.where(light > 0, np.log(np.where(light > 0, light, 1.0)), ln_dark)
        ratio = np.exp(np.minimum(ln_light - ln_dark, 800.0))
    return np.where(np.isfinite(ratio), ratio, np.nan)


def noise_equivalent_power_W(detectivity_cm_Hz05_W, area_cm2, bandwidth_Hz):
    """Noise-equivalent power NEP = sqrt(A df) / D*.

    Parameters
    ----------
    detectivity_cm_Hz05_W : array_like
        Specific detectivity D* [cm Hz^(1/2) W^-1].
    area_cm2 : array_like
        Detector area A [cm^2].
    bandwidth_Hz : array_like
        Noise bandwidth df [Hz].

    Returns
    -------
    ndarray
        NEP [W].

    References
    ----------
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3.
    """
    A = check_range("area_cm2", area_cm2, 0.0, low_open=True, unit="cm^2")
    df = check_range("bandwidth_Hz", bandwidth_Hz, 0.0, low_open=True, unit="Hz")
    return np.sqrt(_arr(A) * _arr(df)) / _arr(detectivity_cm_Hz05_W)


def background_limited(other_noise, background_noise):
    """True where the background photon noise exceeds all other noise together.

    Pass noise powers (A^2 Hz^-1) or noise currents (A Hz^(-1/2)) of the same kind:
    background > rest.  With noise currents, rest = sqrt(total^2 - background^2),
    so the test is background^2 > total^2 / 2, i.e. D*/D*_BLIP > 1/sqrt(2).
    For a photoconductor limited by g-r noise the powers are proportional to the
    generation rates, so generation rates (thermal, background) may be passed too.

    Parameters
    ----------
    other_noise : array_like
        All noise but the background's [A Hz^(-1/2), A^2 Hz^-1 or cm^-3 s^-1].
    background_noise : array_like
        The background noise, of the same kind [unit of other_noise].

    Returns
    -------
    ndarray of bool
        Background-limited [-].
    """
    return _arr(background_noise) > _arr(other_noise)


# ---------------------------------------------------------------------------
# Noise terms (one-sided spectral densities; every result in A Hz^(-1/2))
# ---------------------------------------------------------------------------

def shot_noise_A_Hz05(current_A):
    """Shot noise of a current of independent carriers i_n = sqrt(2 q |I|).

    Parameters
    ----------
    current_A : array_like
        Current I [A].

    Returns
    -------
    ndarray
        Noise current i_n [A Hz^(-1/2)].

    References
    ----------
    W. Schottky, Ann. Phys. 362, 541 (1918), doi:10.1002/andp.19183622304 (from memory);
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3 (from memory).
    """
    return np.sqrt(2.0 * q_C * np.abs(_arr(current_A)))


def gr_noise_photoconductor_A_Hz05(generation_cm3_s, volume_cm3, gain):
    """Generation-recombination noise of a photoconductor i_n = sqrt(4 q^2 g^2 G V).

    i_n^2 = 2 q^2 g^2 (G + R) V with R = G in steady state (generation and
    recombination both fluctuate: the factor 2 against a photodiode's
    2 q^2 G V), low frequency (omega tau << 1).  For G V = eta Phi A (photons)
    this is 4 q g I with I = q g eta Phi A.

    Parameters
    ----------
    generation_cm3_s : array_like
        Generation rate G [cm^-3 s^-1].
    volume_cm3 : array_like
        Bar volume L w t [cm^3].
    gain : array_like
        Photoconductive gain g [-].

    Returns
    -------
    ndarray
        Noise current i_n [A Hz^(-1/2)].

    References
    ----------
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3 and 9; K. M. van Vliet, Proc. IRE 46, 1004 (1958) (both from
    memory).
    """
    return np.sqrt(4.0 * q_C**2 * _arr(gain)**2 * np.maximum(_arr(generation_cm3_s), 0.0) * _arr(volume_cm3))


def johnson_noise_A_Hz05(conductance_S, T_K):
    """Johnson-Nyquist noise of a resistance i_n = sqrt(4 k T / R).

    Parameters
    ----------
    conductance_S : array_like
        Conductance 1/R [S].
    T_K : array_like
        Temperature of the resistance [K].

    Returns
    -------
    ndarray
        Noise current i_n [A Hz^(-1/2)].

    References
    ----------
    J. B. Johnson, Phys. Rev. 32, 97 (1928), doi:10.1103/PhysRev.32.97; H. Nyquist,
    Phys. Rev. 32, 110 (1928), doi:10.1103/PhysRev.32.110 (DOIs from memory).
    """
    return np.sqrt(4.0 * k_B_J_K * _arr(T_K) * np.maximum(_arr(conductance_S), 0.0))


def total_noise_A_Hz05(*terms):
    """Root sum of squares of independent noise currents.

    Parameters
    ----------
    *terms : array_like
        Noise currents [A Hz^(-1/2)].

    Returns
    -------
    ndarray
        Total noise current [A Hz^(-1/2)].
    """
    return np.sqrt(sum(_arr(t)**2 for t in terms))


def noise_without_A_Hz05(total_A_Hz05, term_A_Hz05):
    """The rest of a total noise once one independent term is taken out.

    sqrt(total^2 - term^2), floored at 0 against round-off.

    Parameters
    ----------
    total_A_Hz05 : array_like
        Total noise current [A Hz^(-1/2)].
    term_A_Hz05 : array_like
        The term to take out [A Hz^(-1/2)].

    Returns
    -------
    ndarray
        The rest [A Hz^(-1/2)].
    """
    return np.sqrt(np.maximum(_arr(total_A_Hz05)**2 - _arr(term_A_Hz05)**2, 0.0))


def detectivity_from_noise_cm_Hz05_W(responsivity_A_W, noise_A_Hz05, area_cm2):
    """Specific detectivity D* = R sqrt(A) / i_n (per unit bandwidth).

    Equivalent to sqrt(A df) / NEP with NEP = i_n sqrt(df) / R.

    Parameters
    ----------
    responsivity_A_W : array_like
        Responsivity R [A W^-1].
    noise_A_Hz05 : array_like
        Total noise current i_n [A Hz^(-1/2)].
    area_cm2 : array_like
        Optical area A [cm^2].

    Returns
    -------
    ndarray
        D* [cm Hz^(1/2) W^-1].

    References
    ----------
    R. C. Jones, Proc. IRE 47, 1495 (1959); A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return _arr(responsivity_A_W) * np.sqrt(_arr(area_cm2)) / _arr(noise_A_Hz05)


def detectivity_blip_cm_Hz05_W(responsivity_A_W, absorbed_background_flux_cm2_s, gain=1.0, photoconductor=False):
    """D*_BLIP of a detector of known signal responsivity, for any signal spectrum.

    Photodiode: R / (q sqrt(2 Phi_B)); photoconductor: R / (2 q g sqrt(Phi_B)),
    with Phi_B = integral eta(lambda) Q_B(lambda) dlambda the absorbed
    background photon flux.  For a line signal (R = eta g q lambda / hc) and a
    QE flat over the background band (Phi_B = eta Q_B) these are the textbook
    forms (lambda / hc) sqrt(eta / (2 Q_B)) (photodiode) and (lambda / 2hc)
    sqrt(eta / Q_B) (photoconductor, sqrt(2) lower: recombination noise);
    for a broadband signal R is the signal current over the signal power.
    Infinite (null in files) without a background.

    Parameters
    ----------
    responsivity_A_W : array_like
        Signal responsivity R [A W^-1].
    absorbed_background_flux_cm2_s : array_like
        Absorbed background photon flux Phi_B [cm^-2 s^-1].
    gain : array_like
        Photoconductive gain g (1 for a photodiode) [-].
    photoconductor : bool
        Photoconductor (True) or photodiode (False) [-].

    Returns
    -------
    ndarray
        D*_BLIP [cm Hz^(1/2) W^-1].

    References
    ----------
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3 (from memory).
    """
    phi = _arr(absorbed_background_flux_cm2_s)
    denom = 2.0 * q_C * _arr(gain) * np.sqrt(phi) if photoconductor else q_C * np.sqrt(2.0 * phi)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(denom > 0, _arr(responsivity_A_W) / np.where(denom > 0, denom, 1.0), np.inf)


# ---------------------------------------------------------------------------
# Photodiode junction: depletion region, Sah-Noyce-Shockley current, R0A, tunnelling
# ---------------------------------------------------------------------------

def built_in_potential_V(T_K, acceptors_cm3, donors_cm3, ni_cm3, bandgap_eV):
    """Built-in potential of an abrupt p-n junction V_bi = (kT/q) ln(N_A N_D / n_i^2).

    Non-degenerate statistics, so the result is capped at Eg/q (a heavily doped side is
    degenerate; the junction cannot build up more than the gap) and floored at 0.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    acceptors_cm3, donors_cm3 : array_like
        Dopings of the two sides [cm^-3].
    ni_cm3 : array_like
        Intrinsic density [cm^-3].
    bandgap_eV : array_like
        Band gap, the cap [eV].

    Returns
    -------
    ndarray
        V_bi [V].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 2.2 (from memory).
    """
    kT = k_B_eV_K * _arr(T_K)
    with np.errstate(divide="ignore"):   # n_i below the float range (cold, wide gap): V_bi -> the Eg cap
        v = kT * (np.log(_arr(acceptors_cm3)) + np.log(_arr(donors_cm3)) - 2.0 * np.log(_arr(ni_cm3)))
    return np.clip(v, 0.0, _arr(bandgap_eV))


def forward_bias_limit_V(built_in_V, T_K):
    """Highest forward bias the junction formulas accept, V_bi - 3 kT/q.

    The abrupt-junction (depletion) approximation and the ideal-diode law need a
    barrier of a few kT left; at and above V_bi the junction is gone and
    J0 e^{qV/kT} grows without physical limit (series resistance and high
    injection, not modelled, take over).  3 kT is our margin (the depletion
    approximation errs by about kT/q in V_bi - V; Sze & Ng).

    Parameters
    ----------
    built_in_V : array_like
        Built-in potential V_bi [V].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        V_bi - 3 kT/q [V].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 2.2 (from memory).
    """
    return _arr(built_in_V) - 3.0 * k_B_eV_K * _arr(T_K)


def depletion_width_cm(permittivity, built_in_V, bias_V, acceptors_cm3, donors_cm3):
    """Depletion width of an abrupt junction W = sqrt(2 eps (V_bi - V) (N_A + N_D) / (q N_A N_D)).

    Zero where V >= V_bi.

    Parameters
    ----------
    permittivity : array_like
        Relative permittivity [-].
    built_in_V : array_like
        Built-in potential V_bi [V].
    bias_V : array_like
        Applied bias, negative = reverse [V].
    acceptors_cm3, donors_cm3 : array_like
        Dopings of the two sides [cm^-3].

    Returns
    -------
    ndarray
        W [cm].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 2.2 (from memory).
    """
    Na, Nd = _arr(acceptors_cm3), _arr(donors_cm3)
    dv = np.maximum(_arr(built_in_V) - _arr(bias_V), 0.0)
    return np.sqrt(2.0 * _arr(permittivity) * eps0_F_cm * dv * (1.0 / Na + 1.0 / Nd) / q_C)


def depletion_saturation_mA_cm2(ni_cm3, depletion_width_cm, generation_lifetime_s):
    """Generation current density of a depleted layer, q n_i W_dep / tau_g.

    The reverse saturation of the Sah-Noyce-Shockley current
    (`depletion_current_sah_noyce_shockley_mA_cm2`).  tau_g = inf gives 0.

    Parameters
    ----------
    ni_cm3 : array_like
        Intrinsic density [cm^-3].
    depletion_width_cm : array_like
        Depletion width W_dep [cm].
    generation_lifetime_s : array_like
        Generation lifetime tau_g [s].

    Returns
    -------
    ndarray
        J_gr0 [mA cm^-2].
    """
    return 1e3 * q_C * _arr(ni_cm3) * _arr(depletion_width_cm) / _arr(generation_lifetime_s)


def depletion_current_sah_noyce_shockley_mA_cm2(ni_cm3, depletion_width_cm, generation_lifetime_s, bias_V, T_K):
    """Depletion-region generation-recombination current density (signed: reverse < 0).

    J_gr = (q n_i W_dep / tau_g) (exp(qV / 2kT) - 1)
    Reverse bias: the generation current q n_i W / tau_g of SRH centres in the
    depleted region (tau_g = tau_n0 + tau_p0 for a mid-gap level); forward
    bias: the recombination current with ideality 2.  This is the common
    simplified form of Sah, Noyce and Shockley (1957) (Sze & Ng, eqs. for generation and
    recombination currents): it drops the factor pi kT / (q (V_bi - V)) of the forward-bias
    integral, so it is an upper bound there.  It scales with n_i, i.e. as exp(-Eg / 2kT),
    against n_i^2 ~ exp(-Eg / kT) for diffusion.

    Parameters
    ----------
    ni_cm3 : array_like
        Intrinsic density [cm^-3].
    depletion_width_cm : array_like
        Depletion width W [cm].
    generation_lifetime_s : array_like
        Generation lifetime tau_g [s].
    bias_V : array_like
        Applied bias, negative = reverse [V].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        J_gr [mA cm^-2].

    References
    ----------
    C. T. Sah, R. N. Noyce and W. Shockley, Proc. IRE 45, 1228 (1957),
    doi:10.1109/JRPROC.1957.278528 (from memory); S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 2.4.3 (from memory).
    """
    j_sat = depletion_saturation_mA_cm2(ni_cm3, depletion_width_cm, generation_lifetime_s)
    return j_sat * np.expm1(_arr(bias_V) / (2.0 * k_B_eV_K * _arr(T_K)))


def r0a_ohm_cm2(T_K, j0_diffusion_mA_cm2, j_gr_saturation_mA_cm2):
    """Zero-bias resistance-area product R0A = (dJ/dV at V = 0)^-1.

    dJ/dV = q J0 / kT (diffusion, J0 (e^{qV/kT} - 1)) + q J_gr0 / (2 kT)
    (depletion current J_gr0 (e^{qV/2kT} - 1), width at zero bias).

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    j0_diffusion_mA_cm2 : array_like
        Diffusion J0 [mA cm^-2].
    j_gr_saturation_mA_cm2 : array_like
        q n_i W(0) / tau_g [mA cm^-2].

    Returns
    -------
    ndarray
        R0A [ohm cm^2].

    References
    ----------
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 12 (from memory).
    """
    kT = k_B_eV_K * _arr(T_K)
    g = 1e-3 * (_arr(j0_diffusion_mA_cm2) / kT + _arr(j_gr_saturation_mA_cm2) / (2.0 * kT))
    with np.errstate(divide="ignore"):
        return 1.0 / g


def photodiode_thermal_noise_A_Hz05(T_K, bias_V, j0_diffusion_mA_cm2, j_gr_saturation_mA_cm2, area_cm2):
    """Dark-current noise of a photodiode, as (shot noise of the net dark current, Johnson term).

    Diffusion current J0 (e^x - 1), x = qV/kT: its forward and reverse fluxes
    are independent, 2 q J0 (e^x + 1).  Written as
    2 q |J| + 4 q J0 e^min(x, 0): the second part is 4 kT / R_d of the
    diffusion current's differential resistance R_d for V <= 0 (R0 at zero bias).
    Depletion current J_gr0 (e^{x/2} - 1): 2 q |J_gr| + 2 q J_gr0 e^{min(x,0)/2},
    whose second part is again 4 kT / R_d for V <= 0 (dW/dV neglected); at
    zero bias the total is 4 kT / R0 (Nyquist, thermal equilibrium) and under
    strong reverse bias the full shot noise 2 q J_gr0 of the generation current.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    bias_V : array_like
        Applied bias, negative = reverse [V].
    j0_diffusion_mA_cm2 : array_like
        Diffusion J0 [mA cm^-2].
    j_gr_saturation_mA_cm2 : array_like
        q n_i W(V) / tau_g [mA cm^-2].
    area_cm2 : array_like
        Diode area [cm^2].

    Returns
    -------
    shot : ndarray
        Shot noise of the net dark current [A Hz^(-1/2)].
    johnson : ndarray
        The Johnson term (4 kT / R_d) [A Hz^(-1/2)].

    References
    ----------
    A. van der Ziel, Fluctuation Phenomena in Semi-conductors (Butterworths, 1959);
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3 (both from memory).
    """
    x = _arr(bias_V) / (k_B_eV_K * _arr(T_K))
    j0, jg = 1e-3 * _arr(j0_diffusion_mA_cm2), 1e-3 * _arr(j_gr_saturation_mA_cm2)
    j_dark = j0 * np.expm1(x) + jg * np.expm1(x / 2.0)
    xm = np.minimum(x, 0.0)
    A = _arr(area_cm2)
    shot = np.sqrt(2.0 * q_C * np.abs(j_dark) * A)
    johnson = np.sqrt((4.0 * q_C * j0 * np.exp(xm) + 2.0 * q_C * jg * np.exp(xm / 2.0)) * A)
    return shot, johnson


def tunnelling_moll1964_mA_cm2(bandgap_eV, electron_mass_m0, max_field_V_cm, voltage_V):
    """Band-to-band tunnelling current density through a junction, order of magnitude.

    J_t = q^3 F V sqrt(2 m*) / (4 pi^2 hbar^2 sqrt(Eg)) exp(-4 sqrt(2 m*) Eg^{3/2} / (3 q hbar F)),
    uniform field F (here the peak field of the junction), two-band direct gap.  Used only
    to flag junctions where tunnelling would dominate; it is not added to the dark current.

    Parameters
    ----------
    bandgap_eV : array_like
        Band gap [eV].
    electron_mass_m0 : array_like
        Conduction-band mass [m0].
    max_field_V_cm : array_like
        Peak junction field F [V cm^-1].
    voltage_V : array_like
        Voltage across the junction (reverse bias magnitude plus kT/q) [V].

    Returns
    -------
    ndarray
        J_t [mA cm^-2].

    References
    ----------
    J. L. Moll, Physics of Semiconductors (McGraw-Hill, 1964); S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 2.4.4
    (both from memory).
    """
    hbar = h_J_s / (2.0 * np.pi)
    m = _arr(electron_mass_m0) * m0_kg
    Eg = _arr(bandgap_eV) * q_C
    F = np.maximum(_arr(max_field_V_cm) * 100.0, 1.0)                    # [V m^-1]; below 1 V m^-1: exp(-huge) = 0
    pre = q_C**3 * F * _arr(voltage_V) * np.sqrt(2.0 * m) / (4.0 * np.pi**2 * hbar**2 * np.sqrt(Eg))
    expo = -4.0 * np.sqrt(2.0 * m) * Eg**1.5 / (3.0 * q_C * hbar * F)
    return pre * np.exp(np.maximum(expo, -745.0)) * 0.1                # A m^-2 -> mA cm^-2


def spectral_response(wavelength_nm, absorptance, gain=1.0):
    """Quantum efficiency and responsivity against wavelength, as a dict of arrays.

    eta(lambda) = absorptance (front reflection and the light path included;
    every absorbed photon counted: for a photodiode, full collection);
    R(lambda) = eta g q lambda / (h c) (`responsivity_A_W`).

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelengths, shape (L,) [nm].
    absorptance : array_like
        Absorptance, shape (L,) [-].
    gain : array_like
        Gain g [-].

    Returns
    -------
    dict
        "wavelength_nm" [nm], "quantum_efficiency" [-] and "responsivity_A_W" [A W^-1],
        each shape (L,).
    """
    wl = _arr(wavelength_nm)
    eta = np.clip(_arr(absorptance), 0.0, 1.0)
    return {"wavelength_nm": wl, "quantum_efficiency": eta,
            "responsivity_A_W": responsivity_A_W(wl, eta, gain)}


@dataclass(frozen=True)
class BackgroundLimit:
    """Where a pixel becomes background-limited.

    Parameters
    ----------
    temperature_K : float
        Crossing temperature, nan when none was found [K].
    found : bool
        Whether a crossing lies in the scanned range [-].
    note : str
        Plain-language statement of the result [-].
    """

    temperature_K: float
    found: bool
    note: str

    def to_dict(self):
        """Keys for the detector block.

        Returns
        -------
        dict
            background_limit_temperature_K (None when not found) [K], background_limit_found
            [-], background_limit_note [-].
        """
        return {"background_limit_temperature_K": None if not self.found else self.temperature_K,
                "background_limit_found": self.found, "background_limit_note": self.note}


_LOG_CLIP = 1e3


def _log_ratio(fn, T):
    """ln(other noise / background noise) at temperatures T, clipped; NaN where either is not a number."""
    g_th, g_bg = fn(T)
    with np.errstate(divide="ignore", invalid="ignore"):
        d = np.log(_arr(g_th)) - np.log(_arr(g_bg))
    return np.clip(d, -_LOG_CLIP, _LOG_CLIP)


def background_limit_temperature_K(fn, T_low_K, T_high_K, points=256, xtol_K=1e-6):
    """Temperature at which the background noise equals all other noise together.

    fn(T) takes an array of temperatures [K] and returns (other, background) of
    the same shape: any pair of positive figures of one kind whose ratio
    crosses 1 at the limit.  The pipeline (`optogen.pipeline.background_limit`)
    passes noise currents [A Hz^(-1/2)]: the total noise without the background
    term (`noise_without_A_Hz05`) and the background noise term; thermal and
    background generation rates [cm^-3 s^-1] serve for a g-r-limited
    photoconductor.  d(T) = ln(other) - ln(background)
    is scanned on `points` temperatures in one vectorised call; the highest
    sign change between two neighbouring scan points where d is a number (the
    temperature a cooled pixel reaches first on the way down) is refined with
    Brent's method (scipy.optimize.brentq).  Without a sign change the result
    has found=False, temperature nan and a note saying whether the pixel is
    background-limited over the whole range, nowhere, or could not be
    evaluated (scan points where the pipeline has no number, e.g. flagged
    unconverged, are skipped and counted in the note).

    Parameters
    ----------
    fn : callable
        fn(T_K) -> (other, background), arrays of the shape of T_K [any one unit].
    T_low_K, T_high_K : float
        Scan range, 0 < T_low < T_high [K].
    points : int
        Scan resolution [-].
    xtol_K : float
        Root tolerance [K].

    Returns
    -------
    BackgroundLimit
        The crossing temperature [K], whether one was found, and a note.

    References
    ----------
    R. P. Brent, Algorithms for Minimization without Derivatives (Prentice-Hall, 1973), ch. 4
    (scipy.optimize.brentq).
    """
    lo = check_range("T_low_K", T_low_K, 0.0, low_open=True, unit="K")
    hi = check_range("T_high_K", T_high_K, lo, low_open=True, unit="K (and > T_low_K)")
    T = np.linspace(lo, hi, int(points))
    d = _log_ratio(fn, T)
    ok = np.flatnonzero(~np.isnan(d))
    skipped = "" if ok.size == T.size else f"; {T.size - ok.size} of {T.size} scan temperatures had no value"
    if ok.size == 0:
        return BackgroundLimit(float("nan"), False,
                               f"could not be evaluated between {lo:g} K and {hi:g} K{skipped}")
    T, d = T[ok], d[ok]
    thermal = d > 0.0
    change = np.flatnonzero(thermal[1:] != thermal[:-1])
    if change.size == 0:
        where = "thermally limited (never background-limited)" if thermal[0] else "background-limited throughout"
        return BackgroundLimit(float("nan"), False, f"no crossing between {lo:g} K and {hi:g} K: {where}{skipped}")
    i = change[-1]

    def f(t):
        v = float(_log_ratio(fn, np.array([t])).ravel()[0])
        return v if np.isfinite(v) else d[i] + (d[i + 1] - d[i]) * (t - T[i]) / (T[i + 1] - T[i])
    Tc = brentq(f, T[i], T[i + 1], xtol=xtol_K)
    direction = "below" if thermal[i + 1] else "above"
    note = f"background-limited {direction} {Tc:.4g} K"
    if change.size > 1:
        note += f" ({change.size} crossings in {lo:g}-{hi:g} K; the highest is reported)"
    return BackgroundLimit(float(Tc), True, note + skipped)


# ---------------------------------------------------------------------------
# The detector blocks
# ---------------------------------------------------------------------------

#: default doping of the junction side of a photodiode when detector.junction_side_doping_cm3 is not given [cm^-3]
JUNCTION_SIDE_DOPING_DEFAULT_cm3 = 1e18


def _signal_figures(i_sig, i_bg, power_W, noise, area_cm2, gain, photoconductor):
    """Responsivity, D*, D*_BLIP, their ratio and the background-limited flag from the noise terms."""
    with np.errstate(divide="ignore", invalid="ignore"):
        resp = np.where(power_W > 0, i_sig / np.where(power_W > 0, power_W, 1.0), np.nan)
    total = total_noise_A_Hz05(*noise.values())
    d_star = detectivity_from_noise_cm_Hz05_W(resp, total, area_cm2)
    phi_bg = np.abs(i_bg) / (q_C * gain * area_cm2)           # absorbed background photons [cm^-2 s^-1]
    blip = detectivity_blip_cm_Hz05_W(resp, phi_bg, gain, photoconductor)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(np.isfinite(blip), d_star / blip, np.nan)
    bg = noise["noise_background_A_Hz05"]
    out = {"responsivity_A_W": resp, **noise, "noise_total_A_Hz05": total,
           "detectivity_cm_Hz05_W": d_star, "detectivity_blip_cm_Hz05_W": np.where(np.isfinite(blip), blip, np.nan),
           "detectivity_over_blip": ratio, "background_limited": background_limited(noise_without_A_Hz05(total, bg), bg),
           "background_absorbed_flux_cm2_s": phi_bg}
    return out


#: drift velocity above which carriers are hot and the mobility falls with field: the
#: saturation velocity of the common semiconductors is about 1e7 cm s^-1 (Si, GaAs; Sze & Ng 2007
#: sec. 1.5, from memory; common practice) [cm s^-1]
SATURATION_VELOCITY_cm_s = 1e7


def high_field_caution(bias_V, electrode_spacing_cm, majority_mobility_cm2_Vs, minority_mobility_cm2_Vs,
                       tau_s):
    """True where the photoconductive gain tau / t_tr is not to be trusted.

    Two criteria, either suffices:
    * sweep-out: the minority drift length mu_min E tau exceeds the electrode
      spacing, i.e. the minority carriers reach a contact within their lifetime;
      the gain then saturates near (mu_e + mu_h) / (2 mu_min) instead of growing
      with the bias;
    * hot carriers: the drift velocity mu E of either carrier exceeds
      `SATURATION_VELOCITY_cm_s`, where the low-field mobility no longer holds.

    Parameters
    ----------
    bias_V : array_like
        Bias magnitude [V].
    electrode_spacing_cm : array_like
        Electrode spacing [cm].
    majority_mobility_cm2_Vs, minority_mobility_cm2_Vs : array_like
        Mobilities of the majority and minority carriers [cm^2 V^-1 s^-1].
    tau_s : array_like
        Effective lifetime [s].

    Returns
    -------
    ndarray of bool
        The caution flag [-].

    References
    ----------
    E. S. Rittner, in Photoconductivity Conference (Wiley, 1956); A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 9
    (both from memory).
    """
    L = _spacing(electrode_spacing_cm)
    E = electric_field_V_cm(bias_V, L)
    mu_maj, mu_min = _arr(majority_mobility_cm2_Vs), _arr(minority_mobility_cm2_Vs)
    sweep_out = mu_min * E * _arr(tau_s) > L
    hot = np.maximum(mu_maj, mu_min) * E > SATURATION_VELOCITY_cm_s
    return sweep_out | hot


def _ln_densities(n0, p0, ln_n0_cm3, ln_p0_cm3):
    """ln n0, ln p0: the given logarithms, else from the densities (-inf where one underflowed)."""
    with np.errstate(divide="ignore"):
        ln_n0 = np.log(n0) if ln_n0_cm3 is None else _arr(ln_n0_cm3)
        ln_p0 = np.log(p0) if ln_p0_cm3 is None else _arr(ln_p0_cm3)
    return ln_n0, ln_p0


def photoconductor_figures(detector, thickness_cm, T_K, n0_cm3, p0_cm3, n_cm3, p_cm3,
                           mu_dark_cm2_Vs, mu_light_cm2_Vs, tau_eff_s, tau_dark_s,
                           optical_generation_cm3_s, background_generation_cm3_s,
                           irradiance_W_m2, *, ln_n0_cm3=None, ln_p0_cm3=None):
    """The detector figures of a photoconductor bar, as a dict of arrays (units in the keys).

    Currents: dark I0 = sigma_0 (V/L) w t; total photocurrent from
    sigma_light - sigma_dark (`bar_current_A`); signal and background
    photocurrents, the linear terms I = q g G (L w t) of each generation with
    the gain g = tau_eff / t_tr of the operating point (Rose 1963; Sze & Ng 2007
    sec. 13.2; from memory).  Responsivity R = I_signal / P_signal, P on the area L w; null
    without a source.  Noise (A Hz^(-1/2), `gr_noise_photoconductor_A_Hz05`,
    `johnson_noise_A_Hz05`): g-r noise of the signal, of the background and of
    the thermal generation G_th, each 4 q^2 g^2 G (L w t); Johnson noise of the
    bar resistance at the operating point L / (sigma_light w t).
    D* = R sqrt(L w) / i_total; D*_BLIP = R / (2 q g sqrt(Phi_B)) with Phi_B =
    G_bg t the absorbed background flux (`detectivity_blip_cm_Hz05_W`).
    `high_field_caution` flags sweep-out and hot carriers, where the gain is too high.

    Parameters
    ----------
    detector : Detector
        Settings in photoconductor mode.
    thickness_cm : array_like
        Bar thickness t [cm].
    T_K : array_like
        Temperature [K].
    n0_cm3, p0_cm3 : array_like
        Dark densities [cm^-3].
    n_cm3, p_cm3 : array_like
        Densities at the operating point (signal + background) [cm^-3].
    mu_dark_cm2_Vs, mu_light_cm2_Vs : tuple of array_like
        (mu_e, mu_h) pairs of the dark and illuminated states [cm^2 V^-1 s^-1].
    tau_eff_s : array_like
        Effective lifetime at the operating point [s].
    tau_dark_s : array_like
        Dark low-injection effective lifetime (bulk and both surfaces: the bar's thermal
        generation happens everywhere in it) for the thermal generation [s].
    optical_generation_cm3_s, background_generation_cm3_s : array_like
        Average generation by the source and by the background [cm^-3 s^-1].
    irradiance_W_m2 : array_like
        Incident irradiance of the source on the bar [W m^-2].
    ln_n0_cm3, ln_p0_cm3 : array_like, optional
        ln of the dark densities, for the minority ratio where a density underflows
        (default: from n0, p0) [ln cm^-3].

    Returns
    -------
    dict of str to ndarray
        Conductivities, currents, transit time, gain, flags, generation rates, noise terms,
        responsivity, D*, D*_BLIP [unit in each key's suffix].

    References
    ----------
    A. Rose, Concepts in Photoconductivity and Allied Problems (Interscience, 1963);
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sec. 13.2 (both from memory).
    """
    require_mode(detector, "photoconductor", "photoconductor_figures")
    L, w = detector.electrode_spacing_cm, detector.width_cm
    V, t = detector.bias_V, _arr(thickness_cm)
    n0, p0, n, p = (_arr(x) for x in (n0_cm3, p0_cm3, n_cm3, p_cm3))
    ln_n0, ln_p0 = _ln_densities(n0, p0, ln_n0_cm3, ln_p0_cm3)
    sigma0 = conductivity_S_cm(n0, p0, *mu_dark_cm2_Vs)
    sigma = conductivity_S_cm(n, p, *mu_light_cm2_Vs)
    i_dark = bar_current_A(sigma0, V, L, w, t)
    i_ph = bar_current_A(sigma - sigma0, V, L, w, t)
    mu_e, mu_h = _arr(mu_light_cm2_Vs[0]), _arr(mu_light_cm2_Vs[1])
    t_tr = transit_time_s(L, mu_e + mu_h, V)
    gain = photoconductive_gain(tau_eff_s, t_tr)
    n_type = ln_n0 >= ln_p0
    caution = high_field_caution(V, L, np.where(n_type, mu_e, mu_h), np.where(n_type, mu_h, mu_e), tau_eff_s)
    area, volume = L * w, L * w * t
    power = _arr(irradiance_W_m2) * 1e-4 * area
    g_th = thermal_generation_cm3_s(n0, p0, tau_dark_s)
    g_opt, g_bg = _arr(optical_generation_cm3_s), _arr(background_generation_cm3_s)
    i_sig = q_C * gain * g_opt * volume
    i_bg = q_C * gain * g_bg * volume
    noise = {"noise_signal_A_Hz05": gr_noise_photoconductor_A_Hz05(g_opt, volume, gain),
             "noise_background_A_Hz05": gr_noise_photoconductor_A_Hz05(g_bg, volume, gain),
             "noise_thermal_A_Hz05": gr_noise_photoconductor_A_Hz05(g_th, volume, gain),
             "noise_johnson_A_Hz05": johnson_noise_A_Hz05(sigma * w * t / L, T_K)}
    figures = _signal_figures(i_sig, i_bg, power, noise, area, gain, True)
    return {
        "sigma_dark_S_cm": sigma0, "sigma_light_S_cm": sigma,
        "conductivity_contrast": conductivity_contrast(sigma, sigma0),
        "dark_current_A": i_dark, "signal_current_A": i_sig, "background_current_A": i_bg, "photocurrent_A": i_ph,
        "transit_time_s": t_tr, "photoconductive_gain": gain, "high_field_caution": caution,
        "minority_ratio": minority_ratio(ln_n0, ln_p0, n, p),
        "thermal_generation_cm3_s": g_th, "optical_generation_cm3_s": g_opt,
        "background_generation_cm3_s": g_bg, **figures,
    }


def photodiode_figures(detector, thickness_cm, T_K, ni_eff_cm3, n0_cm3, p0_cm3, n_cm3, p_cm3,
                       minority_D_cm2_s, tau_bulk_s, rear_S_cm_s, photocurrent_mA_cm2,
                       optical_generation_cm3_s, background_generation_cm3_s, irradiance_W_m2, *,
                       bandgap_eV, permittivity, electron_mass_m0, tau_srh_s=None,
                       ln_n0_cm3=None, ln_p0_cm3=None, beyond_bias_limit="raise"):
    """The detector figures of a junction on this absorber (the base), units in the keys.

    Dark current, at the bias V, in two parts reported apart and summed:
    diffusion from the base, J0 (exp(qV/kT) - 1) with the thin-base J0
    (`j0_base_mA_cm2`, rear recombination velocity; thick-base J0 for
    comparison; Shockley 1949; Sze & Ng 2007 sec. 2.3, from memory) and the
    bulk lifetime of the base (SRH, radiative and Auger of the dark
    low-injection state, `bulk_lifetime_s`): the front of the base is the
    junction and the rear enters through S, so a lifetime that already holds
    the surfaces would count them twice.  The depletion-region current
    (`depletion_current_sah_noyce_shockley_mA_cm2`) over the width of
    an abrupt junction between the base (N = max(n0, p0), the majority density:
    the net doping when extrinsic, finite for an intrinsic base) and the junction side
    (detector.junction_side_doping_cm3, default JUNCTION_SIDE_DOPING_DEFAULT_cm3),
    V_bi from both dopings, capped at the base thickness.  Generation lifetime
    tau_g: detector.generation_lifetime_s, else the SRH lifetime of the dark
    base (tau_srh_s; inf without SRH centres: no depletion current).  We use
    the SRH lifetime because it exists for any set of defects at any level;
    for one mid-gap level the textbook generation lifetime is tau_n0 + tau_p0
    (Sze & Ng 2007 sec. 2.4.3, from memory), which in an extrinsic base is
    1 + tau_n0/tau_p0 (n-type) times the SRH lifetime, so the default
    depletion current is high by up to that factor (2 for equal capture
    times) there; set generation_lifetime_s for a measured value.
    R0A from both (`r0a_ohm_cm2`).  Signal current: every photon absorbed from
    the source collected (the generation layer's photocurrent, an upper bound);
    background current likewise from G_bg W.  Responsivity = J_signal / irradiance.
    Noise (A Hz^(-1/2)): shot noise of the signal and background photocurrents,
    shot noise of the net dark current and the Johnson term
    (`photodiode_thermal_noise_A_Hz05`: 4kT/R0 at zero bias).  D* = R sqrt(A) /
    i_total; D*_BLIP = R / (q sqrt(2 Phi_B)).  A band-to-band tunnelling
    estimate (`tunnelling_moll1964_mA_cm2`) flags junctions where it would
    exceed the dark current (`tunnelling_may_dominate`); it is not added.
    A forward bias (V > 0) at or above `forward_bias_limit_V` (V_bi - 3kT/q) raises
    InputError naming detector.bias_V (beyond_bias_limit="raise"), or gives NaN
    at those points ("nan", for scans over temperature).

    Parameters
    ----------
    detector : Detector
        Settings in photodiode mode.
    thickness_cm : array_like
        Base width [cm].
    T_K : array_like
        Temperature [K].
    ni_eff_cm3 : array_like
        Effective intrinsic density [cm^-3].
    n0_cm3, p0_cm3 : array_like
        Dark densities [cm^-3].
    n_cm3, p_cm3 : array_like
        Illuminated densities [cm^-3].
    minority_D_cm2_s : array_like
        Minority diffusivity in the base [cm^2 s^-1].
    tau_bulk_s : array_like
        Bulk low-injection lifetime of the base [s].
    rear_S_cm_s : array_like
        Back-surface recombination velocity [cm s^-1].
    photocurrent_mA_cm2 : array_like
        Signal photocurrent [mA cm^-2].
    optical_generation_cm3_s, background_generation_cm3_s : array_like
        Average generation by the source and by the background [cm^-3 s^-1].
    irradiance_W_m2 : array_like
        Incident irradiance of the source [W m^-2].
    bandgap_eV : array_like
        Band gap [eV].
    permittivity : array_like
        Relative permittivity [-].
    electron_mass_m0 : array_like
        Conduction-band mass for the tunnelling estimate [m0].
    tau_srh_s : array_like, optional
        SRH lifetime for the default tau_g (None: tau_bulk_s) [s].
    ln_n0_cm3, ln_p0_cm3 : array_like, optional
        As in `photoconductor_figures` [ln cm^-3].
    beyond_bias_limit : str
        "raise" or "nan": what a forward bias at or above the limit gives [-].

    Returns
    -------
    dict of str to ndarray
        Dark current densities and their parts, J0 (thin and thick base, depletion), V_bi,
        the bias limit, depletion width, lifetimes, R0A, the tunnelling estimate and flag,
        currents, generation rates, noise terms, responsivity, D*, D*_BLIP [unit in each
        key's suffix].

    Raises
    ------
    InputError
        Naming detector.bias_V, for a forward bias beyond the limit (beyond_bias_limit="raise").

    References
    ----------
    W. Shockley, Bell Syst. Tech. J. 28, 435 (1949), doi:10.1002/j.1538-7305.1949.tb03645.x
    (from memory); C. T. Sah, R. N. Noyce and W. Shockley, Proc. IRE 45, 1228 (1957),
    doi:10.1109/JRPROC.1957.278528 (from memory); S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), secs. 2.3 and 2.4.3
    (from memory).
    """
    require_mode(detector, "photodiode", "photodiode_figures")
    T, V, A = _arr(T_K), float(detector.bias_V), detector.area_cm2
    n0, p0, W = _arr(n0_cm3), _arr(p0_cm3), _arr(thickness_cm)
    ln_n0, ln_p0 = _ln_densities(n0, p0, ln_n0_cm3, ln_p0_cm3)
    N = np.maximum(n0, p0)        # majority density: the net doping when extrinsic, n_i when intrinsic
    ni = _arr(ni_eff_cm3)
    # junction: base doping N against the junction side
    nj = detector.junction_side_doping_cm3 or JUNCTION_SIDE_DOPING_DEFAULT_cm3
    vbi = built_in_potential_V(T, N, nj, ni, bandgap_eV)
    limit = np.broadcast_to(forward_bias_limit_V(vbi, T), np.broadcast(vbi, T, W).shape)
    beyond = (V > 0.0) & (V >= limit)       # zero and reverse bias are always allowed
    if np.any(beyond) and beyond_bias_limit == "raise":
        i = int(np.flatnonzero(np.ravel(beyond))[0])
        Ts = np.broadcast_to(T, limit.shape).ravel()
        where = f"at absorber.temperature_K = {Ts[i]:.6g} K"
        if limit.size > 1:
            where += f" (point {i + 1} of {limit.size}; the lowest limit over the points is {limit.min():.4g} V)"
        raise InputError("detector.bias_V", V,
                         f"reverse, zero, or forward below V_bi - 3kT/q = {float(limit.ravel()[i]):.4g} V", where)
    Vc = np.minimum(V, limit)     # beyond the limit ("nan" mode) the figures are replaced by NaN below
    tau_b = _arr(tau_bulk_s)
    j0_thick = j0_thick_base_mA_cm2(ni, N, minority_D_cm2_s, tau_b)
    j0_thin = j0_base_mA_cm2(ni, N, minority_D_cm2_s, tau_b, W, rear_S_cm_s)
    x = Vc / (k_B_eV_K * T)
    w_v = np.minimum(depletion_width_cm(permittivity, vbi, Vc, N, nj), W)
    w_0 = np.minimum(depletion_width_cm(permittivity, vbi, 0.0, N, nj), W)
    if detector.generation_lifetime_s is not None:
        tau_g = _arr(detector.generation_lifetime_s)
    else:
        tau_g = tau_b if tau_srh_s is None else _arr(tau_srh_s)
    jgr_sat = depletion_saturation_mA_cm2(ni, w_v, tau_g)
    jgr_0 = depletion_saturation_mA_cm2(ni, w_0, tau_g)
    j_diff = j0_thin * np.abs(np.expm1(x))
    j_gr = np.abs(depletion_current_sah_noyce_shockley_mA_cm2(ni, w_v, tau_g, Vc, T))
    j_dark = j_diff + j_gr                                    # same sign at any bias
    r0a = r0a_ohm_cm2(T, j0_thin, jgr_0)
    # tunnelling estimate at the peak field of the abrupt junction
    v_j = np.maximum(vbi - Vc, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        field = np.where(w_v > 0, 2.0 * v_j / np.where(w_v > 0, w_v, 1.0), 0.0)
    j_tun = tunnelling_moll1964_mA_cm2(bandgap_eV, electron_mass_m0, field, max(-V, 0.0) + k_B_eV_K * T)
    # zero bias: compare dJ/dV, i.e. the tunnelling current over kT/q against the dark currents' (J0 + J_gr0/2)
    scale = np.where(V == 0.0, j0_thin + 0.5 * jgr_0, j_dark)
    i_sig = _arr(photocurrent_mA_cm2) * 1e-3 * A
    g_bg = _arr(background_generation_cm3_s)
    i_bg = q_C * g_bg * W * A
    shot_dark, johnson = photodiode_thermal_noise_A_Hz05(T, Vc, j0_thin, jgr_sat, A)
    noise = {"noise_signal_A_Hz05": shot_noise_A_Hz05(i_sig), "noise_background_A_Hz05": shot_noise_A_Hz05(i_bg),
             "noise_thermal_A_Hz05": shot_dark, "noise_johnson_A_Hz05": johnson}
    figures = _signal_figures(i_sig, i_bg, _arr(irradiance_W_m2) * 1e-4 * A, noise, A, 1.0, False)
    g_th = thermal_generation_cm3_s(n0, p0, tau_b)
    out = {
        "dark_current_density_mA_cm2": j_dark, "diffusion_current_density_mA_cm2": j_diff,
        "depletion_current_density_mA_cm2": j_gr,
        "dark_current_density_thick_base_mA_cm2": j0_thick * np.abs(np.expm1(x)) + j_gr,
        "j0_thick_base_mA_cm2": j0_thick, "j0_thin_base_mA_cm2": j0_thin, "j0_depletion_mA_cm2": jgr_sat,
        "built_in_potential_V": vbi, "forward_bias_limit_V": limit, "depletion_width_um": w_v * 1e4,
        "generation_lifetime_s": tau_g, "bulk_lifetime_s": tau_b,
        "r0a_ohm_cm2": r0a, "tunnelling_estimate_mA_cm2": j_tun, "tunnelling_may_dominate": j_tun > scale,
        "dark_current_A": j_dark * 1e-3 * A, "signal_current_A": i_sig, "background_current_A": i_bg,
        "photocurrent_A": i_sig + i_bg,
        "minority_ratio": minority_ratio(ln_n0, ln_p0, n_cm3, p_cm3),
        "thermal_generation_cm3_s": g_th, "optical_generation_cm3_s": _arr(optical_generation_cm3_s),
        "background_generation_cm3_s": g_bg, **figures,
    }
    if np.any(beyond):
        for key, v in out.items():
            if key not in ("built_in_potential_V", "forward_bias_limit_V") and np.asarray(v).dtype.kind == "f":
                out[key] = np.where(beyond, np.nan, v)
    return out
