"""The scenario schema (optogen.schema): one declaration of every key, checked before any physics.

The expectations are the project's input contract (issue 15: types, ranges, the enforced
domain, resource ceilings) and plain arithmetic; physical figures used to build a case
name their source beside them.
"""
from __future__ import annotations

import dataclasses
import json
import math
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc_const

import optogen
from optogen import detector, materials, recombination, schema
from optogen.cli import main
from optogen.errors import InputError
from optogen.scenario import load_scenario

ROOT = Path(__file__).resolve().parents[1]
SCEN = ROOT / "scenarios"

WAFER = """
[absorber]
material = "Si"
thickness_um = 160
temperature_K = 300
donors_cm3 = 1e15
[light]
source = "AM1.5G"
suns = 1.0
[recombination]
intrinsic = "richter2012"
"""


# -- one declaration, read by every consumer --------------------------------------------------

def test_custom_material_keys_are_the_material_fields():
    assert set(schema.section_keys("absorber.custom")) == {f.name for f in dataclasses.fields(materials.Material)}


def test_detector_keys_are_the_detector_fields():
    assert set(schema.section_keys("detector")) == {f.name for f in dataclasses.fields(detector.Detector)}


def test_defect_keys_are_the_defect_fields_less_the_internal_label():
    fields = {f.name for f in dataclasses.fields(recombination.Defect)} - {"label"}
    assert set(schema.section_keys("recombination.defects.*")) == fields


def test_recombination_table_keys_build_a_recombination():
    # every declared [recombination] key is accepted by the builder (defects as an empty list)
    values = {"intrinsic": "constant", "bandgap_narrowing": "none", "front_J0_fA_cm2": 1.0, "rear_S_cm_s": 1.0,
              "photon_recycling": 0.1, "B_rel": 1.0, "injection_bgn": False, "J0_reference_K": 300.0, "defects": []}
    assert set(values) | {"front_S_cm_s", "rear_J0_fA_cm2"} == set(schema.section_keys("recombination"))
    recombination.Recombination.from_table(values)


def test_fast_keys_are_the_runner_fast_keys():
    from optogen.pipeline import FAST_KEYS, LIGHT_SCALING_KEYS
    assert FAST_KEYS == set(schema.fast_keys())
    assert {f"light.{k}" for k in LIGHT_SCALING_KEYS} <= FAST_KEYS


def test_every_builtin_material_lies_inside_the_custom_bounds():
    for name in materials.names():
        materials.validate(materials.get(name, 0.22 if name == "HgCdTe" else None))


@pytest.mark.parametrize("path", sorted(SCEN.glob("*.toml")), ids=lambda p: p.stem)
def test_bundled_scenarios_pass_the_schema(path):
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    data.pop("sweep", None)
    schema.validate(data)


# -- kinds: the wrong types that used to be accepted ------------------------------------------

@pytest.mark.parametrize("key,value", [
    ("absorber.temperature_K", "300"),          # a string where a number belongs
    ("absorber.temperature_K", True),           # a bool is not a number
    ("absorber.donors_cm3", [1e15]),
    ("absorber.donors_cm3", 10**400),           # an integer no float holds
    ("absorber.thickness_um", math.nan),
    ("absorber.thickness_um", math.inf),
    ("absorber.thickness_um", 1e-308),          # below the 1 nm floor
    ("absorber.thickness_um", 1e308),
    ("light.suns", []),
    ("light.suns", "1"),
    ("light.suns", -math.inf),
    ("optics.rear_reflectance", "0.5"),
    ("optics.light_path", 3),
    ("recombination.front_J0_fA_cm2", {}),
    ("recombination.photon_recycling", 1.0),    # [0, 1)
    ("recombination.injection_bgn", 1),
    ("recombination.J0_reference_K", True),     # only false, or a temperature
    ("solver.nodes", 200.0),                    # an integer
    ("solver.nodes", True),
    ("solver.depth_resolved", "yes"),
    ("solver.voc_plane", "middle"),
    ("absorber.incomplete_ionisation", 0),
    ("absorber.material", 14),
    ("title", 3),
])
def test_wrong_kind_or_range_is_an_input_error_naming_the_field(key, value):
    with pytest.raises(InputError) as err:
        load_scenario(WAFER).with_values({key: value})
    assert err.value.field == key


def test_recombination_J0_reference_false_is_accepted():
    sc = load_scenario(WAFER + "J0_reference_K = false\n")
    assert sc.get("recombination.J0_reference_K") is False


def test_a_defect_value_is_checked_by_its_index_path():
    text = WAFER + '[[recombination.defects]]\nname = "Fe_i"\ndensity_cm3 = 1e10\n'
    with pytest.raises(InputError) as err:
        load_scenario(text).with_values({"recombination.defects.0.density_cm3": "many"})
    assert err.value.field == "recombination.defects.0.density_cm3"


def test_a_single_defect_table_is_accepted_where_a_list_is():
    data = tomllib.loads(WAFER)
    data["recombination"]["defects"] = {"name": "Fe_i", "density_cm3": 1e10}
    assert load_scenario(data).get("recombination.defects.name") == "Fe_i"


# -- sweeps: every swept value goes through the schema ----------------------------------------

@pytest.mark.parametrize("spec,field", [
    ("[300, 2000]", "absorber.temperature_K"),                            # 2000 K above the domain
    ('["300", "310"]', "sweep.absorber.temperature_K"),                   # strings for numbers
    ("[300, true]", "sweep.absorber.temperature_K"),                      # mixed kinds
    ("{ linear = [300, 1e308], points = 3 }", "absorber.temperature_K"),
    ("{ log = [1, 10], points = 1000000000 }", "sweep.absorber.temperature_K"),
])
def test_swept_values_are_checked_against_the_key(spec, field):
    with pytest.raises(InputError) as err:
        load_scenario(WAFER + f'\n[sweep]\n"absorber.temperature_K" = {spec}\n')
    assert err.value.field == field


def test_integer_key_swept_keeps_integers():
    sc = load_scenario(WAFER + '\n[sweep]\n"solver.nodes" = [100, 200]\n')
    assert sc.sweep[0].values.dtype.kind == "i"
    assert sc.with_values({"solver.nodes": sc.sweep[0].values[0].item()}).get("solver.nodes") == 100


def test_sweep_of_a_table_key_is_rejected():
    with pytest.raises(InputError, match="can be swept"):
        load_scenario(WAFER + '\n[sweep]\n"absorber.custom" = [1, 2]\n')


def test_sweep_of_a_section_the_scenario_lacks_is_rejected():
    with pytest.raises(InputError, match=r"\[detector\]"):
        load_scenario(WAFER + '\n[sweep]\n"detector.bias_V" = [1, 2]\n')


# -- the enforced domain ----------------------------------------------------------------------

@pytest.mark.parametrize("T,ok", [(3.9, False), (4.0, True), (1000.0, True), (1000.5, False)])
def test_temperature_domain_is_4_to_1000_K(T, ok):
    if ok:
        load_scenario(WAFER).with_values({"absorber.temperature_K": T})
    else:
        with pytest.raises(InputError, match="absorber.temperature_K"):
            load_scenario(WAFER).with_values({"absorber.temperature_K": T})


def test_doping_sum_ceiling():
    sc = load_scenario(WAFER).with_values({"absorber.donors_cm3": 6e20})
    with pytest.raises(InputError, match=r"N_D \+ N_A|donors_cm3 \+ acceptors_cm3"):
        sc.with_values({"absorber.acceptors_cm3": 6e20})       # 1.2e21 > 1e21 (arithmetic)


def test_doping_sum_ceiling_holds_across_a_fast_sweep():
    text = WAFER.replace("donors_cm3 = 1e15", "donors_cm3 = 6e20")
    with pytest.raises(InputError):
        load_scenario(text + '\n[sweep]\n"absorber.acceptors_cm3" = [0, 6e20]\n')


def test_light_ceiling_of_1e4_suns():
    load_scenario(WAFER).with_values({"light.suns": 1e4})
    with pytest.raises(InputError, match="light.suns"):
        load_scenario(WAFER).with_values({"light.suns": 1.0001e4})


def test_light_ceiling_applies_to_a_blackbody_through_its_irradiance():
    # sigma T^4 at 4000 K = 1.45e7 W m^-2 > 1e7 (Stefan-Boltzmann, scipy.constants)
    sigma = sc_const.Stefan_Boltzmann
    assert sigma * 4000.0**4 > schema.IRRADIANCE_MAX_W_m2 > sigma * 3000.0**4
    text = WAFER.replace('source = "AM1.5G"\nsuns = 1.0', 'source = "blackbody"\ntemperature_K = 4000')
    with pytest.raises(InputError, match=r"W m\^-2"):
        optogen.run(load_scenario(text))


# -- resource ceilings ------------------------------------------------------------------------

@pytest.mark.parametrize("key,value", [("solver.nodes", 20001), ("solver.chunk_size", 0),
                                       ("solver.chunk_size", 10**7)])
def test_solver_ceilings(key, value):
    with pytest.raises(InputError) as err:
        load_scenario(WAFER).with_values({key: value})
    assert err.value.field == key


def test_grid_ceiling_is_checked_before_any_array_is_built():
    # 1e5 x 1e5 points = 1e10 > MAX_POINTS (arithmetic); nothing of that size may be allocated
    text = WAFER + ('\n[sweep]\n"light.suns" = { log = [1e-3, 1], points = 100000 }\n'
                    '"absorber.temperature_K" = { linear = [250, 350], points = 100000 }\n')
    with pytest.raises(InputError, match="grid points"):
        load_scenario(text)


def test_slow_group_ceiling():
    text = WAFER + ('\n[sweep]\n"absorber.thickness_um" = { linear = [100, 200], points = 200 }\n'
                    '"optics.rear_reflectance" = { linear = [0, 1], points = 200 }\n')
    with pytest.raises(InputError, match="slow keys"):
        load_scenario(text)


def test_scenario_size_ceiling(tmp_path):
    big = tmp_path / "big.toml"
    big.write_text(WAFER + "# " + "x" * schema.MAX_TEXT_BYTES + "\n")
    with pytest.raises(InputError, match="bytes"):
        load_scenario(big)


@pytest.mark.filterwarnings("ignore:.*depth nodes cannot resolve")
def test_depth_resolved_sweep_chunks_are_bounded(monkeypatch):
    from optogen.pipeline import sweep as runner
    seen = []
    real = runner.evaluate

    def spy(setup, values, n, details=False):
        seen.append(n)
        return real(setup, values, n, details)
    monkeypatch.setattr(runner, "evaluate", spy)
    monkeypatch.setattr(runner, "MAX_PROFILE_CELLS", 2 * runner.MAX_PROFILE_NODES)   # 2 points per chunk
    text = WAFER + '[solver]\ndepth_resolved = true\n\n[sweep]\n"light.suns" = [0.5, 1.0, 2.0]\n'
    optogen.run(load_scenario(text), progress=False)
    assert max(seen) == 2 and sum(seen) == 3


# -- documents generated from the schema ------------------------------------------------------

def test_checked_in_json_schema_is_the_generated_one():
    on_disk = json.loads((ROOT / "scenarios" / "scenario.schema.json").read_text(encoding="utf-8"))
    assert on_disk == json.loads(json.dumps(schema.json_schema()))


def test_optogen_schema_json_command_prints_it(capsys):
    assert main(["schema", "--json"]) == 0
    assert json.loads(capsys.readouterr().out) == json.loads(json.dumps(schema.json_schema()))


def test_json_schema_lists_every_section_key():
    js = schema.json_schema()["properties"]
    for section in ("absorber", "light", "optics", "recombination", "background", "detector", "solver"):
        assert set(js[section]["properties"]) == set(schema.section_keys(section))


_README_SECTIONS = {"absorber": "absorber", "light": "light", "optics": "optics",
                    "recombination": "recombination", "background": "background", "detector": "detector",
                    "solver": "solver"}


def _readme_keys(section: str) -> set[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    part = text.split(f"### `[{section}]`", 1)[1].split("\n### ", 1)[0]
    keys = set()
    for line in part.splitlines():
        if not line.startswith("| `"):
            continue
        first = line.split("|")[1]
        keys |= set(re.findall(r"`([A-Za-z0-9_]+)`", first))
    return keys


@pytest.mark.parametrize("section", sorted(_README_SECTIONS))
def test_readme_key_tables_match_the_schema(section):
    declared = set(schema.section_keys(section))
    if section == "absorber":
        declared -= {"custom"}                   # described below the table
    if section == "recombination":
        declared -= {"defects"}                  # its own table
        assert _readme_keys("recombination") >= declared
        return
    assert _readme_keys(section) == declared


def test_readme_defect_table_matches_the_schema():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    part = text.split("`[[recombination.defects]]` (any number of SRH levels):", 1)[1].split("\n\n", 2)[1]
    keys = set()
    for line in part.splitlines():
        if line.startswith("| `"):
            keys |= set(re.findall(r"`([A-Za-z0-9_]+)`", line.split("|")[1]))
    assert keys == set(schema.section_keys("recombination.defects.*"))


def test_markdown_table_names_every_key_with_its_range():
    table = schema.markdown_keys("solver")
    assert "`nodes`" in table and f"<= {schema.MAX_NODES}" in table
    assert np.all([f"`{k}`" in table for k in schema.section_keys("solver")])


@pytest.mark.parametrize("key,good,bad", [("absorber.ni_model", "misiakos", "misiakos2093"),
                                          ("absorber.mobility_model", "masetti", "masseti1999x"),
                                          ("optics.light_path", "beer_lambert", "zigzag"),
                                          ("recombination.intrinsic", "richter2012", "richter2021x"),
                                          ("recombination.bandgap_narrowing", "slotboom", "slotbom9")])
def test_check_knows_the_model_names_and_their_aliases(key, good, bad):
    from optogen.pipeline import check
    check(load_scenario(WAFER).with_values({key: good}))
    with pytest.raises(InputError) as err:
        check(load_scenario(WAFER).with_values({key: bad}))
    assert err.value.field == key


_NUMBER_KEYS = [p for p, k in schema.KEYS.items() if "*" not in p and "number" in k.kinds]


@pytest.mark.parametrize("key", _NUMBER_KEYS)
@pytest.mark.parametrize("value", ["1.0", True, [], math.nan, -math.inf, 10**400])
def test_every_number_key_rejects_non_numbers_and_non_finite_values(key, value):
    base = load_scenario(WAFER)
    if key.startswith("absorber.custom."):
        base = load_scenario(WAFER.replace('material = "Si"', 'material = "GaAs"'))
    with pytest.raises(InputError) as err:
        base.with_values({key: value})
    assert err.value.field == key


def test_a_list_of_tables_has_a_ceiling():
    data = tomllib.loads(WAFER)
    data["recombination"]["defects"] = [{"tau_n0_s": 1e-3, "tau_p0_s": 1e-3}] * (schema.MAX_LIST_ITEMS + 1)
    with pytest.raises(InputError, match="at most"):
        load_scenario(data)
