"""Scenario files: parsing, validation, overrides and sweep expansion.

These check behaviour the scenario format in DESIGN.md prescribes (a
project contract, not physics), so the expected values come from that
document or from plain arithmetic.
"""
from pathlib import Path

import numpy as np
import pytest

from optogen.errors import InputError
from optogen.scenario import load_scenario, parse_value, unit_of

from conftest import ROOT

BASE = """
title = "t"
[absorber]
material = "Si"
thickness_um = 100
temperature_K = 300
donors_cm3 = 1e15
"""


def test_minimal_absorber_only():
    sc = load_scenario(BASE)
    assert sc.get("absorber.donors_cm3") == 1e15
    assert sc.n_points == 1 and sc.sweep == ()


def test_unknown_key_gets_did_you_mean():
    with pytest.raises(InputError, match=r"absorber\.temprature_K.*did you mean 'temperature_K'"):
        load_scenario(BASE.replace("temperature_K", "temprature_K"))


def test_unknown_section_gets_did_you_mean():
    with pytest.raises(InputError, match="did you mean 'absorber'"):
        load_scenario(BASE + "\n[absorbr]\nx = 1\n")


def test_density_and_resistivity_together_rejected():
    with pytest.raises(InputError, match="resistivity_ohm_cm.*not both"):
        load_scenario(BASE + 'resistivity_ohm_cm = 1.0\ndopant = "n"\n')


def test_resistivity_needs_dopant_type():
    text = BASE.replace("donors_cm3 = 1e15", "resistivity_ohm_cm = 1.0")
    with pytest.raises(InputError, match="absorber.dopant"):
        load_scenario(text)


def test_sweep_log_linear_list_and_grid_size():
    text = BASE + """
[sweep]
"absorber.temperature_K" = { linear = [250, 350], points = 5 }
"absorber.donors_cm3" = { log = [1e14, 1e17], points = 4 }
"absorber.thickness_um" = [100, 200]
"""
    sc = load_scenario(text)
    axes = {a.key: a.values for a in sc.sweep}
    np.testing.assert_allclose(axes["absorber.temperature_K"], [250, 275, 300, 325, 350])   # arithmetic
    np.testing.assert_allclose(axes["absorber.donors_cm3"], [1e14, 1e15, 1e16, 1e17])       # arithmetic
    assert sc.n_points == 5 * 4 * 2                                                         # outer product


@pytest.mark.parametrize("spec", ['{ log = [0, 1], points = 3 }', '{ log = [1, 2] }', '[]',
                                  '{ linear = [1, 2], points = 0 }'])
def test_bad_sweep_specs(spec):
    with pytest.raises(InputError, match="sweep"):
        load_scenario(BASE + f'\n[sweep]\n"absorber.temperature_K" = {spec}\n')


def test_sweep_of_unknown_key_rejected():
    with pytest.raises(InputError, match="absorber.temprature_K"):
        load_scenario(BASE + '\n[sweep]\n"absorber.temprature_K" = [1, 2]\n')


def test_with_values_and_keyword_form():
    sc = load_scenario(BASE)
    a = sc.with_values({"absorber.temperature_K": 250.0})
    b = sc.with_values(absorber__temperature_K=250.0)
    assert a.get("absorber.temperature_K") == b.get("absorber.temperature_K") == 250.0
    assert sc.get("absorber.temperature_K") == 300      # the original is unchanged (frozen)


def test_fixed_value_replaces_a_sweep_of_that_key():
    sc = load_scenario(BASE + '\n[sweep]\n"absorber.temperature_K" = [250, 300]\n')
    assert sc.with_values({"absorber.temperature_K": 280.0}).n_points == 1


def test_parse_value_toml_then_string():
    assert parse_value("0.1") == 0.1
    assert parse_value("true") is True
    assert parse_value("[1, 2]") == [1, 2]
    assert parse_value("AM1.5G") == "AM1.5G"


# one spelling, UDUNITS symbols with a caret before each exponent (tests/test_units.py parses them);
# suns as kW m^-2: 1 sun = 1000 W m^-2 (IEC 60904-3, common practice)
@pytest.mark.parametrize("key,unit", [("absorber.temperature_K", "K"), ("absorber.donors_cm3", "cm^-3"),
                                      ("light.suns", "kW m^-2"), ("generation_average_cm3_s", "cm^-3 s^-1"),
                                      ("photocurrent_mA_cm2", "mA cm^-2"), ("implied_voc_V", "V"),
                                      ("detectivity_cm_Hz05_W", "cm Hz^(1/2) W^-1")])
def test_unit_from_key_suffix(key, unit):
    assert unit_of(key) == unit


def test_a_key_inside_a_list_of_tables_can_be_set_and_swept():
    text = BASE + '[[recombination.defects]]\nname = "Fe_i"\ndensity_cm3 = 1e10\n'
    sc = load_scenario(text).with_values({"recombination.defects.0.density_cm3": 1e12})
    assert sc.get("recombination.defects.0.density_cm3") == 1e12
    sw = load_scenario(text + '\n[sweep]\n"recombination.defects.0.density_cm3" = [1e10, 1e11]\n')
    assert sw.n_points == 2
    with pytest.raises(InputError, match="index"):
        load_scenario(text).with_values({"recombination.defects.3.density_cm3": 1.0})


def test_a_parsed_table_loads_like_its_text():
    import tomllib
    a = load_scenario(BASE + '\n[sweep]\n"absorber.temperature_K" = [250, 300]\n')
    b = load_scenario(tomllib.loads(BASE + '\n[sweep]\n"absorber.temperature_K" = [250, 300]\n'))
    assert a.data == b.data
    assert [ax.key for ax in a.sweep] == [ax.key for ax in b.sweep]
    np.testing.assert_array_equal(a.sweep[0].values, b.sweep[0].values)


def test_one_value_log_sweep_is_its_first_end():
    sc = load_scenario(BASE + '\n[sweep]\n"absorber.temperature_K" = { log = [250, 350], points = 1 }\n')
    assert sc.sweep[0].values.tolist() == [250.0]          # a one-point range is its first end (arithmetic)


@pytest.mark.parametrize("source", [None, 3.5, b"[absorber]"])
def test_a_source_that_is_no_scenario_is_an_input_error(source):
    with pytest.raises(InputError, match="scenario"):
        load_scenario(source)


def test_linear_sweep_whose_span_overflows_is_an_input_error():
    # 1e308 - (-1e308) = 2e308 overflows a double (IEEE 754 max ~1.8e308)
    with np.errstate(all="raise"):                 # no overflow may happen on the way to the error
        with pytest.raises(InputError, match="finite"):
            load_scenario(BASE + '\n[sweep]\n"absorber.temperature_K" = { linear = [1e308, -1e308], points = 2 }\n')


def test_to_toml_gives_back_the_effective_scenario():
    import glob
    text = BASE + '[[recombination.defects]]\nname = "Fe_i"\ndensity_cm3 = 1e10\n\n[sweep]\n"absorber.temperature_K" = [250, 300]\n'
    sc = load_scenario(text).with_values({"recombination.defects.0.density_cm3": 1e12})
    back = load_scenario(sc.to_toml())
    assert back.data == sc.data and back.get("recombination.defects.0.density_cm3") == 1e12
    assert [a.key for a in back.sweep] == ["absorber.temperature_K"]
    np.testing.assert_array_equal(back.sweep[0].values, sc.sweep[0].values)
    root = Path(__file__).resolve().parents[1] / "scenarios"
    for f in sorted(glob.glob(str(root / "*.toml"))):              # every demo round-trips
        a = load_scenario(f)
        b = load_scenario(a.to_toml(), base_dir=a.base_dir)
        assert b.data == a.data, f


def test_scenario_repr_is_short():
    sc = load_scenario(BASE + '\n[sweep]\n"absorber.temperature_K" = [250, 300, 350]\n')
    assert len(repr(sc)) < 300 and "3 points" in repr(sc)
    assert "<table>" in sc._repr_html_()


def test_user_text_files_one_reader(tmp_path):
    # errors.read_text_file reads every user file (scenarios, spectra, optical and lifetime CSVs)
    from optogen.errors import content_lines, read_text_file
    src = (ROOT / "scenarios" / "rooftop_n_wafer.toml").read_text(encoding="utf-8")
    bom = tmp_path / "bom.toml"
    bom.write_bytes(b"\xef\xbb\xbf" + src.encode("utf-8"))      # a byte-order mark, as some editors write
    assert load_scenario(bom).get("light.suns") == load_scenario(ROOT / "scenarios" / "rooftop_n_wafer.toml").get("light.suns")
    big = tmp_path / "big.csv"
    big.write_bytes(b"x" * 101)
    with pytest.raises(InputError) as err:
        read_text_file(big, "light.path", max_bytes=100)
    assert err.value.field == "light.path" and "at most 100 bytes" in str(err.value)
    with pytest.raises(InputError, match="readable CSV file"):
        read_text_file(tmp_path / "missing.csv", "light.path")
    assert content_lines("# c\n\n a,b \n#x\n1,2\n") == [(3, "a,b"), (5, "1,2")]
