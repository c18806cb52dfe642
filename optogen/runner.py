"""The pipeline: a scenario in, a result out (single point or sweep).

Data flows one way: materials -> equilibrium -> (light, optics) -> generation
-> recombination -> steady_state -> detector / profile.  This module only
gathers scenario values, calls the core and labels the outputs.

Sweeps: keys the core broadcasts over ("fast" keys: temperature, doping,
resistivity and the light scaling) are evaluated as arrays in chunks; every
other swept key ("slow" keys: thickness, wavelength, defect density, ...) is
an outer loop over its values, each step vectorised over the fast keys.
Everything that does not depend on the swept keys (the material, the
spectrum, the optical data) is built once per slow-key group.
"""
from __future__ import annotations

import dataclasses
import datetime as _dt
import itertools
import math
import warnings
from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np
import xarray as xr

from . import __version__, schema
from .errors import InputError, check_range, relabel
from .scenario import Scenario, unit_of

LIGHT_SCALING_KEYS = schema.LIGHT_SCALINGS   # declared once in optogen.schema
FAST_KEYS = set(schema.fast_keys())        # temperature, doping, resistivity and the light scalings
#: resistivity is taken as the room-temperature value (ASTM F723 is at 23 C; we use 300 K)
RESISTIVITY_REFERENCE_K = 300.0
DEFAULT_CHUNK = 100_000
#: depth-resolved chunks: points x (at most profile.mesh's 20001 nodes) stays below this [cells]
MAX_PROFILE_CELLS = 20_000_000
MAX_PROFILE_NODES = 20_001
#: most dask workers a run may start
MAX_WORKERS = 1024

#: Dataset variable names where the JSON key alone would be unclear or clash
RENAME = {("generation", "average_cm3_s"): "generation_average_cm3_s",
          ("generation", "background_average_cm3_s"): "generation_background_average_cm3_s",
          ("profile", "converged"): "profile_converged"}


def var_name(block: str, key: str) -> str:
    """The Dataset / CSV variable name of a JSON key ("tau_s.srh" -> "tau_srh_s")."""
    if (block, key) in RENAME:
        return RENAME[(block, key)]
    if block == "implied_jv":              # figures of the J-V curve: jv_vmp_V, jv_ff, ...
        return f"jv_{key}"
    if "." in key:                       # nested: tau_s.srh -> tau_srh_s
        outer, inner = key.split(".", 1)
        stem, _, unit = outer.rpartition("_")
        return f"{stem}_{inner}_{unit}"
    return key


# ---------------------------------------------------------------------------
# Building the pieces that do not change inside a group of points
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Setup:
    """Everything built once from a scenario (fixed slow keys)."""

    scenario: Scenario
    material: Any
    thickness_cm: float
    spectrum: Any | None           # at the scenario's scaling, or at unit scaling of a swept scaling key
    background: Any | None
    recombination: Any | None
    optics: dict


def build(sc: Scenario, unit_scaling: str | None = None) -> Setup:
    """Build material, spectrum, background and recombination from a scenario.

    unit_scaling: a [light] scaling key that is swept; the spectrum is then
        built at value 1 of that key and the sweep multiplies it [-]
    """
    from . import materials
    from .scenario import validate
    validate(sc.data)                 # a Scenario built by hand gets the same checks as a file
    ab = sc.section("absorber")
    if "custom" in ab:
        base = materials.get(ab["material"], ab.get("composition_x")) if "material" in ab else None
        mat = materials.material_from_table(ab["custom"], base=base)
    else:
        if "material" not in ab:
            raise InputError("absorber.material", None, "a built-in name or an [absorber.custom] table")
        mat = materials.get(ab["material"], ab.get("composition_x"))
    if "mobility_model" in ab:
        mat = mat.with_(mobility_model=ab["mobility_model"])
    thickness_um = ab.get("thickness_um", 100.0 if "light" not in sc.data else None)
    if thickness_um is None:
        raise InputError("absorber.thickness_um", None, "a thickness > 0 um is needed under light")
    schema.check_value("absorber.thickness_um", thickness_um)

    spectrum = None
    if "light" in sc.data:
        from . import light
        table = sc.section("light")
        if unit_scaling is not None:
            for k in LIGHT_SCALING_KEYS:
                table.pop(k, None)
            table[unit_scaling] = 1.0
        spectrum = light.source_from_table(table, sc.base_dir)
        if unit_scaling is None:
            _check_irradiance(sc, spectrum.irradiance_W_m2)
    background = None
    if "background" in sc.data:
        from . import light
        bg = sc.section("background")       # f_number with field_of_view_deg: a schema rule (_rule_background)
        with relabel({"light.": "background."}):
            background = light.blackbody(bg.get("temperature_K", 300.0), bg.get("field_of_view_deg", 90.0),
                                         bg.get("emissivity", 1.0), f_number=bg.get("f_number"),
                                         cuton_nm=bg.get("cuton_nm"), cutoff_nm=bg.get("cutoff_nm"))
        if "cuton_nm" in bg or "cutoff_nm" in bg:
            _check_filter_band(sc, mat, background.wavelength_nm[0], background.wavelength_nm[-1])
    recomb = None
    if "light" in sc.data or "recombination" in sc.data or "background" in sc.data:
        from .recombination import Recombination
        recomb = Recombination.from_table(sc.section("recombination"))
    _validate_point_fields(sc)
    return Setup(sc, mat, float(thickness_um) * 1e-4, spectrum, background, recomb, sc.section("optics"))


def _check_filter_band(sc: Scenario, material, lo_nm: float, hi_nm: float) -> None:
    """InputError unless the cold-filter band [lo_nm, hi_nm] overlaps the absorber's response.

    Response: from the shortest wavelength of the optical data to the gap
    cut-off hc/Eg(T), at every temperature of the run (scenario value and swept values) [nm].
    """
    from .constants import hc_eV_nm
    from .materials import shortest_wavelength_nm
    temps = [np.atleast_1d(a.values) for a in sc.sweep if a.key == "absorber.temperature_K"]
    T = np.concatenate(temps) if temps else np.array([float(sc.get("absorber.temperature_K", 300.0))])
    T = T[np.isfinite(T) & (T > 0)]
    if T.size:
        T = T[np.asarray(material.bandgap_eV(T), dtype=float) > 0]    # a closed gap is its own InputError later
    if T.size == 0:
        return
    cut = float(np.max(hc_eV_nm / np.asarray(material.bandgap_eV(T), dtype=float)))
    short = shortest_wavelength_nm(material, T, page=sc.get("absorber.optical_page"), csv_path=_csv(sc))
    if lo_nm >= cut:
        raise InputError("background.cuton_nm", float(lo_nm),
                         f"below the absorber's cut-off wavelength {cut:.5g} nm (hc/Eg over the run's temperatures)",
                         "the filter band lies entirely beyond the material's response")
    if hi_nm <= short:
        raise InputError("background.cutoff_nm", float(hi_nm),
                         f"above {short:.5g} nm, the shortest wavelength of the absorber's optical data",
                         "the filter band lies entirely outside the material's response")


def check(sc: Scenario) -> Setup:
    """Everything `optogen check` can check without the physics: the schema (kinds, ranges,
    rules, every swept value), the model names, the material, light, background, recombination
    and detector records, and the light ceiling at the brightest swept value."""
    unit = swept_light_scaling(sc)
    setup = build(sc, unit)
    if unit is not None and setup.spectrum is not None:
        top = max(float(np.max(a.values)) for a in sc.sweep if a.key == f"light.{unit}")
        _check_irradiance(sc, setup.spectrum.irradiance_W_m2 * top)
    return setup


def swept_light_scaling(sc: Scenario) -> str | None:
    """The [light] scaling key that is swept (suns, irradiance_W_m2, ...), or None."""
    scaling = [a.key.split(".")[1] for a in sc.sweep if a.key in FAST_KEYS and a.key.startswith("light.")]
    if len(scaling) > 1:
        raise InputError("sweep", ", ".join(scaling), "at most one light scaling key swept at a time")
    return scaling[0] if scaling else None


def _validate_point_fields(sc: Scenario) -> None:
    """Checks that `optogen check` must make without running: model names against the core's
    tables (the schema checked kinds and ranges) and the [detector] record."""
    schema.check_models(sc.data)
    if "detector" in sc.data:
        from .detector import detector_from_table
        detector_from_table(sc.section("detector"))


def _scaling_key(sc: Scenario) -> str:
    """The dotted key that sets the light level (for messages)."""
    table = sc.data.get("light") or {}
    swept = [a.key for a in sc.sweep if a.key.startswith("light.") and a.key in FAST_KEYS]
    given = [f"light.{k}" for k in LIGHT_SCALING_KEYS if k in table]
    return (swept or given or ["light.source"])[0]


def _check_irradiance(sc: Scenario, irradiance_W_m2) -> None:
    """Incident irradiance at most schema.IRRADIANCE_MAX_W_m2 (1e4 suns), whatever sets it."""
    irr = np.asarray(irradiance_W_m2, dtype=float)
    bad = ~(irr <= schema.IRRADIANCE_MAX_W_m2)
    if np.any(bad):
        key = _scaling_key(sc)
        raise InputError(key, sc.get(key),
                         f"a light level of at most {schema.IRRADIANCE_MAX_W_m2:g} W m-2 incident "
                         f"({schema.SUNS_MAX:g} suns, the enforced domain)",
                         f"this source gives {float(np.max(np.where(bad, irr, -np.inf))):.4g} W m-2")


def _check_doping_sum(nd, na, field: str) -> None:
    total = np.asarray(nd, dtype=float) + np.asarray(na, dtype=float)
    bad = ~(total <= schema.DOPING_MAX_cm3)
    if np.any(bad):
        raise InputError(field, float(np.max(np.where(bad, total, -np.inf))),
                         f"a total dopant density N_D + N_A <= {schema.DOPING_MAX_cm3:g} cm-3 "
                         "(the enforced doping domain)")


def _doping(setup: Setup, values: Mapping[str, np.ndarray]):
    """Donor and acceptor densities [cm^-3] from the scenario or the swept values."""
    sc = setup.scenario
    ab = sc.section("absorber")
    if "resistivity_ohm_cm" in ab:
        from .transport import resistivity_to_doping
        rho = np.asarray(values.get("absorber.resistivity_ohm_cm", ab["resistivity_ohm_cm"]), dtype=float)
        N = resistivity_to_doping(setup.material, rho, ab["dopant"], T_K=RESISTIVITY_REFERENCE_K)
        split = (lambda N: (N, 0.0 * N)) if ab["dopant"] == "n" else (lambda N: (0.0 * N, N))
        if ab.get("incomplete_ionisation", True):
            N = _match_resistivity(setup, rho, N, split)
        _check_doping_sum(N, 0.0, "absorber.resistivity_ohm_cm")
        return split(N)
    nd = values.get("absorber.donors_cm3", ab.get("donors_cm3", 0.0))
    na = values.get("absorber.acceptors_cm3", ab.get("acceptors_cm3", 0.0))
    return np.asarray(nd, dtype=float), np.asarray(na, dtype=float)


def _equilibrium_kwargs(setup: Setup) -> dict:
    ab = setup.scenario.section("absorber")
    return dict(donor=ab.get("donor_species"), acceptor=ab.get("acceptor_species"), ni_model=ab.get("ni_model"),
                bgn_model=getattr(setup.recombination, "bgn_model", None),
                incomplete_ionisation=ab.get("incomplete_ionisation", True))


def _match_resistivity(setup: Setup, rho, N, split, iterations: int = 20):
    """Dopant density whose dark conductivity, with incomplete ionisation, is 1/rho at 300 K.

    Starts from the full-ionisation answer (ASTM F723 convention) and rescales N by
    (1/rho) / sigma(N) until they agree to 1e-12 (a few steps: sigma is nearly linear in N).
    """
    from .equilibrium import equilibrium
    from .transport import conductivity_S_cm
    T = np.full(np.shape(N), RESISTIVITY_REFERENCE_K)
    for _ in range(iterations):
        nd, na = split(N)
        eq = equilibrium(setup.material, T, nd, na, **_equilibrium_kwargs(setup))
        sigma = conductivity_S_cm(eq.n0_cm3, eq.p0_cm3,
                                  *_mobilities(setup, T, nd, na, eq.n0_cm3, eq.p0_cm3))
        ratio = 1.0 / (rho * sigma)
        N = N * ratio
        if np.all(np.abs(ratio - 1.0) < 1e-12):
            break
    return N


def _generation(setup: Setup, spectrum, T, depth_cm=None):
    """Generation results over temperature T (1-D array) for one spectrum."""
    from .generation import generate
    o = setup.optics
    Tu, inv = np.unique(np.asarray(T, dtype=float), return_inverse=True)
    kw = dict(front_reflectance=o.get("front_reflectance", 0.0), rear_reflectance=o.get("rear_reflectance", 1.0),
              light_path=o.get("light_path", "lambertian"), base_dir=setup.scenario.base_dir,
              page=setup.scenario.get("absorber.optical_page"), csv_path=_csv(setup.scenario))
    if "coating" in o:
        kw["coating"] = o["coating"]
    g = generate(spectrum, setup.material, setup.thickness_cm, T_K=Tu, depth_cm=depth_cm, **kw)
    return g, inv


def _csv(sc: Scenario):
    p = sc.get("absorber.optical_csv")
    return None if p is None else sc.base_dir / p


def evaluate(setup: Setup, values: Mapping[str, np.ndarray], n: int,
             details: bool = False, trial: bool = False) -> dict[str, dict[str, np.ndarray]]:
    """All output blocks for `n` points, vectorised over the fast keys.

    values: swept fast keys -> 1-D arrays of length n [units of the key]
    details: also return curves for a single-point report (JV, lifetime, profile)
    trial: the points are trial points of a search (the background-limit scan), not the
        user's: a photodiode bias beyond a point's forward limit gives no value there
        instead of an InputError
    """
    from .equilibrium import equilibrium
    sc = setup.scenario
    ab = sc.section("absorber")
    ones = np.ones(n)
    T = ones * np.asarray(values.get("absorber.temperature_K", ab.get("temperature_K", 300.0)), dtype=float)
    for key in values:                       # swept fast values (checked at load; again for the Python API)
        check_range(key, values[key], schema.KEYS[key].low, schema.KEYS[key].high, unit=schema.KEYS[key].unit)
    check_range("absorber.temperature_K", T, schema.T_MIN_K, schema.T_MAX_K, unit="K")
    nd, na = _doping(setup, values)
    nd, na = ones * nd, ones * na
    _check_doping_sum(nd, na, "absorber.donors_cm3" if "absorber.donors_cm3" in values else "absorber.acceptors_cm3")
    rec = setup.recombination
    eq = equilibrium(setup.material, T, nd, na, **_equilibrium_kwargs(setup))
    out: dict[str, dict[str, Any]] = {"equilibrium": _block(eq.to_dict(), n)}
    extra: dict[str, Any] = {"equilibrium": eq}
    G = np.zeros(n)
    if setup.spectrum is not None:
        scale = ones
        for k in LIGHT_SCALING_KEYS:
            if f"light.{k}" in values:
                scale = ones * np.asarray(values[f"light.{k}"], dtype=float)
                check_range(f"light.{k}", scale, 0.0, schema.KEYS[f"light.{k}"].high)
        _check_irradiance(sc, setup.spectrum.irradiance_W_m2 * scale)
        g, inv = _generation(setup, setup.spectrum, T)
        gd = _block(g.to_dict(), len(np.atleast_1d(g.average_cm3_s)))
        gen = {k: np.asarray(v)[inv] * (scale if k in ("average_cm3_s", "photocurrent_mA_cm2") else 1.0)
               for k, v in gd.items()}
        G = G + gen["average_cm3_s"]
        out["light"] = {"irradiance_W_m2": setup.spectrum.irradiance_W_m2 * scale,
                        "photon_flux_cm2_s": setup.spectrum.photon_flux_cm2_s * scale}
        out["generation"] = gen
        extra["generation"] = g
    if setup.background is not None:
        gb, inv = _generation(setup, setup.background, T)
        bg = np.asarray(gb.average_cm3_s)[inv]
        G = G + bg
        out.setdefault("generation", {"average_cm3_s": np.zeros(n), "photocurrent_mA_cm2": np.zeros(n),
                                      "absorbed_fraction": np.full(n, np.nan)})
        out["generation"]["background_average_cm3_s"] = bg
    elif "generation" in out:
        out["generation"]["background_average_cm3_s"] = np.full(n, np.nan)
    if setup.spectrum is not None:
        _warn_unabsorbed(setup, T, out["generation"], out["light"])
    if rec is not None:
        from .steady_state import DN_MAX_CM3, solve
        ss = solve(setup.material, eq, rec, G, setup.thickness_cm)
        notes = []
        if np.any(~np.asarray(ss.converged)):
            notes.append(f"{int(np.sum(~np.asarray(ss.converged)))} operating point(s) did not converge (no root of "
                         f"G = U with 1e-304 < delta n < {DN_MAX_CM3:.0e} cm-3, the range the models support)")
        if setup.spectrum is not None:
            frac = _inverted_fraction(setup, g, inv, np.ravel(ss.splitting_eV))
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
        if np.any(falling) and not details:     # a single point says it with its implied J-V (_point_details)
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
            out["detector"] = _detector_block(setup, eq, ss, T, nd, na, out, trial)
    if details:
        out["_details"] = extra
    return out


def _inversion_reason(setup: Setup, g, inv, eq, ss, inverted) -> str:
    """Why the first point in `inverted` is outside the model, with its numbers (one clause) [-].

    Dark Fermi level within 3 kT of a band or inside it: band filling (degenerate dark carriers);
    else the absorbed photons' median energy against the gap (sub-gap tail) and the splitting.
    """
    from .constants import hc_eV_nm, kT_eV
    from .generation import trapezoid_weights
    from .steady_state import DEGENERATE_KT
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


#: largest fraction of the absorbed photons allowed below the splitting [-] (our choice:
#: beyond it the linear absorption that gives G no longer describes the point)
INVERSION_LIMIT = 0.01


def _inverted_fraction(setup: Setup, g, inv, splitting_eV):
    """Fraction of the absorbed [light] photons with h nu <= the splitting, per point [-].

    Such photons see net gain instead of absorption once the quasi-Fermi levels are
    split by more than their energy (Bernard & Duraffourg, Phys. Status Solidi 1, 699
    (1961), from memory); the generation model, linear absorption, is then wrong for them.
    """
    from .constants import hc_eV_nm
    from .generation import trapezoid_weights
    wl = np.asarray(g.wavelength_nm, dtype=float)
    absorbed = np.reshape(g.absorbed_photon_flux_cm2_s_nm, (-1, wl.size)) * trapezoid_weights(wl)
    e_asc = (hc_eV_nm / wl)[::-1]                             # photon energies, rising [eV]
    cum = np.cumsum(absorbed[:, ::-1], axis=1)
    total = cum[:, -1]
    k = np.searchsorted(e_asc, np.nan_to_num(splitting_eV, nan=-np.inf), side="right")
    rows = np.asarray(inv).reshape(-1)
    below = np.where(k > 0, cum[rows, np.maximum(k - 1, 0)], 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total[rows] > 0, below / np.where(total[rows] > 0, total[rows], 1.0), 0.0)


def _invalidate(ss, bad):
    """The steady state with the points `bad` flagged converged = False and their levels NaN."""
    from .steady_state import _NAN_WHEN_UNCONVERGED
    shape = np.shape(ss.converged)
    bad = np.reshape(bad, shape)
    changes = {k: np.where(bad, np.nan, getattr(ss, k)) for k in _NAN_WHEN_UNCONVERGED}
    changes["converged"] = np.asarray(ss.converged) & ~bad
    changes["degenerate"] = np.asarray(ss.degenerate) & ~bad
    if shape == ():
        changes = {k: v[()] for k, v in changes.items()}
    return dataclasses.replace(ss, **changes)


class DegenerateWarning(UserWarning):
    """A splitting above the band gap: degenerate carriers (Fermi-Dirac statistics)."""


class PhysicsNoteWarning(UserWarning):
    """A quantity is null because it does not apply (light below the gap, no mobilities, ...)."""


def _warn_unabsorbed(setup: Setup, T, gen, light) -> None:
    """Warn where incident light is not absorbed at all, naming the light against the cut-off wavelength."""
    from .constants import hc_eV_nm
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
    from . import profile as pr
    from .materials import optical_constants
    from .steady_state import state_at
    from .transport import ambipolar_diffusivity_cm2_s, diffusivity_cm2_s
    sc, mat, rec, W = setup.scenario, setup.material, setup.recombination, setup.thickness_cm
    plane = str(sc.get("solver.voc_plane", "front")).lower()
    n0, p0 = (np.ravel(getattr(eq, k)) for k in ("n0_cm3", "p0_cm3"))
    col = _column(eq)

    def d_amb(dn):
        n, p = n0[:, None] + dn, p0[:, None] + dn
        mu_e, mu_h = _mobilities(setup, T[:, None], nd[:, None], na[:, None], n, p)
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
            from .recombination import surface_j0_flux_cm2_s
            check_range(f"recombination.{side}_J0_fA_cm2", j0, 0.0, None, unit="fA/cm^2")
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
                           page=sc.get("absorber.optical_page"), csv_path=_csv(sc))
    alpha = np.ravel(oc.alpha_cm1)
    absorbed = (alpha > 0) & (1.0 / np.where(alpha > 0, alpha, 1.0) < W)
    with np.errstate(invalid="ignore"):          # NaN at unconverged points: ignored here
        Ls = np.sqrt(np.ravel(d_amb(np.ravel(ss.delta_n_cm3)[:, None]))[: T.size] * np.ravel(ss.tau_eff_s))
    L = float(np.nanmin(Ls)) if np.any(np.isfinite(Ls)) else np.nan
    lengths = np.append(1.0 / alpha[absorbed], L if np.isfinite(L) else W)
    wl = np.append(spec.wavelength_nm[carried][absorbed], np.nan)
    x = pr.mesh(W, int(sc.get("solver.nodes", 200)), lengths, wavelength_nm=wl)
    g, inv = _generation(setup, spec, T, depth_cm=x)
    G = np.reshape(g.profile_cm3_s, (-1, x.size))[inv] * np.asarray(scale)[:, None]
    if setup.background is not None:
        gb, invb = _generation(setup, setup.background, T, depth_cm=x)
        G = G + np.reshape(gb.profile_cm3_s, (-1, x.size))[invb]
    sol = pr.solve_profile(x, G, pr.with_derivative(bulk), pr.with_derivative(d_amb),
                           surface("front"), surface("rear"))
    dn_x = sol.delta_n_cm3
    i = VOC_PLANES[plane]
    st = state_at(mat, eq, rec, dn_x[:, i], W)
    # lifetimes from depth-integrated losses: tau_x = <dn> W / integral(U_x dx)
    avg = sol.average_cm3()
    r = rec.rates(mat, col, dn_x, W)
    losses = {"srh": r["srh"] @ sol.control_volume_cm, "radiative": r["radiative"] @ sol.control_volume_cm,
              "auger": r["auger"] @ sol.control_volume_cm, "surface": sol.front_loss_cm2_s + sol.rear_loss_cm2_s}
    with np.errstate(divide="ignore", invalid="ignore"):
        taus = {k: np.where(v > 0, avg * W / np.where(v > 0, v, 1.0), np.inf) for k, v in losses.items()}
        tau_eff = np.where(sol.generation_cm2_s > 0, avg * W / sol.generation_cm2_s, ss.tau_eff_s)
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


def _mobilities(setup, T, nd, na, n, p):
    """(mu_e, mu_h) [cm^2/Vs]; NaN where n or p is NaN (an unconverged point).

    A material without mobilities for its model raises one InputError naming the
    missing `absorber.custom.mobility_*` field and what needs it (see `has_mobilities`).
    """
    from .transport import mobility_cm2_Vs
    missing = _missing_mobility(setup.material)
    if missing:
        raise InputError(f"absorber.custom.{missing}", None,
                         "Caughey-Thomas parameters {mu_min_cm2_Vs, mu_max_cm2_Vs, n_ref_cm3, alpha} for "
                         f"{setup.material.name}: a resistivity input, the [detector] figures and depth-resolved "
                         "runs need carrier mobilities", "without them the rest runs and photoconductance_S is null")
    n, p = np.asarray(n, dtype=float), np.asarray(p, dtype=float)
    bad = np.isnan(n) | np.isnan(p)
    if not np.any(bad):
        return mobility_cm2_Vs(setup.material, T, nd, na, n, p)
    mu_e, mu_h = mobility_cm2_Vs(setup.material, T, nd, na, np.where(bad, 0.0, n), np.where(bad, 0.0, p))
    return np.where(bad, np.nan, mu_e), np.where(bad, np.nan, mu_h)


def _missing_mobility(material) -> str | None:
    """Name of the missing Caughey-Thomas record ("mobility_e"/"mobility_h") when the model needs it."""
    from ._dispatch import pick
    from .transport import _ALIASES, MOBILITY_MODELS
    if pick("absorber.mobility_model", material.mobility_model, MOBILITY_MODELS, _ALIASES) \
            is not MOBILITY_MODELS["caughey_thomas"]:
        return None
    for k in ("mobility_e", "mobility_h"):
        if getattr(material, k, None) is None:
            return k
    return None


def _photoconductance(setup, eq, ss, T, nd, na):
    """Photoconductance [S] (sheet): `transport.photoconductance_S` with each state's own
    injection-dependent mobilities.

    Null (NaN), with a warning, for a material without mobilities; NaN at unconverged points.
    """
    from .transport import photoconductance_S
    n0, p0 = np.ravel(eq.n0_cm3), np.ravel(eq.p0_cm3)
    n, p = np.ravel(ss.n_cm3), np.ravel(ss.p_cm3)
    missing = _missing_mobility(setup.material)
    if missing:
        if np.any(n > n0):
            warnings.warn(PhysicsNoteWarning(
                f"photoconductance_S is null: {setup.material.name} has no carrier mobilities "
                f"(absorber.custom.{missing} not given)"), stacklevel=3)
        return np.full(n.shape, np.nan)
    return photoconductance_S(n0, p0, n, p, *_mobilities(setup, T, nd, na, n0, p0),
                              *_mobilities(setup, T, nd, na, n, p), setup.thickness_cm)


def _detector_block(setup, eq, ss, T, nd, na, out, trial=False) -> dict[str, np.ndarray]:
    """The `detector` JSON block: signal, background and dark currents, noise terms, D*, D*_BLIP."""
    from . import detector as det
    from .steady_state import solve
    d = det.detector_from_table(setup.scenario.section("detector"))
    rec = setup.recombination
    n = T.size
    n0, p0 = np.ravel(eq.n0_cm3), np.ravel(eq.p0_cm3)
    ln_n0, ln_p0 = np.ravel(eq.ln_n0_cm3), np.ravel(eq.ln_p0_cm3)
    dark = solve(setup.material, eq, rec, np.zeros(n), setup.thickness_cm, with_ff=False)
    tau_dark = np.ravel(dark.tau_eff_s)
    gen = out.get("generation", {})
    g_opt = gen.get("average_cm3_s", np.zeros(n))
    g_bg = gen.get("background_average_cm3_s", np.zeros(n))
    g_bg = np.where(np.isnan(g_bg), 0.0, g_bg)
    irr = out.get("light", {}).get("irradiance_W_m2", np.zeros(n))
    if d.mode == "photoconductor":
        mu_dark = _mobilities(setup, T, nd, na, n0, p0)
        mu_light = _mobilities(setup, T, nd, na, np.ravel(ss.n_cm3), np.ravel(ss.p_cm3))
        block = det.photoconductor_figures(d, setup.thickness_cm, T, n0, p0, np.ravel(ss.n_cm3),
                                           np.ravel(ss.p_cm3), mu_dark, mu_light, np.ravel(ss.tau_eff_s),
                                           tau_dark, g_opt, g_bg, irr, ln_n0_cm3=ln_n0, ln_p0_cm3=ln_p0)
    else:
        from .transport import diffusivity_cm2_s
        mu_e, mu_h = _mobilities(setup, T, nd, na, n0, p0)
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
    """Rear recombination velocity for the thin-base J0: [detector] rear_S_cm_s, else the
    [recombination] rear surface (S, or J0 as the low-injection S_eff = dUs/ddn at dn = 0 of
    `recombination.surface_j0_flux_cm2_s` = J0(T) (n0 + p0) / (q n0 p0), which is J0 N / (q n_i^2)
    when extrinsic and finite for an intrinsic base; D. E. Kane and R. M. Swanson, Proc. 18th
    IEEE PVSC (1985) 578, from memory), else 0 (a perfect rear) [cm/s]."""
    from .recombination import surface_j0_flux_cm2_s
    if d.rear_S_cm_s is not None:
        return d.rear_S_cm_s
    if rec.rear_S_cm_s is not None:
        return rec.rear_S_cm_s
    j0 = rec.j0_at_fA_cm2(material, T, "rear")        # already carried to T (j0_at_temperature_fA_cm2)
    if j0 is None:
        return 0.0
    # S_eff = dUs/ddn at dn = 0 of the one J0 law (dark reference n0 p0, as in the rates)
    return surface_j0_flux_cm2_s(np.exp(np.ravel(eq.ln_n0_cm3)), np.exp(np.ravel(eq.ln_p0_cm3)), 0.0, j0,
                                 J0_reference_K=None, derivative=True)[1]


def background_limit(setup: Setup, T_low_K: float = 20.0, T_high_K: float = 400.0):
    """Temperature where the pixel becomes background-limited (root solve over temperature).

    Background-limited means the background photon noise exceeds all other
    noise together (`detector.background_limited`); the crossing is where the
    two are equal, i.e. D*/D*_BLIP = 1/sqrt(2).  Both from the full pipeline at
    each trial temperature.  Returns `detector.BackgroundLimit` (temperature_K, found, note).
    """
    from .detector import background_limit_temperature_K, noise_without_A_Hz05

    import warnings

    def fn(T):
        T = np.atleast_1d(np.asarray(T, dtype=float))
        with warnings.catch_warnings():     # the scan's own trial temperatures are not the run's points
            warnings.simplefilter("ignore", DegenerateWarning)
            warnings.simplefilter("ignore", PhysicsNoteWarning)
            b = evaluate(setup, {"absorber.temperature_K": T}, T.size, trial=True)["detector"]
        total, bg = b["noise_total_A_Hz05"], b["noise_background_A_Hz05"]
        return np.maximum(noise_without_A_Hz05(total, bg), 1e-300), bg
    return background_limit_temperature_K(fn, T_low_K, T_high_K)


def _block(d: Mapping[str, Any], n: int) -> dict[str, np.ndarray]:
    """Flatten a to_dict() block to arrays of length n ("tau_s.srh" for nested keys)."""
    flat: dict[str, Any] = {}
    for k, v in d.items():
        if isinstance(v, Mapping):
            for k2, v2 in v.items():
                flat[f"{k}.{k2}"] = v2
        else:
            flat[k] = v
    res = {}
    for k, v in flat.items():
        if isinstance(v, str) or np.asarray(v).dtype.kind == "U" or any(
                isinstance(x, str) for x in np.ravel(np.asarray(v, dtype=object))):
            res[k] = np.broadcast_to(np.asarray(v, dtype=object), (n,)).copy()
            continue
        a = np.asarray(v, dtype=object)
        a = np.where(a == None, np.nan, a).astype(float)  # noqa: E711 (elementwise None test)
        res[k] = np.broadcast_to(a, (n,)).copy() if a.ndim == 0 or a.size == 1 else a.reshape(-1)
    return res


# ---------------------------------------------------------------------------
# Running a scenario
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Result:
    """The outcome of a scenario: a labelled Dataset plus single-point details.

    dataset: one dimension per swept key (none for a single point); every
        JSON quantity as a variable with a `units` attribute
    details: for a single point, the core objects (equilibrium, generation,
        steady state, ...) behind the numbers, for curves and plots
    """

    scenario: Scenario
    dataset: xr.Dataset
    details: Mapping[str, Any] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    @property
    def is_sweep(self) -> bool:
        return bool(self.scenario.sweep)

    def to_dataset(self) -> xr.Dataset:
        return self.dataset

    def to_dict(self) -> dict:
        """Nested JSON-ready blocks (DESIGN.md keys); null where a quantity does not apply."""
        out: dict[str, Any] = {"title": self.scenario.title, "version": __version__}
        if self.is_sweep:
            out["sweep"] = {a.key: a.values.tolist() for a in self.scenario.sweep}
        for name, da in self.dataset.data_vars.items():
            block, key = da.attrs.get("block"), da.attrs.get("key")
            if not block:
                continue
            node = out.setdefault(block, {})
            if "." in key:
                outer, inner = key.split(".", 1)
                node = node.setdefault(outer, {})
                key = inner
            node[key] = _jsonable(da.values)
        if self.warnings:
            out["warnings"] = list(self.warnings)
        return out


def _jsonable(a):
    a = np.asarray(a)
    if a.dtype.kind == "b":
        return a.tolist()
    if a.dtype.kind in "UO":
        return a.tolist()
    if a.ndim == 0:
        v = float(a)
        return None if not math.isfinite(v) else v
    return [_jsonable(x) for x in a]


def run(scenario: Scenario, *, progress: bool | None = None, workers: int | None = None,
        scheduler: str | None = None, chunk_size: int | None = None) -> Result:
    """Run a scenario: a single point, or every point of its sweep grid.

    progress: show a tqdm bar (None: only on a terminal, after about 1 s) [-]
    workers: run the chunks on a local dask cluster with this many workers [-]
    scheduler: address of an existing dask.distributed scheduler [-]
    chunk_size: points per chunk (default from [solver] chunk_size or 100000) [-]
    """
    sc = scenario
    if not sc.sweep:
        setup = build(sc)
        blocks = evaluate(setup, {}, 1, details=True)
        details = blocks.pop("_details")
        details.update(_point_details(setup, details, blocks))
        if "implied_jv" in details:
            jv = details["implied_jv"]
            blocks["implied_jv"] = {"voc_V": np.ravel(jv.voc_V), "vmp_V": np.ravel(jv.vmp_V),
                                    "jmp_mA_cm2": np.ravel(jv.jmp_mA_cm2), "ff": np.ravel(jv.ff),
                                    "pmax_mW_cm2": np.ravel(jv.pmax_mW_cm2),
                                    "efficiency": np.ravel(np.nan if jv.efficiency is None else jv.efficiency)}
        ds = _dataset(blocks, (), [])
        ds = ds.isel({"point": 0}) if "point" in ds.dims else ds
        _attrs(ds, sc)
        _background_limit_attrs(ds, setup)
        return Result(sc, ds, details, tuple(details.get("warnings", ())))

    chunk = chunk_size if chunk_size is not None else sc.get("solver.chunk_size", DEFAULT_CHUNK)
    chunk = schema.check_value("solver.chunk_size", chunk)
    if sc.get("solver.depth_resolved", False) is True or any(
            a.key == "solver.depth_resolved" and bool(np.any(a.values)) for a in sc.sweep):
        chunk = min(chunk, max(1, MAX_PROFILE_CELLS // MAX_PROFILE_NODES))   # bounded Newton working memory
    axes = list(sc.sweep)
    unit_scaling = swept_light_scaling(sc)
    fast = [a for a in axes if a.key in FAST_KEYS]
    slow = [a for a in axes if a.key not in FAST_KEYS]
    fast_grid = np.meshgrid(*[a.values for a in fast], indexing="ij") if fast else []
    fast_flat = {a.key: g.reshape(-1) for a, g in zip(fast, fast_grid)}
    n_fast = int(np.prod([a.values.size for a in fast])) if fast else 1
    slow_combos = list(itertools.product(*[range(a.values.size) for a in slow]))

    client = _dask_client(workers, scheduler) if (workers or scheduler) else None
    total = len(slow_combos) * n_fast
    merged: dict[str, dict[str, np.ndarray]] = {}     # filled in place: no second copy of the grid

    def store(offset, part):
        for block, vals in part.items():
            for k, v in vals.items():
                dest = merged.setdefault(block, {})
                if k not in dest:       # a block absent from some groups stays NaN / "" there
                    dest[k] = (np.full(total, np.nan) if v.dtype.kind == "f"
                               else np.full(total, "", dtype=object) if v.dtype.kind in "OU"
                               else np.zeros(total, dtype=v.dtype))
                dest[k][offset:offset + v.size] = v

    warnings: list[str] = []
    bar = _progress(progress, total=len(slow_combos) * math.ceil(n_fast / chunk))
    try:
        for g, combo in enumerate(slow_combos):
            fixed = {a.key: np.asarray(a.values[i]).item() for a, i in zip(slow, combo)}
            sc_g = sc.with_values(fixed) if fixed else sc
            setup = build(sc_g, unit_scaling)
            if client is None:
                for start in range(0, n_fast, chunk):
                    sl = slice(start, min(start + chunk, n_fast))
                    store(g * n_fast + start,
                          evaluate(setup, {k: v[sl] for k, v in fast_flat.items()}, sl.stop - sl.start))
                    bar.update(1)
            else:
                store(g * n_fast, _evaluate_dask(client, setup, fast_flat, n_fast, chunk))
                bar.update(math.ceil(n_fast / chunk))
    finally:
        bar.close()
        if client is not None:
            cluster = client.cluster if not scheduler else None
            client.close()
            if cluster is not None:
                cluster.close()
    if "steady_state" in merged and "converged" in merged["steady_state"]:
        bad = int(np.sum(merged["steady_state"]["converged"] == 0))
        if bad:
            warnings.append(f"{bad} operating point(s) did not converge or are outside the model "
                            "(the reasons are in the warnings); see the 'converged' variable")
    # reorder from (slow..., fast...) to the scenario's axis order
    order = slow + fast
    perm = [order.index(a) for a in axes]
    shape = [a.values.size for a in order]
    merged = {b: {k: np.transpose(v.reshape(shape), perm).reshape(-1) for k, v in vals.items()}
              for b, vals in merged.items()}
    ds = _dataset(merged, [a.values.size for a in axes], axes)
    _attrs(ds, sc)
    if not slow:
        _background_limit_attrs(ds, setup)
    return Result(sc, ds, {}, tuple(warnings))


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
    from .constants import hc_eV_nm
    from .detector import spectral_response
    from .light import Spectrum
    from .materials import shortest_wavelength_nm
    sc = setup.scenario
    T = float(sc.get("absorber.temperature_K", 300.0))
    cut = hc_eV_nm / float(setup.material.bandgap_eV(T))
    short = shortest_wavelength_nm(setup.material, T, page=sc.get("absorber.optical_page"), csv_path=_csv(sc))
    lo = short * 1.0001 if short > 0 else 0.2 * cut
    wl = np.geomspace(lo, 1.3 * cut, SPECTRAL_POINTS)
    g, _ = _generation(setup, Spectrum(wl, np.ones_like(wl), "flat probe"), np.array([T]))
    gain = float(np.ravel(blocks["detector"].get("photoconductive_gain", [1.0]))[0])
    return spectral_response(g.wavelength_nm, np.ravel(np.asarray(g.absorptance)[0]), gain)


def _point_details(setup: Setup, details, blocks) -> dict[str, Any]:
    """Curves behind a single point: implied J-V, lifetime against delta n, detector spectral response."""
    from .steady_state import implied_jv, lifetime_curve
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
    from .constants import q_C
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
        jv = implied_jv(setup.material, eq, rec, setup.thickness_cm, jph, irradiance_W_m2=irr if irr > 0 else None)
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


def _background_limit_attrs(ds: xr.Dataset, setup: Setup) -> None:
    """Record the background-limit temperature for a detector looking at a warm background."""
    sc = setup.scenario
    if "detector" not in sc.data or "background" not in sc.data or setup.recombination is None:
        return
    bl = background_limit(setup)
    ds.attrs["background_limit_temperature_K"] = bl.temperature_K if bl.found else float("nan")
    ds.attrs["background_limit_note"] = bl.note
    for name in ("background_limit_temperature_K", "background_limit_note"):
        ds[name] = ((), ds.attrs[name], {"units": "K" if name.endswith("_K") else "1",
                                          "block": "detector", "key": name})


def _dataset(blocks, shape, axes) -> xr.Dataset:
    dims = [a.key for a in axes] if axes else ["point"]
    shape = list(shape) if axes else [-1]
    data_vars = {}
    for block, vals in blocks.items():
        for key, arr in vals.items():
            name = var_name(block, key)
            arr = np.asarray(arr)
            if name == "converged":
                arr = arr.astype(bool)
            data_vars[name] = (dims, arr.reshape(shape),
                               {"units": unit_of(name), "block": block, "key": key})
    coords = {a.key: (a.key, a.values, {"units": a.unit}) for a in axes} if axes else {}
    return xr.Dataset(data_vars, coords=coords)


def _attrs(ds: xr.Dataset, sc: Scenario) -> None:
    ds.attrs.update({
        "title": sc.title,
        "scenario": sc.text,
        "optogen_version": __version__,
        "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "swept_keys": ", ".join(a.key for a in sc.sweep) or "(single point)",
    })


def _progress(progress, total):
    import sys
    from tqdm.auto import tqdm
    disable = (not sys.stderr.isatty()) if progress is None else (not progress)
    return tqdm(total=total, disable=disable, delay=1.0, unit="chunk", desc="optogen sweep")


def _dask_client(workers, scheduler):
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:  # pragma: no cover - depends on the installation
        raise InputError("--workers/--scheduler", workers or scheduler,
                         "needs dask and distributed: pip install 'optogen[dask]'") from None
    if scheduler:
        return Client(scheduler)
    if isinstance(workers, bool) or not isinstance(workers, int) or not 1 <= workers <= MAX_WORKERS:
        raise InputError("--workers", workers, f"an integer from 1 to {MAX_WORKERS}")
    check = workers
    cluster = LocalCluster(n_workers=check, threads_per_worker=1, processes=True, dashboard_address=None)
    return Client(cluster)


def _evaluate_dask(client, setup, fast_flat, n_fast, chunk):
    """The same chunks as the in-process path, as an xarray.map_blocks over dask arrays.

    The swept fast values form a Dataset chunked along "point" with the same
    chunk size as the in-process loop, so every chunk sees the same inputs and
    the answers are identical.
    """
    probe = evaluate(setup, {k: v[:1] for k, v in fast_flat.items()}, 1)
    names = [(b, k) for b in probe for k in probe[b]]
    inputs = xr.Dataset({f"in{i}": ("point", v) for i, v in enumerate(fast_flat.values())},
                        coords={"point": np.arange(n_fast)}).chunk({"point": chunk})
    template = xr.Dataset({f"v{j}": ("point", np.empty(n_fast, dtype=probe[b][k].dtype))
                           for j, (b, k) in enumerate(names)},
                          coords={"point": np.arange(n_fast)}).chunk({"point": chunk})
    keys = list(fast_flat)

    def block(ds_in: xr.Dataset) -> xr.Dataset:
        n = ds_in.sizes["point"]
        res = evaluate(setup, {k: ds_in[f"in{i}"].values for i, k in enumerate(keys)}, n)
        return xr.Dataset({f"v{j}": ("point", res[b][k]) for j, (b, k) in enumerate(names)},
                          coords={"point": ds_in["point"].values})

    if not keys:   # a sweep of slow keys only: one point per group
        return evaluate(setup, {}, n_fast)
    out = xr.map_blocks(block, inputs, template=template).compute(scheduler=client)
    merged: dict[str, dict[str, np.ndarray]] = {}
    for j, (b, k) in enumerate(names):
        merged.setdefault(b, {})[k] = out[f"v{j}"].values
    return merged
