"""The analysis sections in the schema, the forward run refusing them, J0 at the reference temperature,
the folder batch on dask and the CF form of analysis.nc (optogen.analysis)."""
import json
import shutil
import tomllib
from pathlib import Path

import numpy as np
import pytest

from optogen import cli, materials, schema
from optogen.analysis import analyse, analyse_folder, check, keys
from optogen.errors import InputError
from optogen.scenario import load_scenario

from cf_rules import cf_problems, compliance_check

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "scenarios" / "analysis"


# -- schema ---------------------------------------------------------------------------------------

def test_analysis_keys_are_the_schema_keys_in_caret_units():
    assert {"measurement", "uncertainty"} <= set(schema.SECTIONS)
    assert {k.path for k in keys.KEYS} == {p for p in schema.KEYS if p.split(".")[0] in keys.OWN_SECTIONS}
    assert schema.KEYS["measurement.one_sun_mA_cm2"].unit == "mA cm^-2"      # house spelling (README, Units)
    assert schema.KEYS["measurement.window_low_cm3"].unit == "cm^-3"
    assert all(k.sweep is None for k in keys.KEYS)                          # one analysis per measured file
    js = schema.json_schema()["properties"]
    assert set(js["measurement"]["properties"]) == set(schema.section_keys("measurement"))


def test_checked_in_json_schema_has_the_analysis_sections():
    on_disk = json.loads((ROOT / "scenarios" / "scenario.schema.json").read_text(encoding="utf-8"))
    assert set(on_disk["properties"]["uncertainty"]["properties"]) == set(schema.section_keys("uncertainty"))


def test_forward_run_refuses_measurement_with_one_line(capsys):
    code = cli.main(["run", str(DEMO / "n_wafer_lifetime.toml"), "--quiet"])
    err = capsys.readouterr().err.strip()
    assert code == 2 and len(err.splitlines()) == 1
    assert err.startswith("optogen: error: measurement ") and "use optogen analyse" in err
    with pytest.raises(InputError) as e:                   # the schema rule, for Python callers too
        load_scenario(DEMO / "n_wafer_lifetime.toml")
    assert e.value.field == "measurement"


def test_check_does_not_pass_an_analysis_scenario_silently(capsys):
    code = cli.main(["check", str(DEMO / "n_wafer_lifetime.toml")])
    captured = capsys.readouterr()
    assert "optogen analyse" in captured.out + captured.err
    assert code == 2 or "analysis scenario" in captured.out
    assert "optogen analyse" in check(DEMO / "n_wafer_lifetime.toml")


def test_uncertainty_without_measurement_is_refused_too():
    data = tomllib.loads((ROOT / "scenarios" / "rooftop_n_wafer.toml").read_text(encoding="utf-8"))
    data["uncertainty"] = {"thickness_rel": 0.01}
    with pytest.raises(InputError) as e:
        load_scenario(data)
    assert e.value.field == "uncertainty"


def test_bad_measurement_key_is_named_by_the_schema():
    data = tomllib.loads((ROOT / "scenarios" / "rooftop_n_wafer.toml").read_text(encoding="utf-8"))
    data["measurement"] = {"file": "x.csv", "smoothing_order": 9}
    with pytest.raises(InputError) as e:
        load_scenario(data)
    assert e.value.field == "measurement.smoothing_order"


# -- J0 at the reference temperature --------------------------------------------------------------

def test_j0_at_reference_is_the_ni2_ratio_written_out():
    res = analyse(DEMO / "n_wafer_lifetime.toml", {"uncertainty.samples": 20})
    d = res.to_dict()["J0_fA_cm2"]
    T, ref = d["measurement_temperature_K"], d["reference_temperature_K"]
    assert (T, ref) == (300.0, 298.15)                     # the demo's T; recombination.J0_reference_K default
    # J0 ~ n_i^2 = Nc Nv exp(-Eg/kT) (Kane & Swanson 1985, from memory; common practice), written out with the
    # material's Nc, Nv, Eg and k_B = 8.617333262e-5 eV/K (CODATA 2018)
    si = materials.get("Si")

    def ni2(t):
        return si.nc_cm3(t) * si.nv_cm3(t) * np.exp(-si.bandgap_eV(t) / (8.617333262e-5 * t))
    ratio = float(ni2(ref) / ni2(T))
    assert 0.6 < ratio < 0.9                               # ~15 %/K near room temperature (common practice)
    assert d["global_fit_at_reference"] == pytest.approx(d["global_fit"] * ratio, rel=1e-9)
    assert d["global_fit_at_reference_std"] == pytest.approx(d["global_fit_std"] * ratio, rel=1e-9)
    assert d["kane_swanson1985_at_reference"] == pytest.approx(d["kane_swanson1985"] * ratio, rel=1e-9)
    assert "at 300 K" in res.summary() and "reference 298.15 K" in res.summary()


def test_j0_reference_false_reports_no_reference(tmp_path):
    text = (DEMO / "n_wafer_lifetime.toml").read_text(encoding="utf-8") + "\n[recombination]\nJ0_reference_K = false\n"
    sc = tmp_path / "w.toml"
    sc.write_text(text.replace('file = "n_wafer_lifetime.csv"', f'file = "{DEMO / "n_wafer_lifetime.csv"}"'),
                  encoding="utf-8")
    d = analyse(sc, {"uncertainty.samples": 20}).to_dict()["J0_fA_cm2"]
    assert d["reference_temperature_K"] is None and d["global_fit_at_reference"] is None


# -- folder batch: in process and on dask ---------------------------------------------------------

def test_folder_batch_on_dask_gives_the_same_answers(tmp_path):
    pytest.importorskip("distributed")
    folder = tmp_path / "batch"
    folder.mkdir()
    shutil.copy(DEMO / "n_wafer_lifetime.csv", folder / "a.csv")
    shutil.copy(DEMO / "n_wafer_lifetime.csv", folder / "b.csv")
    over = {"uncertainty.samples": 20}
    local, _, _ = analyse_folder(DEMO / "n_wafer_lifetime.toml", folder, over)
    on_dask, results, _ = analyse_folder(DEMO / "n_wafer_lifetime.toml", folder, over, workers=2)
    assert len(results) == 2
    assert local.equals(on_dask), (local, on_dask)          # the same numbers, bit for bit


def test_workers_without_folder_is_refused(capsys):
    import argparse
    from optogen.analysis import main
    args = argparse.Namespace(scenario=str(DEMO / "n_wafer_lifetime.toml"), set=[], folder=None, out=None,
                              json=False, workers=2, scheduler=None)
    with pytest.raises(InputError) as e:
        main(args)
    assert e.value.field == "--workers"


# -- analysis.nc in the CF form of the forward results --------------------------------------------

def test_analysis_netcdf_follows_the_cf_rules(tmp_path):
    pytest.importorskip("cf_units")
    import h5netcdf
    res = analyse(DEMO / "p_wafer_iron.toml", {"uncertainty.samples": 20})
    res.write(tmp_path)
    assert cf_problems(tmp_path / "analysis.nc") == []           # CF 1.10 rules, listed in tests/cf_rules.py
    with h5netcdf.File(tmp_path / "analysis.nc", "r") as f:
        assert str(f.variables["iron_density_cm3"].attrs["units"]) == "cm^-3"
        assert str(f.variables["J0_global_fit_fA_cm2"].attrs["units"]) == "fA cm^-2"
        assert str(f.variables["inverse_tau_corrected"].attrs["units"]) == "s^-1"


def test_analysis_netcdf_passes_the_compliance_checker(tmp_path):
    analyse(DEMO / "p_wafer_iron.toml", {"uncertainty.samples": 20}).write(tmp_path)
    assert "All tests passed" in compliance_check(tmp_path / "analysis.nc")
