"""Sweeps: grid shape, agreement with single points, files, dask (issue: sweeps)."""
import numpy as np
import pytest
import xarray as xr

import optogen
from optogen import constants
from optogen.cli import main
from optogen.report import atomic_path, write_all

WAFER = """
title = "sweep test wafer"
[absorber]
material = "Si"
thickness_um = 160
temperature_K = 298.15
donors_cm3 = 1e16
[light]
source = "AM1.5G"
suns = 1.0
[optics]
front_reflectance = 0.0
rear_reflectance = 1.0
light_path = "lambertian"
[recombination]
intrinsic = "richter2012"
bandgap_narrowing = "none"
front_S_cm_s = 1
rear_S_cm_s = 1
[[recombination.defects]]
tau_n0_s = 1e-4
tau_p0_s = 1e-4
"""


def sweep(text, spec):
    return optogen.load_scenario(text + "\n[sweep]\n" + spec)


def test_sweep_point_equals_single_point_bit_for_bit():
    sc = sweep(WAFER, '"light.suns" = [0.01, 0.1, 1.0, 10.0]')
    ds = optogen.run(sc).to_dataset()
    single = optogen.run(optogen.load_scenario(WAFER)).to_dict()
    assert ds["implied_voc_V"].sel({"light_suns": 1.0}).item() == single["steady_state"]["implied_voc_V"]
    assert ds["delta_n_cm3"].sel({"light_suns": 1.0}).item() == single["steady_state"]["delta_n_cm3"]


def test_low_injection_slope_is_kT_ln10_per_decade():
    # analytic: constant lifetime, low injection -> Voc = kT/q ln(G tau N / ni^2) + const
    sc = sweep(WAFER, '"light.suns" = { log = [1e-5, 1e-3], points = 3 }')
    voc = optogen.run(sc).to_dataset()["implied_voc_V"].values
    slope = np.diff(voc)
    expected = constants.kT_eV(298.15) * np.log(10.0)          # 59.2 mV at 298.15 K (analytic)
    np.testing.assert_allclose(slope, expected, rtol=2e-3)


def test_grid_dims_units_and_attrs():
    sc = sweep(WAFER, '"light.suns" = [0.1, 1.0]\n"absorber.temperature_K" = [280, 300, 320]')
    ds = optogen.run(sc).to_dataset()
    assert dict(ds.sizes) == {"light_suns": 2, "absorber_temperature_K": 3}
    assert ds["implied_voc_V"].attrs["units"] == "V"
    assert ds["absorber_temperature_K"].attrs["units"] == "K"
    assert ds.attrs["optogen_version"] == optogen.__version__
    assert "sweep test wafer" in ds.attrs["scenario"] and ds.attrs["created"]
    # physics direction (common practice): implied Voc falls as the wafer warms at fixed light
    assert np.all(np.diff(ds["implied_voc_V"].values, axis=1) < 0)


def test_slow_key_sweep_matches_single_points():
    sc = sweep(WAFER, '"absorber.thickness_um" = [100, 200]\n"light.suns" = [1.0]')
    ds = optogen.run(sc).to_dataset()
    for w in (100, 200):
        one = optogen.run(optogen.load_scenario(WAFER).with_values({"absorber.thickness_um": w})).to_dict()
        got = ds["implied_voc_V"].sel({"absorber_thickness_um": float(w)}).item()
        assert got == pytest.approx(one["steady_state"]["implied_voc_V"], rel=1e-12)


def test_files_netcdf_round_trip_and_tidy_csv(tmp_path):
    import pandas as pd
    sc = sweep(WAFER, '"light.suns" = [0.1, 1.0]\n"absorber.temperature_K" = [280, 300, 320]')
    res = optogen.run(sc)
    write_all(res, tmp_path)
    back = xr.open_dataset(tmp_path / "result.nc")          # scipy engine: no extra dependency
    for name in ("implied_voc_V", "tau_eff_s", "np_over_ni2"):
        np.testing.assert_array_equal(back[name].values, res.dataset[name].values)
        assert back[name].attrs.get("units") == res.dataset[name].attrs.get("units")
    csv = pd.read_csv(tmp_path / "result.csv")
    assert len(csv) == 6                                     # one row per grid point
    assert {"light_suns", "absorber_temperature_K", "implied_voc_V"} <= set(csv.columns)
    assert (tmp_path / "sweep_map.png").stat().st_size > 0
    assert not list(tmp_path.glob(".*.part"))                # no temporary files left


def test_interrupted_write_leaves_no_final_file(tmp_path):
    target = tmp_path / "result.nc"
    with pytest.raises(KeyboardInterrupt):
        with atomic_path(target) as tmp:
            tmp.write_text("half")
            raise KeyboardInterrupt
    assert not target.exists() and not list(tmp_path.iterdir())


def test_large_grid_needs_yes(capsys, tmp_path):
    big = tmp_path / "big.toml"
    big.write_text(WAFER + '\n[sweep]\n"light.suns" = { log = [1e-3, 1], points = 3000 }\n'
                   '"absorber.temperature_K" = { linear = [250, 350], points = 1000 }\n')
    assert main(["run", str(big)]) == 2
    assert "--yes" in capsys.readouterr().err


def test_dask_local_cluster_gives_identical_answers():
    pytest.importorskip("distributed")
    sc = sweep(WAFER, '"light.suns" = { log = [0.01, 10], points = 7 }\n"absorber.temperature_K" = [290, 310]')
    ref = optogen.run(sc, chunk_size=4).to_dataset()
    got = optogen.run(sc, chunk_size=4, workers=2).to_dataset()
    for name in ref.data_vars:
        np.testing.assert_array_equal(got[name].values, ref[name].values)


@pytest.mark.parametrize("axes", [
    '"absorber.thickness_um" = [120, 180]\n"light.suns" = { log = [0.01, 10], points = 9 }\n'
    '"absorber.temperature_K" = [280, 300, 320, 340, 360]',
    # a slow key listed after the fast ones: the chunks arrive in (slow, fast) order, the file is
    # written in the scenario's order
    '"light.suns" = { log = [0.01, 10], points = 9 }\n"absorber.thickness_um" = [120, 180]\n'
    '"absorber.temperature_K" = [280, 300, 320, 340, 360]'], ids=["slow_first", "slow_between"])
def test_streamed_sweep_equals_the_in_memory_sweep(tmp_path, axes):
    # issue 11: a sweep streamed chunk by chunk to disk (ChunkStore) holds the same numbers as the
    # in-memory grid, bit for bit, with chunks that cut across rows of the grid (37 points, 3 axes)
    sc = sweep(WAFER, axes)
    ref = optogen.run(sc, progress=False).to_dataset()
    got = optogen.run(sc, progress=False, chunk_size=37, store=tmp_path / "stream.nc").to_dataset()
    assert set(got.data_vars) == set(ref.data_vars)
    for name in ref.data_vars:
        assert got[name].dims == ref[name].dims, name
        a, b = ref[name].values, got[name].values
        if a.dtype.kind in "OUS":
            assert a.astype(str).tolist() == b.astype(str).tolist(), name
        else:
            np.testing.assert_array_equal(b, a, err_msg=name)


def test_a_failed_streamed_sweep_leaves_no_file(tmp_path, monkeypatch):
    from optogen.pipeline import sweep as engine
    calls = []

    def failing(*args, **kwargs):
        calls.append(1)
        if len(calls) > 1:
            raise KeyboardInterrupt
        return real(*args, **kwargs)
    real = engine.evaluate
    monkeypatch.setattr(engine, "evaluate", failing)
    sc = sweep(WAFER, '"light.suns" = { log = [0.01, 10], points = 9 }')
    with pytest.raises(KeyboardInterrupt):
        optogen.run(sc, progress=False, chunk_size=4, store=tmp_path / "stream.nc")
    assert not (tmp_path / "stream.nc").exists()
