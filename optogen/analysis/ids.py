"""Injection-dependent lifetime spectroscopy (IDLS) of one SRH level.

S. Rein, Lifetime Spectroscopy: A Method of Defect Characterization in Silicon for Photovoltaic
Applications (Springer, Berlin, 2005), doi:10.1007/3-540-27922-9 (from memory).

The SRH lifetime is linear in the capture time constants at a given level energy E_t
(`Mechanisms.srh_basis`, the Shockley-Read-Hall formula rearranged):

    tau_SRH(dn) = tau_n0 A(dn; E_t) + tau_p0 B(dn; E_t).

The defect-parameter solution surface (DPSS): for every E_t of a grid over the gap, the weighted
linear least squares in (tau_n0, tau_p0) gives tau_n0(E_t), k(E_t) = sigma_n/sigma_p
= (tau_p0 v_th,p)/(tau_n0 v_th,n) and chi^2(E_t).  One curve is described by two numbers only
(tau_SRH is a ratio of two linear functions of dn), so along the DPSS of one curve chi^2 is flat:
the level is not determined.  Several curves of the same defect (wafers of different doping, with
the same defect density; Rein 2005 ch. 6) share (tau_n0, tau_p0, E_t); their joint chi^2(E_t) has
a minimum in each half of the gap, where the DPSS curves intersect: the two solution branches,
which the data cannot tell apart.  Both are reported.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize_scalar

from .j0 import EDGE_MARGIN_eV
from .model import Mechanisms

#: level grid over the gap [-]
GRID_POINTS = 801


@dataclass(frozen=True, eq=False)
class IdsBranch:
    """One IDLS solution: half ("lower"/"upper"), level E_t - E_v [eV] with its 1-sigma range,
    tau_n0, tau_p0 [s] with 1-sigma, k = sigma_n/sigma_p [-], chi2 [-], dof [-], resolved (the
    minimum lies inside its half, not at an end) [bool]."""

    half: str
    level_eV: float
    level_interval_eV: tuple
    tau_n0_s: float
    tau_n0_std_s: float
    tau_p0_s: float
    tau_p0_std_s: float
    k: float
    chi2: float
    dof: int
    resolved: bool


@dataclass(frozen=True, eq=False)
class Dpss:
    """The defect-parameter solution surface and its branches.

    level_eV (E,) [eV]; tau_n0_s, tau_p0_s, k (E,) [s], [s], [-] (NaN where no physical solution:
    a capture time <= 0); chi2 (E,) [-]; branches: tuple of `IdsBranch` (lower chi^2 first);
    curves: number of lifetime curves used [-]; intrinsic_level_eV [eV].
    """

    level_eV: np.ndarray
    tau_n0_s: np.ndarray
    tau_p0_s: np.ndarray
    k: np.ndarray
    chi2: np.ndarray
    branches: tuple
    curves: int
    intrinsic_level_eV: float


def dpss_rein2005(curves, levels_eV=None) -> Dpss:
    """DPSS and the two branches from one or more SRH lifetime curves of the same defect.

    Parameters
    ----------
    curves : sequence of (mech, tau_srh_s, sigma_rel): the forward model at the curve's dn
        (`optogen.analysis.model.mechanisms` of its own sample), the SRH lifetime left after the
        intrinsic and surface terms [s] (points <= 0 or non-finite are skipped), its relative
        1-sigma uncertainty (or None: equal weights, chi^2 scaled by its reduced value)
    levels_eV : E_t - E_v grid [eV] (default: `GRID_POINTS` from EDGE_MARGIN_eV above E_v to
        EDGE_MARGIN_eV below E_c of the first curve's sample)

    Returns
    -------
    Dpss
    """
    m0 = curves[0][0]
    eq = m0.sample.eq
    eg, ei = float(eq.effective_gap_eV), float(eq.intrinsic_level_eV)
    grid = np.linspace(EDGE_MARGIN_eV, eg - EDGE_MARGIN_eV, GRID_POINTS) if levels_eV is None \
        else np.asarray(levels_eV, float)
    known = all(c[2] is not None for c in curves)
    prepared = []
    for mech, tau, srel in curves:
        tau = np.asarray(tau, float)
        ok = np.isfinite(tau) & (tau > 0)
        w = (1.0 / (tau * (np.ones_like(tau) if srel is None else np.asarray(srel, float)))) ** 2
        prepared.append((mech, ok, tau[ok], w[ok]))
    npts = sum(int(ok.sum()) for _, ok, _, _ in prepared)

    def solve_at(levels):
        """(tau_n0, tau_p0, chi2, normal matrix) at each level (E,): the weighted linear fit of all curves."""
        levels = np.atleast_1d(np.asarray(levels, float))
        N = np.zeros((levels.size, 2, 2))
        r = np.zeros((levels.size, 2))
        rows = []
        for mech, ok, t, w in prepared:
            A, B = mech.srh_basis(levels)                # (E, D)
            A, B = A[:, ok], B[:, ok]
            N[:, 0, 0] += np.sum(w * A * A, axis=1)
            N[:, 0, 1] += np.sum(w * A * B, axis=1)
            N[:, 1, 1] += np.sum(w * B * B, axis=1)
            r[:, 0] += np.sum(w * A * t, axis=1)
            r[:, 1] += np.sum(w * B * t, axis=1)
            rows.append((A, B, t, w))
        N[:, 1, 0] = N[:, 0, 1]
        sol = np.linalg.solve(N, r[..., None])[..., 0]
        chi2 = np.zeros(levels.size)
        for A, B, t, w in rows:
            chi2 += np.sum(w * (sol[:, :1] * A + sol[:, 1:] * B - t) ** 2, axis=1)
        return sol[:, 0], sol[:, 1], chi2, N

    tn, tp, chi2, N = solve_at(grid)
    phys = (tn > 0) & (tp > 0)
    ve, vh = m0.sample.material.vth_cm_s(m0.sample.temperature_K)
    with np.errstate(divide="ignore", invalid="ignore"):
        k = np.where(phys, tp * float(vh) / (tn * float(ve)), np.nan)
    dof = max(npts - 3, 1)
    branches = []
    for half, sel in (("lower", grid < ei), ("upper", grid >= ei)):
        cand = np.flatnonzero(sel & phys)
        if not cand.size:
            continue
        i = cand[np.argmin(chi2[cand])]
        # the minimum between the grid neighbours (bounded Brent search in E_t)
        a, b = grid[max(i - 1, cand.min())], grid[min(i + 1, cand.max())]
        et = float(grid[i])
        if b > a:
            opt = minimize_scalar(lambda x: float(solve_at(x)[2][0]), bounds=(a, b), method="bounded",
                                  options={"xatol": 1e-7})
            if opt.fun <= chi2[i]:
                et = float(opt.x)
        tn1, tp1, c1, N1 = solve_at(et)
        if not (tn1[0] > 0 and tp1[0] > 0):
            et, tn1, tp1, c1, N1 = float(grid[i]), tn[i:i + 1], tp[i:i + 1], chi2[i:i + 1], N[i:i + 1]
        # known uncertainties: scaled up by the Birge ratio chi2/dof when above 1 (common practice);
        # unknown: by chi2/dof
        scale = max(1.0, c1[0] / dof) if known else c1[0] / dof
        inside = cand[chi2[cand] <= c1[0] + max(scale, np.finfo(float).tiny)]
        if inside.size:
            lo = float(min(grid[max(inside.min() - 1, 0)], et))
            hi = float(max(grid[min(inside.max() + 1, grid.size - 1)], et))
        else:
            lo, hi = float(grid[max(i - 1, 0)]), float(grid[min(i + 1, grid.size - 1)])
        cov = np.linalg.inv(N1[0]) * scale
        resolved = bool(inside.size and inside.min() > cand.min() and inside.max() < cand.max())
        kk = float(tp1[0] * float(vh) / (tn1[0] * float(ve)))
        branches.append(IdsBranch(half, et, (lo, hi), float(tn1[0]), float(np.sqrt(cov[0, 0])),
                                  float(tp1[0]), float(np.sqrt(cov[1, 1])), kk, float(c1[0]), dof, resolved))
    branches.sort(key=lambda b: b.chi2)
    nan = np.where(phys, 1.0, np.nan)
    return Dpss(grid, tn * nan, tp * nan, k, chi2, tuple(branches), len(curves), ei)


def srh_lifetime_left_s(mech: Mechanisms, tau_eff_s, J0_fA_cm2: float):
    """tau_SRH = 1/(1/tau_eff - 1/tau_intrinsic - J0 x) [s] (NaN where the rest is <= 0)."""
    rest = 1.0 / np.asarray(tau_eff_s, float) - mech.inv_tau_intrinsic_s - J0_fA_cm2 * mech.x_j0
    with np.errstate(divide="ignore"):
        return np.where(rest > 0, 1.0 / rest, np.nan)


def _shifted(b: IdsBranch, ref: IdsBranch | None):
    if ref is None:
        return None
    return np.array([b.level_eV - ref.level_eV, b.tau_n0_s - ref.tau_n0_s, b.tau_p0_s - ref.tau_p0_s])


def ids_with_j0_uncertainty(fits, levels_eV=None) -> Dpss:
    """`dpss_rein2005` from fitted curves, the J0 uncertainty of each curve propagated to the branches.

    fits : sequence of (mech, tau_eff_s, sigma_rel, J0_fA_cm2, J0_std_fA_cm2): the SRH lifetime of
        each curve is what remains after the intrinsic term and the fitted J0 (`srh_lifetime_left_s`).
    The DPSS is recomputed with each curve's J0 moved by +-1 sigma (one at a time); half the
    spread of each branch's (E_t, tau_n0, tau_p0) is added in quadrature to its own uncertainty
    (linear propagation, central differences), and the level range is widened by it.
    """
    def run(j0s):
        return dpss_rein2005([(m, srh_lifetime_left_s(m, t, j), s) for (m, t, s, _, _), j in zip(fits, j0s)],
                             levels_eV)
    j0 = [f[3] for f in fits]
    base = run(j0)
    extra = {b.half: np.zeros(3) for b in base.branches}
    for i, f in enumerate(fits):
        if not (np.isfinite(f[4]) and f[4] > 0):
            continue
        outs = []
        for sgn in (1.0, -1.0):
            js = list(j0)
            js[i] = max(j0[i] + sgn * f[4], 0.0)
            outs.append({b.half: b for b in run(js).branches})
        for b in base.branches:
            up, dn = outs[0].get(b.half), outs[1].get(b.half)
            if up is not None and dn is not None:
                extra[b.half] += (0.5 * (_shifted(up, b) - _shifted(dn, b))) ** 2
    branches = []
    for b in base.branches:
        e = np.sqrt(extra[b.half])
        lo, hi = b.level_interval_eV
        edge = (float(base.level_eV[0]), float(base.level_eV[-1]))
        branches.append(IdsBranch(b.half, b.level_eV, (max(lo - e[0], edge[0]), min(hi + e[0], edge[1])), b.tau_n0_s,
                                  float(np.hypot(b.tau_n0_std_s, e[1])), b.tau_p0_s,
                                  float(np.hypot(b.tau_p0_std_s, e[2])), b.k, b.chi2, b.dof, b.resolved))
    return Dpss(base.level_eV, base.tau_n0_s, base.tau_p0_s, base.k, base.chi2, tuple(branches), base.curves,
                base.intrinsic_level_eV)
