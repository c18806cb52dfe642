"""The CF rules the tests check on a NetCDF file as stored (no decoding), shared by the forward
results (tests/pipeline/test_outputs_cf.py) and the analysis (tests/analysis).

Source: NetCDF Climate and Forecast (CF) Metadata Conventions 1.10 (cfconventions.org), by
section:
* 2.3 Naming: variable, dimension and attribute names begin with a letter and hold only
  letters, digits and underscores;
* 2.5.1 Missing data: a coordinate variable has no _FillValue;
* 2.6.1 Identification: the global attribute Conventions names the CF version ("CF-1.10");
* 2.6.2 Description: title and history are global attributes (non-empty strings);
* 3.1 Units: every numeric variable carries units that UDUNITS-2 parses (cf-units: no
  exception, the half-power quantities are stored squared); strings and flags carry none;
* 3.2 Long name: every variable has a long_name;
* 3.5 Flags: flag_values is an array of the variable's own type, as many as the blank-separated
  words of flag_meanings.

`compliance_check` runs the IOOS compliance checker (CF 1.10 suite) where it is installed:
``compliance-checker`` beside the running Python (a venv's, not activated), on PATH, or named by
the environment variable OPTOGEN_CF_CHECKER; the `test` extra installs it.
"""
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np

NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")         # CF 1.10 section 2.3


def cf_problems(path: Path) -> list[str]:
    """The rules above that the file at `path` breaks, one line each (empty: none)."""
    import cf_units
    import h5netcdf
    problems = []
    with h5netcdf.File(path, "r") as f:
        g = dict(f.attrs)
        if g.get("Conventions") != "CF-1.10":
            problems.append("2.6.1 Conventions")
        for att in ("title", "history"):
            if not str(g.get(att, "")).strip():
                problems.append(f"2.6.2 {att}")
        problems += [f"2.3 attribute {a}" for a in g if not NAME.match(a)]
        problems += [f"2.3 dimension {d}" for d in f.dimensions if not NAME.match(d)]
        for name, var in f.variables.items():
            attrs = dict(var.attrs)
            if not NAME.match(name):
                problems.append(f"2.3 variable {name}")
            if var.dimensions == (name,) and "_FillValue" in attrs:
                problems.append(f"2.5.1 _FillValue on coordinate {name}")
            if not attrs.get("long_name"):
                problems.append(f"3.2 long_name of {name}")
            if "flag_values" in attrs:
                fv = np.asarray(attrs["flag_values"])
                if fv.dtype != var.dtype or fv.size != len(str(attrs.get("flag_meanings", "")).split()):
                    problems.append(f"3.5 flags of {name}")
                if "units" in attrs:
                    problems.append(f"3.1 units on flag {name}")
            elif var.dtype.kind in "OSU" or var.dtype == object:
                if "units" in attrs:
                    problems.append(f"3.1 units on string {name}")
            elif "units" not in attrs:
                problems.append(f"3.1 no units on {name}")
            else:
                try:
                    cf_units.Unit(str(attrs["units"]))
                except ValueError:
                    problems.append(f"3.1 units {attrs['units']!r} of {name}")
    return problems


def compliance_check(path: Path) -> str:
    """The IOOS compliance checker's text report on `path` (CF 1.10); the test skips without it."""
    import pytest
    beside = Path(sys.executable).with_name("compliance-checker")
    exe = (os.environ.get("OPTOGEN_CF_CHECKER") or (str(beside) if beside.is_file() else None)
           or shutil.which("compliance-checker"))
    if not exe:
        pytest.skip("the IOOS compliance checker is not installed")
    run = subprocess.run([exe, "--test=cf:1.10", "--format=text", str(path)],
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stdout + run.stderr         # 0: no error at the default level
    return run.stdout
