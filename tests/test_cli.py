"""The `optogen` command: exit codes, one-line errors, JSON keys (DESIGN.md contract)."""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from optogen.cli import main

ROOT = Path(__file__).resolve().parents[1]
SCEN = ROOT / "scenarios"

# Keys of the JSON blocks, as DESIGN.md fixes them.
EQUILIBRIUM_KEYS = {"n0_cm3", "p0_cm3", "ni_cm3", "ni_eff_cm3", "fermi_level_eV", "bandgap_eV",
                    "ionised_donors_cm3", "ionised_acceptors_cm3"}
LIGHT_KEYS = {"irradiance_W_m2", "photon_flux_cm2_s"}
GENERATION_KEYS = {"average_cm3_s", "photocurrent_mA_cm2", "absorbed_fraction"}
STEADY_KEYS = {"delta_n_cm3", "delta_p_cm3", "n_cm3", "p_cm3", "np_over_ni2", "splitting_eV",
               "implied_voc_V", "implied_ff", "tau_eff_s", "tau_s", "electron_qfl_eV", "hole_qfl_eV",
               "injection_ratio"}


def run_json(capsys, *args):
    assert main(["run", *map(str, args), "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_equilibrium_only_json(capsys):
    d = run_json(capsys, SCEN / "dark_wafer_equilibrium.toml")
    assert EQUILIBRIUM_KEYS <= set(d["equilibrium"])
    assert "steady_state" not in d


def test_single_point_json_has_all_design_keys(capsys):
    d = run_json(capsys, SCEN / "rooftop_n_wafer.toml")
    assert LIGHT_KEYS <= set(d["light"])
    assert GENERATION_KEYS <= set(d["generation"])
    assert STEADY_KEYS <= set(d["steady_state"])
    assert set(d["steady_state"]["tau_s"]) == {"srh", "radiative", "auger", "surface"}


def test_set_overrides_a_field(capsys):
    d1 = run_json(capsys, SCEN / "rooftop_n_wafer.toml", "--set", "light.suns=0.1")
    d2 = run_json(capsys, SCEN / "rooftop_n_wafer.toml")
    # irradiance scales with suns (1 sun = 1000 W/m2, README decision)
    assert d1["light"]["irradiance_W_m2"] == pytest.approx(0.1 * d2["light"]["irradiance_W_m2"], rel=1e-12)


def test_summary_shows_dark_and_illuminated(capsys):
    assert main(["run", str(SCEN / "rooftop_n_wafer.toml")]) == 0
    out = capsys.readouterr().out
    assert "dark" in out and "illuminated" in out and "implied Voc" in out and "limited by" in out


@pytest.mark.parametrize("args,needle", [
    (["run", "nope.toml"], "scenario"),
    (["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", "absorber.temperature_K=-5"], "absorber.temperature_K"),
    (["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", "absorber.material=Unobtainium"], "absorber.material"),
    (["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", "absorber.temprature_K=300"], "did you mean"),
    (["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", "light.suns=-1"], "light.suns"),
    (["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", "absorber.donors_cm3=-1"], "absorber.donors_cm3"),
    (["materials", "Si", "--temperature-K", "0"], "temperature"),
    (["materials", "Unobtainium"], "absorber.material"),
    (["run"], "error"),
])
def test_bad_input_is_one_line_exit_2(capsys, args, needle):
    assert main(args) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert needle in err


def test_bad_input_from_a_real_process_has_no_traceback(tmp_path):
    p = subprocess.run([sys.executable, "-m", "optogen.cli", "run", str(SCEN / "rooftop_n_wafer.toml"),
                        "--set", "optics.rear_reflectance=1.5"], capture_output=True, text=True)
    assert p.returncode == 2
    assert p.stderr.count("\n") == 1 and "Traceback" not in p.stderr
    assert "optics.rear_reflectance" in p.stderr


def test_check_validates_without_running(capsys):
    assert main(["check", str(SCEN / "hot_climate_map.toml")]) == 0
    assert "ok" in capsys.readouterr().out


def test_materials_listing_and_detail(capsys):
    assert main(["materials"]) == 0
    names = capsys.readouterr().out.split()
    assert {"Si", "Ge", "GaAs", "InP", "InGaAs", "CdTe", "InSb", "HgCdTe"} <= set(names)
    assert main(["materials", "Si", "--temperature-K", "300"]) == 0
    out = capsys.readouterr().out
    assert "Green" in out or "Thurmond" in out          # parameters are shown with their sources


def test_spectra_lists_standard_spectra(capsys):
    assert main(["spectra"]) == 0
    out = capsys.readouterr().out.lower()
    assert "am1.5g" in out and "laser" in out and "blackbody" in out


@pytest.mark.parametrize("setting, field", [("solver.chunk_size=0", "solver.chunk_size"),
                                            ("solver.nodes=2", "solver.nodes"),
                                            ("solver.depth_resolved=3", "solver.depth_resolved")])
def test_check_rejects_bad_solver_settings(capsys, setting, field):
    assert main(["check", str(SCEN / "rooftop_n_wafer.toml"), "--set", setting]) == 2
    assert field in capsys.readouterr().err


def test_light_caution_follows_the_computed_irradiance(capsys, tmp_path):
    # a 3000 K full-hemisphere blackbody: sigma T^4 = 4.6e6 W/m2 (Stefan-Boltzmann, scipy), far above 2 suns
    text = (SCEN / "rooftop_n_wafer.toml").read_text().replace(
        'source = "AM1.5G"\nsuns = 1.0', 'source = "blackbody"\ntemperature_K = 3000')
    path = tmp_path / "lamp.toml"
    path.write_text(text)
    assert main(["run", str(path)]) == 0
    assert "Laser / concentrated light" in capsys.readouterr().out


def test_nep_follows_from_detectivity_area_and_bandwidth(capsys):
    d = run_json(capsys, SCEN / "cooled_hgcdte_pixel.toml", "--set", "absorber.temperature_K=77",
                 "--set", "detector.bandwidth_Hz=100")
    det = d["detector"]
    area_cm2 = 50e-4 * 50e-4                        # electrode spacing x width of the demo pixel
    # NEP = sqrt(A df) / D* (Rogalski 2011, ch. 3)
    assert det["noise_equivalent_power_W"] == pytest.approx((area_cm2 * 100) ** 0.5 / det["detectivity_cm_Hz05_W"],
                                                            rel=1e-12)


# -- the error boundary (issue 15): input errors exit 2, our bugs exit 1 with a report line -------

def _boom(*args, **kwargs):
    raise ValueError("an internal inconsistency")       # not an InputError: a bug of ours


def test_internal_error_is_exit_1_one_line_without_traceback(capsys, monkeypatch):
    import optogen.pipeline
    monkeypatch.setattr(optogen.pipeline, "run", _boom)
    monkeypatch.delenv("OPTOGEN_DEBUG", raising=False)
    assert main(["run", str(SCEN / "rooftop_n_wafer.toml")]) == 1
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith("optogen: internal error: ValueError: an internal inconsistency")
    assert "--debug" in err and "report" in err


@pytest.mark.parametrize("how", ["flag", "flag_after", "env"])
def test_debug_shows_the_traceback(capsys, monkeypatch, how):
    import optogen.pipeline
    monkeypatch.setattr(optogen.pipeline, "run", _boom)
    args = ["run", str(SCEN / "rooftop_n_wafer.toml")]
    if how == "flag":
        args = ["--debug", *args]
    elif how == "flag_after":
        args = [*args, "--debug"]
    else:
        monkeypatch.setenv("OPTOGEN_DEBUG", "1")
    assert main(args) == 1
    err = capsys.readouterr().err
    assert "Traceback" in err and "optogen: internal error: ValueError" in err


def test_unreadable_scenarios_are_input_errors(capsys, tmp_path):
    folder = tmp_path / "dir.toml"
    folder.mkdir()
    binary = tmp_path / "binary.toml"
    binary.write_bytes(b"title = \"\xff\xfe\"\n")
    for path, needle in ((folder, "existing .toml file"), (binary, "UTF-8")):
        assert main(["check", str(path)]) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and needle in err and str(path) in err


def test_out_folder_that_cannot_be_written_is_an_input_error(capsys, tmp_path):
    blocker = tmp_path / "a_file"
    blocker.write_text("not a folder")
    assert main(["run", str(SCEN / "dark_wafer_equilibrium.toml"), "--out", str(blocker / "sub")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("optogen: error: --out") and str(blocker / "sub") in err


def test_out_writes_all_files_or_none(capsys, tmp_path, monkeypatch):
    import optogen.plots
    out = tmp_path / "out"
    monkeypatch.setattr(optogen.plots, "band_diagram", _boom)       # the last figure fails
    assert main(["run", str(SCEN / "rooftop_n_wafer.toml"), "--out", str(out)]) == 1
    capsys.readouterr()
    assert list(out.iterdir()) == []                                  # nothing, not even a staging folder


def test_out_files_follow_the_umask(capsys, tmp_path):
    import os
    import stat
    old = os.umask(0o027)
    try:
        assert main(["run", str(SCEN / "dark_wafer_equilibrium.toml"), "--out", str(tmp_path / "o")]) == 0
    finally:
        os.umask(old)
    capsys.readouterr()
    modes = {stat.S_IMODE(p.stat().st_mode) for p in (tmp_path / "o").iterdir()}
    assert modes == {0o640}                       # 0o666 & ~0o027 (POSIX file creation mode)


EXPECTED_POINT_FILES = {"result.json", "result.nc", "result.csv", "generation_profile.csv", "generation_profile.png",
                        "implied_jv.csv", "implied_jv.png", "lifetime_curve.csv", "lifetime_curve.png",
                        "band_diagram.png"}          # README "Files (--out DIR)" for a single lit point


@pytest.mark.parametrize("T", [4, 10, 77, 1000])
def test_out_writes_every_file_across_the_temperature_domain(capsys, tmp_path, T):
    out = tmp_path / f"T{T}"
    code = main(["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", f"absorber.temperature_K={T}",
                 "--out", str(out), "--quiet"])
    err = capsys.readouterr().err
    assert code == 0, err
    assert {p.name for p in out.iterdir()} == EXPECTED_POINT_FILES


def test_one_value_sweep_writes_its_files(capsys, tmp_path):
    path = tmp_path / "one.toml"
    path.write_text((SCEN / "rooftop_n_wafer.toml").read_text() + '\n[sweep]\n"light.suns" = [1.0]\n')
    assert main(["run", str(path), "--out", str(tmp_path / "o"), "--quiet"]) == 0, capsys.readouterr().err
    assert {p.name for p in (tmp_path / "o").iterdir()} == {"result.json", "result.nc", "result.csv",
                                                             "sweep_lines.png"}


def test_schema_command_lists_every_key(capsys):
    from optogen import schema
    assert main(["schema"]) == 0
    out = capsys.readouterr().out
    assert all(path in out for path in schema.KEYS)


@pytest.mark.parametrize("setting", ["absorber.temperature_K=nan", "absorber.temperature_K='300'",
                                     "light.suns=[]", "solver.nodes=20001", "absorber.donors_cm3=true"])
def test_wrong_set_values_are_input_errors(capsys, setting):
    assert main(["check", str(SCEN / "rooftop_n_wafer.toml"), "--set", setting]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and setting.split("=")[0] in err


def test_check_applies_the_light_ceiling_to_the_brightest_swept_value(capsys, tmp_path):
    # 1e22 photons cm^-2 s^-1 of AM1.5G: about 2.3e7 W m^-2 (AM1.5G mean photon energy ~1.45 eV, ASTM G173,
    # from memory), above the 1e7 W m^-2 ceiling; 1e20 is well below it
    path = tmp_path / "flux.toml"
    path.write_text((SCEN / "rooftop_n_wafer.toml").read_text().replace("suns = 1.0", "photon_flux_cm2_s = 1e17")
                    + '\n[sweep]\n"light.photon_flux_cm2_s" = [1e17, 1e22]\n')
    assert main(["check", str(path)]) == 2
    assert "light.photon_flux_cm2_s" in capsys.readouterr().err
    path.write_text(path.read_text().replace("1e22]", "1e20]"))
    assert main(["check", str(path)]) == 0


def test_demos_lists_every_bundled_scenario(capsys):
    assert main(["demos"]) == 0
    out = capsys.readouterr().out
    names = {line.split()[0] for line in out.splitlines() if line.strip()}
    assert names == {p.stem for p in SCEN.glob("*.toml")}            # the files of scenarios/
    assert "Rooftop n-type wafer" in out


def test_run_demo_by_name_equals_the_file(capsys):
    d1 = run_json(capsys, "--demo", "rooftop_n_wafer", "--set", "light.suns=0.5")
    assert main(["run", str(SCEN / "rooftop_n_wafer.toml"), "--json", "--set", "light.suns=0.5"]) == 0
    d2 = json.loads(capsys.readouterr().out)
    assert d1["steady_state"] == d2["steady_state"]


@pytest.mark.parametrize("args, needle", [
    (["run", "--demo", "rooftop"], "did you mean"),
    (["run", str(SCEN / "rooftop_n_wafer.toml"), "--demo", "rooftop_n_wafer"], "not both"),
    (["run"], "--demo NAME"),
])
def test_bad_demo_requests_are_input_errors(capsys, args, needle):
    assert main(args) == 2
    err = capsys.readouterr().err
    assert needle in err and len(err.strip().splitlines()) == 1


def test_history_records_the_command_line(tmp_path):
    import xarray as xr
    args = ["run", str(SCEN / "rooftop_n_wafer.toml"), "--set", "light.suns=0.25", "--out", str(tmp_path)]
    assert main(args) == 0
    ds = xr.open_dataset(tmp_path / "result.nc", engine="h5netcdf")
    assert ds.attrs["history"].endswith("optogen " + " ".join(args))
    assert "suns = 0.25" in ds.attrs["scenario_effective"] and ds.attrs["Conventions"] == "CF-1.10"
