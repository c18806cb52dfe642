"""The README's quick start is what CI runs (common practice: docs that cannot drift)."""
import os
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _quick_start_commands():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"```(?:bash|sh)?\n(.+?)\n```", section, flags=re.S)


def test_readme_has_exactly_two_quick_start_commands():
    cmds = _quick_start_commands()
    assert len(cmds) == 2
    assert all("\n" not in c.strip() for c in cmds)      # each is one line to paste


def test_ci_runs_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    test_cmd = _quick_start_commands()[1].strip()
    assert "pytest" in test_cmd
    assert test_cmd in ci.splitlines()


def test_main_job_command_names_a_bundled_scenario():
    run_cmd = _quick_start_commands()[0]
    scen = re.search(r"scenarios/\S+\.toml", run_cmd).group(0)
    assert (ROOT / scen).is_file()


def test_the_python_example_runs():
    # the example under "Using it from Python" runs as printed, from the checkout (its paths),
    # in a fresh interpreter (nothing imported for it by the tests)
    import subprocess
    import sys
    pytest.importorskip("pint_xarray")
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("## Using it from Python", 1)[1].split("\n## ", 1)[0]
    code = re.search(r"```python\n(.+?)\n```", section, flags=re.S).group(1)
    check = ("\nassert 0.0 < float(ds['implied_voc_V']) < float(ds['bandgap_eV'])   # Voc below the gap"
             "\nassert lamp.to_dataset().attrs['spectrum_note']\nprint('example ran')\n")
    run = subprocess.run([sys.executable, "-c", code + check], cwd=ROOT, capture_output=True, text=True,
                         timeout=600, env={**os.environ, "MPLBACKEND": "Agg"})
    assert run.returncode == 0, run.stderr
    assert run.stdout.rstrip().endswith("example ran")
