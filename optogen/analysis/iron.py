"""Interstitial iron in p-type silicon from two lifetime curves: paired (FeB) and dissociated (Fe_i).

In boron-doped Si, iron sits in Fe-B pairs after storage in the dark; light (or a 200 C anneal)
dissociates them into interstitial iron Fe_i.  Both states recombine through their own SRH level,
in proportion to the same iron density N_Fe, so

    1/tau_diss(dn) - 1/tau_pair(dn) = N_Fe [f_Fei(dn) - f_FeB(dn)],
    N_Fe = C(dn) (1/tau_diss - 1/tau_pair),    C(dn) = 1 / (f_Fei(dn) - f_FeB(dn)),

f_X(dn) = U_SRH,X(N_t = 1 cm^-3)/dn the SRH recombination per unit density of level X
(`optogen.recombination.srh_shockley_read_hall1952` with the built-in `DEFECTS["Fe_i"]` and
`DEFECTS["FeB"]`: Fe_i E_v + 0.38 eV, sigma_n 5e-14, sigma_p 7e-17 cm^2; FeB E_c - 0.26 eV,
sigma_n 5e-15, sigma_p 3e-15 cm^2), everything else (intrinsic, surface, other defects) cancelling
in the difference.  G. Zoth and W. Bergholz, J. Appl. Phys. 67, 6764 (1990),
doi:10.1063/1.345063 (the two-state method); D. Macdonald, L. J. Geerligs and A. Azzizi, J. Appl.
Phys. 95, 1021 (2004), doi:10.1063/1.1637136 (its injection dependence and the prefactor C(dn))
(both from memory).  C changes sign at the crossover dn where f_Fei = f_FeB (both curves
cross there); points near it carry no information and are left out.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from optogen.errors import InputError
from optogen.recombination import DEFECTS, srh_shockley_read_hall1952, trap_densities_cm3

from .sample import Sample

#: points where |f_Fei - f_FeB| is below this fraction of its largest value are not used [-]
CROSSOVER_EXCLUSION = 0.2


def srh_per_unit_density(smp: Sample, delta_n_cm3, name: str, shift=0.0):
    """f_X(dn) = U_SRH(N_t = 1 cm^-3)/dn of a built-in defect [cm^3 s^-1].

    name: a key of `optogen.recombination.DEFECTS` ("Fe_i", "FeB"); shift: the narrowing shift
    ln(n_i,eff^2(n, p)/(n0 p0)) at each dn [-].
    """
    d = dataclasses.replace(DEFECTS[name], density_cm3=1.0)
    eq = smp.eq
    tn, tp = d.tau_s(smp.material, smp.temperature_K)
    et = d.level_from_ev_eV(float(eq.effective_gap_eV), float(eq.intrinsic_level_eV))
    n1, p1 = trap_densities_cm3(et, float(eq.effective_gap_eV), float(eq.nc_cm3), float(eq.nv_cm3),
                                smp.temperature_K)
    dn = np.asarray(delta_n_cm3, float)
    return srh_shockley_read_hall1952(smp.n0_cm3, smp.p0_cm3, dn, float(tn), float(tp), n1, p1, shift) / dn


def iron_prefactor_cm3_s(smp: Sample, delta_n_cm3, shift=0.0):
    """C(dn) = 1/(f_Fei - f_FeB) [cm^-3 s] (Macdonald et al. 2004's prefactor; NaN at the crossover)."""
    diff = srh_per_unit_density(smp, delta_n_cm3, "Fe_i", shift) - srh_per_unit_density(smp, delta_n_cm3, "FeB", shift)
    with np.errstate(divide="ignore"):
        return np.where(diff != 0, 1.0 / diff, np.nan)


def crossover_cm3(smp: Sample, low=1e10, high=1e18) -> float:
    """The excess density where Fe_i and FeB recombine alike (the curves cross) [cm^-3] (NaN if none)."""
    dn = np.logspace(np.log10(low), np.log10(high), 4001)
    d = srh_per_unit_density(smp, dn, "Fe_i") - srh_per_unit_density(smp, dn, "FeB")
    k = np.flatnonzero(np.sign(d[1:]) != np.sign(d[:-1]))
    if not k.size:
        return float("nan")
    i = k[0]
    lx = np.log(dn)
    return float(np.exp(lx[i] - d[i] * (lx[i + 1] - lx[i]) / (d[i + 1] - d[i])))


@dataclass(frozen=True, eq=False)
class IronResult:
    """Iron density from the two curves.

    density_cm3, density_std_cm3: N_Fe and its 1-sigma uncertainty [cm^-3];
    delta_n_cm3, density_each_cm3: the per-point values used [cm^-3]; crossover_cm3 [cm^-3].
    """

    density_cm3: float
    density_std_cm3: float
    delta_n_cm3: np.ndarray
    density_each_cm3: np.ndarray
    crossover_cm3: float


def iron_density_zoth_bergholz1990(smp: Sample, delta_n_cm3, tau_paired_s, tau_dissociated_s, shift=0.0,
                                   sigma_rel_paired=None, sigma_rel_dissociated=None) -> IronResult:
    """N_Fe [cm^-3] from lifetimes before (paired, FeB) and after (dissociated, Fe_i) dissociation.

    N_Fe(dn) = C(dn) (1/tau_diss - 1/tau_pair) at each dn (module doc); the result is the weighted
    mean over the points away from the crossover, weights 1/var(N_Fe(dn)).  The variance of each
    point comes from the lifetime uncertainties (given, or, if not, the scatter of the per-point
    values about their mean).

    Parameters
    ----------
    smp : p-type Si sample
    delta_n_cm3 : excess densities where both lifetimes are known (D,) [cm^-3]
    tau_paired_s, tau_dissociated_s : lifetimes in the two states (D,) [s]
    shift : narrowing shift at each dn [-]
    sigma_rel_paired, sigma_rel_dissociated : relative 1-sigma uncertainties (D,) [-] or None
    """
    if smp.material.name != "Si" or smp.kind != "p":
        raise InputError("absorber.acceptors_cm3", smp.acceptors_cm3,
                         "a p-type (boron-doped) silicon wafer for the iron-boron method",
                         f"this sample is {smp.kind}-type {smp.material.name}")
    dn = np.asarray(delta_n_cm3, float)
    tp, td = np.asarray(tau_paired_s, float), np.asarray(tau_dissociated_s, float)
    C = iron_prefactor_cm3_s(smp, dn, shift)
    diff = 1.0 / td - 1.0 / tp
    each = C * diff
    fdiff = np.abs(1.0 / C)
    use = np.isfinite(each) & (fdiff >= CROSSOVER_EXCLUSION * np.nanmax(fdiff))
    if use.sum() < 2:
        raise InputError("measurement.dissociated_file", int(use.sum()),
                         "at least 2 excess densities away from the crossover of the two curves")
    if sigma_rel_paired is not None and sigma_rel_dissociated is not None:
        var = C**2 * ((np.asarray(sigma_rel_dissociated) / td) ** 2 + (np.asarray(sigma_rel_paired) / tp) ** 2)
        w = 1.0 / var[use]
        mean = float(np.sum(w * each[use]) / np.sum(w))
        std = float(np.sqrt(1.0 / np.sum(w)))
    else:
        mean = float(np.mean(each[use]))
        std = float(np.std(each[use], ddof=1) / np.sqrt(use.sum()))
    return IronResult(mean, std, dn[use], each[use], crossover_cm3(smp))
