"""Benchmark: depth-resolved steady state (optogen.profile) vs scipy.integrate.solve_bvp.

Run:  python tests/benchmarks/bench_profile.py [N_batch] [N_baseline]

Problem (invented demo values): 160 um p-type wafer (p0 = 1e16 cm^-3), violet light with
alpha = 1e5 cm^-1 (Beer-Lambert), photon flux 1e12..1e21 cm^-2 s^-1 spread over the batch;
bulk = mid-gap SRH-like (tau_n0 = 10 us, tau_p0 = 100 us) + cubic Auger-like term; D = 30
cm^2/s; J0 = 100 fA/cm^2 front, S = 10 cm/s rear; 200-node mesh; rtol 1e-10.

Baseline: scipy.integrate.solve_bvp called once per profile (scaled variables, tol 1e-6,
starting from the same 200-node mesh and the uniform answer) on a random subset of
N_baseline profiles; its time per profile is scaled to N_batch.  Both sides evaluate the same
rate functions.  The deviation between the two answers is printed to show like for like.
"""
import sys
import time

import numpy as np
from scipy.integrate import solve_bvp

from optogen import profile as P

NI, P0 = 9.65e9, 1e16
N0 = NI**2 / P0
W, ALPHA, D = 0.016, 1e5, 30.0


def srh_like(dn, tau_n=1e-5, tau_p=1e-4):
    n, p = N0 + dn, P0 + dn
    num, den = n * p - NI**2, tau_p * (n + NI) + tau_n * (p + NI)
    return num / den, ((n + p) * den - num * (tau_n + tau_p)) / den**2


def auger_like(dn, C=1.66e-30):
    n, p = N0 + dn, P0 + dn
    return C * (n * p - NI**2) * (n + p), C * ((n + p) ** 2 + 2 * (n * p - NI**2))


BULK = P.add_rates(srh_like, auger_like)
DIFF = P.constant_diffusion(D)
FRONT = P.surface_J0(100.0, N0, P0, NI)
REAR = P.surface_S(10.0)


def timed(fn, repeat):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def bvp_one(x, g_phi, guess):
    """One profile with scipy.integrate.solve_bvp (scaled: u = dn/N, j = J/phi, J = -D dn')."""
    N = max(guess, 1.0)

    def rhs(xx, y):
        dn = y[0] * N
        return np.vstack((-y[1] * g_phi / (D * N),
                          (ALPHA * g_phi * np.exp(-ALPHA * xx) - BULK(dn)[0]) / g_phi))

    def bc(ya, yb):
        return np.array([ya[1] * g_phi + FRONT(ya[0] * N)[0],
                         yb[1] * g_phi - REAR(yb[0] * N)[0]]) / g_phi

    y0 = np.vstack((np.ones(x.size), np.zeros(x.size)))
    sol = solve_bvp(rhs, bc, x, y0, tol=1e-6, max_nodes=100000)
    return sol.success, sol.sol(x)[0] * N


def main(n_batch=1000, n_base=20):
    x = P.mesh(W, 200, [1 / ALPHA, np.sqrt(D * 1e-4)])
    phi = np.logspace(12, 21, n_batch)
    G = ALPHA * phi[:, None] * np.exp(-ALPHA * x)

    P.solve_profile(x, G[0], BULK, DIFF, FRONT, REAR)                     # warm-up
    mid = n_batch // 2
    t_one, one = timed(lambda: P.solve_profile(x, G[mid], BULK, DIFF, FRONT, REAR), 20)
    print(f"one profile, {x.size} nodes, phi = {phi[mid]:.3g} cm^-2 s^-1: {t_one * 1e3:.2f} ms "
          f"({int(one.iterations)} Newton iterations, converged {bool(one.converged)})")

    t_batch, sol = timed(lambda: P.solve_profile(x, G, BULK, DIFF, FRONT, REAR), 3)
    print(f"batch of {n_batch} profiles: {t_batch:.3f} s ({t_batch / n_batch * 1e3:.3f} ms per "
          f"profile), converged {sol.converged.mean() * 100:.1f} %, iterations max "
          f"{sol.iterations.max()}, worst residual {sol.residual.max():.2e}")

    rng = np.random.default_rng(0)
    subset = rng.choice(n_batch, size=min(n_base, n_batch), replace=False)
    t0 = time.perf_counter()
    results = [bvp_one(x, phi[i], sol.uniform_delta_n_cm3[i]) for i in subset]
    t_base = (time.perf_counter() - t0) / len(subset)
    ok = np.array([r[0] for r in results])
    dev = max(np.max(np.abs(r[1] - sol.delta_n_cm3[i])) / sol.delta_n_cm3[i].max()
              for r, i in zip(results, subset) if r[0])
    print(f"baseline solve_bvp, once per profile on {len(subset)} random profiles: "
          f"{t_base * 1e3:.1f} ms per profile (success {ok.mean() * 100:.0f} %), "
          f"max deviation from ours {dev:.1e} of the peak")
    print(f"ratio one profile:   solve_bvp / ours = {t_base / t_one:.1f}x")
    print(f"ratio batch of {n_batch}: solve_bvp scaled to {n_batch} "
          f"({t_base * n_batch:.1f} s) / ours = {t_base * n_batch / t_batch:.1f}x")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:]))
