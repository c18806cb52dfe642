"""The recombination of an absorber: `Recombination` (parameters, from a scenario table) and
`PreparedRates` (flat per-point constants; `rates(dn)` is the solver's hot path).

Every rate is a vectorised numpy function of the dark densities n0, p0 and the excess
density Delta n (Delta p = Delta n: uniform, no trapping), returning a net rate U
[cm^-3 s^-1] that is zero in the dark; its lifetime is Delta n / U.

Scenario table ``[recombination]`` (see `Recombination.from_table`)::

    intrinsic = "richter2012"         # Auger + radiative parametrisation
    bandgap_narrowing = "schenk1998"  # band-gap narrowing model (injection-dependent)
    front_J0_fA_cm2 = 5               # or front_S_cm_s
    rear_J0_fA_cm2 = 5                # or rear_S_cm_s
    photon_recycling = 0.0            # fraction of radiative events re-absorbed [-]
    B_rel = 1.0                       # relative radiative coefficient [-]
    [[recombination.defects]]
    name = "Fe_i"                     # built-in, or energy_eV + sigma_n_cm2 + sigma_p_cm2,
    density_cm3 = 1e11                # or tau_n0_s + tau_p0_s (+ energy_eV)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from .. import registry
from .. import schema as _schema
from ..constants import kT_eV, q_C
from ..equilibrium import bgn_eV
from ..errors import InputError, check_range
from .intrinsic import auger_from_coefficients
from .product import excess_product_cm6
from .srh import Defect, _srh_rates, defect_from_table, trap_densities_cm3
from .surface import j0_at_temperature_fA_cm2, surface_j0

__all__ = ["MECHANISMS", "Recombination", "PreparedRates"]

MECHANISMS = ("srh", "radiative", "auger", "surface")

# ---------------------------------------------------------------------------
# Gathering parameters: Recombination -> PreparedRates (flat per-point constants)
# ---------------------------------------------------------------------------

_TABLE_KEYS = _schema.section_keys("recombination")               # declared once in optogen.schema

#: band-gap narrowing models (names and aliases) whose narrowing depends on the carrier densities
#: (a view of the registry's ``injection`` flag)
INJECTION_BGN_MODELS = tuple(a for m in registry.models("bgn", load=False) if m.injection for a in (m.name, *m.aliases))


@dataclass(frozen=True, eq=False)
class Recombination:
    """The recombination mechanisms of an absorber (parameters only; rates come from `rates`).

    Parameters
    ----------
    intrinsic : str or None, optional
        Auger + radiative model, a registered "intrinsic" model (aliases accepted);
        None: "richter2012" for Si, "constant" (material Cn, Cp, B) otherwise.
    bgn_model : str or None, optional
        Band-gap narrowing model name for the equilibrium and, if injection-dependent
        (Schenk 1998), for n_i,eff(n, p) inside the rates; None: the equilibrium's.
    defects : tuple of Defect, optional
        SRH levels.
    front_J0_fA_cm2 : float or None, optional
        Front-surface saturation current density [fA cm^-2]; at most one of it and
        front_S_cm_s (neither: no front-surface recombination).
    front_S_cm_s : float or None, optional
        Front-surface recombination velocity [cm s^-1].
    rear_J0_fA_cm2 : float or None, optional
        Rear-surface saturation current density [fA cm^-2]; at most one of it and
        rear_S_cm_s (neither: no rear-surface recombination).
    rear_S_cm_s : float or None, optional
        Rear-surface recombination velocity [cm s^-1].
    photon_recycling : float, optional
        Fraction f_PR of radiative events re-absorbed, in [0, 1) [-].
    B_rel : float, optional
        Relative radiative coefficient applied to B (1: none, documented default;
        an injection/doping-dependent B_rel is not modelled) [-].
    injection_bgn : bool or None, optional
        Recompute n_i,eff(n, p) inside the rates; None: when bgn_model is Schenk 1998.
    J0_reference_K : float or None, optional
        Temperature at which the J0 values are quoted [K]; at another temperature
        J0 scales as n_i^2(T) / n_i^2(J0_reference_K), n_i^2 = Nc Nv exp(-Eg/kT) of the material
        (a surface J0 is proportional to n_i^2; common practice).  None (false in a scenario):
        J0 as given at every T.

    Raises
    ------
    InputError
        For an unknown intrinsic model, both J0 and S on one surface, or a value out of range.

    References
    ----------
    A. Richter, S. W. Glunz, F. Werner, J. Schmidt and A. Cuevas, Phys. Rev. B 86, 165202 (2012),
    doi:10.1103/PhysRevB.86.165202 (the default intrinsic model of Si);
    A. Schenk, J. Appl. Phys. 84, 3684 (1998), doi:10.1063/1.368545 (injection-dependent narrowing);
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (the J0 law, from memory).
    """

    intrinsic: str | None = None
    bgn_model: str | None = None
    defects: tuple[Defect, ...] = ()
    front_J0_fA_cm2: float | None = None
    front_S_cm_s: float | None = None
    rear_J0_fA_cm2: float | None = None
    rear_S_cm_s: float | None = None
    photon_recycling: float = 0.0
    B_rel: float = 1.0
    injection_bgn: bool | None = None
    J0_reference_K: float | None = 298.15

    def __post_init__(self):
        object.__setattr__(self, "defects", tuple(self.defects))
        if self.intrinsic is not None:
            registry.pick("intrinsic", self.intrinsic, "recombination.intrinsic")
        for side in ("front", "rear"):
            j0, s = getattr(self, f"{side}_J0_fA_cm2"), getattr(self, f"{side}_S_cm_s")
            if j0 is not None and s is not None:
                raise InputError(f"recombination.{side}_S_cm_s", s,
                                 f"only one of {side}_J0_fA_cm2 and {side}_S_cm_s per surface")
            if j0 is not None:
                check_range(f"recombination.{side}_J0_fA_cm2", j0, 0.0, None, unit="fA cm^-2")
            if s is not None:
                check_range(f"recombination.{side}_S_cm_s", s, 0.0, None, unit="cm s^-1")
        check_range("recombination.photon_recycling", self.photon_recycling, 0.0, 1.0, high_open=True)
        check_range("recombination.B_rel", self.B_rel, 0.0, None)
        if self.J0_reference_K is False:        # a scenario's `J0_reference_K = false`: J0 fixed at every T
            object.__setattr__(self, "J0_reference_K", None)
        if self.J0_reference_K is not None:
            check_range("recombination.J0_reference_K", self.J0_reference_K, 0.0, None, low_open=True, unit="K")
        for i, d in enumerate(self.defects):
            if not isinstance(d, Defect):
                raise InputError(f"recombination.defects.{i}", d, "a Defect")

    @classmethod
    def from_table(cls, table: Mapping | None) -> "Recombination":
        """Build from a scenario's ``[recombination]`` table (unknown keys are errors).

        Parameters
        ----------
        table : Mapping or None
            The ``[recombination]`` table (``bandgap_narrowing`` names `bgn_model`;
            ``defects`` a table or a list of tables, see `srh.defect_from_table`); None or
            empty for the defaults.

        Returns
        -------
        Recombination
            The recombination settings.

        Raises
        ------
        InputError
            For an unknown key or a bad value, naming its dotted ``recombination.*`` field.
        """
        table = dict(table or {})
        for k in table:
            registry.choose(f"recombination.{k}", k, _TABLE_KEYS, exact=True, allowed="one of " + ", ".join(_TABLE_KEYS))
        defects = table.pop("defects", [])
        if isinstance(defects, Mapping):
            defects = [defects]
        kw = {k: table[k] for k in table}
        if "bandgap_narrowing" in kw:
            kw["bgn_model"] = kw.pop("bandgap_narrowing")
        return cls(defects=tuple(defect_from_table(t, f"recombination.defects.{i}") for i, t in enumerate(defects)),
                   **kw)

    def intrinsic_model(self, material) -> str:
        """Canonical name of the intrinsic model used for `material`.

        Parameters
        ----------
        material : materials.Material
            The absorber.

        Returns
        -------
        str
            The registered name ("richter2012" wherever it applies when none is set, else
            "constant").

        Raises
        ------
        InputError
            When the chosen model does not apply to the material.
        """
        if self.intrinsic is None:     # Richter 2012 wherever it applies (silicon), else the record's constants
            return "richter2012" if registry.applies(registry.get("intrinsic", "richter2012"), material) else "constant"
        m = registry.pick("intrinsic", self.intrinsic, "recombination.intrinsic")
        return registry.check_material(m, material, "recombination.intrinsic", self.intrinsic).name

    def bgn_model_for(self, eq) -> str | None:
        """The band-gap narrowing model name used inside the rates.

        Parameters
        ----------
        eq : Equilibrium
            The equilibrium (its ``bgn_model`` when this object sets none).

        Returns
        -------
        str or None
            The model name; None for no narrowing.
        """
        return self.bgn_model if self.bgn_model is not None else getattr(eq, "bgn_model", None)

    def uses_injection_bgn(self, eq) -> bool:
        """True when n_i,eff is recomputed from n and p inside the rates.

        Parameters
        ----------
        eq : Equilibrium
            The equilibrium (for its narrowing model).

        Returns
        -------
        bool
            `injection_bgn` when set, else whether the narrowing model is injection-dependent.
        """
        if self.injection_bgn is not None:
            return bool(self.injection_bgn)
        m = self.bgn_model_for(eq)
        return m is not None and registry.pick("bgn", m, "recombination.bandgap_narrowing").injection

    def prepare(self, material, eq, thickness_cm, shape=None, index=None) -> "PreparedRates":
        """Per-point constants of every mechanism, flattened.

        Parameters
        ----------
        material : materials.Material
            The absorber.
        eq : Equilibrium
            The dark state (fields broadcast together).
        thickness_cm : float or array_like
            Absorber thickness W [cm].
        shape : tuple of int or None, optional
            The operating-point shape to broadcast to (default: the equilibrium's broadcast
            with thickness).
        index : array_like of int or None, optional
            Flat indices into `shape` to gather (default: all) [-].

        Returns
        -------
        PreparedRates
            Flat per-point constants for the solver's hot path.
        """
        return PreparedRates(self, material, eq, thickness_cm, shape, index)

    def j0_at_fA_cm2(self, material, T_K, side: str):
        """J0 of the "front" or "rear" surface at temperature T_K (None if given as S).

        Scaled by n_i^2(T) / n_i^2(J0_reference_K) (`j0_at_temperature_fA_cm2`), as in the rates.

        Parameters
        ----------
        material : materials.Material
            The absorber (its n_i^2 sets the temperature scaling).
        T_K : float or array_like
            Temperature [K].
        side : {"front", "rear"}
            The surface.

        Returns
        -------
        float or numpy.ndarray or None
            J0 at T_K [fA cm^-2]; as given when J0_reference_K is None; None when the surface
            is given as S (or not at all).
        """
        j0 = getattr(self, f"{side}_J0_fA_cm2")
        if j0 is None or self.J0_reference_K is None:
            return j0
        return j0_at_temperature_fA_cm2(j0, material, T_K, self.J0_reference_K)

    def rates(self, material, eq, delta_n_cm3, thickness_cm) -> dict:
        """Rates of every mechanism at excess density delta_n_cm3.

        Parameters
        ----------
        material : materials.Material
            The absorber.
        eq : Equilibrium
            The dark state.
        delta_n_cm3 : float or array_like
            Excess carrier density Delta n = Delta p >= 0 [cm^-3].
        thickness_cm : float or array_like
            Absorber thickness W [cm].

        Returns
        -------
        dict[str, numpy.ndarray]
            Net rates U of srh, radiative, auger and surface (the surface loss per volume)
            [cm^-3 s^-1], broadcast over eq, delta_n_cm3 and thickness_cm.
        """
        dn = np.asarray(delta_n_cm3, dtype=float)
        check_range("delta_n_cm3", dn, 0.0, None, unit="cm^-3")
        shape = np.broadcast_shapes(_eq_shape(eq), dn.shape, np.shape(thickness_cm))
        prep = self.prepare(material, eq, thickness_cm, shape)
        r = prep.rates(np.broadcast_to(dn, shape).reshape(-1))
        return {k: v.reshape(shape) for k, v in zip(MECHANISMS, r)}



_EQ_FIELDS = ("temperature_K", "donors_cm3", "acceptors_cm3", "n0_cm3", "p0_cm3", "nc_cm3", "nv_cm3",
              "effective_gap_eV", "intrinsic_level_eV", "fermi_level_eV")



def _eq_shape(eq):
    return np.broadcast_shapes(*(np.shape(getattr(eq, f)) for f in _EQ_FIELDS))


def _gather(a, shape, index):
    """Elements of `a` broadcast to `shape` at flat `index` (None: all), as a 1-D float array."""
    a = np.asarray(a, dtype=float)
    if index is None:
        return np.broadcast_to(a, shape).reshape(-1).copy()
    if a.ndim == 0:
        return np.full(len(index), float(a))
    b = np.broadcast_to(a, shape)
    return b[np.unravel_index(index, shape)]


class PreparedRates:
    """Per-point constants of all mechanisms for a flat set of P operating points.

    Built by `Recombination.prepare`; `rates(dn)` is the hot path of the solver and
    touches only these arrays.  `take(idx)` gives the subset at positions idx.

    Parameters
    ----------
    rec : Recombination or None
        The recombination settings; None makes an empty object (used by `take`).
    material : materials.Material
        The absorber.
    eq : Equilibrium
        The dark state (fields broadcast together).
    thickness_cm : float or array_like
        Absorber thickness W [cm].
    shape : tuple of int or None, optional
        The operating-point shape to broadcast to (default: the equilibrium's broadcast
        with thickness).
    index : array_like of int or None, optional
        Flat indices into `shape` to gather (default: all) [-].

    Raises
    ------
    InputError
        For a defect level outside the gap, a J0 surface where n_i,eff^2 underflows, or no
        mechanism at all.
    """

    _ARRAYS = ("T", "kT", "ef", "nd", "na", "n0", "p0", "log_n0", "log_p0", "nc", "nv", "eg", "bgn0",
               "srh_a", "srh_b", "n1", "p1", "aug_A", "aug_C", "rad_B", "s_j0", "s_W", "s_s")

    def __init__(self, rec: Recombination, material, eq, thickness_cm, shape=None, index=None):
        if rec is None:
            return
        self.material = material
        self.recombination = rec
        shape = tuple(shape) if shape is not None else np.broadcast_shapes(_eq_shape(eq), np.shape(thickness_cm))
        self.shape = shape
        W = _gather(check_range("absorber.thickness_um", thickness_cm, 0.0, None, low_open=True), shape, index)
        g = {f: _gather(getattr(eq, f), shape, index) for f in _EQ_FIELDS}
        self.T, self.nd, self.na = g["temperature_K"], g["donors_cm3"], g["acceptors_cm3"]
        self.kT = kT_eV(self.T)
        self.nc, self.nv, self.eg = g["nc_cm3"], g["nv_cm3"], g["effective_gap_eV"]
        self.ef = g["fermi_level_eV"]
        log_ni2 = np.log(self.nc) + np.log(self.nv) - self.eg / self.kT
        n0, p0 = g["n0_cm3"], g["p0_cm3"]
        with np.errstate(divide="ignore"):
            ln0, lp0 = (_gather(getattr(eq, f"ln_{k}0_cm3"), shape, index) if hasattr(eq, f"ln_{k}0_cm3")
                        else np.log(g[f"{k}0_cm3"]) for k in "np")
        # a minority density below the float range: its log from the mass-action law
        self.log_n0 = np.where(n0 > 0, ln0, log_ni2 - lp0)
        self.log_p0 = np.where(p0 > 0, lp0, log_ni2 - ln0)
        self.n0, self.p0 = n0, p0
        # SRH levels, shape (P, K)
        taus_n, taus_p, n1s, p1s = [], [], [], []
        for i, d in enumerate(rec.defects):
            tn, tp = d.tau_s(material, self.T)
            et = d.level_from_ev_eV(self.eg, g["intrinsic_level_eV"])
            if np.any((et <= 0) | (et >= self.eg)):
                bad = et[(et <= 0) | (et >= self.eg)][0]
                raise InputError(f"{d.label or 'defect ' + d.name}.energy_eV", d.energy_eV,
                                 f"a level inside the gap (0 < Et - Ev < {float(np.min(self.eg)):.4g} eV); "
                                 f"this gives Et - Ev = {bad:.4g} eV", f"energy_ref is {d.energy_ref}")
            n1, p1 = trap_densities_cm3(et, self.eg, self.nc, self.nv, self.T)
            taus_n.append(np.broadcast_to(tn, self.T.shape))
            taus_p.append(np.broadcast_to(tp, self.T.shape))
            n1s.append(n1)
            p1s.append(p1)
        P = self.T.shape[0]
        with np.errstate(divide="ignore"):
            self.srh_a = 1.0 / np.stack(taus_n, axis=-1) if taus_n else np.zeros((P, 0))
            self.srh_b = 1.0 / np.stack(taus_p, axis=-1) if taus_p else np.zeros((P, 0))
        self.n1 = np.stack(n1s, axis=-1) if n1s else np.zeros((P, 0))
        self.p1 = np.stack(p1s, axis=-1) if p1s else np.zeros((P, 0))
        # intrinsic
        self.intrinsic = rec.intrinsic_model(material)
        A, C, e, B = registry.get("intrinsic", self.intrinsic).call(material, n0, p0, self.T)
        self.aug_A = np.broadcast_to(A, (P,)).astype(float)
        self.aug_C, self.aug_e = np.broadcast_to(C, (P,)).astype(float), float(e)
        self.rad_B = (np.broadcast_to(B, (P,)) * _gather(rec.B_rel, shape, index)
                      * (1.0 - _gather(rec.photon_recycling, shape, index)))
        # surfaces
        j0 = sum(_gather(v, shape, index) for v in (rec.front_J0_fA_cm2, rec.rear_J0_fA_cm2) if v is not None)
        s = sum(_gather(v, shape, index) for v in (rec.front_S_cm_s, rec.rear_S_cm_s) if v is not None)
        # s_j0: the summed J0 of both surfaces carried to T [fA/cm^2]; s_W: W [cm]
        self.s_j0 = np.zeros(P) + j0
        if rec.J0_reference_K is not None and np.any(self.s_j0):
            self.s_j0 = j0_at_temperature_fA_cm2(self.s_j0, material, self.T, rec.J0_reference_K)
        self.s_W = W + np.zeros(P)
        self.s_s = np.zeros(P) + s / W
        if np.any((self.s_j0 > 0) & (n0 * p0 <= 0)):
            raise InputError("recombination.front_J0_fA_cm2" if rec.front_J0_fA_cm2 is not None
                             else "recombination.rear_J0_fA_cm2", "J0",
                             "a J0 surface needs n_i,eff^2 above the float range (T too low here)",
                             "give the surface as front_S_cm_s / rear_S_cm_s")
        if not (np.any(self.srh_a) or np.any(self.aug_A) or np.any(self.aug_C) or np.any(self.rad_B)
                or np.any(self.s_j0) or np.any(self.s_s)) and P:
            raise InputError("recombination", "no mechanism",
                             "at least one recombination mechanism (defects, Auger/radiative coefficients "
                             "of the material, or a surface)")
        # carrier statistics of the narrowing model (optogen.equilibrium.STATISTICS)
        self.statistics = getattr(eq, "statistics", "fermi_dirac")
        # injection-dependent band-gap narrowing
        self.inj_bgn = rec.uses_injection_bgn(eq)
        self.bgn_model = rec.bgn_model_for(eq)
        if self.inj_bgn:
            self.bgn0 = self._bgn(n0, p0)
        else:
            self.bgn0 = np.zeros(P)

    # -- helpers ---------------------------------------------------------
    def _bgn(self, n, p, sub=None):
        T, nd, na = (self.T, self.nd, self.na) if sub is None else sub
        out = bgn_eV(self.material, T, nd, na, n_cm3=n, p_cm3=p, model=self.bgn_model)
        return np.asarray(out) if np.iscomplexobj(out) else np.asarray(out, dtype=float)

    def __len__(self):
        return self.T.shape[0]

    def take(self, idx) -> "PreparedRates":
        """The subset of points at positions idx.

        Parameters
        ----------
        idx : array_like of int or bool
            Positions (or a mask) among the P points [-].

        Returns
        -------
        PreparedRates
            A new object sharing the settings, with every per-point array indexed.
        """
        new = PreparedRates(None, None, None, None)
        new.__dict__.update(self.__dict__)
        for k in self._ARRAYS:
            setattr(new, k, getattr(self, k)[idx])
        return new

    def ni2_shift(self, dn, precise: bool = True):
        """ln(n_i,eff^2(n, p) / (n0 p0)) at excess density dn (0 without injection BGN).

        (dEg(n0 + dn, p0 + dn) - dEg(n0, p0)) / kT.  The plain difference of two nearly equal
        narrowings carries an absolute error of a few ulp of dEg; in U that error is weighted
        by n0 p0 / (dn (n0 + p0)) ~ min(n0, p0) / dn, so it only matters where dn is well below
        the minority density (near-intrinsic material at high temperature: up to ~5e-10 of U,
        enough to miss the 1e-10 residual).  There, dn < 1e-2 min(n0, p0), the difference is
        `_shift_integral` instead (no subtraction).

        Parameters
        ----------
        dn : array_like
            Excess density Delta n, length P [cm^-3].
        precise : bool, optional
            False: always the plain difference (enough where U need not be resolved to
            1e-10, e.g. the implied J-V curve).

        Returns
        -------
        numpy.ndarray or float
            The shift (dEg(n0 + dn, p0 + dn) - dEg(n0, p0)) / kT [-]; 0.0 without
            injection-dependent narrowing.

        References
        ----------
        W. Squire and G. Trapp, SIAM Rev. 40, 110 (1998), doi:10.1137/S003614459631241X
        (the complex-step derivative of `_shift_integral`).
        """
        if not self.inj_bgn:
            return 0.0
        dn = np.asarray(dn, dtype=float)
        with np.errstate(over="ignore", invalid="ignore"):
            out = (self._bgn(self.n0 + dn, self.p0 + dn) - self.bgn0) / self.kT
        small = np.flatnonzero((dn > 0) & (dn < 1e-2 * np.minimum(self.n0, self.p0)))
        if small.size and precise:
            out = np.array(out, dtype=float, copy=True)
            out[small] = self._shift_integral(small, dn[small]) / self.kT[small]
        return out

    def _shift_integral(self, idx, dn):
        """dEg(n0 + dn, p0 + dn) - dEg(n0, p0) [eV] for dn < 1e-2 min(n0, p0), without cancellation.

        The integral over s = 0..dn of d dEg(n0 + s, p0 + s)/ds, split where n + p crosses the
        ion density (the kink of the ion-density cap in `bgn_schenk1998`), each piece by 2-point
        Gauss-Legendre (relative error ~ (dn / min(n0, p0))^4 / 4320 < 3e-12); the derivative by
        the complex step Im dEg(n + i h, p + i h) / h, exact to rounding (W. Squire and
        G. Trapp, SIAM Rev. 40, 110 (1998), doi:10.1137/S003614459631241X).
        """
        sub = (self.T[idx], self.nd[idx], self.na[idx])
        n0, p0 = self.n0[idx], self.p0[idx]
        kink = np.clip(0.5 * (self.nd[idx] + self.na[idx] - n0 - p0), 0.0, dn)
        h = 1e-30 * (n0 + p0)
        total = np.zeros(idx.size)
        for lo, hi in ((0.0, kink), (kink, dn)):
            for node in (0.5 - 0.5 / np.sqrt(3.0), 0.5 + 0.5 / np.sqrt(3.0)):
                s = lo + node * (hi - lo)
                f = self._bgn(n0 + s + 1j * h, p0 + s + 1j * h, sub)
                total += 0.5 * (hi - lo) * np.imag(f) / h
        return total

    def rates(self, dn, shift=None):
        """(srh, radiative, auger, surface) rates at excess density dn.

        Parameters
        ----------
        dn : array_like
            Excess density Delta n, length P [cm^-3].
        shift : array_like or float or None, optional
            ln(n_i,eff^2(n, p) / (n0 p0)) at dn [-]; None computes it (`ni2_shift`).

        Returns
        -------
        srh, radiative, auger, surface : numpy.ndarray
            Net rates, length P [cm^-3 s^-1] (the surface loss per volume of the absorber).

        References
        ----------
        W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835;
        R. N. Hall, Phys. Rev. 87, 387 (1952), doi:10.1103/PhysRev.87.387 (SRH);
        D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (the J0 law, from memory).
        """
        dn = np.asarray(dn, dtype=float)
        if shift is None:
            shift = self.ni2_shift(dn)
        n0, p0 = self.n0, self.p0
        exc = excess_product_cm6(n0, p0, dn, shift)
        srh = _srh_rates(n0, p0, dn, self.srh_a, self.srh_b, self.n1, self.p1, shift) if self.n1.shape[-1] else 0.0 * dn
        rad = self.rad_B * exc          # `radiative_band_to_band` with B_rel (1 - f_PR) B folded into rad_B
        aug = auger_from_coefficients(exc, dn, self.aug_A, self.aug_C, self.aug_e)
        sj = surface_j0(n0, p0, dn, self.s_j0, self.s_W, shift, J0_reference_K=None)   # s_j0 is already at T
        surf = sj + self.s_s * dn
        return srh, rad, aug, surf

    def slopes(self, dn, shift):
        """Partial derivatives of the total rate U(Delta n, shift) of `rates` (analytic, next to the rates they differentiate).

        With X = n p - n_i,eff^2 = Delta n (n0 + p0 + Delta n) - n0 p0 expm1(shift)
        (dX/dDelta n = n + p, dX/dshift = -n0 p0 e^shift):
        radiative B X; Auger X (A + C Delta n^e); J0 surfaces c X / (n0 p0 e^shift),
        c = J0 / (q W); S surfaces S Delta n / W; SRH per level
        X a b / (a (n + n1 e^(shift/2)) + b (p + p1 e^(shift/2))), a = 1/tau_n0, b = 1/tau_p0.

        Parameters
        ----------
        dn : ndarray (P,)
            Excess density Delta n > 0 [cm^-3].
        shift : ndarray (P,) or float
            ln(n_i,eff^2(n, p) / (n0 p0)) at dn [-] (0.0 without injection narrowing).

        Returns
        -------
        u_d : ndarray (P,)
            dU/dDelta n at fixed shift [s^-1].
        u_s : ndarray (P,) or float
            dU/dshift at fixed Delta n [cm^-3 s^-1].

        References
        ----------
        W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835 (SRH);
        D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (the J0 law, from memory).
        """
        n0, p0 = self.n0, self.p0
        n, p = n0 + dn, p0 + dn
        shifted = np.ndim(shift) > 0 or shift != 0.0
        with np.errstate(over="ignore", invalid="ignore", divide="ignore", under="ignore"):
            exc = excess_product_cm6(n0, p0, dn, shift)
            x_d = n + p
            de = dn ** self.aug_e
            aug = self.aug_A + self.aug_C * de
            u_d = (self.rad_B + aug) * x_d + exc * (self.aug_e * self.aug_C) * (de / dn) + self.s_s
            if shifted:
                n0p0 = n0 * p0
                es = np.exp(shift)
                x_s = -np.where(n0p0 > 0, n0p0 * es, 0.0)
                u_s = (self.rad_B + aug) * x_s
            else:
                u_s = 0.0
            if np.any(self.s_j0 > 0):
                c = self.s_j0 * 1e-15 / (q_C * self.s_W)           # rounded as in `surface_j0` (J0 may be subnormal)
                ni2 = n0 * p0 * np.exp(shift) if shifted else n0 * p0
                on = c > 0
                u_d = u_d + np.where(on, c * x_d / ni2, 0.0)     # as `surface_j0`: c before 1 / (n0 p0)
                if shifted:
                    u_s = u_s - np.where(on, c * n * p / ni2, 0.0)     # c first: n0 p0 may be ~1e-300
            if self.n1.shape[-1]:
                a, b = self.srh_a, self.srh_b
                n1, p1 = self.n1, self.p1
                if shifted:
                    h = np.exp(0.5 * shift)[..., None]
                    n1, p1 = n1 * h, p1 * h
                den = a * (n[:, None] + n1) + b * (p[:, None] + p1)
                ok = den > 0
                r = np.where(ok, a * b / np.where(ok, den, 1.0) ** 2, 0.0)
                u_d = u_d + (r * (x_d[:, None] * den - exc[:, None] * (a + b))).sum(-1)
                if shifted:
                    u_s = u_s + (r * (x_s[:, None] * den - exc[:, None] * 0.5 * (a * n1 + b * p1))).sum(-1)
        return u_d, u_s

    def total(self, dn):
        """Total rate at excess density dn.

        Parameters
        ----------
        dn : array_like
            Excess density Delta n, length P [cm^-3].

        Returns
        -------
        numpy.ndarray
            U = U_srh + U_radiative + U_auger + U_surface [cm^-3 s^-1].
        """
        s, r, a, f = self.rates(dn)
        return s + r + a + f
