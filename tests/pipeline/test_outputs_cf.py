"""CF-clean NetCDF outputs, the tidy CSV, and the chunked store of large sweeps.

The CF rules checked on the demo outputs (CF Conventions 1.10, cfconventions.org; section
numbers of that document):
* 2.3 Naming: variable, dimension and attribute names begin with a letter and hold only
  letters, digits and underscores;
* 2.5.1 Missing data: a coordinate variable has no _FillValue;
* 2.6.1 Identification: the global attribute Conventions names the CF version ("CF-1.10");
* 2.6.2 Description: title and history are global attributes (non-empty strings);
* 3.1 Units: every numeric variable carries units that UDUNITS-2 parses (cf-units), except the
  two half-power units UDUNITS cannot express (tests/test_units.py); strings and flags carry none;
* 3.2 Long name: every variable has a long_name;
* 3.5 Flags: flag_values is an array of the variable's own type, as many as the blank-separated
  words of flag_meanings.
Where the IOOS compliance checker is installed (``compliance-checker`` on PATH or the
environment variable OPTOGEN_CF_CHECKER naming it), it runs too and must report no error other
than the UDUNITS one of the half-power units.
"""
import os
import re
import shutil
import subprocess
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
import xarray as xr

from optogen import cli, report
from optogen.pipeline.result import ChunkStore, _hyperslabs, labelled_dataset
from optogen.scenario import HALF_POWER_UNITS

from conftest import ROOT

NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")         # CF 1.10 section 2.3

pint = pytest.importorskip("pint")
cf_units = pytest.importorskip("cf_units")


@pytest.fixture(scope="module")
def demo_files(tmp_path_factory):
    """result.nc of three demos: a single point, a 2-D sweep (with --set) and a detector sweep."""
    out = {}
    base = tmp_path_factory.mktemp("cf")
    for name, args in (("rooftop_n_wafer", []), ("hot_climate_map", ["--set", "absorber.thickness_um=120"]),
                       ("cooled_hgcdte_pixel", [])):
        code = cli.main(["run", str(ROOT / "scenarios" / f"{name}.toml"), "--quiet", *args, "--out", str(base / name)])
        assert code == 0
        out[name] = base / name
    return out


def _cf_problems(path: Path) -> list[str]:
    """The CF rules listed in the module docstring, checked on the raw file (no decoding)."""
    import h5netcdf
    problems = []
    with h5netcdf.File(path, "r") as f:
        g = dict(f.attrs)
        if g.get("Conventions") != "CF-1.10":
            problems.append("2.6.1 Conventions")
        for att in ("title", "history"):
            if not str(g.get(att, "")).strip():
                problems.append(f"2.6.2 {att}")
        for att in g:
            if not NAME.match(att):
                problems.append(f"2.3 attribute {att}")
        for dim in f.dimensions:
            if not NAME.match(dim):
                problems.append(f"2.3 dimension {dim}")
        for name, var in f.variables.items():
            attrs = dict(var.attrs)
            if not NAME.match(name):
                problems.append(f"2.3 variable {name}")
            if var.dimensions == (name,) and "_FillValue" in attrs:
                problems.append(f"2.5.1 _FillValue on coordinate {name}")
            if not attrs.get("long_name"):
                problems.append(f"3.2 long_name of {name}")
            kind = var.dtype.kind
            if "flag_values" in attrs:
                fv = np.asarray(attrs["flag_values"])
                if fv.dtype != var.dtype or fv.size != len(str(attrs.get("flag_meanings", "")).split()):
                    problems.append(f"3.5 flags of {name}")
                if "units" in attrs:
                    problems.append(f"3.1 units on flag {name}")
            elif kind in "OSU" or var.dtype == object:
                if "units" in attrs:
                    problems.append(f"3.1 units on string {name}")
            elif "units" not in attrs:
                problems.append(f"3.1 no units on {name}")
            else:
                units = str(attrs["units"])
                if units in HALF_POWER_UNITS:
                    continue
                try:
                    cf_units.Unit(units)
                except ValueError:
                    problems.append(f"3.1 units {units!r} of {name}")
    return problems


@pytest.mark.parametrize("name", ["rooftop_n_wafer", "hot_climate_map", "cooled_hgcdte_pixel"])
def test_demo_netcdf_follows_the_listed_cf_rules(demo_files, name):
    assert _cf_problems(demo_files[name] / "result.nc") == []


def _checker():
    exe = os.environ.get("OPTOGEN_CF_CHECKER") or shutil.which("compliance-checker")
    if not exe:
        pytest.skip("the IOOS compliance checker is not installed")
    return exe


@pytest.mark.parametrize("name", ["rooftop_n_wafer", "hot_climate_map", "cooled_hgcdte_pixel"])
def test_compliance_checker_finds_no_error_but_the_half_powers(demo_files, name):
    exe = _checker()
    run = subprocess.run([exe, "--test=cf:1.10", "--format=text", str(demo_files[name] / "result.nc")],
                         capture_output=True, text=True, timeout=300)
    text = run.stdout
    errors = text.split("Errors", 1)[1].split("Warnings", 1)[0] if "Errors" in text else ""
    lines = [ln for ln in errors.splitlines() if ln.startswith("*")]
    allowed = [ln for ln in lines if "not recognized by UDUNITS" in ln and any(u in ln for u in HALF_POWER_UNITS)]
    assert lines == allowed, errors
    assert "All tests passed" in text or lines        # the checker ran and said so


def test_every_unit_parses_in_pint_and_quantify_works(demo_files):
    ureg = pint.UnitRegistry()
    pint_xarray = pytest.importorskip("pint_xarray")
    assert pint_xarray
    for name in demo_files:
        ds = xr.open_dataset(demo_files[name] / "result.nc", engine="h5netcdf")
        for var in ds.variables.values():
            if "units" in var.attrs:
                ureg.Quantity(1.0, var.attrs["units"])
        q = ds.pint.quantify()
        assert str(q["delta_n_cm3"].data.units) == "1 / centimeter ** 3"        # pint's own spelling
        if "detectivity_cm_Hz05_W" in q:
            # D* [cm Hz^(1/2) W^-1] in base units: m^-1 kg^-1 s^(5/2) (SI Brochure, by hand)
            dims = q["detectivity_cm_Hz05_W"].data.to_base_units().units
            assert dict(dims._units) == pytest.approx({"meter": -1, "kilogram": -1, "second": 2.5})


def test_sweep_file_selects_by_underscore_names_and_keeps_the_effective_scenario(demo_files):
    ds = xr.open_dataset(demo_files["hot_climate_map"] / "result.nc", engine="h5netcdf")
    assert list(ds.dims) == ["light_suns", "absorber_temperature_K"]
    assert ds["light_suns"].attrs["scenario_key"] == "light.suns"
    assert ds["light_suns"].attrs["units"] == "kW m^-2"      # 1 sun = 1000 W m^-2 (IEC 60904-3, common practice)
    point = ds.sel(light_suns=1.0, method="nearest").sel(absorber_temperature_K=300.0, method="nearest")
    assert point["implied_voc_V"].ndim == 0
    assert ds["converged"].dtype == bool                     # the int8 flag reads back as booleans
    # the scenario as it ran (--set absorber.thickness_um=120) beside the original text
    import tomllib
    assert tomllib.loads(ds.attrs["scenario_effective"])["absorber"]["thickness_um"] == 120
    assert tomllib.loads(ds.attrs["scenario"])["absorber"]["thickness_um"] != 120
    assert "--set absorber.thickness_um=120" in ds.attrs["history"]
    assert ds["limiting_mechanism"].attrs.get("units") is None


def test_csv_matches_the_dataset_row_for_row(demo_files):
    import pandas as pd
    ds = xr.open_dataset(demo_files["hot_climate_map"] / "result.nc", engine="h5netcdf")
    df = pd.read_csv(demo_files["hot_climate_map"] / "result.csv")
    assert len(df) == ds.sizes["light_suns"] * ds.sizes["absorber_temperature_K"]
    assert list(df.columns[:2]) == ["light_suns", "absorber_temperature_K"]
    # C order: the last swept key varies fastest (README, Outputs)
    np.testing.assert_allclose(df["absorber_temperature_K"].values[: ds.sizes["absorber_temperature_K"]],
                               ds["absorber_temperature_K"].values, rtol=1e-9)
    np.testing.assert_allclose(df["implied_voc_V"].values, ds["implied_voc_V"].values.ravel(), rtol=1e-9)


# ---------------------------------------------------------------- chunked store

@pytest.mark.parametrize("shape", [(7,), (3, 5), (4, 3, 5), (2, 1, 3, 4)])
def test_hyperslabs_cover_each_flat_range_once_in_order(shape):
    size = int(np.prod(shape))
    rng = np.random.default_rng(1)
    grid = np.arange(size).reshape(shape)
    for _ in range(40):
        a, b = sorted(rng.integers(0, size + 1, 2))
        pieces = list(_hyperslabs(int(a), int(b), shape))
        assert len(pieces) <= 2 * (len(shape) - 1) + 1            # head, full block, tail per level
        got = np.concatenate([grid[idx].ravel() for idx, lo, hi in pieces]) if pieces else np.array([], int)
        np.testing.assert_array_equal(got, np.arange(a, b))       # analytic: C order is the flat order


def _fake_blocks(flat, names):
    """Output blocks of the points `flat` (flat indices): values that reveal any misplacement."""
    f = flat.astype(float)
    return {"steady_state": {"delta_n_cm3": 1e12 + f, "converged": (flat % 3 != 0),
                             "limiting_mechanism": np.array([names[i % 3] for i in flat], dtype=object),
                             "tau_s.srh": 1e-3 / (1.0 + f)},
            "equilibrium": {"n0_cm3": 1e15 + 2.0 * f}}


def test_chunk_store_equals_the_in_memory_dataset(tmp_path):
    axes = [SimpleNamespace(key="recombination.defects.0.density_cm3", values=np.array([1e10, 1e11])),
            SimpleNamespace(key="light.suns", values=np.geomspace(0.01, 10.0, 7)),
            SimpleNamespace(key="absorber.temperature_K", values=np.linspace(250.0, 350.0, 5))]
    order = ["light.suns", "recombination.defects.0.density_cm3", "absorber.temperature_K"]
    size = 2 * 7 * 5
    names = ("srh", "auger", "surface")
    store = ChunkStore(tmp_path / "grid.nc", axes, {"steady_state": {"delta_n_cm3": None}}, order=order)
    offset = 0
    for chunk in (1, 4, 11, 3, 13, 2, 9, 27):                    # odd sizes crossing every row boundary
        stop = min(offset + chunk, size)
        store.write(offset, _fake_blocks(np.arange(offset, stop), names))
        offset = stop
    assert offset == size
    lazy = store.close({"title": "fake grid", "Conventions": "CF-1.10", "history": "written by the test"})
    flat = np.arange(size)
    mem = labelled_dataset(_fake_blocks(flat, names), [a.values.size for a in axes], axes)
    mem = mem.transpose(*[k.replace(".", "_") for k in order])
    assert lazy["n0_cm3"].dims == mem["n0_cm3"].dims == ("light_suns", "recombination_defects_0_density_cm3",
                                                         "absorber_temperature_K")
    for name in mem.data_vars:
        assert lazy[name].dims == mem[name].dims
        np.testing.assert_array_equal(lazy[name].values, mem[name].values)
        assert lazy[name].attrs["long_name"] == mem[name].attrs["long_name"]
        assert lazy[name].attrs.get("units") == mem[name].attrs.get("units")
    assert lazy["converged"].dtype == bool
    for dim in mem.dims:
        np.testing.assert_array_equal(lazy[dim].values, mem[dim].values)
    assert lazy.attrs["title"] == "fake grid"
    assert _cf_problems(tmp_path / "grid.nc") == []
    # write_netcdf copies the store as it is on disk (never loading it whole) and adds later attributes
    lazy.attrs["history"] = "test"
    report.write_netcdf(tmp_path / "copy.nc", lazy)
    back = xr.open_dataset(tmp_path / "copy.nc", engine="h5netcdf")
    np.testing.assert_array_equal(back["n0_cm3"].transpose(*mem["n0_cm3"].dims).values, mem["n0_cm3"].values)
    assert back.attrs["history"] == "test"


def test_chunk_store_refuses_a_chunk_outside_the_grid(tmp_path):
    axes = [SimpleNamespace(key="light.suns", values=np.array([0.1, 1.0, 10.0]))]
    store = ChunkStore(tmp_path / "g.nc", axes, None)
    with pytest.raises(ValueError, match="outside the grid"):
        store.write(2, {"equilibrium": {"n0_cm3": np.ones(2)}})
    store.close()
