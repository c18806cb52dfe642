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
