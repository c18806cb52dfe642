"""Dark equilibrium from charge neutrality -> n0, p0, n_i, n_i,eff, E_F (`equilibrium`).

Energies are measured upward from the valence band edge Ev [eV]; the
conduction band edge is Ec = Ev + effective_gap_eV, where the effective gap is
the gap that makes the Boltzmann statistics reproduce the chosen n_i model and
band-gap narrowing exactly:  Nc Nv exp(-Eg_eff / kT) = n_i,eff^2.

Very small numbers.  Every density is carried as its natural logarithm inside
the solver, so nothing underflows from 4 K to 1000 K.  The returned linear
densities are exp(ln value): a density reads 0.0 only where its true value is
below the smallest float (about 5e-324 cm^-3, e.g. n_i of Si below about 9 K,
the minority density of doped Si below about 17 K); its exact logarithm is
always available in the ``ln_*_cm3`` fields of `Equilibrium` and from
`ln_ni_cm3`.  No NaN, inf or warning is produced for finite inputs.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import kT_eV
from ..errors import InputError, check_range
from ..materials import Material
from .bgn import STATISTICS, pick_bgn_model
from .fermi_dirac import inverse_log_fermi_dirac_half, log_fermi_dirac_pair
from .intrinsic_density import _check_T, pick_ni_model
from .ionisation import dopant_species, full_ionisation_cm3, ionisation_altermatt2006

__all__ = ["Equilibrium", "equilibrium"]


@dataclass(frozen=True)
class Equilibrium:
    """Dark equilibrium of an absorber; all array fields broadcast together.

    Energies are measured from the valence band edge Ev [eV]; Ec = Ev + effective_gap_eV.
    ``ln_*_cm3`` fields are natural logs of densities [ln cm^-3] (finite where the linear
    value underflows to 0.0, e.g. n_i of Si at 4 K).

    Parameters
    ----------
    temperature_K : ndarray
        Temperature [K].
    donors_cm3, acceptors_cm3 : ndarray
        Donor and acceptor densities N_D, N_A [cm^-3].
    n0_cm3, p0_cm3 : ndarray
        Dark electron and hole densities [cm^-3].
    ni_cm3 : ndarray
        Intrinsic density n_i of the n_i model [cm^-3].
    ni_eff_cm3 : ndarray
        Effective intrinsic density n_i,eff = n_i exp(bgn / 2kT) [cm^-3].
    bgn_eV : ndarray
        Band-gap narrowing dEg [eV].
    bandgap_eV : ndarray
        Eg(T) without narrowing [eV].
    effective_gap_eV : ndarray
        The gap of the statistics, Nc Nv exp(-Eg_eff/kT) = ni_eff^2 [eV].
    nc_cm3, nv_cm3 : ndarray
        Effective densities of states of the conduction and valence bands [cm^-3].
    fermi_level_eV : ndarray
        E_F - Ev [eV].
    intrinsic_level_eV : ndarray
        E_i - Ev = Eg_eff/2 + (kT/2) ln(Nv/Nc) [eV].
    ionised_donors_cm3, ionised_acceptors_cm3 : ndarray
        N_D^+ and N_A^- [cm^-3].
    ln_n0_cm3, ln_p0_cm3 : ndarray
        ln n0 and ln p0 [ln cm^-3].
    ln_ni_cm3, ln_ni_eff_cm3 : ndarray
        ln n_i and ln n_i,eff [ln cm^-3].
    material : str
        Name of the material used.
    ni_model : str
        Name of the n_i model used.
    bgn_model : str
        Name of the band-gap narrowing model used.
    donor, acceptor : str or None
        Names of the dopant species used (None: none of that kind).
    statistics : {"fermi_dirac", "boltzmann"}
        The carrier statistics of the narrowing model (`STATISTICS`).
    """

    temperature_K: np.ndarray
    donors_cm3: np.ndarray
    acceptors_cm3: np.ndarray
    n0_cm3: np.ndarray
    p0_cm3: np.ndarray
    ni_cm3: np.ndarray
    ni_eff_cm3: np.ndarray
    bgn_eV: np.ndarray
    bandgap_eV: np.ndarray
    effective_gap_eV: np.ndarray
    nc_cm3: np.ndarray
    nv_cm3: np.ndarray
    fermi_level_eV: np.ndarray
    intrinsic_level_eV: np.ndarray
    ionised_donors_cm3: np.ndarray
    ionised_acceptors_cm3: np.ndarray
    ln_n0_cm3: np.ndarray
    ln_p0_cm3: np.ndarray
    ln_ni_cm3: np.ndarray
    ln_ni_eff_cm3: np.ndarray
    material: str = ""
    ni_model: str = ""
    bgn_model: str = ""
    donor: str | None = None
    acceptor: str | None = None
    statistics: str = "fermi_dirac"

    _DICT_KEYS = ("n0_cm3", "p0_cm3", "ni_cm3", "ni_eff_cm3", "fermi_level_eV", "bandgap_eV",
                  "ionised_donors_cm3", "ionised_acceptors_cm3")

    def to_dict(self) -> dict:
        """The DESIGN.md ``equilibrium`` block: python floats when scalar, nested lists otherwise.

        Returns
        -------
        dict
            n0_cm3, p0_cm3, ni_cm3, ni_eff_cm3, ionised_donors_cm3, ionised_acceptors_cm3
            [cm^-3], fermi_level_eV, bandgap_eV [eV].
        """
        out = {}
        for k in self._DICT_KEYS:
            v = np.asarray(getattr(self, k))
            out[k] = float(v) if v.ndim == 0 else v.tolist()
        return out


def _log_occupancy(eta, boltzmann: bool = False):
    """ln F_1/2(eta) and ln F_-1/2(eta) [-]; both are eta itself with Boltzmann statistics."""
    if boltzmann:
        eta = np.asarray(eta, dtype=float)
        return eta, eta
    return log_fermi_dirac_pair(eta)


def _neutrality(E, kT, eg, lnc, lnv, lnd, lna, ed, ea, lgd, lga, lbd, lbd1, lba, lba1, boltzmann=False):
    """f = ln(p0 + N_D^+) - ln(n0 + N_A^-) and df/dE_F [eV^-1] at Fermi level E [eV]; plus the logs.

    boltzmann: carriers with Boltzmann instead of Fermi-Dirac statistics (see `STATISTICS`).
    """
    lfc, lfmc = _log_occupancy((E - eg) / kT, boltzmann)
    lfv, lfmv = _log_occupancy(-E / kT, boltzmann)
    ln_n, ln_p = lnc + lfc, lnv + lfv
    x = (E - ed) / kT + lgd                 # donor level occupied by an electron: expit(x)
    y = (ea - E) / kT + lga                 # acceptor level occupied by a hole: expit(y)
    ln_ndp = lnd + np.logaddexp(lbd1, -x) - np.logaddexp(0.0, -x)
    ln_nam = lna + np.logaddexp(lba1, -y) - np.logaddexp(0.0, -y)
    lP = np.logaddexp(ln_p, ln_ndp)
    lQ = np.logaddexp(ln_n, ln_nam)
    # derivatives: d N_D^+/dE = -N_D b s(1-s)/kT, d N_A^-/dE = +N_A b s(1-s)/kT
    ln_dd = lnd + lbd - np.logaddexp(0.0, -x) - np.logaddexp(0.0, x)
    ln_da = lna + lba - np.logaddexp(0.0, -y) - np.logaddexp(0.0, y)
    dP = -(np.exp(ln_p - lP + lfmv - lfv) + np.exp(ln_dd - lP)) / kT
    dQ = (np.exp(ln_n - lQ + lfmc - lfc) + np.exp(ln_da - lQ)) / kT
    return lP - lQ, dP - dQ, ln_n, ln_p, ln_ndp, ln_nam


def _solve_fermi(guess, kT, eg, lnc, lnv, lnd, lna, ed, ea, lgd, lga, lbd, lbd1, lba, lba1, tol=1e-13,
                 boltzmann=False):
    """Safeguarded Newton (bisection fallback) for the Fermi level [eV], all points at once.

    guess: starting Fermi level [eV] (used where it lies inside the bracket)
    boltzmann: Boltzmann carrier statistics (the bracket below also holds for them,
        since e^eta >= F_1/2(eta))
    """
    args = (kT, eg, lnc, lnv, lnd, lna, ed, ea, lgd, lga, lbd, lbd1, lba, lba1)
    ei = 0.5 * eg + 0.5 * kT * (lnv - lnc)
    # at hi: n0 >= 2 N_D and n0 >> p0 -> f < 0; at lo the mirror image -> f > 0
    hi = np.maximum(ei + 2 * kT, eg + kT * inverse_log_fermi_dirac_half(np.log(2.0) + lnd - lnc))
    lo = np.minimum(ei - 2 * kT, -kT * inverse_log_fermi_dirac_half(np.log(2.0) + lna - lnv))
    for _ in range(200):                      # widen until the bracket holds (rarely needed)
        f_hi = _neutrality(hi, *args, boltzmann=boltzmann)[0]
        f_lo = _neutrality(lo, *args, boltzmann=boltzmann)[0]
        bad_hi, bad_lo = f_hi > 0, f_lo < 0
        if not (bad_hi.any() or bad_lo.any()):
            break
        width = hi - lo
        hi = np.where(bad_hi, hi + width, hi)
        lo = np.where(bad_lo, lo - width, lo)
    E = np.where((guess > lo) & (guess < hi), guess, 0.5 * (lo + hi))
    active = np.ones(E.shape, dtype=bool)
    for _ in range(300):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        sub = tuple(a[idx] for a in args)
        e = E[idx]
        f, df = _neutrality(e, *sub, boltzmann=boltzmann)[:2]
        done = np.abs(f) <= tol
        l, h = lo[idx], hi[idx]
        l = np.where(f > 0, e, l)
        h = np.where(f < 0, e, h)
        lo[idx], hi[idx] = l, h
        usable = (df < 0) & (np.abs(f) < -df * 1e3)    # a step under 1 keV; else bisect
        newton = e - np.divide(f, df, out=np.full_like(f, np.inf), where=usable)
        ok = np.isfinite(newton) & (newton >= l) & (newton <= h)
        nxt = np.where(ok, newton, 0.5 * (l + h))
        ulp = np.spacing(np.maximum(np.abs(l), np.abs(h)))
        # below tol or at the resolution of E itself (at 4 K one ulp of E is ~1e-12 kT)
        stuck = ((h - l) <= 4 * ulp) | (ok & (np.abs(newton - e) <= 2 * ulp))
        E[idx] = np.where(done, e, nxt)
        active[idx] = ~(done | stuck)
    return E, _neutrality(E, *args, boltzmann=boltzmann)


def equilibrium(material: Material, T_K, donors_cm3=0.0, acceptors_cm3=0.0, *,
                donor=None, acceptor=None, ni_model: str | None = None, bgn_model: str | None = None,
                incomplete_ionisation: bool = True) -> Equilibrium:
    """Dark equilibrium from charge neutrality n0 + N_A^- = p0 + N_D^+.

    Carriers: Fermi-Dirac statistics n0 = Nc F_1/2((E_F - Ec)/kT), p0 = Nv F_1/2((Ev - E_F)/kT),
    with Ec - Ev = Eg_eff and Nc Nv exp(-Eg_eff/kT) = n_i,eff^2, n_i,eff = n_i exp(dEg/2kT)
    for the chosen n_i and band-gap narrowing models (so n0 p0 = n_i,eff^2 whenever both are
    non-degenerate).  With an apparent narrowing (klaassen1992, defined through Boltzmann
    statistics) the carriers follow Boltzmann statistics instead, n0 = Nc exp((E_F - Ec)/kT),
    so that n0 p0 = n_i,eff^2 holds exactly, as in the model's definition (`STATISTICS`).
    Dopants: `ionisation_altermatt2006` with each species' ionisation and degeneracy factor (incomplete_ionisation=False: all ionised).  A material
    without a listed species of the needed kind is taken as fully ionised.
    Carrier-dependent narrowing (schenk1998) is iterated to self-consistency with n0, p0.
    The neutrality equation is solved in log form, ln(p0 + N_D^+) = ln(n0 + N_A^-), to
    |residual| <= 1e-13, all points at once, from 4 K (freeze-out) to 1000 K (intrinsic).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].
    donor, acceptor : str, optional
        Species names (default: the material's first listed donor / acceptor) [-].
    ni_model : str, optional
        A registered "ni" model (default: the material's) [-].
    bgn_model : str, optional
        A registered "bgn" model (default: the material's) [-].
    incomplete_ionisation : bool
        Dopant ionisation from `ionisation_altermatt2006` (False: all ionised) [-].

    Returns
    -------
    Equilibrium
        Densities [cm^-3] and energies [eV] above Ev, shaped like the broadcast inputs.

    Raises
    ------
    InputError
        For a temperature or density out of range, an unknown model or species, or a
        temperature at which the material's band gap has closed.

    References
    ----------
    The chosen n_i and narrowing models' (`optogen.registry`); P. P. Altermatt et al.,
    J. Appl. Phys. 100, 113714 and 113715 (2006), doi:10.1063/1.2386934 and
    doi:10.1063/1.2386935, for the ionisation.
    """
    T = _check_T(T_K)
    nd = np.asarray(check_range("absorber.donors_cm3", donors_cm3, 0.0, None, unit="cm^-3"))
    na = np.asarray(check_range("absorber.acceptors_cm3", acceptors_cm3, 0.0, None, unit="cm^-3"))
    T, nd, na = np.broadcast_arrays(T, nd, na)
    shape = T.shape
    T, nd, na = (np.ravel(a).astype(float) for a in (T, nd, na))

    ni = pick_ni_model(material, ni_model)
    bgn = pick_bgn_model(material, bgn_model)
    ni_name, bgn_name, bgn_fn = ni.name, bgn.name, bgn.call
    don = dopant_species(material, donor, "donor")
    acc = dopant_species(material, acceptor, "acceptor")
    stats = STATISTICS[bgn_name]

    kT = kT_eV(T)
    eg = material.bandgap_eV(T)
    lnc, lnv = np.log(material.nc_cm3(T)), np.log(material.nv_cm3(T))
    ln_ni = ni.call(material, T)
    if np.any(~(eg > 0)):                     # e.g. InSb above ~810 K: the gap of the model has closed
        i = int(np.flatnonzero(~(eg > 0))[0])
        raise InputError("absorber.temperature_K", float(T[i]),
                         f"a temperature at which {material.name} has a band gap (Eg({T[i]:g} K) = "
                         f"{float(eg[i]):.4g} eV from its band-gap model)",
                         "at this temperature the model describes a semimetal, not a semiconductor")
    with np.errstate(divide="ignore"):
        lnd, lna = np.log(nd), np.log(na)
    zero = np.zeros_like(T)
    minus_inf = np.full_like(T, -np.inf)

    def levels(sp, N):
        if sp is None or not incomplete_ionisation:
            return zero, zero, minus_inf, zero                # energy, ln g, ln b = -inf (b = 0), ln(1 - b)
        e, lb, lb1 = ionisation_altermatt2006(material, sp, N)
        return e, np.full_like(T, np.log(sp.degeneracy)), lb, lb1

    ed0, lgd, lbd, lbd1 = levels(don, nd)
    ea, lga, lba, lba1 = levels(acc, na)

    n_guess, p_guess = full_ionisation_cm3(nd, na, ln_ni)
    dEg = np.array(bgn_fn(material, T, nd, na, n_guess, p_guess), dtype=float)
    with np.errstate(divide="ignore"):
        E = kT * (lnv - np.log(p_guess))       # non-degenerate start; replaced by the bracket midpoint if off
    per_point = (kT, lnc, lnv, lnd, lna, ed0, ea, lgd, lga, lbd, lbd1, lba, lba1)
    ln_n, ln_p, ln_ndp, ln_nam = (np.empty_like(T) for _ in range(4))
    idx = np.arange(T.size)                   # points still being solved
    for it in range(50):
        k, c, v, d, a, e0, e_a, gd, ga, bd, bd1, ba, ba1 = (x[idx] for x in per_point)
        gap = k * (c + v) - 2.0 * k * ln_ni[idx] - dEg[idx]           # Eg_eff of these points
        E[idx], (_, _, ln_n[idx], ln_p[idx], ln_ndp[idx], ln_nam[idx]) = _solve_fermi(
            E[idx], k, gap, c, v, d, a, gap - e0, e_a, gd, ga, bd, bd1, ba, ba1,
            boltzmann=stats == "boltzmann")
        if not bgn.injection or it == 49:
            break
        # carrier-dependent narrowing: iterate to self-consistency, only where it still moves
        new = bgn_fn(material, T[idx], nd[idx], na[idx], np.exp(ln_n[idx]), np.exp(ln_p[idx]))
        moved = np.abs(new - dEg[idx]) > 1e-12
        dEg[idx[moved]] = new[moved]
        idx = idx[moved]
        if idx.size == 0:
            break
    ln_ni_eff = ln_ni + dEg / (2.0 * kT)
    eg_eff = kT * (lnc + lnv) - 2.0 * kT * ln_ni - dEg

    def out(a):
        return np.reshape(a, shape)

    return Equilibrium(
        temperature_K=out(T), donors_cm3=out(nd), acceptors_cm3=out(na),
        n0_cm3=out(np.exp(ln_n)), p0_cm3=out(np.exp(ln_p)),
        ni_cm3=out(np.exp(ln_ni)), ni_eff_cm3=out(np.exp(ln_ni_eff)), bgn_eV=out(dEg),
        bandgap_eV=out(eg), effective_gap_eV=out(eg_eff),
        nc_cm3=out(np.exp(lnc)), nv_cm3=out(np.exp(lnv)),
        fermi_level_eV=out(E), intrinsic_level_eV=out(0.5 * eg_eff + 0.5 * kT * (lnv - lnc)),
        ionised_donors_cm3=out(np.exp(ln_ndp)), ionised_acceptors_cm3=out(np.exp(ln_nam)),
        ln_n0_cm3=out(ln_n), ln_p0_cm3=out(ln_p), ln_ni_cm3=out(ln_ni), ln_ni_eff_cm3=out(ln_ni_eff),
        material=material.name, ni_model=ni_name, bgn_model=bgn_name,
        donor=None if don is None else don.name, acceptor=None if acc is None else acc.name,
        statistics=stats,
    )

