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

from .errors import InputError, did_you_mean

# Keys this layer validates itself.  [light] and [recombination] (and
# [absorber.custom]) are validated by the builders of their own modules.
SECTIONS: dict[str, set[str] | None] = {
    "absorber": {
        "material", "custom", "composition_x", "thickness_um", "temperature_K",
        "donors_cm3", "acceptors_cm3", "resistivity_ohm_cm", "dopant",
        "donor_species", "acceptor_species", "ni_model", "mobility_model",
        "incomplete_ionisation", "optical_page", "optical_csv",
    },
    "light": None,
    "optics": {"front_reflectance", "rear_reflectance", "light_path", "coating"},
    "recombination": None,
    "background": {"temperature_K", "field_of_view_deg", "emissivity"},
    "detector": {"mode", "electrode_spacing_um", "width_um", "bias_V", "junction_side_doping_cm3",
                 "bandwidth_Hz", "rear_S_cm_s"},
    "solver": {"depth_resolved", "nodes", "chunk_size", "voc_plane"},
    "sweep": None,
}
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
    """Check the section and key names that this layer owns."""
    for key in data:
        if key not in TOP_LEVEL:
            raise InputError(key, data[key], "a known section: " + ", ".join(sorted(TOP_LEVEL)),
                             did_you_mean(key, TOP_LEVEL))
    if "absorber" not in data:
        raise InputError("absorber", None, "a scenario needs an [absorber] section")
    for name, allowed in SECTIONS.items():
        table = data.get(name)
        if table is None:
            continue
        if not isinstance(table, Mapping):
            raise InputError(name, table, "a table ([" + name + "])")
        if allowed is None:
            continue
        for key in table:
            if key not in allowed:
                raise InputError(f"{name}.{key}", table[key],
                                 f"a key of [{name}]: " + ", ".join(sorted(allowed)),
                                 did_you_mean(key, allowed))
    ab = data["absorber"]
    has_density = any(k in ab for k in ("donors_cm3", "acceptors_cm3"))
    if "resistivity_ohm_cm" in ab:
        if has_density:
            raise InputError("absorber.resistivity_ohm_cm", ab["resistivity_ohm_cm"],
                             "either a resistivity or donors_cm3/acceptors_cm3, not both")
        if ab.get("dopant") not in ("n", "p"):
            raise InputError("absorber.dopant", ab.get("dopant"),
                             '"n" or "p" with resistivity_ohm_cm')
    elif "dopant" in ab:
        raise InputError("absorber.dopant", ab["dopant"], "only with resistivity_ohm_cm")


def sweep_axes(table: Mapping[str, Any], data: Mapping[str, Any]) -> tuple[SweepAxis, ...]:
    """Expand a [sweep] table into axes (outer product of their values)."""
    axes = []
    for key, spec in table.items():
        field_name = f"sweep.{key}"
        section = key.split(".")[0]
        if section not in SECTIONS or section == "sweep" or "." not in key:
            raise InputError(field_name, spec, "a dotted scenario key such as \"light.suns\"",
                             did_you_mean(key, _numeric_keys(data)))
        if isinstance(spec, list):
            values = spec
        elif isinstance(spec, Mapping):
            extra = set(spec) - {"log", "linear", "points"}
            kind = [k for k in ("log", "linear") if k in spec]
            if extra or len(kind) != 1 or "points" not in spec:
                raise InputError(field_name, dict(spec),
                                 "a list, { log = [a, b], points = N } or { linear = [a, b], points = N }")
            lo_hi, n = spec[kind[0]], spec["points"]
            if not (isinstance(lo_hi, list) and len(lo_hi) == 2) or not isinstance(n, int) or n < 1:
                raise InputError(field_name, dict(spec), "[a, b] and an integer points >= 1")
            if kind[0] == "log":
                if min(lo_hi) <= 0:
                    raise InputError(field_name, dict(spec), "log ends > 0")
                values = np.geomspace(lo_hi[0], lo_hi[1], n)
            else:
                values = np.linspace(lo_hi[0], lo_hi[1], n)
        else:
            values = [spec]
        arr = np.asarray(values)
        if arr.ndim != 1 or arr.size == 0:
            raise InputError(field_name, spec, "a non-empty list of values")
        if arr.dtype.kind in "iuf" and not np.all(np.isfinite(arr)):
            raise InputError(field_name, spec, "finite numbers")
        if arr.dtype.kind in "iu":
            arr = arr.astype(float)
        axes.append(SweepAxis(key, arr))
    return tuple(axes)


def _numeric_keys(data, prefix=""):
    out = []
    for k, v in data.items():
        if isinstance(v, Mapping):
            out += _numeric_keys(v, f"{prefix}{k}.")
        elif isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append(prefix + k)
    return out


def load_scenario(source, overrides: Mapping[str, Any] | None = None) -> Scenario:
    """Read a scenario from a path or from TOML text.

    source: a path to a .toml file, or the TOML text itself [-]
    overrides: dotted-key values applied on top (as ``--set``) [-]
    """
    path = "<text>"
    base = Path.cwd()
    text = None
    if isinstance(source, Path) or (isinstance(source, str) and "\n" not in source
                                    and source.strip().endswith(".toml")):
        p = Path(source)
        if not p.is_file():
            raise InputError("scenario", str(source), "an existing .toml file")
        text, path, base = p.read_text(encoding="utf-8"), str(p), p.resolve().parent
    else:
        text = str(source)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError("scenario", path, f"valid TOML ({exc})") from None
    sweep_table = data.pop("sweep", {}) or {}
    validate(data)
    axes = sweep_axes(sweep_table, data)
    for ax in axes:                      # the swept key must be a valid field too
        probe = copy.deepcopy(data)
        _set_dotted(probe, ax.key, ax.values[0].item())
        validate(probe)
    sc = Scenario(data=data, text=text, base_dir=base, sweep=axes, path=path)
    if overrides:
        sc = sc.with_values(overrides)
    return sc


def is_number(x) -> bool:
    return isinstance(x, (int, float, np.integer, np.floating)) and not isinstance(x, bool) and math.isfinite(float(x))
