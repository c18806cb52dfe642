"""Pipeline, step 3: labelling. Output blocks -> an xarray Dataset and a `Result`.

Block dictionaries ({"steady_state": {"delta_n_cm3": array, ...}}) become Dataset variables
with units; `Result` carries the Dataset, a single point's details and the run's warnings.
"""
from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np
import xarray as xr

from .._version import __version__
from ..scenario import Scenario, unit_of


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


def flat_block(d: Mapping[str, Any], n: int) -> dict[str, np.ndarray]:
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


def labelled_dataset(blocks, shape, axes) -> xr.Dataset:
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


def add_attrs(ds: xr.Dataset, sc: Scenario) -> None:
    ds.attrs.update({
        "title": sc.title,
        "scenario": sc.text,
        "optogen_version": __version__,
        "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "swept_keys": ", ".join(a.key for a in sc.sweep) or "(single point)",
    })
