"""pytest set-up shared by the test files (the one conftest.py, at tests/).

On CI (environment variable CI set, as `.ci/run` runs) every hypothesis test is derandomized, so
a submission's CI result depends only on its code (common practice for property tests in CI); a
local run keeps exploring new random examples.  `tests/benchmarks/fuzz_scenarios.py` is the larger,
seeded exploration.

`ROOT` (the checkout: README.md, pyproject.toml, .ci/) and `SCENARIOS` (its demo scenarios) are
found from this file, so a test reads them the same way from any sub-folder of tests/ and from any
working directory: ``from conftest import ROOT, SCENARIOS`` (pytest's default import mode puts
tests/ on sys.path when it loads this file).
"""
import os
from pathlib import Path

from hypothesis import settings

#: the checkout (the folder holding pyproject.toml, README.md, scenarios/, spectra/)
ROOT = Path(__file__).resolve().parent.parent
#: the bundled demo scenarios of the checkout
SCENARIOS = ROOT / "scenarios"

settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")
