"""Benchmark: vectorised steady-state solve vs a plain per-point scipy brentq loop.

Run:  python tests/benchmarks/bench_steady_state.py [N] [N_big] [N_ff]
Mixed doping (n- and p-type 1e14..1e17), temperature (250..350 K) and generation
(1e13..1e24 cm^-3 s^-1); SRH (Fe_i) + Richter 2012 + radiative + J0 surfaces; band-gap
narrowing "none" in the timed comparison (both sides evaluate the same rates).
The brentq baseline runs on a random subset (size printed) and is scaled per point; it
evaluates the same prepared per-point rate constants, so only the root finding differs.
The vectorised time includes preparing the rate constants (the equilibrium is excluded on both sides).
Then N_big points (default 1e7) go through `solve_chunked`, printing peak memory.

Implied fill factor (`ff_figures`, N_ff points, default 1e5; 0 skips it): points/s of
solve(with_ff=True) against with_ff=False, and of the FF search alone: the safeguarded Newton
of optogen.steady_state._mpp_flat against the golden section it replaced (kept below as
`golden_section_mpp`, the reference, not in the package), on the same solved states, with the
largest FF difference and the band-gap narrowing evaluations per point, for Schenk 1998 and
no injection narrowing.  Best of 3 runs each.
Run the FF figures alone:  python tests/benchmarks/bench_steady_state.py 0 0 100000
"""
import resource
import sys
import time
import tracemalloc

import numpy as np
from scipy.optimize import brentq

from optogen import materials
from optogen.equilibrium import equilibrium
from optogen.constants import q_C
from optogen.recombination import Defect, PreparedRates, Recombination
from optogen import steady_state
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


def golden_section_mpp(prep, W, jgen, voc, dn_oc, iters=40):
    """The maximum-power search used before issue 11 (reference for the benchmark only).

    Golden section on P = V J over x = ln Delta n in [ln dn_oc - L, ln dn_oc],
    L = 4 (ln(1 + Voc/kT) + 1), 40 iterations (the narrowing evaluated at every one), the
    maximum-power point at the final midpoint with the exact levels; NaN where the splitting
    falls at the steady state (difference of V over +-1e-4 in x) or dn_oc is not positive.
    Returns (vmp [V], jmp [mA cm^-2]).
    """
    op = steady_state._operating_point
    gr = (np.sqrt(5.0) - 1.0) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        x_oc = np.log(dn_oc)
        hi = x_oc
        lo = hi - 4.0 * (np.log1p(np.maximum(voc / prep.kT, 0.0)) + 1.0)
    levels = steady_state._fast_levels(prep)

    def power(x):
        v, j = op(prep, W, jgen, x, levels)
        return v * j
    with np.errstate(invalid="ignore"):
        c, d = hi - gr * (hi - lo), lo + gr * (hi - lo)
        pc, pd = power(c), power(d)
        for _ in range(iters):
            left = pc > pd
            hi, lo = np.where(left, d, hi), np.where(left, lo, c)
            c, d = np.where(left, hi - gr * (hi - lo), d), np.where(left, c, lo + gr * (hi - lo))
            pn = power(np.where(left, c, d))
            pc, pd = np.where(left, pn, pd), np.where(left, pc, pn)
        vmp, jmp = op(prep, W, jgen, 0.5 * (lo + hi))
        falls = np.zeros(x_oc.shape, bool)
        if prep.inj_bgn:
            zero = np.zeros_like(x_oc)
            falls = np.isfinite(x_oc) & (op(prep, 1.0, zero, x_oc + 1e-4, levels)[0]
                                         < op(prep, 1.0, zero, x_oc - 1e-4, levels)[0])
    bad = falls | ~(dn_oc > 0)
    return np.where(bad, np.nan, vmp), np.where(bad, np.nan, jmp)


def _best_time(f, repeat=3):
    best, out = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = f()
        best = min(best, time.perf_counter() - t0)
    return best, out


def _narrowing_per_point(f, n):
    """Band-gap narrowing evaluations (points x calls of PreparedRates._bgn) per point during f()."""
    real, count = PreparedRates._bgn, [0]

    def counting(self, n_cm3, p_cm3, sub=None):
        count[0] += np.size(n_cm3)
        return real(self, n_cm3, p_cm3, sub)
    PreparedRates._bgn = counting
    try:
        f()
    finally:
        PreparedRates._bgn = real
    return count[0] / n


def ff_figures(n=100_000):
    """Implied-FF figures (see the module docstring); mixed doping, 250..350 K, 1e-3..1e3 suns."""
    T, nd, na, _ = inputs(n, 4)
    G = 10 ** np.random.default_rng(5).uniform(16.0, 22.0, n)
    for bgn in ("schenk1998", "none"):
        rec = Recombination(bgn_model=bgn, front_J0_fA_cm2=5.0, rear_J0_fA_cm2=10.0,
                            defects=(Defect("Fe_i", 0.38, "Ev", 5e-14, 7e-17, density_cm3=1e10),))
        eq = equilibrium(SI, T, nd, na, bgn_model=bgn)
        solve(SI, equilibrium(SI, T[:100], nd[:100], na[:100], bgn_model=bgn), rec, G[:100], W)   # warm-up
        t_no, ss = _best_time(lambda: solve(SI, eq, rec, G, W, with_ff=False))
        t_ff, ssf = _best_time(lambda: solve(SI, eq, rec, G, W, with_ff=True))
        lit = np.flatnonzero(ss.converged & (ss.delta_n_cm3 > 0) & (ss.splitting_eV > 0))
        prep = rec.prepare(SI, eq, W).take(lit)
        jgen = q_C * W * G[lit] * 1e3
        voc, dn = ss.splitting_eV[lit], ss.delta_n_cm3[lit]
        shift = prep.ni2_shift(dn)
        t_new, (vn, jn) = _best_time(lambda: steady_state._mpp_flat(prep, W, jgen, voc, dn, shift))
        t_old, (vo, jo) = _best_time(lambda: golden_section_mpp(prep, W, jgen, voc, dn))
        with np.errstate(invalid="ignore"):
            ff_new, ff_old = vn * jn / (voc * jgen), vo * jo / (voc * jgen)
        same_nan = np.array_equal(np.isnan(ff_new), np.isnan(ff_old))
        diff = ff_new - ff_old
        dev = np.nanmax(np.abs(diff))
        with np.errstate(invalid="ignore"):
            agree = np.nanmax(np.where(np.abs(diff) <= 1e-6, np.abs(diff), np.nan))
            higher, lower = int(np.sum(diff > 1e-6)), int(np.sum(diff < -1e-6))
        e_new = _narrowing_per_point(lambda: steady_state._mpp_flat(prep, W, jgen, voc, dn, shift), lit.size)
        e_old = _narrowing_per_point(lambda: golden_section_mpp(prep, W, jgen, voc, dn), lit.size)
        e_solve = _narrowing_per_point(lambda: solve(SI, eq, rec, G, W, with_ff=False), n)
        m = lit.size
        print(f"implied FF, narrowing {bgn}: N = {n} ({m} lit)")
        print(f"  solve without FF {n / t_no:,.0f} points/s, with FF {n / t_ff:,.0f} points/s: "
              f"the FF costs {t_ff / t_no - 1:.2f}x the solve")
        print(f"  FF search alone: Newton {m / t_new:,.0f} points/s, golden section {m / t_old:,.0f} points/s, "
              f"speed-up {t_old / t_new:.1f}x; same NaN {same_nan}; "
              f"FF of solve == FF of _mpp_flat: {np.allclose(ssf.implied_ff[lit], ff_new, rtol=0, atol=1e-14, equal_nan=True)}")
        print(f"  FF Newton - golden section: within 1e-6 at {m - higher - lower} points (max {agree:.1e}); "
              f"higher by up to {dev:.1e} at {higher} (a J-V with two local maxima of V J, the golden section "
              f"on the lower one), lower at {lower}")
        if bgn != "none":
            print(f"  narrowing evaluations per point: FF {e_new:.1f} (golden section {e_old:.1f}), "
                  f"solve without FF {e_solve:.1f}")
        print(f"  solve with FF: {(t_no + t_old) / t_ff:.2f}x faster than the solve plus the golden-section FF")


def main(n=100_000, n_big=10_000_000, n_ff=100_000, n_base=300):
    if n_ff:
        ff_figures(n_ff)
    if not n:
        return
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
    if not n_big:
        return
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
