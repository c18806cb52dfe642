"""Benchmark: vectorised steady-state solve vs a plain per-point scipy brentq loop.

Run:  python tests/benchmarks/bench_steady_state.py [N] [N_big]
Mixed doping (n- and p-type 1e14..1e17), temperature (250..350 K) and generation
(1e13..1e24 cm^-3 s^-1); SRH (Fe_i) + Richter 2012 + radiative + J0 surfaces; band-gap
narrowing "none" in the timed comparison (both sides evaluate the same rates).
The brentq baseline runs on a random subset (size printed) and is scaled per point; it
evaluates the same prepared per-point rate constants, so only the root finding differs.
The vectorised time includes preparing the rate constants (the equilibrium is excluded on both sides).
Then N_big points (default 1e7) go through `solve_chunked`, printing peak memory.
"""
import resource
import sys
import time
import tracemalloc

import numpy as np
from scipy.optimize import brentq

from optogen import materials
from optogen.equilibrium import equilibrium
from optogen.recombination import Defect, Recombination
from optogen.steady_state import solve, solve_chunked

SI = materials.get("Si")
W = 0.016
REC = Recombination(bgn_model="none", front_J0_fA_cm2=5.0, rear_J0_fA_cm2=10.0,
                    defects=(Defect("Fe_i", 0.38, "Ev", 5e-14, 7e-17, density_cm3=1e10),))


def inputs(n, seed=0):
    rng = np.random.default_rng(seed)
    T = rng.uniform(250.0, 350.0, n)
    N = 10 ** rng.uniform(14.0, 17.0, n)
    ntype = rng.random(n) < 0.5
    G = 10 ** rng.uniform(13.0, 24.0, n)
    return T, np.where(ntype, N, 0.0), np.where(ntype, 0.0, N), G


def main(n=100_000, n_big=10_000_000, n_base=300):
    T, nd, na, G = inputs(n)
    eq = equilibrium(SI, T, nd, na, bgn_model="none")
    solve(SI, equilibrium(SI, T[:100], nd[:100], na[:100], bgn_model="none"), REC, G[:100], W)   # warm-up
    t0 = time.perf_counter()
    ss = solve(SI, eq, REC, G, W, with_ff=False)
    t_vec = time.perf_counter() - t0
    print(f"vectorised solve (no FF): N = {n}, {t_vec:.3f} s, {n / t_vec:,.0f} points/s, "
          f"converged {ss.converged.mean() * 100:.3f} %")
    t0 = time.perf_counter()
    ssf = solve(SI, eq, REC, G, W, with_ff=True)
    t_ff = time.perf_counter() - t0
    print(f"vectorised solve (with implied FF): {t_ff:.3f} s, {n / t_ff:,.0f} points/s")

    # baseline: per point, the same prepared rate constants (PreparedRates.total, the solver's own
    # rate function), scipy brentq on ln(dn); equilibrium and preparation are outside both timings
    idx = np.random.default_rng(1).choice(n, n_base, replace=False)
    prep = REC.prepare(SI, eq, W)
    t0 = time.perf_counter()
    base = np.empty(n_base)
    for j, i in enumerate(idx):
        p1 = prep.take([i])

        def f(x, p1=p1, g=G[i]):
            return np.log(p1.total(np.exp([x]))[0]) - np.log(g)
        base[j] = np.exp(brentq(f, np.log(1e-10), np.log(1e21), xtol=1e-14, rtol=1e-13))
    t_base = time.perf_counter() - t0
    per_base = t_base / n_base
    print(f"per-point brentq loop: {n_base} of the {n} points, {t_base:.3f} s, {1 / per_base:,.0f} points/s")
    print(f"speed-up (points/s vectorised / per-point loop): {per_base * n / t_vec:,.0f}x (target >= 100x)")
    dev = np.max(np.abs(base / ss.delta_n_cm3[idx] - 1))
    print(f"max relative difference in dn vs brentq: {dev:.2e}")

    # memory: tracemalloc peak for N and 2N (linear in N), then N_big in chunks
    for m in (n // 4, n // 2):
        a = inputs(m, 2)
        tracemalloc.start()
        e2 = equilibrium(SI, a[0], a[1], a[2], bgn_model="none")
        solve(SI, e2, REC, a[3], W, with_ff=False)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        print(f"N = {m}: tracemalloc peak {peak / 2**20:.1f} MiB ({peak / m:.0f} B/point)")
    del ss, ssf, eq
    big = inputs(n_big, 3)
    t0 = time.perf_counter()
    out = solve_chunked(SI, REC, *big[:3], big[3], W, chunk_size=262_144,
                        fields_out=("delta_n_cm3", "implied_voc_V", "converged"),
                        equilibrium_kwargs={"bgn_model": "none"})
    t_big = time.perf_counter() - t0
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 2**10
    print(f"N = {n_big} in chunks of 262144 (equilibrium + steady state): {t_big:.1f} s, "
          f"{n_big / t_big:,.0f} points/s, converged {out['converged'].mean() * 100:.4f} %, "
          f"peak RSS of the process {rss:.0f} MiB (limit 2048)")


if __name__ == "__main__":
    args = [int(float(a)) for a in sys.argv[1:]]
    main(*args)
