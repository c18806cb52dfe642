"""End to end: [solver] depth_resolved = true -> `profile` block and the steady state at a plane (issue 7).

Scenarios are invented for the test; expected values are analytic identities or common
practice, as marked.
"""
import json

import numpy as np
import pytest

import optogen
from optogen import constants
from optogen.cli import main
from optogen.errors import InputError

from conftest import ROOT

VIOLET = (ROOT / "scenarios" / "violet_laser_profile.toml").read_text()

# A thin, well-passivated n-type wafer: L = sqrt(D tau) ~ 1 mm against W = 100 um.
THIN = """
title = "thin passivated wafer"
[absorber]
material = "Si"
thickness_um = 100
temperature_K = 300
donors_cm3 = 1e15
[light]
{light}
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
tau_n0_s = 1e-3
tau_p0_s = 1e-3
[solver]
depth_resolved = true
"""
LASER_1000 = 'source = "laser"\nwavelength_nm = 1000\npower_W = 0.05\nspot_area_cm2 = 1.0'
LASER_700 = 'source = "laser"\nwavelength_nm = 700\npower_W = 0.05\nspot_area_cm2 = 1.0'
SUN = 'source = "AM1.5G"\nsuns = 1'

PROFILE_KEYS = {"front_delta_n_cm3", "rear_delta_n_cm3", "average_delta_n_cm3", "uniformity",
                "uniform_error_implied_voc_mV", "uniform_error_average_delta_n"}

def run_dict(text):
    return optogen.run(optogen.load_scenario(text)).to_dict()


def uniform_of(text):
    return run_dict(text.replace("depth_resolved = true", "depth_resolved = false"))


def test_profile_block_and_steady_state_at_the_front_plane():
    d = run_dict(VIOLET)
    p, ss, eq = d["profile"], d["steady_state"], d["equilibrium"]
    assert PROFILE_KEYS <= set(p)
    json.dumps(d, allow_nan=False)                          # DESIGN.md: JSON without NaN
    assert p["plane"] == "front"                            # README: implied Voc at the front plane
    # analytic: the steady-state block is the state at the stated plane
    assert ss["delta_n_cm3"] == pytest.approx(p["front_delta_n_cm3"], rel=1e-12)
    assert ss["n_cm3"] == pytest.approx(eq["n0_cm3"] + p["front_delta_n_cm3"], rel=1e-12)
    # analytic: splitting = kT ln(n p / n_i,eff^2) where non-degenerate; the Fermi-Dirac correction
    # is ~ n / (2^1.5 Nc) ~ 3e-5 kT at n = 2e15 cm^-3, i.e. < 1e-6 of the splitting
    kT = constants.kT_eV(298.15)
    assert ss["splitting_eV"] == pytest.approx(kT * np.log(ss["np_over_ni2"]), rel=1e-6)
    assert ss["implied_voc_V"] == pytest.approx(ss["splitting_eV"], rel=1e-12)
    # analytic: min <= average <= max, uniformity = min/max in (0, 1]
    lo, hi = sorted([p["front_delta_n_cm3"], p["rear_delta_n_cm3"]])
    assert p["uniformity"] <= lo / hi * (1 + 1e-12)
    assert 0 < p["uniformity"] <= 1


def test_uniform_error_lines_match_the_uniform_run():
    d, u = run_dict(VIOLET), uniform_of(VIOLET)
    p = d["profile"]
    # analytic (definitions in the README): uniform answer minus depth-resolved answer
    assert p["uniform_error_implied_voc_mV"] == pytest.approx(
        (u["steady_state"]["implied_voc_V"] - d["steady_state"]["implied_voc_V"]) * 1e3, rel=1e-9)
    assert p["uniform_error_average_delta_n"] == pytest.approx(
        u["steady_state"]["delta_n_cm3"] / p["average_delta_n_cm3"] - 1.0, rel=1e-9)


def test_rear_plane_is_honoured():
    d = run_dict(VIOLET + 'voc_plane = "rear"\n')
    assert d["profile"]["plane"] == "rear"
    assert d["steady_state"]["delta_n_cm3"] == pytest.approx(d["profile"]["rear_delta_n_cm3"], rel=1e-12)


def test_bad_plane_names_the_field():
    with pytest.raises(InputError) as err:
        optogen.run(optogen.load_scenario(VIOLET + 'voc_plane = "middle"\n'))
    assert err.value.field == "solver.voc_plane"


def test_check_rejects_a_bad_plane(tmp_path):
    p = tmp_path / "bad_plane.toml"
    p.write_text(VIOLET + 'voc_plane = "middle"\n')
    assert main(["check", str(p)]) == 2


@pytest.mark.parametrize("light", [
    LASER_1000, LASER_700,
    SUN,
], ids=["laser-1000nm", "laser-700nm", "AM1.5G"])
def test_profile_carries_the_generation_of_the_generation_layer(light):
    d = run_dict(THIN.format(light=light))
    p, ss, g = d["profile"], d["steady_state"], d["generation"]
    # analytic, carrier balance: tau_eff = <dn> W / (total generation), so <dn>/tau_eff = <G>.
    # 0.1 %: the quadrature of G(x) is exact for one exponential only (two here: the rear pass)
    assert p["average_delta_n_cm3"] / ss["tau_eff_s"] == pytest.approx(g["average_cm3_s"], rel=1e-3)


@pytest.mark.parametrize("light", [
    LASER_1000, LASER_700,
    SUN,
], ids=["laser-1000nm", "laser-700nm", "AM1.5G"])
def test_thin_wafer_profile_average_equals_uniform(light):
    text = THIN.format(light=light)
    d, u = run_dict(text), uniform_of(text)
    # issue 7 check (common practice): well passivated, L >> W -> profile average = uniform within 0.5 %
    assert d["profile"]["average_delta_n_cm3"] == pytest.approx(u["steady_state"]["delta_n_cm3"], rel=5e-3)
    assert d["profile"]["uniformity"] > 0.99              # L >> W: nearly flat (common practice)


def test_violet_laser_thick_wafer_shows_a_large_uniform_error():
    d = run_dict(VIOLET)
    p = d["profile"]
    # common practice: 405 nm light absorbed within ~0.1 um and a recombining front make the
    # uniform answer a poor estimate of the average excess density
    assert abs(p["uniform_error_average_delta_n"]) > 0.10
    assert p["uniformity"] < 0.5


def _sweep(spec):
    return optogen.load_scenario(VIOLET + '\n[sweep]\n"solver.depth_resolved" = ' + spec +
                                 '\n"light.power_W" = [0.001, 0.01]\n')


def test_sweep_of_depth_resolved_matches_single_points():
    ds = optogen.run(_sweep("[false, true]"), progress=False).to_dataset()
    assert dict(ds.sizes) == {"solver_depth_resolved": 2, "light_power_W": 2}
    for flag in (False, True):
        one = run_dict(VIOLET.replace("depth_resolved = true", f"depth_resolved = {str(flag).lower()}")
                       .replace("power_W = 0.01", "power_W = 0.001"))
        got = ds["delta_n_cm3"].sel({"solver_depth_resolved": flag, "light_power_W": 0.001}).item()
        assert got == pytest.approx(one["steady_state"]["delta_n_cm3"], rel=1e-12)


def test_sweep_of_depth_resolved_keeps_the_profile_block():
    ds = optogen.run(_sweep("[false, true]"), progress=False).to_dataset()
    err = ds["uniform_error_average_delta_n"]
    assert np.all(np.isnan(err.sel({"solver_depth_resolved": False}).values))
    assert np.all(np.abs(err.sel({"solver_depth_resolved": True}).values) > 0.10)   # as the violet check


def test_sweep_of_depth_resolved_true_first_runs():
    ds = optogen.run(_sweep("[true, false]"), progress=False).to_dataset()
    assert ds.sizes["solver_depth_resolved"] == 2
    err = ds["uniform_error_average_delta_n"]
    assert np.all(np.isnan(err.sel({"solver_depth_resolved": False}).values))     # null where uniform
    assert np.all(np.abs(err.sel({"solver_depth_resolved": True}).values) > 0.10)


def test_depth_resolved_steady_state_keeps_its_convergence_flag():
    # issue 4: every point carries a convergence flag; issue 7: the profile solver reports its own
    d = run_dict(VIOLET)
    assert d["steady_state"]["converged"] is True
    assert d["profile"]["converged"] == 1
