"""Dark equilibrium: Fermi-Dirac statistics, n_i models, band-gap narrowing,
dopant ionisation and charge neutrality -> n0, p0, n_i, n_i,eff, E_F.

Energies are measured upward from the valence band edge Ev [eV]; the
conduction band edge is Ec = Ev + effective_gap_eV, where the effective gap is
the gap that makes the Boltzmann statistics reproduce the chosen n_i model and
band-gap narrowing exactly:  Nc Nv exp(-Eg_eff / kT) = n_i,eff^2.

Very small numbers.  Every density is carried as its natural logarithm inside
the solver, so nothing underflows from 4 K to 1000 K.  The returned linear
densities are exp(ln value): a density reads 0.0 only where its true value is
below the smallest float (about 5e-324 cm^-3, e.g. n_i of Si below about 9 K,
the minority density of doped Si below about 17 K); its exact logarithm is
always available in the ``ln_*_cm3`` fields of `Equilibrium` and from
`ln_ni_cm3`.  No NaN, inf or warning is produced for finite inputs.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.special import expit, gamma, gammaln, zeta

from ._dispatch import pick
from .constants import eps0_F_cm, kT_eV, q_C
from .errors import InputError, check_range
from .materials import Dopant, Material, bandgap_hansen1982

__all__ = [
    "fermi_dirac_half", "fermi_dirac_minus_half", "log_fermi_dirac_half",
    "inverse_fermi_dirac_half", "inverse_log_fermi_dirac_half",
    "ni_nc_nv_eg", "ni_misiakos1993", "ni_hansen_schmit1983", "ni_cm3", "ln_ni_cm3",
    "bgn_klaassen1992", "bgn_schenk1998", "bgn_none", "bgn_eV",
    "ionisation_altermatt2006", "equilibrium", "Equilibrium",
    "NI_MODELS", "BGN_MODELS", "STATISTICS",
]

# ===========================================================================
# Fermi-Dirac integrals of order 1/2 and -1/2
# ===========================================================================
#
# Normalised ("Blakemore") form  F_j(eta) = 1/Gamma(j+1) int_0^inf x^j / (1 + exp(x - eta)) dx
# = -Li_{j+1}(-e^eta), so F_j -> e^eta as eta -> -inf and dF_{1/2}/deta = F_{-1/2}.
# Three exact-in-double-precision pieces, chosen per element:
#   eta <= -1       alternating series  e^eta sum_k (-1)^(k+1) e^((k-1) eta) / k^(j+1)  (30 terms)
#   -1 < eta <= 30  trapezoidal rule in t = sqrt(x) on the whole line (the integrand is even and
#                   analytic in t, so the rule converges exponentially; the step is set by the
#                   distance of the nearest pole t = sqrt(eta + i pi) from the real axis)
#   eta > 30        Sommerfeld asymptotic series, 10 terms (remainder ~ e^-eta)
# Accuracy, checked against mpmath in tests/test_fermi_dirac.py: better than 1e-12 relative.

_SERIES_MAX_ETA = -1.0
_ASYMPTOTIC_MIN_ETA = 30.0
_K = np.arange(1, 31, dtype=float)
_SERIES = {j: (-1.0) ** (_K + 1) / _K ** (j + 1) for j in (0.5, -0.5)}   # ascending powers of e^eta
_KA = np.arange(1, 11)
#: (upper eta of the band, step in t) for the trapezoidal rule; t runs to sqrt(eta_max + 40)
_QUAD_BANDS = ((8.0, 0.1), (_ASYMPTOTIC_MIN_ETA, 0.05))
_QUAD_CHUNK = 4096


def _sommerfeld_coefficients(j: float) -> np.ndarray:
    """1 and 2 (1 - 2^(1-2k)) zeta(2k) Gamma(j+2) / Gamma(j+2-2k), k = 1..10: ascending powers of eta^-2."""
    c = 2.0 * (1.0 - 2.0 ** (1 - 2 * _KA)) * zeta(2.0 * _KA) * gamma(j + 2) / gamma(j + 2 - 2 * _KA)
    return np.concatenate(([1.0], c))


_ASYMPTOTIC = {j: _sommerfeld_coefficients(j) for j in (0.5, -0.5)}


def _log_fd_pair(eta):
    """ln F_{1/2}(eta) and ln F_{-1/2}(eta) [-], both finite for every finite eta [-]."""
    eta = np.asarray(eta, dtype=float)
    lf_h = np.full(eta.shape, np.nan)         # NaN in, NaN out; every other value is set below
    lf_m = np.full(eta.shape, np.nan)
    low = eta <= _SERIES_MAX_ETA
    high = eta > _ASYMPTOTIC_MIN_ETA
    if low.any():
        e = eta[low]
        z = np.exp(e)                        # may underflow to 0: the series is then exactly 1
        lf_h[low] = e + np.log(np.polynomial.polynomial.polyval(z, _SERIES[0.5]))
        lf_m[low] = e + np.log(np.polynomial.polynomial.polyval(z, _SERIES[-0.5]))
    if high.any():
        e = eta[high]
        w = e ** -2.0
        le = np.log(e)
        lf_h[high] = 1.5 * le - gammaln(2.5) + np.log(np.polynomial.polynomial.polyval(w, _ASYMPTOTIC[0.5]))
        lf_m[high] = 0.5 * le - gammaln(1.5) + np.log(np.polynomial.polynomial.polyval(w, _ASYMPTOTIC[-0.5]))
    lower = _SERIES_MAX_ETA
    for upper, h in _QUAD_BANDS:
        band = (eta > lower) & (eta <= upper)
        lower = upper
        if not band.any():
            continue
        t2 = (h * np.arange(1, int(np.ceil(np.sqrt(upper + 40.0) / h)) + 1)) ** 2
        e = eta[band]
        fh = np.empty(e.shape)
        fm = np.empty(e.shape)
        for s in range(0, e.size, _QUAD_CHUNK):
            ec = e[s:s + _QUAD_CHUNK]
            occ = expit(ec[:, None] - t2)              # 1 / (1 + exp(t^2 - eta))
            fh[s:s + _QUAD_CHUNK] = (4.0 / np.sqrt(np.pi)) * h * (occ @ t2)
            fm[s:s + _QUAD_CHUNK] = (2.0 / np.sqrt(np.pi)) * h * (0.5 * expit(ec) + occ.sum(axis=1))
        lf_h[band] = np.log(fh)
        lf_m[band] = np.log(fm)
    return lf_h, lf_m


def log_fermi_dirac_half(eta):
    """Natural log of the normalised Fermi-Dirac integral F_1/2 [-].

    Exact also where F_1/2 itself underflows (eta < -745): ln F_1/2 -> eta.
    eta: reduced energy (E_F - E_c)/kT or (E_v - E_F)/kT [-]
    returns: ln F_1/2(eta) [-]
    """
    return _log_fd_pair(eta)[0]


def fermi_dirac_half(eta):
    """Normalised Fermi-Dirac integral of order 1/2 [-].

    F_1/2(eta) = 2/sqrt(pi) int_0^inf sqrt(x) / (1 + exp(x - eta)) dx = -Li_3/2(-e^eta)
    (normalisation of J. S. Blakemore, Solid-State Electron. 25, 1067 (1982)),
    so that n = Nc F_1/2((E_F - E_c)/kT).  F_1/2 -> e^eta as eta -> -inf.
    eta: reduced energy [-]
    returns: F_1/2(eta) [-]
    """
    return np.exp(_log_fd_pair(eta)[0])


def fermi_dirac_minus_half(eta):
    """Normalised Fermi-Dirac integral of order -1/2, dF_1/2/deta [-].

    eta: reduced energy [-]
    returns: F_-1/2(eta) = -Li_1/2(-e^eta) [-]
    """
    return np.exp(_log_fd_pair(eta)[1])


def inverse_log_fermi_dirac_half(ln_y):
    """eta such that ln F_1/2(eta) = ln_y [-].

    Start: Joyce & Dixon, Appl. Phys. Lett. 31, 354 (1977) for F_1/2 < 4, and the
    two-term Sommerfeld inversion eta = u - pi^2/(12 u), u = (3 sqrt(pi) y / 4)^(2/3),
    above.  Then Newton on ln F_1/2 (concave in eta, so Newton converges from any
    start) to |step| < 1e-14 (1 + |eta|).
    ln_y: natural log of the normalised F_1/2 value [-]; -inf gives -inf
    returns: eta [-]
    """
    ln_y = np.asarray(ln_y, dtype=float)
    eta = np.empty(ln_y.shape)
    fin = np.isfinite(ln_y)
    eta[~fin] = ln_y[~fin]
    L = ln_y[fin]
    y = np.exp(np.minimum(L, np.log(4.0)))
    # ln r + A1 r + A2 r^2 + A3 r^3 + A4 r^4 (Joyce & Dixon 1977, r = y)
    guess_small = L + y * (1.0 / np.sqrt(8.0) + y * (-4.95009e-3 + y * (1.48386e-4 - y * 4.42563e-6)))
    u = np.exp((2.0 / 3.0) * (np.log(3.0 * np.sqrt(np.pi) / 4.0) + np.maximum(L, np.log(4.0))))
    guess_large = u - np.pi ** 2 / (12.0 * u)
    x = np.where(L < np.log(4.0), guess_small, guess_large)
    active = np.ones(x.shape, dtype=bool)
    for _ in range(60):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        lf_h, lf_m = _log_fd_pair(x[idx])
        step = (lf_h - L[idx]) / np.exp(lf_m - lf_h)
        x[idx] -= step
        active[idx] = np.abs(step) > 1e-14 * (1.0 + np.abs(x[idx]))
    eta[fin] = x
    return eta


def inverse_fermi_dirac_half(y):
    """Inverse of the normalised F_1/2: eta with F_1/2(eta) = y [-].

    y: F_1/2 value, >= 0 (y = 0 gives eta = -inf) [-]
    returns: eta [-]
    """
    y = check_range("y", y, 0.0, None)
    with np.errstate(divide="ignore"):
        return inverse_log_fermi_dirac_half(np.log(y))


# ===========================================================================
# Intrinsic carrier density
# ===========================================================================

def ni_nc_nv_eg(material: Material, T_K, log: bool = False):
    """Intrinsic density from the band parameters of any material [cm^-3].

    n_i = sqrt(Nc(T) Nv(T)) exp(-Eg(T) / 2kT)   (non-degenerate statistics; e.g. Sze & Ng,
    Physics of Semiconductor Devices, 3rd ed. (2007), eq. 1.21).
    material: the absorber (its nc_cm3, nv_cm3, bandgap_eV) [-]; T_K: temperature [K]
    log: return ln n_i instead of n_i
    returns: n_i [cm^-3] (or ln n_i [ln cm^-3])
    """
    T = np.asarray(T_K, dtype=float)
    ln = 0.5 * (np.log(material.nc_cm3(T)) + np.log(material.nv_cm3(T))) - material.bandgap_eV(T) / (2.0 * kT_eV(T))
    return ln if log else np.exp(ln)


def ni_misiakos1993(T_K, log: bool = False):
    """Intrinsic density of silicon, Misiakos & Tsamakis 1993 [cm^-3].

    n_i = 5.29e19 (T/300)^2.54 exp(-6726/T) cm^-3
    K. Misiakos and D. Tsamakis, J. Appl. Phys. 74, 3293 (1993), doi:10.1063/1.354551
    (measured 78-340 K; extrapolated outside; coefficients from memory).
    T_K: temperature [K]; log: return ln n_i instead of n_i
    returns: n_i [cm^-3] (or ln n_i [ln cm^-3])
    """
    T = np.asarray(T_K, dtype=float)
    ln = np.log(5.29e19) + 2.54 * np.log(T / 300.0) - 6726.0 / T
    return ln if log else np.exp(ln)


def ni_hansen_schmit1983(x, T_K, log: bool = False):
    """Intrinsic density of Hg(1-x)Cd(x)Te, Hansen & Schmit 1983 [cm^-3].

    n_i = (5.585 - 3.82 x + 1.753e-3 T - 1.364e-3 x T) 1e14 Eg^(3/4) T^(3/2) exp(-Eg / 2kT)
    with Eg(x, T) of Hansen, Schmit & Casselman 1982 in eV.
    G. L. Hansen and J. L. Schmit, J. Appl. Phys. 54, 1639 (1983), doi:10.1063/1.332153.
    x: Cd fraction, Eg(x, T) must be > 0 [-]; T_K: temperature [K]
    log: return ln n_i instead of n_i
    returns: n_i [cm^-3] (or ln n_i [ln cm^-3])
    """
    T = np.asarray(T_K, dtype=float)
    x = np.asarray(x, dtype=float)
    eg = bandgap_hansen1982(x, T)
    if np.any(eg <= 0):
        raise InputError("absorber.composition_x", float(np.min(x)),
                         "a composition with a positive band gap at every temperature "
                         "(x above about 0.17; below it HgCdTe is a semimetal)")
    pre = (5.585 - 3.82 * x + 1.753e-3 * T - 1.364e-3 * x * T) * 1e14
    ln = np.log(pre) + 0.75 * np.log(eg) + 1.5 * np.log(T) - eg / (2.0 * kT_eV(T))
    return ln if log else np.exp(ln)


def _ln_ni_dos(material, T):
    return ni_nc_nv_eg(material, T, log=True)


def _ln_ni_misiakos(material, T):
    if material.name != "Si":
        raise InputError("absorber.ni_model", "misiakos1993", f"an n_i model for {material.name}: "
                         "misiakos1993 is for Si only", "use nc_nv_eg")
    return ni_misiakos1993(T, log=True)


def _ln_ni_hansen(material, T):
    x = getattr(material, "composition_x", None)
    if x is None:
        raise InputError("absorber.ni_model", "hansen_schmit1983", f"an n_i model for {material.name}: "
                         "hansen_schmit1983 needs Hg(1-x)Cd(x)Te with composition_x", "use nc_nv_eg")
    return ni_hansen_schmit1983(x, T, log=True)


#: canonical n_i model name -> ln n_i(material, T_K)
NI_MODELS = {"nc_nv_eg": _ln_ni_dos, "misiakos1993": _ln_ni_misiakos, "hansen_schmit1983": _ln_ni_hansen}
_NI_ALIASES = {"dos": "nc_nv_eg", "bands": "nc_nv_eg", "misiakos": "misiakos1993",
               "misiakos_tsamakis1993": "misiakos1993", "hansen_schmit": "hansen_schmit1983",
               "hansen1983": "hansen_schmit1983"}


def _model_name(field, name, table, aliases):
    fn = pick(field, name, table, aliases)
    return next(k for k, v in table.items() if v is fn), fn


def _check_T(T_K):
    return np.asarray(check_range("absorber.temperature_K", T_K, 0.0, None, low_open=True, unit="K"))


def ln_ni_cm3(material: Material, T_K, model: str | None = None):
    """Natural log of the intrinsic density [ln cm^-3], finite where n_i underflows.

    material: the absorber [-]; T_K: temperature [K]
    model: one of NI_MODELS (default: the material's ``ni_model``, else "nc_nv_eg") [-]
    returns: ln n_i [ln cm^-3]
    """
    T = _check_T(T_K)
    name = model or getattr(material, "ni_model", None) or "nc_nv_eg"
    return _model_name("absorber.ni_model", name, NI_MODELS, _NI_ALIASES)[1](material, T)


def ni_cm3(material: Material, T_K, model: str | None = None):
    """Intrinsic carrier density n_i [cm^-3] (0.0 only below the float range; see `ln_ni_cm3`).

    material: the absorber [-]; T_K: temperature [K]
    model: one of NI_MODELS (default: the material's ``ni_model``, else "nc_nv_eg") [-]
    returns: n_i [cm^-3]
    """
    return np.exp(ln_ni_cm3(material, T_K, model))


# ===========================================================================
# Band-gap narrowing
# ===========================================================================

def bgn_klaassen1992(doping_cm3):
    """Doping-only ("apparent") band-gap narrowing of silicon [eV].

    dEg = 6.92 meV [ln(N / 1.3e17) + sqrt(ln^2(N / 1.3e17) + 0.5)]
    D. B. M. Klaassen, J. W. Slotboom and H. C. de Graaff, Solid-State Electron. 35, 125
    (1992), doi:10.1016/0038-1101(92)90051-D (coefficients from memory).  For use with
    Boltzmann statistics; N = total dopant density N_D + N_A.
    doping_cm3: total dopant density N [cm^-3]
    returns: dEg [eV] (>= 0; -> 0 as N -> 0)
    """
    N = np.asarray(doping_cm3, dtype=float)
    with np.errstate(divide="ignore"):
        L = np.log(N / 1.3e17)
    r = np.sqrt(L * L + 0.5)
    # L + sqrt(L^2 + 0.5), written as 0.5 / (sqrt(L^2 + 0.5) - L) for L < 0 (no cancellation)
    return 6.92e-3 * np.where(L >= 0, np.maximum(L, 0.0) + r, 0.5 / (r - np.minimum(L, 0.0)))


#: Schenk 1998, Table I (silicon), from memory: excitonic Rydberg [eV], Bohr radius [cm],
#: and per carrier (electron, hole) alpha, g, b, c, d, p, h, j, k, q.
_SCHENK_RY_eV = 16.55e-3
_SCHENK_A_cm = 3.719e-7
_SCHENK = {
    "alpha": (0.5187, 0.4813), "g": (12.0, 4.0), "b": (8.0, 1.0), "c": (1.3346, 1.2365),
    "d": (0.893, 1.153), "p": (7.0 / 30.0, 7.0 / 30.0), "h": (3.91, 4.20),
    "j": (2.8585, 2.9307), "k": (0.012, 0.19), "q": (0.75, 0.25),
}


def bgn_schenk1998(T_K, donors_cm3, acceptors_cm3, n_cm3, p_cm3):
    """Injection- and doping-dependent band-gap narrowing of silicon [eV].

    A. Schenk, "Finite-temperature full random-phase approximation model of band gap
    narrowing for silicon device simulation", J. Appl. Phys. 84, 3684 (1998),
    doi:10.1063/1.368545: the Pade approximants fitted to the full RPA, with the
    published silicon parameters (Table I; recalled from memory).  In excitonic units
    (Ry = 16.55 meV, a = 3.719e-7 cm): t = kT/Ry, n_e = n a^3, n_h = p a^3,
    n_s = n_e + n_h, n_P = alpha_e n_e + alpha_h n_h, N_i = (N_D + N_A) a^3, U = n_s^2 / t^3.
    For each carrier a in (e, h):

      dE_a^xc = -[(4 pi)^3 n_s^2 ((48 n_a / (pi g_a))^(1/3) + c_a ln(1 + d_a n_P^p_a))
                  + (8 pi alpha_a / g_a) n_a t^2 + sqrt(8 pi n_s) t^(5/2)]
                / [(4 pi)^3 n_s^2 + t^3 + b_a sqrt(n_s) t^2 + 40 n_P^(3/2) t]
      dE_a^i  = -N_i (1 + U) / [sqrt(t n_P / (2 pi)) (1 + h_a ln(1 + sqrt(n_s) / t))
                                + j_a U n_P^(3/4) (1 + k_a n_P^q_a)]

    dEg = -Ry (dE_e^xc + dE_h^xc + dE_e^i + dE_h^i): the rigid shift of both band edges
    (exchange-correlation of the e-h plasma plus carrier-ion interaction); the full RPA
    "real" narrowing, to be used with Fermi-Dirac statistics.
    Simplification (ours): the ion density entering dE^i is capped at the free-carrier
    density n + p.  The Debye-type screening behind dE^i needs at least as many free
    carriers as ions; without the cap the term diverges in compensated or frozen-out
    material.  The cap is inactive in uncompensated, fully ionised silicon.
    T_K: temperature [K]; donors_cm3, acceptors_cm3: dopant densities [cm^-3]
    n_cm3, p_cm3: electron and hole densities [cm^-3]; complex values are accepted (the
        complex-step derivative used by optogen.recombination for precise differences)
    returns: dEg [eV] (>= 0)
    """
    T = np.asarray(T_K, dtype=float)
    a3 = _SCHENK_A_cm ** 3
    t = kT_eV(T) / _SCHENK_RY_eV
    ne = _real_or_complex(n_cm3) * a3
    nh = _real_or_complex(p_cm3) * a3
    ns = ne + nh
    P = _SCHENK
    n_p = P["alpha"][0] * ne + P["alpha"][1] * nh
    N_ion = (np.asarray(donors_cm3, dtype=float) + np.asarray(acceptors_cm3, dtype=float)) * a3
    ni = np.where(N_ion < np.real(ns), N_ion, ns)          # the cap at n + p (real comparison)
    U = ns ** 2 / t ** 3
    total = 0.0
    for i, na in enumerate((ne, nh)):
        num = ((4 * np.pi) ** 3 * ns ** 2 * ((48.0 * na / (np.pi * P["g"][i])) ** (1 / 3)
                                             + P["c"][i] * np.log1p(P["d"][i] * n_p ** P["p"][i]))
               + (8 * np.pi * P["alpha"][i] / P["g"][i]) * na * t ** 2 + np.sqrt(8 * np.pi * ns) * t ** 2.5)
        den = (4 * np.pi) ** 3 * ns ** 2 + t ** 3 + P["b"][i] * np.sqrt(ns) * t ** 2 + 40.0 * n_p ** 1.5 * t
        ion_den = (np.sqrt(t * n_p / (2 * np.pi)) * (1 + P["h"][i] * np.log1p(np.sqrt(ns) / t))
                   + P["j"][i] * U * n_p ** 0.75 * (1 + P["k"][i] * n_p ** P["q"][i]))
        num_i = ni * (1 + U)
        ion = np.divide(num_i, ion_den, out=np.zeros(np.broadcast_shapes(np.shape(num_i), np.shape(ion_den)),
                                                     dtype=np.result_type(num_i, ion_den)),
                        where=np.real(ion_den) > 0)
        total = total + num / den + ion
    return _SCHENK_RY_eV * total


def _real_or_complex(a):
    """a as a float array, or as a complex array if it is complex (complex-step derivatives)."""
    return np.asarray(a) if np.iscomplexobj(a) else np.asarray(a, dtype=float)


def bgn_none(doping_cm3):
    """No band-gap narrowing: zeros shaped like the doping [eV]."""
    return np.zeros(np.shape(doping_cm3))


def _si_only(material, name):
    if material.name != "Si":
        raise InputError("recombination.bandgap_narrowing", name,
                         f"a band-gap narrowing model for {material.name}: {name} is for Si only",
                         "use none")


def _bgn_klaassen(material, T, nd, na, n, p):
    _si_only(material, "klaassen1992")
    return bgn_klaassen1992(nd + na) + 0.0 * T


def _bgn_schenk(material, T, nd, na, n, p):
    _si_only(material, "schenk1998")
    return bgn_schenk1998(T, nd, na, n, p)


def _bgn_off(material, T, nd, na, n, p):
    return bgn_none(np.broadcast(T, nd, na))


#: canonical band-gap narrowing model name -> dEg(material, T, N_D, N_A, n, p)
BGN_MODELS = {"klaassen1992": _bgn_klaassen, "schenk1998": _bgn_schenk, "none": _bgn_off}
_BGN_ALIASES = {"klaassen": "klaassen1992", "slotboom": "klaassen1992",
                "klaassen_slotboom_degraaff1992": "klaassen1992", "schenk": "schenk1998",
                "off": "none", "no": "none"}


#: carrier statistics each band-gap narrowing model is defined with.  Klaassen 1992 is an
#: *apparent* narrowing, fitted to measured n0 p0 products read with Boltzmann statistics;
#: it is combined with Boltzmann statistics (n = Nc exp(eta), p = Nv exp(eta_p)), so that
#: n0 p0 = n_i,eff^2 exactly at every doping.  Schenk 1998 is the real (full RPA) shift of
#: the band edges and is used with Fermi-Dirac statistics, like the unnarrowed gap.
STATISTICS = {"klaassen1992": "boltzmann", "schenk1998": "fermi_dirac", "none": "fermi_dirac"}


def _bgn_default(material):
    return getattr(material, "bgn_model", None) or "none"


def bgn_eV(material: Material, T_K, donors_cm3, acceptors_cm3, n_cm3=None, p_cm3=None,
           model: str | None = None):
    """Band-gap narrowing dEg [eV] by model name; n_i,eff = n_i exp(dEg / 2kT).

    material: the absorber [-]; T_K: temperature [K]
    donors_cm3, acceptors_cm3: dopant densities [cm^-3]
    n_cm3, p_cm3: carrier densities [cm^-3] for carrier-dependent models; when omitted,
        the non-degenerate neutral values n = N/2 + sqrt(N^2/4 + n_i^2), p = n_i^2/n,
        N = N_D - N_A, with the material's default n_i model
    model: one of BGN_MODELS (default: the material's ``bgn_model``, else "none") [-]
    returns: dEg [eV]
    """
    T = _check_T(T_K)
    nd = np.asarray(check_range("absorber.donors_cm3", donors_cm3, 0.0, None, unit="cm^-3"))
    na = np.asarray(check_range("absorber.acceptors_cm3", acceptors_cm3, 0.0, None, unit="cm^-3"))
    fn = pick("recombination.bandgap_narrowing", model or _bgn_default(material), BGN_MODELS, _BGN_ALIASES)
    if n_cm3 is None or p_cm3 is None:
        n_est, p_est = _carrier_guess(nd, na, ln_ni_cm3(material, T))
        n_cm3 = n_est if n_cm3 is None else n_cm3
        p_cm3 = p_est if p_cm3 is None else p_cm3
    return fn(material, T, nd, na, _real_or_complex(n_cm3), _real_or_complex(p_cm3))


# ===========================================================================
# Dopant ionisation
# ===========================================================================

#: Altermatt et al. 2006 parameters (N_ref [cm^-3], c, N_b [cm^-3], d) for silicon, from memory
_ALTERMATT2006 = {("Si", "P"): (3.0e18, 2.0, 6.0e18, 2.3), ("Si", "B"): (1.7e18, 1.4, 6.0e18, 2.4)}
#: Mott criterion N_c^(1/3) a_H = 0.26 (P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978))
_MOTT = 0.26


def ionisation_altermatt2006(material: Material, dopant: Dopant, density_cm3):
    """Dopant level and its localised fraction for incomplete ionisation [eV, -].

    P. P. Altermatt, A. Schenk, G. Heiser, J. Appl. Phys. 100, 113714 (2006), and
    P. P. Altermatt, A. Schenk, B. Schmithuesen, G. Heiser, ibid. 113715:
      E_dop(N) = E_dop,0 / (1 + (N / N_ref)^c)    (ionisation energy shrinks with N)
      b(N)     = 1 / (1 + (N / N_b)^d)           (fraction of dopant states still localised;
                                                  the rest has merged with the band and is ionised)
    ionised fraction = 1 - b / (1 + exp(-x)), x = (E_F - E_D)/kT + ln g for donors,
    (E_A - E_F)/kT + ln g for acceptors.  Published parameters for Si:P and Si:B
    (from memory).  For every other species (our generalisation) N_ref = N_b = the Mott
    density (0.26 / a_H)^3 with the hydrogenic radius a_H = q^2 / (8 pi eps0 eps_r E_dop,0),
    and c = d = 2.  A consequence of the model: deep in freeze-out the ionised fraction
    levels off at 1 - b (about 2e-9 for 1e15 cm^-3 P, reached only below about 10 K).
    material: the host [-]; dopant: the species [-]; density_cm3: its density [cm^-3]
    returns: (ionisation energy [eV], ln b [-], ln(1 - b) [-])
    """
    N = np.asarray(density_cm3, dtype=float)
    par = _ALTERMATT2006.get((material.name, dopant.name))
    if par is None:
        a_H = q_C / (8.0 * np.pi * eps0_F_cm * material.permittivity * max(dopant.energy_eV, 1e-6))
        par = ((_MOTT / a_H) ** 3, 2.0, (_MOTT / a_H) ** 3, 2.0)
    n_ref, c, n_b, d = par
    with np.errstate(divide="ignore"):
        lr = np.log(N / n_ref)
        lb = np.log(N / n_b)
    energy = dopant.energy_eV * expit(-c * lr)                 # E0 / (1 + (N/N_ref)^c)
    ln_b = -np.logaddexp(0.0, d * lb)
    ln_1mb = d * lb - np.logaddexp(0.0, d * lb)
    return energy, ln_b, ln_1mb


def _species(material, name, kind):
    if isinstance(name, Dopant):
        return name
    if name is None:
        return material.default_dopant(kind)
    d = material.dopant(name, field=f"absorber.{kind}_species")
    if d.kind != kind:
        names = [x.name for x in material.dopants if x.kind == kind]
        raise InputError(f"absorber.{kind}_species", name, f"a {kind} species of {material.name}: "
                         + (", ".join(names) or "(none defined)"))
    return d


# ===========================================================================
# Charge neutrality
# ===========================================================================

@dataclass(frozen=True)
class Equilibrium:
    """Dark equilibrium of an absorber; all array fields broadcast together.

    Energies are measured from the valence band edge Ev [eV]; Ec = Ev + effective_gap_eV.
    bandgap_eV is Eg(T) without narrowing; bgn_eV the narrowing; effective_gap_eV the gap of
    the statistics, Nc Nv exp(-Eg_eff/kT) = ni_eff^2.  ``ln_*_cm3`` fields are natural logs
    of densities [ln cm^-3] (finite where the linear value underflows to 0.0, e.g. n_i of
    Si at 4 K).  material, ni_model, bgn_model, donor, acceptor: the names used;
    statistics: "fermi_dirac" or "boltzmann", the carrier statistics of the narrowing model
    (`STATISTICS`).
    """

    temperature_K: np.ndarray
    donors_cm3: np.ndarray
    acceptors_cm3: np.ndarray
    n0_cm3: np.ndarray
    p0_cm3: np.ndarray
    ni_cm3: np.ndarray
    ni_eff_cm3: np.ndarray
    bgn_eV: np.ndarray
    bandgap_eV: np.ndarray
    effective_gap_eV: np.ndarray
    nc_cm3: np.ndarray
    nv_cm3: np.ndarray
    fermi_level_eV: np.ndarray
    intrinsic_level_eV: np.ndarray
    ionised_donors_cm3: np.ndarray
    ionised_acceptors_cm3: np.ndarray
    ln_n0_cm3: np.ndarray
    ln_p0_cm3: np.ndarray
    ln_ni_cm3: np.ndarray
    ln_ni_eff_cm3: np.ndarray
    material: str = ""
    ni_model: str = ""
    bgn_model: str = ""
    donor: str | None = None
    acceptor: str | None = None
    statistics: str = "fermi_dirac"

    _DICT_KEYS = ("n0_cm3", "p0_cm3", "ni_cm3", "ni_eff_cm3", "fermi_level_eV", "bandgap_eV",
                  "ionised_donors_cm3", "ionised_acceptors_cm3")

    def to_dict(self) -> dict:
        """The DESIGN.md ``equilibrium`` block: python floats when scalar, nested lists otherwise."""
        out = {}
        for k in self._DICT_KEYS:
            v = np.asarray(getattr(self, k))
            out[k] = float(v) if v.ndim == 0 else v.tolist()
        return out


def _log_occupancy(eta, boltzmann: bool = False):
    """ln F_1/2(eta) and ln F_-1/2(eta) [-]; both are eta itself with Boltzmann statistics."""
    if boltzmann:
        eta = np.asarray(eta, dtype=float)
        return eta, eta
    return _log_fd_pair(eta)


def _neutrality(E, kT, eg, lnc, lnv, lnd, lna, ed, ea, lgd, lga, lbd, lbd1, lba, lba1, boltzmann=False):
    """f = ln(p0 + N_D^+) - ln(n0 + N_A^-) and df/dE_F [1/eV] at Fermi level E [eV]; plus the logs.

    boltzmann: carriers with Boltzmann instead of Fermi-Dirac statistics (see `STATISTICS`).
    """
    lfc, lfmc = _log_occupancy((E - eg) / kT, boltzmann)
    lfv, lfmv = _log_occupancy(-E / kT, boltzmann)
    ln_n, ln_p = lnc + lfc, lnv + lfv
    x = (E - ed) / kT + lgd                 # donor level occupied by an electron: expit(x)
    y = (ea - E) / kT + lga                 # acceptor level occupied by a hole: expit(y)
    ln_ndp = lnd + np.logaddexp(lbd1, -x) - np.logaddexp(0.0, -x)
    ln_nam = lna + np.logaddexp(lba1, -y) - np.logaddexp(0.0, -y)
    lP = np.logaddexp(ln_p, ln_ndp)
    lQ = np.logaddexp(ln_n, ln_nam)
    # derivatives: d N_D^+/dE = -N_D b s(1-s)/kT, d N_A^-/dE = +N_A b s(1-s)/kT
    ln_dd = lnd + lbd - np.logaddexp(0.0, -x) - np.logaddexp(0.0, x)
    ln_da = lna + lba - np.logaddexp(0.0, -y) - np.logaddexp(0.0, y)
    dP = -(np.exp(ln_p - lP + lfmv - lfv) + np.exp(ln_dd - lP)) / kT
    dQ = (np.exp(ln_n - lQ + lfmc - lfc) + np.exp(ln_da - lQ)) / kT
    return lP - lQ, dP - dQ, ln_n, ln_p, ln_ndp, ln_nam


def _solve_fermi(guess, kT, eg, lnc, lnv, lnd, lna, ed, ea, lgd, lga, lbd, lbd1, lba, lba1, tol=1e-13,
                 boltzmann=False):
    """Safeguarded Newton (bisection fallback) for the Fermi level [eV], all points at once.

    guess: starting Fermi level [eV] (used where it lies inside the bracket)
    boltzmann: Boltzmann carrier statistics (the bracket below also holds for them,
        since e^eta >= F_1/2(eta))
    """
    args = (kT, eg, lnc, lnv, lnd, lna, ed, ea, lgd, lga, lbd, lbd1, lba, lba1)
    ei = 0.5 * eg + 0.5 * kT * (lnv - lnc)
    # at hi: n0 >= 2 N_D and n0 >> p0 -> f < 0; at lo the mirror image -> f > 0
    hi = np.maximum(ei + 2 * kT, eg + kT * inverse_log_fermi_dirac_half(np.log(2.0) + lnd - lnc))
    lo = np.minimum(ei - 2 * kT, -kT * inverse_log_fermi_dirac_half(np.log(2.0) + lna - lnv))
    for _ in range(200):                      # widen until the bracket holds (rarely needed)
        f_hi = _neutrality(hi, *args, boltzmann=boltzmann)[0]
        f_lo = _neutrality(lo, *args, boltzmann=boltzmann)[0]
        bad_hi, bad_lo = f_hi > 0, f_lo < 0
        if not (bad_hi.any() or bad_lo.any()):
            break
        width = hi - lo
        hi = np.where(bad_hi, hi + width, hi)
        lo = np.where(bad_lo, lo - width, lo)
    E = np.where((guess > lo) & (guess < hi), guess, 0.5 * (lo + hi))
    active = np.ones(E.shape, dtype=bool)
    for _ in range(300):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        sub = tuple(a[idx] for a in args)
        e = E[idx]
        f, df = _neutrality(e, *sub, boltzmann=boltzmann)[:2]
        done = np.abs(f) <= tol
        l, h = lo[idx], hi[idx]
        l = np.where(f > 0, e, l)
        h = np.where(f < 0, e, h)
        lo[idx], hi[idx] = l, h
        usable = (df < 0) & (np.abs(f) < -df * 1e3)    # a step under 1 keV; else bisect
        newton = e - np.divide(f, df, out=np.full_like(f, np.inf), where=usable)
        ok = np.isfinite(newton) & (newton >= l) & (newton <= h)
        nxt = np.where(ok, newton, 0.5 * (l + h))
        ulp = np.spacing(np.maximum(np.abs(l), np.abs(h)))
        # below tol or at the resolution of E itself (at 4 K one ulp of E is ~1e-12 kT)
        stuck = ((h - l) <= 4 * ulp) | (ok & (np.abs(newton - e) <= 2 * ulp))
        E[idx] = np.where(done, e, nxt)
        active[idx] = ~(done | stuck)
    return E, _neutrality(E, *args, boltzmann=boltzmann)


def equilibrium(material: Material, temperature_K, donors_cm3=0.0, acceptors_cm3=0.0, *,
                donor=None, acceptor=None, ni_model: str | None = None, bgn_model: str | None = None,
                incomplete_ionisation: bool = True) -> Equilibrium:
    """Dark equilibrium from charge neutrality n0 + N_A^- = p0 + N_D^+ [-].

    Carriers: Fermi-Dirac statistics n0 = Nc F_1/2((E_F - Ec)/kT), p0 = Nv F_1/2((Ev - E_F)/kT),
    with Ec - Ev = Eg_eff and Nc Nv exp(-Eg_eff/kT) = n_i,eff^2, n_i,eff = n_i exp(dEg/2kT)
    for the chosen n_i and band-gap narrowing models (so n0 p0 = n_i,eff^2 whenever both are
    non-degenerate).  With an apparent narrowing (klaassen1992, defined through Boltzmann
    statistics) the carriers follow Boltzmann statistics instead, n0 = Nc exp((E_F - Ec)/kT),
    so that n0 p0 = n_i,eff^2 holds exactly, as in the model's definition (`STATISTICS`).  Dopants: `ionisation_altermatt2006` with each species' ionisation
    energy and degeneracy factor (incomplete_ionisation=False: all ionised).  A material
    without a listed species of the needed kind is taken as fully ionised.
    Carrier-dependent narrowing (schenk1998) is iterated to self-consistency with n0, p0.
    The neutrality equation is solved in log form, ln(p0 + N_D^+) = ln(n0 + N_A^-), to
    |residual| <= 1e-13, all points at once, from 4 K (freeze-out) to 1000 K (intrinsic).

    material: the absorber [-]; temperature_K: temperature [K]
    donors_cm3, acceptors_cm3: dopant densities [cm^-3]
    donor, acceptor: species names (default: the material's first listed donor / acceptor) [-]
    ni_model: see NI_MODELS [-]; bgn_model: see BGN_MODELS [-]
    returns: Equilibrium (densities [cm^-3], energies [eV] above Ev)
    """
    T = _check_T(temperature_K)
    nd = np.asarray(check_range("absorber.donors_cm3", donors_cm3, 0.0, None, unit="cm^-3"))
    na = np.asarray(check_range("absorber.acceptors_cm3", acceptors_cm3, 0.0, None, unit="cm^-3"))
    T, nd, na = np.broadcast_arrays(T, nd, na)
    shape = T.shape
    T, nd, na = (np.ravel(a).astype(float) for a in (T, nd, na))

    ni_name, ni_fn = _model_name("absorber.ni_model", ni_model or getattr(material, "ni_model", None)
                                 or "nc_nv_eg", NI_MODELS, _NI_ALIASES)
    bgn_name, bgn_fn = _model_name("recombination.bandgap_narrowing", bgn_model or _bgn_default(material),
                                   BGN_MODELS, _BGN_ALIASES)
    don = _species(material, donor, "donor")
    acc = _species(material, acceptor, "acceptor")
    stats = STATISTICS[bgn_name]

    kT = kT_eV(T)
    eg = material.bandgap_eV(T)
    lnc, lnv = np.log(material.nc_cm3(T)), np.log(material.nv_cm3(T))
    ln_ni = ni_fn(material, T)
    if np.any(~(eg > 0)):                     # e.g. InSb above ~810 K: the gap of the model has closed
        i = int(np.flatnonzero(~(eg > 0))[0])
        raise InputError("absorber.temperature_K", float(T[i]),
                         f"a temperature at which {material.name} has a band gap (Eg({T[i]:g} K) = "
                         f"{float(eg[i]):.4g} eV from its band-gap model)",
                         "at this temperature the model describes a semimetal, not a semiconductor")
    with np.errstate(divide="ignore"):
        lnd, lna = np.log(nd), np.log(na)
    zero = np.zeros_like(T)
    minus_inf = np.full_like(T, -np.inf)

    def levels(sp, N):
        if sp is None or not incomplete_ionisation:
            return zero, zero, minus_inf, zero                # energy, ln g, ln b = -inf (b = 0), ln(1 - b)
        e, lb, lb1 = ionisation_altermatt2006(material, sp, N)
        return e, np.full_like(T, np.log(sp.degeneracy)), lb, lb1

    ed0, lgd, lbd, lbd1 = levels(don, nd)
    ea, lga, lba, lba1 = levels(acc, na)

    n_guess, p_guess = _carrier_guess(nd, na, ln_ni)
    dEg = np.array(bgn_fn(material, T, nd, na, n_guess, p_guess), dtype=float)
    with np.errstate(divide="ignore"):
        E = kT * (lnv - np.log(p_guess))       # non-degenerate start; replaced by the bracket midpoint if off
    per_point = (kT, lnc, lnv, lnd, lna, ed0, ea, lgd, lga, lbd, lbd1, lba, lba1)
    ln_n, ln_p, ln_ndp, ln_nam = (np.empty_like(T) for _ in range(4))
    idx = np.arange(T.size)                   # points still being solved
    for it in range(50):
        k, c, v, d, a, e0, e_a, gd, ga, bd, bd1, ba, ba1 = (x[idx] for x in per_point)
        gap = k * (c + v) - 2.0 * k * ln_ni[idx] - dEg[idx]           # Eg_eff of these points
        E[idx], (_, _, ln_n[idx], ln_p[idx], ln_ndp[idx], ln_nam[idx]) = _solve_fermi(
            E[idx], k, gap, c, v, d, a, gap - e0, e_a, gd, ga, bd, bd1, ba, ba1,
            boltzmann=stats == "boltzmann")
        if bgn_fn is not _bgn_schenk or it == 49:
            break
        # carrier-dependent narrowing: iterate to self-consistency, only where it still moves
        new = bgn_fn(material, T[idx], nd[idx], na[idx], np.exp(ln_n[idx]), np.exp(ln_p[idx]))
        moved = np.abs(new - dEg[idx]) > 1e-12
        dEg[idx[moved]] = new[moved]
        idx = idx[moved]
        if idx.size == 0:
            break
    ln_ni_eff = ln_ni + dEg / (2.0 * kT)
    eg_eff = kT * (lnc + lnv) - 2.0 * kT * ln_ni - dEg

    def out(a):
        return np.reshape(a, shape)

    return Equilibrium(
        temperature_K=out(T), donors_cm3=out(nd), acceptors_cm3=out(na),
        n0_cm3=out(np.exp(ln_n)), p0_cm3=out(np.exp(ln_p)),
        ni_cm3=out(np.exp(ln_ni)), ni_eff_cm3=out(np.exp(ln_ni_eff)), bgn_eV=out(dEg),
        bandgap_eV=out(eg), effective_gap_eV=out(eg_eff),
        nc_cm3=out(np.exp(lnc)), nv_cm3=out(np.exp(lnv)),
        fermi_level_eV=out(E), intrinsic_level_eV=out(0.5 * eg_eff + 0.5 * kT * (lnv - lnc)),
        ionised_donors_cm3=out(np.exp(ln_ndp)), ionised_acceptors_cm3=out(np.exp(ln_nam)),
        ln_n0_cm3=out(ln_n), ln_p0_cm3=out(ln_p), ln_ni_cm3=out(ln_ni), ln_ni_eff_cm3=out(ln_ni_eff),
        material=material.name, ni_model=ni_name, bgn_model=bgn_name,
        donor=None if don is None else don.name, acceptor=None if acc is None else acc.name,
        statistics=stats,
    )


def _carrier_guess(nd, na, ln_ni):
    """Non-degenerate neutral n, p [cm^-3] from N_D - N_A and ln n_i (start of the BGN iteration)."""
    half = 0.5 * (nd - na)
    ni = np.exp(ln_ni)
    s = np.hypot(half, ni)
    with np.errstate(divide="ignore", invalid="ignore"):
        n = np.where(half >= 0, half + s, np.exp(2 * ln_ni - np.log(s - np.minimum(half, 0.0))))
        p = np.where(half <= 0, s - half, np.exp(2 * ln_ni - np.log(s + np.maximum(half, 0.0))))
    return n, p
