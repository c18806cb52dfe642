"""Does a compiled kernel earn its place?  numba against numpy on the steady-state kernel.

    python tests/benchmarks/bench_numba.py        # needs numba installed (not a dependency)

The kernel is the heart of the solve, written twice with the same arithmetic: Newton in
x = ln(delta n) on ln U(x) = ln G with the analytic derivative, 12 fixed iterations, for U =
SRH (one level) + Auger (Richter 2012 form, 300 K coefficients) + radiative (B = 4.73e-15
cm^3/s) in n-type Si (N_D = 1.5e15 cm^-3, n_i = 9.65e9 cm^-3: demo inputs). Printed: `import numba` time,
the first call (compilation) and the steady per-call time for 1e6 points, against numpy;
and the break-even run length (how long a run must be before the compiled kernel has paid
for its import and compilation).
"""
from __future__ import annotations

import subprocess
import sys
import time

import numpy as np

N0, NI = 1.5e15, 9.65e9
P0 = NI**2 / N0
TAU_N, TAU_P, N1, P1 = 1e-3, 1e-3, NI, NI
B = 4.73e-15


def coefficients(n0, p0):
    g_eeh = 1.0 + 13.0 * (1.0 - np.tanh((n0 / 3.3e17) ** 0.66))
    g_ehh = 1.0 + 7.5 * (1.0 - np.tanh((p0 / 7.0e17) ** 0.63))
    return 2.5e-31 * g_eeh * n0 + 8.5e-32 * g_ehh * p0


A = coefficients(N0, P0)


def kernel_numpy(lnG):
    x = np.full_like(lnG, np.log(1e14))
    for _ in range(12):
        d = np.exp(x)
        n, p = N0 + d, P0 + d
        exc = d * (N0 + P0 + d)
        den = TAU_P * (n + N1) + TAU_N * (p + P1)
        srh = exc / den
        aug = exc * (A + 3.0e-29 * d**0.92)
        rad = B * exc
        U = srh + aug + rad
        dexc = N0 + P0 + 2.0 * d
        dU = (dexc / den - exc * (TAU_P + TAU_N) / den**2 + dexc * (A + 3.0e-29 * d**0.92)
              + exc * 0.92 * 3.0e-29 * d**-0.08 + B * dexc)
        x = x - (np.log(U) - lnG) / (dU * d / U)
    return x


SOURCE = '''
import numba, numpy as np
@numba.njit(cache=False, fastmath=False)
def kernel_numba(lnG, N0, P0, TAU_N, TAU_P, N1, P1, A, B):
    out = np.empty_like(lnG)
    for i in range(lnG.size):
        x = np.log(1e14)
        for _ in range(12):
            d = np.exp(x)
            n = N0 + d; p = P0 + d
            exc = d * (N0 + P0 + d)
            den = TAU_P * (n + N1) + TAU_N * (p + P1)
            c = A + 3.0e-29 * d**0.92
            U = exc / den + exc * c + B * exc
            dexc = N0 + P0 + 2.0 * d
            dU = (dexc / den - exc * (TAU_P + TAU_N) / den**2 + dexc * c
                  + exc * 0.92 * 3.0e-29 * d**-0.08 + B * dexc)
            x = x - (np.log(U) - lnG[i]) / (dU * d / U)
        out[i] = x
    return out
'''


def main():
    try:
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-c", "import numba"], check=True)
        t_import = time.perf_counter() - t0
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        t_import -= time.perf_counter() - t0
    except subprocess.CalledProcessError:
        print("numba is not installed: nothing to compare")
        return
    ns: dict = {}
    exec(SOURCE, ns)
    lnG = np.log(np.geomspace(1e15, 1e22, 1_000_000))
    args = (N0, P0, TAU_N, TAU_P, N1, P1, A, B)
    t0 = time.perf_counter()
    ns["kernel_numba"](lnG[:10], *args)
    t_compile = time.perf_counter() - t0
    best = {}
    for name, fn in (("numpy", lambda: kernel_numpy(lnG)), ("numba", lambda: ns["kernel_numba"](lnG, *args))):
        best[name] = min(_timed(fn) for _ in range(3))
    x_np, x_nb = kernel_numpy(lnG), ns["kernel_numba"](lnG, *args)
    print(f"import numba: {t_import:.2f} s; first call (compilation): {t_compile:.2f} s")
    print(f"1e6 points, 12 Newton steps: numpy {best['numpy']:.3f} s, numba {best['numba']:.3f} s "
          f"-> {best['numpy'] / best['numba']:.2f}x; same answer to {np.max(np.abs(x_np - x_nb)):.1e} in ln(dn)")
    gain_per_point = (best["numpy"] - best["numba"]) / lnG.size
    if gain_per_point > 0:
        pts = (t_import + t_compile) / gain_per_point
        print(f"break-even: {pts:,.0f} points of this kernel per run "
              f"({pts * best['numpy'] / lnG.size:.1f} s of numpy kernel time)")


def _timed(fn):
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


if __name__ == "__main__":
    main()
