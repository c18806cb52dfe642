"""Pipeline, step 2: every output block for a vector of operating points.

`evaluate` runs the chain materials -> equilibrium -> generation -> steady state ->
(photoconductance, detector, depth profile) over arrays of the fast keys; `point_details`
adds the curves behind a single point (implied J-V, lifetime curve, spectral response);
`background_limit` finds the temperature where a detector becomes background-limited.
"""
from __future__ import annotations

import dataclasses
import warnings
from typing import Any, Mapping

import numpy as np

from .. import detector as det
from .. import profile as pr
from .. import schema
from ..constants import hc_eV_nm, kT_eV, q_C
from ..equilibrium import equilibrium
from ..errors import DegenerateWarning, PhysicsNoteWarning, check_range
from ..generation import absorbed_fraction_below_eV, trapezoid_weights
from ..light import Spectrum
from ..materials import optical_constants, shortest_wavelength_nm
from ..recombination import surface_j0_flux_cm2_s, surface_velocity_j0_cm_s
from ..steady_state import (DEGENERATE_KT, DN_MAX_CM3, _NAN_WHEN_UNCONVERGED, implied_jv, lifetime_curve, solve,
                            state_at)
from ..transport import ambipolar_diffusivity_cm2_s, diffusivity_cm2_s, missing_mobility_record, photoconductance_S
from .setup import (LIGHT_SCALING_KEYS, Setup, check_doping_sum, check_irradiance, doping_of, equilibrium_options,
                    generation_of, mobilities, optical_csv)


#: largest fraction of the absorbed photons allowed below the splitting [-] (our choice:
#: beyond it the linear absorption that gives G no longer describes the point)
INVERSION_LIMIT = 0.01


#: the generation block's keys (per point) [-]
GENERATION_KEYS = ("average_cm3_s", "photocurrent_mA_cm2", "absorbed_fraction")


@dataclasses.dataclass(frozen=True)
class _Distinct:
    """Distinct rows of some per-point columns: values (one 1-D array per column) and, for
    each point, its row among them."""
    values: tuple
    rows: np.ndarray


def _distinct(*columns) -> _Distinct:
    """The distinct combinations of equal-length 1-D columns (e.g. T, N_D, N_A) [-]."""
    stacked = np.stack([np.asarray(c, dtype=float).reshape(-1) for c in columns])
    if stacked.shape[1] <= 1:
        return _Distinct(tuple(stacked), np.zeros(stacked.shape[1], dtype=np.intp))
    varies = np.flatnonzero(np.any(stacked != stacked[:, :1], axis=1))
    if varies.size == 0:
        return _Distinct(tuple(stacked[:, :1]), np.zeros(stacked.shape[1], dtype=np.intp))
    if varies.size == 1:                   # one varying column (the common case): a 1-D unique
        u, rows = np.unique(stacked[varies[0]], return_inverse=True)
        uniq = np.repeat(stacked[:, :1], u.size, axis=1)
        uniq[varies[0]] = u
        return _Distinct(tuple(uniq), rows.reshape(-1))
    uniq, rows = np.unique(stacked, axis=1, return_inverse=True)
    return _Distinct(tuple(uniq), rows.reshape(-1))


def _take(state, rows):
    """The dataclass `state` (Equilibrium, SteadyState) at the points `rows`: every array field
    with a leading axis is indexed, everything else (names, scalars) is kept [-]."""
    changes = {}
    for f in dataclasses.fields(state):
        v = getattr(state, f.name)
        if isinstance(v, np.ndarray) and v.ndim >= 1:
            changes[f.name] = v[rows]
    return dataclasses.replace(state, **changes)


def _block(d: Mapping[str, Any], n: int) -> dict[str, np.ndarray]:
    """A block dict (nested one level: "tau_s.srh") as 1-D arrays of length n: numbers as float
    (None -> NaN), strings as object arrays; no per-element Python work on numeric arrays."""
    flat: dict[str, Any] = {}
    for k, v in d.items():
        if isinstance(v, Mapping):
            flat.update({f"{k}.{k2}": v2 for k2, v2 in v.items()})
        else:
            flat[k] = v
    res = {}
    for k, v in flat.items():
        a = np.asarray(v)
        if a.dtype.kind == "O":       # scalars given as None, or strings
            items = a.reshape(-1)
            if any(isinstance(x, str) for x in items):
                a = a.astype(object)
            else:
                a = np.array([np.nan if x is None else x for x in items], dtype=float).reshape(a.shape)
        elif a.dtype.kind in "US":
            a = a.astype(object)
        else:
            a = a.astype(float)
        res[k] = np.broadcast_to(a, (n,)).copy() if a.ndim == 0 or a.size == 1 else a.reshape(-1)
    return res


def evaluate(setup: Setup, values: Mapping[str, np.ndarray], n: int,
             details: bool = False, trial: bool = False) -> dict[str, dict[str, np.ndarray]]:
    """All output blocks for `n` points, vectorised over the fast keys.

    Parameters
    ----------
    setup : Setup
        What is built once from the scenario (`setup.build`).
    values : Mapping[str, numpy.ndarray]
        Swept fast keys -> 1-D arrays of length n [units of the key].
    n : int
        Number of points [-].
    details : bool, optional
        Also return curves for a single-point report (JV, lifetime, profile), under the
        key ``"_details"``.
    trial : bool, optional
        The points are trial points of a search (the background-limit scan), not the
        user's: a photodiode bias beyond a point's forward limit gives no value there
        instead of an InputError.

    Returns
    -------
    dict[str, dict[str, numpy.ndarray]]
        Output blocks (``equilibrium``, ``light``, ``generation``, ``steady_state``,
        ``profile``, ``detector``), each a mapping of output name to a 1-D array of length n
        in the unit of its name's suffix.

    Raises
    ------
    InputError
        For a swept value outside its domain.
    """
    sc = setup.scenario
    ab = sc.section("absorber")
    ones = np.ones(n)
    T = ones * np.asarray(values.get("absorber.temperature_K", ab.get("temperature_K", 300.0)), dtype=float)
    for key in values:                       # swept fast values (checked at load; again for the Python API)
        check_range(key, values[key], schema.KEYS[key].low, schema.KEYS[key].high, unit=schema.KEYS[key].unit)
    check_range("absorber.temperature_K", T, schema.T_MIN_K, schema.T_MAX_K, unit="K")
    nd, na = doping_of(setup, values)
    nd, na = ones * nd, ones * na
    check_doping_sum(nd, na, "absorber.donors_cm3" if "absorber.donors_cm3" in values else "absorber.acceptors_cm3")
    rec = setup.recombination
    # the dark state depends on (T, N_D, N_A) only: solved once per distinct combination
    combos = _distinct(T, nd, na)
    eq_u = equilibrium(setup.material, *combos.values, **equilibrium_options(setup))
    eq = _take(eq_u, combos.rows)
    out: dict[str, dict[str, Any]] = {"equilibrium": _block({k: getattr(eq, k) for k in eq._DICT_KEYS}, n)}
    extra: dict[str, Any] = {"equilibrium": eq}
    G = np.zeros(n)
    if setup.spectrum is not None:
        scale = ones
        for k in LIGHT_SCALING_KEYS:
            if f"light.{k}" in values:
                scale = ones * np.asarray(values[f"light.{k}"], dtype=float)
                check_range(f"light.{k}", scale, 0.0, schema.KEYS[f"light.{k}"].high)
        check_irradiance(sc, setup.spectrum.irradiance_W_m2 * scale)
        g, inv = generation_of(setup, setup.spectrum, T, profile=details)
        gen = {k: np.asarray(getattr(g, k), dtype=float).reshape(-1)[inv] for k in GENERATION_KEYS}
        gen["average_cm3_s"] = gen["average_cm3_s"] * scale
        gen["photocurrent_mA_cm2"] = gen["photocurrent_mA_cm2"] * scale
        G = G + gen["average_cm3_s"]
        out["light"] = {"irradiance_W_m2": setup.spectrum.irradiance_W_m2 * scale,
                        "photon_flux_cm2_s": setup.spectrum.photon_flux_cm2_s * scale}
        out["generation"] = gen
        extra["generation"] = g
    if setup.background is not None:
        gb, inv_b = generation_of(setup, setup.background, T)
        bg = np.asarray(gb.average_cm3_s, dtype=float).reshape(-1)[inv_b]
        G = G + bg
        out.setdefault("generation", {"average_cm3_s": np.zeros(n), "photocurrent_mA_cm2": np.zeros(n),
                                      "absorbed_fraction": np.full(n, np.nan)})
        out["generation"]["background_average_cm3_s"] = bg
    elif "generation" in out:
        out["generation"]["background_average_cm3_s"] = np.full(n, np.nan)
    if setup.spectrum is not None:
        _warn_unabsorbed(setup, T, out["generation"], out["light"])
    if rec is not None:
        ss = solve(setup.material, eq, rec, G, setup.thickness_cm)
        notes = []
        if np.any(~np.asarray(ss.converged)):
            notes.append(f"{int(np.sum(~np.asarray(ss.converged)))} operating point(s) did not converge (no root of "
                         f"G = U with 1e-304 < delta n < {DN_MAX_CM3:.0e} cm^-3, the range the models support)")
        if setup.spectrum is not None:
            frac = absorbed_fraction_below_eV(g.wavelength_nm, g.absorbed_photon_flux_cm2_s_nm, inv,
                                              np.ravel(ss.splitting_eV))
            inverted = np.asarray(ss.converged) & (frac > INVERSION_LIMIT)
            if np.any(inverted):
                why = _inversion_reason(setup, g, inv, eq, ss, inverted)
                degenerate = np.asarray(ss.degenerate, dtype=bool).copy()
                ss = _invalidate(ss, inverted)
                # degeneracy is a fact of the solved state, kept on a flagged point
                ss = dataclasses.replace(ss, degenerate=degenerate if degenerate.ndim else degenerate[()])
                notes.append(f"{int(inverted.sum())} operating point(s) are outside the model: more than "
                             f"{INVERSION_LIMIT:.0%} of the absorbed photons (up to {float(frac.max()):.0%}) have an "
                             "energy below the quasi-Fermi-level splitting, where the absorber would amplify or "
                             "be transparent rather than absorb (population inversion, or band filling in "
                             f"degenerate material; the absorption model has neither): {why}")
        out["steady_state"] = _block(ss.to_dict(), n)
        extra["steady_state"] = ss
        out["steady_state"]["converged"] = np.asarray(ss.converged) * ones
        out["steady_state"]["degenerate"] = np.asarray(ss.degenerate, dtype=bool) * np.ones(n, bool)
        if notes:
            extra["warnings"] = ["; ".join(notes) + "; such points are flagged converged = false (did not "
                                 "converge / outside the model) and their levels are null"]
            if not details:           # a sweep keeps no per-chunk notes: say why here, once per chunk
                warnings.warn(PhysicsNoteWarning(extra["warnings"][0]), stacklevel=2)
        falling = (np.asarray(ss.converged) & (np.asarray(ss.generation_cm3_s) > 0)
                   & (np.nan_to_num(ss.splitting_eV) > 0) & np.isnan(ss.implied_ff))
        if np.any(falling) and not details:     # a single point says it with its implied J-V (point_details)
            warnings.warn(PhysicsNoteWarning(_FALLING_SPLITTING_NOTE.format(
                what=f"implied_ff is null at {int(falling.sum())} point(s)")), stacklevel=2)
        above = np.asarray(ss.splitting_eV > ss.effective_gap_eV)
        if np.any(above):
            warnings.warn(DegenerateWarning(
                f"{int(above.sum())} operating point(s) have a quasi-Fermi-level splitting above the band gap: "
                "degenerate carriers (a quasi-Fermi level inside a band), physical only with the Fermi-Dirac "
                "statistics used for the levels; flagged degenerate = true"), stacklevel=2)
        out["steady_state"]["photoconductance_S"] = _photoconductance(setup, eq, ss, T, nd, na)
        if sc.get("solver.depth_resolved", False) and setup.spectrum is not None:
            prof, extra["profile"] = _depth_resolved(setup, eq, ss, T, nd, na, scale)
            out["profile"] = prof.pop("profile")
            prof["steady_state"]["photoconductance_S"] = out["steady_state"]["photoconductance_S"]
            out["steady_state"] = prof["steady_state"]
        if "detector" in sc.data:
            out["detector"] = _detector_block(setup, eq, ss, T, nd, na, out, trial, (eq_u, combos.rows))
    if details:
        out["_details"] = extra
    return out


def _inversion_reason(setup: Setup, g, inv, eq, ss, inverted) -> str:
    """Why the first point in `inverted` is outside the model, with its numbers (one clause) [-].

    Dark Fermi level within 3 kT of a band or inside it: band filling (degenerate dark carriers);
    else the absorbed photons' median energy against the gap (sub-gap tail) and the splitting.
    """
    i = int(np.flatnonzero(np.ravel(inverted))[0])
    pick = (lambda a: float(np.ravel(np.broadcast_to(np.asarray(a, dtype=float), np.shape(inverted)))[i]))
    kT = float(kT_eV(pick(eq.temperature_K)))
    ef, gap, split = pick(eq.fermi_level_eV), pick(eq.effective_gap_eV), pick(ss.splitting_eV)
    wl = np.asarray(g.wavelength_nm, dtype=float)
    row = np.reshape(g.absorbed_photon_flux_cm2_s_nm, (-1, wl.size))[int(np.ravel(inv)[i])] * trapezoid_weights(wl)
    e_asc, cum = (hc_eV_nm / wl)[::-1], np.cumsum(row[::-1])
    e_med = float(e_asc[min(int(np.searchsorted(cum, 0.5 * cum[-1])), wl.size - 1)])
    where = f"at {pick(eq.temperature_K):g} K"
    if e_med < gap:
        return (f"{where} the light is absorbed only in the sub-gap tail of the absorption model (median absorbed "
                f"photon energy {e_med:.4g} eV, gap {gap:.4g} eV), and the splitting it would cause, {split:.4g} eV, "
                "exceeds those photon energies")
    if ef > gap - DEGENERATE_KT * kT or ef < DEGENERATE_KT * kT:
        band, depth = ("conduction", ef - gap) if ef > gap - DEGENERATE_KT * kT else ("valence", -ef)
        return (f"{where} the dark carriers are already degenerate (Fermi level {depth:+.3g} eV from the {band} "
                f"band edge, gap {gap:.4g} eV): the filled band blocks the absorption of the light (median absorbed "
                f"photon energy {e_med:.4g} eV) and the splitting would be {split:.4g} eV")
    return f"{where} the splitting would be {split:.4g} eV, above the median absorbed photon energy {e_med:.4g} eV"


def _invalidate(ss, bad):
    """The steady state with the points `bad` flagged converged = False and their levels NaN."""
    shape = np.shape(ss.converged)
    bad = np.reshape(bad, shape)
    changes = {k: np.where(bad, np.nan, getattr(ss, k)) for k in _NAN_WHEN_UNCONVERGED}
    changes["converged"] = np.asarray(ss.converged) & ~bad
    changes["degenerate"] = np.asarray(ss.degenerate) & ~bad
    if shape == ():
        changes = {k: v[()] for k, v in changes.items()}
    return dataclasses.replace(ss, **changes)


def _warn_unabsorbed(setup: Setup, T, gen, light) -> None:
    """Warn where incident light is not absorbed at all, naming the light against the cut-off wavelength."""
    none = (np.asarray(gen["average_cm3_s"]) <= 0) & (np.asarray(light["irradiance_W_m2"]) > 0)
    spec = setup.spectrum
    lit = spec.irradiance_W_m2_nm > 0
    if not np.any(none) or not np.any(lit):
        return
    Tn = np.asarray(T, dtype=float)[none]
    eg = np.asarray(setup.material.bandgap_eV(Tn), dtype=float)
    cut = hc_eV_nm / eg                           # cut-off wavelength hc/Eg(T) [nm]
    lo, hi = float(spec.wavelength_nm[lit].min()), float(spec.wavelength_nm[lit].max())
    light = f"{lo:.6g} nm" if hi - lo < 0.1 else f"{lo:.6g}-{hi:.6g} nm"
    if lo > float(cut.max()):
        why = (f"the light ({light}) lies below the band gap of {setup.material.name}: longer than the cut-off "
               f"wavelength hc/Eg = {float(cut.min()):.5g}" + (f"-{float(cut.max()):.5g}" if np.ptp(cut) > 0.05 else "")
               + f" nm (Eg = {float(eg.max()):.4g} eV at {float(Tn.min()):g} K)")
    else:
        why = f"none of the light ({light}) is absorbed in {setup.material.name}"
    warnings.warn(PhysicsNoteWarning(
        f"{why}; nothing is absorbed at {int(none.sum())} point(s): no generation, so the absorber stays in its "
        "dark state there (splitting 0 V) and the implied FF, the implied J-V and the efficiency do not apply "
        "(null)"), stacklevel=3)


VOC_PLANES = {"front": 0, "rear": -1}


def _column(eq):
    """The equilibrium with every array field given a trailing depth axis."""
    changes = {f.name: np.asarray(getattr(eq, f.name))[..., None] for f in dataclasses.fields(eq)
               if isinstance(getattr(eq, f.name), np.ndarray) and getattr(eq, f.name).dtype.kind == "f"}
    return dataclasses.replace(eq, **changes)


def _depth_resolved(setup: Setup, eq, ss, T, nd, na, scale):
    """Depth-resolved steady state: Delta n(x) from the 1-D continuity equation (optogen.profile).

    Returns the `steady_state` block at the stated plane (solver.voc_plane, default the
    illuminated front x = 0) with depth-integrated lifetimes, the `profile` block, and the
    curves for plots.
    """
    sc, mat, rec, W = setup.scenario, setup.material, setup.recombination, setup.thickness_cm
    plane = str(sc.get("solver.voc_plane", "front")).lower()
    n0, p0 = (np.ravel(getattr(eq, k)) for k in ("n0_cm3", "p0_cm3"))
    col = _column(eq)

    def d_amb(dn):
        n, p = n0[:, None] + dn, p0[:, None] + dn
        mu_e, mu_h = mobilities(setup, T[:, None], nd[:, None], na[:, None], n, p)
        return ambipolar_diffusivity_cm2_s(n, p, diffusivity_cm2_s(mu_e, T[:, None]),
                                           diffusivity_cm2_s(mu_h, T[:, None]))

    def bulk(dn):
        r = rec.rates(mat, col, dn, W)
        return r["srh"] + r["radiative"] + r["auger"]

    def surface(side):
        # the same J0 law and temperature scaling as the uniform rates (recombination.surface_j0_flux_cm2_s),
        # with the injection-dependent narrowing shift at the face density
        j0 = getattr(rec, f"{side}_J0_fA_cm2")
        if j0 is not None:
            check_range(f"recombination.{side}_J0_fA_cm2", j0, 0.0, None, unit="fA cm^-2")
            prep = rec.prepare(mat, col, W, shape=(T.size, 1))
            c0, v0 = n0[:, None], p0[:, None]
            return lambda dn: surface_j0_flux_cm2_s(
                c0, v0, dn, j0, np.reshape(prep.ni2_shift(np.ravel(dn)), np.shape(dn)), material=mat,
                T_K=T[:, None], J0_reference_K=rec.J0_reference_K, derivative=True)
        S = getattr(rec, f"{side}_S_cm_s")
        return pr.surface_S(0.0 if S is None else S, field=f"recombination.{side}_S_cm_s")

    # mesh: resolve 1/alpha of the light that carries photons and the diffusion length
    spec = setup.spectrum
    flux = spec.photon_flux_cm2_s_nm
    carried = flux >= 0.01 * flux.max()
    oc = optical_constants(mat, spec.wavelength_nm[carried], float(np.max(T)),
                           page=sc.get("absorber.optical_page"), csv_path=optical_csv(sc))
    alpha = np.ravel(oc.alpha_cm1)
    absorbed = (alpha > 0) & (1.0 / np.where(alpha > 0, alpha, 1.0) < W)
    with np.errstate(invalid="ignore"):          # NaN at unconverged points: ignored here
        Ls = np.sqrt(np.ravel(d_amb(np.ravel(ss.delta_n_cm3)[:, None]))[: T.size] * np.ravel(ss.tau_eff_s))
    L = float(np.nanmin(Ls)) if np.any(np.isfinite(Ls)) else np.nan
    lengths = np.append(1.0 / alpha[absorbed], L if np.isfinite(L) else W)
    wl = np.append(spec.wavelength_nm[carried][absorbed], np.nan)
    x = pr.mesh(W, int(sc.get("solver.nodes", 200)), lengths, wavelength_nm=wl)
    g, inv = generation_of(setup, spec, T, depth_cm=x)
    G = np.reshape(g.profile_cm3_s, (-1, x.size))[inv] * np.asarray(scale)[:, None]
    if setup.background is not None:
        gb, invb = generation_of(setup, setup.background, T, depth_cm=x)
        G = G + np.reshape(gb.profile_cm3_s, (-1, x.size))[invb]
    sol = pr.solve_profile(x, G, pr.with_derivative(bulk), pr.with_derivative(d_amb),
                           surface("front"), surface("rear"))
    dn_x = sol.delta_n_cm3
    i = VOC_PLANES[plane]
    st = state_at(mat, eq, rec, dn_x[:, i], W)
    # lifetimes from depth-integrated losses: tau_x = <dn> W / integral(U_x dx)
    avg = sol.average_cm3()
    r = rec.rates(mat, col, dn_x, W)
    taus, tau_eff, losses = sol.lifetimes_s({k: r[k] for k in ("srh", "radiative", "auger")}, ss.tau_eff_s)
    names = np.array(list(losses))
    steady = {k: np.asarray(st[k]) for k in ("delta_n_cm3", "delta_p_cm3", "n_cm3", "p_cm3", "np_over_ni2",
                                             "splitting_eV", "implied_voc_V", "electron_qfl_eV", "hole_qfl_eV",
                                             "injection_ratio", "log10_np_over_ni2")}
    steady.update({"implied_ff": np.full(T.size, np.nan), "tau_eff_s": tau_eff,
                   **{f"tau_s.{k}": v for k, v in taus.items()},
                   "limiting_mechanism": names[np.argmax(np.stack(list(losses.values())), axis=0)],
                   "degenerate": np.asarray(st["degenerate"], dtype=bool),
                   "converged": (np.asarray(sol.converged) & np.asarray(ss.converged)) * 1.0})
    uni_voc = np.ravel(ss.implied_voc_V)
    profile_block = {
        "plane": np.full(T.size, plane, dtype=object),
        "front_delta_n_cm3": sol.front_cm3(), "rear_delta_n_cm3": sol.rear_cm3(),
        "average_delta_n_cm3": avg, "uniformity": sol.uniformity(),
        "uniform_implied_voc_V": uni_voc,
        "uniform_error_implied_voc_mV": (uni_voc - steady["implied_voc_V"]) * 1e3,
        "uniform_error_average_delta_n": np.ravel(ss.delta_n_cm3) / avg - 1.0,
        "nodes": np.full(T.size, float(x.size)), "converged": np.asarray(sol.converged) * 1.0,
    }
    qfl = state_at(mat, col, rec, dn_x, W)
    curves = {"depth_cm": x, "delta_n_cm3": dn_x, "generation_cm3_s": G,
              "electron_qfl_eV": qfl["electron_qfl_eV"], "hole_qfl_eV": qfl["hole_qfl_eV"],
              "dataarray": sol.to_dataarray()}
    return {"steady_state": steady, "profile": profile_block}, curves


def _photoconductance(setup, eq, ss, T, nd, na):
    """Photoconductance [S] (sheet): `transport.photoconductance_S` with each state's own
    injection-dependent mobilities.

    Null (NaN), with a warning, for a material without mobilities; NaN at unconverged points.
    """
    n0, p0 = np.ravel(eq.n0_cm3), np.ravel(eq.p0_cm3)
    n, p = np.ravel(ss.n_cm3), np.ravel(ss.p_cm3)
    missing = missing_mobility_record(setup.material)
    if missing:
        if np.any(n > n0):
            warnings.warn(PhysicsNoteWarning(
                f"photoconductance_S is null: {setup.material.name} has no carrier mobilities "
                f"(absorber.custom.{missing} not given)"), stacklevel=3)
        return np.full(n.shape, np.nan)
    return photoconductance_S(n0, p0, n, p, *mobilities(setup, T, nd, na, n0, p0),
                              *mobilities(setup, T, nd, na, n, p), setup.thickness_cm)


def _detector_block(setup, eq, ss, T, nd, na, out, trial=False, dark_states=None) -> dict[str, np.ndarray]:
    """The `detector` JSON block: signal, background and dark currents, noise terms, D*, D*_BLIP.

    dark_states: (equilibrium over the distinct (T, N_D, N_A), row of each point) so that the
    dark steady state is solved once per distinct dark state; default: per point.
    """
    d = det.detector_from_table(setup.scenario.section("detector"))
    rec = setup.recombination
    n = T.size
    n0, p0 = np.ravel(eq.n0_cm3), np.ravel(eq.p0_cm3)
    ln_n0, ln_p0 = np.ravel(eq.ln_n0_cm3), np.ravel(eq.ln_p0_cm3)
    eq_u, rows = dark_states if dark_states is not None else (eq, np.arange(n))
    dark = _take(solve(setup.material, eq_u, rec, np.zeros(np.size(eq_u.temperature_K)), setup.thickness_cm,
                       with_ff=False), rows)
    tau_dark = np.ravel(dark.tau_eff_s)
    gen = out.get("generation", {})
    g_opt = gen.get("average_cm3_s", np.zeros(n))
    g_bg = gen.get("background_average_cm3_s", np.zeros(n))
    g_bg = np.where(np.isnan(g_bg), 0.0, g_bg)
    irr = out.get("light", {}).get("irradiance_W_m2", np.zeros(n))
    if d.mode == "photoconductor":
        mu_dark = mobilities(setup, T, nd, na, n0, p0)
        mu_light = mobilities(setup, T, nd, na, np.ravel(ss.n_cm3), np.ravel(ss.p_cm3))
        block = det.photoconductor_figures(d, setup.thickness_cm, T, n0, p0, np.ravel(ss.n_cm3),
                                           np.ravel(ss.p_cm3), mu_dark, mu_light, np.ravel(ss.tau_eff_s),
                                           tau_dark, g_opt, g_bg, irr, ln_n0_cm3=ln_n0, ln_p0_cm3=ln_p0)
    else:
        mu_e, mu_h = mobilities(setup, T, nd, na, n0, p0)
        D_min = diffusivity_cm2_s(np.where(n0 >= p0, mu_h, mu_e), T)
        rear_S = _rear_S_cm_s(d, rec, setup.material, T, eq)
        # diffusion J0 from the bulk lifetime: the front is the junction, the rear enters through S
        tau_bulk = det.bulk_lifetime_s(np.ravel(dark.tau_srh_s), np.ravel(dark.tau_radiative_s),
                                       np.ravel(dark.tau_auger_s))
        block = det.photodiode_figures(d, setup.thickness_cm, T, np.ravel(eq.ni_eff_cm3), n0, p0,
                                       np.ravel(ss.n_cm3), np.ravel(ss.p_cm3), D_min, tau_bulk, rear_S,
                                       gen.get("photocurrent_mA_cm2", np.zeros(n)), g_opt, g_bg, irr,
                                       bandgap_eV=np.ravel(eq.effective_gap_eV),
                                       permittivity=setup.material.permittivity,
                                       electron_mass_m0=setup.material.electron_mass_m0(T),
                                       tau_srh_s=np.ravel(dark.tau_srh_s), ln_n0_cm3=ln_n0, ln_p0_cm3=ln_p0,
                                       beyond_bias_limit="nan" if trial else "raise")
    absorbed = gen.get("absorbed_fraction", np.full(n, np.nan))
    block["quantum_efficiency"] = np.where(np.asarray(irr) > 0, absorbed, np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        block["noise_equivalent_power_W"] = det.noise_equivalent_power_W(
            block["detectivity_cm_Hz05_W"], d.area_cm2, d.bandwidth_Hz)
    block["mode"] = np.full(n, d.mode, dtype=object)
    return {k: (np.broadcast_to(v, (n,)).copy() if np.ndim(v) == 0 or np.size(v) == 1 else np.ravel(v))
            for k, v in block.items()}


def _rear_S_cm_s(d, rec, material, T, eq):
    """Rear recombination velocity for the thin-base J0 [cm s^-1]: [detector] rear_S_cm_s, else the
    [recombination] rear surface (S, or J0 as its low-injection S_eff,
    `recombination.surface_velocity_j0_cm_s`), else 0 (a perfect rear)."""
    if d.rear_S_cm_s is not None:
        return d.rear_S_cm_s
    if rec.rear_S_cm_s is not None:
        return rec.rear_S_cm_s
    j0 = rec.j0_at_fA_cm2(material, T, "rear")        # already carried to T (j0_at_temperature_fA_cm2)
    if j0 is None:
        return 0.0
    return surface_velocity_j0_cm_s(np.exp(np.ravel(eq.ln_n0_cm3)), np.exp(np.ravel(eq.ln_p0_cm3)), j0)


def background_limit(setup: Setup, T_low_K: float = 20.0, T_high_K: float = 400.0):
    """Temperature where the pixel becomes background-limited (root solve over temperature).

    Background-limited means the background photon noise exceeds all other
    noise together (`detector.background_limited`); the crossing is where the
    two are equal, i.e. D*/D*_BLIP = 1/sqrt(2).  Both from the full pipeline at
    each trial temperature.

    Parameters
    ----------
    setup : Setup
        A set-up with a [detector] and a [background] table.
    T_low_K : float, optional
        Lower end of the temperature scan [K].
    T_high_K : float, optional
        Upper end of the temperature scan [K].

    Returns
    -------
    detector.BackgroundLimit
        temperature_K [K], found (bool) and a note.
    """


    def fn(T):
        T = np.atleast_1d(np.asarray(T, dtype=float))
        with warnings.catch_warnings():     # the scan's own trial temperatures are not the run's points
            warnings.simplefilter("ignore", DegenerateWarning)
            warnings.simplefilter("ignore", PhysicsNoteWarning)
            b = evaluate(setup, {"absorber.temperature_K": T}, T.size, trial=True)["detector"]
        total, bg = b["noise_total_A_Hz05"], b["noise_background_A_Hz05"]
        return np.maximum(det.noise_without_A_Hz05(total, bg), 1e-300), bg
    return det.background_limit_temperature_K(fn, T_low_K, T_high_K)


#: why an implied FF is null at a converged, lit point (see optogen.steady_state.splitting_falls)
_FALLING_SPLITTING_NOTE = (
    "{what}: at the operating point the quasi-Fermi-level splitting falls as the excess density rises (the "
    "injection-dependent band-gap narrowing outgrows the carriers' kinetic term: the uniform electron-hole plasma "
    "is unstable, as in the electron-hole liquid of Si below ~25 K), so the implied J-V is not single-valued; "
    "Voc is the splitting")


#: wavelengths of the spectral-response curve [-]
SPECTRAL_POINTS = 400


def _spectral_response(setup: Setup, blocks) -> dict[str, np.ndarray]:
    """Quantum efficiency and responsivity of a detector against wavelength (single point).

    The absorptance of the run's optics (front reflectance, light path, thickness) at the run's
    temperature, on SPECTRAL_POINTS log-spaced wavelengths from the shortest wavelength of the
    optical data (or 0.2 x the cut-off for a parametric edge) to 1.3 x the gap cut-off hc/Eg;
    R(lambda) = eta g q lambda / (h c) with the photoconductive gain g (1 for a photodiode).
    """
    sc = setup.scenario
    T = float(sc.get("absorber.temperature_K", 300.0))
    cut = hc_eV_nm / float(setup.material.bandgap_eV(T))
    short = shortest_wavelength_nm(setup.material, T, page=sc.get("absorber.optical_page"), csv_path=optical_csv(sc))
    lo = short * 1.0001 if short > 0 else 0.2 * cut
    wl = np.geomspace(lo, 1.3 * cut, SPECTRAL_POINTS)
    g, _ = generation_of(setup, Spectrum(wl, np.ones_like(wl), "flat probe"), np.array([T]))
    gain = float(np.ravel(blocks["detector"].get("photoconductive_gain", [1.0]))[0])
    return det.spectral_response(g.wavelength_nm, np.ravel(np.asarray(g.absorptance)[0]), gain)


def point_details(setup: Setup, details, blocks) -> dict[str, Any]:
    """Curves behind a single point: implied J-V, lifetime against delta n, detector spectral response.

    Parameters
    ----------
    setup : Setup
        The set-up of the point.
    details : dict
        The ``"_details"`` entry of `evaluate` (equilibrium, steady state, warnings).
    blocks : dict
        The output blocks of `evaluate` for the point.

    Returns
    -------
    dict[str, Any]
        ``setup``, and where they apply ``spectral_response``, ``lifetime_curve`` (delta n
        [cm^-3] and lifetimes [s] from 1e12 to 1e17 cm^-3), ``implied_jv``
        (`steady_state.implied_jv`) and ``warnings``.
    """
    out: dict[str, Any] = {"setup": setup}
    if "detector" in blocks:
        out["spectral_response"] = _spectral_response(setup, blocks)
    eq, rec = details["equilibrium"], setup.recombination
    if rec is None or "steady_state" not in details:
        return out
    # 1e12..1e17 cm^-3, reaching down to a tenth of the operating point when it lies lower
    dn_op = float(np.ravel(details["steady_state"].delta_n_cm3)[0])
    low = min(12.0, np.log10(dn_op) - 1.0) if np.isfinite(dn_op) and dn_op > 0 else 12.0
    lc = lifetime_curve(setup.material, eq, rec, setup.thickness_cm,
                        delta_n_cm3=np.logspace(low, 17.0, 51 + int(round(5 * (12.0 - low)))))
    out["lifetime_curve"] = {k: np.ravel(getattr(lc, k)) for k in (
        "delta_n_cm3", "tau_eff_s", "tau_srh_s", "tau_radiative_s", "tau_auger_s", "tau_surface_s")}
    gen = blocks.get("generation", {})
    jph = float(gen.get("photocurrent_mA_cm2", [0.0])[0])
    irr = float(blocks.get("light", {}).get("irradiance_W_m2", [0.0])[0])
    g_bg = float(gen.get("background_average_cm3_s", [np.nan])[0])
    if np.isfinite(g_bg) and g_bg > 0:
        # the steady state is lit by the source and the background together: the J-V is too (so that
        # Voc is the reported splitting); an efficiency against the source alone does not apply
        jph += q_C * setup.thickness_cm * g_bg * 1e3
        irr = 0.0
    if jph > 0 and bool(np.all(details["steady_state"].converged)):
        # the steady state already solved for this point is the J-V's open-circuit point: not solved again
        jv = implied_jv(setup.material, eq, rec, setup.thickness_cm, jph, irradiance_W_m2=irr if irr > 0 else None,
                        state=details["steady_state"])
        if not bool(np.all(np.isfinite(np.asarray(jv.ff)))) and bool(np.all(np.asarray(jv.voc_V) > 0)):
            out["warnings"] = list(details.get("warnings", ())) + [_FALLING_SPLITTING_NOTE.format(
                what="the implied FF, maximum-power point and efficiency are null")]
        elif jv.efficiency is not None and not bool(np.all(np.isfinite(np.asarray(jv.efficiency)))):
            out["warnings"] = list(details.get("warnings", ())) + [
                "implied efficiency is null: the maximum power would exceed the incident power, i.e. the "
                "splitting exceeds the photon energy of the light (population inversion; the absorption "
                "model has no stimulated emission)"]
        out["implied_jv"] = jv
    return out
