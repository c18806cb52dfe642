"""Shockley-Read-Hall recombination through defect levels: `Defect`, the built-in `DEFECTS`,
`defect_from_table` and the rate `srh_shockley_read_hall1952`.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Mapping

import numpy as np

from .. import registry
from .. import schema as _schema
from ..constants import kT_eV
from ..errors import InputError, check_range, did_you_mean
from .product import excess_product_cm6

__all__ = ["srh_shockley_read_hall1952", "trap_densities_cm3", "Defect", "DEFECTS",
           "defect_from_table"]


def srh_shockley_read_hall1952(n0_cm3, p0_cm3, delta_n_cm3, tau_n0_s, tau_p0_s, n1_cm3, p1_cm3,
                               ni2_shift=0.0):
    """Net Shockley-Read-Hall rate through one level (or several, on a trailing axis).

    U = (n p - n_i,eff^2) / (tau_p0 (n + n1) + tau_n0 (p + p1)),  n = n0 + dn, p = p0 + dn.
    Several levels: give tau, n1, p1 with a trailing level axis; the rates are summed over it.
    This adapts the time constants to the capture rates 1/tau of the kernel the solver's hot
    path calls (`PreparedRates.rates`), so a missing capture (tau = inf) is exact.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    delta_n_cm3 : array_like
        Excess density [cm^-3].
    tau_n0_s, tau_p0_s : array_like
        Capture time constants 1/(sigma v_th N_t) [s] (inf: no capture).
    n1_cm3, p1_cm3 : array_like
        Densities with the Fermi level at the trap, n1 p1 = n_i,eff^2 [cm^-3].
    ni2_shift : array_like
        See `excess_product_cm6` [-] (n1 and p1 each scale by exp(ni2_shift/2)).

    Returns
    -------
    ndarray
        U [cm^-3 s^-1].

    References
    ----------
    W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835;
    R. N. Hall, Phys. Rev. 87, 387 (1952), doi:10.1103/PhysRev.87.387.
    """
    n0, p0, dn = (np.asarray(a, dtype=float) for a in (n0_cm3, p0_cm3, delta_n_cm3))
    # written with capture rates a = 1/tau_n0, b = 1/tau_p0 so that a missing capture (tau = inf) is exact
    with np.errstate(divide="ignore"):
        a = 1.0 / np.asarray(tau_n0_s, dtype=float)
        b = 1.0 / np.asarray(tau_p0_s, dtype=float)
    return _srh_rates(n0, p0, dn, a, b, np.asarray(n1_cm3, float), np.asarray(p1_cm3, float), ni2_shift)


def _srh_rates(n0, p0, dn, a, b, n1, p1, ni2_shift=0.0):
    """SRH with capture rates a = 1/tau_n0, b = 1/tau_p0 [s^-1]; shapes (..., K) for K levels."""
    exc = excess_product_cm6(n0, p0, dn, ni2_shift)[..., None]
    with np.errstate(over="ignore", invalid="ignore"):     # a shift beyond the float range: NaN, not a warning
        if np.any(ni2_shift):
            s = np.exp(0.5 * np.asarray(ni2_shift))[..., None]
            n1, p1 = n1 * s, p1 * s
        n, p = (n0 + dn)[..., None], (p0 + dn)[..., None]
        den = a * (n + n1) + b * (p + p1)
        num = exc * a * b
        out = np.divide(num, den, out=np.zeros(np.broadcast_shapes(num.shape, den.shape)), where=den > 0)
    return out.sum(axis=-1)


def trap_densities_cm3(level_from_ev_eV, effective_gap_eV, nc_cm3, nv_cm3, T_K):
    """SRH densities n1, p1 of a level at Et - Ev = level_from_ev_eV.

    n1 = Nc exp(-(Ec - Et)/kT), p1 = Nv exp(-(Et - Ev)/kT), Ec - Ev = effective gap,
    so that n1 p1 = Nc Nv exp(-Eg_eff/kT) = n_i,eff^2.

    Parameters
    ----------
    level_from_ev_eV : array_like
        Et - Ev [eV].
    effective_gap_eV : array_like
        Ec - Ev of the statistics [eV].
    nc_cm3, nv_cm3 : array_like
        Effective densities of states [cm^-3].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    (ndarray, ndarray)
        n1, p1 [cm^-3].

    References
    ----------
    W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835.
    """
    kT = kT_eV(T_K)
    et = np.asarray(level_from_ev_eV, dtype=float)
    return nc_cm3 * np.exp((et - effective_gap_eV) / kT), nv_cm3 * np.exp(-et / kT)


_ISTRATOV = ("A. A. Istratov, H. Hieslmair and E. R. Weber, Appl. Phys. A 69, 13 (1999), "
             "doi:10.1007/s003390050968; D. Macdonald and L. J. Geerligs, Appl. Phys. Lett. 85, 4061 "
             "(2004), doi:10.1063/1.1812833 (from memory)")


@dataclass(frozen=True)
class Defect:
    """One SRH level.

    Either energy_eV + sigma_n_cm2 + sigma_p_cm2 + density_cm3 (tau_x0 = 1/(sigma_x v_th,x(T) N_t)),
    or tau_n0_s + tau_p0_s (+ energy_eV; mid-gap, at the intrinsic level, if absent).

    Parameters
    ----------
    name : str, optional
        Label or built-in name.
    energy_eV : float or None, optional
        Level position measured from `energy_ref` [eV].
    energy_ref : {"Ev", "Ec", "Ei"}, optional
        "Ev" (upward from the valence band edge), "Ec" (downward from the conduction band
        edge) or "Ei" (signed, upward from the intrinsic level); case-insensitive.
    sigma_n_cm2, sigma_p_cm2 : float or None, optional
        Electron and hole capture cross-sections [cm^2].
    density_cm3 : float or None, optional
        Defect density N_t [cm^-3].
    tau_n0_s, tau_p0_s : float or None, optional
        Capture time constants [s].
    source : str, optional
        Citation of the level parameters.
    label : str, optional
        Dotted scenario path used in error messages.

    Raises
    ------
    InputError
        For a bad energy_ref, both lifetimes and cross-sections, a missing partner value, or a
        value out of range.

    References
    ----------
    W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835;
    R. N. Hall, Phys. Rev. 87, 387 (1952), doi:10.1103/PhysRev.87.387.
    """

    name: str = "custom"
    energy_eV: float | None = None
    energy_ref: str = "Ev"
    sigma_n_cm2: float | None = None
    sigma_p_cm2: float | None = None
    density_cm3: float | None = None
    tau_n0_s: float | None = None
    tau_p0_s: float | None = None
    source: str = ""
    label: str = field(default="", compare=False)

    def __post_init__(self):
        where = self.label or f"defect {self.name}"
        ref = {"ev": "Ev", "ec": "Ec", "ei": "Ei"}.get(str(self.energy_ref).lower())
        if ref is None:
            raise InputError(f"{where}.energy_ref", self.energy_ref, 'one of "Ev", "Ec", "Ei"')
        object.__setattr__(self, "energy_ref", ref)
        by_tau = self.tau_n0_s is not None or self.tau_p0_s is not None
        by_sigma = self.sigma_n_cm2 is not None or self.sigma_p_cm2 is not None
        if by_tau and by_sigma:
            raise InputError(f"{where}", "tau_*_s and sigma_*_cm2", "either tau_n0_s + tau_p0_s or "
                             "sigma_n_cm2 + sigma_p_cm2 + density_cm3, not both")
        if by_tau:
            for k in ("tau_n0_s", "tau_p0_s"):
                v = getattr(self, k)
                if v is None:
                    raise InputError(f"{where}.{k}", None, "a lifetime > 0 s (both tau_n0_s and tau_p0_s are needed)")
                check_range(f"{where}.{k}", v, 0.0, np.inf, low_open=True, unit="s")
        elif by_sigma:
            for k in ("sigma_n_cm2", "sigma_p_cm2"):
                v = getattr(self, k)
                if v is None:
                    raise InputError(f"{where}.{k}", None, "a cross-section >= 0 cm^2 (both are needed)")
                check_range(f"{where}.{k}", v, 0.0, None, unit="cm^2")
            if self.energy_eV is None:
                raise InputError(f"{where}.energy_eV", None, "a level energy [eV] with the cross-sections")
        if self.density_cm3 is not None:
            check_range(f"{where}.density_cm3", self.density_cm3, 0.0, None, unit="cm^-3")
        if self.energy_eV is not None:
            check_range(f"{where}.energy_eV", self.energy_eV, None if ref == "Ei" else 0.0, None, unit="eV")

    @property
    def complete(self) -> bool:
        """True when the defect has enough parameters to give a rate."""
        return self.tau_n0_s is not None or self.density_cm3 is not None

    def tau_s(self, material, T_K):
        """Capture time constants (tau_n0, tau_p0) at T_K (inf where no capture).

        tau_x0 = 1 / (sigma_x v_th,x(T) N_t) for a level given by cross-sections, else the
        given time constants at every temperature.

        Parameters
        ----------
        material : materials.Material
            The absorber (its thermal velocities `vth_cm_s`).
        T_K : float or array_like
            Temperature [K].

        Returns
        -------
        tau_n0, tau_p0 : numpy.ndarray
            Electron and hole capture time constants [s].

        Raises
        ------
        InputError
            For a level given by cross-sections without a density.
        """
        if self.tau_n0_s is not None:
            T = np.asarray(T_K, dtype=float)
            return np.full_like(T, self.tau_n0_s), np.full_like(T, self.tau_p0_s)
        if self.density_cm3 is None:
            raise InputError(f"{self.label or 'defect ' + self.name}.density_cm3", None,
                             "a defect density [cm^-3] for a level given by cross-sections")
        ve, vh = material.vth_cm_s(T_K)
        # a vanishing density (down to a subnormal 1e-308 cm^-3) is an infinite lifetime, not an error
        with np.errstate(divide="ignore", over="ignore"):
            return (1.0 / (self.sigma_n_cm2 * ve * np.asarray(self.density_cm3, float)),
                    1.0 / (self.sigma_p_cm2 * vh * np.asarray(self.density_cm3, float)))

    def level_from_ev_eV(self, effective_gap_eV, intrinsic_level_eV):
        """Et - Ev given the gap and the intrinsic level; mid-gap (Eg/2) if no energy.

        Mid-gap, not E_i: in narrow-gap materials with unequal masses E_i can leave the gap.

        Parameters
        ----------
        effective_gap_eV : array_like
            Ec - Ev of the statistics [eV].
        intrinsic_level_eV : array_like
            Intrinsic level E_i - Ev [eV].

        Returns
        -------
        numpy.ndarray
            Et - Ev [eV].
        """
        if self.energy_eV is None:
            return 0.5 * np.asarray(effective_gap_eV, dtype=float) + 0.0 * np.asarray(intrinsic_level_eV)
        if self.energy_ref == "Ev":
            return np.asarray(self.energy_eV, dtype=float) + 0.0 * np.asarray(effective_gap_eV)
        if self.energy_ref == "Ec":
            return np.asarray(effective_gap_eV, dtype=float) - self.energy_eV
        return np.asarray(intrinsic_level_eV, dtype=float) + self.energy_eV


#: Built-in Si defects (density set per use: ``Defect`` fields via `defect_from_table`).
DEFECTS: dict[str, Defect] = {
    "Fe_i": Defect("Fe_i", 0.38, "Ev", 5e-14, 7e-17, source=_ISTRATOV),
    "FeB": Defect("FeB", 0.26, "Ec", 5e-15, 3e-15, source=_ISTRATOV),
}

_DEFECT_KEYS = _schema.section_keys("recombination.defects.*")    # declared once in optogen.schema


def defect_from_table(table: Mapping, label: str = "recombination.defects.0") -> Defect:
    """A `Defect` from one ``[[recombination.defects]]`` table.

    Keys given override the built-in values.

    Parameters
    ----------
    table : mapping
        Keys: name (a built-in of `DEFECTS`, or a free label), density_cm3 [cm^-3], energy_eV
        [eV], energy_ref, sigma_n_cm2, sigma_p_cm2 [cm^2], tau_n0_s, tau_p0_s [s].
    label : str
        Dotted scenario path for error messages [-].

    Returns
    -------
    Defect
        The level, with `label` set.

    Raises
    ------
    InputError
        For an unknown key, a name that is no built-in without level parameters, or a
        missing density.

    References
    ----------
    Built-in levels: see `DEFECTS` (each carries its source).
    """
    if not isinstance(table, Mapping):
        raise InputError(label, table, "a table of defect keys")
    for k in table:
        registry.choose(f"{label}.{k}", k, _DEFECT_KEYS, exact=True, allowed="one of " + ", ".join(_DEFECT_KEYS))
    name = str(table.get("name", "custom"))
    lib = {registry.normalise(k): v for k, v in DEFECTS.items()}
    base = lib.get(registry.normalise(name))
    given = {k: table[k] for k in _DEFECT_KEYS if k in table and k != "name"}
    if base is None:
        if not ({"tau_n0_s", "tau_p0_s"} & set(given) or {"sigma_n_cm2", "sigma_p_cm2"} & set(given)):
            raise InputError(f"{label}.name", name, "a built-in defect (" + ", ".join(DEFECTS) +
                             ") or a level given by energy_eV + sigma_n_cm2 + sigma_p_cm2 + density_cm3 "
                             "or by tau_n0_s + tau_p0_s", did_you_mean(name, list(DEFECTS)))
        d = Defect(name=name, label=label, **given)
    else:
        if {"tau_n0_s", "tau_p0_s"} & set(given):   # lifetimes replace the library cross-sections
            base = replace(base, sigma_n_cm2=None, sigma_p_cm2=None)
        d = replace(base, label=label, **given)
    if not d.complete:
        raise InputError(f"{label}.density_cm3", None, "a defect density >= 0 cm^-3 for " + name)
    return d


