"""Mutation fuzz of the bundled scenarios (hypothesis): every mutated scenario ends in a result
whose core numbers are finite, or in an InputError naming a field; never another exception.

The mutations are the ones a user makes by mistake: keys dropped, types changed, numbers
set to 0, negative, NaN, +-inf, 1e+-308, huge integers, empty lists and tables, strings
where numbers belong, absurd sweep sizes.  They are applied through the Python API
(`load_scenario` of a dict, then `run`) and through the command line (`--set`).

Sweeps are cut to two values before mutating, so each case runs in well under a second;
the grid-size ceilings (optogen.schema.MAX_POINTS, MAX_SLOW_GROUPS) reject absurd sizes
before any array is built.  A larger run of the same mutations is
tests/benchmarks/fuzz_scenarios.py.  The expectation "finite or InputError" is the project
contract of issue 15 (common practice for input validation), not a physics value.
"""
from __future__ import annotations

import contextlib
import copy
import io
import json
import math
import tomllib
import warnings
from pathlib import Path

import numpy as np
import pytest

hypothesis = pytest.importorskip("hypothesis")
from hypothesis import HealthCheck, given, settings, strategies as st  # noqa: E402

import optogen  # noqa: E402
from optogen import report  # noqa: E402
from optogen.cli import main  # noqa: E402
from optogen.errors import InputError  # noqa: E402
from optogen.scenario import load_scenario  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
SCEN = ROOT / "scenarios"
NAMES = sorted(p.stem for p in SCEN.glob("*.toml"))

#: values a mistaken edit puts in place of any field
VALUES = [0, 0.0, -1, -1.5, math.nan, math.inf, -math.inf, 1e308, -1e308, 1e-308, 5e-324, 1e-300, 1e300,
          2**63 - 1, -(2**63), 10**30, 10**400, "abc", "", "1.0", True, False, [], [1.0], ["x"], {}, {"a": 1},
          0.5, 3, 1e21, 1e22, 20001, 4.0, 1000.0, 1001.0, 3.9]
#: sweep specifications, sensible and absurd
SWEEPS = [{"log": [1e-3, 1.0], "points": 10**9}, {"linear": [1.0, 2.0], "points": 10**12},
          {"linear": [1.0, 2.0], "points": 0}, {"log": [0.0, 1.0], "points": 3}, {"log": [1.0, 2.0]},
          {"linear": [1e308, -1e308], "points": 2}, {"linear": [math.nan, 1.0], "points": 2},
          {"linear": [1.0, 2.0], "points": True}, [], [math.nan], [1.0, "a"], [True, False], [1.0],
          [0.0, 1.0], [1e-300, 1e300], ["front", "rear"], [[1.0]], [{}], 5.0]
#: --set values as text (TOML syntax; anything that is not TOML is a string)
SET_TEXTS = ["nan", "inf", "-inf", "1e308", "-1e308", "1e-308", "0", "-1", "abc", "''", "true", "[]", "{}",
             "9223372036854775807", "-9223372036854775808", "[1.0, 2.0]", "{ a = 1 }", "1e22", "20001", "3.9"]


def base_table(name: str) -> dict:
    """A bundled scenario as a dict, its sweeps cut to their two end values (small runs)."""
    data = tomllib.loads((SCEN / f"{name}.toml").read_text(encoding="utf-8"))
    sweep = data.get("sweep")
    if sweep:
        sc = load_scenario(SCEN / f"{name}.toml")
        data["sweep"] = {a.key: [np.asarray(a.values[0]).item(), np.asarray(a.values[-1]).item()]
                         for a in sc.sweep}
    return data


def leaves(node, prefix=()):
    """Every path into the table: tables, list items and values (sweep keys stay whole)."""
    out = []
    if isinstance(node, dict):
        for k, v in node.items():
            out.append(prefix + (k,))
            if prefix == () and k == "sweep" and isinstance(v, dict):
                out += [prefix + (k, sk) for sk in v]
            else:
                out += leaves(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out.append(prefix + (i,))
            out += leaves(v, prefix + (i,))
    return out


def _parent(data, path):
    node = data
    for part in path[:-1]:
        node = node[part]
    return node


def mutate(data: dict, ops) -> dict:
    """Apply (kind, index, value) operations: "drop" a path, "set" a value, "sweep" a path."""
    data = copy.deepcopy(data)
    for kind, index, value in ops:
        paths = leaves(data)
        if not paths:
            break
        path = paths[index % len(paths)]
        parent = _parent(data, path)
        if kind == "drop":
            if isinstance(parent, list):
                parent.pop(path[-1])
            else:
                parent.pop(path[-1], None)
        elif kind == "set":
            parent[path[-1]] = copy.deepcopy(value)
        else:                     # sweep the dotted path of this leaf with `value`
            dotted = ".".join(str(p) for p in path)
            if dotted.startswith("sweep."):
                dotted = dotted[len("sweep."):]
            if not isinstance(data.get("sweep"), dict):
                data["sweep"] = {}
            data["sweep"][dotted] = copy.deepcopy(value)
    return data


OPS = st.lists(st.one_of(
    st.tuples(st.just("drop"), st.integers(0, 10_000), st.none()),
    st.tuples(st.just("set"), st.integers(0, 10_000), st.sampled_from(VALUES)),
    st.tuples(st.just("sweep"), st.integers(0, 10_000), st.sampled_from(SWEEPS)),
), min_size=1, max_size=3)

#: most points a fuzz case runs (larger valid grids are only loaded)
MAX_RUN_POINTS = 4


def outcome(data: dict) -> str:
    """"input error", "not run" (a valid grid too large for a quick case), "finite" or
    "unconverged (flagged)".

    Raises AssertionError for a result with a non-finite core number, and lets any
    exception other than InputError propagate (the test then fails with it).
    """
    try:
        sc = load_scenario(data, base_dir=SCEN)
        if sc.n_points > MAX_RUN_POINTS:
            return "not run"
        with warnings.catch_warnings():
            _quiet_but_numerics()
            res = optogen.run(sc, progress=False)
            d = res.to_dict()
            json.dumps(d, allow_nan=False)
            report.summary(res)
    except InputError as exc:
        assert exc.field and str(exc)
        return "input error"
    return check_finite(res)


def _quiet_but_numerics() -> None:
    """Inside catch_warnings: stated warnings (UserWarning subclasses: unconverged, degenerate, notes)
    are the NaN policy's business (issue 15 item 6) and pass silently; a RuntimeWarning (numpy's
    overflow, divide by zero, invalid value) is an error, so a floating-point fault cannot hide."""
    warnings.simplefilter("ignore")
    warnings.simplefilter("error", RuntimeWarning)


#: detector outputs that may be +-inf by definition (a channel absent): no SRH centres -> tau_g = inf;
#: no recombination at all -> bulk lifetime inf; no dark current -> R0A inf; no response to the signal
#: (a signal beyond the cut-off: D* = 0) -> NEP = sqrt(A df) / D* inf.  JSON writes them as null.
DETECTOR_MAY_BE_INF = {"generation_lifetime_s", "bulk_lifetime_s", "r0a_ohm_cm2", "noise_equivalent_power_W"}


#: outputs that must be a finite number at every point of any result
CORE = {"equilibrium": ("n0_cm3", "p0_cm3", "ni_eff_cm3", "fermi_level_eV"),
        "steady_state": ("delta_n_cm3", "n_cm3", "p_cm3", "tau_eff_s")}


def check_finite(res) -> str:
    """Assert every core number is finite, except at steady-state points flagged unconverged
    with a warning (the NaN policy: null with a stated reason).  Returns "finite" or
    "unconverged (flagged)"."""
    ds = res.dataset
    flagged = np.zeros(ds["n0_cm3"].shape, dtype=bool)
    if "converged" in ds:
        flagged = ~np.asarray(ds["converged"].values, dtype=bool)
        if flagged.any():
            assert any("converge" in w for w in res.warnings), "unconverged points without a warning"
    for block, names in CORE.items():
        for name in names:
            if name in ds:
                values = np.asarray(ds[name].values, dtype=float)
                ok = np.isfinite(values) | (flagged if block == "steady_state" else False)
                assert np.all(ok), f"{block}.{name} not finite: {values}"
    # detector floats: finite, or null (NaN, a stated reason) - never an unexplained inf
    for name, da in ds.data_vars.items():
        if da.attrs.get("block") == "detector" and da.dtype.kind == "f" and name not in DETECTOR_MAY_BE_INF:
            values = np.asarray(da.values, dtype=float)
            assert not np.any(np.isinf(values)), f"detector.{name} infinite: {values}"
    return "unconverged (flagged)" if flagged.any() else "finite"


@settings(max_examples=400, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(name=st.sampled_from(NAMES), ops=OPS)
def test_mutated_scenarios_end_in_a_result_or_an_input_error(name, ops):
    outcome(mutate(base_table(name), ops))


@settings(max_examples=120, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(name=st.sampled_from(NAMES), key_index=st.integers(0, 10_000), text=st.sampled_from(SET_TEXTS),
       command=st.sampled_from(["check", "run"]))
def test_set_mutations_exit_0_or_2_never_internal(tmp_path_factory, name, key_index, text, command):
    data = base_table(name)
    paths = [p for p in leaves(data) if p[0] != "sweep"]
    key = ".".join(str(p) for p in paths[key_index % len(paths)])
    folder = tmp_path_factory.mktemp("fuzz")
    path = folder / f"{name}.toml"
    path.write_text((SCEN / f"{name}.toml").read_text(encoding="utf-8").split("[sweep]")[0], encoding="utf-8")
    for f in SCEN.glob("*.csv"):
        (folder / f.name).write_bytes(f.read_bytes())
    err_buf, out_buf = io.StringIO(), io.StringIO()
    with warnings.catch_warnings(), contextlib.redirect_stderr(err_buf), contextlib.redirect_stdout(out_buf):
        _quiet_but_numerics()
        code = main([command, str(path), "--set", f"{key}={text}", *(["--quiet"] if command == "run" else [])])
    err = err_buf.getvalue()
    assert code in (0, 2), err
    assert "internal error" not in err and "Traceback" not in err
    if code == 2:
        assert err.startswith("optogen: error: ") or "\noptogen: error: " in err


@pytest.mark.parametrize("ops", [
    [("set", 0, 10**400)],                                              # an integer no float can hold
    [("sweep", 0, {"log": [1e-3, 1.0], "points": 10**9})],              # a billion points
    [("sweep", 0, {"linear": [1.0, 2.0], "points": 10**12})],
])
def test_absurd_values_are_input_errors_before_any_allocation(ops):
    data = mutate(base_table("rooftop_n_wafer"), ops)
    with pytest.raises(InputError):
        load_scenario(data, base_dir=SCEN)
