"""The common factor of every recombination rate: n p - n_i,eff^2, written without cancellation.

The equilibrium product.  Every rate vanishes at n p = n_i,eff^2.  Here n_i,eff^2 is
taken as the dark product n0 p0 (equal to n_i,eff^2 of the equilibrium statistics when
non-degenerate; taking n0 p0 keeps the dark rate exactly zero also where the dark
statistics are degenerate).  With an injection-dependent band-gap narrowing model
(Schenk 1998) the product grows with the carriers (n_i,eff = n_i exp(dEg / 2kT)):
n_i,eff^2(n, p) = n0 p0 exp((dEg(n, p) - dEg(n0, p0)) / kT), written ``ni2_shift`` =
(dEg(n, p) - dEg(n0, p0)) / kT [-].
"""
from __future__ import annotations

import numpy as np

__all__ = ["excess_product_cm6"]


def excess_product_cm6(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift=0.0):
    """n p - n_i,eff^2, written without cancellation.

    n p - n_i,eff^2 = dn (n0 + p0 + dn) - n0 p0 expm1(ni2_shift),  n = n0 + dn, p = p0 + dn.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    delta_n_cm3 : array_like
        Excess density [cm^-3].
    ni2_shift : array_like
        ln(n_i,eff^2(n, p) / (n0 p0)) from injection-dependent band-gap narrowing, 0 otherwise [-].

    Returns
    -------
    ndarray
        n p - n_i,eff^2 [cm^-6] (-inf where the shift leaves the float range, never NaN).

    References
    ----------
    W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835
    (the factor n p - n_i^2 of every net rate).
    """
    n0, p0, dn = (np.asarray(a, dtype=float) for a in (n0_cm3, p0_cm3, delta_n_cm3))
    out = dn * (n0 + p0 + dn)
    if np.any(ni2_shift):
        # n0 p0 = 0 (below the float range) contributes nothing, even for a huge shift; a shift
        # beyond the float range gives -inf (a product the model cannot support), never NaN
        with np.errstate(over="ignore", invalid="ignore"):
            n0p0 = n0 * p0
            out = out - np.where(n0p0 > 0, n0p0 * np.expm1(ni2_shift), 0.0)
    return out
