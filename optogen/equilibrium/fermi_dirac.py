"""Fermi-Dirac integrals of order 1/2 and -1/2 and the inverse of F_1/2 (normalised form).

Normalised ("Blakemore") form  F_j(eta) = 1/Gamma(j+1) int_0^inf x^j / (1 + exp(x - eta)) dx
= -Li_{j+1}(-e^eta), so F_j -> e^eta as eta -> -inf and dF_{1/2}/deta = F_{-1/2}.
Three exact-in-double-precision pieces, chosen per element:
  eta <= -1       alternating series  e^eta sum_k (-1)^(k+1) e^((k-1) eta) / k^(j+1)  (30 terms)
  -1 < eta <= 30  trapezoidal rule in t = sqrt(x) on the whole line (the integrand is even and
                  analytic in t, so the rule converges exponentially; the step is set by the
                  distance of the nearest pole t = sqrt(eta + i pi) from the real axis)
  eta > 30        Sommerfeld asymptotic series, 10 terms (remainder ~ e^-eta)
Accuracy, checked against mpmath in tests/test_fermi_dirac.py: better than 1e-12 relative.
"""
from __future__ import annotations

import numpy as np
from scipy.special import expit, gamma, gammaln, zeta

from ..errors import check_range

__all__ = ["fermi_dirac_half", "fermi_dirac_minus_half", "log_fermi_dirac_half",
           "inverse_fermi_dirac_half", "inverse_log_fermi_dirac_half", "log_fermi_dirac_pair"]

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


def log_fermi_dirac_pair(eta):
    """ln F_1/2(eta) and ln F_-1/2(eta), both finite for every finite eta.

    Parameters
    ----------
    eta : array_like
        Reduced energy (E_F - E_c)/kT or (E_v - E_F)/kT [-]; NaN gives NaN.

    Returns
    -------
    (ndarray, ndarray)
        ln F_1/2(eta) and ln F_-1/2(eta) [-] (normalised integrals, see `fermi_dirac_half`).

    References
    ----------
    J. S. Blakemore, Solid-State Electron. 25, 1067 (1982), doi:10.1016/0038-1101(82)90143-5
    (normalisation).
    """
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
    """Natural log of the normalised Fermi-Dirac integral F_1/2.

    Exact also where F_1/2 itself underflows (eta < -745): ln F_1/2 -> eta.

    Parameters
    ----------
    eta : array_like
        Reduced energy (E_F - E_c)/kT or (E_v - E_F)/kT [-].

    Returns
    -------
    ndarray
        ln F_1/2(eta) [-].

    References
    ----------
    J. S. Blakemore, Solid-State Electron. 25, 1067 (1982), doi:10.1016/0038-1101(82)90143-5.
    """
    return log_fermi_dirac_pair(eta)[0]


def fermi_dirac_half(eta):
    """Normalised Fermi-Dirac integral of order 1/2.

    F_1/2(eta) = 2/sqrt(pi) int_0^inf sqrt(x) / (1 + exp(x - eta)) dx = -Li_3/2(-e^eta),
    so that n = Nc F_1/2((E_F - E_c)/kT).  F_1/2 -> e^eta as eta -> -inf.

    Parameters
    ----------
    eta : array_like
        Reduced energy [-].

    Returns
    -------
    ndarray
        F_1/2(eta) [-].

    References
    ----------
    J. S. Blakemore, Solid-State Electron. 25, 1067 (1982), doi:10.1016/0038-1101(82)90143-5
    (normalisation).
    """
    return np.exp(log_fermi_dirac_pair(eta)[0])


def fermi_dirac_minus_half(eta):
    """Normalised Fermi-Dirac integral of order -1/2, dF_1/2/deta.

    Parameters
    ----------
    eta : array_like
        Reduced energy [-].

    Returns
    -------
    ndarray
        F_-1/2(eta) = -Li_1/2(-e^eta) [-].

    References
    ----------
    J. S. Blakemore, Solid-State Electron. 25, 1067 (1982), doi:10.1016/0038-1101(82)90143-5.
    """
    return np.exp(log_fermi_dirac_pair(eta)[1])


def inverse_log_fermi_dirac_half(ln_y):
    """eta such that ln F_1/2(eta) = ln_y.

    Start: the Joyce-Dixon series for F_1/2 < 4, and the two-term Sommerfeld inversion
    eta = u - pi^2/(12 u), u = (3 sqrt(pi) y / 4)^(2/3), above.  Then Newton on ln F_1/2
    (concave in eta, so Newton converges from any start) to |step| < 1e-14 (1 + |eta|).

    Parameters
    ----------
    ln_y : array_like
        Natural log of the normalised F_1/2 value [-]; -inf gives -inf.

    Returns
    -------
    ndarray
        eta [-].

    References
    ----------
    W. B. Joyce and R. W. Dixon, Appl. Phys. Lett. 31, 354 (1977), doi:10.1063/1.89698.
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
        lf_h, lf_m = log_fermi_dirac_pair(x[idx])
        step = (lf_h - L[idx]) / np.exp(lf_m - lf_h)
        x[idx] -= step
        active[idx] = np.abs(step) > 1e-14 * (1.0 + np.abs(x[idx]))
    eta[fin] = x
    return eta


def inverse_fermi_dirac_half(y):
    """Inverse of the normalised F_1/2: eta with F_1/2(eta) = y.

    Parameters
    ----------
    y : array_like
        F_1/2 value, >= 0 (y = 0 gives eta = -inf) [-].

    Returns
    -------
    ndarray
        eta [-].

    References
    ----------
    W. B. Joyce and R. W. Dixon, Appl. Phys. Lett. 31, 354 (1977), doi:10.1063/1.89698 (start).
    """
    y = check_range("y", y, 0.0, None)
    with np.errstate(divide="ignore"):
        return inverse_log_fermi_dirac_half(np.log(y))


_log_fd_pair = log_fermi_dirac_pair    # the former private name (optogen.steady_state imports it)
