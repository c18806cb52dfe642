"""The uniform steady state under light: G = U(Delta n), quasi-Fermi levels, implied Voc and J-V.

Uniform absorber (no gradients), Delta p = Delta n.  Definitions used in the outputs:

* np_over_ni2 = n p / n_i,eff^2, with n_i,eff^2 the dark product n0 p0 (times the
  injection-dependent band-gap narrowing factor, see optogen.recombination); it is
  computed in log space and ``log10_np_over_ni2`` always carries it; np_over_ni2 itself
  reads inf only beyond 1.8e308 (Si below about 15 K under light).
* Quasi-Fermi levels, measured upward from the valence band edge Ev, with
  Ec = Ev + effective gap (narrowed, also by injection with Schenk 1998):
  electron_qfl = Eg_eff + kT F^-1(n/Nc), hole_qfl = -kT F^-1(p/Nv) (F: normalised
  Fermi-Dirac integral of order 1/2, the Boltzmann log where n/Nc < 1e-6).  They are
  evaluated as displacements from the dark Fermi level, E_F + kT (F^-1(n/Nc) -
  F^-1(n0/Nc)), so both equal E_F exactly in the dark.
* implied_voc_V = splitting_eV = electron_qfl - hole_qfl (uniform case).
* injection_ratio = Delta n / max(n0, p0): below ~0.1 low injection, above ~1 high.
* Lifetimes tau_x = Delta n / U_x; at G = 0 they are the low-injection limits
  (evaluated at Delta n = 1e-9 max(n0, p0)); inf where a mechanism is absent.
* limiting_mechanism: the mechanism with the largest rate at the operating point.
"""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from .constants import q_C
from .errors import InputError, check_range
from .recombination import MECHANISMS, PreparedRates, Recombination, _eq_shape

#: relative residual |G - U| / G required at every point [-]
RTOL = 1e-10
_FTOL = 2e-11            # on ln(U/G) inside the iteration
_CHUNK = 262_144         # points per chunk: bounds the working memory (~100 MB)
_LOW_INJ = 1e-9          # Delta n / max(n0, p0) used for low-injection limits in the dark
_X_MIN = -700.0          # lowest ln(Delta n) searched [ln cm^-3] (Delta n ~ 1e-304 cm^-3)
#: highest excess density the models are used at [cm^-3]: above the densities any of the
#: recombination and narrowing fits were made for, below the atomic density of the
#: absorbers (Si: 5e22 cm^-3, common practice); a root above it is flagged, not reported
DN_MAX_CM3 = 1e22
_X_MAX = float(np.log(DN_MAX_CM3))


# ---------------------------------------------------------------------------
# Root finding on x = ln(Delta n): f(x) = ln U(e^x) - ln G
# ---------------------------------------------------------------------------

def _f(prep: PreparedRates, x, lg, bgn=True):
    """ln U(e^x) - ln G [-]; -inf where U is not a positive finite number.

    bgn: with the injection-dependent narrowing (False: n_i,eff fixed at its dark value;
    every mechanism then grows monotonically with Delta n).  U <= 0 can only occur far
    outside the models' range (a narrowing that outgrows n p); it counts as "below G", so
    a bracket never ends there.
    """
    with np.errstate(over="ignore", invalid="ignore", divide="ignore", under="ignore"):
        u = sum(prep.rates(np.exp(x), None if bgn else 0.0))
        ok = np.isfinite(u) & (u > 0)
        return np.where(ok, np.log(np.where(ok, u, 1.0)), -np.inf) - lg


def _bracket(prep, lg, x0, f0, bgn, step0):
    """Bracket [a, b] of ln(Delta n) with f(a) <= 0 <= f(b), widening from x0 in geometric steps.

    Each step moves only the end that still has the wrong sign; the end it leaves becomes
    the other end (so the bracket stays tight).  Search range [_X_MIN, _X_MAX].
    Returns a, fa, b, fb and whether the bracket holds.
    """
    a, fa, b, fb = x0.copy(), f0.copy(), x0.copy(), f0.copy()
    need_lo, need_hi = f0 > 0, ~(f0 >= 0)          # NaN-safe: -inf or NaN needs a higher x
    step = np.full_like(x0, step0)
    for _ in range(64):
        if not (need_lo.any() or need_hi.any()):
            break
        k = np.flatnonzero(need_hi)
        if k.size:
            xn = np.minimum(b[k] + step[k], _X_MAX)
            fn = _f(prep.take(k), xn, lg[k], bgn)
            a[k], fa[k] = b[k], fb[k]               # the old upper end had f < 0
            b[k], fb[k] = xn, fn
            need_hi[k] = ~(fn >= 0) & (xn < _X_MAX)
        k = np.flatnonzero(need_lo)
        if k.size:
            xn = np.maximum(a[k] - step[k], _X_MIN)
            fn = _f(prep.take(k), xn, lg[k], bgn)
            b[k], fb[k] = a[k], fa[k]               # the old lower end had f > 0
            a[k], fa[k] = xn, fn
            need_lo[k] = (fn > 0) & (xn > _X_MIN)
        step *= 2.0
    return a, fa, b, fb, (fa <= 0) & (fb >= 0)


def _illinois(prep, lg, a, fa, b, fb, ok, bgn):
    """Illinois (modified regula falsi) on brackets [a, b], vectorised over the active points.

    Falls back to bisection where the secant leaves the bracket or is not finite.
    Returns the best x and |f| there.
    """
    a, fa, b, fb = a.copy(), fa.copy(), b.copy(), fb.copy()
    with np.errstate(invalid="ignore"):
        best_x = np.where(np.abs(fa) < np.abs(fb), a, b)
        best_f = np.minimum(np.abs(fa), np.abs(fb))
    act = np.flatnonzero(ok & ~(best_f <= _FTOL))
    side = np.zeros(len(lg), np.int8)
    cur = prep.take(act) if act.size < len(lg) else prep
    for _ in range(200):
        if act.size == 0:
            break
        A, FA, B, FB = a[act], fa[act], b[act], fb[act]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            x = (A * FB - B * FA) / (FB - FA)
            bad = ~np.isfinite(x) | (x <= np.minimum(A, B)) | (x >= np.maximum(A, B))
        x = np.where(bad, 0.5 * (A + B), x)
        fx = _f(cur, x, lg[act], bgn)
        better = np.abs(fx) < best_f[act]
        best_x[act[better]], best_f[act[better]] = x[better], np.abs(fx[better])
        lo = ~(fx >= 0)
        s = side[act]
        # replace the end with the same sign; halve the other end's f if it was kept twice
        a[act] = np.where(lo, x, A)
        fa[act] = np.where(lo, fx, np.where(s == 1, 0.5 * FA, FA))
        b[act] = np.where(lo, B, x)
        fb[act] = np.where(lo, np.where(s == -1, 0.5 * FB, FB), fx)
        side[act] = np.where(lo, -1, 1)
        done = (np.abs(fx) <= _FTOL) | (np.abs(b[act] - a[act]) <= 4e-16 * np.maximum(1.0, np.abs(x)))
        keep = ~done
        if keep.all():
            continue
        act = act[keep]
        cur = cur.take(np.flatnonzero(keep))
    return best_x, best_f


def _solve_flat(prep: PreparedRates, G):
    """Delta n [cm^-3] with G = U(Delta n) for flat arrays; returns (dn, converged).

    Two stages, both bracketed in x = ln(Delta n) and refined by Illinois regula falsi:
    1. n_i,eff held at its dark value: U is then the sum of mechanisms that each grow
       monotonically with Delta n, so the bracket found by widening from the start
       G x tau_low-injection encloses the one root.
    2. With an injection-dependent narrowing (Schenk 1998) the rate is recomputed with
       n_i,eff(n, p).  The stage-1 root is a valid start (the narrowing changes U by a
       factor that is small there), and the bracket is widened from it in small steps,
       so it stops at the first sign change above the dark-gap answer and never reaches
       the densities where the narrowed n p - n_i,eff^2 turns negative (beyond 1e21 cm^-3
       at 300 K; about 1e16 cm^-3 at 4 K).
    A root below the search floor 1e-304 cm^-3 lies where U is linear in Delta n: there
    Delta n = G tau_low-injection (`_linear_floor`; a subnormal float, or 0.0 below the float
    range), converged.  A point whose root lies above DN_MAX_CM3, or misses the residual
    |G - U| <= RTOL G, is returned with converged = False.
    """
    P = len(G)
    dn = np.zeros(P)
    ids = np.flatnonzero(G > 0)
    if ids.size == 0:
        return dn, np.ones(P, bool)
    sub = prep.take(ids)
    lg = np.log(G[ids])
    # stage 1 start: G x low-injection lifetime (dark n_i,eff)
    d0 = _LOW_INJ * np.maximum(sub.n0, sub.p0)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        u0 = sum(sub.rates(d0, 0.0))
        x0 = np.log(d0) - np.log(u0) + lg
    x0 = np.clip(np.where(np.isfinite(x0), x0, _X_MIN), _X_MIN, _X_MAX)
    a, fa, b, fb, ok = _bracket(sub, lg, x0, _f(sub, x0, lg, False), False, 1.0)
    x, _ = _illinois(sub, lg, a, fa, b, fb, ok, False)
    if sub.inj_bgn:
        a, fa, b, fb, ok = _bracket(sub, lg, x, _f(sub, x, lg, True), True, 0.05)
        x, _ = _illinois(sub, lg, a, fa, b, fb, ok, True)
    dn[ids] = np.exp(x)
    with np.errstate(over="ignore", invalid="ignore"):
        u = sub.total(dn[ids])
    conv = np.ones(P, bool)
    conv[ids] = ok & (np.abs(u - G[ids]) <= RTOL * G[ids])
    # a root below the search floor: U is linear there, Delta n = G tau_low-injection
    lin, slope = _linear_floor(sub, lg, a, fa)
    if lin.any():
        with np.errstate(under="ignore"):
            dn[ids[lin]] = G[ids[lin]] / slope[lin]
        conv[ids[lin]] = True
    return dn, conv


#: Delta n of the floor [cm^-3] (exp(_X_MIN)); below it U is evaluated through its slope
_DN_FLOOR = float(np.exp(_X_MIN))


def _linear_floor(sub, lg, a, fa):
    """Points whose root lies below the floor exp(_X_MIN), and the slope U/Delta n there [s^-1].

    At the floor U(floor) > G, so the root is smaller still.  Where the floor is below
    1e-10 (n0 + p0), every rate is linear in Delta n to 1e-10 (its nonlinear terms are of
    relative size Delta n / (n0 + p0); the injection narrowing is linear there too), so
    G = U(Delta n) = Delta n U(floor) / floor: Delta n = G tau, tau the low-injection
    lifetime (underflowing to 0.0 or a subnormal number when G tau is below the float range).
    """
    lin = (a <= _X_MIN) & (fa > 0) & (_DN_FLOOR <= 1e-10 * (sub.n0 + sub.p0))
    slope = np.ones(len(lg))
    if lin.any():
        k = np.flatnonzero(lin)
        with np.errstate(over="ignore", invalid="ignore"):
            slope[k] = sub.take(k).total(np.full(k.size, _DN_FLOOR)) / _DN_FLOOR
        lin[k] = np.isfinite(slope[k]) & (slope[k] > 0)
    return lin, slope


# ---------------------------------------------------------------------------
# Fermi levels in log space
# ---------------------------------------------------------------------------

def _eta_shift(log_y0, log_ratio, y_minus_y0):
    """F^-1(y) - F^-1(y0) [-] for y = y0 (p/p0): ln y0 of the dark value, ln(y/y0), y - y0.

    F is the normalised Fermi-Dirac integral of order 1/2.  Where y < 1e-6 the Boltzmann
    log plus the first Fermi-Dirac correction, F^-1(y) = ln y + y/2^(3/2), is used, so a
    minority density far below the float range is handled in log space.
    """
    eta = log_ratio + y_minus_y0 / 2.0**1.5
    deg = (log_y0 + log_ratio) >= np.log(1e-6)
    if np.any(deg):
        # both ends from their logs: the dark density may lie below the float range (4 K)
        from .equilibrium import inverse_log_fermi_dirac_half
        eta = np.array(eta, dtype=float, copy=True)
        eta[deg] = (inverse_log_fermi_dirac_half(log_y0[deg] + log_ratio[deg])
                    - inverse_log_fermi_dirac_half(log_y0[deg]))
    return eta


def _qfl_shifts(prep: PreparedRates, dn, ldn):
    """ln(n/n0), ln(p/p0) and the quasi-Fermi-level shifts eta_n, eta_p from the dark level [-].

    dn: excess density [cm^-3], ldn = ln(dn).  eta_n = (electron_qfl - E_F)/kT + shift,
    eta_p = (E_F - hole_qfl)/kT, in the statistics of the narrowing model (prep.statistics),
    so that the splitting is kT (eta_n + eta_p - shift) (the one definition used by the
    steady state, the implied J-V and the implied Voc).
    """
    lr_n = np.logaddexp(0.0, ldn - prep.log_n0)          # ln(n / n0)
    lr_p = np.logaddexp(0.0, ldn - prep.log_p0)          # ln(p / p0)
    if prep.statistics == "boltzmann":
        return lr_n, lr_p, lr_n, lr_p
    eta_n = _eta_shift(prep.log_n0 - np.log(prep.nc), lr_n, dn / prep.nc)
    eta_p = _eta_shift(prep.log_p0 - np.log(prep.nv), lr_p, dn / prep.nv)
    return lr_n, lr_p, eta_n, eta_p


def _dlog_eta(log_y):
    """d F^-1(y) / d ln y = F_1/2(eta) / F_-1/2(eta) at eta = F^-1(y) [-] (1 + y/2^(3/2) below y = 1e-6)."""
    from .equilibrium import _log_fd_pair, inverse_log_fermi_dirac_half
    out = 1.0 + np.exp(np.minimum(log_y, np.log(1e-6))) / 2.0**1.5
    deg = log_y >= np.log(1e-6)
    if np.any(deg):
        lf_h, lf_m = _log_fd_pair(inverse_log_fermi_dirac_half(log_y[deg]))
        out = np.array(out, dtype=float, copy=True)
        out[deg] = np.exp(lf_h - lf_m)
    return out


def _exp_or_inf(x):
    """exp(x); inf beyond the float range (the value is then in log10_np_over_ni2) [-]."""
    with np.errstate(over="ignore"):
        return np.exp(x)


#: a quasi-Fermi level closer than this to its band edge (or inside the band) makes a
#: point degenerate [kT] (the usual 3 kT rule, e.g. Sze & Ng 2007 sec. 1.5; common practice)
DEGENERATE_KT = 3.0


def _state_flat(prep: PreparedRates, dn):
    """Every output quantity (flat) at excess density dn [cm^-3].

    Quasi-Fermi levels use the carrier statistics of the narrowing model (prep.statistics):
    Fermi-Dirac, or Boltzmann for an apparent narrowing (klaassen1992), for which the
    splitting is exactly kT ln(n p / n_i,eff^2).  ``degenerate`` is True where either
    quasi-Fermi level lies within DEGENERATE_KT kT of its band edge or inside the band.
    """
    shift = prep.ni2_shift(dn)
    with np.errstate(divide="ignore"):
        ldn = np.log(dn)
    lr_n, lr_p, eta_n, eta_p = _qfl_shifts(prep, dn, ldn)
    ln_ratio = lr_n + lr_p - shift
    # quasi-Fermi levels moved from the dark Fermi level; Ec moves down by the extra narrowing
    e_qfl = prep.ef - shift * prep.kT + prep.kT * eta_n
    h_qfl = prep.ef - prep.kT * eta_p
    ec = prep.eg - shift * prep.kT                        # conduction band edge under light, from Ev
    degenerate = ((e_qfl - ec) > -DEGENERATE_KT * prep.kT) | (h_qfl < DEGENERATE_KT * prep.kT)
    maj = np.maximum(prep.n0, prep.p0)
    d_eval = np.where(dn > 0, dn, _LOW_INJ * maj)
    r = prep.rates(d_eval)
    tot = sum(r)
    with np.errstate(divide="ignore"):
        taus = [np.where(x > 0, d_eval / np.where(x > 0, x, 1.0), np.inf) for x in (*r, tot)]
    return {
        "delta_n_cm3": dn, "delta_p_cm3": dn, "n_cm3": prep.n0 + dn, "p_cm3": prep.p0 + dn,
        "np_over_ni2": _exp_or_inf(ln_ratio), "log10_np_over_ni2": ln_ratio / np.log(10.0),
        "splitting_eV": e_qfl - h_qfl, "implied_voc_V": e_qfl - h_qfl,
        "tau_eff_s": taus[4], "tau_srh_s": taus[0], "tau_radiative_s": taus[1], "tau_auger_s": taus[2],
        "tau_surface_s": taus[3], "electron_qfl_eV": e_qfl, "hole_qfl_eV": h_qfl,
        "injection_ratio": _exp_or_inf(ldn - np.maximum(prep.log_n0, prep.log_p0)), "limiting_code": np.argmax(np.stack(r), axis=0).astype(np.int8),
        "degenerate": degenerate, "effective_gap_eV": ec,
    }


# ---------------------------------------------------------------------------
# Implied J-V on flat arrays
# ---------------------------------------------------------------------------

def _dn_at_splitting(prep: PreparedRates, v_over_kT, dn_max=None):
    """Delta n [cm^-3] at which the quasi-Fermi-level splitting is V (v_over_kT = V/kT [-]).

    The splitting is the one of `_state_flat` (statistics of the narrowing model), so that
    Delta n(implied Voc) is the steady-state Delta n.  Start: n p = n_i,eff^2(n, p) exp(V/kT)
    (Boltzmann; fixed point for injection BGN), then, with Fermi-Dirac statistics, Newton
    on ln Delta n (`_refine_fd`).  dn_max: the steady-state Delta n at the implied Voc [cm^-3],
    an upper end of the search for V <= Voc (with an injection narrowing the splitting need not
    rise with Delta n far beyond it; the root wanted is the one on the branch through the
    steady state).
    """
    dn = _dn_boltzmann(prep, v_over_kT)
    if prep.statistics == "boltzmann":
        return dn
    return _refine_fd(prep, np.broadcast_to(np.asarray(v_over_kT, dtype=float), dn.shape), dn, dn_max)


def _refine_fd(prep, v, dn, dn_max=None, iters=60):
    """Solve splitting(Delta n)/kT = v on x = ln Delta n with Fermi-Dirac levels, from dn [cm^-3].

    The splitting rises monotonically with Delta n.  Newton with the slope of the levels,
    d(eta_n + eta_p)/dx, at the first step, then secant steps (their slope also carries the
    injection narrowing); a bracket of x is kept and a step that leaves it is replaced by
    bisection.  Stops at |splitting/kT - v| <= 1e-13 max(1, v).  dn_max [cm^-3]: an upper end
    of the bracket (used where positive and finite; the caller guarantees splitting(dn_max) >= v).
    """
    dn = np.array(dn, dtype=float, copy=True)
    act = np.flatnonzero((v > 0) & (dn > 0) & np.isfinite(dn))
    if act.size == 0:
        return dn
    x = np.log(dn[act])
    lo, hi = np.full(act.size, -np.inf), np.full(act.size, np.inf)
    if dn_max is not None:
        with np.errstate(divide="ignore"):
            top = np.log(np.broadcast_to(np.asarray(dn_max, dtype=float), dn.shape)[act])
        hi = np.where(np.isfinite(top), top, np.inf)
        x = np.minimum(x, hi)
    xp, gp = np.full(act.size, np.nan), np.full(act.size, np.nan)
    cur = prep.take(act)
    va = v[act]
    for _ in range(iters):
        d = np.exp(x)
        shift = cur.ni2_shift(d, precise=False)
        lr_n, lr_p, eta_n, eta_p = _qfl_shifts(cur, d, x)
        g = eta_n + eta_p - shift - va
        done = ~(np.abs(g) > 1e-13 * np.maximum(1.0, va))
        lo = np.where(g < 0, x, lo)
        hi = np.where(g > 0, x, hi)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            secant = (g - gp) / (x - xp)
            # d(eta_n + eta_p)/dx = (dn/n) F/F' (n) + (dn/p) F/F' (p)
            newton = (np.exp(x - (cur.log_n0 + lr_n)) * _dlog_eta(cur.log_n0 + lr_n - np.log(cur.nc))
                      + np.exp(x - (cur.log_p0 + lr_p)) * _dlog_eta(cur.log_p0 + lr_p - np.log(cur.nv)))
            slope = np.where(np.isfinite(secant) & (secant > 0), secant, newton)
            xn = x - g / slope
            out = ~((xn > lo) & (xn < hi))
            both = np.isfinite(lo) & np.isfinite(hi)
            mid = np.where(both, 0.5 * (lo + hi), x)
        xn = np.where(out & both, mid, np.where(out, np.where(g > 0, x - 1.0, x + 1.0), xn))
        stop = done | ~(np.abs(hi - lo) > 4e-16 * np.maximum(1.0, np.abs(x)))
        dn[act[stop]] = np.exp(x[stop])
        keep = ~stop
        if not keep.any():
            return dn
        act, xp, gp, x, lo, hi, va = act[keep], x[keep], g[keep], xn[keep], lo[keep], hi[keep], va[keep]
        cur = cur.take(np.flatnonzero(keep))
    dn[act] = np.exp(x)
    return dn


def _dn_boltzmann(prep: PreparedRates, v_over_kT):
    """Delta n [cm^-3] with n p = n_i,eff^2(n, p) exp(V/kT) (Boltzmann); fixed point for injection BGN."""
    # dn^2 + (n0 + p0) dn - r = 0 with r = n0 p0 expm1(z), solved in log space so that a dark
    # product below the float range (n0 p0 ~ e^-3000 at 4 K) still gives the right dn
    ln_s = np.logaddexp(prep.log_n0, prep.log_p0)
    shift = 0.0
    for _ in range(3 if prep.inj_bgn else 1):
        z = np.asarray(v_over_kT + shift, dtype=float)
        pos = z > 0
        zz = np.where(pos, z, 1.0)
        ln_r = prep.log_n0 + prep.log_p0 + zz + np.log(-np.expm1(-zz))
        ln_dn = np.log(2.0) + ln_r - np.logaddexp(ln_s, 0.5 * np.logaddexp(2.0 * ln_s, np.log(4.0) + ln_r))
        with np.errstate(over="ignore"):
            dn = np.where(pos, np.exp(ln_dn), 0.0)
        if prep.inj_bgn:
            shift = prep.ni2_shift(dn, precise=False)
    return dn


def _j_rec_mA(prep, W, v, dn_max=None):
    """Recombination current q W U(Delta n(V)) [mA/cm^2] at splitting v [V]."""
    dn = _dn_at_splitting(prep, v / prep.kT, dn_max)
    return q_C * W * prep.total(dn) * 1e3


#: F^-1(y) = ln y + sum_k A_k y^k for small y: A1 = 2^(-3/2), A2 = 3/16 - 3^(1/2)/9 (the exact
#: series), A3, A4 as fitted by W. B. Joyce and R. W. Dixon, Appl. Phys. Lett. 31, 354 (1977)
_JD = (1.0 / np.sqrt(8.0), -4.95009e-3, 1.48386e-4, -4.42563e-6)
#: largest n/Nc, p/Nv at which `_fast_levels` uses the series (its error there < 1e-12) [-]
_SERIES_Y_MAX = 1e-2


def _eta_series(log_y0, log_ratio, dy):
    """F^-1(y) - F^-1(y0) [-] from the small-y series, y = y0 e^log_ratio, dy = y - y0 (y <= 1e-2)."""
    y0 = np.exp(log_y0)
    y = y0 + dy
    return log_ratio + dy * (_JD[0] + (y + y0) * _JD[1] + (y * y + y * y0 + y0 * y0) * _JD[2]
                             + (y + y0) * (y * y + y0 * y0) * _JD[3])


def _operating_point(prep, W, jgen, x, levels=None):
    """Splitting V [V] and current J = J_gen - q W U [mA/cm^2] of the absorber at Delta n = e^x [cm^-3].

    levels: optional callable (x, Delta n) -> eta_n + eta_p (`_fast_levels`); default the levels
    of `_state_flat`.
    """
    with np.errstate(over="ignore", invalid="ignore", under="ignore"):
        d = np.exp(x)
        shift = prep.ni2_shift(d, precise=False)
        if levels is None:
            _, _, eta_n, eta_p = _qfl_shifts(prep, d, x)
            eta = eta_n + eta_p
        else:
            eta = levels(x, d)
        v = prep.kT * (eta - shift)
        return v, jgen - q_C * W * sum(prep.rates(d, shift)) * 1e3


def _fast_levels(prep):
    """eta_n + eta_p of `_qfl_shifts` as a function of (x, Delta n), with per-point constants kept.

    Where n/Nc (p/Nv) <= _SERIES_Y_MAX the small-y series of F^-1 (as `_eta_series`, here
    f(y) - f(y0) with f(y) = sum_k A_k y^k; within 1e-12 of the exact inverse), above it the
    exact inverse against the dark value computed once; ln(n/n0) as log1p(Delta n/n0) (or
    x - ln n0 where n0 lies below ~1e-260 cm^-3).
    """
    with np.errstate(over="ignore", under="ignore"):
        if prep.statistics == "boltzmann":
            consts = [(log0, None, None, None, None) for log0 in (prep.log_n0, prep.log_p0)]
        else:
            from .equilibrium import inverse_log_fermi_dirac_half
            consts = []
            for log0, nb in ((prep.log_n0, prep.nc), (prep.log_p0, prep.nv)):
                ly0 = log0 - np.log(nb)
                y0 = np.exp(ly0)
                f0 = y0 * (_JD[0] + y0 * (_JD[1] + y0 * (_JD[2] + y0 * _JD[3])))
                consts.append((log0, nb, ly0, y0, (f0, inverse_log_fermi_dirac_half(ly0))))
        tiny = [log0 < -600.0 for log0, *_ in consts]
        inv0 = [np.exp(-np.where(t, 0.0, c[0])) for t, c in zip(tiny, consts)]

    def levels(x, d):
        total = 0.0
        for (log0, nb, ly0, y0, f), t, i0 in zip(consts, tiny, inv0):
            lr = np.log1p(d * i0)
            if t.any():
                lr = np.where(t, x - log0, lr)
            if nb is None:
                total = total + lr
                continue
            y = y0 + d / nb
            eta = lr + y * (_JD[0] + y * (_JD[1] + y * (_JD[2] + y * _JD[3]))) - f[0]
            big = np.flatnonzero(ly0 + lr > np.log(_SERIES_Y_MAX))
            if big.size:
                eta[big] = inverse_log_fermi_dirac_half(ly0[big] + lr[big]) - f[1][big]
            total = total + eta
        return total
    return levels


def _mpp_flat(prep, W, jgen, voc, dn_oc, iters=40):
    """Maximum-power point (vmp [V], jmp [mA/cm^2]) on the implied J-V, parametrised by Delta n.

    Each Delta n is an operating point with V = the splitting (the definition of `_state_flat`)
    and J = J_gen - q W U(Delta n); the power V J is maximised by golden section on
    x = ln Delta n over [ln dn_oc - L, ln dn_oc], L = 4 (ln(1 + Voc/kT) + 1), which holds the
    maximum for every diode ideality above 1/3 (Voc - Vmp ~ m kT (ln(1 + Voc/(m kT)) + 1)).
    Parametrised by Delta n the curve passes exactly through (Voc, 0) at the steady state
    dn_oc [cm^-3], also where a strong injection narrowing makes the splitting fall with
    Delta n (Si below ~20 K with schenk1998), so that V -> J is not single-valued.
    """
    gr = (np.sqrt(5.0) - 1.0) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        x_oc = np.log(dn_oc)
        hi = x_oc
        lo = hi - 4.0 * (np.log1p(np.maximum(voc / prep.kT, 0.0)) + 1.0)

    levels = _fast_levels(prep)

    def power(x):
        v, j = _operating_point(prep, W, jgen, x, levels)
        return v * j
    with np.errstate(invalid="ignore"):     # dn_oc = 0 (no splitting): NaN, not a point of a J-V
        c, d = hi - gr * (hi - lo), lo + gr * (hi - lo)
        pc, pd = power(c), power(d)
        for _ in range(iters):
            left = pc > pd                      # maximum in [lo, d]
            hi, lo = np.where(left, d, hi), np.where(left, lo, c)
            c, d = np.where(left, hi - gr * (hi - lo), d), np.where(left, c, lo + gr * (hi - lo))
            pn = power(np.where(left, c, d))
            pc, pd = np.where(left, pn, pd), np.where(left, pc, pn)
        vmp, jmp = _operating_point(prep, W, jgen, 0.5 * (lo + hi))
    bad = splitting_falls(prep, x_oc, levels) | ~(dn_oc > 0)
    return np.where(bad, np.nan, vmp), np.where(bad, np.nan, jmp)


#: relative step in Delta n for the slope of the splitting at the steady state [-]
_SLOPE_STEP = 1e-4


def splitting_falls(prep, x_oc, levels=None):
    """True where the splitting falls as Delta n rises at ln Delta n = x_oc [-].

    d(splitting)/d(Delta n) < 0 means the chemical potential of an electron-hole pair falls as
    pairs are added: the uniform electron-hole plasma is thermodynamically unstable (it would
    separate into dense droplets and a dilute gas, the electron-hole liquid of Si below ~25 K;
    T. M. Rice, Solid State Phys. 32, 1 (1977), from memory).  It happens where an
    injection-dependent narrowing (schenk1998 at low temperature) outgrows the carriers'
    kinetic term.  There V -> J is not single-valued and the implied FF, Vmp, Jmp do not apply.
    Tested by the difference over a step of _SLOPE_STEP in ln Delta n.
    """
    x_oc = np.asarray(x_oc, dtype=float)
    if not prep.inj_bgn:
        return np.zeros(x_oc.shape, bool)     # without injection narrowing the levels only rise
    with np.errstate(invalid="ignore"):
        lo, hi = x_oc - _SLOPE_STEP, x_oc + _SLOPE_STEP
        zero = np.zeros_like(x_oc)
        v_lo = _operating_point(prep, 1.0, zero, lo, levels)[0]
        v_hi = _operating_point(prep, 1.0, zero, hi, levels)[0]
        return np.isfinite(x_oc) & (v_hi < v_lo)


# ---------------------------------------------------------------------------
# Public API
# ---------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SteadyState:
    """The uniform steady state at every operating point (arrays, one shape).

    delta_n_cm3, delta_p_cm3, n_cm3, p_cm3 [cm^-3]; generation_cm3_s [cm^-3 s^-1];
    np_over_ni2 [-] and log10_np_over_ni2 [-]; splitting_eV, electron_qfl_eV, hole_qfl_eV
    (from Ev) [eV]; implied_voc_V [V] (= splitting_eV); implied_ff [-] (NaN at G = 0, and where
    `splitting_falls`); tau_eff_s, tau_srh_s,
    tau_radiative_s, tau_auger_s, tau_surface_s [s] (inf: mechanism absent);
    injection_ratio [-]; residual: |G - U| / G [-]; converged [bool]; limiting_mechanism [str];
    degenerate [bool]: a quasi-Fermi level within 3 kT of its band edge or inside the band
    (Fermi-Dirac statistics then make a splitting above the gap possible); effective_gap_eV:
    Ec - Ev under light, with the injection-dependent narrowing [eV].
    At a point with converged = False every level, density and lifetime is NaN (the point
    is outside what the models support, see `solve`).
    """

    delta_n_cm3: np.ndarray
    delta_p_cm3: np.ndarray
    n_cm3: np.ndarray
    p_cm3: np.ndarray
    np_over_ni2: np.ndarray
    log10_np_over_ni2: np.ndarray
    splitting_eV: np.ndarray
    implied_voc_V: np.ndarray
    implied_ff: np.ndarray
    tau_eff_s: np.ndarray
    tau_srh_s: np.ndarray
    tau_radiative_s: np.ndarray
    tau_auger_s: np.ndarray
    tau_surface_s: np.ndarray
    electron_qfl_eV: np.ndarray
    hole_qfl_eV: np.ndarray
    injection_ratio: np.ndarray
    generation_cm3_s: np.ndarray
    residual: np.ndarray
    converged: np.ndarray
    limiting_mechanism: np.ndarray
    degenerate: np.ndarray
    effective_gap_eV: np.ndarray

    def to_dict(self) -> dict:
        """The DESIGN.md ``steady_state`` keys (tau_s nested); inf/NaN -> None for scalars, NaN in arrays."""
        def v(a):
            a = np.asarray(a, dtype=float)
            if a.ndim == 0:
                return float(a) if np.isfinite(a) else None
            return np.where(np.isfinite(a), a, np.nan)
        out = {k: v(getattr(self, k)) for k in (
            "delta_n_cm3", "delta_p_cm3", "n_cm3", "p_cm3", "np_over_ni2", "splitting_eV",
            "implied_voc_V", "implied_ff", "tau_eff_s")}
        out["tau_s"] = {m: v(getattr(self, f"tau_{m}_s")) for m in MECHANISMS}
        for k in ("electron_qfl_eV", "hole_qfl_eV", "injection_ratio", "log10_np_over_ni2"):
            out[k] = v(getattr(self, k))
        lm = np.asarray(self.limiting_mechanism)
        out["limiting_mechanism"] = str(lm) if lm.ndim == 0 else lm
        dg = np.asarray(self.degenerate, dtype=bool)
        out["degenerate"] = bool(dg) if dg.ndim == 0 else dg
        return out


def _check_inputs(G, thickness_cm):
    G = np.asarray(G, dtype=float)
    check_range("generation_cm3_s", G, 0.0, None, unit="cm^-3 s^-1")
    check_range("absorber.thickness_um", thickness_cm, 0.0, None, low_open=True)
    return G


def _shape(eq, G, thickness_cm):
    try:
        return np.broadcast_shapes(_eq_shape(eq), np.shape(G), np.shape(thickness_cm))
    except ValueError:
        raise InputError("generation_cm3_s", f"shape {np.shape(G)}",
                         f"a shape broadcasting with the equilibrium {_eq_shape(eq)} and the thickness "
                         f"{np.shape(thickness_cm)}") from None


def _chunks(size, chunk):
    for s in range(0, size, chunk):
        yield np.arange(s, min(size, s + chunk))


def solve(material, eq, recombination: Recombination, generation_cm3_s, thickness_cm, *,
          with_ff: bool = True, chunk_size: int = _CHUNK) -> SteadyState:
    """Solve G = U_total(Delta n) at every operating point at once.

    material: the absorber; eq: its `Equilibrium` (arrays); recombination: a `Recombination`;
    generation_cm3_s: average generation rate G >= 0, any shape broadcasting with eq [cm^-3 s^-1];
    thickness_cm: W [cm]; with_ff: also compute implied_ff (else NaN) [-];
    chunk_size: points per chunk (bounds the working memory) [-].

    Bracketed in ln(Delta n), then Illinois regula falsi on ln U - ln G (see `_solve_flat`:
    first with n_i,eff at its dark value, where U is monotonic, then from that root with
    the injection-dependent narrowing); each point to |G - U| <= 1e-10 G.  A point that
    misses it, or whose root lies above DN_MAX_CM3 (beyond the models' range), is flagged
    converged = False and its levels, densities, lifetimes and FF are NaN (never a number
    the models cannot support).  G = 0 gives Delta n = 0 exactly; a G so small that Delta n
    lies below 1e-304 cm^-3 gives the linear answer G tau_low-injection (residual then limited
    by the few digits of a subnormal Delta n below 2.2e-308 cm^-3).  implied_ff is computed
    from the same splitting as splitting_eV (see `implied_jv`).
    """
    G = _check_inputs(generation_cm3_s, thickness_cm)
    shape = _shape(eq, G, thickness_cm)
    size = int(np.prod(shape))
    Gb = np.broadcast_to(G, shape)
    out: dict[str, np.ndarray] = {}
    for idx in _chunks(size, chunk_size):
        prep = recombination.prepare(material, eq, thickness_cm, shape, idx)
        g = Gb[np.unravel_index(idx, shape)] if Gb.ndim else np.full(idx.size, float(Gb))
        dn, conv = _solve_flat(prep, g)
        st = _state_flat(prep, dn)
        with np.errstate(invalid="ignore", divide="ignore"):
            u = prep.total(dn)
            st["residual"] = np.where(g > 0, np.abs(g - u) / np.where(g > 0, g, 1.0), 0.0)
        st["converged"] = conv
        st["generation_cm3_s"] = g
        st["implied_ff"] = np.full(idx.size, np.nan)
        if with_ff:
            lit = np.flatnonzero((g > 0) & conv & (dn > 0) & (st["splitting_eV"] > 0))
            if lit.size:
                sub = prep.take(lit)
                W = _thickness_flat(thickness_cm, shape, idx[lit])
                jgen = q_C * W * g[lit] * 1e3
                voc = st["splitting_eV"][lit]          # implied Voc = the splitting (one definition)
                vmp, jmp = _mpp_flat(sub, W, jgen, voc, dn_oc=dn[lit])
                with np.errstate(invalid="ignore", divide="ignore"):
                    ff = vmp * jmp / (voc * jgen)
                st["implied_ff"][lit] = np.where(voc > 0, ff, np.nan)
        bad = ~conv
        if bad.any():                    # outside the models: no number, only the flag
            for k in _NAN_WHEN_UNCONVERGED:
                st[k] = np.where(bad, np.nan, st[k])
            st["degenerate"] = st["degenerate"] & conv
        for k, v in st.items():
            if k not in out:
                out[k] = np.empty(size, dtype=v.dtype)
            out[k][idx] = v
    code = out.pop("limiting_code")
    names = np.array(MECHANISMS)
    res = {k: v.reshape(shape) for k, v in out.items()}
    res["limiting_mechanism"] = names[code].reshape(shape)
    if shape == ():
        res = {k: v[()] for k, v in res.items()}
    return SteadyState(**{f.name: res[f.name] for f in fields(SteadyState)})


_NAN_WHEN_UNCONVERGED = (
    "delta_n_cm3", "delta_p_cm3", "n_cm3", "p_cm3", "np_over_ni2", "log10_np_over_ni2", "splitting_eV",
    "implied_voc_V", "implied_ff", "tau_eff_s", "tau_srh_s", "tau_radiative_s", "tau_auger_s", "tau_surface_s",
    "electron_qfl_eV", "hole_qfl_eV", "injection_ratio", "effective_gap_eV")


def _thickness_flat(thickness_cm, shape, idx):
    t = np.asarray(thickness_cm, dtype=float)
    return np.full(idx.size, float(t)) if t.ndim == 0 else np.broadcast_to(t, shape)[np.unravel_index(idx, shape)]


def solve_chunked(material, recombination: Recombination, temperature_K, donors_cm3, acceptors_cm3,
                  generation_cm3_s, thickness_cm, *, chunk_size: int = _CHUNK,
                  fields_out=("delta_n_cm3", "implied_voc_V", "tau_eff_s", "converged"),
                  equilibrium_kwargs=None, progress=None) -> dict:
    """Steady state for very many points with bounded memory (equilibrium computed per chunk).

    temperature_K [K], donors_cm3, acceptors_cm3 [cm^-3], generation_cm3_s [cm^-3 s^-1],
    thickness_cm [cm]: arrays broadcasting to one shape; chunk_size: points per chunk [-];
    fields_out: `SteadyState` field names kept; equilibrium_kwargs: passed to
    optogen.equilibrium.equilibrium (bgn_model defaults to the recombination's);
    progress: optional callable(n_done) [-].
    Returns dict field -> array of the broadcast shape (implied_ff is not computed).
    """
    from .equilibrium import equilibrium
    args = [np.asarray(a, dtype=float) for a in (temperature_K, donors_cm3, acceptors_cm3, generation_cm3_s,
                                                 thickness_cm)]
    shape = np.broadcast_shapes(*(a.shape for a in args))
    size = int(np.prod(shape))
    kw = dict(equilibrium_kwargs or {})
    kw.setdefault("bgn_model", recombination.bgn_model)
    res = {}
    for idx in _chunks(size, chunk_size):
        T, nd, na, G, W = (a[np.unravel_index(idx, shape)] if a.ndim else np.full(idx.size, float(a)) for a in args)
        eq = equilibrium(material, T, nd, na, **kw)
        st = solve(material, eq, recombination, G, W, with_ff=False, chunk_size=chunk_size)
        for k in fields_out:
            v = np.asarray(getattr(st, k))
            if k not in res:
                res[k] = np.empty(size, dtype=v.dtype)
            res[k][idx] = v
        if progress is not None:
            progress(idx.size)
    return {k: v.reshape(shape) for k, v in res.items()}


@dataclass(frozen=True, eq=False)
class ImpliedJV:
    """Implied J-V curve of a uniform absorber and its figures.

    voltage_V (..., M) [V]; current_mA_cm2 (..., M) [mA/cm^2]; jsc_mA_cm2 [mA/cm^2]
    (= the photocurrent); voc_V [V]; vmp_V [V]; jmp_mA_cm2 [mA/cm^2]; pmax_mW_cm2 [mW/cm^2];
    ff [-]; efficiency [-] (None without an irradiance).
    """

    voltage_V: np.ndarray
    current_mA_cm2: np.ndarray
    jsc_mA_cm2: np.ndarray
    voc_V: np.ndarray
    vmp_V: np.ndarray
    jmp_mA_cm2: np.ndarray
    pmax_mW_cm2: np.ndarray
    ff: np.ndarray
    efficiency: np.ndarray | None


def implied_jv(material, eq, recombination: Recombination, thickness_cm, photocurrent_mA_cm2,
               voltages_V=None, irradiance_W_m2=None, points: int = 101) -> ImpliedJV:
    """Implied J-V: J(V) = J_gen - q W U(Delta n(V)), Delta n(V) the excess density with splitting V.

    material; eq: `Equilibrium`; recombination; thickness_cm: W [cm];
    photocurrent_mA_cm2: J_gen > 0, broadcasting with eq [mA/cm^2];
    voltages_V: voltage grid (M,) [V] (default: `points` values from 0 to Voc per point);
    irradiance_W_m2: incident irradiance for the efficiency [W m^-2]; points: grid size [-].
    V is the quasi-Fermi-level splitting of `solve` (Fermi-Dirac or Boltzmann, as the narrowing
    model's statistics), so Voc_V is exactly the steady-state splitting_eV under
    G = J_gen / (q W) and the curve ends at (Voc, 0).  The maximum-power point by golden
    section over Delta n (`_mpp_flat`); vmp, jmp, pmax, ff, efficiency are NaN where the
    splitting falls as Delta n rises at the steady state (`splitting_falls`: an unstable
    uniform plasma, V -> J not single-valued); efficiency is also NaN where P_max would exceed
    the incident power (a splitting above the photon energy: population inversion).
    """
    jg = np.asarray(photocurrent_mA_cm2, dtype=float)
    check_range("generation.photocurrent_mA_cm2", jg, 0.0, None, low_open=True, unit="mA/cm^2")
    check_range("absorber.thickness_um", thickness_cm, 0.0, None, low_open=True)
    G = jg * 1e-3 / (q_C * np.asarray(thickness_cm, dtype=float))
    ss = solve(material, eq, recombination, G, thickness_cm, with_ff=False)
    shape = np.shape(ss.delta_n_cm3)
    size = int(np.prod(shape))
    prep = recombination.prepare(material, eq, thickness_cm, shape)
    W = np.broadcast_to(np.asarray(thickness_cm, float), shape).reshape(-1)
    jgen = np.broadcast_to(jg, shape).reshape(-1)
    voc = np.asarray(ss.splitting_eV, float).reshape(-1)        # the steady-state splitting (one definition)
    dn_oc = np.asarray(ss.delta_n_cm3, float).reshape(-1)
    vmp, jmp = _mpp_flat(prep, W, jgen, voc, dn_oc=dn_oc)
    if voltages_V is None:
        grid = np.linspace(0.0, 1.0, points)[:, None] * voc[None, :]
    else:
        vv = np.asarray(voltages_V, dtype=float).reshape(-1)
        check_range("voltages_V", vv, 0.0, None, unit="V")
        grid = np.broadcast_to(vv[:, None], (vv.size, size))
    M = grid.shape[0]
    rep = prep.take(np.tile(np.arange(size), M))
    # the steady-state Delta n bounds the search only where V <= Voc
    cap = np.where(grid <= voc[None, :], dn_oc[None, :], np.inf).reshape(-1)
    cur = jgen[None, :] - _j_rec_mA(rep, np.tile(W, M), grid.reshape(-1), cap).reshape(M, size)
    # at V = Voc the operating point is the steady state itself (J = 0 to the solver's residual);
    # the search from below could meet another root where the splitting is not monotonic in Delta n
    at_oc = (grid == voc[None, :]) & (dn_oc[None, :] > 0)
    if at_oc.any():
        j_oc = _operating_point(prep, W, jgen, np.log(np.where(dn_oc > 0, dn_oc, 1.0)))[1]
        cur = np.where(at_oc, np.broadcast_to(j_oc, cur.shape), cur)
    pmax = vmp * jmp
    eff = None
    if irradiance_W_m2 is not None:
        irr = check_range("light.irradiance_W_m2", irradiance_W_m2, 0.0, None, low_open=True, unit="W m^-2")
        eff = (pmax / (np.broadcast_to(irr, shape).reshape(-1) * 0.1)).reshape(shape)
        # P_max above the incident power: the splitting exceeds the photon energy (population
        # inversion), where linear absorption no longer holds: no number (NaN), never an efficiency > 1
        with np.errstate(invalid="ignore"):
            eff = np.where(eff <= 1.0, eff, np.nan)

    def sh(a):
        a = np.asarray(a).reshape(shape)
        return a[()] if shape == () else a
    vj = voc * jgen                     # 0 where the light sets no splitting (FF does not apply: NaN)
    with np.errstate(divide="ignore", invalid="ignore"):
        ff = np.where(vj > 0, pmax / np.where(vj > 0, vj, 1.0), np.nan)
    return ImpliedJV(np.moveaxis(grid.reshape((M,) + shape), 0, -1), np.moveaxis(cur.reshape((M,) + shape), 0, -1),
                     sh(jgen), sh(voc), sh(vmp), sh(jmp), sh(pmax), sh(ff),
                     None if eff is None else sh(eff))


@dataclass(frozen=True, eq=False)
class LifetimeCurve:
    """Effective lifetime and each mechanism's lifetime over an excess-density range.

    delta_n_cm3 (D,) [cm^-3]; tau_eff_s, tau_srh_s, tau_radiative_s, tau_auger_s,
    tau_surface_s: arrays (..., D) [s] (inf where a mechanism is absent).
    """

    delta_n_cm3: np.ndarray
    tau_eff_s: np.ndarray
    tau_srh_s: np.ndarray
    tau_radiative_s: np.ndarray
    tau_auger_s: np.ndarray
    tau_surface_s: np.ndarray


def lifetime_curve(material, eq, recombination: Recombination, thickness_cm, delta_n_cm3=None) -> LifetimeCurve:
    """tau_eff(Delta n) and each mechanism's tau = Delta n / U_x, ready for a plot.

    material; eq: `Equilibrium` (any shape S); recombination; thickness_cm: W [cm];
    delta_n_cm3: excess densities (D,) > 0 (default 1e12..1e17, 51 log-spaced) [cm^-3].
    Returns arrays of shape S + (D,).
    """
    dn = np.logspace(12, 17, 51) if delta_n_cm3 is None else np.asarray(delta_n_cm3, dtype=float).reshape(-1)
    check_range("delta_n_cm3", dn, 0.0, None, low_open=True, unit="cm^-3")
    base = np.broadcast_shapes(_eq_shape(eq), np.shape(thickness_cm))
    shape = (dn.size,) + base
    prep = recombination.prepare(material, eq, thickness_cm, shape)
    d = np.broadcast_to(dn.reshape((-1,) + (1,) * len(base)), shape).reshape(-1)
    r = prep.rates(d)
    with np.errstate(divide="ignore"):
        taus = [np.moveaxis((d / x).reshape(shape), 0, -1) for x in (sum(r), *r)]
    return LifetimeCurve(dn, *taus)


def state_at(material, eq, recombination: Recombination, delta_n_cm3, thickness_cm) -> dict:
    """Every steady-state quantity at a given excess density, without solving G = U.

    For a depth-resolved profile: the state at a chosen plane.  Arrays of the
    broadcast shape of eq and delta_n_cm3; keys as `SteadyState` fields
    (delta_n_cm3 [cm^-3], splitting_eV [eV], tau_*_s [s], ...).
    """
    dn = np.asarray(delta_n_cm3, dtype=float)
    check_range("delta_n_cm3", dn, 0.0, None, unit="cm^-3")
    shape = np.broadcast_shapes(_eq_shape(eq), dn.shape, np.shape(thickness_cm))
    prep = recombination.prepare(material, eq, thickness_cm, shape)
    st = _state_flat(prep, np.broadcast_to(dn, shape).reshape(-1))
    code = st.pop("limiting_code")
    out = {k: v.reshape(shape) for k, v in st.items()}
    out["limiting_mechanism"] = np.array(MECHANISMS)[code].reshape(shape)
    return out
