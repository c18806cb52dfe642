"""Scenario files (TOML): reading, validating, overriding and expanding sweeps.

This layer only translates a file into plain values; the physics lives in the
core modules.  Keys carry their unit (``thickness_um``, ``temperature_K``).
"""
from __future__ import annotations

import copy
import dataclasses
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

import numpy as np

from . import schema
from .errors import InputError, did_you_mean

# Section -> key names, from the schema (optogen.schema declares every key once).
SECTIONS: dict[str, set[str] | None] = {name: set(schema.section_keys(name)) for name in schema.SECTIONS
                                        if name not in ("title", "description", "sweep")}
SECTIONS["sweep"] = None
TOP_LEVEL = {"title", "description", *SECTIONS}

#: sweep grids larger than this need an explicit yes (``--yes``) or chunked ``--out``
MAX_POINTS_WITHOUT_CONFIRMATION = 2_000_000


@dataclass(frozen=True)
class SweepAxis:
    """One swept key and its values."""

    key: str
    values: np.ndarray

    @property
    def unit(self) -> str:
        return unit_of(self.key)


@dataclass(frozen=True)
class Scenario:
    """A validated scenario: the parsed table, its source text and its folder.

    ``data`` never contains the ``[sweep]`` section; sweeps live in ``sweep``.
    """

    data: Mapping[str, Any]
    text: str = ""
    base_dir: Path = field(default_factory=Path.cwd)
    sweep: tuple[SweepAxis, ...] = ()
    path: str = "<text>"

    @property
    def title(self) -> str:
        return str(self.data.get("title", Path(self.path).stem))

    def get(self, dotted: str, default=None):
        """The value at a dotted key such as "light.suns", or `default`."""
        node: Any = self.data
        for part in dotted.split("."):
            if isinstance(node, list) and part.isdigit() and int(part) < len(node):
                node = node[int(part)]
            elif isinstance(node, Mapping) and part in node:
                node = node[part]
            else:
                return default
        return node

    def section(self, name: str) -> dict:
        """A copy of a section table ({} if absent)."""
        return copy.deepcopy(dict(self.data.get(name, {}) or {}))

    def with_values(self, overrides: Mapping[str, Any] | None = None, **kw) -> "Scenario":
        """A copy with fields replaced by dotted key.

        ``scenario.with_values({"light.suns": 0.1})`` or, as keywords with "__"
        for the dot, ``scenario.with_values(light__suns=0.1)``.
        """
        items = dict(overrides or {})
        items.update({k.replace("__", "."): v for k, v in kw.items()})
        data = copy.deepcopy(dict(self.data))
        sweep = list(self.sweep)
        for key, value in items.items():
            if key.startswith("sweep."):
                raise InputError(key, value, "a scenario field; edit [sweep] in the file to change a sweep")
            _set_dotted(data, key, value)
            sweep = [a for a in sweep if a.key != key]   # a fixed value replaces a sweep of that key
        validate(data)
        return dataclasses.replace(self, data=data, sweep=tuple(sweep))

    @property
    def n_points(self) -> int:
        return int(np.prod([a.values.size for a in self.sweep])) if self.sweep else 1


def unit_of(key: str) -> str:
    """The unit encoded in a key's suffix ("absorber.temperature_K" -> "K")."""
    name = key.split(".")[-1]
    for suffix in _SUFFIX_ORDER:
        if name.endswith("_" + suffix) or name == suffix:
            return UNIT_SUFFIXES[suffix][0]
    return "1"


#: key suffix -> (unit for file attributes, unit for people); the longest matching suffix wins
UNIT_SUFFIXES: dict[str, tuple[str, str]] = {
    "cm3_s": ("cm-3 s-1", "cm⁻³ s⁻¹"), "cm2_s": ("cm-2 s-1", "cm⁻² s⁻¹"),
    "W_m2_nm": ("W m-2 nm-1", "W m⁻² nm⁻¹"), "mA_cm2": ("mA cm-2", "mA cm⁻²"),
    "fA_cm2": ("fA cm-2", "fA cm⁻²"), "W_m2": ("W m-2", "W m⁻²"), "cm_s": ("cm s-1", "cm s⁻¹"),
    "ohm_cm": ("ohm cm", "Ω cm"), "cm2_Vs": ("cm2 V-1 s-1", "cm² V⁻¹ s⁻¹"), "S_cm": ("S cm-1", "S cm⁻¹"),
    "cm_Hz05_W": ("cm Hz1/2 W-1", "cm Hz½ W⁻¹"), "mW_cm2": ("mW cm-2", "mW cm⁻²"),
    "A_W": ("A W-1", "A W⁻¹"), "cm3": ("cm-3", "cm⁻³"), "cm2": ("cm2", "cm²"), "um": ("um", "µm"),
    "nm": ("nm", "nm"), "mm": ("mm", "mm"), "cm": ("cm", "cm"), "eV": ("eV", "eV"), "mV": ("mV", "mV"),
    "K": ("K", "K"), "V": ("V", "V"), "s": ("s", "s"), "W": ("W", "W"), "A": ("A", "A"), "S": ("S", "S"),
    "deg": ("degree", "°"), "Hz": ("Hz", "Hz"), "suns": ("suns", "suns"),
    "A_Hz05": ("A Hz-1/2", "A Hz⁻½"), "ohm_cm2": ("ohm cm2", "Ω cm²"),
}
_SUFFIX_ORDER = sorted(UNIT_SUFFIXES, key=len, reverse=True)


def _set_dotted(data: dict, key: str, value) -> None:
    parts = key.split(".")
    if parts[0] not in TOP_LEVEL:
        raise InputError(key, value, "a key starting with one of " + ", ".join(sorted(SECTIONS)),
                         did_you_mean(parts[0], TOP_LEVEL))
    node = data
    for part in parts[:-1]:         # a list of tables is indexed by number: recombination.defects.0.density_cm3
        if isinstance(node, list):
            if not (part.isdigit() and int(part) < len(node)):
                raise InputError(key, value, f"an index 0..{len(node) - 1} into that list of tables")
            node = node[int(part)]
        else:
            node = node.setdefault(part, {})
        if not isinstance(node, (dict, list)):
            raise InputError(key, value, f"a key inside a table, but {part!r} is not a table")
    if isinstance(node, list):
        raise InputError(key, value, "a key inside one table of the list, e.g. recombination.defects.0.density_cm3")
    node[parts[-1]] = value


def parse_value(text: str):
    """A --set value: TOML syntax if it parses (numbers, booleans, lists), else a string."""
    try:
        return tomllib.loads(f"v = {text}")["v"]
    except tomllib.TOMLDecodeError:
        return text


def validate(data: Mapping[str, Any]) -> None:
    """Check a scenario table (without [sweep]) against the schema: section and key names,
    kinds, ranges, choices and the rules between keys (`optogen.schema.validate`)."""
    schema.validate(data)


def _axis_spec(field_name: str, spec):
    """(size, make) for one [sweep] entry: the number of values and a function building them."""
    if isinstance(spec, list):
        return len(spec), lambda: list(spec)
    if isinstance(spec, Mapping):
        extra = set(spec) - {"log", "linear", "points"}
        kind = [k for k in ("log", "linear") if k in spec]
        if extra or len(kind) != 1 or "points" not in spec:
            raise InputError(field_name, dict(spec),
                             "a list, { log = [a, b], points = N } or { linear = [a, b], points = N }")
        lo_hi, n = spec[kind[0]], spec["points"]
        if not (isinstance(lo_hi, list) and len(lo_hi) == 2 and all(is_number(v) for v in lo_hi)):
            raise InputError(field_name, dict(spec), "[a, b] of two finite numbers")
        if isinstance(n, bool) or not isinstance(n, int) or n < 1:
            raise InputError(field_name, dict(spec), "an integer points >= 1")
        if n > schema.MAX_POINTS:
            raise InputError(field_name, dict(spec), f"points <= {schema.MAX_POINTS}")
        a, b = float(lo_hi[0]), float(lo_hi[1])
        if kind[0] == "log":
            if min(a, b) <= 0:
                raise InputError(field_name, dict(spec), "log ends > 0")
            return n, lambda: np.geomspace(a, b, n).tolist() if n > 1 else [a]
        if not math.isfinite(b - a):
            raise InputError(field_name, dict(spec), "linear ends whose difference is a finite number")
        return n, lambda: np.linspace(a, b, n).tolist() if n > 1 else [a]
    return 1, lambda: [spec]


def sweep_axes(table: Mapping[str, Any], data: Mapping[str, Any]) -> tuple[SweepAxis, ...]:
    """Expand a [sweep] table into axes (outer product of their values).

    Every value is checked against the schema; the grid size is checked against
    `schema.MAX_POINTS` and the number of slow-key groups against
    `schema.MAX_SLOW_GROUPS` before any array is built.
    """
    if not isinstance(table, Mapping):
        raise InputError("sweep", table, "a table of dotted keys")
    specs = []
    total, slow_groups = 1, 1
    for key, spec in table.items():
        field_name = f"sweep.{key}"
        k = schema.key_for(key)
        if k is None or "." not in key:
            raise InputError(field_name, spec, "a dotted scenario key such as \"light.suns\"",
                             did_you_mean(key, _numeric_keys(data)) or schema._hint(key))
        if key.split(".")[0] in ("light", "background", "detector") and key.split(".")[0] not in data:
            raise InputError(field_name, spec, f"a key of a section the scenario has; add [{key.split('.')[0]}]")
        size, make = _axis_spec(field_name, spec)
        if size == 0:
            raise InputError(field_name, spec, "a non-empty list of values")
        total *= size
        if k.sweep != schema.FAST:
            slow_groups *= size
        specs.append((key, make))
    if total > schema.MAX_POINTS:
        raise InputError("sweep", f"{total} points", f"at most {schema.MAX_POINTS} grid points",
                         "split the sweep into several runs")
    if slow_groups > schema.MAX_SLOW_GROUPS:
        raise InputError("sweep", f"{slow_groups} combinations of slow keys",
                         f"at most {schema.MAX_SLOW_GROUPS} (each rebuilds the material and spectrum)",
                         "sweep fewer values of the slow keys, or split the run")
    axes = []
    for key, make in specs:
        values = make()
        axes.append(SweepAxis(key, schema.check_sweep_values(key, values)))
    return tuple(axes)


def _numeric_keys(data, prefix=""):
    out = []
    for k, v in data.items():
        if isinstance(v, Mapping):
            out += _numeric_keys(v, f"{prefix}{k}.")
        elif isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append(prefix + k)
    return out


def load_scenario(source, overrides: Mapping[str, Any] | None = None, *, base_dir=None) -> Scenario:
    """Read a scenario from a path, from TOML text or from an already parsed table.

    source: a path to a .toml file, the TOML text itself, or a dict as tomllib returns it [-]
    overrides: dotted-key values applied on top (as ``--set``) [-]
    base_dir: folder that relative paths in a text or dict scenario refer to (default: the
        current folder; a file's own folder for a path) [-]
    """
    path = "<text>"
    base = Path(base_dir) if base_dir is not None else Path.cwd()
    text = None
    if isinstance(source, Mapping):        # an already parsed table (as tomllib gives it)
        data = copy.deepcopy(dict(source))
        return _from_data(data, "", base_dir if base_dir is not None else Path.cwd(), path, overrides)
    if not isinstance(source, (str, Path)):
        raise InputError("scenario", type(source).__name__,
                         "a path to a .toml file, the TOML text or a table (dict)")
    if isinstance(source, Path) or ("\n" not in source and source.strip().endswith(".toml")):
        p = Path(source)
        if not p.is_file():
            raise InputError("scenario", str(source), "an existing .toml file")
        try:
            raw = p.read_bytes()
        except OSError as exc:
            raise InputError("scenario", str(p), "a readable file", exc.strerror or str(exc)) from None
        if len(raw) > schema.MAX_TEXT_BYTES:
            raise InputError("scenario", str(p), f"a file of at most {schema.MAX_TEXT_BYTES} bytes")
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            raise InputError("scenario", str(p), "UTF-8 text", f"byte {exc.start}: {exc.reason}") from None
        path, base = str(p), p.resolve().parent
    else:
        text = str(source)
        if len(text.encode("utf-8", "surrogatepass")) > schema.MAX_TEXT_BYTES:
            raise InputError("scenario", "<text>", f"at most {schema.MAX_TEXT_BYTES} bytes of TOML")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError("scenario", path, f"valid TOML ({exc})") from None
    return _from_data(data, text, base, path, overrides)


def _from_data(data: dict, text: str, base: Path, path: str, overrides) -> Scenario:
    sweep_table = data.pop("sweep", {})
    sweep_table = {} if sweep_table is None else sweep_table
    validate(data)
    axes = sweep_axes(sweep_table, data)
    _probe_axes(data, axes)
    sc = Scenario(data=data, text=text, base_dir=Path(base), sweep=axes, path=path)
    if overrides:
        sc = sc.with_values(overrides)
    return sc


def _probe_axes(data, axes) -> None:
    """Validate the scenario with each swept key set to its extreme (numbers) or each (other)
    value, so that rules between keys (e.g. the doping sum) hold across the sweep."""
    for ax in axes:
        vals = ax.values
        if vals.dtype.kind == "f":
            picks = {float(vals.min()), float(vals.max())}
        else:
            picks = {v.item() if hasattr(v, "item") else v for v in vals[:64]}
        for v in picks:
            probe = copy.deepcopy(data)
            _set_dotted(probe, ax.key, v)
            validate(probe)


def is_number(x) -> bool:
    """True for a finite int or float (not a bool; an int too large for a float is not a number)."""
    if isinstance(x, (bool, np.bool_)) or not isinstance(x, (int, float, np.integer, np.floating)):
        return False
    try:
        return math.isfinite(float(x))
    except OverflowError:
        return False
