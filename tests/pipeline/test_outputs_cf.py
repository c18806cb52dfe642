"""CF-clean NetCDF outputs, the tidy CSV, and the chunked store of large sweeps.

The CF rules checked on the demo outputs are listed, with the sections of CF 1.10 they come from,
in tests/cf_rules.py (every unit parses in UDUNITS-2 through cf-units, with no exception: the
quantities in a half-power unit are stored squared).  The IOOS compliance checker (installed by
the `test` extra) runs too and must report no error.
"""
from types import SimpleNamespace

import numpy as np
import pytest
import xarray as xr

import optogen
from optogen import cli, report
from optogen.pipeline.result import ChunkStore, _hyperslabs, labelled_dataset
from optogen.scenario import HALF_POWER_UNITS, squared_name

from cf_rules import cf_problems, compliance_check
from conftest import ROOT

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


@pytest.mark.parametrize("name", ["rooftop_n_wafer", "hot_climate_map", "cooled_hgcdte_pixel"])
def test_demo_netcdf_follows_the_listed_cf_rules(demo_files, name):
    assert cf_problems(demo_files[name] / "result.nc") == []


@pytest.mark.parametrize("name", ["rooftop_n_wafer", "hot_climate_map", "cooled_hgcdte_pixel"])
def test_compliance_checker_finds_no_error(demo_files, name):
    assert "All tests passed" in compliance_check(demo_files[name] / "result.nc")


def test_half_powers_are_stored_squared_and_open_result_takes_the_roots(demo_files):
    path = demo_files["cooled_hgcdte_pixel"] / "result.nc"
    mem = optogen.run(ROOT / "scenarios" / "cooled_hgcdte_pixel.toml", progress=False).to_dataset()
    halves = [n for n in mem.data_vars if mem[n].attrs.get("units") in HALF_POWER_UNITS]
    assert len(halves) == 7                  # five noise terms, D*, D*_BLIP (README, Detector quantities)
    raw = xr.open_dataset(path, engine="h5netcdf")
    for name in halves:
        assert name not in raw
        sq = raw[squared_name(name)]
        assert sq.attrs["square_of"] == name and sq.attrs["square_of_units"] == mem[name].attrs["units"]
        assert sq.attrs["units"] in ("A^2 Hz^-1", "cm^2 Hz W^-2")
        np.testing.assert_allclose(sq.values, mem[name].values ** 2, rtol=1e-15)
    back = optogen.open_result(path)
    assert set(back.data_vars) == set(mem.data_vars)        # same names (h5netcdf 1.0 lists them sorted)
    for name in mem.data_vars:
        assert back[name].attrs.get("units") == mem[name].attrs.get("units"), name
        assert back[name].attrs["long_name"] == mem[name].attrs["long_name"], name
        if mem[name].dtype.kind == "f":
            # sqrt(x*x) == |x| in IEEE 754 binary64 with round-to-nearest, barring over/underflow
            # (a property of correctly rounded square roots, from memory)
            np.testing.assert_array_equal(back[name].values, mem[name].values)


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
    # the detector demo: D*^2 in the file, D* from open_result, both quantified
    # D* [cm Hz^(1/2) W^-1] in base units: m^-1 kg^-1 s^(5/2) (SI Brochure, by hand)
    path = demo_files["cooled_hgcdte_pixel"] / "result.nc"
    sq = xr.open_dataset(path, engine="h5netcdf").pint.quantify()["detectivity_squared_cm2_Hz_W2"]
    assert dict(sq.data.to_base_units().units._units) == pytest.approx({"meter": -2, "kilogram": -2, "second": 5})
    d = optogen.open_result(path).pint.quantify()["detectivity_cm_Hz05_W"]
    assert dict(d.data.to_base_units().units._units) == pytest.approx({"meter": -1, "kilogram": -1, "second": 2.5})


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
            "equilibrium": {"n0_cm3": 1e15 + 2.0 * f},
            "detector": {"detectivity_cm_Hz05_W": 1e10 * (1.0 + f)}}     # a half power: stored squared


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
    assert cf_problems(tmp_path / "grid.nc") == []
    assert "All tests passed" in compliance_check(tmp_path / "grid.nc")
    raw = xr.open_dataset(tmp_path / "grid.nc", engine="h5netcdf")
    np.testing.assert_array_equal(raw["detectivity_squared_cm2_Hz_W2"].values, mem["detectivity_cm_Hz05_W"].values ** 2)
    # write_netcdf copies the store as it is on disk (never loading it whole) and adds later attributes
    assert lazy.encoding.get("source") == str(tmp_path / "grid.nc")
    lazy.attrs["history"] = "test"
    lazy["background_limit_temperature_K"] = xr.DataArray(114.0, attrs={"units": "K", "long_name": "limit"})
    lazy["noise_total_A_Hz05"] = xr.DataArray(3e-12, attrs={"units": "A Hz^(-1/2)", "long_name": "noise"})
    report.write_netcdf(tmp_path / "copy.nc", lazy)
    back = xr.open_dataset(tmp_path / "copy.nc", engine="h5netcdf")
    np.testing.assert_array_equal(back["n0_cm3"].transpose(*mem["n0_cm3"].dims).values, mem["n0_cm3"].values)
    assert back.attrs["history"] == "test"
    # scalars added after the run go into the copy, a half power squared like the rest
    assert float(back["background_limit_temperature_K"]) == 114.0
    assert float(back["noise_total_squared_A2_Hz"]) == 3e-12 * 3e-12
    assert cf_problems(tmp_path / "copy.nc") == []


def test_chunk_store_refuses_a_chunk_outside_the_grid(tmp_path):
    axes = [SimpleNamespace(key="light.suns", values=np.array([0.1, 1.0, 10.0]))]
    store = ChunkStore(tmp_path / "g.nc", axes, None)
    with pytest.raises(ValueError, match="outside the grid"):
        store.write(2, {"equilibrium": {"n0_cm3": np.ones(2)}})
    store.close()


def test_roots_of_a_store_are_taken_lazily_without_dask(tmp_path):
    # 2e6 points of D* (16 MB as float64): opening the store and reading ten values takes the root
    # of those ten only (memory measured with tracemalloc, which numpy reports to)
    import tracemalloc
    axes = [SimpleNamespace(key="light.suns", values=np.geomspace(0.01, 10.0, 2000)),
            SimpleNamespace(key="absorber.temperature_K", values=np.linspace(200.0, 400.0, 1000))]
    n = 2000 * 1000                               # small coordinates, a 16 MB variable
    store = ChunkStore(tmp_path / "big.nc", axes, None)
    for start in range(0, n, 500_000):
        flat = np.arange(start, start + 500_000)
        store.write(start, {"detector": {"detectivity_cm_Hz05_W": 1e10 * (1.0 + flat)}})
    tracemalloc.start()
    ds = store.close({"title": "t", "Conventions": "CF-1.10", "history": "h"})
    part = ds["detectivity_cm_Hz05_W"].isel(light_suns=3, absorber_temperature_K=slice(10, 20)).values
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    np.testing.assert_array_equal(part, 1e10 * (1.0 + np.arange(3010, 3020)))   # C order: flat = 1000 i + j
    assert peak < 8_000_000                       # half the 16 MB of the variable (reading it whole: 32 MB)
    assert ds["detectivity_cm_Hz05_W"].attrs["units"] == "cm Hz^(1/2) W^-1"


def test_squares_that_overflow_are_stored_as_inf_with_a_warning(tmp_path):
    from optogen.errors import PhysicsNoteWarning
    from optogen.pipeline.result import SQUARE_MAX
    # IEEE 754 binary64 (common practice): largest finite 1.7976931348623157e308, its root 1.34e154
    assert SQUARE_MAX == pytest.approx(1.3407807929942596e154, rel=1e-15)
    ds = xr.Dataset({"detectivity_blip_cm_Hz05_W": ("light_suns", np.array([1e12, 2.0 * SQUARE_MAX, np.inf]),
                                                    {"units": "cm Hz^(1/2) W^-1", "long_name": "D*_BLIP"})},
                    coords={"light_suns": [0.1, 1.0, 10.0]},
                    attrs={"title": "t", "Conventions": "CF-1.10", "history": "h"})
    with pytest.warns(PhysicsNoteWarning, match="1 value"):
        report.write_netcdf(tmp_path / "r.nc", ds)
    back = optogen.open_result(tmp_path / "r.nc")["detectivity_blip_cm_Hz05_W"].values
    assert back[0] == 1e12 and np.isposinf(back[1]) and np.isposinf(back[2])
