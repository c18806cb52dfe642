"""pytest set-up shared by the test files.

On CI (environment variable CI set, as `.ci/run` runs) every hypothesis test is derandomized, so
a submission's CI result depends only on its code (common practice for property tests in CI); a
local run keeps exploring new random examples.  `tests/benchmarks/fuzz_scenarios.py` is the larger,
seeded exploration.
"""
import os

from hypothesis import settings

settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")
