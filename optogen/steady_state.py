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

def _balance(prep: PreparedRates, x, lg, bgn=True):
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
            fn = _balance(prep.take(k), xn, lg[k], bgn)
            a[k], fa[k] = b[k], fb[k]               # the old upper end had f < 0
            b[k], fb[k] = xn, fn
            need_hi[k] = ~(fn >= 0) & (xn < _X_MAX)
        k = np.flatnonzero(need_lo)
        if k.size:
            xn = np.maximum(a[k] - step[k], _X_MIN)
            fn = _balance(prep.take(k), xn, lg[k], bgn)
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
        fx = _balance(cur, x, lg[act], bgn)
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
    a, fa, b, fb, ok = _bracket(sub, lg, x0, _balance(sub, x0, lg, False), False, 1.0)
    x, _ = _illinois(sub, lg, a, fa, b, fb, ok, False)
    if sub.inj_bgn:
        a, fa, b, fb, ok = _bracket(sub, lg, x, _balance(sub, x, lg, True), True, 0.05)
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


def _state_flat(prep: PreparedRates, dn, extras: bool = False):
    """Every output quantity (flat) at excess density dn [cm^-3].

    Quasi-Fermi levels use the carrier statistics of the narrowing model (prep.statistics):
    Fermi-Dirac, or Boltzmann for an apparent narrowing (klaassen1992), for which the
    splitting is exactly kT ln(n p / n_i,eff^2).  ``degenerate`` is True where either
    quasi-Fermi level lies within DEGENERATE_KT kT of its band edge or inside the band.

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the P points.
    dn : ndarray (P,)
        Excess density [cm^-3].
    extras : bool
        Also return the narrowing shift and the total rate at dn, so that the caller
        (`solve`: residual, implied FF) does not evaluate the narrowing again.

    Returns
    -------
    dict of flat output arrays; with extras, (dict, shift [-], U_total(dn) [cm^-3 s^-1]).
    The injection narrowing is evaluated once at dn and reused for the rates (where dn > 0,
    the rates' evaluation density d_eval is dn itself).
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
    rest = np.flatnonzero(~(dn > 0))            # dark (or NaN) points: the rates go to d_eval
    shift_eval = shift
    if prep.inj_bgn and rest.size:
        shift_eval = np.array(shift, dtype=float, copy=True)
        shift_eval[rest] = (prep.take(rest) if rest.size < len(dn) else prep).ni2_shift(d_eval[rest])
    r = prep.rates(d_eval, shift_eval)
    tot = sum(r)
    with np.errstate(divide="ignore"):
        taus = [np.where(x > 0, d_eval / np.where(x > 0, x, 1.0), np.inf) for x in (*r, tot)]
    out = {
        "delta_n_cm3": dn, "delta_p_cm3": dn, "n_cm3": prep.n0 + dn, "p_cm3": prep.p0 + dn,
        "np_over_ni2": _exp_or_inf(ln_ratio), "log10_np_over_ni2": ln_ratio / np.log(10.0),
        "splitting_eV": e_qfl - h_qfl, "implied_voc_V": e_qfl - h_qfl,
        "tau_eff_s": taus[4], "tau_srh_s": taus[0], "tau_radiative_s": taus[1], "tau_auger_s": taus[2],
        "tau_surface_s": taus[3], "electron_qfl_eV": e_qfl, "hole_qfl_eV": h_qfl,
        "injection_ratio": _exp_or_inf(ldn - np.maximum(prep.log_n0, prep.log_p0)), "limiting_code": np.argmax(np.stack(r), axis=0).astype(np.int8),
        "degenerate": degenerate, "effective_gap_eV": ec,
    }
    if not extras:
        return out
    u = np.array(tot, dtype=float, copy=True)         # U(dn): equal to tot where dn > 0
    if rest.size:
        with np.errstate(over="ignore", invalid="ignore"):
            u[rest] = (prep.take(rest) if rest.size < len(dn) else prep).total(dn[rest])
    return out, shift, u


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
    """Recombination current q W U(Delta n(V)) [mA cm^-2] at splitting v [V]."""
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
    """Splitting V [V] and current J = J_gen - q W U [mA cm^-2] of the absorber at Delta n = e^x [cm^-3].

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


class _Levels:
    """eta_n + eta_p of `_qfl_shifts` as a function of (x, Delta n), with per-point constants kept.

    Where n/Nc (p/Nv) <= _SERIES_Y_MAX the small-y series of F^-1 (as `_eta_series`, here
    f(y) - f(y0) with f(y) = sum_k A_k y^k; within 1e-12 of the exact inverse), above it the
    exact inverse against the dark value computed once; ln(n/n0) as log1p(Delta n/n0) (or
    x - ln n0 where n0 lies below ~1e-260 cm^-3).  Built by `_fast_levels`; ``take(idx)``
    gives the subset without recomputing the dark constants.

    Calling ``levels(x, d, slope=False)`` with x = ln Delta n [ln cm^-3], d = Delta n [cm^-3]
    returns eta [-], or (eta [-], d eta / dx [-]) with slope=True.  The slope is analytic:
    d ln(n/n0)/dx = Delta n / n plus, in the series, (Delta n / Nc) f'(y); in the exact branch
    d F^-1(y)/d ln y (`_dlog_eta`) times Delta n / n.

    References
    ----------
    W. B. Joyce and R. W. Dixon, Appl. Phys. Lett. 31, 354 (1977) (the series coefficients A3, A4;
    as cited at `_JD`).
    """

    def __init__(self, prep=None):
        if prep is None:
            return
        with np.errstate(over="ignore", under="ignore"):
            if prep.statistics == "boltzmann":
                self.carriers = [(log0, None, None, None, None, None) for log0 in (prep.log_n0, prep.log_p0)]
            else:
                self.carriers = []
                for log0, nb in ((prep.log_n0, prep.nc), (prep.log_p0, prep.nv)):
                    ly0 = log0 - np.log(nb)
                    y0 = np.exp(ly0)
                    f0 = y0 * (_JD[0] + y0 * (_JD[1] + y0 * (_JD[2] + y0 * _JD[3])))
                    # F^-1(y0) for the exact branch: computed where first needed (NaN: not yet)
                    self.carriers.append((log0, nb, ly0, y0, f0, np.full(ly0.shape, np.nan)))
            self.tiny = [c[0] < -600.0 for c in self.carriers]
            self.any_tiny = [bool(t.any()) for t in self.tiny]
            self.inv0 = [np.exp(-np.where(t, 0.0, c[0])) for t, c in zip(self.tiny, self.carriers)]

    def take(self, idx):
        """The subset at positions idx.

        Parameters
        ----------
        idx : ndarray of int
            Positions [-].

        Returns
        -------
        _Levels: the levels of those points (dark constants copied, not recomputed).
        """
        new = _Levels()
        new.carriers = [tuple(None if a is None else a[idx] for a in c) for c in self.carriers]
        new.tiny = [t[idx] for t in self.tiny]
        new.any_tiny = [bool(t.any()) for t in new.tiny]
        new.inv0 = [i[idx] for i in self.inv0]
        return new

    def __call__(self, x, d, slope=False):
        """eta_n + eta_p (and its slope) at x = ln Delta n.

        Parameters
        ----------
        x : ndarray (P,)
            ln Delta n [ln cm^-3].
        d : ndarray (P,)
            Delta n = e^x [cm^-3].
        slope : bool
            Also return d(eta_n + eta_p)/dx [-].

        Returns
        -------
        eta [-], or (eta [-], d eta/dx [-]).
        """
        from .equilibrium import inverse_log_fermi_dirac_half
        total, dtotal = 0.0, 0.0
        for (log0, nb, ly0, y0, f0, fi0), t, any_t, i0 in zip(self.carriers, self.tiny, self.any_tiny, self.inv0):
            r = d * i0
            lr = np.log1p(r)
            if any_t:
                lr = np.where(t, x - log0, lr)
            if slope:
                q = r / (1.0 + r)                       # d ln(n/n0)/dx = Delta n / n
                if any_t:
                    q = np.where(t, 1.0, q)
            if nb is None:
                total = total + lr
                if slope:
                    dtotal = dtotal + q
                continue
            dy = d / nb
            y = y0 + dy                                  # n / Nc (p / Nv)
            eta = lr + y * (_JD[0] + y * (_JD[1] + y * (_JD[2] + y * _JD[3]))) - f0
            if slope:
                deta = q + dy * (_JD[0] + y * (2.0 * _JD[1] + y * (3.0 * _JD[2] + 4.0 * y * _JD[3])))
            big = np.flatnonzero(y > _SERIES_Y_MAX)
            if big.size:
                new = big[np.isnan(fi0[big])]
                if new.size:
                    fi0[new] = inverse_log_fermi_dirac_half(ly0[new])
                eta[big] = inverse_log_fermi_dirac_half(ly0[big] + lr[big]) - fi0[big]
                if slope:
                    deta[big] = q[big] * _dlog_eta(ly0[big] + lr[big])
            total = total + eta
            if slope:
                dtotal = dtotal + deta
        return (total, dtotal) if slope else total


def _fast_levels(prep):
    """The levels eta_n + eta_p of the points of prep as a callable (x, d, slope=False) (`_Levels`).

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the P points (the dark levels are computed here, once).

    Returns
    -------
    _Levels: levels(x [ln cm^-3], d [cm^-3], slope=False) -> eta [-] (and d eta/dx [-]).
    """
    return _Levels(prep)


#: forward step in x = ln Delta n for the slope of the injection narrowing [-] (see `_shift_slope`)
_SHIFT_STEP = 1e-7
#: below this Delta n / min(n0, p0) the narrowing slope is taken by the complex step [-]
#: (the same limit as `PreparedRates.ni2_shift` uses for its cancellation-free difference)
_SHIFT_SMALL = 1e-2


def _shift_slope(prep, dn, shift, need=None):
    """d shift / d ln Delta n of the injection narrowing [-] (0.0 without one).

    shift(x) = (dEg(n0 + e^x, p0 + e^x) - dEg(n0, p0)) / kT.  Where Delta n >= 1e-2 min(n0, p0)
    a forward difference over _SHIFT_STEP = 1e-7 in x from the shift already known at x (one more
    evaluation of the narrowing; truncation 5e-8 |shift''|, rounding ~ 1e-16 (dEg/kT) / 1e-7, both
    ~1e-7 at most: a shift of P's maximum by ~1e-7 in x, nothing in the FF).
    Below, where the shift is a tiny difference of two nearly equal narrowings, the complex
    step Delta n Im dEg(n + i h, p + i h) / (h kT), exact to rounding (W. Squire and G. Trapp,
    SIAM Rev. 40, 110 (1998), doi:10.1137/S003614459631241X).

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the P points.
    dn : ndarray (P,)
        Excess density Delta n > 0 [cm^-3].
    shift : ndarray (P,) or float
        The shift at dn, as `PreparedRates.ni2_shift(dn, precise=False)` [-].
    need : ndarray (P,) of bool, optional
        Points whose slope is wanted (default all; elsewhere 0.0).

    Returns
    -------
    ndarray (P,) or 0.0: d shift / d ln Delta n [-].
    """
    if not prep.inj_bgn:
        return 0.0
    out = np.zeros(len(dn))
    with np.errstate(invalid="ignore"):
        small = dn < _SHIFT_SMALL * np.minimum(prep.n0, prep.p0)
    big = ~small
    if need is not None:
        small, big = small & need, big & need
    with np.errstate(over="ignore", invalid="ignore", under="ignore"):
        for sel, use_complex in ((np.flatnonzero(big), False), (np.flatnonzero(small), True)):
            if sel.size == 0:
                continue
            all_ = sel.size == len(dn)
            sub = None if all_ else (prep.T[sel], prep.nd[sel], prep.na[sel])
            n0, p0, d, kT = (a if all_ else a[sel] for a in (prep.n0, prep.p0, dn, prep.kT))
            if use_complex:
                h = 1e-30 * (n0 + p0 + 2.0 * d)
                out[sel] = d * np.imag(prep._bgn(n0 + d + 1j * h, p0 + d + 1j * h, sub)) / (h * kT)
            else:
                dh = d * np.exp(_SHIFT_STEP)
                bgn0 = prep.bgn0 if all_ else prep.bgn0[sel]
                s0 = shift if all_ else np.asarray(shift)[sel]
                out[sel] = ((prep._bgn(n0 + dh, p0 + dh, sub) - bgn0) / kT - s0) / _SHIFT_STEP
    return out


def _power_point(prep, W, jgen, x, levels, shift=None, need=None):
    """An operating point of the implied J-V at x = ln Delta n and its slopes (analytic but the narrowing's).

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the P points.
    W : ndarray (P,)
        Thickness [cm].
    jgen : ndarray (P,)
        Photocurrent J_gen [mA cm^-2].
    x : ndarray (P,)
        ln Delta n [ln cm^-3].
    levels : callable
        From `_fast_levels(prep)`.
    shift : ndarray (P,), optional
        The narrowing shift at e^x if already known [-] (else evaluated, precise=False).
    need : ndarray (P,) of bool, optional
        Points whose slopes are wanted (default all; elsewhere the narrowing's slope is 0).

    Returns
    -------
    V [V], J [mA cm^-2], dV/dx [V], dJ/dx [mA cm^-2], shift [-], d shift/dx [-]: V the splitting
    kT (eta_n + eta_p - shift), J = J_gen - q W U 1e3; dV/dx and dJ/dx from the analytic
    slopes of the levels (`_fast_levels`) and of the rates (`PreparedRates.slopes`), with the
    narrowing's slope from `_shift_slope`.
    """
    with np.errstate(over="ignore", invalid="ignore", under="ignore", divide="ignore"):
        d = np.exp(x)
        if shift is None:
            shift = prep.ni2_shift(d, precise=False)
        ds = _shift_slope(prep, d, shift, need)
        eta, deta = levels(x, d, slope=True)
        u = sum(prep.rates(d, shift))
        u_d, u_s = prep.slopes(d, shift)
        c = q_C * W * 1e3
        v = prep.kT * (eta - shift)
        dv = prep.kT * (deta - ds)
        j = jgen - c * u
        dj = -c * (d * u_d + u_s * ds)
    return v, j, dv, dj, shift, ds


#: the Newton search stops when its step in x = ln Delta n is below this [-]: P is flat at its
#: maximum, an error dx in x costs ~ |P''/P| dx^2 / 2 of P (below 1e-10 of the FF here)
_MPP_XTOL = 1e-5
#: a secant step below this (through iterates closer than _SECANT_BELOW) is taken without a
#: further slope evaluation [-]: its own error is a few % of it at most (x error < 1e-5)
_MPP_POLISH = 3e-4
_MPP_ITERS = 60
#: secant slope of dP/dx once two iterates are this close in x; farther, the diode-model step [-]
_SECANT_BELOW = 0.1
#: points of the coarse scan of P over the bracket, to find every local maximum [-]
_MPP_SCAN = 16
#: a local maximum of the scan within this fraction of the maximum found (or above) is refined too [-]
_MPP_KEEP = 1e-2


def _diode_model_step(v, j, dv, dj, jgen):
    """Step t in x = ln Delta n to the maximum power of the local diode model at an operating point [-].

    Model: V(x + t) = V + V' t, J(x + t) = J_gen - R e^(a t) with R = J_gen - J = q W U 1e3 and
    a = -J'/R = d ln U/dx: exact for an ideal diode (U ~ e^(a x), V linear in x).  Its
    d(V J)/dt = 0 gives, with u = -a t, rho = R / J_gen, k = a V / V',
    e^u = rho (1 + k - u), solved from u = ln(rho (1 + k)) by one fixed-point step
    u = ln(rho (1 + k - u)) and three Newton steps (convex, increasing; to ~1e-7, enough for a
    step proposal).  At the steady state (rho = 1, a = 1 in low injection)
    this is the ideal-diode relation Voc/kT = Vmp/kT + ln(1 + Vmp/kT).

    Parameters
    ----------
    v, j, dv, dj : ndarray
        V [V], J [mA cm^-2] and their slopes in x [V], [mA cm^-2] (`_power_point`).
    jgen : ndarray
        Photocurrent J_gen [mA cm^-2].

    Returns
    -------
    t : ndarray, the step in x [-] (NaN where the model has no maximum).

    References
    ----------
    M. A. Green, Solar Cells (Prentice-Hall, 1982), ch. 5 (the ideal-diode maximum-power
    condition; from memory).
    """
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        r = jgen - j
        a = -dj / r
        rho = r / jgen
        k = a * v / dv
        u = np.log(rho * (1.0 + k))
        arg = rho * (1.0 + k - u)                        # one fixed-point step, then Newton
        u = np.where(arg > 0, np.log(np.where(arg > 0, arg, 1.0)), u)
        for _ in range(3):                               # to ~1e-7 over rho in [0.01, 1], k in [0.01, 1e3]
            eu = np.exp(u)
            u = u - (eu - rho * (1.0 + k - u)) / (eu + rho)
        return -u / a


def _mpp_newton(prep, levels, W, jgen, x, lo, hi, kink=None):
    """Local maximum of P = V J in x = ln Delta n inside [lo, hi], by safeguarded Newton on dP/dx.

    dP/dx = V' J + V J' from `_power_point` (analytic slopes).  The slope of dP/dx: the
    secant through the last two iterates where they lie within _SECANT_BELOW or straddle the
    maximum; else the step to the maximum of the local diode model (`_diode_model_step`).
    Every iterate moves one end of [lo, hi] by the sign of dP/dx; a step that leaves it, or
    is not below half the step before last, is replaced by bisection.  Ends where the step is
    below _MPP_XTOL (the iterate is the answer) or, from a secant through iterates closer than
    _SECANT_BELOW, below _MPP_POLISH (the step is taken and only V and J are evaluated there:
    its error is a small fraction of the step), or where the bracket is narrower than _MPP_XTOL.
    A kink of P (`_narrowing_kink_x`) is crossed only from the point _KINK_SIDE beside it to the
    one on the other side (the slope of the narrowing is a forward difference, and a secant or a
    small last step across the kink would not hold); a secant is never taken across it.

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the C candidates.
    levels : _Levels
        Their levels (`_fast_levels`).
    W, jgen : ndarray (C,)
        Thickness [cm] and photocurrent [mA cm^-2].
    x, lo, hi : ndarray (C,)
        Start and bracket in ln Delta n [ln cm^-3], lo < x < hi.
    kink : ndarray (C,), optional
        ln Delta n of a kink of P [ln cm^-3], NaN where none.

    Returns
    -------
    x [ln cm^-3], V [V], J [mA cm^-2] at the maximum: arrays (C,).  V with the series levels
    of `_fast_levels` (within 1e-12 kT of the exact ones of `_state_flat`).

    References
    ----------
    W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery, Numerical Recipes,
    3rd ed. (Cambridge, 2007), sec. 9.4 (Newton with bracketing and bisection).
    """
    C = len(prep)
    fx, fv, fj = (np.full(C, np.nan) for _ in range(3))
    act = np.arange(C)                                   # candidates in the working arrays
    live = np.ones(C, bool)                              # still iterating (else waiting to be dropped)
    pol = np.zeros(C, bool)                              # at a polishing step: only V, J wanted
    sub, lv = prep, levels
    x_prev, g_prev = np.full(C, np.nan), np.full(C, np.nan)
    dx_old, dx = np.full(C, np.inf), np.full(C, np.inf)
    kk = np.full(C, np.nan) if kink is None else np.asarray(kink, dtype=float).copy()
    kinked = bool(np.isfinite(kk).any())
    for it in range(_MPP_ITERS + 1):
        if not live.any():
            break
        v, j, dv, dj, _, _ = _power_point(sub, W, jgen, x, lv, need=live & ~pol)
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            # a polishing step ends: keep it where P is not lower than at the iterate before
            k = np.flatnonzero(pol)
            if k.size:
                better = v[k] * j[k] >= fv[act[k]] * fj[act[k]]
                kb = k[better]
                fx[act[kb]], fv[act[kb]], fj[act[kb]] = x[kb], v[kb], j[kb]
                live[k], pol[k] = False, False
            g = dv * j + v * dj                          # dP/dx
            up = g > 0
            lo = np.where(up, x, lo)
            hi = np.where(up, hi, x)                     # g < 0 (or not a number): the maximum is below
            secant = (g - g_prev) / (x - x_prev)
            # the secant once the iterates are close or straddle the maximum; else the diode model
            close = np.abs(x - x_prev) < _SECANT_BELOW
            use_sec = np.isfinite(secant) & (secant < 0) & (close | (up != (g_prev > 0)))
            if kinked:
                side = np.sign(x - kk)                   # 0 or NaN: no kink
                use_sec &= ~(side * np.sign(x_prev - kk) < 0)
            xn = x - g / secant
            m = np.flatnonzero(~use_sec)
            if m.size:
                xn[m] = x[m] + _diode_model_step(v[m], j[m], dv[m], dj[m], jgen[m])
            # bisection where the step leaves the bracket or is not below half the one before last
            inside = (xn > lo) & (xn < hi) & ~(np.abs(xn - x) > 0.5 * dx_old)
            xn = np.where(inside, xn, 0.5 * (lo + hi))
            if kinked:
                # across a kink: first to the point beside it, from there to the one on the other side
                cross = side * np.sign(xn - kk) < 0
                beside = np.abs(x - kk) <= 1.5 * _KINK_SIDE
                xn = np.where(cross, kk + np.where(beside, -side, side) * _KINK_SIDE, xn)
                # both points beside the kink send the search across it: the kink itself is the maximum
                stop = (cross & beside & ~(hi - lo > 4.0 * _KINK_SIDE)) | (g == 0)
                step_ok = inside & ~cross
            else:
                stop, step_ok = g == 0, inside
            dx_old, dx = dx, np.abs(xn - x)
            done = live & ((step_ok & ~(dx > _MPP_XTOL)) | stop | ~(hi - lo > _MPP_XTOL))
            # a small step from a secant through close iterates: taken, then only V and J there
            polish = live & ~done & step_ok & use_sec & close & ~(dx > _MPP_POLISH)
        if it >= _MPP_ITERS - 1:
            done = live.copy()
            polish[:] = False
        k = np.flatnonzero(done | polish)
        fx[act[k]], fv[act[k]], fj[act[k]] = x[k], v[k], j[k]
        live &= ~done
        pol = polish
        x_prev, g_prev, x = x, g, np.where(live, xn, x)
        keep = np.flatnonzero(live)
        if keep.size and keep.size <= 0.5 * act.size:   # drop the finished candidates
            act, x, x_prev, g_prev, lo, hi, W, jgen, dx_old, dx, live, pol, kk = (
                a_[keep] for a_ in (act, x, x_prev, g_prev, lo, hi, W, jgen, dx_old, dx, live, pol, kk))
            sub, lv = sub.take(keep), lv.take(keep)
            kinked = bool(np.isfinite(kk).any())
    return fx, fv, fj


def _mpp_candidates(p_scan, xs, found_x, found_p):
    """Brackets around the local maxima of a coarse scan of P not yet found.

    Parameters
    ----------
    p_scan : ndarray (M + 1, n)
        P at the scan points xs (the last one the steady state, P = 0) [mW cm^-2].
    xs : ndarray (M + 1, n)
        Scan points, evenly spaced from the bracket's low end to x_oc [ln cm^-3].
    found_x, found_p : ndarray (n,)
        The maximum already found per point: ln Delta n [ln cm^-3] and P [mW cm^-2].

    Returns
    -------
    point, lo, hi, start: arrays (C,), point the index into the n points.  A scan maximum
    is kept where it lies more than one scan step from found_x and its P is within
    _MPP_KEEP of found_p or above, with the bracket of its two neighbours; the start is the
    vertex of the parabola through the three scan points (else the scan point).
    """
    M1, n = p_scan.shape
    step_all = xs[1] - xs[0]
    with np.errstate(invalid="ignore"):
        is_max = np.isfinite(p_scan)                     # not below either neighbour (the ends: one)
        is_max[1:] &= p_scan[1:] >= p_scan[:-1]
        is_max[:-1] &= p_scan[:-1] > p_scan[1:]
        ref = np.where(np.isfinite(found_p), found_p, -np.inf)
        keep = is_max & (p_scan >= ref - _MPP_KEEP * np.abs(ref)) & ~(np.abs(xs - found_x) <= step_all)
    pt, i = np.nonzero(keep.T)                           # ordered by point
    step = step_all[pt]
    centre = xs[i, pt]
    lo = np.maximum(centre - step, xs[0, pt])
    hi = np.minimum(centre + step, xs[-1, pt])
    with np.errstate(invalid="ignore", divide="ignore"):
        im = np.clip(i, 1, M1 - 2)
        p0, p1, p2 = p_scan[im - 1, pt], p_scan[im, pt], p_scan[im + 1, pt]
        vertex = xs[im, pt] + 0.5 * step * (p0 - p2) / (p0 - 2.0 * p1 + p2)
    start = np.where((vertex > lo) & (vertex < hi), vertex, centre)
    start = np.where((start > lo) & (start < hi), start, 0.5 * (lo + hi))
    return pt, lo, hi, start


#: distance from a kink of P at which its sides are evaluated [ln cm^-3] (> _SHIFT_STEP)
_KINK_SIDE = 1e-5
#: an SRH level whose lifetime rises by more than this factor from low to high injection can
#: give P a second maximum (a shoulder of the J-V); only then is P scanned [-] (see `_srh_rising`)
_SRH_RISE = 5.0


def _srh_rising(prep, shift):
    """True where an SRH level's lifetime rises with injection by more than _SRH_RISE [-].

    P = V J is concave in V (one maximum) where the recombination current is convex in V,
    U'' V' >= U' V'' in x = ln Delta n.  With Boltzmann levels and no narrowing
    V''/V' = 1 - (u^2 + w^2)/(u + w) <= 1 (u = Delta n/n, w = Delta n/p), so it suffices that
    every mechanism has a (a - 1) + a' >= 0, a = d ln U_i/dx: radiative, Auger and J0
    surfaces (X = Delta n (gamma + Delta n) times a constant or a power, gamma = n0 + p0) and S
    surfaces have a >= 1, a' >= 0.  One SRH level,
    U = (a_n a_p / (a_n + a_p)) X / (delta + Delta n),
    delta = (a_n (n0 + n1) + a_p (p0 + p1)) / (a_n + a_p) (a_n = 1/tau_n0, a_p = 1/tau_p0), has
    a (a - 1) + a' = 2 (s - r)(1 - r), s = Delta n/(gamma + Delta n), r = Delta n/(delta + Delta n):
    >= 0 exactly where delta >= gamma, i.e. where its lifetime does not rise with injection
    (it rises by gamma / delta from low to high injection).  A rising lifetime can give the
    J-V a shoulder and P a second maximum: a dense-grid check of that one-level model
    (Boltzmann levels, any injection and minority density) finds none below gamma/delta ~ 50;
    P is scanned from a factor 10 below that.  n1, p1 scale by e^(shift/2) with the injection
    narrowing: delta is taken at the smaller of 1 and e^(shift/2).

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the n points.
    shift : ndarray (n,) or float
        The narrowing shift at the steady state [-].

    Returns
    -------
    ndarray (n,) of bool.
    """
    if not prep.n1.shape[-1]:
        return np.zeros(len(prep), bool)
    a, b = prep.srh_a, prep.srh_b
    m = np.exp(0.5 * np.minimum(np.asarray(shift, dtype=float), 0.0))[..., None]
    gamma = (prep.n0 + prep.p0)[:, None]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        delta = (a * (prep.n0[:, None] + prep.n1 * m) + b * (prep.p0[:, None] + prep.p1 * m)) / (a + b)
        return np.any((a > 0) & (b > 0) & ~(gamma <= _SRH_RISE * delta), axis=-1)


def _narrowing_kink_x(prep):
    """ln Delta n [ln cm^-3] where the Schenk 1998 ion term's cap switches (NaN where none).

    `optogen.equilibrium.bgn_schenk1998` caps the ion density at the free-carrier density
    n + p: the narrowing, and so the splitting and P = V J, have a kink where
    n0 + p0 + 2 Delta n = N_D + N_A (the same point `PreparedRates._shift_integral` splits at).
    There the narrowing's slope falls, the splitting's rises: P can have a local maximum on
    each side.

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the n points.

    Returns
    -------
    ndarray (n,): ln Delta n of the kink [ln cm^-3], NaN without one.
    """
    if not prep.inj_bgn:
        return np.full(len(prep), np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        k = 0.5 * (prep.nd + prep.na - prep.n0 - prep.p0)
        return np.where(k > 0, np.log(np.where(k > 0, k, 1.0)), np.nan)


def _best(pt, n, fx, fv, fj):
    """Per point (0..n-1) the candidate with the highest P = V J; NaN where a point has none.

    Parameters
    ----------
    pt : ndarray (C,)
        Point of each candidate [-].
    n : int
        Number of points [-].
    fx, fv, fj : ndarray (C,)
        ln Delta n [ln cm^-3], V [V], J [mA cm^-2] of each candidate.

    Returns
    -------
    x, V, J: arrays (n,).
    """
    with np.errstate(invalid="ignore"):
        fp = fv * fj
    key = np.where(np.isfinite(fp), fp, -np.inf)
    top = np.full(n, -np.inf)
    np.maximum.at(top, pt, key)
    idx = np.flatnonzero(key == top[pt])[::-1]
    win = np.full(n, -1)
    win[pt[idx]] = idx                                   # the first best candidate of each point
    return tuple(np.where(win >= 0, a_[np.maximum(win, 0)], np.nan) for a_ in (fx, fv, fj))


def _other_side_of_kink(prep, levels, W, jgen, voc, lo, x_oc, x, v, j, kink):
    """Candidates on the far side of a kink of P from the maximum found (x, V, J per point).

    Below the kink every P is at most V(kink-) J_gen, above it at most Voc J(kink+) (V rises,
    J falls with Delta n): where that bound does not exceed the P found, nothing to do.
    Elsewhere dP/dx at the side point (kink -+ _KINK_SIDE) says whether that side holds a
    maximum inside (dP/dx < 0 below, > 0 above: searched from the side point's diode-model
    step) or at the side point itself (taken as it is).

    Parameters
    ----------
    prep, levels : PreparedRates, _Levels
        The n points.
    W, jgen, voc, lo, x_oc : ndarray (n,)
        Thickness [cm], J_gen [mA cm^-2], Voc [V], the bracket [ln cm^-3].
    x, v, j : ndarray (n,)
        The maximum found: ln Delta n [ln cm^-3], V [V], J [mA cm^-2].
    kink : ndarray (n,)
        `_narrowing_kink_x` [ln cm^-3].

    Returns
    -------
    (pt, lo, hi, start) to search, (pt, x, V, J) taken.
    """
    none_s = (np.empty(0, int),) + tuple(np.empty(0) for _ in range(3))
    with np.errstate(invalid="ignore"):
        ids = np.flatnonzero((kink - _KINK_SIDE > lo) & (kink + _KINK_SIDE < x_oc) & np.isfinite(x)
                             & (np.abs(kink - x) > _KINK_SIDE))
    if ids.size == 0:
        return none_s, none_s
    below = kink[ids] < x[ids]                           # the other side is below the kink
    xs = np.where(below, kink[ids] - _KINK_SIDE, kink[ids] + _KINK_SIDE)
    sub, lv = prep.take(ids), levels.take(ids)
    no = np.zeros(ids.size, bool)
    vs, js, _, _, _, _ = _power_point(sub, W[ids], jgen[ids], xs, lv, need=no)
    p_found = v[ids] * j[ids]
    with np.errstate(invalid="ignore"):
        bound = np.where(below, vs * jgen[ids], voc[ids] * js)
        go = np.flatnonzero(bound > p_found)
    if go.size == 0:
        return none_s, none_s
    ids, below, xs = ids[go], below[go], xs[go]
    v2, j2, dv2, dj2, _, _ = _power_point(sub.take(go), W[ids], jgen[ids], xs, lv.take(go))
    with np.errstate(invalid="ignore", over="ignore"):
        g = dv2 * j2 + v2 * dj2
        inner = np.where(below, g < 0, g > 0)             # a maximum inside that side
        lo2 = np.where(below, lo[ids], xs)
        hi2 = np.where(below, xs, x_oc[ids])
        t = xs + _diode_model_step(v2, j2, dv2, dj2, jgen[ids])
        start = np.where((t > lo2) & (t < hi2), t, 0.5 * (lo2 + hi2))
    s_, t_ = np.flatnonzero(inner), np.flatnonzero(~inner)
    return (ids[s_], lo2[s_], hi2[s_], start[s_]), (ids[t_], xs[t_], v2[t_], j2[t_])


def _mpp_flat(prep, W, jgen, voc, dn_oc, shift_oc=None):
    """Maximum-power point (vmp [V], jmp [mA cm^-2]) on the implied J-V, parametrised by Delta n.

    Each Delta n is an operating point with V = the splitting (the definition of `_state_flat`)
    and J = J_gen - q W U(Delta n); the power P = V J is maximised over x = ln Delta n in
    [x_oc - L, x_oc], L = 4 (ln(1 + Voc/kT) + 1), which holds the maximum for every diode
    ideality above 1/3 (Voc - Vmp ~ m kT (ln(1 + Voc/(m kT)) + 1)):

    1. At the steady state x_oc (J = 0, V = Voc) the analytic slopes (`_power_point`) give
       whether the splitting falls there (`splitting_falls`: vmp, jmp NaN) and a start, the
       maximum of the local diode model (`_diode_model_step`).
    2. `_mpp_newton` from there on the whole bracket.  Where an SRH level's lifetime rises
       strongly with injection (`_srh_rising`) P can have a second maximum (a shoulder of the
       J-V): there a coarse scan of P (`_scan_power`, no narrowing evaluation) finds the local
       maxima, and each one away from the maximum found, within _MPP_KEEP of it or above, is
       refined too (`_mpp_candidates`).
    3. With the Schenk narrowing, whose ion-density cap gives P a kink (`_narrowing_kink_x`),
       the far side of the kink from the maximum found is searched too unless a bound rules
       it out (`_other_side_of_kink`).  The highest P wins.
    Parametrised by Delta n the curve passes exactly through (Voc, 0) at the steady state
    dn_oc, also where a strong injection narrowing makes the splitting fall with Delta n
    (Si below ~20 K with schenk1998), so that V -> J is not single-valued: there vmp and jmp
    are NaN, as where dn_oc is not positive.  V at the maximum uses the series levels of
    `_fast_levels` (within 1e-12 kT of the exact ones).

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the P points.
    W : float or ndarray (P,)
        Thickness [cm].
    jgen : ndarray (P,)
        Photocurrent J_gen [mA cm^-2].
    voc : ndarray (P,)
        Implied Voc, the steady-state splitting [V].
    dn_oc : ndarray (P,)
        Steady-state Delta n at J_gen / (q W) [cm^-3].
    shift_oc : ndarray (P,) or float, optional
        The narrowing shift at dn_oc (`PreparedRates.ni2_shift`) if already known [-]: the
        solve's, so that the narrowing is not evaluated there again.

    Returns
    -------
    vmp [V], jmp [mA cm^-2]: arrays (P,).
    """
    P = len(prep)
    Wf = np.broadcast_to(np.asarray(W, dtype=float), (P,))
    jgen = np.broadcast_to(np.asarray(jgen, dtype=float), (P,))
    voc = np.broadcast_to(np.asarray(voc, dtype=float), (P,))
    vmp, jmp = np.full(P, np.nan), np.full(P, np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        x_oc = np.log(dn_oc)
    ids = np.flatnonzero((dn_oc > 0) & np.isfinite(x_oc))
    if ids.size == 0:
        return vmp, jmp
    cur = prep.take(ids) if ids.size < P else prep
    levels = _fast_levels(cur)
    xo, jg, cw, vo = x_oc[ids], jgen[ids], Wf[ids], voc[ids]
    so = None if shift_oc is None or not cur.inj_bgn else np.broadcast_to(shift_oc, (P,))[ids]
    # 1. the steady state: slopes, `splitting_falls`, the start
    _, j_o, dv_o, dj_o, s_o, ds_o = _power_point(cur, cw, jg, xo, levels, so)
    if cur.inj_bgn:
        rise = np.flatnonzero(~(dv_o < 0))
        if rise.size < ids.size:
            ids, xo, jg, cw, vo, j_o, dv_o, dj_o, s_o, ds_o = (
                a_[rise] for a_ in (ids, xo, jg, cw, vo, j_o, dv_o, dj_o, s_o, ds_o))
            cur, levels = cur.take(rise), levels.take(rise)
        if ids.size == 0:
            return vmp, jmp
    n = ids.size
    with np.errstate(over="ignore", invalid="ignore", divide="ignore", under="ignore"):
        lo = xo - 4.0 * (np.log1p(np.maximum(vo / cur.kT, 0.0)) + 1.0)
        x_start = xo + _diode_model_step(vo, j_o, dv_o, dj_o, jg)
        x_start = np.where((x_start > lo) & (x_start < xo), x_start, 0.5 * (lo + xo))
    # 2. Newton from the steady state's side over the whole bracket
    kink = _narrowing_kink_x(cur)
    fx, fv, fj = _mpp_newton(cur, levels, cw, jg, x_start, lo, xo.copy(), kink)
    # where an SRH lifetime rises strongly, a scan for a higher maximum elsewhere
    scan = np.flatnonzero(_srh_rising(cur, s_o if cur.inj_bgn else 0.0))
    if scan.size:
        ssub, slv = (cur.take(scan), levels.take(scan)) if scan.size < n else (cur, levels)
        p_scan, xs = _scan_power(ssub, slv, cw[scan], jg[scan], lo[scan], xo[scan], j_o[scan], vo[scan],
                                 s_o[scan] if cur.inj_bgn else None, ds_o[scan] if cur.inj_bgn else None)
        with np.errstate(invalid="ignore"):
            spt, slo, shi, sx = _mpp_candidates(p_scan, xs, fx[scan], fv[scan] * fj[scan])
        if spt.size:
            kp = scan[spt]
            gx, gv, gj = _mpp_newton(cur.take(kp), levels.take(kp), cw[kp], jg[kp], sx, slo, shi, kink[kp])
            pt = np.concatenate([np.arange(n), kp])
            fx, fv, fj = _best(pt, n, *(np.concatenate(z) for z in zip((fx, fv, fj), (gx, gv, gj))))
    # 3. the other side of a kink of the narrowing
    if cur.inj_bgn:
        (kp, klo, khi, kx), taken = _other_side_of_kink(cur, levels, cw, jg, vo, lo, xo, fx, fv, fj, kink)
        if kp.size or taken[0].size:
            gx, gv, gj = _mpp_newton(cur.take(kp), levels.take(kp), cw[kp], jg[kp], kx, klo, khi) \
                if kp.size else (np.empty(0),) * 3
            pt = np.concatenate([np.arange(n), kp, taken[0]])
            fx, fv, fj = _best(pt, n, *(np.concatenate(z) for z in zip((fx, fv, fj), (gx, gv, gj), taken[1:])))
    ok = np.isfinite(fx)
    vmp[ids[ok]], jmp[ids[ok]] = fv[ok], fj[ok]
    return vmp, jmp


def _scan_power(prep, levels, W, jgen, lo, x_oc, j_oc, voc, s_oc, ds_oc):
    """P = V J at _MPP_SCAN + 1 evenly spaced x = ln Delta n from lo to x_oc, without the narrowing.

    The injection narrowing's shift is modelled from its value and slope at x_oc as
    s_oc e^(kappa (x - x_oc)), kappa = d ln s/dx at x_oc clipped to [0, 1] (e^x: the linear
    low-injection limit); P at x_oc is Voc J(x_oc).  Only used to find the local maxima.

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the n points.
    levels : _Levels
        Their levels.
    W, jgen : ndarray (n,)
        Thickness [cm] and photocurrent [mA cm^-2].
    lo, x_oc : ndarray (n,)
        The bracket [ln cm^-3].
    j_oc, voc : ndarray (n,)
        J [mA cm^-2] and V [V] at x_oc.
    s_oc, ds_oc : ndarray (n,) or None
        The shift and its slope at x_oc [-] (None without injection narrowing).

    Returns
    -------
    p_scan [mW cm^-2], xs [ln cm^-3]: arrays (_MPP_SCAN + 1, n).
    """
    xs = lo + (x_oc - lo) * (np.arange(_MPP_SCAN + 1)[:, None] / _MPP_SCAN)
    p_scan = np.empty(xs.shape)
    c = q_C * W * 1e3
    with np.errstate(over="ignore", invalid="ignore", divide="ignore", under="ignore"):
        kappa = None if s_oc is None else np.clip(
            np.where(s_oc != 0, ds_oc / np.where(s_oc != 0, s_oc, 1.0), 0.0), 0.0, 1.0)
        for i in range(_MPP_SCAN):
            x = xs[i]
            d = np.exp(x)
            s = 0.0 if s_oc is None else s_oc * np.exp(kappa * (x - x_oc))
            p_scan[i] = prep.kT * (levels(x, d) - s) * (jgen - c * sum(prep.rates(d, s)))
        p_scan[-1] = voc * j_oc
    return p_scan, xs


def splitting_falls(prep, x_oc, levels=None):
    """True where the splitting falls as Delta n rises at ln Delta n = x_oc [-].

    d(splitting)/d(Delta n) < 0 means the chemical potential of an electron-hole pair falls as
    pairs are added: the uniform electron-hole plasma is thermodynamically unstable (it would
    separate into dense droplets and a dilute gas, the electron-hole liquid of Si below ~25 K;
    T. M. Rice, Solid State Phys. 32, 1 (1977), from memory).  It happens where an
    injection-dependent narrowing (schenk1998 at low temperature) outgrows the carriers'
    kinetic term.  There V -> J is not single-valued and the implied FF, Vmp, Jmp do not apply.

    Parameters
    ----------
    prep : PreparedRates
        Per-point constants of the P points.
    x_oc : ndarray (P,)
        ln Delta n at the steady state [ln cm^-3].
    levels : callable, optional
        From `_fast_levels(prep)`.

    Returns
    -------
    ndarray (P,) of bool
        True where the slope d(eta_n + eta_p)/dx - d shift/dx < 0 [-], the levels' slope
        analytic and the narrowing's from `_shift_slope` (the test `_mpp_flat` applies).

    References
    ----------
    T. M. Rice, Solid State Phys. 32, 1 (1977) (the electron-hole liquid; from memory).
    """
    x_oc = np.asarray(x_oc, dtype=float)
    if not prep.inj_bgn:
        return np.zeros(x_oc.shape, bool)     # without injection narrowing the levels only rise
    levels = _fast_levels(prep) if levels is None else levels
    with np.errstate(over="ignore", invalid="ignore", under="ignore"):
        d = np.exp(x_oc)
        shift = prep.ni2_shift(d, precise=False)
        _, deta = levels(x_oc, d, slope=True)
        return np.isfinite(x_oc) & (deta - _shift_slope(prep, d, shift) < 0)


# ---------------------------------------------------------------------------
# Public API
# ---------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SteadyState:
    """The uniform steady state at every operating point (arrays, one shape).

    At a point with converged = False every level, density and lifetime is NaN (the point
    is outside what the models support, see `solve`).

    Parameters
    ----------
    delta_n_cm3, delta_p_cm3, n_cm3, p_cm3 : ndarray
        Excess and total densities [cm^-3].
    np_over_ni2, log10_np_over_ni2 : ndarray
        n p / n_i,eff^2 and its log10 [-].
    splitting_eV, implied_voc_V : ndarray
        Quasi-Fermi-level splitting [eV] and the implied Voc, the same number [V].
    implied_ff : ndarray
        Implied fill factor [-] (NaN at G = 0, and where `splitting_falls`).
    tau_eff_s, tau_srh_s, tau_radiative_s, tau_auger_s, tau_surface_s : ndarray
        Lifetimes [s] (inf: mechanism absent).
    electron_qfl_eV, hole_qfl_eV : ndarray
        Quasi-Fermi levels from Ev [eV].
    injection_ratio : ndarray
        Delta n / max(n0, p0) [-].
    generation_cm3_s : ndarray
        G [cm^-3 s^-1].
    residual : ndarray
        |G - U| / G [-].
    converged : ndarray of bool
        The root met the residual and lies within the models' range.
    limiting_mechanism : ndarray of str
        The mechanism with the largest rate.
    degenerate : ndarray of bool
        A quasi-Fermi level within 3 kT of its band edge or inside the band (Fermi-Dirac
        statistics then make a splitting above the gap possible).
    effective_gap_eV : ndarray
        Ec - Ev under light, with the injection-dependent narrowing [eV].
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
        """The DESIGN.md ``steady_state`` keys (tau_s nested).

        Returns
        -------
        dict
            Floats (inf/NaN -> None) for one point, arrays (inf/NaN -> NaN) otherwise.
        """
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

    Bracketed in ln(Delta n), then Illinois regula falsi on ln U - ln G (see `_solve_flat`:
    first with n_i,eff at its dark value, where U is monotonic, then from that root with
    the injection-dependent narrowing); each point to |G - U| <= 1e-10 G.  A point that
    misses it, or whose root lies above DN_MAX_CM3 (beyond the models' range), is flagged
    converged = False and its levels, densities, lifetimes and FF are NaN (never a number
    the models cannot support).  G = 0 gives Delta n = 0 exactly; a G so small that Delta n
    lies below 1e-304 cm^-3 gives the linear answer G tau_low-injection (residual then limited
    by the few digits of a subnormal Delta n below 2.2e-308 cm^-3).  implied_ff is computed
    from the same splitting as splitting_eV (see `implied_jv`), by `_mpp_flat`; the injection
    narrowing at the root is evaluated once and shared by the levels, the rates, the residual
    and the FF.

    Parameters
    ----------
    material : Material
        The absorber.
    eq : Equilibrium
        Its dark state (arrays).
    recombination : Recombination
        The mechanisms.
    generation_cm3_s : float or array_like
        Average generation rate G >= 0, any shape broadcasting with eq [cm^-3 s^-1].
    thickness_cm : float or array_like
        W [cm].
    with_ff : bool
        Also compute implied_ff (else NaN) [-].
    chunk_size : int
        Points per chunk (bounds the working memory) [-].

    Returns
    -------
    SteadyState
        Every field of the broadcast shape of eq, G and W (0-d arrays for one point).

    Raises
    ------
    InputError
        For G < 0, W <= 0, or shapes that do not broadcast.

    References
    ----------
    M. Dowell and P. Jarratt, BIT 11, 168 (1971), doi:10.1007/BF01934364 (the Illinois
    method; DOI from memory).
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
        st, shift, u = _state_flat(prep, dn, extras=True)       # the narrowing at dn evaluated once
        with np.errstate(invalid="ignore", divide="ignore"):
            st["residual"] = np.where(g > 0, np.abs(g - u) / np.where(g > 0, g, 1.0), 0.0)
        st["converged"] = conv
        st["generation_cm3_s"] = g
        st["implied_ff"] = np.full(idx.size, np.nan)
        if with_ff:
            lit = np.flatnonzero((g > 0) & conv & (dn > 0) & (st["splitting_eV"] > 0))
            if lit.size:
                sub = prep.take(lit) if lit.size < idx.size else prep
                W = _thickness_flat(thickness_cm, shape, idx[lit])
                jgen = q_C * W * g[lit] * 1e3
                voc = st["splitting_eV"][lit]          # implied Voc = the splitting (one definition)
                vmp, jmp = _mpp_flat(sub, W, jgen, voc, dn_oc=dn[lit],
                                     shift_oc=shift[lit] if np.ndim(shift) else shift)
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


def solve_chunked(material, recombination: Recombination, T_K, donors_cm3, acceptors_cm3,
                  generation_cm3_s, thickness_cm, *, chunk_size: int = _CHUNK,
                  fields_out=("delta_n_cm3", "implied_voc_V", "tau_eff_s", "converged"),
                  equilibrium_kwargs=None, progress=None) -> dict:
    """Steady state for very many points with bounded memory (equilibrium computed per chunk).

    Parameters
    ----------
    material : Material
        The absorber.
    recombination : Recombination
        The mechanisms.
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].
    generation_cm3_s : array_like
        Average generation rate [cm^-3 s^-1].
    thickness_cm : array_like
        W [cm]; all five arrays broadcast to one shape.
    chunk_size : int
        Points per chunk [-].
    fields_out : tuple of str
        `SteadyState` field names kept [-].
    equilibrium_kwargs : dict, optional
        Passed to optogen.equilibrium.equilibrium (bgn_model defaults to the recombination's).
    progress : callable, optional
        Called with the number of points done after each chunk [-].

    Returns
    -------
    dict
        Field name -> array of the broadcast shape (implied_ff is not computed), in the unit
        of the field's suffix.
    """
    from .equilibrium import equilibrium
    args = [np.asarray(a, dtype=float) for a in (T_K, donors_cm3, acceptors_cm3, generation_cm3_s,
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

    Parameters
    ----------
    voltage_V, current_mA_cm2 : ndarray (..., M)
        The curve [V], [mA cm^-2].
    jsc_mA_cm2 : ndarray
        Short-circuit current, the photocurrent [mA cm^-2].
    voc_V, vmp_V : ndarray
        Open-circuit and maximum-power voltages [V].
    jmp_mA_cm2 : ndarray
        Current at maximum power [mA cm^-2].
    pmax_mW_cm2 : ndarray
        Maximum power [mW cm^-2].
    ff : ndarray
        Fill factor [-].
    efficiency : ndarray or None
        P_max over the incident power [-] (None without an irradiance).
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
               voltages_V=None, irradiance_W_m2=None, points: int = 101, *,
               state: SteadyState | None = None) -> ImpliedJV:
    """Implied J-V: J(V) = J_gen - q W U(Delta n(V)), Delta n(V) the excess density with splitting V.

    V is the quasi-Fermi-level splitting of `solve` (Fermi-Dirac or Boltzmann, as the narrowing
    model's statistics), so Voc_V is exactly the steady-state splitting_eV under
    G = J_gen / (q W) and the curve ends at (Voc, 0).  The maximum-power point by a
    safeguarded Newton iteration over Delta n (`_mpp_flat`); vmp, jmp, pmax, ff, efficiency
    are NaN where the splitting falls as Delta n rises at the steady state (`splitting_falls`:
    an unstable uniform plasma, V -> J not single-valued); efficiency is also NaN where P_max
    would exceed the incident power (a splitting above the photon energy: population inversion).

    Parameters
    ----------
    material : Material
        The absorber.
    eq : Equilibrium
        Its dark state (arrays).
    recombination : Recombination
        The mechanisms.
    thickness_cm : float or array_like
        W [cm].
    photocurrent_mA_cm2 : float or array_like
        J_gen > 0, broadcasting with eq [mA cm^-2].
    voltages_V : array_like (M,), optional
        Voltage grid [V] (default: `points` values from 0 to Voc per point).
    irradiance_W_m2 : float or array_like, optional
        Incident irradiance for the efficiency [W m^-2].
    points : int
        Grid size of the default voltage grid [-].
    state : SteadyState, optional
        The steady state of these same inputs at G = J_gen / (q W) (from `solve`), when the
        caller already has it: it is then not solved again.  Its shape must be the broadcast
        shape of eq, J_gen and W and its generation_cm3_s G to 1e-9 relative; default: solved here.

    Returns
    -------
    ImpliedJV
        voltage_V, current_mA_cm2 (..., M) [V], [mA cm^-2]; jsc_mA_cm2, voc_V, vmp_V, jmp_mA_cm2,
        pmax_mW_cm2, ff, efficiency [mA cm^-2, V, V, mA cm^-2, mW cm^-2, -, -].

    Raises
    ------
    InputError
        For J_gen <= 0, W <= 0, a negative voltage, or a `state` that is not the steady
        state of these inputs.

    References
    ----------
    The implied J-V (the quasi-Fermi-level splitting as the voltage, J = J_gen - q W U) is
    common practice in lifetime-based cell analysis; the splitting follows P. Wurfel, J. Phys. C
    15, 3967 (1982), doi:10.1088/0022-3719/15/18/012 (from memory).
    """
    jg = np.asarray(photocurrent_mA_cm2, dtype=float)
    check_range("generation.photocurrent_mA_cm2", jg, 0.0, None, low_open=True, unit="mA cm^-2")
    check_range("absorber.thickness_um", thickness_cm, 0.0, None, low_open=True)
    G = jg * 1e-3 / (q_C * np.asarray(thickness_cm, dtype=float))
    if state is None:
        ss = solve(material, eq, recombination, G, thickness_cm, with_ff=False)
    else:
        ss = _check_state(state, _shape(eq, G, thickness_cm), G)
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


def _check_state(state, shape, G):
    """The `SteadyState` given to `implied_jv`, checked to be the one of its inputs.

    Parameters
    ----------
    state : SteadyState
        From `solve` [-].
    shape : tuple
        The broadcast shape of the inputs [-].
    G : ndarray
        J_gen / (q W) [cm^-3 s^-1].

    Returns
    -------
    SteadyState: state itself.
    """
    if not isinstance(state, SteadyState):
        raise InputError("state", type(state).__name__, "a SteadyState from optogen.steady_state.solve")
    if np.shape(state.delta_n_cm3) != tuple(shape):
        raise InputError("state", f"shape {np.shape(state.delta_n_cm3)}",
                         f"the steady state of these inputs, shape {tuple(shape)}")
    g = np.broadcast_to(G, shape)
    with np.errstate(invalid="ignore"):
        same = np.abs(np.asarray(state.generation_cm3_s, dtype=float) - g) <= 1e-9 * np.abs(g)
    if not np.all(same):
        bad = np.asarray(state.generation_cm3_s, dtype=float)[~same].flat[0]
        raise InputError("state.generation_cm3_s", float(bad),
                         "the generation of these inputs, J_gen / (q W), to 1e-9 relative",
                         "solve the steady state at G = photocurrent_mA_cm2 * 1e-3 / (q W)")
    return state


@dataclass(frozen=True, eq=False)
class LifetimeCurve:
    """Effective lifetime and each mechanism's lifetime over an excess-density range.

    Parameters
    ----------
    delta_n_cm3 : ndarray (D,)
        Excess densities [cm^-3].
    tau_eff_s, tau_srh_s, tau_radiative_s, tau_auger_s, tau_surface_s : ndarray (..., D)
        Lifetimes [s] (inf where a mechanism is absent).
    """

    delta_n_cm3: np.ndarray
    tau_eff_s: np.ndarray
    tau_srh_s: np.ndarray
    tau_radiative_s: np.ndarray
    tau_auger_s: np.ndarray
    tau_surface_s: np.ndarray


def lifetime_curve(material, eq, recombination: Recombination, thickness_cm, delta_n_cm3=None) -> LifetimeCurve:
    """tau_eff(Delta n) and each mechanism's tau = Delta n / U_x, ready for a plot.

    Parameters
    ----------
    material : Material
        The absorber.
    eq : Equilibrium
        Its dark state (any shape S).
    recombination : Recombination
        The mechanisms.
    thickness_cm : float or array_like
        W [cm].
    delta_n_cm3 : array_like (D,), optional
        Excess densities > 0 (default 1e12..1e17, 51 log-spaced) [cm^-3].

    Returns
    -------
    LifetimeCurve
        Lifetimes of shape S + (D,) [s].
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

    For a depth-resolved profile: the state at a chosen plane.

    Parameters
    ----------
    material : Material
        The absorber.
    eq : Equilibrium
        Its dark state.
    recombination : Recombination
        The mechanisms.
    delta_n_cm3 : float or array_like
        Excess density >= 0 [cm^-3].
    thickness_cm : float or array_like
        W [cm].

    Returns
    -------
    dict
        Arrays of the broadcast shape of eq, delta_n_cm3 and thickness_cm, keyed as the
        `SteadyState` fields (delta_n_cm3 [cm^-3], splitting_eV [eV], tau_*_s [s], ...).
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
