"""Intrinsic carrier density n_i: one function per published model, registered as kind "ni".

Every model is carried as ln n_i so that nothing underflows (n_i of Si at 4 K is below the
smallest float); `ln_ni_cm3` and `ni_cm3` select a model by name (`optogen.registry`).
"""
from __future__ import annotations

import numpy as np

from .. import registry
from ..constants import kT_eV
from ..errors import InputError, check_range
from ..materials import Material, bandgap_hansen1982

__all__ = ["ni_nc_nv_eg", "ni_misiakos1993", "ni_hansen_schmit1983", "ln_ni_cm3", "ni_cm3", "pick_ni_model", "NI_MODELS"]


def ni_nc_nv_eg(material: Material, T_K, log: bool = False):
    """Intrinsic density from the band parameters of any material.

    n_i = sqrt(Nc(T) Nv(T)) exp(-Eg(T) / 2kT)   (non-degenerate statistics).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber (its nc_cm3, nv_cm3, bandgap_eV) [-].
    T_K : array_like
        Temperature [K].
    log : bool
        Return ln n_i instead of n_i [-].

    Returns
    -------
    ndarray
        n_i [cm^-3] (or ln n_i [ln cm^-3]).

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), eq. 1.21.
    """
    T = np.asarray(T_K, dtype=float)
    ln = 0.5 * (np.log(material.nc_cm3(T)) + np.log(material.nv_cm3(T))) - material.bandgap_eV(T) / (2.0 * kT_eV(T))
    return ln if log else np.exp(ln)


def ni_misiakos1993(T_K, log: bool = False):
    """Intrinsic density of silicon, Misiakos & Tsamakis 1993.

    n_i = 5.29e19 (T/300)^2.54 exp(-6726/T) cm^-3 (measured 78-340 K; extrapolated outside;
    coefficients from memory).

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    log : bool
        Return ln n_i instead of n_i [-].

    Returns
    -------
    ndarray
        n_i [cm^-3] (or ln n_i [ln cm^-3]).

    References
    ----------
    K. Misiakos and D. Tsamakis, J. Appl. Phys. 74, 3293 (1993), doi:10.1063/1.354551.
    """
    T = np.asarray(T_K, dtype=float)
    ln = np.log(5.29e19) + 2.54 * np.log(T / 300.0) - 6726.0 / T
    return ln if log else np.exp(ln)


def ni_hansen_schmit1983(x, T_K, log: bool = False):
    """Intrinsic density of Hg(1-x)Cd(x)Te, Hansen & Schmit 1983.

    n_i = (5.585 - 3.82 x + 1.753e-3 T - 1.364e-3 x T) 1e14 Eg^(3/4) T^(3/2) exp(-Eg / 2kT)
    with Eg(x, T) of Hansen, Schmit & Casselman 1982 in eV (`bandgap_hansen1982`).

    Parameters
    ----------
    x : array_like
        Cd fraction; Eg(x, T) must be > 0 [-].
    T_K : array_like
        Temperature [K].
    log : bool
        Return ln n_i instead of n_i [-].

    Returns
    -------
    ndarray
        n_i [cm^-3] (or ln n_i [ln cm^-3]).

    Raises
    ------
    InputError
        Where Eg(x, T) <= 0 (x below about 0.17: a semimetal).

    References
    ----------
    G. L. Hansen and J. L. Schmit, J. Appl. Phys. 54, 1639 (1983), doi:10.1063/1.332153.
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


# Registered models: `call(material, T_K)` -> ln n_i [ln cm^-3] (signature adapters only)
_KEYS = ("absorber.ni_model", "absorber.custom.ni_model")
registry.register(
    "ni", "nc_nv_eg", ni_nc_nv_eg, key=_KEYS, call=lambda material, T: ni_nc_nv_eg(material, T, log=True),
    aliases=("dos", "bands"), summary="sqrt(Nc Nv) exp(-Eg/2kT) from the material record",
    reference="S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), eq. 1.21")
registry.register(
    "ni", "misiakos1993", ni_misiakos1993, key=_KEYS, call=lambda material, T: ni_misiakos1993(T, log=True),
    materials=("Si",), aliases=("misiakos", "misiakos_tsamakis1993"),
    summary="silicon, measured 78-340 K",
    reference="K. Misiakos and D. Tsamakis, J. Appl. Phys. 74, 3293 (1993)", doi="10.1063/1.354551")
registry.register(
    "ni", "hansen_schmit1983", ni_hansen_schmit1983, key=_KEYS,
    call=lambda material, T: ni_hansen_schmit1983(material.composition_x, T, log=True),
    requires="composition_x", aliases=("hansen_schmit", "hansen1983"), summary="Hg(1-x)Cd(x)Te",
    reference="G. L. Hansen and J. L. Schmit, J. Appl. Phys. 54, 1639 (1983)", doi="10.1063/1.332153")

#: canonical n_i model name -> ln n_i(material, T_K) (a view of the registry)
NI_MODELS = {m.name: m.call for m in registry.models("ni", load=False)}


def _check_T(T_K):
    return np.asarray(check_range("absorber.temperature_K", T_K, 0.0, None, low_open=True, unit="K"))


def pick_ni_model(material: Material, model: str | None = None) -> registry.Model:
    """The registered n_i model for `material` (checked to apply to it).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    model : str, optional
        Model name or alias (default: the material's ``ni_model``, else "nc_nv_eg").

    Returns
    -------
    optogen.registry.Model
        The registered model (its ``call(material, T)`` gives ln n_i [ln cm^-3]).

    Raises
    ------
    InputError
        For an unknown model, or one that does not apply to the material
        (field ``absorber.ni_model``).
    """
    name = model or getattr(material, "ni_model", None) or "nc_nv_eg"
    return registry.check_material(registry.pick("ni", name, "absorber.ni_model"), material,
                                   "absorber.ni_model", name)


def ln_ni_cm3(material: Material, T_K, model: str | None = None):
    """Natural log of the intrinsic density, finite where n_i underflows.

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber [-].
    T_K : array_like
        Temperature [K].
    model : str, optional
        A registered "ni" model (default: the material's ``ni_model``, else "nc_nv_eg") [-].

    Returns
    -------
    ndarray
        ln n_i [ln cm^-3].

    References
    ----------
    The chosen model's (`optogen.registry.models("ni")`).
    """
    T = _check_T(T_K)
    return pick_ni_model(material, model).call(material, T)


def ni_cm3(material: Material, T_K, model: str | None = None):
    """Intrinsic carrier density n_i (0.0 only below the float range; see `ln_ni_cm3`).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber [-].
    T_K : array_like
        Temperature [K].
    model : str, optional
        A registered "ni" model (default: the material's ``ni_model``, else "nc_nv_eg") [-].

    Returns
    -------
    ndarray
        n_i [cm^-3].

    References
    ----------
    The chosen model's (`optogen.registry.models("ni")`).
    """
    return np.exp(ln_ni_cm3(material, T_K, model))
