"""Optical generation: depth profile G(x), average G, photocurrent, absorbed spectrum.

For each wavelength the light path (optics.passes) gives a downward and an upward
flux; their Beer-Lambert decay gives the generation per unit depth

    g(x, lambda) = Phi(lambda) c alpha [down e^{-c alpha x} + up e^{-c alpha (W - x)}]

with c = 1 for the planar paths ("single", "mirror": forward pass plus the
rear-reflected backward pass) and c = 2 for "lambertian".  For the Lambertian path
this is the depth profile implied by the same model as its absorptance (Green 2002:
randomised light with mean path 2W per pass, so its flux decays as e^{-2 alpha x}
downwards and e^{-2 alpha (W - x)} upwards, summed over all round trips).  In every
case  integral_0^W g dx = Phi A  exactly, so the profile integrates to the photocurrent.

    G(x) = integral g dlambda,   J_ph = q integral Phi A dlambda,   <G> = J_ph / (q W)

Wavelength integrals use the trapezoidal rule on the spectrum's own grid (as light.py).
Everything is vectorised over temperature x wavelength x depth; the 3-D intermediate is
built in chunks of temperatures so memory stays below MAX_CHUNK_BYTES.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import optics
from .constants import hc_eV_nm, q_C
from .errors import InputError

MAX_CHUNK_BYTES = 8 * 2**20        #: bound on one temperature chunk of the (T, L, X) array [bytes]
DEPTH_POINTS = 200                 #: default number of depth points [-]


def trapezoid_weights(x):
    """Trapezoidal-rule weights of a 1-D grid.

    Parameters
    ----------
    x : array_like
        The grid, shape (L,) [any unit].

    Returns
    -------
    ndarray
        Weights w, shape (L,), with sum(w f) == numpy.trapezoid(f, x) [unit of x].
    """
    x = np.asarray(x, float)
    w = np.zeros_like(x)
    if x.size > 1:
        dx = np.diff(x)
        w[:-1] += dx / 2.0
        w[1:] += dx / 2.0
    return w


def depth_mesh_cm(thickness_cm, alpha_max_cm1=0.0, points=DEPTH_POINTS):
    """Depth mesh from 0 to the thickness, fine near the front.

    0, then geometric points from h0 to W with h0 = min(W / (points - 1), 0.05 / alpha_max)
    (at least 1e-12 W), so the shortest absorption length is resolved by ~20 points; with
    the default 200 points the trapezoid over the mesh integrates a 1-sun profile to about
    1e-3 for any thickness from 10 nm to 1 cm.  A transparent absorber gets a uniform mesh.

    Parameters
    ----------
    thickness_cm : float
        Absorber thickness W [cm].
    alpha_max_cm1 : float
        Largest c alpha on the wavelength grid [cm^-1].
    points : int
        Number of depths, >= 3 [-].

    Returns
    -------
    ndarray
        Depths, shape (points,), rising from 0 to W [cm].
    """
    W = float(thickness_cm)
    if not W > 0:
        raise InputError("absorber.thickness_um", W * 1e4, "must be > 0 um")
    points = int(points)
    if points < 3:
        raise InputError("generation.depth_points", points, "must be >= 3")
    h0 = W / (points - 1)
    if alpha_max_cm1 > 0:
        h0 = max(min(h0, 0.05 / alpha_max_cm1), 1e-12 * W)
    if h0 >= W / (points - 1):
        return np.linspace(0.0, W, points)
    return np.concatenate(([0.0], np.geomspace(h0, W, points - 1)))


@dataclass(frozen=True, eq=False)
class Generation:
    """Optical generation in an absorber; leading axes broadcast over temperature.

    Parameters
    ----------
    temperature_K : ndarray
        Temperature(s), shape (...), only recorded [K].
    thickness_cm : float
        Absorber thickness W [cm].
    light_path : str
        Canonical light path name [-].
    wavelength_nm : ndarray
        Wavelength grid, shape (L,) [nm].
    depth_cm : ndarray
        Depth mesh, shape (X,) [cm].
    front_reflectance : ndarray
        Front reflectance, shape (..., L) [-].
    absorptance : ndarray
        Absorptance A, shape (..., L) [-].
    absorbed_photon_flux_cm2_s_nm : ndarray
        Absorbed spectrum Phi A, shape (..., L) [cm^-2 s^-1 nm^-1].
    profile_cm3_s : ndarray
        G(x), shape (..., X) [cm^-3 s^-1].
    average_cm3_s : ndarray
        <G> = J_ph / (q W), shape (...) [cm^-3 s^-1].
    photocurrent_mA_cm2 : ndarray
        J_ph = q integral Phi A dlambda, shape (...) [mA cm^-2].
    absorbed_fraction : ndarray
        Absorbed / incident photons, shape (...); NaN for a dark source [-].
    """

    temperature_K: np.ndarray
    thickness_cm: float
    light_path: str
    wavelength_nm: np.ndarray
    depth_cm: np.ndarray
    front_reflectance: np.ndarray
    absorptance: np.ndarray
    absorbed_photon_flux_cm2_s_nm: np.ndarray
    profile_cm3_s: np.ndarray
    average_cm3_s: np.ndarray
    photocurrent_mA_cm2: np.ndarray
    absorbed_fraction: np.ndarray

    def to_dict(self) -> dict:
        """The DESIGN.md `generation` block: average_cm3_s, photocurrent_mA_cm2, absorbed_fraction.

        Returns
        -------
        dict
            Name -> value; scalars become floats, arrays lists; NaN (a dark source's absorbed
            fraction) becomes None [unit of the name].
        """
        def plain(v):
            v = np.asarray(v, float)
            if v.ndim == 0:
                return float(v) if np.isfinite(v) else None
            return [plain(x) for x in v]
        return {key: plain(getattr(self, key)) for key in ("average_cm3_s", "photocurrent_mA_cm2", "absorbed_fraction")}


def profile_cm3_s(depth_cm, wavelength_nm, photon_flux_cm2_s_nm, alpha_cm1, thickness_cm, n, front_R,
                  rear_R, light_path="lambertian"):
    """Generation profile G(x) without chunking (see `compute`).

    Parameters
    ----------
    depth_cm : array_like
        Depths, shape (X,) [cm].
    wavelength_nm : array_like
        Wavelength grid, shape (L,) [nm].
    photon_flux_cm2_s_nm : array_like
        Incident spectral photon flux, shape (L,) [cm^-2 s^-1 nm^-1].
    alpha_cm1 : array_like
        Absorption coefficient, shape (..., L) or broadcastable [cm^-1].
    thickness_cm : float
        Absorber thickness W [cm].
    n : array_like
        Refractive index, broadcastable to (..., L) [-].
    front_R, rear_R : array_like
        Front and rear reflectance, broadcastable to (..., L) [-].
    light_path : str
        "single" | "mirror" | "lambertian" [-].

    Returns
    -------
    ndarray
        G(x), shape (..., X) [cm^-3 s^-1].

    References
    ----------
    M. A. Green, Prog. Photovolt. Res. Appl. 10, 235 (2002), doi:10.1002/pip.404 (from memory).
    """
    p = optics.passes(alpha_cm1, thickness_cm, n, front_R, rear_R, light_path)
    return _profile(np.asarray(depth_cm, float), trapezoid_weights(wavelength_nm) * np.asarray(photon_flux_cm2_s_nm, float),
                    np.asarray(alpha_cm1, float), float(thickness_cm), p)


def _profile(x, weight, alpha, W, p):
    """G(x) = sum_l weight_l c alpha_l [down_l e^{-c alpha_l x} + up_l e^{-c alpha_l (W-x)}], shape (..., X)."""
    shape = np.broadcast_shapes(alpha.shape, np.shape(p.down), np.shape(p.up), weight.shape)
    L = shape[-1]
    k = np.broadcast_to(p.c * alpha, shape).reshape(-1, L)
    a_down = np.broadcast_to(weight * p.c * alpha * p.down, shape).reshape(-1, L)
    a_up = np.broadcast_to(weight * p.c * alpha * p.up, shape).reshape(-1, L)
    keep = np.any(a_down != 0, axis=0)          # wavelengths that generate anything
    k, a_down, a_up = k[:, keep], a_down[:, keep], a_up[:, keep]
    out = np.zeros((k.shape[0], x.size))
    row_bytes = 8 * max(k.shape[1], 1) * x.size
    rows = max(1, MAX_CHUNK_BYTES // row_bytes)
    cols = x.size if row_bytes <= MAX_CHUNK_BYTES else max(1, MAX_CHUNK_BYTES // (8 * max(k.shape[1], 1)))
    scratch = np.empty(min(rows, k.shape[0]) * k.shape[1] * min(cols, x.size))   # reused: no page faults per chunk
    # chunks of temperatures (and of depths only if one temperature alone is too large)
    for t0 in range(0, k.shape[0], rows):
        for x0 in range(0, x.size, cols):
            t, xs = slice(t0, t0 + rows), slice(x0, x0 + cols)
            out[t, xs] = _two_passes(a_down[t], a_up[t], k[t], x[xs], W, scratch)
    return out.reshape(shape[:-1] + (x.size,))


_RECIPROCAL_MAX_DEPTH = 600.0   #: optical depth c alpha W below which e^{c alpha x} = 1/e^{-c alpha x} is safe [-]
_EXPONENT_FLOOR = -700.0        #: exponents are clipped here (e^-700 ~ 1e-304, still a normal float) [-]


def _two_passes(a_down, a_up, k, x, W, scratch):
    """sum_l [a_down e^{-k x} + a_up e^{-k (W - x)}] for a chunk: (t, L) inputs, (X,) depths -> (t, X).

    Exponents are clipped at -700: a wavelength's contribution deeper than 700 absorption
    lengths is held at e^-700 (1e-304) of its value at the surface instead of decaying
    further.  This keeps numpy's exp on its fast path (underflow to subnormals is ~6x
    slower) and changes G(x) by less than 1e-304 of the surface generation.
    scratch: a float64 buffer of at least t * L * X elements, overwritten.
    One exponential per element: the backward pass reuses e^{-k x} as
    e^{-k (W - x)} = e^{-k W} / e^{-k x}, exact while k W < 600; the few wavelengths with
    600 <= k W and a non-zero backward flux (k W < ~745) get their own exponential.
    """
    e = scratch[:k.size * x.size].reshape(k.shape + x.shape)
    np.multiply(k[:, :, None], -x, out=e)
    np.maximum(e, _EXPONENT_FLOOR, out=e)
    np.exp(e, out=e)
    g = np.einsum("tl,tlx->tx", a_down, e)     # einsum, not BLAS matmul: no thread pool contention
    if not np.any(a_up):
        return g
    kW = k * W
    safe = kW < _RECIPROCAL_MAX_DEPTH
    amp = np.where(safe, a_up * np.exp(-np.minimum(kW, _RECIPROCAL_MAX_DEPTH)), 0.0)
    if np.any(amp):
        np.reciprocal(e, out=e)                  # <= e^700: finite everywhere, multiplied by 0 where not safe
        g += np.einsum("tl,tlx->tx", amp, e)
    rest = ~safe & (a_up != 0)
    if np.any(rest):
        ti, li = np.nonzero(rest)
        d = np.maximum(-k[ti, li, None] * (W - x), _EXPONENT_FLOOR)
        np.add.at(g, ti, a_up[ti, li, None] * np.exp(d))
    return g


def compute(wavelength_nm, photon_flux_cm2_s_nm, alpha_cm1, n, thickness_cm, front_R=0.0, rear_R=1.0,
            light_path="lambertian", depth_cm=None, T_K=np.nan, with_profile=True) -> Generation:
    """Generation from arrays (the core behind `generate`).

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength grid, shape (L,) [nm].
    photon_flux_cm2_s_nm : array_like
        Incident spectral photon flux, shape (L,) [cm^-2 s^-1 nm^-1].
    alpha_cm1 : array_like
        Absorption coefficient, shape (..., L) [cm^-1].
    n : array_like
        Refractive index, shape (..., L) [-].
    thickness_cm : float
        Absorber thickness W [cm].
    front_R, rear_R : array_like
        Front and rear reflectance, broadcastable to (..., L) [-].
    light_path : str
        "single" | "mirror" | "lambertian" [-].
    depth_cm : array_like, optional
        Depths, shape (X,), or None for `depth_mesh_cm` [cm].
    T_K : array_like
        Temperature(s), shape (...), only recorded (as `Generation.temperature_K`) [K].
    with_profile : bool
        Also compute G(x) (False: depth_cm and profile_cm3_s are empty, for sweeps that need
        only the averages) [-].

    Returns
    -------
    Generation
        Absorptance, absorbed spectrum, G(x), <G>, J_ph and the absorbed fraction.

    References
    ----------
    M. A. Green, Prog. Photovolt. Res. Appl. 10, 235 (2002), doi:10.1002/pip.404 (from memory).
    """
    wl = np.asarray(wavelength_nm, float)
    phi = np.asarray(photon_flux_cm2_s_nm, float)
    alpha = np.asarray(alpha_cm1, float)
    W = float(thickness_cm)
    name = optics.light_path_name(light_path)
    p = optics.passes(alpha, W, n, front_R, rear_R, name)
    if not with_profile:
        x = np.empty(0)
    elif depth_cm is None:
        x = depth_mesh_cm(W, p.c * float(np.max(alpha, initial=0.0)))
    else:
        x = np.asarray(depth_cm, float)
        if x.ndim != 1 or np.any(x < 0) or np.any(x > W * (1 + 1e-12)) or not np.all(np.isfinite(x)):
            raise InputError("generation.depth_cm", x, f"a 1-D array of depths within [0, {W:g}] cm")
    w = trapezoid_weights(wl)
    A = np.broadcast_to(p.absorptance, np.broadcast_shapes(p.absorptance.shape, wl.shape))
    absorbed = phi * A
    absorbed_total = absorbed @ w                                   # [cm^-2 s^-1]
    incident = float(phi @ w)
    with np.errstate(invalid="ignore", divide="ignore"):
        fraction = absorbed_total / incident if incident > 0 else np.full(absorbed_total.shape, np.nan)
    return Generation(
        temperature_K=np.asarray(T_K, float), thickness_cm=W, light_path=name,
        wavelength_nm=wl, depth_cm=x,
        front_reflectance=np.broadcast_to(np.asarray(front_R, float), A.shape),
        absorptance=A, absorbed_photon_flux_cm2_s_nm=absorbed,
        profile_cm3_s=_profile(x, w * phi, alpha, W, p) if with_profile else np.empty(absorbed_total.shape + (0,)),
        average_cm3_s=absorbed_total / W,
        photocurrent_mA_cm2=q_C * absorbed_total * 1e3,
        absorbed_fraction=fraction)


def generate(spectrum, material, thickness_cm, T_K=300.0, front_reflectance=0.0, rear_reflectance=1.0,
             light_path="lambertian", depth_cm=None, coating=None, *, page=None, csv_path=None,
             base_dir=".", with_profile=True) -> Generation:
    """Generation of `spectrum` in an absorber of `material`, broadcast over T_K.

    Parameters
    ----------
    spectrum : light.Spectrum
        The incident light.
    material : materials.Material or str
        The absorber, or a built-in name [-].
    thickness_cm : float
        Absorber thickness [cm].
    T_K : array_like
        Temperature(s), any shape [K].
    front_reflectance : float, str or mapping
        Number | "bare" | coating table | file table (`optics.front_reflectance`) [-].
    rear_reflectance : float
        Rear reflectance, [0, 1] [-].
    light_path : str
        "single" | "mirror" | "lambertian" [-].
    depth_cm : array_like, optional
        Depth mesh, shape (X,), or None (automatic) [cm].
    coating : mapping, optional
        {"n_coating", "thickness_nm"}, as an alternative to a coating table in
        front_reflectance [-].
    page, csv_path : str, optional
        Optical-constant source passed to `materials.optical_constants` [-].
    base_dir : str or Path
        Directory that relative file paths refer to [-].
    with_profile : bool
        Also compute G(x) (see `compute`) [-].

    Returns
    -------
    Generation
        Broadcast over the shape of `T_K`.
    """
    from . import materials
    if isinstance(material, str):
        material = materials.get(material)
    if coating is not None:
        if not (isinstance(front_reflectance, (int, float)) and front_reflectance == 0.0):
            raise InputError("optics.coating", coating, "give either a coating or optics.front_reflectance, not both")
        front_reflectance = coating
    T = np.asarray(T_K, float)
    wl, flux = spectrum.wavelength_nm, spectrum.photon_flux_cm2_s_nm
    # a negligible tail below the optical data (a hot blackbody's far UV) is dropped;
    # a real share of the light there is an error (raised by optical_constants)
    short = wl < materials.shortest_wavelength_nm(material, T, page=page, csv_path=csv_path)
    if short.any() and not short.all():
        w = trapezoid_weights(wl)
        if np.sum(flux[short] * w[short]) <= 1e-6 * np.sum(flux * w):
            wl, flux = wl[~short], flux[~short]
    oc = materials.optical_constants(material, wl, T[..., None], page=page, csv_path=csv_path)
    Rf = optics.front_reflectance(front_reflectance, wl, oc.n, oc.k, base_dir=base_dir)
    return compute(wl, flux, oc.alpha_cm1, oc.n, thickness_cm, Rf, rear_reflectance,
                   light_path, depth_cm, T_K=T, with_profile=with_profile or depth_cm is not None)


def absorbed_fraction_below_eV(wavelength_nm, absorbed_photon_flux_cm2_s_nm, rows, energy_eV):
    """Fraction of the absorbed photons with h nu <= energy_eV, per point.

    Used with the quasi-Fermi-level splitting as `energy_eV`: such photons see net gain
    instead of absorption once the quasi-Fermi levels are split by more than their energy
    (Bernard and Duraffourg 1961), so linear absorption, the model behind G, no longer holds
    for them.

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength grid, shape (L,) [nm].
    absorbed_photon_flux_cm2_s_nm : array_like
        Absorbed spectral photon flux, shape (R, L) or (L,) [cm^-2 s^-1 nm^-1].
    rows : array_like of int
        For each point, the row of the flux it uses, shape (P,) [-].
    energy_eV : array_like
        The threshold photon energy of each point, shape (P,); NaN counts nothing [eV].

    Returns
    -------
    ndarray
        Fraction, shape (P,), of the absorbed photon flux at or below energy_eV (0 where
        nothing is absorbed) [-].

    References
    ----------
    M. G. A. Bernard and G. Duraffourg, Phys. Status Solidi 1, 699 (1961),
    doi:10.1002/pssb.19610010703 (from memory).
    """
    wl = np.asarray(wavelength_nm, dtype=float)
    absorbed = np.reshape(absorbed_photon_flux_cm2_s_nm, (-1, wl.size)) * trapezoid_weights(wl)
    e_asc = (hc_eV_nm / wl)[::-1]                             # photon energies, rising [eV]
    cum = np.cumsum(absorbed[:, ::-1], axis=1)
    total = cum[:, -1]
    k = np.searchsorted(e_asc, np.nan_to_num(energy_eV, nan=-np.inf), side="right")
    rows = np.asarray(rows).reshape(-1)
    below = np.where(k > 0, cum[rows, np.maximum(k - 1, 0)], 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total[rows] > 0, below / np.where(total[rows] > 0, total[rows], 1.0), 0.0)
