"""Reading, bad input and the end-to-end analysis of the bundled demo data (optogen.analysis)."""
import argparse
import json
import re
import shutil
from pathlib import Path

import numpy as np
import pytest

from optogen.analysis import analyse, analyse_folder, main
from optogen.cli import add_analyse_parser
from optogen.analysis.data import read_lifetime_csv, read_record_csv
from optogen.errors import InputError

DEMO = Path(__file__).resolve().parents[2] / "scenarios" / "analysis"


def _write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


GOOD = "# comment\ndelta_n_cm3,tau_s\n1e14,1e-3\n2e14,1.1e-3\n4e14,1.2e-3\n8e14,1.3e-3\n1.6e15,1.4e-3\n"
RECORD = "time_s,photoconductance_S,suns\n" + "".join(f"{i * 1e-5:g},{0.01 * np.exp(-i / 50):.6g},0\n"
                                                        for i in range(20))


def test_lifetime_file_is_read_and_sorted(tmp_path):
    text = GOOD.replace("2e14,1.1e-3\n", "") + "2e14,1.1e-3\n"           # rows out of order
    d = read_lifetime_csv(_write(tmp_path, "a.csv", text))
    assert np.all(np.diff(d.delta_n_cm3) > 0) and d.tau_s[1] == 1.1e-3


@pytest.mark.parametrize("text, where", [
    (GOOD.replace("delta_n_cm3,tau_s", "dn,tau_s"), r"column 'delta_n_cm3' is missing"),      # missing column
    (GOOD.replace("2e14,1.1e-3", "-2e14,1.1e-3"), r"line 4: delta_n_cm3 > 0"),                # negative dn
    (GOOD.replace("2e14,1.1e-3", "2e14,nan"), r"line 4: finite numbers"),                     # NaN row
    (GOOD.replace("2e14,1.1e-3", "2e14,1100"), r"line 4: tau_s in seconds"),                  # us in the s column
    (GOOD.replace("2e14,1.1e-3", "2e14"), r"line 4: 2 comma-separated values"),
    (GOOD.replace("2e14,1.1e-3", "4e14,1.1e-3"), r"one row per excess density"),
    (GOOD.replace("delta_n_cm3,tau_s", "delta_n_cm3,tau_s,colour"), r"unknown column 'colour'"),
])
def test_bad_lifetime_files_name_file_line_and_problem(tmp_path, text, where):
    p = _write(tmp_path, "bad.csv", text)
    with pytest.raises(InputError) as e:
        read_lifetime_csv(p)
    assert e.value.field == "measurement.file" and str(p) in str(e.value)
    assert re.search(where, str(e.value)), str(e.value)


@pytest.mark.parametrize("change, where", [
    (("0.00015,", "0.0001,", 1), r"line 17: time_s rising strictly"),                       # non-monotonic time
    ((",0.01,", ",-0.01,", 1), r"line 2: photoconductance_S >= 0"),                          # negative photoconductance
    (("time_s,photoconductance_S,suns", "time_s,photoconductance_S,lux", 1), r"exactly one light column"),
])
def test_bad_records_name_file_line_and_problem(tmp_path, change, where):
    p = _write(tmp_path, "rec.csv", RECORD.replace(*change))
    with pytest.raises(InputError) as e:
        read_record_csv(p)
    assert re.search(where, str(e.value)), str(e.value)


def test_unknown_and_out_of_range_measurement_keys_are_input_errors(tmp_path):
    for f in DEMO.glob("n_wafer_lifetime.*"):
        shutil.copy(f, tmp_path / f.name)
    sc = tmp_path / "n_wafer_lifetime.toml"
    with pytest.raises(InputError) as e:
        analyse(sc, {"measurement.optical_facter": 0.9})
    assert e.value.field == "measurement.optical_facter" and "optical_factor" in str(e.value)   # did you mean
    with pytest.raises(InputError) as e:
        analyse(sc, {"measurement.optical_factor": -1.0})
    assert e.value.field == "measurement.optical_factor" and "-1" in str(e.value)
    with pytest.raises(InputError) as e:
        analyse(sc, {"uncertainty.method": "guess"})
    assert e.value.field == "uncertainty.method" and "bootstrap" in str(e.value)


def test_demo_n_wafer_end_to_end(tmp_path):
    res = analyse(DEMO / "n_wafer_lifetime.toml")
    text = res.summary()
    # the summary names the limiting mechanism at 1 sun and the iVoc gain without it
    assert re.search(r"Limiting at 1 sun: (srh|surface|auger|radiative) \(\d+ % of the recombination\); "
                     r"without it iVoc would rise by [\d.]+ mV", text), text
    d = res.to_dict()
    json.dumps(d, allow_nan=False)
    # invented truth of the demo (its CSV's first line): J0 = 4 + 4 fA/cm^2, tau_n0 = tau_p0 = 4 ms (mid-gap)
    assert abs(d["J0_fA_cm2"]["global_fit"] - 8.0) <= 3 * d["J0_fA_cm2"]["global_fit_std"]
    assert abs(d["srh"]["tau_p0_s"] - 4e-3) <= 3 * d["srh"]["tau_p0_std_s"]
    # physics bounds: iVoc below the intrinsic limit of the same wafer, FF in (0, 1)
    assert d["implied"]["voc_1sun_V"] < d["implied"]["voc_intrinsic_V"]
    assert 0 < d["implied"]["ff_1sun"] < d["implied"]["ff_intrinsic"] < 1
    files = res.write(tmp_path)
    assert {f.name for f in files} >= {"analysis.json", "analysis.nc", "lifetime_fit.csv", "implied_jv.csv",
                                       "lifetime_fit.png", "inverse_lifetime_j0.png", "implied_jv.png"}
    assert not list(tmp_path.glob("*.part"))


def test_demo_iron_and_transient(capsys):
    iron = analyse(DEMO / "p_wafer_iron.toml")
    # invented truth (CSV first line): 2e11 cm^-3 iron
    assert abs(iron.iron.density_cm3 - 2e11) <= 3 * iron.iron.density_std_cm3 + 0.02 * 2e11
    tr = analyse(DEMO / "n_wafer_transient.toml")
    # invented truth: J0 = 10 + 10 fA/cm^2
    assert abs(tr.fit.best.J0_fA_cm2 - 20.0) <= 3 * tr.uncertainty["J0_std_fA_cm2"]


def test_subcommand_runs_and_prints(tmp_path, capsys):
    parser = argparse.ArgumentParser(prog="optogen")
    add_analyse_parser(parser.add_subparsers(dest="command"))
    args = parser.parse_args(["analyse", str(DEMO / "n_wafer_lifetime.toml"), "--out", str(tmp_path),
                              "--set", "measurement.suns=0.5"])
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "iVoc" in out and "Implied at 0.5 suns" in out
    assert (tmp_path / "analysis.json").stat().st_size > 0


def test_folder_batch_gives_one_row_per_file(tmp_path):
    folder = tmp_path / "batch"
    folder.mkdir()
    for name in ("a.csv", "b.csv"):
        shutil.copy(DEMO / "n_wafer_lifetime.csv", folder / name)
    table, results, joint = analyse_folder(DEMO / "n_wafer_lifetime.toml", folder,
                                           {"uncertainty.samples": 20})
    assert list(table["file"]) == ["a.csv", "b.csv"] and len(results) == 2
    assert table["J0_fA_cm2"][0] == table["J0_fA_cm2"][1]          # same data, same answer
