"""Packaging metadata: license, classifiers, and dependency bounds that a CI job tests.

Sources: PEP 639 (license expression and license files; a `License ::` classifier must not be
combined with a license expression), SPDX license list ("MIT"), setuptools 77.0 changelog (first
release reading PEP 639 metadata, from memory), PEP 440 (version comparison).
"""
import re
import tomllib
from pathlib import Path

from packaging.requirements import Requirement
from packaging.version import Version

ROOT = Path(__file__).resolve().parents[1]
PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
PROJECT = PYPROJECT["project"]


def _declared():
    """Every dependency of the package and its extras as Requirement objects."""
    reqs = [Requirement(r) for r in PROJECT["dependencies"]]
    for extra in PROJECT["optional-dependencies"].values():
        reqs += [Requirement(r) for r in extra]
    return reqs


def _pins():
    """name -> Version pinned in .ci/lower-bounds.txt ('name==version' lines)."""
    pins = {}
    for line in (ROOT / ".ci" / "lower-bounds.txt").read_text(encoding="utf-8").splitlines():
        line = line.split("#", 1)[0].strip()
        if line:
            req = Requirement(line)
            (spec,) = req.specifier
            assert spec.operator == "==", line
            pins[req.name.lower()] = Version(spec.version)
    return pins


def test_license_is_an_spdx_expression_with_its_file():
    assert PROJECT["license"] == "MIT"                               # SPDX identifier (PEP 639)
    assert PROJECT["license-files"] == ["LICENSE"]
    text = (ROOT / "LICENSE").read_text(encoding="utf-8")
    assert text.startswith("MIT License") and "optogen contributors" in text
    # PEP 639: a license expression replaces the License :: classifiers
    assert not any(c.startswith("License ::") for c in PROJECT["classifiers"])
    # PEP 639 metadata needs setuptools >= 77 (setuptools changelog, from memory)
    (build,) = [Requirement(r) for r in PYPROJECT["build-system"]["requires"] if r.startswith("setuptools")]
    assert build.specifier.contains("77.0") and not build.specifier.contains("76.9")


def test_classifiers_match_requires_python():
    cls = PROJECT["classifiers"]
    for c in ("Intended Audience :: Science/Research", "Topic :: Scientific/Engineering :: Physics",
              "Operating System :: OS Independent"):
        assert c in cls
    versions = [c.rsplit(":: ", 1)[1] for c in cls if re.fullmatch(r"Programming Language :: Python :: 3\.\d+", c)]
    assert versions and min(versions, key=Version) == PROJECT["requires-python"].removeprefix(">=")


def test_every_dependency_has_a_lower_bound_pinned_for_ci():
    pins = _pins()
    declared = {}
    for req in _declared():
        lows = [Version(s.version) for s in req.specifier if s.operator == ">="]
        assert lows, f"{req} declares no lower bound"
        declared.setdefault(req.name.lower(), set()).update(lows)
    assert set(pins) == set(declared)                      # nothing missing, nothing extra
    for name, lows in declared.items():
        assert lows == {pins[name]}, f"{name}: pyproject says >= {sorted(map(str, lows))}, CI pins {pins[name]}"


def test_ci_runs_the_lower_bounds_job_after_the_readme_job():
    lines = (ROOT / ".ci" / "run").read_text(encoding="utf-8").splitlines()
    readme = next(i for i, s in enumerate(lines) if s.startswith("python3 -m venv .venv && "))
    lower = next(i for i, s in enumerate(lines) if "-c .ci/lower-bounds.txt" in s)
    assert readme < lower
    assert sum('-eq 5 ]' in s for s in lines) == 2         # pytest's "no tests" exit fails both jobs
