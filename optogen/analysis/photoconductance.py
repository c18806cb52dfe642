"""From a photoconductance record to a lifetime curve.

1. Photoconductance -> dn.  The sheet photoconductance of a uniform wafer is
   dsigma W = q [(n0 + dn) mu_e(n, p) + (p0 + dn) mu_h(n, p) - n0 mu_e0 - p0 mu_h0] W
   (`optogen.transport.photoconductance_S`, each state with its own injection-dependent
   mobilities).  Since the mobilities depend on dn, dn is found by the fixed-point iteration
   dn_(k+1) = dn_k + [dsigma W - S(dn_k)] / (q W (mu_e,k + mu_h,k)) on the residual of the
   forward photoconductance S(dn) (`photoconductance_of`), mobilities from
   `optogen.transport.mobility_cm2_Vs` at (n0 + dn_k, p0 + dn_k), until
   |dn_(k+1) - dn_k| <= 1e-10 dn (a contraction: the mobilities change slowly with dn).
2. Lifetime by the generalised analysis (H. Nagel, C. Berge and A. G. Aberle, J. Appl. Phys.
   86, 6218 (1999), doi:10.1063/1.371633):
       tau(t) = dn(t) / (G(t) - d dn/dt),
   which is the quasi-steady-state result tau = dn/G where d dn/dt << G and the transient
   result tau = -dn/(d dn/dt) where G = 0.  G(t) = suns(t) x G_1sun, with
   G_1sun = optical_factor x J_1sun/(q W) (J_1sun: AM1.5G through the optics model, or given).
3. Smoothing.  dn and d dn/dt are taken from a Savitzky-Golay filter (a least-squares polynomial
   of order `order` over a sliding window of `points` samples; A. Savitzky and M. J. E. Golay,
   Anal. Chem. 36, 1627 (1964), doi:10.1021/ac60214a047), `scipy.signal.savgol_filter` with
   mode="interp" (the ends fitted by the polynomial of the first/last window).  Uniform
   sampling is required by the filter; a record whose time steps vary by more than 1e-6 of the
   step is smoothed by the same local polynomial fitted at each point over its `points`
   nearest samples (`local_polynomial`), which equals the filter on uniform data.
   Default window: the odd number nearest to 1/25 of the record, at least 5 points.
"""
from __future__ import annotations

import numpy as np
from scipy.signal import savgol_filter

from optogen.constants import q_C
from optogen.errors import InputError
from optogen.transport import mobility_cm2_Vs, photoconductance_S

from .data import LifetimeData, Record
from .sample import Sample


def excess_density_cm3(smp: Sample, photoconductance, mobility_scale: float = 1.0, iterations: int = 100):
    """dn [cm^-3] from the sheet photoconductance [S], iterating the mobilities at the actual injection.

    Parameters
    ----------
    smp : the sample (material, doping, equilibrium, thickness, temperature)
    photoconductance : sheet photoconductance dsigma W >= 0 (N,) [S]
    mobility_scale : factor on both mobilities (for the mobility-model uncertainty) [-]
    iterations : most fixed-point steps [-]

    Returns
    -------
    dn (N,) [cm^-3] with `optogen.transport.photoconductance_S` of it equal to the input to 1e-10.
    """
    s = np.asarray(photoconductance, dtype=float)
    if np.any(s < 0):
        raise InputError("measurement.file", float(s[s < 0][0]), "photoconductance_S >= 0")
    T, nd, na, n0, p0 = smp.temperature_K, smp.donors_cm3, smp.acceptors_cm3, smp.n0_cm3, smp.p0_cm3
    qW = q_C * smp.thickness_cm
    mu_e0, mu_h0 = (mobility_scale * np.asarray(m) for m in mobility_cm2_Vs(smp.material, T, nd, na, n0, p0))
    dn = s / (qW * (mu_e0 + mu_h0))
    for _ in range(iterations):
        # step on the residual of the forward photoconductance, scaled by q W (mu_e + mu_h) at dn_k
        mu_e, mu_h = (mobility_scale * np.asarray(m) for m in mobility_cm2_Vs(smp.material, T, nd, na, n0 + dn, p0 + dn))
        new = np.maximum(dn + (s - photoconductance_of(smp, dn, mobility_scale)) / (qW * (mu_e + mu_h)), 0.0)
        done = np.all(np.abs(new - dn) <= 1e-10 * np.maximum(new, 1e-300))
        dn = new
        if done:
            break
    return dn


def photoconductance_of(smp: Sample, delta_n_cm3, mobility_scale: float = 1.0):
    """Sheet photoconductance [S] of excess density dn [cm^-3] (`transport.photoconductance_S`)."""
    T, nd, na, n0, p0 = smp.temperature_K, smp.donors_cm3, smp.acceptors_cm3, smp.n0_cm3, smp.p0_cm3
    dn = np.asarray(delta_n_cm3, float)
    dark = [mobility_scale * np.asarray(m) for m in mobility_cm2_Vs(smp.material, T, nd, na, n0, p0)]
    light = [mobility_scale * np.asarray(m) for m in mobility_cm2_Vs(smp.material, T, nd, na, n0 + dn, p0 + dn)]
    return photoconductance_S(n0, p0, n0 + dn, p0 + dn, *dark, *light, smp.thickness_cm)


def default_points(n: int) -> int:
    """Default Savitzky-Golay window: the odd number nearest n/25, at least 5 [-]."""
    w = max(5, int(round(n / 25.0)))
    return w if w % 2 else w + 1


def local_polynomial(t, y, points: int, order: int):
    """Smoothed y and dy/dt by a least-squares polynomial of `order` over the `points` nearest samples.

    The Savitzky-Golay idea for any sampling: at each t_i the polynomial is fitted in (t - t_i)
    over the window of `points` samples centred on i (shifted inwards at the ends), and its value
    and slope at t_i are returned.  t (N,) rising [s]; y (N,) [any unit].  Returns (y_s, dy/dt).
    """
    t, y = np.asarray(t, float), np.asarray(y, float)
    n = t.size
    half = points // 2
    start = np.clip(np.arange(n) - half, 0, n - points)
    idx = start[:, None] + np.arange(points)[None, :]              # (N, points)
    dt = t[idx] - t[:, None]
    scale = np.max(np.abs(dt), axis=1, keepdims=True)
    X = (dt / scale)[..., None] ** np.arange(order + 1)             # (N, points, order+1)
    XtX = np.einsum("npi,npj->nij", X, X)
    Xty = np.einsum("npi,np->ni", X, y[idx])
    c = np.linalg.solve(XtX, Xty[..., None])[..., 0]
    return c[:, 0], c[:, 1] / scale[:, 0]


def smoothed(t, y, points: int, order: int):
    """(y smoothed, dy/dt) by Savitzky-Golay (uniform t) or `local_polynomial` (non-uniform t).

    t (N,) strictly rising [s]; y (N,); points: odd window >= order + 2; order >= 1.
    """
    t = np.asarray(t, float)
    if points % 2 == 0 or points < order + 2 or points > t.size:
        raise InputError("measurement.smoothing_points", points,
                         f"an odd window of at least smoothing_order + 2 = {order + 2} and at most the "
                         f"record length {t.size} points")
    steps = np.diff(t)
    dt = float(np.mean(steps))
    if np.max(np.abs(steps - dt)) <= 1e-6 * dt:
        ys = savgol_filter(y, points, order, deriv=0, mode="interp")
        dy = savgol_filter(y, points, order, deriv=1, delta=dt, mode="interp")
        return ys, dy
    return local_polynomial(t, y, points, order)


def lifetime_generalised_nagel1999(time_s, delta_n_cm3, generation_cm3_s, points: int = 0, order: int = 2):
    """Effective lifetime by the generalised analysis tau = dn / (G - d dn/dt) [s].

    Parameters
    ----------
    time_s : sample times, strictly rising (N,) [s]
    delta_n_cm3 : excess density at those times (N,) [cm^-3]
    generation_cm3_s : average generation rate G(t) (N,) [cm^-3 s^-1]
    points : Savitzky-Golay window (odd; 0: `default_points`) [-]
    order : polynomial order of the smoothing [-]

    Returns
    -------
    (tau_s, dn_smoothed, d dn/dt): arrays (N,) [s], [cm^-3], [cm^-3 s^-1]; tau is NaN where
    G - d dn/dt <= 0 or dn <= 0 (no lifetime: noise at the tail).

    References
    ----------
    H. Nagel, C. Berge and A. G. Aberle, "Generalized analysis of quasi-steady-state and
    quasi-transient measurements of carrier lifetimes in semiconductors", J. Appl. Phys. 86,
    6218 (1999), doi:10.1063/1.371633.
    """
    t = np.asarray(time_s, float)
    n = t.size
    pts = default_points(n) if not points else int(points)
    dn_s, ddt = smoothed(t, np.asarray(delta_n_cm3, float), pts, order)
    den = np.asarray(generation_cm3_s, float) - ddt
    with np.errstate(divide="ignore", invalid="ignore"):
        tau = np.where((den > 0) & (dn_s > 0), dn_s / den, np.nan)
    return tau, dn_s, ddt


def lifetime_from_record(smp: Sample, rec: Record, one_sun_generation_cm3_s: float, one_sun_photon_flux_cm2_s=None,
                         points: int = 0, order: int = 2, mobility_scale: float = 1.0,
                         min_fraction: float = 1e-3) -> LifetimeData:
    """A lifetime curve from a photoconductance record (steps 1-3 of the module doc).

    one_sun_generation_cm3_s: G at 1 sun (optical factor included) [cm^-3 s^-1];
    one_sun_photon_flux_cm2_s: incident photon flux of 1 sun, for a record in photon flux
    [cm^-2 s^-1]; min_fraction: points with dn below this fraction of the record's largest dn
    are dropped (the noise floor) [-].  Returns `LifetimeData` (one point per kept sample,
    sorted by dn; samples at the same dn are averaged in their lifetime).
    """
    dn = excess_density_cm3(smp, rec.photoconductance_S, mobility_scale)
    if rec.light_column == "suns":
        suns = rec.light
    else:
        if one_sun_photon_flux_cm2_s is None:
            raise InputError("measurement.file", rec.path, "a 1-sun photon flux to convert photon_flux_cm2_s")
        suns = rec.light / one_sun_photon_flux_cm2_s
    G = suns * one_sun_generation_cm3_s
    tau, dn_s, _ = lifetime_generalised_nagel1999(rec.time_s, dn, G, points, order)
    keep = np.isfinite(tau) & (dn_s > min_fraction * np.max(dn_s))
    if keep.sum() < 5:
        raise InputError("measurement.file", rec.path, "a record giving at least 5 lifetimes",
                         f"only {int(keep.sum())} samples have dn above the noise floor and G > d dn/dt")
    x, y = dn_s[keep], tau[keep]
    order_ = np.argsort(x)
    x, y = x[order_], y[order_]
    ux, inv = np.unique(x, return_inverse=True)
    uy = np.exp(np.bincount(inv, np.log(y)) / np.bincount(inv))
    return LifetimeData(ux, uy, None, rec.path, default_points(rec.time_s.size) if not points else int(points))
