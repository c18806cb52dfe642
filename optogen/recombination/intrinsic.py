"""Intrinsic recombination: band-to-band radiative and Auger, one function per published model.

Every model gives the coefficients of

    U_auger     = (n p - n_i,eff^2) (A + C dn^e)
    U_radiative = B_rel B (1 - f_PR) (n p - n_i,eff^2)

as an `IntrinsicCoefficients` (A, C, e, B) from the dark densities and the temperature; the
coefficient function of each model is the one registered (kind "intrinsic", selected by
``recombination.intrinsic``) and the one the solver's hot path (`PreparedRates`) calls.
`intrinsic_rates_cm3_s` gives the two rates of any registered model by name.
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from .. import registry
from .product import excess_product_cm6

__all__ = ["IntrinsicCoefficients", "radiative_b_trupke2003", "radiative_band_to_band", "auger_from_coefficients",
           "intrinsic_coefficients_richter2012", "intrinsic_coefficients_kerr_cuevas2002",
           "intrinsic_coefficients_dziewior_schmid1977", "intrinsic_coefficients_material",
           "intrinsic_rates_cm3_s", "INTRINSIC_MODELS"]


class IntrinsicCoefficients(NamedTuple):
    """Coefficients of U_auger = (n p - n_i,eff^2)(A + C dn^e) and U_rad = B (n p - n_i,eff^2).

    Parameters
    ----------
    A_cm3_s : ndarray
        The dark-density part of the Auger factor [cm^3 s^-1].
    C : ndarray
        Coefficient of dn^e [cm^(3 + 3e) s^-1].
    exponent : float
        e [-].
    B_cm3_s : ndarray
        Radiative coefficient [cm^3 s^-1].
    """

    A_cm3_s: np.ndarray
    C: np.ndarray
    exponent: float
    B_cm3_s: np.ndarray


# ---------------------------------------------------------------------------
# Radiative
# ---------------------------------------------------------------------------

# (T [K], B [cm^3 s^-1]) for intrinsic Si, T. Trupke et al., J. Appl. Phys. 94, 4930 (2003),
# doi:10.1063/1.1610231, Table I as recalled (from memory; the 300 K value 4.73e-15 is the
# paper's headline figure, the others are less certain, about +-20 %).
_TRUPKE2003_TABLE = np.array([
    (77.0, 8.01e-14), (90.0, 4.57e-14), (112.0, 2.14e-14), (170.0, 8.84e-15),
    (195.0, 7.35e-15), (249.0, 5.48e-15), (300.0, 4.73e-15),
])


def radiative_b_trupke2003(T_K):
    """Radiative coefficient B(T) of lightly doped crystalline Si.

    Log-log interpolation in the published table (B(300 K) = 4.73e-15 cm^3 s^-1; other entries
    from memory).  Above 300 K the last segment's power law (B ~ T^-0.79) is continued;
    below 77 K B is held at its 77 K value.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        B [cm^3 s^-1].

    References
    ----------
    T. Trupke, M. A. Green, P. Wuerfel, P. P. Altermatt, A. Wang, J. Zhao and R. Corkish,
    J. Appl. Phys. 94, 4930 (2003), doi:10.1063/1.1610231.
    """
    lt, lb = np.log(_TRUPKE2003_TABLE[:, 0]), np.log(_TRUPKE2003_TABLE[:, 1])
    x = np.log(np.clip(np.asarray(T_K, dtype=float), _TRUPKE2003_TABLE[0, 0], None))
    slope = (lb[-1] - lb[-2]) / (lt[-1] - lt[-2])
    y = np.where(x > lt[-1], lb[-1] + slope * (x - lt[-1]), np.interp(x, lt, lb))
    return np.exp(y)


def radiative_band_to_band(n0_cm3, p0_cm3, delta_n_cm3, B_cm3_s, B_rel=1.0, photon_recycling=0.0,
                           ni2_shift=0.0):
    """Net band-to-band radiative rate.

    U = B_rel B (1 - f_PR) (n p - n_i,eff^2)

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    delta_n_cm3 : array_like
        Excess density [cm^-3].
    B_cm3_s : array_like
        Radiative coefficient [cm^3 s^-1].
    B_rel : array_like
        Relative coefficient (screening at high densities; 1 = none) [-].
    photon_recycling : array_like
        Fraction f_PR of emitted photons re-absorbed in the absorber [-].
    ni2_shift : array_like
        See `excess_product_cm6` [-].

    Returns
    -------
    ndarray
        U [cm^-3 s^-1].

    References
    ----------
    W. van Roosbroeck and W. Shockley, Phys. Rev. 94, 1558 (1954), doi:10.1103/PhysRev.94.1558.
    """
    return (np.asarray(B_rel) * np.asarray(B_cm3_s) * (1.0 - np.asarray(photon_recycling))
            * excess_product_cm6(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift))


# ---------------------------------------------------------------------------
# Auger: U_auger = (n p - n_i,eff^2) (A + C dn^e)
# ---------------------------------------------------------------------------

def auger_from_coefficients(excess_cm6, delta_n_cm3, A_cm3_s, C, exponent):
    """Auger rate from the coefficients of an intrinsic model.

    U_auger = (n p - n_i,eff^2) (A + C dn^e); for constant coefficients Cn, Cp:
    A = Cn n0 + Cp p0, C = Cn + Cp, e = 1, i.e. U = (Cn n + Cp p)(n p - n_i,eff^2).

    Parameters
    ----------
    excess_cm6 : array_like
        n p - n_i,eff^2 (`excess_product_cm6`) [cm^-6].
    delta_n_cm3 : array_like
        Excess density [cm^-3].
    A_cm3_s : array_like
        Dark-density part of the Auger factor, see `IntrinsicCoefficients` [cm^3 s^-1].
    C : array_like
        Coefficient of dn^e [cm^(3 + 3e) s^-1].
    exponent : array_like
        e [-].

    Returns
    -------
    ndarray
        U_auger [cm^-3 s^-1].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1
    (constant-coefficient form).
    """
    return excess_cm6 * (A_cm3_s + C * np.asarray(delta_n_cm3, dtype=float) ** exponent)


def intrinsic_coefficients_richter2012(n0_cm3, p0_cm3, T_K):
    """Intrinsic recombination of crystalline Si, Richter et al. 2012 (coefficients).

    U = (n p - n_i,eff^2) (2.5e-31 g_eeh n0 + 8.5e-32 g_ehh p0 + 3.0e-29 dn^0.92 + B_rel B_low)
    g_eeh = 1 + 13 (1 - tanh((n0/3.3e17)^0.66)),  g_ehh = 1 + 7.5 (1 - tanh((p0/7.0e17)^0.63))
    (constants from memory).  B_low = 4.73e-15 cm^3 s^-1 at 300 K (Trupke 2003); here
    B_low(T) = `radiative_b_trupke2003`.  The fit is for 300 K.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    T_K : array_like
        Temperature (of B_low) [K].

    Returns
    -------
    IntrinsicCoefficients
        A [cm^3 s^-1], C = 3.0e-29 [cm^5.76 s^-1], e = 0.92, B [cm^3 s^-1].

    References
    ----------
    A. Richter, S. W. Glunz, F. Werner, J. Schmidt and A. Cuevas, Phys. Rev. B 86, 165202
    (2012), doi:10.1103/PhysRevB.86.165202.
    """
    n0, p0 = np.asarray(n0_cm3, dtype=float), np.asarray(p0_cm3, dtype=float)
    g_eeh = 1.0 + 13.0 * (1.0 - np.tanh((n0 / 3.3e17) ** 0.66))
    g_ehh = 1.0 + 7.5 * (1.0 - np.tanh((p0 / 7.0e17) ** 0.63))
    return IntrinsicCoefficients(2.5e-31 * g_eeh * n0 + 8.5e-32 * g_ehh * p0, 3.0e-29, 0.92,
                                 radiative_b_trupke2003(T_K))


def intrinsic_coefficients_kerr_cuevas2002(n0_cm3, p0_cm3, T_K=300.0):
    """Intrinsic recombination of crystalline Si, Kerr & Cuevas 2002 (coefficients).

    U = (n p - n_i,eff^2) (1.8e-24 n0^0.65 + 6e-25 p0^0.65 + 3e-27 dn^0.8 + 9.5e-15)
    (constants from memory).  The paper writes n p; n p - n_i,eff^2 is used so that the
    dark rate is zero (the difference is negligible under light).  A 300 K fit: T_K only
    shapes the result.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    T_K : array_like
        Temperature [K] (not used by the fit).

    Returns
    -------
    IntrinsicCoefficients
        A [cm^3 s^-1], C = 3e-27 [cm^5.4 s^-1], e = 0.8, B = 9.5e-15 [cm^3 s^-1].

    References
    ----------
    M. J. Kerr and A. Cuevas, J. Appl. Phys. 91, 2473 (2002), doi:10.1063/1.1432476.
    """
    n0, p0 = np.asarray(n0_cm3, dtype=float), np.asarray(p0_cm3, dtype=float)
    return IntrinsicCoefficients(1.8e-24 * n0**0.65 + 6.0e-25 * p0**0.65, 3.0e-27, 0.8,
                                 9.5e-15 + 0.0 * np.asarray(T_K, dtype=float))


def intrinsic_coefficients_dziewior_schmid1977(n0_cm3, p0_cm3, T_K):
    """Band-to-band Auger of Si with constant coefficients, Dziewior & Schmid 1977.

    U_auger = (Cn n + Cp p)(n p - n_i,eff^2), Cn = 2.8e-31, Cp = 9.9e-32 cm^6 s^-1; the radiative
    coefficient is `radiative_b_trupke2003`.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    T_K : array_like
        Temperature (of B) [K].

    Returns
    -------
    IntrinsicCoefficients
        A = Cn n0 + Cp p0 [cm^3 s^-1], C = Cn + Cp [cm^6 s^-1], e = 1, B [cm^3 s^-1].

    References
    ----------
    J. Dziewior and W. Schmid, Appl. Phys. Lett. 31, 346 (1977), doi:10.1063/1.89694.
    """
    cn, cp = 2.8e-31, 9.9e-32
    return IntrinsicCoefficients(cn * np.asarray(n0_cm3, dtype=float) + cp * np.asarray(p0_cm3, dtype=float),
                                 cn + cp, 1.0, radiative_b_trupke2003(T_K))


def intrinsic_coefficients_material(material, n0_cm3, p0_cm3, T_K):
    """Intrinsic recombination from a material record's Auger and radiative coefficients.

    U_auger = (Cn n + Cp p)(n p - n_i,eff^2), U_rad = B (n p - n_i,eff^2), with Cn, Cp, B of
    the record at T (`Material.auger_coefficients_cm6_s`, `Material.radiative_coefficient_cm3_s`,
    temperature-dependent where the record's models are).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber record (Cn, Cp and B, temperature-dependent where its models are).
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    IntrinsicCoefficients
        A = Cn n0 + Cp p0 [cm^3 s^-1], C = Cn + Cp [cm^6 s^-1], e = 1, B [cm^3 s^-1].

    References
    ----------
    The record's sources (`Material.sources`); form: S. M. Sze and K. K. Ng, Physics of
    Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1.
    """
    cn, cp = material.auger_coefficients_cm6_s(T_K)
    return IntrinsicCoefficients(cn * np.asarray(n0_cm3, dtype=float) + cp * np.asarray(p0_cm3, dtype=float),
                                 cn + cp, 1.0, material.radiative_coefficient_cm3_s(T_K))


# Registered models: `call(material, n0, p0, T_K)` -> IntrinsicCoefficients (signature adapters only)
_KEY = "recombination.intrinsic"
registry.register(
    "intrinsic", "richter2012", intrinsic_coefficients_richter2012, key=_KEY,
    call=lambda material, n0, p0, T: intrinsic_coefficients_richter2012(n0, p0, T),
    materials=("Si",), injection=True, aliases=("richter", "intrinsic_richter2012"),
    summary="Auger with Coulomb enhancement + radiative B(T) of Trupke 2003 (default for Si)",
    reference="A. Richter, S. W. Glunz, F. Werner, J. Schmidt and A. Cuevas, Phys. Rev. B 86, 165202 (2012)",
    doi="10.1103/PhysRevB.86.165202")
registry.register(
    "intrinsic", "kerr_cuevas2002", intrinsic_coefficients_kerr_cuevas2002, key=_KEY,
    call=lambda material, n0, p0, T: intrinsic_coefficients_kerr_cuevas2002(n0, p0, T),
    materials=("Si",), injection=True, aliases=("kerr_cuevas", "kerr2002", "intrinsic_kerr_cuevas2002"),
    summary="empirical Auger + radiative fit at 300 K",
    reference="M. J. Kerr and A. Cuevas, J. Appl. Phys. 91, 2473 (2002)", doi="10.1063/1.1432476")
registry.register(
    "intrinsic", "dziewior_schmid1977", intrinsic_coefficients_dziewior_schmid1977, key=_KEY,
    call=lambda material, n0, p0, T: intrinsic_coefficients_dziewior_schmid1977(n0, p0, T),
    materials=("Si",), injection=True, aliases=("dziewior_schmid", "dziewior", "auger_dziewior_schmid1977"),
    summary="constant Auger coefficients Cn, Cp + radiative B(T) of Trupke 2003",
    reference="J. Dziewior and W. Schmid, Appl. Phys. Lett. 31, 346 (1977)", doi="10.1063/1.89694")
registry.register(
    "intrinsic", "constant", intrinsic_coefficients_material, key=_KEY, injection=True,
    aliases=("auger_constant", "material"),
    summary="the material record's Auger Cn, Cp and radiative B (default except for Si)",
    reference="The material record's sources (`optogen materials NAME`)")

#: canonical intrinsic model name -> coefficients(material, n0, p0, T_K) (a view of the registry)
INTRINSIC_MODELS = {m.name: m.call for m in registry.models("intrinsic", load=False)}


def intrinsic_rates_cm3_s(model, n0_cm3, p0_cm3, delta_n_cm3, T_K=300.0, *, material=None, B_rel=1.0,
                          photon_recycling=0.0, ni2_shift=0.0):
    """Auger and radiative rates of a registered intrinsic model, by name.

    Built on the model's registered coefficient function, `auger_from_coefficients` and
    `radiative_band_to_band`: the same functions as the solver's rates.

    Parameters
    ----------
    model : str
        A registered "intrinsic" model (aliases accepted) [-].
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    delta_n_cm3 : array_like
        Excess density [cm^-3].
    T_K : array_like
        Temperature [K].
    material : optogen.materials.Material, optional
        Needed by "constant" (the record's coefficients) and checked against the model's materials.
    B_rel : array_like
        Relative radiative coefficient [-].
    photon_recycling : array_like
        Fraction of radiative events re-absorbed [-].
    ni2_shift : array_like
        See `excess_product_cm6` [-].

    Returns
    -------
    (ndarray, ndarray)
        U_auger, U_radiative [cm^-3 s^-1]; their sum is the model's published U.

    References
    ----------
    The chosen model's (`optogen.registry.models("intrinsic")`).
    """
    m = registry.pick("intrinsic", model)
    if material is not None:
        registry.check_material(m, material, value=model)
    c = m.call(material, n0_cm3, p0_cm3, T_K)
    exc = excess_product_cm6(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift)
    return (auger_from_coefficients(exc, delta_n_cm3, c.A_cm3_s, c.C, c.exponent),
            radiative_band_to_band(n0_cm3, p0_cm3, delta_n_cm3, c.B_cm3_s, B_rel, photon_recycling, ni2_shift))
