"""Pipeline, step 4: running a scenario: a single point or every point of its sweep grid.

Keys the core broadcasts over ("fast" keys: temperature, doping, resistivity and the light
scaling) are evaluated as arrays in chunks; every other swept key ("slow" keys: thickness,
wavelength, defect density, ...) is an outer loop over its values, each step vectorised over
the fast keys.  Everything that does not depend on the swept keys (the material, the spectrum,
the optical data) is built once per slow-key group.  tqdm and dask are imported only when
used (a progress bar, `--workers` / `--scheduler`).
"""
from __future__ import annotations

import atexit
import itertools
import math
import os
import queue
import sys
import tempfile
import threading
from pathlib import Path

import numpy as np
import xarray as xr

from .. import schema
from ..errors import InputError
from ..scenario import Scenario
from .point import background_limit, evaluate, point_details
from .result import STREAM_THRESHOLD, ChunkStore, Result, add_attrs, labelled_dataset
from .setup import FAST_KEYS, Setup, build, swept_light_scaling, tabulate_generation


DEFAULT_CHUNK = 100_000


#: depth-resolved chunks: points x (at most profile.mesh's 20001 nodes) stays below this [cells]
MAX_PROFILE_CELLS = 20_000_000


MAX_PROFILE_NODES = 20_001


#: most dask workers a run may start
MAX_WORKERS = 1024


def run(scenario: Scenario, *, progress: bool | None = None, workers: int | None = None,
        scheduler: str | None = None, chunk_size: int | None = None, store=None) -> Result:
    """Run a scenario: a single point, or every point of its sweep grid.

    Parameters
    ----------
    scenario : Scenario
        The scenario to run.
    progress : bool or None, optional
        Show a tqdm bar (None: only on a terminal, after about 1 s).
    workers : int or None, optional
        Run the chunks on a local dask cluster with this many workers [-].
    scheduler : str or None, optional
        Address of an existing dask.distributed scheduler.
    chunk_size : int or None, optional
        Points per chunk (default from [solver] chunk_size or 100000) [-].
    store : str or pathlib.Path or None, optional
        A NetCDF4 file to stream the sweep into chunk by chunk (`result.ChunkStore`), so
        that memory is bounded by a chunk; a sweep of more than `result.STREAM_THRESHOLD`
        points is always streamed (to a temporary file, removed when Python exits, unless
        `store` is given).  The Result's Dataset then reads the file lazily.

    Returns
    -------
    Result
        The labelled Dataset, a single point's details and the run's warnings.

    Raises
    ------
    InputError
        For a scenario value outside the schema, or bad ``workers``.
    """
    sc = scenario
    if not sc.sweep:
        setup = build(sc)
        blocks = evaluate(setup, {}, 1, details=True)
        details = blocks.pop("_details")
        details.update(point_details(setup, details, blocks))
        if "implied_jv" in details:
            jv = details["implied_jv"]
            blocks["implied_jv"] = {"voc_V": np.ravel(jv.voc_V), "vmp_V": np.ravel(jv.vmp_V),
                                    "jmp_mA_cm2": np.ravel(jv.jmp_mA_cm2), "ff": np.ravel(jv.ff),
                                    "pmax_mW_cm2": np.ravel(jv.pmax_mW_cm2),
                                    "efficiency": np.ravel(np.nan if jv.efficiency is None else jv.efficiency)}
        ds = labelled_dataset(blocks, (), [])
        ds = ds.isel({"point": 0}) if "point" in ds.dims else ds
        add_attrs(ds, sc)
        add_background_limit(ds, setup)
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
    n_fast = int(np.prod([a.values.size for a in fast])) if fast else 1
    slow_combos = list(itertools.product(*[range(a.values.size) for a in slow]))

    client = dask_client(workers, scheduler) if (workers or scheduler) else None
    total = len(slow_combos) * n_fast
    merged: dict[str, dict[str, np.ndarray]] = {}     # filled in place: no second copy of the grid
    chunk_store = _open_store(store, total, slow + fast, axes)

    writer = _BackgroundWriter(chunk_store) if chunk_store is not None else None

    def keep(offset, part):
        if writer is not None:
            writer.put(offset, part)
            return
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
            setup = build(sc.with_values(fixed) if fixed else sc, unit_scaling)
            temps = [a.values for a in fast if a.key == "absorber.temperature_K"]
            if temps and temps[0].size > 1:          # generation once per temperature of the group
                with np.errstate(invalid="ignore"):
                    ok = (temps[0] >= schema.T_MIN_K) & (temps[0] <= schema.T_MAX_K)
                tabulate_generation(setup, np.asarray(temps[0], dtype=float)[ok])
            for start, part in _group_chunks(setup, fast, n_fast, chunk, client):
                keep(g * n_fast + start, part)
                bar.update(1)
        if writer is not None:
            writer.finish()
    except BaseException:
        if writer is not None:
            writer.stop()
        if chunk_store is not None:
            chunk_store.abandon()
        raise
    finally:
        bar.close()
        if client is not None:
            cluster = client.cluster if not scheduler else None
            client.close()
            if cluster is not None:
                cluster.close()
    if chunk_store is not None:
        ds = chunk_store.close()
        bad = int((~ds["converged"].astype(bool)).sum()) if "converged" in ds else 0
    else:
        bad = int(np.sum(merged["steady_state"]["converged"] == 0)) if "converged" in merged.get(
            "steady_state", {}) else 0
        # reorder from (slow..., fast...) to the scenario's axis order
        order = slow + fast
        perm = [order.index(a) for a in axes]
        shape = [a.values.size for a in order]
        merged = {b: {k: np.transpose(v.reshape(shape), perm).reshape(-1) for k, v in vals.items()}
                  for b, vals in merged.items()}
        ds = labelled_dataset(merged, [a.values.size for a in axes], axes)
    if bad:
        warnings.append(f"{bad} operating point(s) did not converge or are outside the model "
                        "(the reasons are in the warnings); see the 'converged' variable")
    add_attrs(ds, sc)
    if not slow:
        add_background_limit(ds, setup)
    return Result(sc, ds, {}, tuple(warnings))


class _BackgroundWriter:
    """Writes streamed chunks in a second thread while the next chunk is computed.

    HDF5 compresses with the GIL released, so writing overlaps the computation (the solver's
    numpy work); at most `depth` chunks wait, so memory stays bounded.  Chunks are written in
    the order they were put.  An error in the writer is raised again in the caller.

    Parameters
    ----------
    store : ChunkStore
        Where the chunks go.
    depth : int
        Most chunks waiting to be written [-].
    """

    def __init__(self, store, depth: int = 2):
        self._store = store
        self._queue = queue.Queue(maxsize=depth)
        self._error: BaseException | None = None
        self._thread = threading.Thread(target=self._run, name="optogen-writer", daemon=True)
        self._thread.start()

    def _run(self):
        while True:
            item = self._queue.get()
            if item is None:
                return
            if self._error is None:
                try:
                    self._store.write(*item)
                except BaseException as exc:     # handed to the caller by put / finish
                    self._error = exc

    def _raise(self):
        if self._error is not None:
            raise self._error

    def put(self, offset: int, part) -> None:
        """Queue one chunk (blocks while `depth` chunks wait) [-]."""
        self._raise()
        self._queue.put((offset, part))

    def finish(self) -> None:
        """Write what is queued, stop the thread and raise a writer error if there was one [-]."""
        self._queue.put(None)
        self._thread.join()
        self._raise()

    def stop(self) -> None:
        """Stop after the chunks already queued (on an error elsewhere) [-]."""
        self._queue.put(None)
        self._thread.join()


def _open_store(path, total: int, grid_axes, axes):
    """A `ChunkStore` for a streamed sweep (a path given, or more than STREAM_THRESHOLD points), else None."""
    if path is None and total <= STREAM_THRESHOLD:
        return None
    if path is None:
        fd, name = tempfile.mkstemp(prefix="optogen-sweep-", suffix=".nc")
        os.close(fd)
        path = Path(name)
        atexit.register(_remove, path)
    return ChunkStore(path, grid_axes, None, order=[a.key for a in axes])


def _remove(path: Path) -> None:
    try:
        path.unlink()
    except OSError:
        pass


def add_background_limit(ds: xr.Dataset, setup: Setup) -> None:
    """Record the background-limit temperature for a detector looking at a warm background.

    Nothing is done without a [detector], a [background] and recombination settings.

    Parameters
    ----------
    ds : xarray.Dataset
        The result Dataset; gains the attributes and scalar variables
        ``background_limit_temperature_K`` [K] (NaN when not found) and
        ``background_limit_note``.
    setup : Setup
        The set-up of the run (`point.background_limit` runs on it).
    """
    sc = setup.scenario
    if "detector" not in sc.data or "background" not in sc.data or setup.recombination is None:
        return
    bl = background_limit(setup)
    ds.attrs["background_limit_temperature_K"] = bl.temperature_K if bl.found else float("nan")
    ds.attrs["background_limit_note"] = bl.note
    for name in ("background_limit_temperature_K", "background_limit_note"):
        ds[name] = ((), ds.attrs[name], {"units": "K" if name.endswith("_K") else "1",
                                          "block": "detector", "key": name})


def _progress(progress, total):
    from tqdm.auto import tqdm
    disable = (not sys.stderr.isatty()) if progress is None else (not progress)
    return tqdm(total=total, disable=disable, delay=1.0, unit="chunk", desc="optogen sweep")


def dask_client(workers, scheduler):
    """A dask.distributed client: a local cluster of `workers` processes, or an existing scheduler.

    Parameters
    ----------
    workers : int or None
        Single-threaded worker processes of a new local cluster, 1 to MAX_WORKERS [-].
    scheduler : str or None
        Address of an existing dask.distributed scheduler (used instead of `workers`) [-].

    Returns
    -------
    distributed.Client
        The client (close it, and its local cluster, when done).

    Raises
    ------
    InputError
        Without dask installed, or for a worker count out of range.
    """
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


def evaluate_chunk(setup: Setup, fast, start: int, stop: int) -> dict[str, dict[str, np.ndarray]]:
    """Every output block for the points start..stop-1 (flat C order) of the fast-key grid.

    Parameters
    ----------
    setup : Setup
        The set-up of the group of points.
    fast : sequence of (str, numpy.ndarray)
        The swept fast keys as (key, values) pairs in grid order [units of each key]; the
        values of each point come from its flat index, so a chunk needs no copy of the grid.
    start : int
        Flat index of the first point [-].
    stop : int
        Flat index one past the last point [-].

    Returns
    -------
    dict[str, dict[str, numpy.ndarray]]
        The output blocks of `point.evaluate` for the stop - start points.
    """
    if not fast:
        return evaluate(setup, {}, stop - start)
    index = np.unravel_index(np.arange(start, stop), [values.size for _, values in fast])
    return evaluate(setup, {key: values[i] for (key, values), i in zip(fast, index)}, stop - start)


#: chunks in flight per dask worker (bounds the results waiting in memory) [-]
IN_FLIGHT_PER_WORKER = 2


def _group_chunks(setup: Setup, fast_axes, n_fast: int, chunk: int, client):
    """(offset, blocks) for every chunk of one group of points, in process or on dask.

    On dask the set-up is sent to every worker once and at most IN_FLIGHT_PER_WORKER chunks
    per worker are pending at a time, so the memory held for results is bounded by a few
    chunks; the chunks (and so the answers) are the same as in process.
    """
    fast = [(a.key, np.asarray(a.values)) for a in fast_axes]
    starts = range(0, n_fast, chunk)
    if client is None:
        for start in starts:
            yield start, evaluate_chunk(setup, fast, start, min(start + chunk, n_fast))
        return
    from dask.distributed import as_completed
    remote = client.scatter(setup, broadcast=True)
    limit = IN_FLIGHT_PER_WORKER * max(1, len(client.scheduler_info().get("workers", {})))
    pending = iter(starts)
    window = as_completed()
    futures = {}
    for start in itertools.islice(pending, limit):
        f = client.submit(evaluate_chunk, remote, fast, start, min(start + chunk, n_fast), pure=False)
        futures[f.key] = start
        window.add(f)
    for f in window:
        start = futures.pop(f.key)
        part = f.result()
        nxt = next(pending, None)
        if nxt is not None:
            nf = client.submit(evaluate_chunk, remote, fast, nxt, min(nxt + chunk, n_fast), pure=False)
            futures[nf.key] = nxt
            window.add(nf)
        yield start, part
