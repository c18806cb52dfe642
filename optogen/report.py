"""Writing results to files: JSON, NetCDF, tidy CSV and PNG, each atomically.

Every file is written under a temporary name in the target folder and then
renamed (`atomic_path`), with the permissions the umask gives a new file, so an
interrupted run never leaves a half-written file under the final name.
`write_all` goes further: it writes every file of a run into a hidden staging
folder inside the target and moves them into place only when all are written,
so a run either writes all its files or none.  A folder that cannot be created
or written is the user's error (InputError naming it), not a crash.
"""
from __future__ import annotations

import contextlib
import json
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np
import xarray as xr

from .errors import InputError
from .scenario import squared_name


def file_mode() -> int:
    """The permission bits a new file gets under the current umask.

    Returns
    -------
    int
        0o666 & ~umask [-].
    """
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


def _folder_error(folder: Path, exc: OSError) -> InputError:
    return InputError("--out", str(folder), "a folder that can be created and written",
                      exc.strerror or str(exc))


@contextlib.contextmanager
def atomic_path(final: Path):
    """Yield a temporary path next to `final`; rename it to `final` on success.

    The renamed file gets the permissions of a plainly created file (0o666 minus the
    umask; the temporary file itself is private while it is written).  An OSError of the
    folder (missing, read-only, full) is raised as InputError naming it.

    Parameters
    ----------
    final : str or Path
        The file to write [-].

    Yields
    ------
    Path
        The temporary file to write to.
    """
    final = Path(final)
    try:
        final.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{final.name}.", suffix=".part", dir=final.parent)
    except OSError as exc:
        raise _folder_error(final.parent, exc) from None
    os.close(fd)
    try:
        yield Path(tmp)
        try:
            os.chmod(tmp, file_mode())
            os.replace(tmp, final)
        except OSError as exc:
            raise _folder_error(final.parent, exc) from None
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)


def write_text(path: Path, text: str) -> Path:
    """Write UTF-8 text atomically (`atomic_path`).

    Parameters
    ----------
    path : str or Path
        The file to write [-].
    text : str
        Its contents [-].

    Returns
    -------
    Path
        The path written.
    """
    with atomic_path(path) as tmp:
        tmp.write_text(text, encoding="utf-8")
    return Path(path)


def write_json(path: Path, data) -> Path:
    """Write JSON (indented, NaN refused) atomically.

    Parameters
    ----------
    path : str or Path
        The file to write [-].
    data : object
        JSON-serialisable data [-].

    Returns
    -------
    Path
        The path written.
    """
    return write_text(path, json.dumps(data, indent=2, allow_nan=False) + "\n")


def netcdf_ready(ds: xr.Dataset) -> tuple[xr.Dataset, dict]:
    """A copy of `ds` in CF encoding and the encoding to write it with.

    Booleans as int8 flags (CF 1.10 section 3.5: ``flag_values`` an array of the variable's
    type, ``flag_meanings``; xarray's ``dtype = "bool"`` marker reads them back as booleans);
    strings as variable-length strings without units; numbers zlib-compressed with a NaN
    fill value; integers that fit as netCDF's classic 32-bit int (counts: older CF checkers and
    netCDF-3 tools refuse int64); coordinates without a fill value (CF 2.5.1); quantities in a
    half-power unit (noise densities, D*) squared, since UDUNITS-2 cannot write their units
    (`optogen.pipeline.result.to_file_form`; `optogen.open_result` takes the roots back).

    Parameters
    ----------
    ds : xarray.Dataset
        The result Dataset.

    Returns
    -------
    ready : xarray.Dataset
        The CF-encoded copy.
    encoding : dict
        Variable name -> encoding for `to_netcdf` [-].

    References
    ----------
    NetCDF Climate and Forecast (CF) Metadata Conventions, version 1.10, sections 2.5.1 and 3.5.
    """
    from .pipeline.result import ZLIB_LEVEL, to_file_form
    out = to_file_form(ds)
    encoding: dict[str, dict] = {}
    for name, var in out.variables.items():
        kind = var.dtype.kind
        if name in out.dims or name in out.coords:
            encoding[name] = {"_FillValue": None}
        if kind == "b":
            out[name] = var.astype(np.int8)
            out[name].attrs.update(var.attrs)
            out[name].attrs.update(flag_values=np.array([0, 1], dtype=np.int8), flag_meanings="false true",
                                   dtype="bool")
            out[name].attrs.pop("units", None)
            encoding.setdefault(name, {})["_FillValue"] = None
        elif kind in "OUS":
            out[name] = var.astype(str).astype(object)
            out[name].attrs.update(var.attrs)
            out[name].attrs.pop("units", None)
            encoding.setdefault(name, {}).update(dtype=str)
        elif kind in "iu" and var.dtype.itemsize > 4 and var.size and (
                np.iinfo(np.int32).min <= var.values.min() and var.values.max() <= np.iinfo(np.int32).max):
            encoding.setdefault(name, {})["dtype"] = np.int32      # counts: netCDF's classic int
        elif kind == "f" and name not in out.coords and var.ndim:
            encoding.setdefault(name, {}).update(zlib=True, complevel=ZLIB_LEVEL, shuffle=True)
    return out, encoding


def write_netcdf(path: Path, ds: xr.Dataset) -> Path:
    """NetCDF4 (HDF5, engine h5netcdf), CF 1.10, compressed; read with `optogen.open_result`.

    ``xarray.open_dataset`` reads the file as stored: CF as it is, with the quantities in a
    half-power unit squared (`netcdf_ready`); `optogen.open_result` gives them back.

    A Dataset already on disk as a chunked store (`optogen.pipeline.result.ChunkStore`, a
    large sweep) is copied block by block, never loaded whole; its global attributes and any
    variable added after the run are written into the copy.

    Parameters
    ----------
    path : str or Path
        The file to write (atomically) [-].
    ds : xarray.Dataset
        The result Dataset.

    Returns
    -------
    Path
        The path written.
    """
    source = ds.encoding.get("source")
    if source and ds.attrs.get("optogen_storage") and Path(source).is_file():
        with atomic_path(path) as tmp:
            shutil.copyfile(source, tmp)
            _update_store(tmp, ds)
        return Path(path)
    ready, encoding = netcdf_ready(ds)
    with atomic_path(path) as tmp:
        ready.to_netcdf(tmp, engine="h5netcdf", encoding=encoding)
    return Path(path)


def _update_store(path: Path, ds: xr.Dataset) -> None:
    """Bring a copied chunked store up to `ds`: global attributes and scalar variables added later."""
    import h5netcdf
    from .pipeline.result import to_file_form
    with h5netcdf.File(path, "a") as f:
        for k, v in ds.attrs.items():
            f.attrs[k] = v
        added = [n for n, da in ds.data_vars.items()
                 if not da.ndim and (squared_name(n) or n) not in f.variables]
        for name, da in to_file_form(ds[added]).data_vars.items():
            value = np.asarray(da.values)
            if value.dtype.kind in "OUS":
                import h5py
                var = f.create_variable(name, (), h5py.string_dtype())
                var[...] = str(value)
            else:
                var = f.create_variable(name, (), value.dtype)
                var[...] = value
            for k, v in da.attrs.items():
                if not (value.dtype.kind in "OUS" and k == "units"):
                    var.attrs[k] = v


#: above this many grid points no CSV is written: the NetCDF file is the data product
CSV_MAX_POINTS = 1_000_000

#: above this many grid points no result.json is written
JSON_MAX_POINTS = 10_000


def write_csv(path: Path, ds: xr.Dataset) -> Path:
    """Tidy CSV: one row per grid point, one column per swept key, then one per quantity.

    Swept keys by their underscore name, quantities with the unit in the name; NaN as an
    empty cell.

    Parameters
    ----------
    path : str or Path
        The file to write (atomically) [-].
    ds : xarray.Dataset
        The result Dataset.

    Returns
    -------
    Path
        The path written.

    Notes
    -----
    Built from whole columns (`optogen.pipeline.result.tidy_columns`) and written by Arrow's
    C++ CSV writer (`write_columns`): numbers in their shortest round-trip form, about 8x
    faster than pandas' writer with a float format (tests/benchmarks/bench_throughput.py).
    """
    from .pipeline.result import tidy_columns
    return write_columns(path, tidy_columns(ds))


def write_table(path: Path, columns: dict[str, np.ndarray]) -> Path:
    """A CSV of equal-length columns (curves: J-V, lifetime, profile); see `write_columns`.

    Parameters
    ----------
    path : str or Path
        The file to write (atomically) [-].
    columns : dict of str to ndarray
        Column name (unit in the name) -> 1-D array [unit in the name].

    Returns
    -------
    Path
        The path written.
    """
    return write_columns(path, columns)


def write_columns(path: Path, columns: dict[str, np.ndarray]) -> Path:
    """Write equal-length 1-D columns as a CSV with a header row, atomically.

    Numbers are written in their shortest form that reads back to the same double; NaN (and
    None) as an empty cell; booleans as true/false.

    Parameters
    ----------
    path : str or Path
        The file to write [-].
    columns : dict of str to array_like
        Column name -> 1-D array (numbers, booleans or strings) [unit in the name].

    Returns
    -------
    Path
        The path written.
    """
    import pyarrow as pa
    import pyarrow.csv as pacsv

    def column(v):
        a = np.asarray(v)
        if a.dtype.kind in "OUS":
            return pa.array([None if x is None else str(x) for x in a.reshape(-1)], type=pa.string())
        return pa.array(a.reshape(-1), from_pandas=True)     # NaN -> null (an empty cell)
    table = pa.table({k: column(v) for k, v in columns.items()})
    with atomic_path(path) as tmp:
        pacsv.write_csv(table, tmp)
    return Path(path)


# ---------------------------------------------------------------------------
# Terminal summary
# ---------------------------------------------------------------------------

CAUTION_ESTIMATE = ("Estimates from published models, not measurements; anything that feeds an "
                    "installation follows local codes and licensed practice.")
CAUTION_LIGHT = ("Laser / concentrated light: beams and focused sunlight can injure eyes and skin "
                 "at these powers; use the eyewear, enclosures and interlocks your laser-safety "
                 "rules require.")
CAUTION_COLD = ("Cryogenic temperature: liquid nitrogen and cold surfaces cause cold burns, and "
                "boiling cryogen builds pressure and displaces oxygen; follow your site's cryogen rules.")


#: above this incident irradiance (2 suns) the light caution is shown [W m^-2]
CAUTION_IRRADIANCE_W_m2 = 2000.0


def cautions(res) -> list[str]:
    """The safety notes that apply to a result.

    Always the estimate note; the light note for a laser or LED source or any point above
    2 suns of incident light (whatever sets the level); the cryogenic note below 200 K; the
    tunnelling and high-field notes where the detector flags them.

    Parameters
    ----------
    res : optogen.pipeline.result.Result
        A run's result.

    Returns
    -------
    list of str
        The notes [-].
    """
    sc, ds = res.scenario, res.dataset
    out = [CAUTION_ESTIMATE]
    src = str((sc.data.get("light") or {}).get("source", "")).lower()
    irr = float(np.nanmax(ds["irradiance_W_m2"].values)) if "irradiance_W_m2" in ds else 0.0
    if src in ("laser", "led") or irr > CAUTION_IRRADIANCE_W_m2:
        out.append(CAUTION_LIGHT)
    swept = {a.key: a.values for a in sc.sweep}
    if np.min(swept.get("absorber.temperature_K", sc.get("absorber.temperature_K", 300.0))) < 200:
        out.append(CAUTION_COLD)
    if "tunnelling_may_dominate" in ds and np.any(ds["tunnelling_may_dominate"].values == True):  # noqa: E712
        out.append(CAUTION_TUNNELLING)
    if "high_field_caution" in ds and np.any(ds["high_field_caution"].values == True):  # noqa: E712
        out.append(CAUTION_HIGH_FIELD)
    return out


def _num(v, fmt=".4g", unit=""):
    """A number as text for the summary ("-" for None or non-finite, yes/no for a bool)."""
    if v is None or (isinstance(v, float) and not np.isfinite(v)):
        return "-"
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, str):
        return v
    return f"{v:{fmt}}{(' ' + unit) if unit else ''}"


def summary(res) -> str:
    """A readable summary: dark and illuminated states side by side.

    Parameters
    ----------
    res : optogen.pipeline.result.Result
        A run's result.

    Returns
    -------
    str
        The summary text, units in the caret spelling [-].
    """
    sc = res.scenario
    from ._version import __version__
    lines = [f"optogen {__version__}: {sc.title}"]
    lines.append(_absorber_line(sc))
    if res.is_sweep:                       # from the arrays: no per-point Python objects
        lines += _sweep_summary(res)
    else:
        lines += _point_summary(res.to_dict())
    for w in res.warnings:
        lines.append(f"WARNING: {w}")
    lines.append("")
    lines += [f"Note: {c}" for c in cautions(res)]
    return "\n".join(lines)


def _absorber_line(sc) -> str:
    ab = sc.data["absorber"]
    parts = [str(ab.get("material") or (ab.get("custom") or {}).get("name", "custom material"))]
    if "thickness_um" in ab:
        parts.append(f"{ab['thickness_um']:g} um")
    parts.append(f"{ab.get('temperature_K', 300.0):g} K")
    if "resistivity_ohm_cm" in ab:
        parts.append(f"{ab['resistivity_ohm_cm']:g} ohm cm {ab['dopant']}-type")
    else:
        parts.append(f"N_D = {ab.get('donors_cm3', 0):.3g} cm^-3, N_A = {ab.get('acceptors_cm3', 0):.3g} cm^-3")
    return "Absorber: " + ", ".join(parts)


def _point_summary(d) -> list[str]:
    eq, ss = d["equilibrium"], d.get("steady_state")
    out = [""]
    rows = [("", "dark", "illuminated")]
    def row(label, dark, light, fmt=".4g"):
        rows.append((label, _num(dark, fmt), _num(light, fmt)))
    row("n (cm^-3)", eq["n0_cm3"], ss and ss["n_cm3"])
    row("p (cm^-3)", eq["p0_cm3"], ss and ss["p_cm3"])
    row("n*p / n_i,eff^2", 1.0 if eq["n0_cm3"] else None, ss and ss["np_over_ni2"])
    row("E_F / E_Fn (eV above Ev)", eq["fermi_level_eV"], ss and ss["electron_qfl_eV"], ".4f")
    row("E_F / E_Fp (eV above Ev)", eq["fermi_level_eV"], ss and ss["hole_qfl_eV"], ".4f")
    w0 = max(len(r[0]) for r in rows)
    for r in rows:
        out.append(f"  {r[0]:<{w0}}  {r[1]:>14}  {r[2]:>14}")
    out.append("")
    out.append(f"  n_i = {_num(eq['ni_cm3'])} cm^-3, n_i,eff = {_num(eq['ni_eff_cm3'])} cm^-3, "
               f"Eg = {_num(eq['bandgap_eV'], '.4f')} eV, ionised N_D+ = {_num(eq['ionised_donors_cm3'])}, "
               f"N_A- = {_num(eq['ionised_acceptors_cm3'])} cm^-3")
    if "light" in d:
        li, g = d["light"], d["generation"]
        out.append(f"  light: {_num(li['irradiance_W_m2'])} W m^-2, photon flux {_num(li['photon_flux_cm2_s'])} cm^-2 s^-1; "
                   f"G = {_num(g['average_cm3_s'])} cm^-3 s^-1, J_gen = {_num(g['photocurrent_mA_cm2'])} mA cm^-2, "
                   f"absorbed {_num(g['absorbed_fraction'], '.3f')}")
    if g_bg := (d.get("generation") or {}).get("background_average_cm3_s"):
        out.append(f"  background: G = {_num(g_bg)} cm^-3 s^-1")
    if ss:
        t = ss["tau_s"]
        out.append(f"  delta n = {_num(ss['delta_n_cm3'])} cm^-3 (injection ratio {_num(ss['injection_ratio'], '.3g')}), "
                   f"splitting = {_num(ss['splitting_eV'], '.4f')} eV")
        out.append(f"  implied Voc = {_num(ss['implied_voc_V'], '.4f')} V, implied FF = {_num(ss['implied_ff'], '.4f')}")
        out.append(f"  lifetime: tau_eff = {_num(ss['tau_eff_s'], '.4g')} s; SRH {_num(t['srh'], '.3g')} s, "
                   f"radiative {_num(t['radiative'], '.3g')} s, Auger {_num(t['auger'], '.3g')} s, "
                   f"surface {_num(t['surface'], '.3g')} s")
        if ss.get("limiting_mechanism"):
            out.append(f"  limited by: {ss['limiting_mechanism']}")
        if ss.get("photoconductance_S") is not None:
            out.append(f"  photoconductance = {_num(ss['photoconductance_S'], '.4g')} S")
    if "implied_jv" in d:
        jv = d["implied_jv"]
        out.append(f"  implied J-V: Vmp = {_num(jv['vmp_V'], '.4f')} V, Jmp = {_num(jv['jmp_mA_cm2'], '.4g')} mA cm^-2, "
                   f"implied efficiency = {_num(jv['efficiency'], '.4f')}")
    if "profile" in d:
        pr = d["profile"]
        out.append("")
        out.append(f"  depth-resolved ({pr['plane']} plane for the levels above): delta n front "
                   f"{_num(pr['front_delta_n_cm3'])}, rear {_num(pr['rear_delta_n_cm3'])}, average "
                   f"{_num(pr['average_delta_n_cm3'])} cm^-3, min/max {_num(pr['uniformity'], '.3f')}")
        out.append(f"  uniform approximation error: implied Voc {_num(pr['uniform_error_implied_voc_mV'], '+.2f')} mV, "
                   f"average delta n {_num(100 * pr['uniform_error_average_delta_n'], '+.1f')} %")
    if "detector" in d:
        out += _detector_summary(d["detector"])
    return out


_DETECTOR_HEADLINE = (
    ("currents (A)", (("signal", "signal_current_A"), ("background", "background_current_A"),
                      ("dark", "dark_current_A"))),
    ("noise (A Hz^(-1/2))", (("signal", "noise_signal_A_Hz05"), ("background", "noise_background_A_Hz05"),
                          ("thermal", "noise_thermal_A_Hz05"), ("Johnson", "noise_johnson_A_Hz05"),
                          ("total", "noise_total_A_Hz05"))),
    ("detectivity (cm Hz^(1/2) W^-1)", (("D*", "detectivity_cm_Hz05_W"), ("D*_BLIP", "detectivity_blip_cm_Hz05_W"),
                                   ("D*/D*_BLIP", "detectivity_over_blip"))),
)
CAUTION_TUNNELLING = ("Tunnelling: the band-to-band tunnelling estimate exceeds the dark current at this "
                      "junction field (narrow gap, heavy doping or strong bias); the dark current, R0A and D* "
                      "leave it out and are then too optimistic.")
CAUTION_HIGH_FIELD = ("High field: at this photoconductor bias the minority carriers are swept to a contact "
                      "within their lifetime (drift length mu E tau above the electrode spacing) or drift "
                      "faster than about 1e7 cm s^-1; the gain tau/t_tr, responsivity and D* assume neither and "
                      "are then too high.")


def _detector_summary(det) -> list[str]:
    """The detector block: currents, noise terms and D* against D*_BLIP first, then every other key."""
    out = ["", f"  detector ({det['mode']}):"]
    from .plots import axis_label
    shown = {"mode"}
    for title, items in _DETECTOR_HEADLINE:
        parts = [f"{label} {_num(det[key])}" for label, key in items if key in det]
        shown.update(key for _, key in items)
        if parts:
            out.append(f"    {title + ':':<28} " + ", ".join(parts))
    out.append(f"    {'background-limited:':<28} {_num(det.get('background_limited'))} "
               "(background photon noise above all other noise together)")
    shown.add("background_limited")
    for k, v in det.items():
        if k not in shown:
                    out.append(f"    {axis_label(k):<42} {_num(v)}")
    return out


def _sweep_summary(res) -> list[str]:
    ds = res.dataset
    out = ["", "Sweep: " + " x ".join(f"{ds[k].attrs.get('scenario_key', k)} ({ds.sizes[k]} values, "
                                        f"{float(ds[k].min()):.4g} .. {float(ds[k].max()):.4g}"
                                        f"{' ' + ds[k].attrs['units'] if ds[k].attrs.get('units', '1') != '1' else ''})"
                                        for k in ds.dims)]
    for name in ("implied_voc_V", "tau_eff_s", "delta_n_cm3", "np_over_ni2", "n0_cm3", "p0_cm3",
                 "responsivity_A_W", "photoconductive_gain", "conductivity_contrast", "minority_ratio"):
        if name in ds:
            v = np.asarray(ds[name].values, dtype=float)
            units = ds[name].attrs.get("units", "1")
            units = "" if units == "1" else units
            if np.isnan(v).all():           # e.g. a responsivity without a source: null at every point
                out.append(f"  {name:<16} {'-':>12}")
                continue
            out.append(f"  {name:<16} {np.nanmin(v):>12.4g} .. {np.nanmax(v):<12.4g} {units}".rstrip())
    if "background_limit_note" in ds.attrs:
        out.append(f"  background limit: {ds.attrs['background_limit_note']}")
    if len(ds.dims) == 1 and ds.sizes[next(iter(ds.dims))] <= MAX_TABLE_ROWS:
        out += _point_table(ds, ["n0_cm3", "n_cm3", "p0_cm3", "p_cm3", "np_over_ni2", "implied_voc_V",
                                 "tau_eff_s"], "dark against illuminated")
        if "thermal_generation_cm3_s" in ds:
            out += _point_table(ds, ["signal_current_A", "background_current_A", "dark_current_A",
                                     "noise_total_A_Hz05", "responsivity_A_W", "detectivity_cm_Hz05_W",
                                     "detectivity_blip_cm_Hz05_W", "detectivity_over_blip",
                                     "background_limited"], "detector", units="units in the column heads")
            out += _point_table(ds, ["noise_signal_A_Hz05", "noise_background_A_Hz05", "noise_thermal_A_Hz05",
                                     "noise_johnson_A_Hz05", "noise_total_A_Hz05"], "detector noise",
                                units="A Hz^(-1/2)")
    return out


#: a one-dimensional sweep up to this many points is also printed point by point
MAX_TABLE_ROWS = 60

_SHORT = {"n0_cm3": "n0", "n_cm3": "n", "p0_cm3": "p0", "p_cm3": "p", "np_over_ni2": "np/ni,eff^2",
          "implied_voc_V": "iVoc (V)", "tau_eff_s": "tau_eff (s)", "minority_ratio": "minority x",
          "thermal_generation_cm3_s": "G_thermal", "optical_generation_cm3_s": "G_light",
          "background_generation_cm3_s": "G_backgr.", "background_limited": "bg-limited",
          "responsivity_A_W": "R (A W^-1)", "detectivity_cm_Hz05_W": "D* (cm Hz^(1/2) W^-1)",
          "signal_current_A": "I_sig (A)", "background_current_A": "I_bg (A)", "dark_current_A": "I_dark (A)",
          "noise_total_A_Hz05": "i_n (A Hz^(-1/2))", "detectivity_blip_cm_Hz05_W": "D*_BLIP",
          "detectivity_over_blip": "D*/BLIP", "high_field_caution": "high field", "noise_signal_A_Hz05": "signal", "noise_background_A_Hz05": "background",
          "noise_thermal_A_Hz05": "thermal", "noise_johnson_A_Hz05": "Johnson"}


def _point_table(ds, names, title, units="densities cm^-3, rates cm^-3 s^-1") -> list[str]:
    """One row per point of a one-dimensional sweep, `units` named after the title."""
    dim = next(iter(ds.dims))
    names = [n for n in names if n in ds]
    if not names:
        return []
    head = [ds[dim].attrs.get("scenario_key", dim)] + [_SHORT.get(n, n) for n in names]
    rows = [[_num(float(ds[dim].values[i]))] + [_num(ds[n].values[i].item()) for n in names]
            for i in range(ds.sizes[dim])]
    w = [max(len(r[j]) for r in rows + [head]) for j in range(len(head))]
    out = ["", f"  {title} ({units}):"]
    out += ["  " + "  ".join(c.rjust(w[j]) for j, c in enumerate(r)) for r in [head] + rows]
    return out


# ---------------------------------------------------------------------------
# Files
# ---------------------------------------------------------------------------

def write_all(res, outdir: Path) -> list[Path]:
    """Write the full result into `outdir`: all files or none.

    Everything is written into a hidden staging folder inside `outdir` and moved into
    place when complete; on any error the staging folder is removed and nothing under
    a final name has changed.

    Parameters
    ----------
    res : optogen.pipeline.result.Result
        A run's result.
    outdir : str or Path
        The target folder [-].

    Returns
    -------
    list of Path
        The paths written.
    """
    outdir = Path(outdir)
    try:
        outdir.mkdir(parents=True, exist_ok=True)
        stage = Path(tempfile.mkdtemp(prefix=".optogen-", suffix=".part", dir=outdir))
    except OSError as exc:
        raise _folder_error(outdir, exc) from None
    try:
        staged = _write_files(res, stage)
        mode = file_mode()
        for path in staged:
            os.chmod(path, mode)
        for path in staged:
            os.replace(path, outdir / path.name)
    except OSError as exc:
        raise _folder_error(outdir, exc) from None
    finally:
        shutil.rmtree(stage, ignore_errors=True)
    return [outdir / p.name for p in staged]


def _write_files(res, outdir: Path) -> list[Path]:
    """Write every file of a result into `outdir` (the staging folder of `write_all`)."""
    from . import plots
    ds = res.dataset
    n = res.scenario.n_points
    written = [write_json(outdir / "result.json", res.to_dict()) if n <= JSON_MAX_POINTS else None,
               write_netcdf(outdir / "result.nc", ds),
               write_csv(outdir / "result.csv", ds) if n <= CSV_MAX_POINTS else None]
    figs: list[tuple[str, object]] = []
    if res.is_sweep:
        # a swept key with one value counts as a dimension only if nothing else is swept
        dims = [d for d in ds.dims if ds.sizes[d] > 1] or list(ds.dims)[:1]
        if len(dims) == 1 and "implied_voc_V" in ds:
            figs.append(("sweep_lines.png", plots.sweep_lines(ds)))
        elif len(dims) == 2 and "np_over_ni2" in ds:
            figs.append(("sweep_map.png", plots.sweep_map(ds)))
        if len(dims) == 1 and "thermal_generation_cm3_s" in ds:
            crossing = ds.attrs.get("background_limit_temperature_K")
            crossing = crossing if crossing is not None and np.isfinite(crossing) and plots._is_temperature(dims[0]) else None
            figs += [("detector_densities.png", plots.detector_densities(ds)),
                     ("detector_generation.png", plots.detector_generation(ds, crossing=crossing))]
            if "conductivity_contrast" in ds:
                figs.append(("detector_contrast.png", plots.detector_contrast(ds)))
            if "detectivity_cm_Hz05_W" in ds and np.isfinite(ds["detectivity_cm_Hz05_W"].values).any():
                figs += [("detector_detectivity.png", plots.detector_detectivity(ds)),
                         ("detector_responsivity.png", plots.detector_responsivity(ds)),
                         ("detector_nep.png", plots.detector_nep(ds))]
            figs += [("detector_noise.png", plots.detector_noise(ds)),
                     ("detector_dark_current.png", plots.detector_dark_current(ds))]
    else:
        det = res.details
        curves = point_curves(res)
        for name, cols in curves.items():
            written.append(write_table(outdir / f"{name}.csv", cols))
        eq = det["equilibrium"]
        ss = det.get("steady_state")
        if "lifetime_curve" in curves:
            c = curves["lifetime_curve"]
            figs.append(("lifetime_curve.png", plots.lifetime_curve(
                c["delta_n_cm3"], {k[4:-2]: v for k, v in c.items() if k.startswith("tau_")},
                operating_dn=_first(ss.delta_n_cm3))))
        if "generation_profile" in curves:
            c = curves["generation_profile"]
            figs.append(("generation_profile.png", plots.generation_profile(c["depth_cm"], c["generation_cm3_s"])))
        if "implied_jv" in curves:
            c = curves["implied_jv"]
            jv = det["implied_jv"]
            figs.append(("implied_jv.png", plots.implied_jv(c["voltage_V"], c["current_mA_cm2"],
                                                            vmp=_first(jv.vmp_V), jmp=_first(jv.jmp_mA_cm2),
                                                            voc=_first(jv.voc_V), ff=_first(jv.ff))))
        if "depth_profile" in curves:
            c = curves["depth_profile"]
            figs.append(("depth_profile.png", plots.depth_profile(
                c["depth_cm"], c["delta_n_cm3"], c["generation_cm3_s"], c["electron_qfl_eV"], c["hole_qfl_eV"],
                bandgap_eV=_first(eq.effective_gap_eV))))
        if "spectral_response" in curves:
            c = curves["spectral_response"]
            figs.append(("spectral_response.png", plots.spectral_response(
                c["wavelength_nm"], c["quantum_efficiency"], c["responsivity_A_W"])))
        if ss is not None:
            figs.append(("band_diagram.png", plots.band_diagram(
                _first(eq.effective_gap_eV), _first(eq.fermi_level_eV),
                _first(ss.electron_qfl_eV), _first(ss.hole_qfl_eV),
                intrinsic_level_eV=_first(eq.intrinsic_level_eV))))
    for name, fig in figs:
        written.append(plots.save_figure(fig, outdir / name))
    return [p for p in written if p is not None]


def _first(a) -> float:
    return float(np.ravel(a)[0])


def point_curves(res) -> dict[str, dict[str, np.ndarray]]:
    """Curves behind a single-point result.

    Implied J-V, lifetime vs delta n, G(x), and for a detector the spectral quantum
    efficiency and responsivity.

    Parameters
    ----------
    res : optogen.pipeline.result.Result
        A single-point result.

    Returns
    -------
    dict of str to dict of str to ndarray
        Curve name -> column name -> values [unit in the column name].
    """
    det = res.details
    out: dict[str, dict[str, np.ndarray]] = {}
    g = det.get("generation")
    if g is not None:
        out["generation_profile"] = {"depth_cm": np.asarray(g.depth_cm),
                                     "generation_cm3_s": np.ravel(g.profile_cm3_s)}
    if "implied_jv" in det:
        jv = det["implied_jv"]
        out["implied_jv"] = {"voltage_V": np.ravel(jv.voltage_V), "current_mA_cm2": np.ravel(jv.current_mA_cm2)}
    if "lifetime_curve" in det:
        lc = det["lifetime_curve"]
        out["lifetime_curve"] = {k: np.ravel(v) for k, v in lc.items()}
    if "spectral_response" in det:
        out["spectral_response"] = det["spectral_response"]
    if "profile" in det:
        p = det["profile"]
        out["depth_profile"] = {"depth_cm": p["depth_cm"], "delta_n_cm3": np.ravel(p["delta_n_cm3"]),
                                "generation_cm3_s": np.ravel(p["generation_cm3_s"]),
                                "electron_qfl_eV": np.ravel(p["electron_qfl_eV"]),
                                "hole_qfl_eV": np.ravel(p["hole_qfl_eV"])}
    return out
