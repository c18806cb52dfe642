"""A larger mutation run of the bundled scenarios than the CI test (tests/test_fuzz.py).

    python tests/benchmarks/fuzz_scenarios.py [N_CASES] [SEED]

Each case applies 1-3 random mutations (tests/test_fuzz.py: keys dropped, types changed,
0 / negative / NaN / +-inf / 1e+-308 / huge integers, empty lists, strings for numbers,
absurd sweeps) to a bundled scenario and runs it through the Python API.  Each case runs in
a child process with a time limit, so a hang is caught and counted.  Prints the count of
each outcome (input error, finite result, not run: a valid grid too large to run here)
and every other outcome with its reproducer (scenario name and mutations).  Exit status 1
if any case ended in something other than an input error or a finite result.
"""
from __future__ import annotations

import multiprocessing as mp
import random
import sys
import time
import traceback
import warnings
from collections import Counter
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
import test_fuzz as tf  # noqa: E402

TIME_LIMIT_S = 60.0


def _case(queue, name, ops):
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            out = tf.outcome(tf.mutate(tf.base_table(name), ops))
        runtime = sorted({f"{w.category.__name__}: {str(w.message)[:90]}" for w in caught
                          if issubclass(w.category, RuntimeWarning)
                          and w.category.__module__ in ("builtins", "numpy")})
        queue.put((out, runtime))
    except AssertionError as exc:
        queue.put((f"non-finite result: {exc}"[:300], []))
    except BaseException as exc:  # noqa: BLE001 - every other outcome is a finding
        tb = traceback.extract_tb(exc.__traceback__)[-1]
        queue.put((f"{type(exc).__name__}: {str(exc)[:200]} at {Path(tb.filename).name}:{tb.lineno}", []))


def main(n_cases: int = 1000, seed: int = 1) -> int:
    rng = random.Random(seed)
    ctx = mp.get_context("fork")
    counts: Counter = Counter()
    findings = []
    warned = Counter()
    example: dict = {}
    t0 = time.perf_counter()
    for i in range(n_cases):
        name = rng.choice(tf.NAMES)
        ops = []
        for _ in range(rng.randint(1, 3)):
            kind = rng.choice(["drop", "set", "set", "sweep"])
            value = None if kind == "drop" else rng.choice(tf.VALUES if kind == "set" else tf.SWEEPS)
            ops.append((kind, rng.randrange(10_000), value))
        queue = ctx.Queue()
        proc = ctx.Process(target=_case, args=(queue, name, ops))
        proc.start()
        proc.join(TIME_LIMIT_S)
        if proc.is_alive():
            proc.kill()
            proc.join()
            out, runtime = f"hang (> {TIME_LIMIT_S:g} s)", []
        else:
            out, runtime = queue.get() if not queue.empty() else (f"crash (exit {proc.exitcode})", [])
        kind = out if out in ("input error", "finite", "not run", "unconverged (flagged)") else "OTHER"
        counts[kind] += 1
        for w in runtime:
            warned[w] += 1
            example.setdefault(w, (name, ops))
        if kind in ("OTHER", "unconverged (flagged)"):
            findings.append((name, ops, out))
    dt = time.perf_counter() - t0
    print(f"{n_cases} cases in {dt:.0f} s ({dt / max(n_cases, 1):.2f} s per case, seed {seed})")
    for k, v in counts.most_common():
        print(f"  {k:<12} {v}")
    if warned:
        print("RuntimeWarnings seen (case count):")
        for w, v in warned.most_common(15):
            print(f"  {v:5d}  {w}\n         e.g. {example[w][0]} {example[w][1]!r}")
    for name, ops, out in findings:
        print(f"- {name} {ops!r}\n    {out}")
    return 1 if counts["OTHER"] else 0


if __name__ == "__main__":
    args = [int(a) for a in sys.argv[1:3]]
    sys.exit(main(*args))
