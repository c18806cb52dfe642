"""Surface J0 and bulk SRH from a measured lifetime curve.

Two methods, each named after its source:

* `j0_kane_swanson1985`: the slope method.  With the intrinsic rate removed,
  1/tau_corr = 1/tau_eff - 1/tau_intrinsic = 1/tau_SRH + J0 (n0 + p0 + dn)/(q n_i^2 W)
  (J0 the sum of both surfaces), so in high injection, where 1/tau_SRH is nearly constant,
  the slope d(1/tau_corr)/d(dn) = J0/(q n_i^2 W) gives J0 = q n_i^2 W slope (D. E. Kane and
  R. M. Swanson, Proc. 18th IEEE PVSC, Las Vegas (1985) p. 578 (from memory)).
* `fit_global`: the whole curve at once, J0 + one SRH level (tau_n0, tau_p0 and, if asked,
  the level energy, two branches), weighted least squares in ln tau, for data that do not
  reach high injection.

Both use the forward model's own rates (`optogen.analysis.model`), including the
injection-dependent narrowing: the regressor of the slope method is x(dn) = U_s(J0 = 1)/dn of
`optogen.recombination.surface_j0`, which is (n0 + p0 + dn)/(q n_i,eff^2 W) when n_i,eff does
not change with injection (then the regression is exactly the textbook slope in dn).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from optogen.constants import q_C
from optogen.errors import InputError
from optogen.recombination import surface_j0

from .model import Mechanisms

#: bounds of the fitted parameters: J0 [fA cm^-2], tau_n0 and tau_p0 [s]
J0_BOUNDS_fA_cm2 = (1e-3, 1e5)
TAU_BOUNDS_s = (1e-9, 10.0)
#: levels closer than this to a band edge are not searched [eV]
EDGE_MARGIN_eV = 0.05
#: level grid points per half of the gap for the profile of chi^2 [-]
LEVEL_GRID = 21
#: z value of a two-sided 95 % interval of a normal distribution (scipy.stats.norm.ppf(0.975))
Z95 = 1.959963984540054


# ---------------------------------------------------------------------------
# Kane & Swanson 1985
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class KaneSwanson:
    """Result of the slope method.

    J0_fA_cm2, J0_std_fA_cm2: J0 of both surfaces together and its 1-sigma uncertainty [fA cm^-2];
    inv_tau_bulk_s, inv_tau_bulk_std_s: the intercept, 1/tau_SRH in the window [1/s];
    slope_cm3_s: d(1/tau_corr)/d(dn) of the textbook form, J0/(q n_i^2 W) with n_i^2 = n0 p0
    (the dark product) [cm^3 s^-1]; window_cm3: (low, high) [cm^-3]; points: points used [-];
    covariance: of (intercept [1/s], J0 [fA cm^-2]).
    """

    J0_fA_cm2: float
    J0_std_fA_cm2: float
    inv_tau_bulk_s: float
    inv_tau_bulk_std_s: float
    slope_cm3_s: float
    window_cm3: tuple
    points: int
    covariance: np.ndarray

    @property
    def J0_ci95_fA_cm2(self) -> tuple:
        """95 % confidence interval of J0 [fA cm^-2] (normal approximation)."""
        return (self.J0_fA_cm2 - Z95 * self.J0_std_fA_cm2, self.J0_fA_cm2 + Z95 * self.J0_std_fA_cm2)


def weighted_line(x, y, sigma_y=None):
    """Weighted straight line y = a + b x by least squares.

    Parameters
    ----------
    x, y : abscissa and ordinate (N,), N >= 3 [any units]
    sigma_y : 1-sigma uncertainties of y (N,) [unit of y]; None: unknown, equal, estimated from the
        scatter (covariance scaled by the reduced chi^2 = RSS/(N - 2))

    Returns
    -------
    (a, b, covariance 2x2 of (a, b)).  Standard result of linear least squares (e.g. P. R.
    Bevington and D. K. Robinson, Data Reduction and Error Analysis, 3rd ed. (2003), ch. 6).
    """
    x, y = np.asarray(x, float), np.asarray(y, float)
    w = np.ones_like(y) if sigma_y is None else 1.0 / np.asarray(sigma_y, float) ** 2
    X = np.stack([np.ones_like(x), x], axis=-1)
    # scale the columns so the normal equations are well conditioned
    scale = np.array([1.0, 1.0 / np.max(np.abs(x))])
    Xs = X * scale
    A = Xs.T @ (w[:, None] * Xs)
    cov_s = np.linalg.inv(A)
    coef_s = cov_s @ (Xs.T @ (w * y))
    if sigma_y is None:
        rss = float(np.sum(w * (y - Xs @ coef_s) ** 2))
        cov_s = cov_s * rss / max(x.size - 2, 1)
    coef = coef_s * scale
    cov = cov_s * np.outer(scale, scale)
    return float(coef[0]), float(coef[1]), cov


def j0_kane_swanson1985(delta_n_cm3, inv_tau_corrected_s, n0_cm3, p0_cm3, thickness_cm, ni2_shift=0.0,
                        sigma_inv_tau_s=None) -> KaneSwanson:
    """Surface J0 from the slope of the corrected inverse lifetime (Kane & Swanson 1985).

    1/tau_corr(dn) = 1/tau_SRH + J0 x(dn),   x(dn) = U_s(J0 = 1 fA cm^-2)/dn
                   = (n0 + p0 + dn) e^(-shift) / (q n0 p0 W)  [per fA cm^-2, x 1e-15 A]

    from `optogen.recombination.surface_j0` (the forward model's J0 law), fitted as a straight
    line in x over the points given (the window is chosen by the caller).  Without an
    injection-dependent narrowing (shift = 0) x is linear in dn and this is the slope method
    as published: slope = J0/(q n_i^2 W), n_i^2 = n0 p0.

    Parameters
    ----------
    delta_n_cm3 : excess densities of the window (N >= 3) [cm^-3]
    inv_tau_corrected_s : 1/tau_eff - 1/tau_intrinsic at those points [1/s]
    n0_cm3, p0_cm3 : dark densities [cm^-3]
    thickness_cm : W [cm]
    ni2_shift : ln(n_i,eff^2(n, p)/(n0 p0)) at each point (0: no injection narrowing) [-]
    sigma_inv_tau_s : 1-sigma uncertainties of 1/tau_corr [1/s] (None: from the scatter)

    Returns
    -------
    KaneSwanson: J0 of both surfaces together [fA cm^-2] with its uncertainty, the intercept
    1/tau_SRH [1/s], the textbook slope [cm^3 s^-1].

    References
    ----------
    D. E. Kane and R. M. Swanson, "Measurement of the emitter saturation current by a contactless
    photoconductivity decay method", Proc. 18th IEEE Photovoltaic Specialists Conference (1985),
    p. 578 (from memory).
    """
    dn = np.asarray(delta_n_cm3, dtype=float).reshape(-1)
    y = np.asarray(inv_tau_corrected_s, dtype=float).reshape(-1)
    if dn.size < 3:
        raise InputError("measurement.window_low_cm3", dn.size,
                         "at least 3 measured points inside the Kane-Swanson window")
    x = surface_j0(n0_cm3, p0_cm3, dn, 1.0, thickness_cm, ni2_shift, J0_reference_K=None) / dn
    a, b, cov = weighted_line(x, y, sigma_inv_tau_s)
    slope = b * 1e-15 / (q_C * float(n0_cm3) * float(p0_cm3) * float(thickness_cm))
    return KaneSwanson(b, float(np.sqrt(cov[1, 1])), a, float(np.sqrt(cov[0, 0])), slope,
                       (float(dn.min()), float(dn.max())), int(dn.size), cov)


def default_window_cm3(mech: Mechanisms, low=None, high=None) -> tuple:
    """The Kane-Swanson window (low, high) [cm^-3]: default from 5x the net doping (high injection,
    where 1/tau_SRH is nearly constant; common practice) to the highest measured dn."""
    lo = 5.0 * mech.sample.doping_cm3 if low is None else float(low)
    hi = float(np.max(mech.delta_n_cm3)) if high is None else float(high)
    return lo, hi


def kane_swanson_in_window(mech: Mechanisms, inv_tau_corrected_s, sigma_inv_tau_s=None, low=None, high=None):
    """`j0_kane_swanson1985` over the window (default `default_window_cm3`).

    Returns (KaneSwanson or None, reason None or text why the method does not apply).
    """
    lo, hi = default_window_cm3(mech, low, high)
    sel = (mech.delta_n_cm3 >= lo) & (mech.delta_n_cm3 <= hi) & np.isfinite(inv_tau_corrected_s)
    if sel.sum() < 5:
        return None, (f"{int(sel.sum())} measured points in the window {lo:.3g}-{hi:.3g} cm^-3 (5 needed): the data "
                      "do not reach high injection (dn >> doping); J0 comes from the global fit")
    s = None if sigma_inv_tau_s is None else np.asarray(sigma_inv_tau_s)[sel]
    return j0_kane_swanson1985(mech.delta_n_cm3[sel], np.asarray(inv_tau_corrected_s)[sel], mech.sample.n0_cm3,
                               mech.sample.p0_cm3, mech.sample.thickness_cm, mech.shift[sel], s), None


# ---------------------------------------------------------------------------
# Global fit: J0 + one SRH level over the whole curve
# ---------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Branch:
    """One solution of the global fit.

    half: "lower" (E_t below E_i), "upper" (above) or "fixed" (level held) [-];
    theta: (ln J0 [ln fA cm^-2], ln tau_n0 [ln s], ln tau_p0 [ln s], E_t - E_v [eV]);
    covariance: of theta (4x4; zero row/column for a held level);
    chi2: weighted sum of squares [-]; dof: points - parameters [-];
    at_bound: names of parameters at a bound of the search (their uncertainty does not apply) [-];
    profile_level_eV, profile_chi2: chi^2 minimised over the other parameters along E_t [eV], [-];
    level_interval_eV: the E_t range whose profile chi^2 lies within one (scaled) unit of the
    minimum, the 1-sigma range of the level [eV] ((E_t, E_t) for a held level).
    The covariance of (ln J0, ln tau_n0, ln tau_p0) is conditional on E_t: one curve constrains
    only two combinations of (tau_n0, tau_p0, E_t) (Rein 2005), so the level's uncertainty is the
    profile range, not a covariance entry (its variance is stored as ((hi - lo)/2)^2).
    """

    half: str
    theta: np.ndarray
    covariance: np.ndarray
    chi2: float
    dof: int
    at_bound: tuple = ()
    profile_level_eV: np.ndarray = field(default_factory=lambda: np.zeros(0))
    profile_chi2: np.ndarray = field(default_factory=lambda: np.zeros(0))
    level_interval_eV: tuple = (np.nan, np.nan)

    @property
    def J0_fA_cm2(self) -> float:
        return float(np.exp(self.theta[0]))

    @property
    def tau_n0_s(self) -> float:
        return float(np.exp(self.theta[1]))

    @property
    def tau_p0_s(self) -> float:
        return float(np.exp(self.theta[2]))

    @property
    def level_eV(self) -> float:
        """E_t - E_v [eV]."""
        return float(self.theta[3])

    @property
    def std(self) -> np.ndarray:
        """1-sigma of theta (ln J0, ln tau_n0, ln tau_p0 [-], E_t [eV])."""
        return np.sqrt(np.clip(np.diag(self.covariance), 0.0, None))

    def capture_ratio_k(self, material, T_K) -> float:
        """k = sigma_n/sigma_p = (tau_p0 v_th,p)/(tau_n0 v_th,n) [-] (Rein 2005's symmetry factor)."""
        ve, vh = material.vth_cm_s(T_K)
        return float(self.tau_p0_s * vh / (self.tau_n0_s * ve))


@dataclass(frozen=True, eq=False)
class GlobalFit:
    """The global fit: its branches (best first) and the points used (mask over the data) [-]."""

    branches: tuple
    used: np.ndarray

    @property
    def best(self) -> Branch:
        return self.branches[0]


def _bounds(lo_level, hi_level, fixed):
    lo = [np.log(J0_BOUNDS_fA_cm2[0]), np.log(TAU_BOUNDS_s[0]), np.log(TAU_BOUNDS_s[0])]
    hi = [np.log(J0_BOUNDS_fA_cm2[1]), np.log(TAU_BOUNDS_s[1]), np.log(TAU_BOUNDS_s[1])]
    if not fixed:
        lo.append(lo_level)
        hi.append(hi_level)
    return np.array(lo), np.array(hi)


def _residuals(mech: Mechanisms, ln_tau, w, level=None):
    """r(theta) = (ln tau_model - ln tau_measured) w, theta = (ln J0, ln tau_n0, ln tau_p0[, E_t])."""
    def fun(th):
        et = th[3] if level is None else level
        inv = mech.inv_tau_eff_s(np.exp(th[0]), np.exp(th[1]), np.exp(th[2]), et)
        return (-np.log(inv) - ln_tau) * w
    return fun


def _linear_start(mech, tau, w, level):
    """A start (ln J0, ln tau_n0, ln tau_p0) at a fixed level: for a few J0, the SRH lifetime left
    is fitted as tau_n0 A + tau_p0 B (linear, see `Mechanisms.srh_basis`); the best one is kept."""
    A, B = mech.srh_basis(np.array([level]))
    A, B = A[0], B[0]
    best, best_cost = None, np.inf
    for j0 in (0.1, 1.0, 10.0, 100.0, 1000.0):
        rest = 1.0 / tau - mech.inv_tau_intrinsic_s - j0 * mech.x_j0
        ok = rest > 0
        if ok.sum() < 3:
            continue
        t_srh = 1.0 / rest[ok]
        ww = (w[ok] / t_srh) ** 2                    # relative weighting of the lifetime
        M = np.stack([A[ok], B[ok]], axis=-1)
        sol, *_ = np.linalg.lstsq(M * np.sqrt(ww)[:, None], t_srh * np.sqrt(ww), rcond=None)
        tn, tp = np.clip(sol, TAU_BOUNDS_s[0] * 10, TAU_BOUNDS_s[1] / 10)
        th = np.log([j0, tn, tp])
        cost = np.sum(_residuals(mech, np.log(tau), w, level)(th) ** 2)
        if cost < best_cost:
            best, best_cost = th, cost
    if best is None:
        t_mean = float(np.exp(np.mean(np.log(tau))))
        best = np.log([1.0, t_mean, t_mean])
    return best


def _fit(mech, ln_tau, w, start, lo, hi, level=None):
    start = np.clip(start, lo + 1e-9 * (hi - lo), hi - 1e-9 * (hi - lo))
    return least_squares(_residuals(mech, ln_tau, w, level), start, bounds=(lo, hi), method="trf",
                         x_scale="jac", xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=400)


def _inverse_normal_matrix(J):
    """(J^T J)^-1 with the columns scaled first; an unidentifiable direction (a column with no
    influence) gets an infinite variance, never the zero a pseudo-inverse would give."""
    norms = np.sqrt(np.sum(J * J, axis=0))
    ok = norms > 0
    cov = np.full((J.shape[1], J.shape[1]), np.inf)
    if ok.any():
        Js = J[:, ok] / norms[ok]
        A = Js.T @ Js
        if np.linalg.cond(A) < 1e14:
            inv = np.linalg.inv(A) / np.outer(norms[ok], norms[ok])
            cov[np.ix_(ok, ok)] = inv
            return cov
    return cov


def _branch(half, sol, npts, sigma_known, level=None, lo=None, hi=None, profile=(None, None)) -> Branch:
    J = sol.jac
    p = J.shape[1]
    chi2 = float(2.0 * sol.cost)
    dof = max(npts - p, 1)
    cov_p = _inverse_normal_matrix(J)
    if not sigma_known:
        cov_p = cov_p * chi2 / dof
    theta = np.append(sol.x, level) if level is not None else sol.x.copy()
    cov = np.zeros((4, 4))
    cov[:p, :p] = cov_p
    names = ("J0", "tau_n0", "tau_p0", "level")
    tol = 1e-6 * (hi - lo)
    at = tuple(names[i] for i in range(p) if sol.x[i] <= lo[i] + tol[i] or sol.x[i] >= hi[i] - tol[i])
    pl, pc = profile
    return Branch(half, theta, cov, chi2, dof, at, np.zeros(0) if pl is None else pl,
                  np.zeros(0) if pc is None else pc, (float(theta[3]), float(theta[3])))


def fit_global(mech: Mechanisms, tau_eff_s, sigma_rel=None, level_from_ev_eV=None) -> GlobalFit:
    """Fit J0 + one SRH level to the whole measured curve (weighted least squares in ln tau).

    ln tau_model = -ln(1/tau_intrinsic + J0 x + 1/tau_SRH(tau_n0, tau_p0, E_t))   (`Mechanisms`)

    With level_from_ev_eV given, E_t is held there ("fixed" branch).  Otherwise E_t is searched
    in each half of the gap (from `EDGE_MARGIN_eV` above E_v to E_i, and from E_i to
    `EDGE_MARGIN_eV` below E_c): chi^2 is first minimised over (J0, tau_n0, tau_p0) on a grid of
    E_t (the profile, as in the defect-parameter solution surface of Rein 2005), then all four
    parameters are refined from the best grid point.  One curve generally cannot tell the two
    halves apart (Rein 2005, ch. 5): both branches are returned, the lower chi^2 first.
    Parameter covariance: (J^T J)^-1 at the optimum, scaled by chi^2/dof when the data carry no
    uncertainty (sigma_rel None).

    Parameters
    ----------
    mech : the forward model at the measured dn (`mechanisms`)
    tau_eff_s : measured effective lifetimes (D,) [s]
    sigma_rel : relative 1-sigma uncertainties of tau (D,) [-]; None: unknown (estimated)
    level_from_ev_eV : E_t - E_v to hold [eV], or None to search

    References
    ----------
    S. Rein, Lifetime Spectroscopy (Springer, 2005), doi:10.1007/3-540-27922-9 (from memory).
    """
    tau = np.asarray(tau_eff_s, dtype=float)
    ln_tau = np.log(tau)
    known = sigma_rel is not None
    w = np.ones_like(tau) if sigma_rel is None else 1.0 / np.asarray(sigma_rel, float)
    eq = mech.sample.eq
    eg, ei = float(eq.effective_gap_eV), float(eq.intrinsic_level_eV)
    if level_from_ev_eV is not None:
        lo, hi = _bounds(0, 0, True)
        start = _linear_start(mech, tau, w, float(level_from_ev_eV))
        sol = _fit(mech, ln_tau, w, start, lo, hi, float(level_from_ev_eV))
        return GlobalFit((_branch("fixed", sol, tau.size, known, float(level_from_ev_eV), lo, hi),),
                         np.ones(tau.size, bool))
    branches = []
    lo3, hi3 = _bounds(0, 0, True)
    for half, (a, b) in (("lower", (EDGE_MARGIN_eV, ei)), ("upper", (ei, eg - EDGE_MARGIN_eV))):
        grid = np.linspace(a, b, LEVEL_GRID)
        chi2s, sols, prev = [], [], None
        for et in grid:
            cands = [_linear_start(mech, tau, w, et)] + ([prev] if prev is not None else [])
            s = min((_fit(mech, ln_tau, w, c, lo3, hi3, et) for c in cands), key=lambda r: r.cost)
            prev = s.x
            chi2s.append(2.0 * s.cost)
            sols.append(s.x)
        i = int(np.argmin(chi2s))
        lo, hi = _bounds(a, b, False)
        sol4 = _fit(mech, ln_tau, w, np.append(sols[i], grid[i]), lo, hi)
        et_best = float(sol4.x[3])
        sol = _fit(mech, ln_tau, w, sol4.x[:3], lo3, hi3, et_best)       # conditional on the best level
        br = _branch(half, sol, tau.size, known, et_best, lo3, hi3)
        pl = np.append(grid, et_best)
        pc = np.append(chi2s, br.chi2)
        order = np.argsort(pl)
        interval = _profile_interval(pl[order], pc[order], br.chi2, None if known else br.chi2 / max(tau.size - 4, 1))
        cov = br.covariance.copy()
        cov[3, 3] = (0.5 * (interval[1] - interval[0])) ** 2
        at = br.at_bound + (("level",) if min(et_best - a, b - et_best) < 1e-4 else ())
        branches.append(Branch(half, br.theta, cov, br.chi2, br.dof, at, pl[order], pc[order], interval))
    branches.sort(key=lambda br: br.chi2)
    return GlobalFit(tuple(branches), np.ones(tau.size, bool))


def _profile_interval(level, chi2, chi2_min, scale=None):
    """(lo, hi) [eV]: the range of `level` where chi2 <= chi2_min + scale (scale: 1 for known
    uncertainties, else the reduced chi^2), widened to the next grid point on each side."""
    delta = 1.0 if scale is None else max(scale, np.finfo(float).tiny)
    inside = np.flatnonzero(chi2 <= chi2_min + delta)
    lo_i, hi_i = max(inside.min() - 1, 0), min(inside.max() + 1, level.size - 1)
    return float(level[lo_i]), float(level[hi_i])


def refit(mech: Mechanisms, tau_eff_s, branch: Branch, sigma_rel=None) -> Branch:
    """The branch refitted to other data (a bootstrap resample) at its level, started from its optimum."""
    tau = np.asarray(tau_eff_s, float)
    w = np.ones_like(tau) if sigma_rel is None else 1.0 / np.asarray(sigma_rel, float)
    lo, hi = _bounds(0, 0, True)
    sol = _fit(mech, np.log(tau), w, branch.theta[:3], lo, hi, branch.level_eV)
    return _branch(branch.half, sol, tau.size, sigma_rel is not None, branch.level_eV, lo, hi)
