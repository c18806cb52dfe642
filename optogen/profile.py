"""Depth-resolved steady state: 1-D continuity with diffusion and surface recombination.

Solves, for the excess carrier density dn(x) [cm^-3] on 0 <= x <= W,

    d/dx( D(dn) d dn/dx ) + G(x) - U(dn) = 0                       (conservative flux form)

    D d dn/dx  = Us_front(dn(0))   at x = 0   (flux into the front surface)
   -D d dn/dx  = Us_rear(dn(W))    at x = W   (flux into the rear surface)

with D(dn) [cm^2 s^-1] (e.g. the injection-dependent ambipolar coefficient), U(dn) [cm^-3 s^-1]
every bulk mechanism and Us [cm^-2 s^-1] the surface recombination.  The core knows nothing
about materials: the caller passes callables that return (value, derivative w.r.t. dn).

Discretisation: vertex-centred finite volumes on a non-uniform mesh.  Node i owns the control
volume between the mid-points of its neighbouring intervals (dV_i [cm]); the generation in it,
G_i dV_i below, is the integral of a log-linear interpolant of the nodal G (exact for
Beer-Lambert, see `generation_per_volume_cm2_s`); U is taken at the node; the diffusion flux
through the face between nodes i and i+1 is F = -(D_i + D_{i+1})/2 (dn_{i+1} - dn_i)/h_i, and
the surface fluxes close the two end volumes.  Because every face flux leaves one volume and
enters the next, the discrete balance

    sum_i G_i dV_i = sum_i U_i dV_i + Us_front + Us_rear   (+ sum of the residuals)

holds to round-off.  The scheme is second order in the mesh spacing for smoothly graded meshes.

Non-linear solution: Newton on the tridiagonal Jacobian (LAPACK gtsv on the whole batch at
once, the profiles laid end to end with zero coupling), started from the uniform answer, with
a positivity-preserving update (a node asked to fall below half its value follows an
exponential instead, so dn never crosses zero) and a backtracking line search on the sum of
the two convergence measures below.

Convergence: R_i [cm^-2 s^-1] is the carrier balance of control volume i (generation minus
bulk recombination minus net outflow).  A profile has converged when both

    |sum_i G_i dV_i - sum_i U_i dV_i - Us_front - Us_rear| <= rtol * sum_i G_i dV_i   and
    sum_i max(|R_i| - f_i, 0)                                <= rtol * sum_i G_i dV_i,

with f_i = 16 eps * (sum of the magnitudes of the terms in R_i, fluxes taken as D dn/h).
The first line is the depth-integrated carrier balance, evaluated without the fluxes (so it
carries no flux round-off); the second is the 1-norm of the local residuals above each
volume's floating-point floor f_i.  That floor only matters on very fine meshes, where a
float dn is known to eps and a flux D dn/h therefore only to about eps D dn/h; it is
excused node by node (such errors do not add up coherently; the balance line catches
coherent ones).  `ProfileSolution.residual` reports sum_i |R_i| / sum_i G_i dV_i.

Shapes: generation (..., X) is a batch of profiles; every callable is called with arrays of
shape (..., X) (bulk, diffusion) or (..., 1) (front, rear: the first and last node).  A
parameter that varies over the batch must therefore have shape (..., 1).
"""
from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy.linalg import lapack

from .errors import InputError, check_range

_EPS = np.finfo(float).eps


class MeshRefinedWarning(UserWarning):
    """The requested node count could not resolve the shortest length; the mesh was refined."""


class ProfileConvergenceWarning(UserWarning):
    """At least one depth profile did not converge; see ProfileSolution.converged."""


# ----------------------------------------------------------------------------- mesh

def _cumulative_density(x, W, lengths):
    """Integral from 0 to x of the mesh density rho [-] (see `mesh`); x (M,), lengths (K,)."""
    x = x[:, None]
    two_l = 2.0 * lengths[None, :]
    front = -np.expm1(-x / two_l)
    rear = np.exp(-(W - x) / two_l) * -np.expm1(-x / two_l)
    return x[:, 0] / W + 2.0 * np.sum(front + rear, axis=1)


def _graded(W, n_intervals, lengths):
    """Node positions equidistributing the density over n_intervals intervals [cm]."""
    total = _cumulative_density(np.array([W]), W, lengths)[0]
    target = total * np.arange(1, n_intervals) / n_intervals
    lo = np.zeros_like(target)
    hi = np.full_like(target, W)
    for _ in range(64):  # bisection on a monotone function: 64 halvings reach round-off
        mid = 0.5 * (lo + hi)
        below = _cumulative_density(mid, W, lengths) < target
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    return np.concatenate(([0.0], 0.5 * (lo + hi), [W]))


def mesh(thickness_cm, n_nodes=200, fine_lengths_cm=None, *, wavelength_nm=None,
         first_step_fraction=0.1, max_nodes=20001):
    """Non-uniform 1-D mesh on [0, W], fine at both faces on the given length scales.

    The nodes equidistribute the density (nodes per cm)

        rho(x) = 1/W + sum_k (1/l_k) [exp(-x/(2 l_k)) + exp(-(W-x)/(2 l_k))],

    so each characteristic length l_k (1/alpha of strongly absorbed light, the diffusion
    length, ...) gets about the same number of nodes near each face as the uniform background
    gets over the whole thickness, and for a feature exp(-x/l) the spacing grows as
    exp(x/(2 l)), which equidistributes the second-order error.  Lengths >= W are dropped (a
    uniform spacing resolves them) and lengths within a factor 2 of each other are merged.

    Automatic refinement: if the first step exceeds `first_step_fraction` times the shortest
    length, the node count is raised until it does not (up to `max_nodes`) and a
    `MeshRefinedWarning` says so; when `wavelength_nm` is given (one wavelength per entry of
    `fine_lengths_cm`, i.e. fine_lengths_cm = 1/alpha), the message names the wavelength range
    the requested count could not resolve.

    Parameters
    ----------
    thickness_cm : float
        Absorber thickness W, > 0 [cm].
    n_nodes : int
        Requested number of nodes, >= 3 (more are used if refinement is needed) [-].
    fine_lengths_cm : array_like, optional
        Characteristic lengths to resolve at the faces, > 0; None = uniform [cm].
    wavelength_nm : array_like, optional
        Wavelengths belonging to `fine_lengths_cm`, only for the message [nm].
    first_step_fraction : float
        Largest allowed first step / shortest length [-].
    max_nodes : int
        Upper limit of automatic refinement [-].

    Returns
    -------
    x_cm : ndarray
        Strictly increasing node positions, x[0] = 0, x[-1] = W [cm].
    """
    W = check_range("profile.thickness_cm", thickness_cm, 0.0, None, low_open=True, unit="cm")
    if np.ndim(W) != 0:
        raise InputError("profile.thickness_cm", thickness_cm, "a single thickness in cm")
    if isinstance(n_nodes, bool) or int(n_nodes) != n_nodes or n_nodes < 3:
        raise InputError("profile.n_nodes", n_nodes, "an integer >= 3")
    n_nodes = int(n_nodes)
    check_range("profile.first_step_fraction", first_step_fraction, 0.0, 1.0, low_open=True)
    if fine_lengths_cm is None:
        return np.linspace(0.0, W, n_nodes)
    all_lengths = np.ravel(check_range("profile.fine_lengths_cm", fine_lengths_cm, 0.0, None,
                                       low_open=True, unit="cm"))
    lengths = all_lengths[all_lengths < W]
    if lengths.size == 0:
        return np.linspace(0.0, W, n_nodes)
    # merge lengths within a factor 2 (one representative per octave)
    octave = np.floor(np.log2(lengths / lengths.min()))
    lengths = np.array([lengths[octave == o].min() for o in np.unique(octave)])
    shortest = lengths.min()
    want = first_step_fraction * shortest

    x = _graded(W, n_nodes - 1, lengths)
    first_requested = x[1]
    n_used = n_nodes
    while x[1] > want * (1 + 1e-9) and n_used < max_nodes:
        n_used = min(max_nodes, max(n_used + 1, math.ceil(n_used * x[1] / want * 1.02)))
        x = _graded(W, n_used - 1, lengths)
    if n_used != n_nodes:
        resolvable = first_requested / first_step_fraction  # shortest length n_nodes resolves
        what = (f"lengths below {resolvable * 1e7:.3g} nm" if resolvable < 1e-4
                else f"lengths below {resolvable * 1e4:.3g} um")
        if wavelength_nm is not None:
            wl = np.ravel(np.asarray(wavelength_nm, dtype=float))
            if wl.shape != all_lengths.shape:
                raise InputError("profile.wavelength_nm", wavelength_nm,
                                 "one wavelength per entry of fine_lengths_cm")
            bad = wl[all_lengths < resolvable]
            if bad.size:
                what = (f"1/alpha below {resolvable * 1e7:.3g} nm, at wavelengths "
                        f"{bad.min():.4g}-{bad.max():.4g} nm")
        capped = ("" if x[1] <= want * (1 + 1e-9)
                  else f" (capped at max_nodes; first step {x[1] * 1e7:.3g} nm)")
        warnings.warn(MeshRefinedWarning(
            f"{n_nodes} depth nodes cannot resolve {what}; refined to {n_used} nodes{capped}"),
            stacklevel=2)
    return x


def generation_per_volume_cm2_s(x_cm, generation_cm3_s):
    """Generation integrated over each control volume.

    G is interpolated log-linearly between neighbouring nodes (exact for a Beer-Lambert
    exponential, hence for the strongly absorbed light near the front), and linearly on an
    interval where a node value is zero.  With z = ln(G_r/G_l)/2 and g = sqrt(G_l G_r) the
    interpolant's midpoint value, the halves of an interval of width h carry
    (h/2)(g - G_l)/z and (h/2)(G_r - g)/z (series in z for |z| < 1e-3; no overflow).

    Parameters
    ----------
    x_cm : ndarray
        Mesh nodes, shape (X,) [cm].
    generation_cm3_s : ndarray
        Nodal G, shape (..., X) [cm^-3 s^-1].

    Returns
    -------
    ndarray
        G_i dV_i, shape (..., X) [cm^-2 s^-1].
    """
    h = np.diff(x_cm)
    Gl, Gr = generation_cm3_s[..., :-1], generation_cm3_s[..., 1:]
    both = (Gl > 0) & (Gr > 0)
    logl = np.log(np.where(both, Gl, 1.0))
    logr = np.log(np.where(both, Gr, 1.0))
    z = 0.5 * (logr - logl)
    small = np.abs(z) < 1e-3
    zs = np.where(small, 1.0, z)
    g = np.exp(0.5 * (logl + logr))
    # (e^z - 1)/z and (1 - e^-z)/z by series where z is small
    fl = 1.0 + z / 2 + z**2 / 6 + z**3 / 24
    fr = 1.0 - z / 2 + z**2 / 6 - z**3 / 24
    left = np.where(both, np.where(small, Gl * fl, (g - Gl) / zs), (3 * Gl + Gr) / 4)
    right = np.where(both, np.where(small, Gr * fr, (Gr - g) / zs), (Gl + 3 * Gr) / 4)
    out = np.zeros(np.shape(generation_cm3_s))
    out[..., :-1] += 0.5 * h * left
    out[..., 1:] += 0.5 * h * right
    return out


def control_volumes_cm(x_cm):
    """Finite-volume widths dV_i (half the neighbouring intervals) of a mesh.

    Parameters
    ----------
    x_cm : ndarray
        Mesh nodes, shape (X,) [cm].

    Returns
    -------
    ndarray
        dV_i, shape (X,) [cm].
    """
    h = np.diff(x_cm)
    dV = np.zeros_like(x_cm)
    dV[:-1] += 0.5 * h
    dV[1:] += 0.5 * h
    return dV


# ------------------------------------------------------------------ callable builders

def linear_bulk(tau_s):
    """Bulk rate U = dn / tau with a constant lifetime.

    Parameters
    ----------
    tau_s : array_like
        Lifetime, > 0 (shape (..., 1) to vary over the batch) [s].

    Returns
    -------
    callable
        dn [cm^-3] -> (U [cm^-3 s^-1], dU/ddn [s^-1]).
    """
    tau = check_range("profile.tau_s", tau_s, 0.0, None, low_open=True, unit="s")
    return lambda dn: (dn / tau, 1.0 / tau + 0.0 * dn)


def constant_diffusion(D_cm2_s):
    """Injection-independent diffusion coefficient D.

    Parameters
    ----------
    D_cm2_s : array_like
        Diffusion coefficient, > 0 [cm^2 s^-1].

    Returns
    -------
    callable
        dn [cm^-3] -> (D [cm^2 s^-1], dD/ddn [cm^5 s^-1]).
    """
    D = check_range("profile.D_cm2_s", D_cm2_s, 0.0, None, low_open=True, unit="cm^2 s^-1")
    return lambda dn: (D + 0.0 * dn, 0.0 * dn)


def surface_S(S_cm_s, field="profile.S_cm_s"):
    """Surface recombination with a constant velocity: Us = S dn.

    Parameters
    ----------
    S_cm_s : array_like
        Surface recombination velocity, >= 0 [cm s^-1].
    field : str
        The field named in errors [-].

    Returns
    -------
    callable
        dn [cm^-3] -> (Us [cm^-2 s^-1], dUs/ddn [cm s^-1]).
    """
    S = check_range(field, S_cm_s, 0.0, None, unit="cm s^-1")
    return lambda dn: (S * dn, S + 0.0 * dn)


def surface_J0(J0_fA_cm2, n0_cm3, p0_cm3, ni_eff_cm3, field="profile.J0_fA_cm2"):
    """Surface recombination from a saturation current density (Kane & Swanson 1985).

        Us = (J0 / q) (n p - ni_eff^2) / ni_eff^2,   n = n0 + dn, p = p0 + dn

    The law itself is `optogen.recombination.surface_j0_flux_cm2_s` (one definition for the uniform
    and the depth-resolved runs); here ni_eff^2 enters as its shift ln(ni_eff^2 / (n0 p0)),
    taken in logarithms.  J0 is the value at the temperature of the run (no reference scaling
    here: `optogen.recombination.j0_at_temperature_fA_cm2` does that).

    Parameters
    ----------
    J0_fA_cm2 : array_like
        Surface saturation current density at the run temperature, >= 0 [fA cm^-2].
    n0_cm3, p0_cm3 : array_like
        Equilibrium electron and hole densities, > 0 [cm^-3].
    ni_eff_cm3 : array_like
        Effective intrinsic density, > 0 [cm^-3].
    field : str
        The field named in errors [-].

    Returns
    -------
    callable
        dn [cm^-3] -> (Us [cm^-2 s^-1], dUs/ddn [cm s^-1]).

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE Photovoltaic Specialists Conference (1985),
    p. 578 (from memory).
    """
    from .recombination import surface_j0_flux_cm2_s
    J0 = check_range(field, J0_fA_cm2, 0.0, None, unit="fA cm^-2")
    n0 = check_range("profile.n0_cm3", n0_cm3, 0.0, None, low_open=True, unit="cm^-3")
    p0 = check_range("profile.p0_cm3", p0_cm3, 0.0, None, low_open=True, unit="cm^-3")
    ni = check_range("profile.ni_eff_cm3", ni_eff_cm3, 0.0, None, low_open=True, unit="cm^-3")
    shift = 2.0 * np.log(ni) - np.log(n0) - np.log(p0)

    def rate(dn):
        return surface_j0_flux_cm2_s(n0, p0, dn, J0, shift, J0_reference_K=None, derivative=True)
    return rate


def add_rates(*terms):
    """Sum of rate callables.

    Parameters
    ----------
    *terms : callable
        Each dn [cm^-3] -> (value, derivative) [any one unit].

    Returns
    -------
    callable
        dn -> (sum of values, sum of derivatives) [their units].
    """
    def rate(dn):
        out = [t(dn) for t in terms]
        return sum(o[0] for o in out), sum(o[1] for o in out)
    return rate


def with_derivative(rate, rel_step=1e-7, abs_step_cm3=1.0):
    """Wrap a rate function dn -> U into dn -> (U, dU/ddn) by a forward difference.

    The step is rel_step * dn + abs_step_cm3, so every evaluation has dn >= 0.  Newton only
    needs an approximate Jacobian: the converged residual uses the exact rate.

    Parameters
    ----------
    rate : callable
        Vectorised dn [cm^-3] -> value [any unit].
    rel_step : float
        Relative step [-].
    abs_step_cm3 : float
        Absolute step added [cm^-3].

    Returns
    -------
    callable
        dn [cm^-3] -> (value [unit of rate], derivative [unit of rate per cm^-3]).
    """
    def wrapped(dn):
        dn = np.asarray(dn, dtype=float)
        step = rel_step * dn + abs_step_cm3
        u = rate(dn)
        return u, (rate(dn + step) - u) / step
    return wrapped


# ------------------------------------------------------------------------- solver

@dataclass(frozen=True)
class ProfileSolution:
    """Depth profile(s) of the excess carrier density and the carrier balance.

    Batch shape (...), X depth nodes.

    Parameters
    ----------
    x_cm : ndarray
        Node depths, shape (X,) [cm].
    control_volume_cm : ndarray
        Finite-volume widths, shape (X,) [cm].
    delta_n_cm3 : ndarray
        Excess carrier density, shape (..., X) [cm^-3].
    generation_cm3_s : ndarray
        Generation rate at the nodes, shape (..., X) [cm^-3 s^-1].
    converged : ndarray of bool
        Shape (...) [-].
    iterations : ndarray of int
        Newton steps taken, shape (...) [-].
    residual : ndarray
        sum_i |R_i| / total generation, shape (...) (absolute [cm^-2 s^-1] where G = 0); it
        can exceed rtol only through the per-volume round-off floor (module docstring) [-].
    generation_cm2_s, bulk_recombination_cm2_s, front_loss_cm2_s, rear_loss_cm2_s : ndarray
        Depth-integrated carrier balance terms, shape (...) [cm^-2 s^-1].
    uniform_delta_n_cm3 : ndarray
        The uniform answer for the same average generation, bulk rate and surfaces, shape
        (...) (for the "uniform approximation error") [cm^-3].
    """
    x_cm: np.ndarray
    control_volume_cm: np.ndarray
    delta_n_cm3: np.ndarray
    generation_cm3_s: np.ndarray
    converged: np.ndarray
    iterations: np.ndarray
    residual: np.ndarray
    generation_cm2_s: np.ndarray
    bulk_recombination_cm2_s: np.ndarray
    front_loss_cm2_s: np.ndarray
    rear_loss_cm2_s: np.ndarray
    uniform_delta_n_cm3: np.ndarray

    @property
    def thickness_cm(self) -> float:
        """Absorber thickness W [cm]."""
        return float(self.x_cm[-1] - self.x_cm[0])

    def average_cm3(self):
        """Volume-weighted depth average of dn, sum(dn dV)/W.

        Returns
        -------
        ndarray
            <dn>, shape (...) [cm^-3].
        """
        return (self.delta_n_cm3 @ self.control_volume_cm) / self.thickness_cm

    def front_cm3(self):
        """dn at the front face x = 0.

        Returns
        -------
        ndarray
            Shape (...) [cm^-3].
        """
        return self.delta_n_cm3[..., 0]

    def rear_cm3(self):
        """dn at the rear face x = W.

        Returns
        -------
        ndarray
            Shape (...) [cm^-3].
        """
        return self.delta_n_cm3[..., -1]

    def uniformity(self):
        """min(dn) / max(dn) over depth.

        Returns
        -------
        ndarray
            Shape (...); 1 = flat, and 1 where dn is zero everywhere [-].
        """
        hi = self.delta_n_cm3.max(axis=-1)
        lo = self.delta_n_cm3.min(axis=-1)
        return np.divide(lo, hi, out=np.ones_like(hi), where=hi > 0)

    def lifetimes_s(self, bulk_rates_cm3_s, tau_eff_fallback_s=np.inf):
        """Lifetimes from the depth-integrated losses: tau_x = <dn> W / integral(U_x dx) [s].

        Parameters
        ----------
        bulk_rates_cm3_s : mapping of str to ndarray
            Mechanism -> U_x at the nodes, shape (..., X) (e.g. srh, radiative, auger); the
            surfaces are added from the solution's own front and rear losses under the key
            "surface" [cm^-3 s^-1].
        tau_eff_fallback_s : array_like
            tau_eff where no carriers are generated [s].

        Returns
        -------
        taus : dict of str to ndarray
            Mechanism -> tau (inf where a mechanism removes nothing) [s].
        tau_eff_s : ndarray
            <dn> W / integral(G dx) [s].
        losses : dict of str to ndarray
            Mechanism -> depth-integrated loss [cm^-2 s^-1].
        """
        losses = {k: np.asarray(v) @ self.control_volume_cm for k, v in bulk_rates_cm3_s.items()}
        losses["surface"] = self.front_loss_cm2_s + self.rear_loss_cm2_s
        stock = self.average_cm3() * self.thickness_cm            # <dn> W [cm^-2]
        with np.errstate(divide="ignore", invalid="ignore"):
            taus = {k: np.where(v > 0, stock / np.where(v > 0, v, 1.0), np.inf) for k, v in losses.items()}
            tau_eff = np.where(self.generation_cm2_s > 0, stock / self.generation_cm2_s, tau_eff_fallback_s)
        return taus, tau_eff, losses

    def balance(self):
        """Carrier balance per unit area.

        Returns
        -------
        dict of str to ndarray
            generation_cm2_s, bulk_recombination_cm2_s, front_loss_cm2_s, rear_loss_cm2_s and
            imbalance_cm2_s (= generation - the three losses) [cm^-2 s^-1].
        """
        return {
            "generation_cm2_s": self.generation_cm2_s,
            "bulk_recombination_cm2_s": self.bulk_recombination_cm2_s,
            "front_loss_cm2_s": self.front_loss_cm2_s,
            "rear_loss_cm2_s": self.rear_loss_cm2_s,
            "imbalance_cm2_s": self.generation_cm2_s - self.bulk_recombination_cm2_s
            - self.front_loss_cm2_s - self.rear_loss_cm2_s,
        }

    def summary(self):
        """Scalar-per-profile figures.

        Returns
        -------
        dict of str to ndarray
            Front/rear/average dn [cm^-3], uniformity [-], uniform-answer dn [cm^-3],
            converged [-], iterations [-], residual [-].
        """
        return {
            "delta_n_front_cm3": self.front_cm3(),
            "delta_n_rear_cm3": self.rear_cm3(),
            "delta_n_average_cm3": self.average_cm3(),
            "uniformity": self.uniformity(),
            "delta_n_uniform_cm3": self.uniform_delta_n_cm3,
            "converged": self.converged,
            "iterations": self.iterations,
            "residual": self.residual,
        }

    def to_dataarray(self, batch_dims=None):
        """dn as an xarray.DataArray over ("...batch dims", "depth_um"), units in attrs.

        Parameters
        ----------
        batch_dims : sequence of str, optional
            Names of the leading dimensions (default "batch" or "batch_0", ...) [-].

        Returns
        -------
        xarray.DataArray
            delta_n_cm3 [cm^-3] with a depth_um coordinate [um].
        """
        import xarray as xr

        lead = self.delta_n_cm3.shape[:-1]
        if batch_dims is None:
            batch_dims = (("batch",) if len(lead) == 1
                          else tuple(f"batch_{i}" for i in range(len(lead))))
        batch_dims = tuple(batch_dims)
        if len(batch_dims) != len(lead):
            raise InputError("batch_dims", batch_dims,
                             f"{len(lead)} names, one per batch dimension")
        depth = xr.DataArray(self.x_cm * 1e4, dims="depth_um",
                             attrs={"units": "um", "long_name": "depth below the front surface"})
        return xr.DataArray(self.delta_n_cm3, dims=batch_dims + ("depth_um",),
                            coords={"depth_um": depth}, name="delta_n_cm3",
                            attrs={"units": "cm^-3", "long_name": "excess carrier density"})


def _call(fn, name, dn):
    """Evaluate a (value, derivative) callable and broadcast both to dn's shape."""
    out = []
    for v in fn(dn):
        v = np.asarray(v, dtype=float)
        if v.shape != dn.shape:
            try:
                v = np.broadcast_to(v, dn.shape)
            except ValueError:
                raise InputError(f"profile.{name}", f"output shape {v.shape}",
                                 f"arrays broadcastable to {dn.shape}",
                                 "batch-varying parameters need shape (..., 1)") from None
        out.append(v)
    return out


class _System:
    """The discrete balance R(dn) [cm^-2 s^-1] and its tridiagonal Jacobian for one mesh."""

    def __init__(self, x, G, bulk, diffusion, front, rear):
        self.h = np.diff(x)
        self.dV = control_volumes_cm(x)
        self.GdV = generation_per_volume_cm2_s(x, G)
        self.fns = bulk, diffusion, front, rear

    def evaluate(self, dn):
        """Residual, magnitude of its terms, Jacobian diagonals and the balance terms."""
        bulk, diffusion, front, rear = self.fns
        h, dV = self.h, self.dV
        U, dU = bulk(dn)
        D, dD = diffusion(dn)
        Sf, dSf = front(dn[..., :1])
        Sr, dSr = rear(dn[..., -1:])
        Dm = 0.5 * (D[..., 1:] + D[..., :-1])
        grad = (dn[..., 1:] - dn[..., :-1]) / h
        F = -Dm * grad                                     # face flux towards +x [cm^-2 s^-1]
        out = np.zeros_like(dn)                            # net outflow of each volume
        out[..., :-1] += F
        out[..., 1:] -= F
        out[..., :1] += Sf
        out[..., -1:] += Sr
        R = self.GdV - U * dV - out
        face = Dm * (dn[..., 1:] + dn[..., :-1]) / h       # scale of the flux round-off
        mag = self.GdV + np.abs(U) * dV
        mag[..., :-1] += face
        mag[..., 1:] += face
        mag[..., :1] += np.abs(Sf)
        mag[..., -1:] += np.abs(Sr)
        a = Dm / h - 0.5 * dD[..., :-1] * grad             # dF/d dn_left
        b = -Dm / h - 0.5 * dD[..., 1:] * grad             # dF/d dn_right
        diag = -dU * dV
        diag[..., :-1] -= a
        diag[..., 1:] += b
        diag[..., :1] -= dSf
        diag[..., -1:] -= dSr
        return dict(R=R, mag=mag, diag=diag, upper=-b, lower=a, U=U, D=D,
                    Sf=Sf[..., 0], Sr=Sr[..., 0])


def _tridiagonal_solve(diag, upper, lower, rhs):
    """Solve every tridiagonal system of the batch in one LAPACK gtsv call.

    diag, rhs (B, N); upper, lower (B, N-1).  Singular blocks get a zero solution and are
    returned in the mask `singular` (B,).
    """
    B, N = diag.shape
    d = diag.copy()
    du = np.zeros((B, N))
    dl = np.zeros((B, N))
    du[:, :-1] = upper
    dl[:, :-1] = lower
    b = rhs.copy()
    singular = np.zeros(B, dtype=bool)
    while True:
        _, _, _, x, info = lapack.dgtsv(dl.ravel()[:-1], d.ravel(), du.ravel()[:-1],
                                        b.reshape(-1, 1))
        if info == 0:
            return x.reshape(B, N), singular
        if info < 0:  # pragma: no cover - argument error, cannot happen with the shapes above
            raise RuntimeError(f"LAPACK dgtsv argument {-info} is invalid")
        k = (info - 1) // N                                 # the block with the zero pivot
        singular[k] = True
        d[k], du[k], dl[k], b[k] = 1.0, 0.0, 0.0, 0.0


def _advance(dn, step, t):
    """dn + t step, keeping dn >= 0 [cm^-3].

    With r = t step / dn: dn (1 + r) for r >= -1/2 (the plain Newton update), and
    (dn / 2) exp(2 r + 1) below, which joins it with the same slope and never reaches zero.
    """
    safe = np.where(dn > 0, dn, 1.0)
    r = np.where(dn > 0, t * step / safe, 0.0)
    deep = 0.5 * dn * np.exp(2.0 * np.minimum(r, -0.5) + 1.0)
    return np.where(r >= -0.5, dn + t * step, deep)


def _uniform_solution(Gtot, W, bulk, front, rear, max_iter=200):
    """The uniform dn with W U(dn) + Us_f(dn) + Us_r(dn) = Gtot, per profile [cm^-3].

    Gtot (B, 1) [cm^-2 s^-1].  Newton, safeguarded by a bracket: a step leaving the bracket is
    replaced by a decade up or down (bracket still open) or by geometric bisection.  Assumes
    the losses rise with dn and vanish at dn = 0.
    """
    def f(d):
        U, dU = bulk(d)
        Sf, dSf = front(d)
        Sr, dSr = rear(d)
        return Gtot - W * U - Sf - Sr, -(W * dU + dSf + dSr)

    pos = Gtot > 0
    d = np.where(pos, Gtot / W * 1e-6, 0.0)           # start at a 1 us lifetime
    lo = np.zeros_like(d)
    hi = np.full_like(d, np.inf)
    for _ in range(max_iter):
        val, der = f(d)
        lo = np.where(pos & (val >= 0), np.maximum(lo, d), lo)
        hi = np.where(pos & (val < 0), np.minimum(hi, d), hi)
        done = ~pos | (np.abs(val) <= 1e-13 * Gtot) | (np.isfinite(hi) & (hi - lo <= 4 * _EPS * hi))
        if done.all():
            break
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = d - val / der
        inside = np.isfinite(newton) & (newton > lo) & (newton < hi)
        middle = np.sqrt(lo * np.where(np.isinf(hi), lo, hi))      # geometric bisection
        fallback = np.where(np.isinf(hi), 10.0 * d, np.where(lo == 0, 0.1 * d, middle))
        d = np.where(done, d, np.where(inside, newton, fallback))
    return d


def _check_mesh(x_cm):
    x = np.asarray(x_cm, dtype=float)
    if x.ndim != 1 or x.size < 3 or not np.all(np.isfinite(x)):
        raise InputError("profile.x_cm", x_cm, "a 1-D array of at least 3 finite depths in cm")
    if x[0] != 0.0:
        raise InputError("profile.x_cm", x_cm, "must start at the front surface, x[0] = 0 cm")
    if np.any(np.diff(x) <= 0):
        raise InputError("profile.x_cm", x_cm, "strictly increasing depths",
                         "build the mesh with optogen.profile.mesh")
    return x


def solve_profile(x_cm, generation_cm3_s, bulk, diffusion, front, rear, *, dn_guess=None,
                  rtol=1e-10, max_iter=100) -> ProfileSolution:
    """Steady-state depth profile(s) of the excess carrier density (see the module docstring).

    Parameters
    ----------
    x_cm : array_like
        Mesh nodes, strictly increasing, x[0] = 0, x[-1] = W (see `mesh`) [cm].
    generation_cm3_s : array_like
        Generation rate at the nodes, shape (..., X), >= 0 [cm^-3 s^-1].
    bulk : callable
        dn [cm^-3] -> (U [cm^-3 s^-1], dU/ddn [s^-1]), vectorised, U(0) = 0, rising.
    diffusion : callable
        dn [cm^-3] -> (D [cm^2 s^-1] > 0, dD/ddn [cm^5 s^-1]).
    front, rear : callable
        dn at the face, shape (..., 1) [cm^-3] -> (flux into the surface [cm^-2 s^-1],
        d flux/ddn [cm s^-1]).
    dn_guess : array_like, optional
        Starting profile, broadcastable to (..., X); default the uniform answer [cm^-3].
    rtol : float
        Tolerance on sum_i |R_i| relative to the total generation [-].
    max_iter : int
        Newton iteration limit [-].

    Returns
    -------
    ProfileSolution
        Profiles that do not converge are flagged (converged False, their residual reported)
        and a ProfileConvergenceWarning gives the count and worst residual.
    """
    x = _check_mesh(x_cm)
    G = np.asarray(generation_cm3_s, dtype=float)
    if G.ndim < 1 or G.shape[-1] != x.size:
        raise InputError("profile.generation_cm3_s", f"shape {G.shape}",
                         f"shape (..., {x.size}): one value per mesh node on the last axis")
    check_range("profile.generation_cm3_s", G, 0.0, None, unit="cm^-3 s^-1")
    check_range("profile.rtol", rtol, 0.0, 1.0, low_open=True)
    if isinstance(max_iter, bool) or int(max_iter) != max_iter or max_iter < 1:
        raise InputError("profile.max_iter", max_iter, "an integer >= 1")
    batch = G.shape[:-1]
    X = x.size
    G2 = G.reshape(-1, X)
    B = G2.shape[0]
    W = x[-1]

    # the solver works on a flat (B, X) batch; the callables see the caller's batch shape
    fns = [lambda d, fn=fn, name=name: tuple(
               v.reshape(B, -1) for v in _call(fn, name, d.reshape(batch + d.shape[-1:])))
           for fn, name in ((bulk, "bulk"), (diffusion, "diffusion"), (front, "front"),
                            (rear, "rear"))]
    system = _System(x, G2, *fns)
    Gtot = system.GdV.sum(axis=1)
    scale = np.where(Gtot > 0, Gtot, 1.0)

    uniform = _uniform_solution(Gtot[:, None], W, fns[0], fns[2], fns[3])[:, 0]
    if dn_guess is None:
        dn = np.repeat(uniform[:, None], X, axis=1)
    else:
        guess = np.asarray(dn_guess, dtype=float)
        check_range("profile.dn_guess", guess, 0.0, None, unit="cm^-3")
        try:
            dn = np.broadcast_to(guess, batch + (X,)).reshape(B, X).copy()
        except ValueError:
            raise InputError("profile.dn_guess", f"shape {guess.shape}",
                             f"broadcastable to {batch + (X,)}") from None

    ev = system.evaluate(dn)
    for name in ("U", "D", "Sf", "Sr"):
        if not np.all(np.isfinite(ev[name])):
            raise InputError("profile." + {"U": "bulk", "D": "diffusion", "Sf": "front",
                                           "Sr": "rear"}[name], "non-finite output",
                             "finite rates for the starting profile")
    if np.any(ev["D"] <= 0):
        raise InputError("profile.diffusion", float(ev["D"].min()), "D > 0 cm^2 s^-1")

    def measures(e):
        """(local residual above the floor, |balance|), both relative to the generation."""
        excess = np.sum(np.maximum(np.abs(e["R"]) - 16 * _EPS * e["mag"], 0.0), axis=1)
        imbalance = np.abs(Gtot - e["U"] @ system.dV - e["Sf"] - e["Sr"])
        return excess / scale, imbalance / scale

    def merit(e):   # line-search merit: the sum of the two convergence measures
        return sum(measures(e))

    def is_converged(e):
        excess, imbalance = measures(e)
        return (excess <= rtol) & (imbalance <= rtol)

    iterations = np.zeros(B, dtype=int)
    converged = is_converged(ev)
    failed = np.zeros(B, dtype=bool)                      # singular Jacobian
    for _ in range(max_iter):
        active = ~converged & ~failed
        if not active.any():
            break
        step, singular = _tridiagonal_solve(ev["diag"], ev["upper"], ev["lower"], -ev["R"])
        failed |= singular & active
        active &= ~singular
        step[~active] = 0.0
        phi0 = merit(ev)
        t = np.ones(B)
        for _ in range(12):
            trial = _advance(dn, step, t[:, None])
            ev_t = system.evaluate(trial)
            phi = merit(ev_t)
            bad = active & ~(np.isfinite(phi) & ((phi <= (1 - 1e-4 * t) * phi0)
                                                 | is_converged(ev_t)))
            if not bad.any():
                break
            t = np.where(bad, 0.5 * t, t)
        if not np.all(np.isfinite(ev_t["R"])):             # never accept a non-finite state
            keep = ~np.all(np.isfinite(ev_t["R"]), axis=1)
            t[keep] = 0.0
            trial = _advance(dn, step, t[:, None])
            ev_t = system.evaluate(trial)
        dn, ev = trial, ev_t
        iterations += active
        converged = is_converged(ev)

    res = np.sum(np.abs(ev["R"]), axis=1) / scale
    if not converged.all():
        worst = float(np.max(res[~converged]))
        why = f"; {int(failed.sum())} had a singular Jacobian" if failed.any() else ""
        warnings.warn(ProfileConvergenceWarning(
            f"{int((~converged).sum())} of {B} depth profiles did not converge in {max_iter} "
            f"Newton iterations (worst residual {worst:.3g} x total generation, tolerance "
            f"{rtol:g}){why}"), stacklevel=2)

    def shaped(a):
        return a.reshape(batch + a.shape[1:])

    return ProfileSolution(
        x_cm=x, control_volume_cm=system.dV, delta_n_cm3=shaped(dn),
        generation_cm3_s=shaped(G2), converged=shaped(converged),
        iterations=shaped(iterations), residual=shaped(res),
        generation_cm2_s=shaped(Gtot), bulk_recombination_cm2_s=shaped(ev["U"] @ system.dV),
        front_loss_cm2_s=shaped(ev["Sf"]), rear_loss_cm2_s=shaped(ev["Sr"]),
        uniform_delta_n_cm3=shaped(uniform))
