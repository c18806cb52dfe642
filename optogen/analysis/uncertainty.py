"""Uncertainties of the analysis: the fit's own, and the inputs' that dominate in practice.

* Fit: the covariance of (ln J0, ln tau_n0, ln tau_p0) at the optimum ((J^T J)^-1, scaled by the
  reduced chi^2 when the data carry no uncertainty), or a residual bootstrap (B. Efron and
  R. J. Tibshirani, An Introduction to the Bootstrap (Chapman & Hall, 1993), ch. 9): the
  residuals in ln tau are resampled with replacement onto the fitted curve and the fit repeated.
* Propagation to implied Voc/FF: parameter samples (multivariate normal from the covariance, or
  the bootstrap fits) through `optogen.analysis.implied`; the standard deviation of the results.
* Inputs (`[uncertainty]`: thickness, doping, optical factor, mobility; relative 1 sigma): each
  input is moved by +1 sigma in turn and the whole analysis repeated; the change of each result
  is its contribution (linear propagation, one at a time), added in quadrature to the fit's own.
"""
from __future__ import annotations

import numpy as np

from .j0 import J0_BOUNDS_fA_cm2, TAU_BOUNDS_s, Branch, refit
from .model import Mechanisms


def parameter_samples(branch: Branch, n: int, seed: int = 0):
    """(n, 3) samples of (J0 [fA cm^-2], tau_n0 [s], tau_p0 [s]) from the branch's covariance
    (normal in the logarithms, held inside the fit's search bounds), or None where the covariance
    is not finite or a parameter sits at a bound (a parameter the data do not constrain)."""
    cov = branch.covariance[:3, :3]
    if not np.all(np.isfinite(cov)) or {"J0", "tau_n0", "tau_p0"} & set(branch.at_bound):
        return None
    rng = np.random.default_rng(seed)
    x = rng.multivariate_normal(branch.theta[:3], cov, size=n, method="eigh")
    lo = np.log([J0_BOUNDS_fA_cm2[0], TAU_BOUNDS_s[0], TAU_BOUNDS_s[0]])
    hi = np.log([J0_BOUNDS_fA_cm2[1], TAU_BOUNDS_s[1], TAU_BOUNDS_s[1]])
    return np.exp(np.clip(x, lo, hi))             # held inside the fit's search bounds


def bootstrap_samples(mech: Mechanisms, tau_eff_s, branch: Branch, n: int, seed: int = 0, sigma_rel=None):
    """(n, 3) bootstrap fits of (J0, tau_n0, tau_p0) at the branch's level (residuals in ln tau
    resampled with replacement; weighted residuals when sigma_rel is given)."""
    rng = np.random.default_rng(seed)
    tau = np.asarray(tau_eff_s, float)
    model = 1.0 / mech.inv_tau_eff_s(branch.J0_fA_cm2, branch.tau_n0_s, branch.tau_p0_s, branch.level_eV)
    res = np.log(tau) - np.log(model)
    out = np.empty((n, 3))
    for i in range(n):                      # one refit per resample (a fixed number of fits)
        pick = rng.integers(0, tau.size, tau.size)
        fake = model * np.exp(res[pick] if sigma_rel is None else res[pick] / np.asarray(sigma_rel)[pick]
                              * np.asarray(sigma_rel))
        b = refit(mech, fake, branch, sigma_rel)
        out[i] = (b.J0_fA_cm2, b.tau_n0_s, b.tau_p0_s)
    return out


def quadrature(*parts):
    """sqrt(sum of squares) of the parts (NaN parts ignored; all NaN -> NaN) [unit of the parts]."""
    a = np.array([p for p in parts if p is not None], dtype=float)
    if a.size == 0 or np.all(np.isnan(a)):
        return float("nan")
    return float(np.sqrt(np.nansum(a**2)))
