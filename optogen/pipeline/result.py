"""Pipeline, step 3: labelling. Output blocks -> an xarray Dataset and a `Result`.

Block dictionaries ({"steady_state": {"delta_n_cm3": array, ...}}) become Dataset variables
that follow the CF conventions (1.10): names of letters, digits and underscores (a swept key
"light.suns" is the dimension "light_suns", its dotted key in the attribute ``scenario_key``),
``long_name`` on every variable (the labels the plots use, `optogen.scenario.LONG_NAMES`),
``units`` in the one caret spelling of `optogen.scenario.UNIT_SUFFIXES` on every number
(strings and flags carry none).  `Result` carries the Dataset, a single point's details and
the run's warnings.  `ChunkStore` writes a large sweep straight to a chunked, compressed
NetCDF4 file, chunk by chunk, so that memory is bounded by the chunk.
"""
from __future__ import annotations

import datetime as _dt
import math
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping, Sequence

import numpy as np
import xarray as xr
from xarray.backends import BackendArray
from xarray.core import indexing      # the lazy-array API of xarray's backend guide

from .._version import __version__
from ..errors import InputError
from ..scenario import Scenario, dim_name, long_name, squared_name, unit_of

#: the CF version the files follow (global attribute ``Conventions``)
CONVENTIONS = "CF-1.10"


#: Dataset variable names where the JSON key alone would be unclear or clash
RENAME = {("generation", "average_cm3_s"): "generation_average_cm3_s",
          ("generation", "background_average_cm3_s"): "generation_background_average_cm3_s",
          ("profile", "converged"): "profile_converged"}


def var_name(block: str, key: str) -> str:
    """The Dataset / CSV variable name of a JSON key ("tau_s.srh" -> "tau_srh_s").

    Parameters
    ----------
    block : str
        The output block ("steady_state", "implied_jv", ...).
    key : str
        The key within the block, dotted when nested ("tau_s.srh").

    Returns
    -------
    str
        The variable name (`RENAME` where the key alone would be unclear or clash; ``jv_``
        before the figures of the implied J-V).
    """
    if (block, key) in RENAME:
        return RENAME[(block, key)]
    if block == "implied_jv":              # figures of the J-V curve: jv_vmp_V, jv_ff, ...
        return f"jv_{key}"
    if "." in key:                       # nested: tau_s.srh -> tau_srh_s
        outer, inner = key.split(".", 1)
        stem, _, unit = outer.rpartition("_")
        return f"{stem}_{inner}_{unit}"
    return key


@dataclass(frozen=True)
class Result:
    """The outcome of a scenario: a labelled Dataset plus single-point details.

    Parameters
    ----------
    scenario : Scenario
        The scenario that was run.
    dataset : xarray.Dataset
        One dimension per swept key (none for a single point); every JSON quantity as a
        variable with a `units` attribute.
    details : Mapping[str, Any], optional
        For a single point, the core objects (equilibrium, generation, steady state, ...)
        behind the numbers, for curves and plots.
    warnings : tuple of str, optional
        The run's warnings (physics notes), in order.
    """

    scenario: Scenario
    dataset: xr.Dataset
    details: Mapping[str, Any] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    def __post_init__(self):
        tidy_attrs(self.dataset)

    @property
    def is_sweep(self) -> bool:
        """True when the scenario sweeps at least one key."""
        return bool(self.scenario.sweep)

    def to_dataset(self) -> xr.Dataset:
        """The labelled Dataset.

        Returns
        -------
        xarray.Dataset
            `dataset` itself (not a copy).
        """
        return self.dataset

    def to_dataframe(self):
        """The result as a tidy table, the same table as result.csv.

        Returns
        -------
        pandas.DataFrame
            One row per grid point (a single point: one row), one column per swept key
            (underscore names, the last key varying fastest) then one per variable.
        """
        import pandas as pd
        return pd.DataFrame(tidy_columns(self.dataset))

    def plot(self, kind: str | None = None, ax=None):
        """Draw the figure that fits the result and return its Axes.

        Parameters
        ----------
        kind : str or None, optional
            None picks: a single point -> "lifetime" (the lifetime curve; "band" without
            one); one swept key -> "detectivity" for a detector with a source, else "lines";
            two swept keys -> "map".  Others: "jv", "generation", "band", "noise",
            "dark_current", "responsivity", "nep".
        ax : matplotlib.axes.Axes or sequence of Axes, optional
            The Axes to draw into (a sequence of Axes for several panels); None makes a new
            figure.

        Returns
        -------
        matplotlib.axes.Axes or numpy.ndarray
            The Axes drawn into (an array for several panels).

        Raises
        ------
        InputError
            For a kind that does not fit the result, or a sweep of three or more keys
            without a kind.
        """
        from .. import plots
        from ..report import point_curves
        ds = self.dataset
        dims = [d for d in ds.dims if ds.sizes[d] > 1] or list(ds.dims)[:1]
        if kind is None:
            if not self.is_sweep:
                kind = "lifetime" if "lifetime_curve" in self.details else "band"
            elif len(dims) == 1:
                kind = ("detectivity" if "detectivity_cm_Hz05_W" in ds
                        and np.isfinite(np.asarray(ds["detectivity_cm_Hz05_W"].values, float)).any() else "lines")
            elif len(dims) == 2:
                kind = "map"
            else:
                raise InputError("Result.plot.kind", None, "a kind for a sweep of three or more keys",
                                 "select two keys, e.g. res.dataset.isel(...), and use optogen.plots.sweep_map")
        sweep_kinds = {"lines": plots.sweep_lines, "map": plots.sweep_map, "detectivity": plots.detector_detectivity,
                       "noise": plots.detector_noise, "dark_current": plots.detector_dark_current,
                       "responsivity": plots.detector_responsivity, "nep": plots.detector_nep}
        if kind in sweep_kinds:
            return sweep_kinds[kind](ds, ax=ax)
        det, curves = self.details, point_curves(self)
        first = lambda a: float(np.ravel(a)[0])       # noqa: E731
        if kind == "lifetime" and "lifetime_curve" in curves:
            c = curves["lifetime_curve"]
            return plots.lifetime_curve(c["delta_n_cm3"], {k[4:-2]: v for k, v in c.items() if k.startswith("tau_")},
                                        operating_dn=first(det["steady_state"].delta_n_cm3), ax=ax)
        if kind == "jv" and "implied_jv" in curves:
            jv = det["implied_jv"]
            return plots.implied_jv(curves["implied_jv"]["voltage_V"], curves["implied_jv"]["current_mA_cm2"],
                                    vmp=first(jv.vmp_V), jmp=first(jv.jmp_mA_cm2), voc=first(jv.voc_V),
                                    ff=first(jv.ff), ax=ax)
        if kind == "generation" and "generation_profile" in curves:
            c = curves["generation_profile"]
            return plots.generation_profile(c["depth_cm"], c["generation_cm3_s"], ax=ax)
        if kind == "band" and "equilibrium" in det:
            eq, ss = det["equilibrium"], det.get("steady_state")
            return plots.band_diagram(first(eq.effective_gap_eV), first(eq.fermi_level_eV),
                                      first(ss.electron_qfl_eV) if ss is not None else None,
                                      first(ss.hole_qfl_eV) if ss is not None else None,
                                      intrinsic_level_eV=first(eq.intrinsic_level_eV), ax=ax)
        raise InputError("Result.plot.kind", kind, "for a single point: lifetime, jv, generation, band; for a "
                         "sweep: lines (one key), map (two keys), detectivity, noise, dark_current, responsivity, nep")

    def __repr__(self) -> str:
        ds = self.dataset
        if self.is_sweep:
            what = "sweep " + " x ".join(f"{d} ({ds.sizes[d]})" for d in ds.dims) + f" = {self.scenario.n_points} points"
        else:
            shown = [f"{k} = {float(ds[k]):.4g} {ds[k].attrs.get('units', '')}".rstrip()
                     for k in ("implied_voc_V", "tau_eff_s", "delta_n_cm3") if k in ds and ds[k].ndim == 0]
            what = "single point" + (": " + ", ".join(shown) if shown else "")
        warn = f"; {len(self.warnings)} warning(s)" if self.warnings else ""
        return f"Result({self.scenario.title!r}, {what}; {len(ds.data_vars)} variables{warn})"

    def _repr_html_(self) -> str:
        import html
        ds = self.dataset
        rows = []
        for name, da in ds.data_vars.items():
            if da.ndim == 0:
                v = da.values.item()
                value = f"{v:.5g}" if isinstance(v, float) else str(v)
            else:
                value = "[" + " x ".join(str(ds.sizes[d]) for d in da.dims) + "]"
            rows.append(f"<tr><td><code>{html.escape(str(name))}</code></td><td>{html.escape(value)}</td>"
                        f"<td>{html.escape(str(da.attrs.get('units', '')))}</td>"
                        f"<td>{html.escape(str(da.attrs.get('long_name', '')))}</td></tr>")
        dims = "".join(f"<li><code>{html.escape(str(d))}</code> ({html.escape(str(ds[d].attrs.get('scenario_key', d)))}): "
                       f"{ds.sizes[d]} values, {float(ds[d].min()):.4g} .. {float(ds[d].max()):.4g} "
                       f"{html.escape(str(ds[d].attrs.get('units', '')))}</li>" for d in ds.dims
                       if ds[d].dtype.kind in "fiu")
        warn = "".join(f"<li>{html.escape(w)}</li>" for w in self.warnings)
        return (f"<div><b>optogen Result</b>: {html.escape(self.scenario.title)}"
                + (f"<ul>{dims}</ul>" if dims else " (single point)")
                + (f"<p>warnings:</p><ul>{warn}</ul>" if warn else "")
                + f"<details><summary>{len(ds.data_vars)} variables</summary><table>"
                  "<tr><th>name</th><th>value</th><th>units</th><th>long_name</th></tr>"
                + "".join(rows) + "</table></details></div>")

    def to_dict(self) -> dict:
        """Nested JSON-ready blocks (DESIGN.md keys); null where a quantity does not apply.

        Returns
        -------
        dict
            ``title``, ``version``, ``sweep`` (the swept values by dotted key, for a sweep),
            one entry per output block, and ``warnings`` when there are any; numbers in the
            unit of their name's suffix, NaN as None.
        """
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


def var_attrs(name: str, values: np.ndarray, block: str | None = None, key: str | None = None) -> dict:
    """CF attributes of a Dataset variable: long_name, units (numbers only), block and key.

    Parameters
    ----------
    name : str
        The variable name (its suffix gives the unit).
    values : numpy.ndarray
        The values (their dtype decides whether a unit applies).
    block : str or None, optional
        The output block the variable comes from.
    key : str or None, optional
        Its key within the block.

    Returns
    -------
    dict
        The attributes.
    """
    attrs = {"long_name": long_name(name)}
    if np.asarray(values).dtype.kind not in "bOUS":
        attrs["units"] = unit_of(name)
    if block:
        attrs.update(block=block, key=key)
    return attrs


def coord_attrs(key: str, values: np.ndarray) -> dict:
    """CF attributes of the coordinate of a swept key: long_name, units (numbers), scenario_key.

    Parameters
    ----------
    key : str
        The dotted scenario key.
    values : numpy.ndarray
        The swept values.

    Returns
    -------
    dict
        The attributes.
    """
    attrs = {"long_name": long_name(key)}
    if np.asarray(values).dtype.kind in "fiu":
        attrs["units"] = unit_of(key)
    attrs["scenario_key"] = key
    return attrs


def labelled_dataset(blocks, shape, axes) -> xr.Dataset:
    """Blocks of flat arrays -> a Dataset over the sweep axes (a "point" dimension without axes).

    Parameters
    ----------
    blocks : Mapping[str, Mapping[str, numpy.ndarray]]
        Output blocks of flat arrays in the C order of the grid.
    shape : sequence of int
        The grid shape, one length per axis.
    axes : sequence of SweepAxis
        The sweep axes (objects with ``key`` and ``values``); empty for no grid.

    Returns
    -------
    xarray.Dataset
        One variable per block key (`var_name`) with CF attributes, one coordinate per axis.
    """
    dims = [dim_name(a.key) for a in axes] if axes else ["point"]
    shape = list(shape) if axes else [-1]
    data_vars = {}
    for block, vals in blocks.items():
        for key, arr in vals.items():
            name = var_name(block, key)
            arr = np.asarray(arr)
            if name == "converged":
                arr = arr.astype(bool)
            data_vars[name] = (dims, arr.reshape(shape), var_attrs(name, arr, block, key))
    coords = {dim_name(a.key): (dim_name(a.key), a.values, coord_attrs(a.key, a.values)) for a in axes} if axes else {}
    return xr.Dataset(data_vars, coords=coords)


def tidy_attrs(ds: xr.Dataset) -> None:
    """Make every variable of `ds` carry CF attributes, in place.

    A long_name everywhere, no units on strings and flags (booleans), units from the name
    elsewhere when missing.

    Parameters
    ----------
    ds : xarray.Dataset
        The Dataset, changed in place.
    """
    for name, var in ds.variables.items():
        attrs = var.attrs
        attrs.setdefault("long_name", long_name(attrs.get("scenario_key", name)))
        if var.dtype.kind in "bOUS":
            attrs.pop("units", None)
        elif "units" not in attrs:
            attrs["units"] = unit_of(attrs.get("scenario_key", name))


def add_attrs(ds: xr.Dataset, sc: Scenario, history: str | None = None) -> None:
    """Global attributes: Conventions, title, source, history, the original and the effective scenario.

    Parameters
    ----------
    ds : xarray.Dataset
        The Dataset, changed in place.
    sc : Scenario
        The scenario that was run.
    history : str or None, optional
        The line to record (default: the time and the command line of this process).
    """
    created = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
    ds.attrs.update({
        "Conventions": CONVENTIONS,
        "title": sc.title,
        "source": f"optogen {__version__}",
        "history": history or f"{created} {command_line()}",
        "scenario": sc.text,
        "scenario_effective": sc.to_toml(),
        "optogen_version": __version__,
        "created": created,
        "swept_keys": ", ".join(a.key for a in sc.sweep) or "(single point)",
    })
    tidy_attrs(ds)


def command_line() -> str:
    """This process's command line, as the ``history`` attribute records it.

    Returns
    -------
    str
        The shell-quoted command line (``optogen ...``), or "python (optogen.run)" without one.
    """
    import shlex
    argv = list(sys.argv)
    if argv and Path(argv[0]).name in ("optogen", "__main__.py", "cli.py"):
        argv[0] = "optogen"
    return shlex.join(argv) if argv and argv[0] else "python (optogen.run)"


def tidy_columns(ds: xr.Dataset) -> dict[str, np.ndarray]:
    """The tidy table of a Dataset as flat columns, built from arrays (no loop over rows).

    Parameters
    ----------
    ds : xarray.Dataset
        The result Dataset.

    Returns
    -------
    dict[str, numpy.ndarray]
        One entry per dimension coordinate (the grid values, C order: the last dimension
        varies fastest) then one per data variable, each a 1-D array of the grid size; a
        scalar variable is repeated on every row.
    """
    dims = list(ds.dims)
    shape = tuple(ds.sizes[d] for d in dims)
    n = int(np.prod(shape)) if dims else 1
    cols: dict[str, np.ndarray] = {}
    for i, d in enumerate(dims):
        idx = [None] * len(dims)
        idx[i] = slice(None)
        cols[d] = np.broadcast_to(np.asarray(ds[d].values)[tuple(idx)], shape).reshape(n)
    for name, da in ds.data_vars.items():
        values = np.asarray(da.transpose(*[d for d in dims if d in da.dims]).values)
        if da.ndim < len(dims):
            expand = tuple(slice(None) if d in da.dims else None for d in dims)
            values = values[expand]
        cols[name] = np.broadcast_to(values, shape).reshape(n)
    return cols


# ---------------------------------------------------------------------------
# Half powers in files: UDUNITS-2 (and with it CF) has integer exponents only
# ---------------------------------------------------------------------------

#: the note added to the ``comment`` of a squared file variable (removed again by `from_file_form`)
SQUARE_NOTE = ("UDUNITS-2 has no half powers, so this quantity is stored squared; "
               "optogen.open_result gives back its square root under the name square_of.")

#: the largest value whose square is a finite float64 [-]
SQUARE_MAX = math.sqrt(np.finfo(np.float64).max)


def _square_attrs(name: str, attrs: Mapping[str, Any]) -> dict:
    """The attributes of the file variable holding the square of the half-power quantity `name`."""
    out = {k: v for k, v in attrs.items() if k not in ("long_name", "units", "comment")}
    out.update(long_name=f"square of the {attrs.get('long_name') or long_name(name)}",
               units=unit_of(squared_name(name)), square_of=name,
               square_of_units=attrs.get("units") or unit_of(name),
               comment=" ".join(filter(None, [SQUARE_NOTE, attrs.get("comment")])))
    return out


def square_values(name: str, values) -> np.ndarray:
    """The squares written to a file for the half-power quantity `name`.

    Parameters
    ----------
    name : str
        The variable's name (in memory), e.g. "detectivity_blip_cm_Hz05_W".
    values : array_like
        Its values, numbers of any kind.

    Returns
    -------
    numpy.ndarray
        values^2 as float64.  A finite value above `SQUARE_MAX` (about 1.3e154, e.g. D*_BLIP
        of an almost black background) has no finite square: it is stored as inf, with a
        `PhysicsNoteWarning` that says how many.

    Raises
    ------
    TypeError
        For values that are not numbers (a programming error).
    """
    a = np.asarray(values)
    if a.dtype.kind not in "fiu":
        raise TypeError(f"{name}: half-power values must be numbers, not {a.dtype}")
    a = a.astype(np.float64)
    big = int(np.count_nonzero(np.isfinite(a) & (np.abs(a) > SQUARE_MAX)))
    if big:
        import warnings
        from ..errors import PhysicsNoteWarning
        warnings.warn(f"{name}: {big} value(s) above {SQUARE_MAX:.3g}, whose squares overflow; "
                      "the NetCDF file stores them as inf (the JSON and CSV keep the values)", PhysicsNoteWarning)
    with np.errstate(over="ignore"):
        return a * a


def to_file_form(ds: xr.Dataset) -> xr.Dataset:
    """`ds` with every quantity in a half-power unit replaced by its square (NetCDF files).

    Noise current densities [A Hz^(-1/2)] become noise power spectral densities [A^2 Hz^-1],
    D* and D*_BLIP [cm Hz^(1/2) W^-1] their squares [cm^2 Hz W^-2] (`square_values`), named
    by `optogen.scenario.squared_name`, with the attributes ``square_of`` (the variable's
    name) and ``square_of_units``: UDUNITS-2, which CF requires for ``units``, cannot write a
    half power.  `from_file_form` is the inverse.

    Parameters
    ----------
    ds : xarray.Dataset
        A result Dataset (in memory).

    Returns
    -------
    xarray.Dataset
        A copy, variables in the same order.
    """
    out = ds.copy()
    renames = {}
    for name, da in ds.data_vars.items():
        square = squared_name(name)
        if square:
            out[name] = da.copy(data=square_values(name, da.values))
            out[name].attrs = _square_attrs(name, da.attrs)
            renames[name] = square
    return out.rename(renames) if renames else out


class _SquareRoot(BackendArray):
    """The square root of a Variable's data, taken on the part that is indexed (read lazily)."""

    def __init__(self, variable: xr.Variable):
        self.variable = variable
        self.shape = variable.shape
        self.dtype = np.dtype(np.float64)

    def __getitem__(self, key):
        return indexing.explicit_indexing_adapter(key, self.shape, indexing.IndexingSupport.BASIC, self._root)

    def _root(self, key):
        return np.sqrt(np.asarray(self.variable[key].values, dtype=np.float64))


def from_file_form(ds: xr.Dataset) -> xr.Dataset:
    """The inverse of `to_file_form`: the square root of every variable with ``square_of``.

    Parameters
    ----------
    ds : xarray.Dataset
        A Dataset read from an optogen NetCDF file (or `to_file_form`'s output).

    Returns
    -------
    xarray.Dataset
        A copy with the half-power quantities back under their own names and units.  The
        roots are taken lazily, on the part of the data that is read (a file's data stay on
        disk until then; no dask needed).
    """
    out = ds.copy()
    renames = {}
    for name, da in ds.data_vars.items():
        original = da.attrs.get("square_of")
        if not original:
            continue
        attrs = {k: v for k, v in da.attrs.items() if k not in ("square_of", "square_of_units", "comment")}
        comment = str(da.attrs.get("comment", "")).replace(SQUARE_NOTE, "", 1).strip()
        if comment:
            attrs["comment"] = comment
        attrs.update(long_name=long_name(original), units=da.attrs.get("square_of_units") or unit_of(original))
        lazy = indexing.LazilyIndexedArray(_SquareRoot(da.variable))
        out[name] = xr.Variable(da.dims, lazy, attrs)
        renames[name] = original
    return out.rename(renames) if renames else out


def open_result(path) -> xr.Dataset:
    """Open a ``result.nc`` that optogen wrote, with its quantities as `Result.to_dataset` has them.

    ``xarray.open_dataset`` reads the file as stored (CF: noise and D* squared); this also takes
    their square roots back (`from_file_form`).

    Parameters
    ----------
    path : str or pathlib.Path
        The NetCDF file.

    Returns
    -------
    xarray.Dataset
        The result Dataset (data read on access).
    """
    return from_file_form(xr.open_dataset(path, engine="h5netcdf"))


# ---------------------------------------------------------------------------
# Large sweeps: chunk by chunk to a chunked, compressed NetCDF4 file
# ---------------------------------------------------------------------------

#: sweeps above this many points are streamed to disk (ChunkStore) instead of held in memory
STREAM_THRESHOLD = 1_000_000

#: HDF5 chunk of the on-disk arrays: about this many values [-] (512 KiB of float64: inside HDF5's
#: default 1 MiB chunk cache, so a chunk filled by two sweep chunks is compressed once, not read
#: back, decompressed and compressed again; 1 << 18 took 1.8x as long to write in the benchmark)
DISK_CHUNK_VALUES = 1 << 16
#: zlib level of the NetCDF4 files (1: about the ratio of 4 at a third less time; netCDF-C reads it) [-]
ZLIB_LEVEL = 1


def _hyperslabs(start: int, stop: int, shape: Sequence[int]):
    """Split the flat C-order range [start, stop) of an array of `shape` into rectangular pieces.

    Yields (index, lo, hi): `index` a tuple of ints and slices into the N-d array, [lo, hi) the
    flat range it covers (pieces come in order, each a full C-ordered block).  At most
    2 (ndim - 1) + 1 pieces.
    """
    if start >= stop:
        return
    if len(shape) == 1:
        yield (slice(start, stop),), start, stop
        return
    inner = int(np.prod(shape[1:]))
    i0, r0 = divmod(start, inner)
    i1, r1 = divmod(stop, inner)
    if i0 == i1:
        for idx, lo, hi in _hyperslabs(r0, r1, shape[1:]):
            yield (i0, *idx), i0 * inner + lo, i0 * inner + hi
        return
    if r0:
        for idx, lo, hi in _hyperslabs(r0, inner, shape[1:]):
            yield (i0, *idx), i0 * inner + lo, i0 * inner + hi
        i0 += 1
    if i1 > i0:
        yield (slice(i0, i1), *[slice(None)] * (len(shape) - 1)), i0 * inner, i1 * inner
    if r1:
        for idx, lo, hi in _hyperslabs(0, r1, shape[1:]):
            yield (i1, *idx), i1 * inner + lo, i1 * inner + hi


#: width of the character arrays that hold strings in a streamed file, and their dimension [-]
STRING_WIDTH = 32
STRING_DIM = "string32"


def _characters(values: np.ndarray) -> np.ndarray:
    """Strings as an (n, STRING_WIDTH) array of single UTF-8 bytes (CF 2.2 character arrays).

    Raises ValueError for a string longer than STRING_WIDTH bytes (the labels written here are
    short model words: a longer one is a programming error, never truncated silently).
    """
    encoded = np.char.encode(np.asarray(values).astype(str), "utf-8")
    if encoded.dtype.itemsize > STRING_WIDTH:
        raise ValueError(f"a string longer than {STRING_WIDTH} bytes cannot be streamed: {encoded.max()!r}")
    return np.asarray(encoded, dtype=f"S{STRING_WIDTH}").view("S1").reshape(-1, STRING_WIDTH)


class ChunkStore:
    """A sweep written chunk by chunk to a chunked, zlib-compressed NetCDF4 file (h5netcdf).

    Parameters
    ----------
    path : str or pathlib.Path
        The file to create (replaced if it exists).
    axes : sequence of SweepAxis
        The sweep axes (objects with ``key`` and ``values``, e.g. `SweepAxis`) in the C order
        of the flat grid the chunks come in (slow keys first, then fast keys).
    names_units : Mapping[str, Mapping[str, str or None]] or None, optional
        {block: {key: units}} of the variables to expect, or None; a units value of None
        takes the unit from the name (`unit_of`).  A block or key met in `write` that is not
        listed is added then; a variable never written stays at its fill value (NaN, 0 or an
        empty string).
    order : sequence of str or None, optional
        The dotted keys in the scenario's axis order; `close` returns the Dataset transposed
        to it (default: the order of `axes`).

    Notes
    -----
    ``write(offset, blocks)`` stores a chunk: `blocks` = {block: {key: 1-D array}} as
    `optogen.pipeline.evaluate` returns them, the values of the flat grid points
    [offset, offset + n).  The range is written as hyperslabs of the N-d arrays, so only the
    chunk is ever in memory.  ``close(attrs)`` writes the global attributes, closes the file
    and returns it opened lazily with xarray (data read on access).
    """

    def __init__(self, path, axes, names_units: Mapping[str, Mapping[str, str | None]] | None = None,
                 order: Sequence[str] | None = None):
        import h5netcdf
        self.path = Path(path)
        self.axes = list(axes)
        self.dims = [dim_name(a.key) for a in self.axes]
        self.shape = tuple(int(np.asarray(a.values).size) for a in self.axes)
        self.size = int(np.prod(self.shape))
        self.order = [dim_name(k) for k in order] if order is not None else list(self.dims)
        self.units = {(b, k): u for b, vals in (names_units or {}).items() for k, u in vals.items()}
        self._names: dict[tuple[str, str], str] = {}      # (block, key) -> name in the file
        self._squared: set[tuple[str, str]] = set()         # written squared (`to_file_form`)
        self._file = h5netcdf.File(self.path, "w")
        # on disk in the scenario's axis order (the Dataset's); the chunks arrive in grid order
        self._perm = [self.dims.index(d) for d in self.order]
        self._file.dimensions = {self.dims[i]: self.shape[i] for i in self._perm}
        for a, d in zip(self.axes, self.dims):
            values = np.asarray(a.values)
            v = self._file.create_variable(d, (d,), values.dtype if values.dtype.kind != "b" else np.int8)
            v[...] = values.astype(np.int8) if values.dtype.kind == "b" else values
            for k, val in coord_attrs(a.key, values).items():
                v.attrs[k] = val
        grid_chunks = self._chunk_shape()
        self._chunks = tuple(grid_chunks[i] for i in self._perm)

    def _chunk_shape(self) -> tuple[int, ...]:
        """HDF5 chunks: whole fast dimensions (last first) up to about DISK_CHUNK_VALUES values."""
        chunks, room = [], DISK_CHUNK_VALUES
        for n in reversed(self.shape):
            c = max(1, min(n, room))
            chunks.append(c)
            room = max(1, room // c)
        return tuple(reversed(chunks))

    def _variable(self, block: str, key: str, sample: np.ndarray):
        if (block, key) in self._names:
            return self._file.variables[self._names[(block, key)]]
        name = var_name(block, key)
        kind = sample.dtype.kind
        square = squared_name(name)
        self._names[(block, key)] = square or name
        if square:
            self._squared.add((block, key))
            dtype, fill = np.float64, np.nan
        elif name == "converged" or kind == "b":
            dtype, fill = np.int8, None         # no _FillValue: xarray would mask the 0 (false) flags
        elif kind in "OUS":
            # fixed-width characters (CF 2.2), not variable-length strings: xarray reads those
            # whole when it opens the file, which a grid of 1e7 points cannot afford
            if STRING_DIM not in self._file.dimensions:
                self._file.dimensions[STRING_DIM] = STRING_WIDTH
            v = self._file.create_variable(name, tuple(self.order) + (STRING_DIM,), "S1",
                                           chunks=self._chunks + (STRING_WIDTH,), compression="gzip",
                                           compression_opts=ZLIB_LEVEL)
            v.attrs["_Encoding"] = "utf-8"
            for k, val in var_attrs(name, sample, block, key).items():
                v.attrs[k] = val
            return v
        else:
            dtype, fill = sample.dtype if kind == "f" else np.float64, np.nan
        opts = dict(chunks=self._chunks, compression="gzip", compression_opts=ZLIB_LEVEL, shuffle=True)
        v = self._file.create_variable(square or name, tuple(self.order), dtype, fillvalue=fill, **opts)
        attrs = var_attrs(name, sample.astype(bool) if dtype is np.int8 else sample, block, key)
        units = self.units.get((block, key))
        if units is not None and "units" in attrs:
            attrs["units"] = units
        if square:
            attrs = _square_attrs(name, attrs)
        if dtype is np.int8:             # a flag: CF 3.5, and xarray's own marker to read it back as bool
            attrs.update(flag_values=np.array([0, 1], dtype=np.int8), flag_meanings="false true", dtype="bool")
        for k, val in attrs.items():
            v.attrs[k] = val
        return v

    def write(self, offset: int, blocks: Mapping[str, Mapping[str, np.ndarray]]) -> None:
        """Store the chunk of flat grid points [offset, offset + n) (n = length of the arrays).

        Parameters
        ----------
        offset : int
            Flat C-order index of the chunk's first grid point [-].
        blocks : Mapping[str, Mapping[str, numpy.ndarray]]
            {block: {key: 1-D array of length n}} as `optogen.pipeline.evaluate` returns them;
            blocks whose name starts with "_" are skipped.

        Raises
        ------
        ValueError
            When the chunk lies outside the grid (a programming error, not an input error).
        """
        for block, vals in blocks.items():
            if block.startswith("_"):
                continue
            for key, arr in vals.items():
                arr = np.asarray(arr).reshape(-1)
                if offset < 0 or offset + arr.size > self.size:
                    raise ValueError(f"chunk [{offset}, {offset + arr.size}) outside the grid of {self.size} points")
                v = self._variable(block, key, arr)
                tail: list[int] = []
                if v.dtype == np.int8:
                    arr = arr.astype(np.int8)
                elif (block, key) in self._squared:
                    arr = square_values(var_name(block, key), arr)
                elif arr.dtype.kind in "OUS":
                    arr = _characters(arr)
                    tail = [STRING_WIDTH]
                for index, lo, hi in _hyperslabs(offset, offset + arr.shape[0], self.shape):
                    # the hyperslab in grid order, every axis kept (an integer index as a length-1
                    # slice), then put in the disk's axis order
                    full = tuple(slice(s, s + 1) if not isinstance(s, slice) else
                                 slice(s.start or 0, n if s.stop is None else s.stop)
                                 for s, n in zip(index, self.shape))
                    data = arr[lo - offset: hi - offset].reshape([s.stop - s.start for s in full] + tail)
                    data = data.transpose(self._perm + list(range(len(full), data.ndim)))
                    v[tuple(full[i] for i in self._perm) + (slice(None),) * len(tail)] = data

    def abandon(self) -> None:
        """Close and delete the file (a run that failed part-way leaves nothing behind)."""
        try:
            self._file.close()
        finally:
            self.path.unlink(missing_ok=True)

    def close(self, attrs: Mapping[str, Any] | None = None) -> xr.Dataset:
        """Write the global attributes, close the file and open it lazily (scenario axis order).

        Parameters
        ----------
        attrs : Mapping[str, Any] or None, optional
            Global attributes to write (e.g. those of `add_attrs`).

        Returns
        -------
        xarray.Dataset
            The file opened with xarray (data read on access), transposed to `order`.
        """
        for k, val in (attrs or {}).items():
            self._file.attrs[k] = val
        self._file.attrs["optogen_storage"] = "chunked NetCDF4 written chunk by chunk (optogen ChunkStore)"
        self._file.close()
        return open_result(self.path)      # already in the scenario's order
