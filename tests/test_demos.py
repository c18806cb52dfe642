"""Every bundled demo scenario runs end to end and writes its files."""
from pathlib import Path

import pytest

from optogen.cli import main

SCEN = sorted((Path(__file__).resolve().parents[1] / "scenarios").glob("*.toml"))


@pytest.mark.parametrize("path", SCEN, ids=[p.stem for p in SCEN])
def test_demo_runs_and_writes(path, tmp_path, capsys):
    assert main(["run", str(path), "--out", str(tmp_path), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "Note: Estimates" in out                      # the standing caution is always shown
    assert (tmp_path / "result.csv").stat().st_size > 0
    assert list(tmp_path.glob("*.png")) or "equilibrium" in path.stem


def test_demo_list_is_complete():
    # the five demo settings the sweeps issue asks for, plus the foundation and depth demos
    assert len(SCEN) >= 7


def test_laser_demo_shows_laser_caution(capsys):
    path = next(p for p in SCEN if "lab_laser" in p.stem)
    assert main(["run", str(path)]) == 0
    assert "Laser" in capsys.readouterr().out


def test_cryogenic_demo_shows_cold_caution(capsys):
    path = next(p for p in SCEN if "hgcdte" in p.stem)
    assert main(["run", str(path), "--quiet"]) == 0
    assert "Cryogenic" in capsys.readouterr().out
