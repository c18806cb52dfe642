"""Benchmark: generation for 2000 wavelengths x 500 depths x 50 temperatures.

Run: /tmp/dev/bin/python tests/benchmarks/bench_generation.py

Prints the time of the vectorised core (optogen.generation.compute) and of the full
`generate` (which also looks up the optical constants), the peak memory of each
(tracemalloc), and the ratio against a plain per-wavelength Python loop measured in
the same run.  The loop baseline runs on a subset of temperatures and is scaled up
linearly (it is linear in the number of temperatures); the output says so.
"""
from __future__ import annotations

import time
import tracemalloc

import numpy as np

from optogen import generation, light, materials

L, X, NT = 2000, 500, 50
BASELINE_T = 5            # temperatures actually run by the loop baseline


def loop_baseline(wl, phi, alpha, n, W, x):
    """Plain loops over temperature and wavelength (numpy only over depth)."""
    w = generation.trapezoid_weights(wl)
    G = np.zeros((alpha.shape[0], x.size))
    J = np.zeros(alpha.shape[0])
    for t in range(alpha.shape[0]):
        for i in range(wl.size):
            a = alpha[t, i]
            T = np.exp(-2 * a * W)
            down = 1.0 / (1.0 - T * T * (1.0 - 1.0 / n[t, i] ** 2))
            up = down * T
            G[t] += w[i] * phi[i] * 2 * a * (down * np.exp(-2 * a * x) + up * np.exp(-2 * a * (W - x)))
            J[t] += w[i] * phi[i] * (down + up) * (1 - T)
    return G, J


def timed(fn, *args, repeat=3, **kw):
    """(result, best wall time of `repeat` untraced runs [s], peak traced memory of one more run [bytes])."""
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn(*args, **kw)
        best = min(best, time.perf_counter() - t0)
    tracemalloc.start()
    fn(*args, **kw)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return out, best, peak


def main():
    si = materials.get("Si")
    wl = np.linspace(300.0, 1200.0, L)
    T = np.linspace(200.0, 400.0, NT)
    W = 160e-4
    x = generation.depth_mesh_cm(W, 2e6, X)
    sun = light.scale(light.Spectrum(wl, np.interp(wl, *[getattr(light.standard("AM1.5G"), k) for k in
                                                           ("wavelength_nm", "irradiance_W_m2_nm")])), suns=1)
    phi = sun.photon_flux_cm2_s_nm
    oc, t_oc, _ = timed(materials.optical_constants, si, wl, T[:, None])
    alpha, n = oc.alpha_cm1, np.broadcast_to(oc.n, oc.alpha_cm1.shape)

    compute = lambda: generation.compute(wl, phi, alpha, n, W, 0.0, 1.0, "lambertian", depth_cm=x)
    g, t_core, mem_core = timed(compute)
    _, t_full, mem_full = timed(generation.generate, sun, si, W, T_K=T, depth_cm=x)

    (Gb, Jb), t_base, _ = timed(loop_baseline, wl, phi, alpha[:BASELINE_T], n[:BASELINE_T], W, x, repeat=1)
    t_base_full = t_base * NT / BASELINE_T
    err = np.max(np.abs(Gb / g.profile_cm3_s[:BASELINE_T] - 1))
    err_J = np.max(np.abs(Jb * 1e3 * 1.602176634e-19 / g.photocurrent_mA_cm2[:BASELINE_T] - 1))

    print(f"generation: {L} wavelengths x {X} depths x {NT} temperatures (Si, 160 um, lambertian)")
    print(f"  optical constants lookup (cached){t_oc:8.3f} s")
    print("  times: best of 3 runs; peak memory: tracemalloc over one further run")
    print(f"  vectorised core (compute)       {t_core:8.3f} s   peak memory {mem_core / 2**20:7.1f} MiB")
    print(f"  full generate() incl. lookup    {t_full:8.3f} s   peak memory {mem_full / 2**20:7.1f} MiB")
    print(f"  loop over T and wavelength (numpy over depth){t_base_full:8.3f} s   (ran {BASELINE_T} of {NT} temperatures "
          f"in {t_base:.3f} s, scaled x{NT // BASELINE_T})")
    print(f"  speed-up of the core over the loop: {t_base_full / t_core:8.1f} x")
    print(f"  agreement with the loop: profile max rel. diff {err:.1e}, photocurrent {err_J:.1e}")
    print(f"  chunk bound MAX_CHUNK_BYTES = {generation.MAX_CHUNK_BYTES / 2**20:.0f} MiB; a dense (T, L, X) "
          f"float64 array would be {NT * L * X * 8 / 2**20:.0f} MiB")


if __name__ == "__main__":
    main()
