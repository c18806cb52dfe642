"""Benchmark: full-pipeline sweeps against a plain per-point loop, measured in the same run.

    python tests/benchmarks/bench_sweep.py [--million]

Prints seconds, points per second and the ratio against running the single-
point pipeline once per point (the baseline runs on a subset and is scaled;
the output says so), and the peak traced memory of the vectorised sweep.
"""
from __future__ import annotations

import argparse
import time
import tracemalloc

import numpy as np

import optogen
from optogen.pipeline import build, evaluate

WAFER = """
title = "benchmark wafer"
[absorber]
material = "Si"
thickness_um = 160
temperature_K = 300
donors_cm3 = 1.5e15
[light]
source = "AM1.5G"
suns = 1.0
[optics]
front_reflectance = 0.02
rear_reflectance = 0.95
light_path = "lambertian"
[recombination]
intrinsic = "richter2012"
bandgap_narrowing = "schenk1998"
front_J0_fA_cm2 = 5
rear_J0_fA_cm2 = 5
[[recombination.defects]]
name = "Fe_i"
density_cm3 = 1e10
"""


def grid(n_suns, n_T):
    return optogen.load_scenario(
        WAFER + f'\n[sweep]\n"light.suns" = {{ log = [1e-3, 10], points = {n_suns} }}\n'
        f'"absorber.temperature_K" = {{ linear = [250, 350], points = {n_T} }}\n')


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--million", action="store_true", help="also time a 1e6-point sweep")
    args = ap.parse_args()

    sc = grid(200, 50)
    t0 = time.perf_counter()
    optogen.run(sc, progress=False)                       # first run: imports, optical data cache
    t_first = time.perf_counter() - t0
    t_vec = float("inf")
    for _ in range(2):                                    # best of 2 warm runs
        t0 = time.perf_counter()
        ds = optogen.run(sc, progress=False).to_dataset()
        t_vec = min(t_vec, time.perf_counter() - t0)
    tracemalloc.start()                                   # memory in a separate run (tracing is slow)
    optogen.run(sc, progress=False)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    n = ds["implied_voc_V"].size
    print(f"first (cold) run incl. imports and optical-data loading: {t_first:.2f} s")

    base = optogen.load_scenario(WAFER)
    rng = np.random.default_rng(1)
    subset = 20
    t0 = time.perf_counter()
    for s, T in zip(rng.choice(sc.sweep[0].values, subset), rng.choice(sc.sweep[1].values, subset)):
        # the same pipeline for one point (no single-point curves), built and evaluated per point
        point = base.with_values({"light.suns": float(s), "absorber.temperature_K": float(T)})
        evaluate(build(point), {}, 1)
    t_loop = (time.perf_counter() - t0) / subset * n
    print(f"200 x 50 sweep (suns x T, full pipeline incl. generation): {n} points in {t_vec:.2f} s "
          f"({n / t_vec:,.0f} points/s), peak traced memory {peak / 2**20:.0f} MiB")
    print(f"per-point loop baseline (build + evaluate one point at a time): {subset} points timed, scaled to {n}: {t_loop:.1f} s "
          f"-> ratio {t_loop / t_vec:.0f}x")

    if args.million:
        sc = grid(20000, 50)
        t0 = time.perf_counter()
        ds = optogen.run(sc, progress=False).to_dataset()
        t = time.perf_counter() - t0
        print(f"1e6-point sweep: {ds['implied_voc_V'].size} points in {t:.1f} s "
              f"({ds['implied_voc_V'].size / t:,.0f} points/s)")


if __name__ == "__main__":
    main()
