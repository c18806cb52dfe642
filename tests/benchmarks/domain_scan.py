"""Domain scan: the uniform steady state over the whole physical domain, point by point checks.

Run:  python tests/benchmarks/domain_scan.py [N_per_material] [seed]
Not collected by pytest (a larger version of tests/test_domain.py).  For every built-in
material (Si with each narrowing model; HgCdTe at x = 0.22 and 0.3) it draws N random
points: temperature 4-1000 K (capped where the material's gap closes), doping intrinsic
or 1e10-1e20 cm^-3 of either type, generation 0 or 1e-6..1e4 suns (1 sun taken as
2.5e19 cm^-3 s^-1, i.e. 40 mA/cm^2 absorbed in 100 um, times a thickness factor 1..100),
with and without an SRH level and surfaces, and prints per material: points, converged,
worst residual |G - U| / G, non-finite outputs, splittings above the gap (and whether all
of them are flagged degenerate), and the time per point.
"""
import sys
import time
import warnings

import numpy as np

from optogen import materials
from optogen.equilibrium import equilibrium
from optogen.recombination import Defect, Recombination
from optogen.steady_state import solve

G_SUN = 2.5e19       # cm^-3 s^-1: 40 mA/cm^2 absorbed in 100 um (AM1.5G on Si, common practice)


def t_max(mat):
    """Highest temperature of the scan where the material keeps a gap above 20 meV [K]."""
    T = np.linspace(4.0, 1000.0, 997)
    ok = np.asarray(mat.bandgap_eV(T)) > 0.02
    return float(T[ok].max())


def cases():
    yield "Si/schenk1998", materials.get("Si"), "schenk1998"
    yield "Si/klaassen1992", materials.get("Si"), "klaassen1992"
    yield "Si/none", materials.get("Si"), "none"
    for name in ("GaAs", "Ge", "InSb", "InP", "InGaAs", "CdTe"):
        yield name, materials.get(name), None
    for x in (0.22, 0.3):
        yield f"HgCdTe x={x}", materials.get("HgCdTe", x), None


def main(n=20000, seed=1):
    rng = np.random.default_rng(seed)
    for label, mat, bgn in cases():
        T = rng.uniform(4.0, t_max(mat), n)
        N = np.where(rng.random(n) < 0.15, 0.0, 10 ** rng.uniform(10.0, 20.0, n))
        ntype = rng.random(n) < 0.5
        suns = np.where(rng.random(n) < 0.1, 0.0, 10 ** rng.uniform(-6.0, 4.0, n))
        G = suns * G_SUN * 10 ** rng.uniform(0.0, 2.0, n)
        for rec_label, rec in (("intrinsic only", Recombination(bgn_model=bgn)),
                               ("+ SRH + S", Recombination(bgn_model=bgn, front_S_cm_s=10.0, rear_S_cm_s=10.0,
                                                           defects=(Defect(tau_n0_s=1e-5, tau_p0_s=1e-4),)))):
            t0 = time.perf_counter()
            with warnings.catch_warnings():
                warnings.simplefilter("error", RuntimeWarning)
                eq = equilibrium(mat, T, np.where(ntype, N, 0.0), np.where(ntype, 0.0, N), bgn_model=bgn)
                ss = solve(mat, eq, rec, G, 0.01)
            dt = (time.perf_counter() - t0) / n
            res = np.where(G > 0, ss.residual, 0.0)
            fields = ("delta_n_cm3", "n_cm3", "p_cm3", "splitting_eV", "electron_qfl_eV", "hole_qfl_eV",
                      "tau_eff_s", "log10_np_over_ni2", "implied_ff")
            nonfinite = sum(int(np.sum(~np.isfinite(getattr(ss, f))
                                       & ~((f == "implied_ff") & (G == 0))
                                       & ~((f == "tau_eff_s") & np.isinf(getattr(ss, f)))))
                            for f in fields)
            above = ss.splitting_eV > ss.effective_gap_eV
            print(f"{label:16s} {rec_label:15s} T<={t_max(mat):6.0f} K  points {n}  converged "
                  f"{int(ss.converged.sum())}  worst residual {res.max():.2e}  non-finite {nonfinite}  "
                  f"above gap {int(above.sum())} (all degenerate: {bool(np.all(ss.degenerate[above]))})  "
                  f"{dt * 1e6:.1f} us/point")
            bad = np.flatnonzero(~ss.converged)[:5]
            for i in bad:
                print(f"    unconverged: T={T[i]:.4g} K N={N[i]:.3g} ({'n' if ntype[i] else 'p'}) G={G[i]:.3g}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
