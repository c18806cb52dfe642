"""Implied fill factor: the maximum of V J over the implied J-V, against an outside maximisation.

The reference (`_reference_ff`) uses only the public API - the splitting of `state_at` and the rates of
`Recombination.rates` at a given Delta n - and maximises P = V (J_gen - q W U) over x = ln Delta n by a
dense grid over 40 ln-units below the steady state (global) refined by scipy.optimize.minimize_scalar
(bounded Brent, xatol 1e-10): nothing of the solver's own search (bracket, diode model, scan, Newton).
Expected agreement: the solver stops within ~1e-5 in x of the maximum, where P is flat (an error dx
costs ~|P''/P| dx^2 / 2 of the FF, |P''/P| <= 2 per ln-unit squared: below 1e-9), and its levels are
within 1e-12 kT of those of `state_at`; the tolerance is 1e-8 (the requirement on the FF is 1e-6).
"""
import dataclasses

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from optogen import materials
from optogen.constants import kT_eV, q_C
from optogen.equilibrium import equilibrium
from optogen.errors import InputError
from optogen.recombination import Defect, PreparedRates, Recombination
from optogen.steady_state import implied_jv, solve, state_at

SI = materials.get("Si")
SUN_CM2_S = 2.5e17          # ~40 mA cm^-2 of absorbed one-sun photons, per cm^2 [cm^-2 s^-1] (common practice)
FF_TOL = 1e-8
GRID, SPAN = 4001, 40.0     # dense grid: 4001 points over 40 ln-units below the steady state


def _one(eq, i):
    """The equilibrium of case i (every array field indexed)."""
    return dataclasses.replace(eq, **{f.name: getattr(eq, f.name)[i] for f in dataclasses.fields(eq)
                                      if isinstance(getattr(eq, f.name), np.ndarray)
                                      and getattr(eq, f.name).ndim >= 1})


def _power(material, eq, rec, W, jgen, x):
    """V J [mW cm^-2] at Delta n = e^x through the public API only (state_at, Recombination.rates)."""
    dn = np.exp(x)
    v = state_at(material, eq, rec, dn, W)["splitting_eV"]
    u = sum(rec.rates(material, eq, dn, W).values())
    return v * (jgen - q_C * W * u * 1e3)


def _reference_ff(material, eq, rec, W, G, ss):
    """FF = max P / (Voc J_gen) by the outside maximisation described in the module docstring (NaN where
    the steady state has no positive Delta n)."""
    W = np.broadcast_to(np.asarray(W, dtype=float), G.shape)
    jgen = q_C * W * G * 1e3
    x_oc = np.log(ss.delta_n_cm3)
    t = np.linspace(-SPAN, 0.0, GRID)
    ff = np.full(G.shape, np.nan)
    for i in range(G.size):
        if not (ss.converged[i] and ss.delta_n_cm3[i] > 0):
            continue
        e1 = _one(eq, i)
        p = _power(material, e1, rec, W[i], jgen[i], x_oc[i] + t)
        k = int(np.argmax(p))
        lo, hi = t[max(k - 1, 0)], t[min(k + 1, GRID - 1)]
        best = minimize_scalar(lambda s: -float(_power(material, e1, rec, W[i], jgen[i], x_oc[i] + s)),
                               bounds=(lo, hi), method="bounded", options={"xatol": 1e-10})
        ff[i] = max(-best.fun, p[k]) / (ss.splitting_eV[i] * jgen[i])
    return ff


def _cases(rng, n, T, logN, log_suns, W):
    """n random cases: temperature [K], n- or p-type doping, light level, thickness [cm]."""
    T_ = rng.choice(T, n) if isinstance(T, tuple) else rng.uniform(*T, n)
    N = 10 ** rng.uniform(*logN, n)
    ntype = rng.random(n) < 0.5
    W_ = rng.choice(W, n)
    G = SUN_CM2_S * 10 ** rng.uniform(*log_suns, n) / W_
    return T_, np.where(ntype, N, 0.0), np.where(ntype, 0.0, N), G, W_


FE = Defect("Fe_i", 0.38, "Ev", 5e-14, 7e-17, density_cm3=1e11)
FEB = Defect("FeB", 0.26, "Ec", 5e-15, 3e-15, density_cm3=1e12)
MIDGAP = Defect("mid", tau_n0_s=1e-4, tau_p0_s=1e-4)
SI_RECS = {
    "schenk+Fe_i+J0": Recombination(bgn_model="schenk1998", front_J0_fA_cm2=5.0, rear_J0_fA_cm2=20.0, defects=(FE,)),
    "schenk+FeB+S": Recombination(bgn_model="schenk1998", front_S_cm_s=30.0, rear_S_cm_s=1e3, defects=(FEB, MIDGAP)),
    "schenk intrinsic": Recombination(bgn_model="schenk1998"),
    "none+Fe_i": Recombination(bgn_model="none", front_J0_fA_cm2=10.0, defects=(FE,)),
    "klaassen+J0": Recombination(bgn_model="klaassen1992", front_J0_fA_cm2=10.0, rear_S_cm_s=10.0),
}


@pytest.mark.parametrize("name", list(SI_RECS))
def test_si_ff_equals_outside_maximum(name):
    # Si with Richter 2012 (the default intrinsic model for Si), 77-600 K, 1e13-1e19 cm^-3 n and p,
    # 1e-4..1e4 suns, 10 um and 1 mm, with defects and surfaces
    rec = SI_RECS[name]
    rng = np.random.default_rng(11 + list(SI_RECS).index(name))
    T, nd, na, G, W = _cases(rng, 24, (77.0, 150.0, 300.0, 450.0, 600.0), (13.0, 19.0), (-4.0, 4.0), (1e-3, 0.1))
    eq = equilibrium(SI, T, nd, na, bgn_model=rec.bgn_model)
    ss = solve(SI, eq, rec, G, W)
    ref = _reference_ff(SI, eq, rec, W, G, ss)
    assert np.array_equal(np.isnan(ss.implied_ff), np.isnan(ref))
    assert np.nanmax(np.abs(ss.implied_ff - ref)) <= FF_TOL
    assert np.all((ss.implied_ff[np.isfinite(ref)] > 0.24) & (ss.implied_ff[np.isfinite(ref)] < 1.0))


def test_random_defects_ff_equals_outside_maximum():
    # SRH levels anywhere in the gap with capture cross-sections 1e-17..1e-13 cm^2 either way round
    # (lifetimes that rise or fall with injection, by up to 1e4), with and without injection narrowing
    rng = np.random.default_rng(5)
    for bgn in ("none", "schenk1998"):
        for _ in range(4):
            d = Defect("x", float(rng.uniform(0.1, 1.0)), "Ev", float(10 ** rng.uniform(-17, -13)),
                       float(10 ** rng.uniform(-17, -13)), density_cm3=float(10 ** rng.uniform(10, 13)))
            rec = Recombination(bgn_model=bgn, defects=(d,), front_S_cm_s=float(10 ** rng.uniform(0, 3)))
            T, nd, na, G, W = _cases(rng, 6, (200.0, 400.0), (13.0, 17.0), (-4.0, 3.0), (1e-3, 0.02, 0.1))
            eq = equilibrium(SI, T, nd, na, bgn_model=bgn)
            ss = solve(SI, eq, rec, G, W)
            ref = _reference_ff(SI, eq, rec, W, G, ss)
            assert np.array_equal(np.isnan(ss.implied_ff), np.isnan(ref)), d
            assert np.nanmax(np.abs(ss.implied_ff - ref)) <= FF_TOL, d


@pytest.mark.parametrize("name,kw,T,logN", [("GaAs", {}, (250.0, 400.0), (14.0, 18.0)),
                                            ("HgCdTe", {"composition_x": 0.3}, (77.0, 77.0), (14.0, 16.0)),
                                            ("HgCdTe", {"composition_x": 0.3}, (150.0, 250.0), (14.0, 16.0))])
def test_other_materials_ff_equals_outside_maximum(name, kw, T, logN):
    m = materials.get(name, **kw)
    rec = Recombination(front_S_cm_s=100.0, rear_S_cm_s=1e4, defects=(MIDGAP,))
    rng = np.random.default_rng(3)
    T_, nd, na, G, W = _cases(rng, 12, T, logN, (-3.0, 3.0), (1e-4, 1e-3))
    eq = equilibrium(m, T_, nd, na)
    ss = solve(m, eq, rec, G, W)
    ref = _reference_ff(m, eq, rec, W, G, ss)
    assert np.array_equal(np.isnan(ss.implied_ff), np.isnan(ref))
    assert np.nanmax(np.abs(ss.implied_ff - ref)) <= FF_TOL


def test_shoulder_global_maximum():
    # interstitial iron in lightly doped p-type Si at low light: its SRH lifetime rises ~700x with injection
    # (sigma_n / sigma_p = 5e-14 / 7e-17, Istratov et al. 1999 values as used in optogen), so the implied J-V
    # has a shoulder and P = V J two local maxima (found by the dense grid below); the FF is the higher one
    rec = SI_RECS["schenk+Fe_i+J0"]
    eq = equilibrium(SI, 300.0, 0.0, 1e14, bgn_model="schenk1998")
    G, W = np.array([2.5e16]), 0.1
    ss = solve(SI, eq, rec, G, W)
    jgen = q_C * W * G[0] * 1e3
    t = np.linspace(-SPAN, 0.0, GRID)
    p = _power(SI, eq, rec, W, jgen, np.log(ss.delta_n_cm3[0]) + t)
    peaks = np.flatnonzero((p[1:-1] > p[:-2]) & (p[1:-1] > p[2:])) + 1
    assert peaks.size == 2 and abs(p[peaks[0]] - p[peaks[1]]) > 0.05 * p.max()
    assert ss.implied_ff[0] == pytest.approx(_reference_ff(SI, eq, rec, W, G, ss)[0], abs=FF_TOL)
    assert ss.implied_ff[0] * ss.splitting_eV[0] * jgen >= p.max() * (1 - 1e-12)


def test_kink_of_the_narrowing_cap():
    # boron-doped Si at 77 K is partly frozen out, so the ion term of Schenk 1998 is capped at n + p below
    # Delta n = (N_A - p0) / 2: P has a kink there, with a local maximum on each side (dense grid below)
    rec = SI_RECS["schenk+FeB+S"]
    eq = equilibrium(SI, 77.0, 0.0, 1e15, bgn_model="schenk1998")
    W = 0.016
    G = np.array([1e3 * SUN_CM2_S / W])
    ss = solve(SI, eq, rec, G, W)
    kink = 0.5 * (1e15 - float(eq.p0_cm3) - float(eq.n0_cm3))
    assert 0 < kink < ss.delta_n_cm3[0]
    assert ss.implied_ff[0] == pytest.approx(_reference_ff(SI, eq, rec, W, G, ss)[0], abs=FF_TOL)


def test_nan_where_the_splitting_falls():
    # Si with Schenk 1998 below ~20 K: the splitting falls as Delta n rises at the steady state (unstable
    # plasma, see optogen.steady_state.splitting_falls); the slope is taken here from the public state at
    # Delta n (1 -+ 1e-3) and the FF is NaN exactly there
    rec = Recombination(bgn_model="schenk1998", front_S_cm_s=10.0)
    T = np.array([4.0, 10.0, 20.0, 40.0, 77.0, 300.0])
    eq = equilibrium(SI, T, 1e17, 0.0, bgn_model="schenk1998")
    G = np.full(T.size, SUN_CM2_S / 0.016)
    ss = solve(SI, eq, rec, G, 0.016)
    assert np.all(ss.converged)
    dn = ss.delta_n_cm3[None, :] * np.array([[0.999], [1.001]])
    v = state_at(SI, eq, rec, dn, 0.016)["splitting_eV"]
    falls = v[1] < v[0]
    assert falls[0] and not falls[-1]
    assert np.array_equal(np.isnan(ss.implied_ff), falls)


def test_ideal_diode_limit():
    # constant lifetime in low injection: the ideal diode J = J_gen - J0 expm1(V/kT); its FF maximised
    # independently: v_mp + ln(1 + v_mp) = v_oc (analytic, d(V J)/dV = 0), solved by scipy brentq
    from scipy.optimize import brentq
    no_bulk = SI.with_(auger_Cn_cm6_s=0.0, auger_Cp_cm6_s=0.0, radiative_B_cm3_s=0.0)
    W, tau = 0.016, 1e-5
    rec = Recombination(front_S_cm_s=W / (2 * tau), rear_S_cm_s=W / (2 * tau), bgn_model="none", intrinsic="constant")
    eq = equilibrium(no_bulk, 300.0, 1e17, 0.0, bgn_model="none")
    ss = solve(no_bulk, eq, rec, np.array([1e16, 1e18]), W)       # Delta n = G tau <= 1e13 << n0
    voc = ss.splitting_eV / kT_eV(300.0)
    for i in range(2):
        vmp = brentq(lambda v: v + np.log1p(v) - np.log(np.expm1(voc[i]) + 1.0), 0.0, voc[i])
        ff = vmp * (1.0 - np.expm1(vmp) / np.expm1(voc[i])) / voc[i]
        assert ss.implied_ff[i] == pytest.approx(ff, abs=2e-5)     # Delta n / n0 <= 1e-4 non-ideality


def test_implied_jv_reuses_a_given_state():
    rec = SI_RECS["schenk+Fe_i+J0"]
    eq = equilibrium(SI, [250.0, 300.0, 350.0], [1e15, 0.0, 1e16], [0.0, 1e16, 0.0], bgn_model="schenk1998")
    W, jph = 0.016, np.array([40.0, 4.0, 0.4])
    own = implied_jv(SI, eq, rec, W, jph, irradiance_W_m2=1000.0)
    ss = solve(SI, eq, rec, jph * 1e-3 / (q_C * W), W)
    given = implied_jv(SI, eq, rec, W, jph, irradiance_W_m2=1000.0, state=ss)
    for f in dataclasses.fields(own):
        assert np.array_equal(getattr(own, f.name), getattr(given, f.name), equal_nan=True), f.name
    # the implied J-V's FF is the steady state's
    assert given.ff == pytest.approx(ss.implied_ff, rel=1e-12)
    with pytest.raises(InputError, match="state.generation_cm3_s"):
        implied_jv(SI, eq, rec, W, 2 * jph, state=ss)
    one = equilibrium(SI, 300.0, 0.0, 1e16, bgn_model="schenk1998")
    with pytest.raises(InputError, match="shape"):        # the state of one point for three
        implied_jv(SI, eq, rec, W, jph, state=solve(SI, one, rec, jph[1] * 1e-3 / (q_C * W), W))
    with pytest.raises(InputError, match="SteadyState"):
        implied_jv(SI, eq, rec, W, jph, state={"delta_n_cm3": 1.0})


@pytest.mark.parametrize("name", ["schenk+FeB+S", "schenk+Fe_i+J0", "klaassen+J0", "none+Fe_i"])
def test_slopes_match_difference_quotients(name):
    # dV/dx and dJ/dx (x = ln Delta n) of the implied J-V point, analytic but for the narrowing, against
    # central difference quotients (step 1e-4: truncation ~1e-9 relative) of the public splitting and rates,
    # at random points over 4-1000 K, 1e13-1e19 cm^-3 and Delta n from 1e-6 to 1e3 times the doping
    # (points within 1e-3 of the Schenk ion-cap kink, where P has no derivative, left out)
    from optogen.steady_state import _fast_levels, _narrowing_kink_x, _power_point
    rec = SI_RECS[name]
    rng = np.random.default_rng(17)
    n = 240
    # and 17.4-19 K, where a J0 carried to T as n_i^2 is a subnormal number after the fA -> A scaling
    T = np.concatenate([rng.uniform(4.0, 1000.0, 200), rng.uniform(17.4, 19.0, 40)])
    N = 10 ** rng.uniform(13.0, 19.0, n)
    ntype = rng.random(n) < 0.5
    eq = equilibrium(SI, T, np.where(ntype, N, 0.0), np.where(ntype, 0.0, N), bgn_model=rec.bgn_model)
    W = 0.016
    dn = N * 10 ** rng.uniform(-6.0, 3.0, n)
    dn = np.minimum(dn, 1e20)
    prep = rec.prepare(SI, eq, W, (n,))
    x = np.log(dn)
    jg = np.full(n, 40.0)
    v, j, dv, dj, _, _ = _power_point(prep, np.full(n, W), jg, x, _fast_levels(prep))
    h = 1e-4
    vv = [state_at(SI, eq, rec, dn * np.exp(s), W)["splitting_eV"] for s in (-h, h)]
    jj = [jg - q_C * W * 1e3 * sum(rec.rates(SI, eq, dn * np.exp(s), W).values()) for s in (-h, h)]
    far = ~(np.abs(x - _narrowing_kink_x(prep)) < 1e-3)
    # the splitting to the precision of its own subtraction from the Fermi level (~1e-16 eV x 10)
    assert np.all(np.abs(v - state_at(SI, eq, rec, dn, W)["splitting_eV"]) <= 1e-12 * np.abs(v) + 1e-14)
    dv_ref, dj_ref = (vv[1] - vv[0]) / (2 * h), (jj[1] - jj[0]) / (2 * h)
    # the narrowing's slope is a forward difference over 1e-7 in x (truncation 5e-8 |shift''|, shift'' up to
    # ~10 at 18 K in high injection; rounding 1e-16 dEg/kT / 1e-7): 1e-6 kT on dV/dx besides 1e-6 relative
    kT = kT_eV(T)
    assert np.all(np.abs(dv - dv_ref)[far] <= 1e-6 * (np.abs(dv_ref) + kT)[far]), name
    assert np.all(np.abs(dj - dj_ref)[far] <= 1e-6 * np.abs(dj_ref[far]) + 1e-9 * jg[far]), name


def test_narrowing_evaluated_a_few_times_per_point():
    # issue 11: the golden-section FF evaluated the Schenk narrowing at its 42 points plus 3 (45 per point);
    # the FF now needs about one evaluation for the slope at the steady state, two per Newton iterate
    # (value and slope) and one for the last step.  Counted: the mean number of narrowing evaluations per
    # point that the FF adds to the solve, on 1-sun n- and p-type points at 300 K
    rec = Recombination(bgn_model="schenk1998", front_J0_fA_cm2=10.0, rear_J0_fA_cm2=10.0)
    rng = np.random.default_rng(2)
    n = 400
    eq = equilibrium(SI, 300.0, np.where(np.arange(n) % 2, 10 ** rng.uniform(14, 17, n), 0.0),
                     np.where(np.arange(n) % 2, 0.0, 10 ** rng.uniform(14, 17, n)), bgn_model="schenk1998")
    G = SUN_CM2_S * 10 ** rng.uniform(-1, 1, n) / 0.016
    real = PreparedRates._bgn
    evaluated = [0]

    def counting(self, n_cm3, p_cm3, sub=None):
        evaluated[0] += np.size(n_cm3)
        return real(self, n_cm3, p_cm3, sub)
    counts = []
    for with_ff in (False, True):
        evaluated[0] = 0
        with pytest.MonkeyPatch.context() as mp:
            mp.setattr(PreparedRates, "_bgn", counting)
            solve(SI, eq, rec, G, 0.016, with_ff=with_ff)
        counts.append(evaluated[0] / n)
    assert counts[1] - counts[0] <= 12.0
