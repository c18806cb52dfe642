"""Dopants: incomplete ionisation (Altermatt 2006) and the full-ionisation neutral densities.
"""
from __future__ import annotations

import numpy as np
from scipy.special import expit

from ..constants import eps0_F_cm, q_C
from ..errors import InputError
from ..materials import Dopant, Material

__all__ = ["ionisation_altermatt2006", "full_ionisation_cm3", "dopant_species"]

#: Altermatt et al. 2006 parameters (N_ref [cm^-3], c, N_b [cm^-3], d) for silicon, from memory
_ALTERMATT2006 = {("Si", "P"): (3.0e18, 2.0, 6.0e18, 2.3), ("Si", "B"): (1.7e18, 1.4, 6.0e18, 2.4)}
#: Mott criterion N_c^(1/3) a_H = 0.26 (P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978))
_MOTT = 0.26


def ionisation_altermatt2006(material: Material, dopant: Dopant, density_cm3):
    """Dopant level and its localised fraction for incomplete ionisation.

    E_dop(N) = E_dop,0 / (1 + (N / N_ref)^c)    (ionisation energy shrinks with N)
    b(N)     = 1 / (1 + (N / N_b)^d)           (fraction of dopant states still localised;
                                                the rest has merged with the band and is ionised)
    ionised fraction = 1 - b / (1 + exp(-x)), x = (E_F - E_D)/kT + ln g for donors,
    (E_A - E_F)/kT + ln g for acceptors.  Published parameters for Si:P and Si:B
    (from memory).  For every other species (our generalisation) N_ref = N_b = the Mott
    density (0.26 / a_H)^3 with the hydrogenic radius a_H = q^2 / (8 pi eps0 eps_r E_dop,0),
    and c = d = 2.  A consequence of the model: deep in freeze-out the ionised fraction
    levels off at 1 - b (about 2e-9 for 1e15 cm^-3 P, reached only below about 10 K).

    Parameters
    ----------
    material : optogen.materials.Material
        The host [-].
    dopant : optogen.materials.Dopant
        The species [-].
    density_cm3 : array_like
        Its density [cm^-3].

    Returns
    -------
    (ndarray, ndarray, ndarray)
        Ionisation energy [eV], ln b [-], ln(1 - b) [-].

    References
    ----------
    P. P. Altermatt, A. Schenk and G. Heiser, J. Appl. Phys. 100, 113714 (2006),
    doi:10.1063/1.2386934; P. P. Altermatt, A. Schenk, B. Schmithuesen and G. Heiser,
    J. Appl. Phys. 100, 113715 (2006), doi:10.1063/1.2386935 (DOIs from memory).
    P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978), doi:10.1103/PhysRevB.17.2575
    (Mott criterion; DOI from memory).
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


def full_ionisation_cm3(donors_cm3, acceptors_cm3, ln_ni_cm3):
    """Neutral (n0, p0) with every dopant ionised and n0 p0 = n_i^2 (Boltzmann statistics).

    n0 - p0 = N_D - N_A and n0 p0 = n_i^2: the majority density from the quadratic,
    N/2 + sqrt(N^2/4 + n_i^2) with N = |N_D - N_A|, the minority as n_i^2 / majority
    (in logs: no cancellation, no underflow of n_i^2).  The one definition of this state:
    the start of the equilibrium solver's narrowing iteration, the carriers of `bgn_eV`
    when none are given, and `optogen.transport.carriers_full_ionisation` (resistivity
    conversion, ASTM F723 practice).

    Parameters
    ----------
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities N_D, N_A [cm^-3].
    ln_ni_cm3 : array_like
        ln n_i [ln cm^-3].

    Returns
    -------
    (ndarray, ndarray)
        n0, p0 [cm^-3].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1
    (charge neutrality with mass action; analytic).
    """
    nd, na = np.asarray(donors_cm3, dtype=float), np.asarray(acceptors_cm3, dtype=float)
    ln_ni = np.asarray(ln_ni_cm3, dtype=float)
    half = 0.5 * (nd - na)
    ni = np.exp(ln_ni)
    s = np.hypot(half, ni)
    with np.errstate(divide="ignore", invalid="ignore"):
        n = np.where(half >= 0, half + s, np.exp(2 * ln_ni - np.log(s - np.minimum(half, 0.0))))
        p = np.where(half <= 0, s - half, np.exp(2 * ln_ni - np.log(s + np.maximum(half, 0.0))))
    return n, p


def dopant_species(material: Material, name, kind: str) -> Dopant | None:
    """The dopant species of `kind` ("donor" or "acceptor") called `name` in `material`.

    Parameters
    ----------
    material : optogen.materials.Material
        The host.
    name : str, Dopant or None
        Species name, or a Dopant (returned as is); None: the material's first listed
        species of that kind, or None.
    kind : {"donor", "acceptor"}
        The kind of species.

    Returns
    -------
    optogen.materials.Dopant or None
        The species; None when the material lists none of that kind and none is named.

    Raises
    ------
    InputError
        For a species the material does not list, or one of the other kind
        (field ``absorber.<kind>_species``).
    """
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
