"""Benchmark: sweep throughput, memory and start-up, as ratios measured in the same run.

    python tests/benchmarks/bench_throughput.py            # 1e4, 1e5, 1e6 points
    python tests/benchmarks/bench_throughput.py --huge     # also 1e7 points (about a minute)

Prints, for a suns x temperature sweep of a passivated Si wafer (Richter 2012, Schenk 1998,
an iron defect, J0 surfaces; demo settings of our own):

* the full pipeline through the CLI, including the implied FF and writing every file
  (``optogen run --out``), in a fresh process per size: wall time, points/s, peak RSS;
  in process and on a local dask cluster of 2 workers (where dask starts to pay off);
* the same physics as a per-point scipy loop (brentq for G = U, then the maximum-power
  point by scipy's bounded minimize_scalar), timed on a sample and scaled: the ratio;
* the same physics as one direct call of the vectorised core on flat arrays (equilibrium,
  tabulated generation, `steady_state.solve` with the FF), without the pipeline: the ratio
  shows what the pipeline (checks, labels, files) costs on top of the kernel;
* `optogen --version` and a single-point run, with the heavy modules each one imports.
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

import numpy as np

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
ROOT = Path(__file__).resolve().parents[2]


def scenario_text(n_suns: int, n_T: int) -> str:
    return (WAFER + f'\n[sweep]\n"light.suns" = {{ log = [1e-3, 10], points = {n_suns} }}\n'
            f'"absorber.temperature_K" = {{ linear = [250, 350], points = {n_T} }}\n')


def timed_cli(args: list[str]) -> tuple[float, float]:
    """Wall time [s] and peak RSS [MiB] of one CLI run in a fresh process (with its dask workers)."""
    probe = textwrap.dedent("""
        import resource, subprocess, sys, time
        t = time.perf_counter()
        r = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL)
        dt = time.perf_counter() - t
        if r.returncode: sys.exit(r.returncode)
        print(dt, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024)
    """)
    out = subprocess.run([sys.executable, "-c", probe, sys.executable, "-m", "optogen.cli", *args],
                         capture_output=True, text=True, check=True).stdout.split()
    return float(out[0]), float(out[1])


def per_point_loop(sc, points) -> float:
    """Seconds per point of a plain scipy loop on the same physics."""
    from scipy.optimize import brentq, minimize_scalar

    from optogen.constants import q_C
    from optogen.equilibrium import equilibrium
    from optogen.pipeline import build
    from optogen.pipeline.setup import equilibrium_options, generation_of
    from optogen.steady_state import state_at
    setup = build(sc)
    mat, rec, W = setup.material, setup.recombination, setup.thickness_cm
    t0 = time.perf_counter()
    for suns, T in points:
        eq = equilibrium(mat, np.array([T]), np.array([1.5e15]), np.array([0.0]), **equilibrium_options(setup))
        g, _ = generation_of(setup, setup.spectrum, np.array([T]))
        G = float(np.ravel(g.average_cm3_s)[0]) * suns
        prep = rec.prepare(mat, eq, W, (1,))

        def U(x):
            return float(sum(np.ravel(r)[0] for r in prep.rates(np.array([np.exp(x)]))))
        x_oc = brentq(lambda x: np.log(U(x)) - np.log(G), np.log(1e2), np.log(1e19), xtol=1e-12)
        jgen = q_C * W * G

        def minus_power(x):
            v = float(np.ravel(state_at(mat, eq, rec, np.array([np.exp(x)]), W)["splitting_eV"])[0])
            return -v * (jgen - q_C * W * U(x))
        minimize_scalar(minus_power, bounds=(x_oc - 12.0, x_oc), method="bounded", options={"xatol": 1e-9})
    return (time.perf_counter() - t0) / len(points)


def direct_kernel(sc) -> tuple[float, int]:
    """Seconds for the grid as one direct call of the vectorised core (no pipeline), and its size."""
    from optogen.equilibrium import equilibrium
    from optogen.pipeline import build
    from optogen.pipeline.setup import equilibrium_options, generation_of
    from optogen.steady_state import solve
    setup = build(sc.with_values({}))
    suns, T = (a.values for a in sc.sweep)
    S, TT = np.meshgrid(suns, T, indexing="ij")
    S, TT = S.ravel(), TT.ravel()
    t0 = time.perf_counter()
    Tu, rows = np.unique(TT, return_inverse=True)
    eq = equilibrium(setup.material, Tu, np.full(Tu.size, 1.5e15), np.zeros(Tu.size), **equilibrium_options(setup))
    g, _ = generation_of(setup, setup.spectrum, Tu)
    import dataclasses
    eq = dataclasses.replace(eq, **{f.name: getattr(eq, f.name)[rows] for f in dataclasses.fields(eq)
                                    if isinstance(getattr(eq, f.name), np.ndarray)})
    solve(setup.material, eq, setup.recombination, np.ravel(g.average_cm3_s)[rows] * S, setup.thickness_cm)
    return time.perf_counter() - t0, S.size


def imports_of(code: str) -> tuple[float, list[str]]:
    out = subprocess.run([sys.executable, "-c", code + "\nimport sys\nprint(*[m for m in ('dask', 'distributed', "
                          "'astropy', 'scipy', 'xarray', 'matplotlib', 'pandas') if m in sys.modules])"],
                         capture_output=True, text=True, check=True).stdout.split()
    return 0.0, out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--huge", action="store_true", help="also the 1e7-point sweep")
    args = ap.parse_args()
    import optogen
    print(f"optogen {optogen.__version__}, numpy {np.__version__}, {os.cpu_count()} CPU(s)")

    # start-up
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "optogen.cli", "--version"], check=True, capture_output=True)
    t_version = time.perf_counter() - t0
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", "pass"], check=True)
    t_python = time.perf_counter() - t0
    _, heavy_cli = imports_of("import optogen.cli")
    _, heavy_pkg = imports_of("import optogen")
    t_point, rss_point = timed_cli(["run", str(ROOT / "scenarios" / "rooftop_n_wafer.toml")])
    print(f"optogen --version: {t_version:.2f} s (bare python start {t_python:.2f} s); "
          f"import optogen loads: {', '.join(heavy_pkg) or 'none of the heavy modules'}; "
          f"import optogen.cli loads: {', '.join(heavy_cli) or 'none'}")
    print(f"single point (rooftop demo, summary only): {t_point:.2f} s, peak RSS {rss_point:.0f} MiB")

    sizes = [(100, 100), (1000, 100), (10000, 100)] + ([(100000, 100)] if args.huge else [])
    sc_small = optogen.load_scenario(scenario_text(*sizes[1]))
    rng = np.random.default_rng(1)
    sample = list(zip(rng.choice(sc_small.sweep[0].values, 40), rng.choice(sc_small.sweep[1].values, 40)))
    per_point = per_point_loop(sc_small, sample)
    t_kernel, n_kernel = direct_kernel(sc_small)
    print(f"per-point scipy loop (brentq + bounded minimize_scalar per point), 40 points timed: "
          f"{per_point * 1e3:.1f} ms/point")
    print(f"direct vectorised core on {n_kernel:,} points (no pipeline): {t_kernel:.2f} s "
          f"({n_kernel / t_kernel:,.0f} points/s)")
    print(f"{'points':>10} {'mode':>12} {'wall s':>8} {'points/s':>10} {'peak RSS MiB':>13} "
          f"{'x scipy loop':>13} {'x kernel time':>14}")
    with tempfile.TemporaryDirectory() as tmp:
        for n_s, n_T in sizes:
            path = Path(tmp) / f"sweep_{n_s}x{n_T}.toml"
            path.write_text(scenario_text(n_s, n_T))
            n = n_s * n_T
            modes = [("in process", [])] + ([("dask x2", ["--workers", "2"])] if n >= 1e5 else [])
            for mode, extra in modes:
                wall, rss = timed_cli(["run", str(path), "--out", str(Path(tmp) / "out"), "--yes", *extra])
                kernel = t_kernel * n / n_kernel
                print(f"{n:>10,} {mode:>12} {wall:>8.2f} {n / wall:>10,.0f} {rss:>13.0f} "
                      f"{per_point * n / wall:>13,.0f} {wall / kernel:>14.2f}")


if __name__ == "__main__":
    main()
