"""`analyse`: a scenario with a `[measurement]` section -> `AnalysisResult`; the `optogen analyse` command.

Steps (each in its own module, each calling the forward physics):
read the data (`data`), convert a photoconductance record (`photoconductance`), build the sample
(`sample`), remove the intrinsic rate (`intrinsic`), J0 by Kane & Swanson and by the global fit
(`j0`), the level by IDLS (`ids`), implied Voc/FF (`implied`), iron (`iron`), uncertainties
(`uncertainty`).  The lead wires `add_subcommand(subparsers)` and `main(args)` into optogen/cli.py.
"""
from __future__ import annotations

import copy
import dataclasses
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

import numpy as np

from optogen import schema
from optogen.constants import q_C
from optogen.errors import InputError
from optogen.recombination import j0_at_temperature_fA_cm2
from optogen.scenario import UNIT_SUFFIXES, Scenario, load_scenario, parse_overrides, read_toml

from . import keys as _keys
from .data import LifetimeData, folder_files, read_lifetime_csv, read_record_csv
from .ids import Dpss, ids_with_j0_uncertainty
from .implied import GRID_CM3, implied_from_rates, measured_rate, model_rates, splitting_on_grid_eV
from .intrinsic import above_intrinsic_limit, corrected_inverse_lifetime_s
from .iron import IronResult, iron_density_zoth_bergholz1990
from .j0 import Z95, GlobalFit, KaneSwanson, fit_global, kane_swanson_in_window
from .model import mechanisms
from .photoconductance import lifetime_from_record
from .sample import Sample, one_sun_photocurrent_mA_cm2, sample_from_scenario
from .uncertainty import bootstrap_samples, parameter_samples, quadrature

MECHANISM_NAMES = ("srh", "surface", "auger", "radiative")
OWN_SECTIONS = _keys.OWN_SECTIONS


# ---------------------------------------------------------------------------
# Reading the scenario: [measurement] and [uncertainty] checked here, the rest by optogen.scenario
# ---------------------------------------------------------------------------

def _check_section(name: str, table) -> dict:
    """One of the two analysis sections checked against the schema (`optogen.schema.check_table`)."""
    if not isinstance(table, Mapping):
        raise InputError(name, table, f"a table ([{name}])")
    schema.check_table(name, table)
    return {k: schema.check_value(f"{name}.{k}", v) for k, v in table.items()}


def load(source, overrides: Mapping[str, Any] | None = None, *, base_dir=None):
    """(Scenario without the two analysis sections, measurement table, uncertainty table).

    source: a path to a .toml file, TOML text, a parsed table or a `Scenario` [-];
    overrides: dotted keys -> values, as ``--set`` (``measurement.*`` and ``uncertainty.*`` too) [-].
    The two sections are checked against their schema keys here; the rest of the scenario by
    `optogen.scenario.load_scenario` (which refuses them: a forward run has no measurement).
    The returned Scenario keeps the source text (with both sections) and path, for the files.
    """
    base = Path(base_dir) if base_dir is not None else None
    text, where = "", "<text>"
    if isinstance(source, Scenario):
        data, base = copy.deepcopy(dict(source.data)), base or source.base_dir
        text, where = source.text, source.path
    elif isinstance(source, Mapping):
        data = copy.deepcopy(dict(source))
    else:
        data, text, where, own_base = read_toml(source)
        base = base or (own_base if where != "<text>" else None)
    own = {}
    for name in OWN_SECTIONS:
        table = data.pop(name, None)
        if table is not None and not isinstance(table, Mapping):
            raise InputError(name, table, f"a table ([{name}])")
        own[name] = dict(table or {})
    rest_over = {}
    for k, v in dict(overrides or {}).items():
        head = k.split(".")[0]
        if head in OWN_SECTIONS:
            own[head][k.split(".", 1)[1] if "." in k else ""] = v
        else:
            rest_over[k] = v
    own = {name: _check_section(name, t) for name, t in own.items()}
    if "file" not in own["measurement"]:
        raise InputError("measurement.file", None, "the CSV of the measurement (relative to the scenario)",
                         "a [measurement] section with file = \"...\"")
    sc = load_scenario(data, rest_over or None, base_dir=base)
    sc = dataclasses.replace(sc, text=text, path=where)
    return sc, own["measurement"], own["uncertainty"]


def check(source, overrides: Mapping[str, Any] | None = None, *, base_dir=None) -> str:
    """Everything `optogen check` can check of an analysis scenario without analysing: the schema
    (both analysis sections and the rest), the set-up (`pipeline.check`: material, models, optics)
    and the data file(s) (read and checked line by line).  Returns a one-line summary [-]."""
    from optogen.pipeline import check as forward_check
    sc, meas, _ = load(source, overrides, base_dir=base_dir)
    forward_check(sc)
    kind = _opt(meas, "measurement", "kind")
    path = sc.base_dir / meas["file"]
    n = read_lifetime_csv(path).delta_n_cm3.size if kind == "lifetime" else read_record_csv(path).time_s.size
    if "dissociated_file" in meas:
        read_lifetime_csv(sc.base_dir / meas["dissociated_file"], "measurement.dissociated_file")
    return f"analysis scenario, {kind} data {Path(meas['file']).name} ({n} rows): run it with optogen analyse"


def _opt(table, section, name):
    return table.get(name, _keys.default(f"{section}.{name}"))


# ---------------------------------------------------------------------------
# The result
# ---------------------------------------------------------------------------

@dataclass(eq=False)
class AnalysisResult:
    """Everything the analysis found; `to_dict` gives the JSON, `summary` the text, `write` the files."""

    title: str
    sample: Sample
    data: LifetimeData
    kind: str
    mech: Any
    inverse_corrected_s: np.ndarray
    kane_swanson: KaneSwanson | None
    kane_swanson_note: str | None
    fit: GlobalFit
    ids: Dpss | None
    implied: dict
    contributions: dict
    uncertainty: dict
    iron: IronResult | None = None
    notes: list = field(default_factory=list)
    record: Any = None
    ids_fit: Any = None
    scenario: Any = None            #: the Scenario (without the two analysis sections; its text has them)
    settings: dict = field(default_factory=dict)     #: the checked [measurement] and [uncertainty] tables

    # -- JSON ----------------------------------------------------------------
    def to_dict(self) -> dict:
        """Plain JSON-ready dict (non-finite numbers -> None), keys with unit suffixes."""
        b = self.fit.best
        s = self.sample
        u = self.uncertainty
        ref_K = j0_reference_K(s)

        def at_ref(j0):
            return None if ref_K is None or j0 is None else float(j0_at_reference_fA_cm2(s, j0))
        out = {
            "title": self.title,
            "sample": {"material": s.material.name, "type": s.kind, "donors_cm3": s.donors_cm3,
                       "acceptors_cm3": s.acceptors_cm3, "thickness_um": s.thickness_cm * 1e4,
                       "temperature_K": s.temperature_K, "n0_cm3": s.n0_cm3, "p0_cm3": s.p0_cm3,
                       "intrinsic_model": s.intrinsic.intrinsic_model(s.material)},
            "data": {"file": self.data.path, "kind": self.kind, "points": int(self.data.delta_n_cm3.size),
                     "delta_n_min_cm3": float(self.data.delta_n_cm3.min()),
                     "delta_n_max_cm3": float(self.data.delta_n_cm3.max())},
            "J0_fA_cm2": {"measurement_temperature_K": s.temperature_K,
                          "global_fit": b.J0_fA_cm2, "global_fit_std": u["J0_std_fA_cm2"],
                          "global_fit_ci95": list(u["J0_ci95_fA_cm2"]),
                          "reference_temperature_K": ref_K,
                          "global_fit_at_reference": at_ref(b.J0_fA_cm2),
                          "global_fit_at_reference_std": at_ref(u["J0_std_fA_cm2"]),
                          "global_fit_at_reference_ci95": [at_ref(v) for v in u["J0_ci95_fA_cm2"]],
                          "kane_swanson1985": None if self.kane_swanson is None else self.kane_swanson.J0_fA_cm2,
                          "kane_swanson1985_std": None if self.kane_swanson is None
                          else self.kane_swanson.J0_std_fA_cm2,
                          "kane_swanson1985_window_cm3": None if self.kane_swanson is None
                          else list(self.kane_swanson.window_cm3),
                          "kane_swanson1985_at_reference": None if self.kane_swanson is None
                          else at_ref(self.kane_swanson.J0_fA_cm2),
                          "kane_swanson1985_at_reference_std": None if self.kane_swanson is None
                          else at_ref(self.kane_swanson.J0_std_fA_cm2),
                          "kane_swanson1985_note": self.kane_swanson_note,
                          "note": "sum of both surfaces; global_fit and kane_swanson1985 at the measurement "
                                  "temperature, *_at_reference carried to recombination.J0_reference_K by "
                                  "n_i^2(T_ref)/n_i^2(T) (null when J0_reference_K = false)"},
            "srh": {"level_eV": b.level_eV, "level_held": b.half == "fixed", "branch": b.half,
                    "level_interval_eV": list(b.level_interval_eV),
                    "tau_n0_s": b.tau_n0_s, "tau_n0_std_s": u["tau_n0_std_s"],
                    "tau_p0_s": b.tau_p0_s, "tau_p0_std_s": u["tau_p0_std_s"],
                    "k": b.capture_ratio_k(s.material, s.temperature_K),
                    "tau_bulk_1sun_s": self.implied["tau_srh_1sun_s"], "at_bound": list(b.at_bound),
                    "chi2": b.chi2, "dof": b.dof,
                    "branches": [{"half": br.half, "level_eV": br.level_eV, "level_interval_eV": list(br.level_interval_eV),
                                  "J0_fA_cm2": br.J0_fA_cm2, "tau_n0_s": br.tau_n0_s, "tau_p0_s": br.tau_p0_s,
                                  "chi2": br.chi2} for br in self.fit.branches]},
            "ids_rein2005": None if self.ids is None else {
                "curves": self.ids.curves,
                "branches": [dataclasses.asdict(br) for br in self.ids.branches]},
            "implied": {k: v for k, v in self.implied.items() if not isinstance(v, np.ndarray)},
            "uncertainty": {k: v for k, v in u.items() if not isinstance(v, np.ndarray)},
            "limiting_mechanism_1sun": self.contributions["limiting"],
            "recombination_share_1sun": self.contributions["share"],
            "implied_voc_gain_without_mV": self.contributions["gain_mV"],
            "iron": None if self.iron is None else {
                "density_cm3": self.iron.density_cm3, "density_std_cm3": self.iron.density_std_cm3,
                "crossover_cm3": self.iron.crossover_cm3, "points": int(self.iron.delta_n_cm3.size)},
            "notes": list(self.notes),
        }
        return _jsonable(out)

    # -- text ----------------------------------------------------------------
    def summary(self) -> str:
        """Terminal summary: J0, tau_bulk, the defect branches, iVoc/iFF with uncertainties, the limit."""
        s, b, u, im = self.sample, self.fit.best, self.uncertainty, self.implied
        dop = f"N_A = {s.acceptors_cm3:.3g}" if s.kind == "p" else f"N_D = {s.donors_cm3:.3g}"
        lines = [f"optogen analysis: {self.title}",
                 f"Sample: {s.kind}-type {s.material.name}, {dop} cm^-3, W = {s.thickness_cm * 1e4:.4g} um, "
                 f"{s.temperature_K:g} K; {self.kind} data {Path(self.data.path).name}: {self.data.delta_n_cm3.size} "
                 f"points, dn {self.data.delta_n_cm3.min():.3g}-{self.data.delta_n_cm3.max():.3g} cm^-3",
                 f"J0 (both surfaces, global fit, at {s.temperature_K:g} K): {_pm(b.J0_fA_cm2, u['J0_std_fA_cm2'])} fA cm^-2 "
                 f"(95 % CI {u['J0_ci95_fA_cm2'][0]:.3g}-{u['J0_ci95_fA_cm2'][1]:.3g})"
                 if "J0" not in b.at_bound and np.isfinite(u["J0_std_fA_cm2"]) else
                 f"J0 (both surfaces, global fit): not resolved by these data (the fit runs to {b.J0_fA_cm2:.3g} "
                 "fA cm^-2: the surface term is too small, or, in low injection, indistinguishable from SRH)"]
        ref_K = j0_reference_K(s)
        if ref_K is not None and ref_K != s.temperature_K:
            parts = []
            if "J0" not in b.at_bound and np.isfinite(u["J0_std_fA_cm2"]):
                parts.append("global fit " + _pm(float(j0_at_reference_fA_cm2(s, b.J0_fA_cm2)),
                                                 float(j0_at_reference_fA_cm2(s, u["J0_std_fA_cm2"]))))
            if self.kane_swanson is not None:
                ks = self.kane_swanson
                parts.append("Kane-Swanson " + _pm(float(j0_at_reference_fA_cm2(s, ks.J0_fA_cm2)),
                                                   float(j0_at_reference_fA_cm2(s, ks.J0_std_fA_cm2))))
            if parts:
                lines.append(f"J0 at the reference {ref_K:g} K (recombination.J0_reference_K; n_i^2 scaling of the "
                             f"forward model): {', '.join(parts)} fA cm^-2")
        lvl = (f"level held at Ev + {b.level_eV:.3f} eV" if b.half == "fixed"
               else f"best branch {b.half} half, Ev + {b.level_eV:.3f} eV")
        lines.append(f"Bulk SRH ({lvl}): tau_n0 = {_pm(b.tau_n0_s * 1e6, u['tau_n0_std_s'] * 1e6)} us, "
                     f"tau_p0 = {_pm(b.tau_p0_s * 1e6, u['tau_p0_std_s'] * 1e6)} us; "
                     f"tau_bulk at 1 sun = {im['tau_srh_1sun_s'] * 1e6:.4g} us")
        if b.at_bound:
            lines.append(f"  at a search bound (not constrained by the data): {', '.join(b.at_bound)}")
        if self.ids is not None and self.ids.branches:
            parts = []
            for br in self.ids.branches:
                lo, hi = br.level_interval_eV
                parts.append(f"{br.half}: Ev + {br.level_eV:.3f} eV ({lo:.3f}-{hi:.3f}), k = {br.k:.3g}, "
                             f"tau_n0 = {br.tau_n0_s * 1e6:.4g} us")
            lines.append("Defect level (IDLS, Rein 2005): " + "; ".join(parts))
            if self.ids.curves == 1:
                lines.append("  one curve fixes only two SRH combinations: the level is not determined "
                             "(use several wafers of the same defect: optogen analyse --folder)")
        lines.append(f"Implied at 1 sun (J_gen = {im['jgen_1sun_mA_cm2']:.4g} mA cm^-2): "
                     f"iVoc = {_pm(im['voc_1sun_V'] * 1e3, u['voc_1sun_std_V'] * 1e3)} mV, "
                     f"iFF = {_pm(im['ff_1sun'] * 100, u['ff_1sun_std'] * 100)} %")
        if im.get("suns") not in (None, 1.0):
            lines.append(f"Implied at {im['suns']:g} suns: iVoc = {im['voc_suns_V'] * 1e3:.2f} mV, "
                         f"iFF = {im['ff_suns'] * 100:.2f} %")
        lines.append(f"Intrinsic limit of this wafer: iVoc = {im['voc_intrinsic_V'] * 1e3:.2f} mV, "
                     f"iFF = {im['ff_intrinsic'] * 100:.2f} %; gap {(im['voc_intrinsic_V'] - im['voc_1sun_V']) * 1e3:.2f} mV")
        c = self.contributions
        lim = c["limiting"]
        gains = ", ".join(f"{m} +{c['gain_mV'][m]:.2f} mV" for m in MECHANISM_NAMES if m != lim)
        lines.append(f"Limiting at 1 sun: {lim} ({c['share'][lim] * 100:.0f} % of the recombination); without it "
                     f"iVoc would rise by {c['gain_mV'][lim]:.2f} mV (others: {gains})")
        if self.iron is not None:
            lines.append(f"Iron (Zoth & Bergholz 1990): N_Fe = {_pm(self.iron.density_cm3, self.iron.density_std_cm3)} "
                         f"cm^-3 (curves cross at {self.iron.crossover_cm3:.3g} cm^-3)")
        for n in self.notes:
            lines.append(f"Note: {n}")
        return "\n".join(lines)

    # -- files ---------------------------------------------------------------
    def write(self, outdir) -> list[Path]:
        """analysis.json, analysis.nc, lifetime_fit.csv, implied_jv.csv and the PNG plots, each atomically."""
        from optogen import report
        from . import plots
        out = Path(outdir)
        files = [report.write_json(out / "analysis.json", self.to_dict())]
        files.append(report.write_netcdf(out / "analysis.nc", self.to_dataset()))
        cur = self.curves()
        files.append(report.write_table(out / "lifetime_fit.csv", cur["lifetime"]))
        files.append(report.write_table(out / "implied_jv.csv", cur["jv"]))
        files += plots.write_all(self, out)
        return files

    def curves(self) -> dict:
        """Curves for files and plots: the measured and fitted lifetimes with each mechanism, the J-V."""
        b = self.fit.best
        dn = self.data.delta_n_cm3
        r = model_rates(self.sample, b.J0_fA_cm2, b.tau_n0_s, b.tau_p0_s, b.level_eV, dn, self.mech)
        with np.errstate(divide="ignore"):
            lt = {"delta_n_cm3": dn, "tau_measured_s": self.data.tau_s,
                  "tau_fit_s": dn / sum(v[0] for v in r.values()),
                  **{f"tau_{m}_s": dn / r[m][0] for m in MECHANISM_NAMES},
                  "inverse_corrected_s": self.inverse_corrected_s}
        im = self.implied
        return {"lifetime": lt, "jv": {"voltage_V": im["jv_voltage_V"], "current_mA_cm2": im["jv_current_mA_cm2"]}}

    def to_dataset(self, history: str | None = None):
        """xarray Dataset in the house CF-1.10 form of the forward results.

        The curves on dimensions ``delta_n`` (measured points), ``jv_point`` (implied J-V) and
        ``trap_level`` (the IDLS solution surface); every number of `to_dict` as a scalar
        variable (a 2-vector interval on ``bound``: low, high) named with its unit suffix, so
        that units and long_name come from the same rules as the forward results
        (`optogen.pipeline.result.var_attrs`, `add_attrs`); the full JSON and the analysis
        sections as global attributes.
        """
        import json
        import xarray as xr
        from optogen.pipeline.result import add_attrs, var_attrs
        from optogen.scenario import toml_text
        cur = self.curves()
        lt = cur["lifetime"]
        dn = np.asarray(lt["delta_n_cm3"], float)
        ds = xr.Dataset(coords={"delta_n": ("delta_n", dn, {"long_name": "excess carrier density",
                                                             "units": "cm^-3"})})
        for k, v in lt.items():
            if k == "delta_n_cm3":
                continue
            ds[k] = ("delta_n", np.asarray(v, float), var_attrs(k, v))
        ds["inverse_tau_corrected"] = ("delta_n", np.asarray(self.inverse_corrected_s, float),
                                       {"long_name": "corrected inverse lifetime 1/tau_eff - 1/tau_intrinsic",
                                        "units": "s^-1"})
        for k, v in (("implied_voltage_V", cur["jv"]["voltage_V"]),
                     ("implied_current_mA_cm2", cur["jv"]["current_mA_cm2"])):
            ds[k] = ("jv_point", np.asarray(v, float), var_attrs(k, v))
        if self.ids is not None:
            d = self.ids
            ds = ds.assign_coords(trap_level=("trap_level", np.asarray(d.level_eV, float),
                                              {"long_name": "trap level above the valence band edge",
                                               "units": "eV"}))
            for k, v in (("dpss_tau_n0_s", d.tau_n0_s), ("dpss_tau_p0_s", d.tau_p0_s), ("dpss_k", d.k),
                         ("dpss_chi2", d.chi2)):
                ds[k] = ("trap_level", np.asarray(v, float), var_attrs(k, v))
        flat = self.to_dict()
        for parts, v in _leaves(flat):
            if parts[0] == "title" or v is None:
                continue
            name = _scalar_name(parts)
            if name in ds.variables:
                raise RuntimeError(f"two analysis outputs named {name}")
            if isinstance(v, list):
                if len(v) == 2 and all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in v):
                    ds[name] = ("bound", np.asarray(v, float), var_attrs(name, np.asarray(v, float)))
                    ds[name].attrs["long_name"] += " (interval: low, high)"
                elif v and all(isinstance(x, str) for x in v):
                    ds[name] = ((), "; ".join(v), var_attrs(name, np.asarray("")))
                continue                                  # lists of records: in the JSON attribute
            arr = np.asarray(v)
            ds[name] = ((), arr, var_attrs(name, arr))
        add_attrs(ds, self.scenario, history)
        ds.attrs["analysis"] = json.dumps(flat, allow_nan=False)
        ds.attrs["analysis_sections"] = toml_text({k: v for k, v in self.settings.items() if v})
        return ds


def _leaves(d, prefix=()):
    """(path parts, value) of every leaf of a nested dict (lists are leaves)."""
    for k, v in d.items():
        if isinstance(v, dict):
            yield from _leaves(v, prefix + (str(k),))
        else:
            yield prefix + (str(k),), v


def _split_unit(part: str):
    """(stem, unit suffix or "") of a key by the house suffixes (`optogen.scenario.UNIT_SUFFIXES`)."""
    for suf in sorted(UNIT_SUFFIXES, key=len, reverse=True):
        if part.endswith("_" + suf) and len(part) > len(suf) + 1:
            return part[: -len(suf) - 1], suf
    return part, ""


def _scalar_name(parts) -> str:
    """NetCDF name of a JSON leaf: the parts joined by "_", the unit suffix moved to the end
    ("J0_fA_cm2", "global_fit_std" -> "J0_global_fit_std_fA_cm2"; a leaf's own suffix wins)."""
    stems, unit = [], ""
    for i, part in enumerate(parts):
        stem, suf = _split_unit(part)
        if i == len(parts) - 1 and suf:
            stems.append(stem)
            unit = suf
        else:
            stems.append(stem if suf else part)
            unit = suf or unit
    return "_".join(stems + ([unit] if unit else []))


def j0_reference_K(smp: Sample) -> float | None:
    """The forward model's J0 reference temperature (`recombination.J0_reference_K`) [K], or None
    when the scenario sets it to false (a J0 then holds at every temperature)."""
    ref = smp.intrinsic.J0_reference_K
    return None if ref is None else float(ref)


def j0_at_reference_fA_cm2(smp: Sample, J0_fA_cm2):
    """A J0 measured at the sample temperature carried to `j0_reference_K` [fA cm^-2].

    The forward model's one scaling, `optogen.recombination.j0_at_temperature_fA_cm2`, in the
    inverse direction (quoted at the measurement temperature, wanted at the reference):
    J0(T_ref) = J0(T) n_i^2(T_ref)/n_i^2(T).  A scale factor, so it also carries a 1-sigma value.
    """
    ref = j0_reference_K(smp)
    if ref is None:
        return np.asarray(J0_fA_cm2, dtype=float)
    return j0_at_temperature_fA_cm2(J0_fA_cm2, smp.material, ref, J0_reference_K=smp.temperature_K)


def _pm(v, s) -> str:
    if s is None or not np.isfinite(s) or s > 10 * abs(v):
        return f"{v:.4g} (uncertainty unknown)"
    return f"{v:.4g} ± {s:.2g}"


def _jsonable(x):
    if isinstance(x, dict):
        return {str(k): _jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_jsonable(v) for v in x]
    if isinstance(x, (bool, np.bool_)):
        return bool(x)
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        return float(x) if np.isfinite(x) else None
    return x


# ---------------------------------------------------------------------------
# The analysis
# ---------------------------------------------------------------------------

def _held_level(smp: Sample, meas: dict):
    """E_t - E_v to hold [eV]: the scenario's first defect level, mid-gap without level search, else None."""
    eq = smp.eq
    if smp.defects:
        d = smp.defects[0]
        if d.energy_eV is not None:
            return float(d.level_from_ev_eV(float(eq.effective_gap_eV), float(eq.intrinsic_level_eV)))
    if not _opt(meas, "measurement", "level_search"):
        return 0.5 * float(eq.effective_gap_eV)
    return None


def _core(smp: Sample, data: LifetimeData, meas: dict, jgen_1sun_mA_cm2: float):
    """The central analysis of one lifetime curve (no uncertainty propagation)."""
    lo = _opt(meas, "measurement", "fit_low_cm3")
    hi = _opt(meas, "measurement", "fit_high_cm3")
    use = np.ones(data.delta_n_cm3.size, bool)
    if lo is not None:
        use &= data.delta_n_cm3 >= lo
    if hi is not None:
        use &= data.delta_n_cm3 <= hi
    if use.sum() < 5:
        raise InputError("measurement.fit_low_cm3", lo, "a fit range holding at least 5 measured points",
                         f"{int(use.sum())} points between {lo} and {hi} cm^-3")
    mech = mechanisms(smp, data.delta_n_cm3)
    corr = corrected_inverse_lifetime_s(mech, data.tau_s)
    sig = None if data.tau_uncertainty_s is None else data.tau_uncertainty_s / data.tau_s**2
    ks, ks_note = kane_swanson_in_window(mech, corr, sig, meas.get("window_low_cm3"), meas.get("window_high_cm3"))
    sub = mechanisms(smp, data.delta_n_cm3[use]) if not use.all() else mech
    srel = data.sigma_rel
    level = _held_level(smp, meas)
    fit = fit_global(sub, data.tau_s[use], None if srel is None else srel[use], level)
    c = float(data.correlated_points)
    if c > 1:           # smoothed points are not independent: variances x the correlation length
        fit = GlobalFit(tuple(dataclasses.replace(br, covariance=br.covariance * c) for br in fit.branches), fit.used)
        if ks is not None:
            ks = dataclasses.replace(ks, J0_std_fA_cm2=ks.J0_std_fA_cm2 * np.sqrt(c),
                                     inv_tau_bulk_std_s=ks.inv_tau_bulk_std_s * np.sqrt(c), covariance=ks.covariance * c)
    b = fit.best
    # implied figures: the measured rate where measured, the fitted model outside
    grid = GRID_CM3
    V = splitting_on_grid_eV(smp, grid)
    gm = mechanisms(smp, grid)
    r = model_rates(smp, b.J0_fA_cm2, b.tau_n0_s, b.tau_p0_s, b.level_eV, grid, gm)
    total_model = sum(v[0] for v in r.values())
    U_meas = measured_rate(grid, data.delta_n_cm3, data.tau_s, total_model)
    one = implied_from_rates(smp, U_meas, jgen_1sun_mA_cm2, grid, V)
    suns = float(_opt(meas, "measurement", "suns"))
    at = implied_from_rates(smp, U_meas, jgen_1sun_mA_cm2 * suns, grid, V) if suns != 1.0 else one
    intr = implied_from_rates(smp, r["auger"][0] + r["radiative"][0], jgen_1sun_mA_cm2, grid, V)
    full = implied_from_rates(smp, total_model, jgen_1sun_mA_cm2, grid, V)
    # each mechanism at 1 sun, and iVoc without it (model)
    dn1 = float(one.delta_n_oc_cm3[0])
    at1 = {m: float(np.interp(np.log(dn1), np.log(grid), r[m][0])) for m in MECHANISM_NAMES}
    tot = sum(at1.values())
    share = {m: at1[m] / tot for m in MECHANISM_NAMES}
    gain = {}
    for m in MECHANISM_NAMES:
        without = implied_from_rates(smp, total_model - r[m][0], jgen_1sun_mA_cm2, grid, V)
        gain[m] = float((without.voc_V[0] - full.voc_V[0]) * 1e3)
    limiting = max(MECHANISM_NAMES, key=lambda m: at1[m])
    implied = {"jgen_1sun_mA_cm2": jgen_1sun_mA_cm2, "voc_1sun_V": float(one.voc_V[0]), "ff_1sun": float(one.ff[0]),
               "delta_n_1sun_cm3": dn1, "voc_1sun_model_V": float(full.voc_V[0]), "ff_1sun_model": float(full.ff[0]),
               "suns": suns, "voc_suns_V": float(at.voc_V[0]), "ff_suns": float(at.ff[0]),
               "voc_intrinsic_V": float(intr.voc_V[0]), "ff_intrinsic": float(intr.ff[0]),
               "tau_srh_1sun_s": dn1 / at1["srh"] if at1["srh"] > 0 else float("inf"),
               "tau_eff_1sun_s": dn1 / tot,
               "jv_voltage_V": one.voltage_V, "jv_current_mA_cm2": one.current_mA_cm2,
               "measured_range_covers_1sun": bool(data.delta_n_cm3.min() <= dn1 <= data.delta_n_cm3.max())}
    contributions = {"limiting": limiting, "share": share, "gain_mV": gain}
    return dict(mech=mech, corr=corr, ks=ks, ks_note=ks_note, fit=fit, implied=implied, contributions=contributions,
                grid_mech=gm, V=V, data=data, use=use)


def _samples_voc_ff(smp, core, params, jgen):
    """Implied Voc and FF [V], [-] at 1 sun of the fitted model for parameter samples (S, 3) of the
    best branch: their spread is the fit's contribution to the uncertainty of the implied figures."""
    b = core["fit"].best
    r = model_rates(smp, params[:, 0], params[:, 1], params[:, 2], np.full(len(params), b.level_eV), GRID_CM3,
                    core["grid_mech"])
    imp = implied_from_rates(smp, sum(r.values()), jgen, GRID_CM3, core["V"])
    return imp.voc_V, imp.ff


def analyse(source, overrides: Mapping[str, Any] | None = None, *, base_dir=None) -> AnalysisResult:
    """Analyse the measured data named by a scenario's `[measurement]` section.

    source: a scenario path, TOML text, a parsed table or a `Scenario` [-];
    overrides: dotted keys -> values (``--set``) [-].  Returns an `AnalysisResult`.
    """
    sc, meas, unc = load(source, overrides, base_dir=base_dir)
    smp = sample_from_scenario(sc)
    notes = []
    of = float(_opt(meas, "measurement", "optical_factor"))
    j1 = meas.get("one_sun_mA_cm2")
    j1sun = float(j1) if j1 is not None else one_sun_photocurrent_mA_cm2(sc, smp)
    kind = _opt(meas, "measurement", "kind")
    path = sc.base_dir / meas["file"]

    def load_data(s: Sample, of_: float, mob: float):
        if kind == "lifetime":
            return read_lifetime_csv(path)
        rec = read_record_csv(path)
        g1 = of_ * j1sun * 1e-3 / (q_C * s.thickness_cm)
        flux = None
        if rec.light_column != "suns":
            from optogen import light
            flux = light.scale(light.standard("AM1.5G"), suns=1.0).photon_flux_cm2_s
        return lifetime_from_record(s, rec, g1, flux, int(_opt(meas, "measurement", "smoothing_points")),
                                    int(_opt(meas, "measurement", "smoothing_order")), mob)

    data = load_data(smp, of, 1.0)
    core = _core(smp, data, meas, of * j1sun)
    if np.any(above_intrinsic_limit(core["mech"], data.tau_s)):
        notes.append("some measured lifetimes lie above the intrinsic limit of the model (noise, or check "
                     "doping, thickness and the intrinsic model)")
    if not core["implied"]["measured_range_covers_1sun"]:
        notes.append("the 1-sun operating point lies outside the measured range: the fitted model is used there")
    b = core["fit"].best
    # -- fit uncertainty
    n = int(_opt(unc, "uncertainty", "samples"))
    seed = int(_opt(unc, "uncertainty", "seed"))
    method = _opt(unc, "uncertainty", "method")
    fit_data = LifetimeData(data.delta_n_cm3[core["use"]], data.tau_s[core["use"]],
                            None if data.tau_uncertainty_s is None else data.tau_uncertainty_s[core["use"]], data.path)
    if method == "bootstrap":
        sub = mechanisms(smp, fit_data.delta_n_cm3)
        params = bootstrap_samples(sub, fit_data.tau_s, b, n, seed, fit_data.sigma_rel)
        std_ln = np.std(np.log(params), axis=0, ddof=1)
    else:
        params = parameter_samples(b, n, seed)
        std_ln = b.std[:3]
    if params is not None and np.all(np.isfinite(params)):
        voc_s, ff_s = _samples_voc_ff(smp, core, params, of * j1sun)
        voc_std_fit, ff_std_fit = float(np.nanstd(voc_s, ddof=1)), float(np.nanstd(ff_s, ddof=1))
    else:
        voc_std_fit = ff_std_fit = float("nan")
        notes.append("a fitted parameter is not constrained by the data: the fit's share of the implied Voc/FF "
                     "uncertainty is not given")
    # -- input uncertainties, one at a time (+1 sigma, whole analysis repeated)
    contrib = {}
    rels = {k: float(_opt(unc, "uncertainty", f"{k}_rel")) for k in ("thickness", "doping", "optical_factor", "mobility")}
    for name, rel in rels.items():
        if rel <= 0 or (name == "mobility" and kind != "photoconductance"):
            continue
        s2, of2, mob2 = smp, of, 1.0
        if name == "thickness":
            s2 = smp.with_(thickness_cm=smp.thickness_cm * (1 + rel))
        elif name == "doping":
            s2 = smp.with_(donors_cm3=smp.donors_cm3 * (1 + rel), acceptors_cm3=smp.acceptors_cm3 * (1 + rel))
        elif name == "optical_factor":
            of2 = of * (1 + rel)
        else:
            mob2 = 1 + rel
        c2 = _core(s2, load_data(s2, of2, mob2), meas, of2 * j1sun)
        b2 = c2["fit"].best
        contrib[name] = {"J0_fA_cm2": b2.J0_fA_cm2 - b.J0_fA_cm2, "tau_n0_s": b2.tau_n0_s - b.tau_n0_s,
                         "tau_p0_s": b2.tau_p0_s - b.tau_p0_s,
                         "voc_1sun_V": c2["implied"]["voc_1sun_V"] - core["implied"]["voc_1sun_V"],
                         "ff_1sun": c2["implied"]["ff_1sun"] - core["implied"]["ff_1sun"]}

    def total(key, own):
        return quadrature(own, *(c[key] for c in contrib.values()))
    for i, name in enumerate(("J0", "tau_n0", "tau_p0")):
        if name in b.at_bound or not np.isfinite(std_ln[i]) or std_ln[i] > 2.0:
            std_ln = np.array(std_ln, float)
            std_ln[i] = np.nan                  # not constrained by the data: no number, a note
            notes.append(f"{name} is not constrained by the data (at a search bound or uncertain by more than "
                         "a factor e^2): its value is a bound, not a measurement")
    J0_std = total("J0_fA_cm2", b.J0_fA_cm2 * std_ln[0]) if np.isfinite(std_ln[0]) else float("nan")
    # 95 % interval: log-normal from the fit, widened by the inputs' share of the variance
    widen = J0_std / (b.J0_fA_cm2 * std_ln[0]) if np.isfinite(std_ln[0]) and std_ln[0] > 0 else 1.0
    uncertainty = {"method": method, "samples": n,
                   "J0_std_fA_cm2": J0_std,
                   "J0_ci95_fA_cm2": (b.J0_fA_cm2 * float(np.exp(-Z95 * std_ln[0] * widen)),
                                      b.J0_fA_cm2 * float(np.exp(Z95 * std_ln[0] * widen))),
                   "tau_n0_std_s": total("tau_n0_s", b.tau_n0_s * std_ln[1]),
                   "tau_p0_std_s": total("tau_p0_s", b.tau_p0_s * std_ln[2]),
                   "voc_1sun_std_V": total("voc_1sun_V", voc_std_fit), "ff_1sun_std": total("ff_1sun", ff_std_fit),
                   "fit_only": {"J0_std_fA_cm2": b.J0_fA_cm2 * std_ln[0], "voc_1sun_std_V": voc_std_fit,
                                "ff_1sun_std": ff_std_fit},
                   "inputs": contrib, "input_rel": rels}
    # -- IDLS on this curve, with J0 from the fit whose level is searched (free of the held level's
    # shape) and its uncertainty propagated
    sub = mechanisms(smp, fit_data.delta_n_cm3)
    searched = core["fit"] if b.half != "fixed" else fit_global(sub, fit_data.tau_s, fit_data.sigma_rel)
    sb = searched.best
    if b.half == "fixed" and sb.chi2 < b.chi2 - max(1.0, b.chi2 / b.dof) * 4.0:
        notes.append(f"the held level (Ev + {b.level_eV:.3f} eV) describes the curve worse than a level in the "
                     f"{sb.half} half (chi2 {b.chi2:.3g} vs {sb.chi2:.3g}): name the defect or set "
                     "measurement.level_search = true")
    j0_ids, j0_ids_std = sb.J0_fA_cm2, sb.J0_fA_cm2 * sb.std[0]
    ids = ids_with_j0_uncertainty([(sub, fit_data.tau_s, fit_data.sigma_rel, j0_ids,
                                    j0_ids_std if np.isfinite(j0_ids_std) else 0.0)])
    # -- iron
    iron = None
    if "dissociated_file" in meas:
        diss = read_lifetime_csv(sc.base_dir / meas["dissociated_file"], "measurement.dissociated_file")
        lo = max(data.delta_n_cm3.min(), diss.delta_n_cm3.min())
        hi = min(data.delta_n_cm3.max(), diss.delta_n_cm3.max())
        sel = (data.delta_n_cm3 >= lo) & (data.delta_n_cm3 <= hi)
        if sel.sum() < 2:
            raise InputError("measurement.dissociated_file", str(diss.path),
                             "a curve overlapping the paired curve in dn at 2 or more points")
        dn = data.delta_n_cm3[sel]
        td = np.exp(np.interp(np.log(dn), np.log(diss.delta_n_cm3), np.log(diss.tau_s)))
        iron = iron_density_zoth_bergholz1990(smp, dn, data.tau_s[sel], td, core["mech"].shift[sel])
    rec = None
    res = AnalysisResult(sc.title, smp, data, kind, core["mech"], core["corr"], core["ks"], core["ks_note"],
                         core["fit"], ids, core["implied"], core["contributions"], uncertainty, iron, notes, rec)
    res.ids_fit = (sub, fit_data, j0_ids, j0_ids_std)
    res.scenario = sc
    res.settings = {"measurement": dict(meas), "uncertainty": dict(unc)}
    return res


def _row(name: str, res: AnalysisResult) -> dict:
    d = res.to_dict()
    return {"file": name, "J0_fA_cm2": d["J0_fA_cm2"]["global_fit"],
            "J0_std_fA_cm2": d["J0_fA_cm2"]["global_fit_std"],
            "J0_reference_fA_cm2": d["J0_fA_cm2"]["global_fit_at_reference"],
            "tau_n0_s": d["srh"]["tau_n0_s"], "tau_p0_s": d["srh"]["tau_p0_s"],
            "tau_bulk_1sun_s": d["srh"]["tau_bulk_1sun_s"],
            "implied_voc_1sun_V": d["implied"]["voc_1sun_V"],
            "implied_voc_1sun_std_V": d["uncertainty"]["voc_1sun_std_V"],
            "implied_ff_1sun": d["implied"]["ff_1sun"], "limiting_1sun": d["limiting_mechanism_1sun"]}


def analyse_folder(source, folder, overrides: Mapping[str, Any] | None = None, *, base_dir=None,
                   workers: int | None = None, scheduler: str | None = None):
    """One row per CSV file of `folder`, each analysed with the scenario (its `measurement.file`
    replaced), and the joint IDLS of all curves (the same defect in wafers of different doping).

    In process by default; with `workers` (a local dask cluster of that many processes) or
    `scheduler` (the address of a running dask.distributed scheduler) one task per file, the
    same dask set-up as a forward sweep (`optogen.pipeline.sweep`, dask imported only then).
    The answers are the same either way (each file's analysis is seeded by `uncertainty.seed`).

    Returns (pandas.DataFrame, results list, Dpss or None).  A bad file stops the batch with its
    InputError (naming the file and line): nothing is written half.
    """
    import pandas as pd
    load(source, overrides, base_dir=base_dir)                # the scenario checked once, before any task
    files = folder_files(folder)
    overs = []
    for f in files:
        over = dict(overrides or {})
        over["measurement.file"] = str(Path(f).resolve())
        overs.append(over)
    if workers is not None or scheduler is not None:
        from optogen.pipeline.sweep import dask_client      # dask only when asked for
        client = dask_client(workers, scheduler)
        try:
            futures = [client.submit(analyse, source, o, base_dir=base_dir, pure=False) for o in overs]
            results = client.gather(futures)
        finally:
            cluster = client.cluster if not scheduler else None
            client.close()
            if cluster is not None:
                cluster.close()
    else:
        results = [analyse(source, o, base_dir=base_dir) for o in overs]
    rows = [_row(f.name, r) for f, r in zip(files, results)]
    joint = None
    if len(results) > 1:
        fits = []
        for r in results:
            m, fd, j0, j0_std = r.ids_fit
            fits.append((m, fd.tau_s, fd.sigma_rel, j0, j0_std if np.isfinite(j0_std) else 0.0))
        joint = ids_with_j0_uncertainty(fits)
    return pd.DataFrame(rows), list(results), joint


# ---------------------------------------------------------------------------
# Command line
# ---------------------------------------------------------------------------

def _overrides(items):
    return parse_overrides(items, "measurement.optical_factor=0.9")


def main(args) -> int:
    """Run `optogen analyse` with parsed `args`; prints the summary (or JSON); returns 0.

    InputError propagates to the CLI's error boundary (one line, exit 2).
    """
    import json
    over = _overrides(getattr(args, "set", []) or [])
    workers, scheduler = getattr(args, "workers", None), getattr(args, "scheduler", None)
    if (workers is not None or scheduler is not None) and not getattr(args, "folder", None):
        raise InputError("--workers" if workers is not None else "--scheduler", workers or scheduler,
                         "only with --folder (one analysis is a single task)", "add --folder DIR, or drop it")
    if getattr(args, "folder", None):
        table, results, joint = analyse_folder(args.scenario, args.folder, over, workers=workers,
                                               scheduler=scheduler)
        if args.out:
            from optogen import report
            out = Path(args.out)
            report.write_table(out / "batch.csv", {c: table[c].to_numpy() for c in table.columns})
        print(table.to_string(index=False))
        if joint is not None:
            for br in joint.branches:
                print(f"Joint IDLS ({joint.curves} curves), {br.half} branch: Ev + {br.level_eV:.3f} eV "
                      f"({br.level_interval_eV[0]:.3f}-{br.level_interval_eV[1]:.3f}), k = {br.k:.3g}, "
                      f"tau_n0 = {br.tau_n0_s * 1e6:.4g} us, tau_p0 = {br.tau_p0_s * 1e6:.4g} us")
        return 0
    res = analyse(args.scenario, over)
    if args.out:
        res.write(args.out)
    if args.json:
        print(json.dumps(res.to_dict(), indent=2, allow_nan=False))
    else:
        print(res.summary())
    return 0
