"""Surface recombination: the J0 law (one definition) and its low-injection velocity S_eff.

A surface described by a saturation current density J0 recombines the flux
Us = (J0(T)/q)(n p - n_i,eff^2)/n_i,eff^2; `surface_j0_flux_cm2_s` is that law, `surface_j0`
the same law as a volume rate in a uniform wafer (the solver's rates), and
`surface_velocity_j0_cm_s` its derivative at dn = 0.  A J0 quoted at one temperature is
carried to another by `j0_at_temperature_fA_cm2` (the only place that scaling is applied).
"""
from __future__ import annotations

import numpy as np

from ..constants import q_C
from ..equilibrium import ni_nc_nv_eg
from ..errors import InputError
from .product import excess_product_cm6

__all__ = ["j0_at_temperature_fA_cm2", "surface_j0_flux_cm2_s", "surface_j0", "surface_velocity_j0_cm_s"]


def j0_at_temperature_fA_cm2(J0_fA_cm2, material, T_K, J0_reference_K=298.15):
    """A surface J0 quoted at J0_reference_K, carried to temperature T_K.

    J0(T) = J0(T_ref) n_i^2(T) / n_i^2(T_ref),  n_i^2 = Nc Nv exp(-Eg / kT) of the material
    without narrowing.  A surface (or emitter) J0 is proportional to n_i^2: the dark
    recombination flux J0/q (n p / n_i^2 - 1) is then fixed by the surface alone (D. E. Kane
    and R. M. Swanson, Proc. 18th IEEE PVSC (1985) 578, from memory; common practice).
    This is the only place the J0 temperature scaling is applied: `surface_j0_flux_cm2_s`,
    `Recombination.j0_at_fA_cm2` and so the uniform rates, the depth-resolved surface and
    the detector's rear S_eff all go through it.

    Parameters
    ----------
    J0_fA_cm2 : array_like
        J0 at J0_reference_K [fA cm^-2].
    material : optogen.materials.Material
        The absorber (Nc, Nv, Eg of T).
    T_K : array_like
        Temperature [K].
    J0_reference_K : float or None
        Temperature at which J0_fA_cm2 is quoted [K]; None: J0 as given at every T.

    Returns
    -------
    ndarray
        J0 at T_K [fA cm^-2], broadcast over J0_fA_cm2 and T_K.

    Raises
    ------
    InputError
        When J0_reference_K is set but material or T_K is missing.

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    j0 = np.asarray(J0_fA_cm2, dtype=float)
    if J0_reference_K is None:
        return j0
    if J0_reference_K is not None and (material is None or T_K is None):
        raise InputError("recombination.J0_reference_K", J0_reference_K,
                         "material and T_K, to carry J0 from its reference temperature to T",
                         "pass material= and T_K=, or J0_reference_K=None for a J0 already at T")
    return j0 * _j0_scale(material, T_K, J0_reference_K)


def surface_j0_flux_cm2_s(n0_cm3, p0_cm3, delta_n_cm3, J0_fA_cm2, ni2_shift=0.0, *, material=None, T_K=None,
                          J0_reference_K=298.15, derivative=False):
    """Recombination flux into a surface described by a J0 (the one J0 surface law).

    Us = (J0(T) / q) (n p - n_i,eff^2) / n_i,eff^2,   n = n0 + dn, p = p0 + dn,
    n_i,eff^2 = n0 p0 exp(ni2_shift),  J0(T) from `j0_at_temperature_fA_cm2`.

    n p - n_i,eff^2 comes from `excess_product_cm6` (no cancellation).  The depth-resolved
    surface (the pipeline's depth-resolved run) and the detector's low-injection
    S_eff = dUs/ddn at dn = 0 = J0 (n0 + p0) / (q n0 p0) (`surface_velocity_j0_cm_s`) call this function; `surface_j0`
    (called by `PreparedRates.rates`) is the same law divided by W, through the same kernel
    and the same J0 temperature scaling.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    delta_n_cm3 : array_like
        Excess density at the surface [cm^-3].
    J0_fA_cm2 : array_like
        Saturation current density of the surface, quoted at J0_reference_K [fA cm^-2].
    ni2_shift : array_like
        ln(n_i,eff^2(n, p) / (n0 p0)) from injection-dependent narrowing, 0 otherwise [-].
    material : optogen.materials.Material, optional
        The absorber; needed unless J0_reference_K is None.
    T_K : array_like, optional
        Temperature [K]; needed unless J0_reference_K is None.
    J0_reference_K : float or None
        Temperature at which J0 is quoted [K] (default 298.15, as
        `Recombination.J0_reference_K`); None: J0_fA_cm2 is already the value at T.
    derivative : bool
        Also return dUs/ddn [cm s^-1] (at fixed ni2_shift).

    Returns
    -------
    ndarray or (ndarray, ndarray)
        Us [cm^-2 s^-1] (0 where J0 = 0), or (Us, dUs/ddn [cm s^-1]) with derivative=True.

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    j0 = j0_at_temperature_fA_cm2(J0_fA_cm2, material, T_K, J0_reference_K)
    return _j0_law(j0 * 1e-15 / q_C, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift, derivative)


def _j0_law(coef, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift, derivative=False):
    """coef (n p - n_i,eff^2) / n_i,eff^2 (and its dn-derivative at fixed shift); coef = J0(T)/q
    [cm^-2 s^-1] for the flux, J0(T)/(q W) [cm^-3 s^-1] for the volume rate.  coef is applied
    before the division by n0 p0 so a subnormal rate is rounded once."""
    n0, p0 = np.asarray(n0_cm3, dtype=float), np.asarray(p0_cm3, dtype=float)
    dn = np.asarray(delta_n_cm3, dtype=float)
    coef = np.asarray(coef, dtype=float)
    exc = excess_product_cm6(n0, p0, dn, ni2_shift)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        ni2 = n0 * p0 * np.exp(ni2_shift)
        us = np.where(coef > 0, coef * exc / ni2, 0.0)
        if not derivative:
            return us
        dus = np.where(coef > 0, coef * ((n0 + p0 + 2.0 * dn) / n0) / p0 * np.exp(-np.asarray(ni2_shift)), 0.0)
    return us, dus


def surface_j0(n0_cm3, p0_cm3, delta_n_cm3, J0_fA_cm2, thickness_cm, ni2_shift=0.0, *, material=None, T_K=None,
               J0_reference_K=298.15):
    """Surface recombination through a J0, as a volume rate in a uniform wafer.

    U_s = Us / W with Us from `surface_j0_flux_cm2_s` (same arguments and kernel; J0 carried
    from J0_reference_K to T_K as n_i^2 by `j0_at_temperature_fA_cm2`).
    `PreparedRates.rates` (so `Recombination.rates`) calls this for its J0 surfaces, so the two
    agree at every temperature.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    delta_n_cm3 : array_like
        Excess density [cm^-3].
    J0_fA_cm2 : array_like
        Saturation current density, the sum over the surfaces described by a J0, quoted at
        J0_reference_K [fA cm^-2].
    thickness_cm : array_like
        Wafer thickness W [cm].
    ni2_shift : array_like
        ln(n_i,eff^2(n, p) / (n0 p0)) from injection-dependent narrowing, 0 otherwise [-].
    material : optogen.materials.Material, optional
        The absorber; needed unless J0_reference_K is None.
    T_K : array_like, optional
        Temperature [K]; needed unless J0_reference_K is None.
    J0_reference_K : float or None
        Temperature at which J0 is quoted [K] (as `surface_j0_flux_cm2_s`); None: J0_fA_cm2
        is already the value at T.

    Returns
    -------
    ndarray
        U_s [cm^-3 s^-1].

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    j0 = j0_at_temperature_fA_cm2(J0_fA_cm2, material, T_K, J0_reference_K)
    return _j0_law(j0 * 1e-15 / (q_C * np.asarray(thickness_cm, dtype=float)), n0_cm3, p0_cm3, delta_n_cm3,
                   ni2_shift)


def surface_velocity_j0_cm_s(n0_cm3, p0_cm3, J0_fA_cm2):
    """Low-injection recombination velocity of a surface described by a J0.

    S_eff = dUs/ddn at dn = 0 of the one J0 law (`surface_j0_flux_cm2_s`)
          = J0 (n0 + p0) / (q n0 p0),
    i.e. J0 N / (q n_i^2) in extrinsic material and finite for an intrinsic one.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    J0_fA_cm2 : array_like
        Saturation current density of the surface at the absorber's temperature [fA cm^-2]
        (carry a quoted value to T with `j0_at_temperature_fA_cm2` first).

    Returns
    -------
    ndarray
        S_eff [cm s^-1], broadcast over the inputs.

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    return surface_j0_flux_cm2_s(n0_cm3, p0_cm3, 0.0, J0_fA_cm2, J0_reference_K=None, derivative=True)[1]


def _j0_scale(material, T_K, reference_K):
    """n_i^2(T) / n_i^2(reference) of the material, no narrowing [-] (a J0 is proportional to n_i^2)."""
    return np.exp(2.0 * (ni_nc_nv_eg(material, T_K, log=True) - ni_nc_nv_eg(material, reference_K, log=True)))


