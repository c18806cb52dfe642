"""Implied Voc, implied J-V and implied FF from the measured recombination.

Uniform wafer, the same definitions as `optogen.steady_state` (README "Steady state, implied
Voc and FF"): the implied voltage at an excess density dn is the quasi-Fermi-level splitting
V(dn) of `optogen.steady_state.state_at` (the narrowing model's statistics), and

    J(dn) = J_gen - q W U(dn),     U(dn) = dn / tau(dn)

with tau(dn) the MEASURED lifetime (log-log interpolation between the measured points) and,
outside the measured range, the fitted model.  Voc is V at the dn where q W U = J_gen;
FF = max_dn(V J)/(Voc J_gen).  The maximum is searched on a fine log grid of dn and refined by
a parabola through the three best points.  `steady_state.implied_jv` with the fitted
`Recombination` gives the same curve from the model alone (tests/analysis/test_analysis_methods.py checks
the two agree).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optogen.constants import q_C
from optogen.steady_state import state_at

from .model import mechanisms
from .sample import Sample

#: dn grid of the implied curves [cm^-3]
GRID_CM3 = np.logspace(6.0, 19.0, 2601)


@dataclass(frozen=True, eq=False)
class Implied:
    """Implied figures at one light level, for S recombination variants or parameter samples.

    voc_V (S,) [V]; ff (S,) [-]; delta_n_oc_cm3 (S,) [cm^-3]; vmp_V, jmp_mA_cm2 (S,);
    jgen_mA_cm2 [mA cm^-2]; voltage_V, current_mA_cm2: the J-V curve of the first variant (M,).
    """

    voc_V: np.ndarray
    ff: np.ndarray
    delta_n_oc_cm3: np.ndarray
    vmp_V: np.ndarray
    jmp_mA_cm2: np.ndarray
    jgen_mA_cm2: float
    voltage_V: np.ndarray
    current_mA_cm2: np.ndarray


def splitting_on_grid_eV(smp: Sample, delta_n_cm3=GRID_CM3):
    """V(dn): the quasi-Fermi-level splitting at each dn of the grid [eV] (`steady_state.state_at`)."""
    st = state_at(smp.material, smp.eq, smp.intrinsic, np.asarray(delta_n_cm3, float), smp.thickness_cm)
    return np.asarray(st["splitting_eV"], dtype=float)


def model_rates(smp: Sample, J0_fA_cm2, tau_n0_s, tau_p0_s, level_eV, delta_n_cm3=GRID_CM3, mech=None):
    """Rates of each mechanism of the fitted model on the dn grid [cm^-3 s^-1].

    Parameters may be arrays (S,) (parameter samples).  Returns dict auger, radiative, srh,
    surface -> arrays (S, M) (S = 1 for scalars).
    """
    mech = mech or mechanisms(smp, delta_n_cm3)
    dn = mech.delta_n_cm3
    sh = (-1, 1, 1)
    tn, tp, et = (np.reshape(np.asarray(v, float), sh) for v in (tau_n0_s, tau_p0_s, level_eV))
    j0 = np.reshape(np.asarray(J0_fA_cm2, float), (-1, 1))
    S = max(tn.shape[0], j0.shape[0], et.shape[0])
    one = np.ones((S, 1))
    return {"auger": one * mech.inv_tau_auger_s * dn, "radiative": one * mech.inv_tau_radiative_s * dn,
            "srh": one * mech.inv_tau_srh_s(tn, tp, et) * dn, "surface": one * j0 * mech.x_j0 * dn}


def measured_rate(delta_n_cm3, tau_data_dn_cm3, tau_data_s, model_total):
    """U(dn) [cm^-3 s^-1]: dn/tau with tau interpolated log-log in the measured points inside
    their range, the model's total rate (`model_total`, same shape as the grid) outside."""
    dn = np.asarray(delta_n_cm3, float)
    order = np.argsort(tau_data_dn_cm3)
    x, y = np.log(np.asarray(tau_data_dn_cm3)[order]), np.log(np.asarray(tau_data_s)[order])
    inside = (dn >= np.exp(x[0])) & (dn <= np.exp(x[-1]))
    tau = np.exp(np.interp(np.log(dn), x, y))
    return np.where(inside, dn / tau, model_total)


def implied_from_rates(smp: Sample, U_cm3_s, jgen_mA_cm2: float, delta_n_cm3=GRID_CM3, splitting_eV=None):
    """Implied Voc, FF, the maximum-power point and the J-V curve from rates on a dn grid.

    Parameters
    ----------
    smp : the sample (thickness, statistics)
    U_cm3_s : total recombination rate on the grid, (M,) or (S, M) [cm^-3 s^-1], rising with dn
    jgen_mA_cm2 : photogeneration current J_gen = q W G [mA cm^-2]
    delta_n_cm3 : the grid (M,) [cm^-3]
    splitting_eV : V(dn) on the grid (default `splitting_on_grid_eV`) [eV]

    Returns
    -------
    Implied (Voc at the dn where q W U = J_gen, interpolated in ln dn; NaN where the grid does
    not bracket it).
    """
    dn = np.asarray(delta_n_cm3, float)
    U = np.atleast_2d(np.asarray(U_cm3_s, float))
    V = splitting_on_grid_eV(smp, dn) if splitting_eV is None else np.asarray(splitting_eV, float)
    W = smp.thickness_cm
    J = jgen_mA_cm2 - q_C * W * U * 1e3                       # (S, M) [mA cm^-2]
    S, M = J.shape
    # open circuit: first sign change of J along the grid
    neg = J <= 0
    k = np.where(neg.any(axis=1), np.argmax(neg, axis=1), M - 1)
    k = np.clip(k, 1, M - 1)
    r = np.arange(S)
    lx = np.log(dn)
    j1, j2 = J[r, k - 1], J[r, k]
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.where(j1 != j2, j1 / (j1 - j2), 0.0)
    ok = neg.any(axis=1) & ~neg[:, 0]
    lx_oc = lx[k - 1] + frac * (lx[k] - lx[k - 1])
    dn_oc = np.where(ok, np.exp(lx_oc), np.nan)
    voc = np.where(ok, np.interp(lx_oc, lx, V), np.nan)
    # maximum power on the grid below open circuit, refined by a parabola in ln dn
    P = np.where((np.arange(M)[None, :] < k[:, None]) & (J > 0), V[None, :] * J, -np.inf)
    i = np.clip(np.argmax(P, axis=1), 1, M - 2)
    p0, p1, p2 = P[r, i - 1], P[r, i], P[r, i + 1]
    den = p0 - 2 * p1 + p2
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(np.isfinite(den) & (den < 0), 0.5 * (p0 - p2) / den, 0.0)
    t = np.clip(t, -1.0, 1.0)
    lx_mp = lx[i] + t * (lx[1] - lx[0])
    vmp = np.interp(lx_mp, lx, V)
    pos = i + t                                               # fractional grid index of the maximum
    f0 = np.clip(np.floor(pos).astype(int), 0, M - 2)
    jmp = J[r, f0] + (pos - f0) * (J[r, f0 + 1] - J[r, f0])
    with np.errstate(divide="ignore", invalid="ignore"):
        ff = np.where(ok, vmp * jmp / (voc * jgen_mA_cm2), np.nan)
    curve = (V <= voc[0] + 1e-12) & (J[0] >= 0) if ok[0] else np.zeros(M, bool)
    return Implied(voc, ff, dn_oc, vmp, jmp, float(jgen_mA_cm2), V[curve], J[0][curve])
