"""Optics: front reflectance, rear reflectance and light paths -> absorptance A(lambda).

All functions broadcast over any shape (wavelength on the last axis by convention,
temperature on the leading axes).  Lengths in cm, wavelengths in nm.

Front reflectance models (``front_reflectance(spec, ...)``):
  * a number (or array over wavelength) in [0, 1];
  * "bare": Fresnel reflectance at normal incidence from air onto the absorber (n, k);
  * a single-layer coating {n_coating, thickness_nm}: thin-film interference at normal
    incidence, non-absorbing coating, semi-infinite absorber;
  * a file {path = "R.csv"} (columns wavelength_nm, reflectance), linearly interpolated
    and held at its end values outside its range.
Rear reflectance: a number (or array over wavelength) in [0, 1].

Light paths (all give absorptance = A(alpha, W) and the depth profile in generation.py
from one set of pass coefficients, see `passes`):
  * "single": Beer-Lambert, one pass; light reaching the rear leaves.
  * "mirror": planar, a second pass after the rear reflectance; light coming back to the
    front leaves (no further internal reflections; a lower bound for planar cells).
  * "lambertian": Green 2002 light trapping, generalised to a rear reflectance R_b.
Limits: normal incidence, incoherent passes in the absorber (no thin-absorber
interference fringes), escape cone of a Lambertian front taken as fully transmitting.
"""
from __future__ import annotations

from pathlib import Path
from typing import Mapping, NamedTuple

import numpy as np

from . import registry
from .errors import InputError, check_range, did_you_mean

FRONT_FIELD = "optics.front_reflectance"


# ---------------------------------------------------------------------------
# Front reflectance
# ---------------------------------------------------------------------------

def reflectance_fresnel_normal(n, k=0.0):
    """Reflectance of a bare surface at normal incidence from air (Fresnel).

    R = ((n - 1)^2 + k^2) / ((n + 1)^2 + k^2)   (absorbing medium N = n - ik).

    Parameters
    ----------
    n : array_like
        Refractive index [-].
    k : array_like
        Extinction coefficient [-].

    Returns
    -------
    ndarray
        R [-].

    References
    ----------
    E. Hecht, Optics, 4th ed. (Addison-Wesley, 2002), Sec. 4.6.
    """
    n = np.asarray(n, float)
    k = np.asarray(k, float)
    return ((n - 1.0) ** 2 + k**2) / ((n + 1.0) ** 2 + k**2)


def reflectance_single_layer(wavelength_nm, n_coating, thickness_nm, n, k=0.0, n_ambient=1.0):
    """Reflectance of a single non-absorbing thin film on an absorbing substrate, normal incidence.

    r = (r01 + r12 e^{-2i delta}) / (1 + r01 r12 e^{-2i delta}),  R = |r|^2,
    r01 = (n0 - n1)/(n0 + n1), r12 = (n1 - N2)/(n1 + N2), N2 = n - ik,
    delta = 2 pi n1 d / lambda.  A quarter-wave layer (n1 d = lambda/4) with n1 = sqrt(n0 n2)
    gives R = 0 on a lossless substrate.

    Parameters
    ----------
    wavelength_nm : array_like
        Vacuum wavelength [nm].
    n_coating : array_like
        Coating index n1 [-].
    thickness_nm : array_like
        Coating thickness d [nm].
    n, k : array_like
        Optical constants of the substrate [-].
    n_ambient : float
        Ambient index n0 [-].

    Returns
    -------
    ndarray
        R [-].

    References
    ----------
    M. Born and E. Wolf, Principles of Optics, 7th ed. (Cambridge, 1999), Sec. 1.6.4;
    O. S. Heavens, Optical Properties of Thin Solid Films (Butterworths, 1955).
    """
    n1 = np.asarray(n_coating, float)
    N2 = np.asarray(n, float) - 1j * np.asarray(k, float)
    r01 = (n_ambient - n1) / (n_ambient + n1)
    r12 = (n1 - N2) / (n1 + N2)
    phase = np.exp(-4j * np.pi * n1 * np.asarray(thickness_nm, float) / np.asarray(wavelength_nm, float))
    r = (r01 + r12 * phase) / (1.0 + r01 * r12 * phase)
    return np.abs(r) ** 2


def reflectance_from_file(path, wavelength_nm):
    """Reflectance from a CSV (columns wavelength_nm, reflectance), interpolated onto wavelength_nm.

    Linear interpolation; outside the file's range the end values are held.

    Parameters
    ----------
    path : str or Path
        The CSV file [-].
    wavelength_nm : array_like
        Wavelengths [nm].

    Returns
    -------
    ndarray
        R [-].
    """
    from .light import read_columns   # the shared, validating CSV reader
    wl, R, _ = read_columns(path, ("reflectance",), field=FRONT_FIELD)
    check_range(FRONT_FIELD, R, 0.0, 1.0)
    return np.interp(np.asarray(wavelength_nm, float), wl, R)


_COATING_KEYS = ("n_coating", "thickness_nm")


def front_reflectance(spec, wavelength_nm, n=None, k=None, base_dir="."):
    """Front reflectance R_f(lambda) from a model spec (see the module docstring).

    Parameters
    ----------
    spec : float, array, str or mapping
        A number/array in [0, 1] | "bare" | {"n_coating", "thickness_nm"} | {"path"} | a CSV path [-].
    wavelength_nm : array_like
        Wavelengths [nm].
    n, k : array_like, optional
        Absorber optical constants on the same grid (for "bare" and coatings) [-].
    base_dir : str or Path
        Directory that relative file paths refer to [-].

    Returns
    -------
    ndarray or float
        R_f [-].

    References
    ----------
    `reflectance_fresnel_normal`, `reflectance_single_layer`.
    """
    if isinstance(spec, Mapping):
        spec = dict(spec)
        if "path" in spec:
            if len(spec) != 1:
                raise InputError(FRONT_FIELD, spec, "a file table has only the key 'path'")
            return reflectance_from_file(Path(base_dir) / str(spec["path"]), wavelength_nm)
        for key in spec:
            if key not in _COATING_KEYS:
                raise InputError(f"{FRONT_FIELD}.{key}", spec[key],
                                 "a coating key: " + ", ".join(_COATING_KEYS) + " (or 'path' for a file)",
                                 did_you_mean(key, _COATING_KEYS + ("path",)))
        missing = [key for key in _COATING_KEYS if key not in spec]
        if missing:
            raise InputError(f"{FRONT_FIELD}.{missing[0]}", None, "required for a coating")
        n_c = check_range(f"{FRONT_FIELD}.n_coating", spec["n_coating"], 1.0, None)
        d = check_range(f"{FRONT_FIELD}.thickness_nm", spec["thickness_nm"], 0.0, None, unit="nm")
        return reflectance_single_layer(wavelength_nm, n_c, d, _need(n, "n"), 0.0 if k is None else k)
    if isinstance(spec, (str, Path)):
        if str(spec).strip().lower() == "bare":
            return reflectance_fresnel_normal(_need(n, "n"), 0.0 if k is None else k)
        if str(spec).lower().endswith(".csv"):
            return reflectance_from_file(Path(base_dir) / str(spec), wavelength_nm)
        raise InputError(FRONT_FIELD, spec, "a number in [0, 1], 'bare', a coating table "
                         "{n_coating, thickness_nm}, or a CSV file (wavelength_nm, reflectance)",
                         did_you_mean(str(spec).lower(), ["bare"]))
    return check_range(FRONT_FIELD, spec, 0.0, 1.0)


def _need(n, what):
    if n is None:
        raise InputError(FRONT_FIELD, what, "the absorber's refractive index is needed for this model")
    return n


# ---------------------------------------------------------------------------
# Light paths
# ---------------------------------------------------------------------------

class Passes(NamedTuple):
    """Pass coefficients of a light path.

    Depth profile per unit incident photon flux:
    g(x) = c alpha [down e^{-c alpha x} + up e^{-c alpha (W - x)}]   [cm^-1];
    absorptance = down (1 - T) + up (1 - T),  T = e^{-c alpha W}.

    Parameters
    ----------
    c : float
        Path length per unit depth (1 planar, 2 Lambertian) [-].
    down, up : ndarray
        Flux entering the downward / upward pass, summed over all round trips [-].
    absorptance : ndarray
        Absorptance A [-].
    """
    c: float
    down: np.ndarray
    up: np.ndarray
    absorptance: np.ndarray


def path_single(n, rear_R):
    """Beer-Lambert single pass: c = 1, no rear or internal reflection.

    A = (1 - R_f)(1 - e^{-alpha W}).

    Parameters
    ----------
    n : array_like
        Refractive index (not used) [-].
    rear_R : array_like
        Rear reflectance (not used: light reaching the rear leaves) [-].

    Returns
    -------
    tuple
        c [-], rear reflectance used [-], internal front reflectance [-].

    References
    ----------
    A. Beer, Ann. Phys. Chem. 86, 78 (1852), doi:10.1002/andp.18521620505 (from memory).
    """
    return 1.0, 0.0, 0.0


def path_mirror(n, rear_R):
    """Planar absorber with a rear reflector, two passes (Beer-Lambert each way).

    A = (1 - R_f)(1 - e^{-alpha W})(1 + R_b e^{-alpha W}); light returning to the front leaves.

    Parameters
    ----------
    n : array_like
        Refractive index (not used) [-].
    rear_R : array_like
        Rear reflectance R_b [-].

    Returns
    -------
    tuple
        c [-], rear reflectance used [-], internal front reflectance [-].

    References
    ----------
    A. Beer, Ann. Phys. Chem. 86, 78 (1852), doi:10.1002/andp.18521620505 (from memory)
    (each pass).
    """
    return 1.0, rear_R, 0.0


def path_lambertian_green2002(n, rear_R):
    """Lambertian light trapping (Green 2002), generalised to a rear reflectance R_b.

    Light entering through a Lambertian front is randomised; one pass through thickness W
    transmits T = e^{-2 alpha W} (mean path 2W, Green's approximation of 2 E_3(alpha W)); the
    rear reflects R_b; of the light back at the front, 1/n^2 escapes and 1 - 1/n^2 is
    reflected internally.  Summing the round trips (geometric series):
        A = (1 - R_f)(1 - T)(1 + R_b T) / (1 - R_b T^2 (1 - 1/n^2)).
    For R_b = 1, R_f = 0 this is A = (1 - e^{-4 alpha W}) / (1 - (1 - 1/n^2) e^{-4 alpha W});
    its weak-absorption limit is 4 n^2 alpha W.

    Parameters
    ----------
    n : array_like
        Refractive index, >= 1 [-].
    rear_R : array_like
        Rear reflectance R_b [-].

    Returns
    -------
    tuple
        c = 2 [-], rear reflectance used [-], internal front reflectance 1 - 1/n^2 [-].

    References
    ----------
    M. A. Green, Prog. Photovolt. 10, 235 (2002), doi:10.1002/pip.404; E. Yablonovitch,
    J. Opt. Soc. Am. 72, 899 (1982), doi:10.1364/JOSA.72.000899 (from memory); T. Tiedje,
    E. Yablonovitch, G. D. Cody and B. G. Brooks, IEEE Trans. Electron Dev. 31, 711 (1984),
    doi:10.1109/T-ED.1984.21594 (from memory).
    """
    n = check_range("absorber.refractive_index", n, 1.0, None)
    return 2.0, rear_R, 1.0 - 1.0 / np.asarray(n, float) ** 2


_KEY = "optics.light_path"
registry.register(
    "light_path", "single", path_single, key=_KEY, aliases=("singlepass", "beerlambert"),
    summary="one pass, Beer-Lambert; light reaching the rear leaves",
    reference="A. Beer, Ann. Phys. Chem. 86, 78 (1852)")
registry.register(
    "light_path", "mirror", path_mirror, key=_KEY, aliases=("planar", "doublepass", "rearmirror"),
    summary="planar, a second pass after the rear reflectance")
registry.register(
    "light_path", "lambertian", path_lambertian_green2002, key=_KEY, aliases=("lambert", "green2002", "textured"),
    summary="Lambertian light trapping generalised to a rear reflectance R_b (default)",
    reference="M. A. Green, Prog. Photovolt. 10, 235 (2002)", doi="10.1002/pip.404")

#: canonical light path name -> pass parameters (n, rear_R) -> (c, R_b, r_i) (a view of the registry)
LIGHT_PATHS = {m.name: m.function for m in registry.models("light_path", load=False)}


def light_path_name(light_path: str) -> str:
    """The canonical name of a light path.

    Parameters
    ----------
    light_path : str
        A registered "light_path" model or alias, e.g. "Lambertian" [-].

    Returns
    -------
    str
        "single", "mirror" or "lambertian" [-].
    """
    return registry.pick("light_path", light_path, _KEY).name


def passes(alpha_cm1, thickness_cm, n, front_R, rear_R, light_path="lambertian") -> Passes:
    """Pass coefficients and absorptance of a light path; all arrays broadcast.

    With T = e^{-c alpha W}, internal front reflectance r_i and rear reflectance R_b:
      down = (1 - R_f) / (1 - R_b r_i T^2),  up = down R_b T,  A = (down + up)(1 - T).

    Parameters
    ----------
    alpha_cm1 : array_like
        Absorption coefficient [cm^-1].
    thickness_cm : array_like
        Absorber thickness W [cm].
    n : array_like
        Refractive index [-].
    front_R, rear_R : array_like
        Front (external) and rear reflectance [-].
    light_path : str
        A registered "light_path" model [-].

    Returns
    -------
    Passes
        c [-], down [-], up [-], absorptance [-].

    References
    ----------
    The chosen light path's (`optogen.registry.models("light_path")`).
    """
    alpha = check_range("absorber.alpha_cm1", alpha_cm1, 0.0, None, unit="cm^-1")
    W = np.asarray(thickness_cm, float)
    if np.any(~(W > 0)) or np.any(~np.isfinite(W)):
        raise InputError("absorber.thickness_um", W * 1e4, "must be > 0 um and finite")
    front_R = check_range(FRONT_FIELD, front_R, 0.0, 1.0)
    rear_R = check_range("optics.rear_reflectance", rear_R, 0.0, 1.0)
    c, Rb, r_i = registry.pick("light_path", light_path, _KEY).call(n, rear_R)
    tau = c * alpha * W                                   # optical depth of one pass [-]
    T = np.exp(-tau)
    one_minus_T = -np.expm1(-tau)
    Rr = np.asarray(Rb, float) * r_i                      # loss-free round-trip factor [-]
    denom = (1.0 - Rr) + Rr * -np.expm1(-2.0 * tau)       # 1 - R_b r_i T^2, accurate for small tau
    down = (1.0 - np.asarray(front_R, float)) / denom
    up = down * Rb * T
    return Passes(c, down, up, (down + up) * one_minus_T)


def absorptance(alpha_cm1, thickness_cm, n, front_R, rear_R, light_path="lambertian"):
    """Absorptance A of the absorber for a light path (see `passes`); broadcasts.

    Parameters
    ----------
    alpha_cm1 : array_like
        Absorption coefficient [cm^-1].
    thickness_cm : array_like
        Absorber thickness [cm].
    n : array_like
        Refractive index [-].
    front_R, rear_R : array_like
        Front and rear reflectance [-].
    light_path : str
        "single", "mirror" or "lambertian" (a registered "light_path" model) [-].

    Returns
    -------
    ndarray
        A [-].

    References
    ----------
    The chosen light path's (`optogen.registry.models("light_path")`).
    """
    return passes(alpha_cm1, thickness_cm, n, front_R, rear_R, light_path).absorptance
