"""Intrinsic correction of a measured lifetime curve.

1/tau_corr(dn) = 1/tau_eff(dn) - (U_Auger(dn) + U_radiative(dn))/dn

with the intrinsic model of the scenario's `[recombination] intrinsic` (Si: Richter et al.
2012, doi:10.1103/PhysRevB.86.165202, with B(T) of Trupke et al. 2003; other materials their
Cn, Cp and B) and its narrowing, evaluated by the forward model (`optogen.analysis.model`,
i.e. `Recombination.prepare(...).rates`).  What remains is SRH + surface recombination.
"""
from __future__ import annotations

import numpy as np

from .model import Mechanisms


def corrected_inverse_lifetime_s(mech: Mechanisms, tau_eff_s):
    """1/tau_eff - 1/tau_intrinsic at the measured points [1/s] (can be <= 0 where the measured
    lifetime exceeds the intrinsic limit: noise, or a sample/model mismatch).

    Parameters
    ----------
    mech : the forward model at the measured dn (`optogen.analysis.model.mechanisms`)
    tau_eff_s : measured effective lifetimes (D,) [s]
    """
    return 1.0 / np.asarray(tau_eff_s, dtype=float) - mech.inv_tau_intrinsic_s


def above_intrinsic_limit(mech: Mechanisms, tau_eff_s) -> np.ndarray:
    """True where the measured lifetime lies above the intrinsic limit of the model [bool]."""
    return corrected_inverse_lifetime_s(mech, tau_eff_s) <= 0.0
