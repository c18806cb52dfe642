"""Band-gap narrowing: one function per published model, registered as kind "bgn".

A narrowing dEg [eV] raises the effective intrinsic density, n_i,eff = n_i exp(dEg / 2kT).
`STATISTICS` gives the carrier statistics each model is defined with; `bgn_eV` selects a
model by name (`optogen.registry`).
"""
from __future__ import annotations

import numpy as np

from .. import registry
from ..constants import kT_eV
from ..errors import check_range
from ..materials import Material
from .intrinsic_density import _check_T, ln_ni_cm3
from .ionisation import full_ionisation_cm3

__all__ = ["bgn_klaassen1992", "bgn_schenk1998", "bgn_none", "bgn_eV", "pick_bgn_model", "BGN_MODELS", "STATISTICS"]


def bgn_klaassen1992(doping_cm3):
    """Doping-only ("apparent") band-gap narrowing of silicon.

    dEg = 6.92 meV [ln(N / 1.3e17) + sqrt(ln^2(N / 1.3e17) + 0.5)]  (coefficients from memory),
    for use with Boltzmann statistics; N = total dopant density N_D + N_A.

    Parameters
    ----------
    doping_cm3 : array_like
        Total dopant density N [cm^-3].

    Returns
    -------
    ndarray
        dEg [eV] (>= 0; -> 0 as N -> 0).

    References
    ----------
    D. B. M. Klaassen, J. W. Slotboom and H. C. de Graaff, Solid-State Electron. 35, 125
    (1992), doi:10.1016/0038-1101(92)90051-D.
    """
    N = np.asarray(doping_cm3, dtype=float)
    with np.errstate(divide="ignore"):
        L = np.log(N / 1.3e17)
    r = np.sqrt(L * L + 0.5)
    # L + sqrt(L^2 + 0.5), written as 0.5 / (sqrt(L^2 + 0.5) - L) for L < 0 (no cancellation)
    return 6.92e-3 * np.where(L >= 0, np.maximum(L, 0.0) + r, 0.5 / (r - np.minimum(L, 0.0)))


#: Schenk 1998, Table I (silicon), from memory: excitonic Rydberg [eV], Bohr radius [cm],
#: and per carrier (electron, hole) alpha, g, b, c, d, p, h, j, k, q.
_SCHENK_RY_eV = 16.55e-3
_SCHENK_A_cm = 3.719e-7
_SCHENK = {
    "alpha": (0.5187, 0.4813), "g": (12.0, 4.0), "b": (8.0, 1.0), "c": (1.3346, 1.2365),
    "d": (0.893, 1.153), "p": (7.0 / 30.0, 7.0 / 30.0), "h": (3.91, 4.20),
    "j": (2.8585, 2.9307), "k": (0.012, 0.19), "q": (0.75, 0.25),
}

# the fast form of `bgn_schenk1998` relies on these two facts of the parameter set
assert _SCHENK["p"][0] == _SCHENK["p"][1] and set(_SCHENK["q"]) == {0.75, 0.25}


def bgn_schenk1998(T_K, donors_cm3, acceptors_cm3, n_cm3, p_cm3):
    """Injection- and doping-dependent band-gap narrowing of silicon [eV].

    A. Schenk, "Finite-temperature full random-phase approximation model of band gap
    narrowing for silicon device simulation", J. Appl. Phys. 84, 3684 (1998),
    doi:10.1063/1.368545: the Pade approximants fitted to the full RPA, with the
    published silicon parameters (Table I; recalled from memory).  In excitonic units
    (Ry = 16.55 meV, a = 3.719e-7 cm): t = kT/Ry, n_e = n a^3, n_h = p a^3,
    n_s = n_e + n_h, n_P = alpha_e n_e + alpha_h n_h, N_i = (N_D + N_A) a^3, U = n_s^2 / t^3.
    For each carrier a in (e, h):

      dE_a^xc = -[(4 pi)^3 n_s^2 ((48 n_a / (pi g_a))^(1/3) + c_a ln(1 + d_a n_P^p_a))
                  + (8 pi alpha_a / g_a) n_a t^2 + sqrt(8 pi n_s) t^(5/2)]
                / [(4 pi)^3 n_s^2 + t^3 + b_a sqrt(n_s) t^2 + 40 n_P^(3/2) t]
      dE_a^i  = -N_i (1 + U) / [sqrt(t n_P / (2 pi)) (1 + h_a ln(1 + sqrt(n_s) / t))
                                + j_a U n_P^(3/4) (1 + k_a n_P^q_a)]

    dEg = -Ry (dE_e^xc + dE_h^xc + dE_e^i + dE_h^i): the rigid shift of both band edges
    (exchange-correlation of the e-h plasma plus carrier-ion interaction); the full RPA
    "real" narrowing, to be used with Fermi-Dirac statistics.
    Simplification (ours): the ion density entering dE^i is capped at the free-carrier
    density n + p.  The Debye-type screening behind dE^i needs at least as many free
    carriers as ions; without the cap the term diverges in compensated or frozen-out
    material.  The cap is inactive in uncompensated, fully ionised silicon.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].
    n_cm3, p_cm3 : array_like
        Electron and hole densities [cm^-3]; complex values are accepted (the complex-step
        derivative used by optogen.recombination for precise differences).

    Returns
    -------
    ndarray
        dEg [eV] (>= 0).

    References
    ----------
    A. Schenk, J. Appl. Phys. 84, 3684 (1998), doi:10.1063/1.368545.
    """
    # the formula above, each shared power, root and logarithm computed once (1.5x faster; equal
    # to the term-by-term form to 1e-15 relative, and in the complex step to 3e-14)
    T = np.asarray(T_K, dtype=float)
    a3 = _SCHENK_A_cm ** 3
    t = kT_eV(T) / _SCHENK_RY_eV
    t2 = t * t
    t3 = t2 * t
    ne = _real_or_complex(n_cm3) * a3
    nh = _real_or_complex(p_cm3) * a3
    cplx = np.iscomplexobj(ne) or np.iscomplexobj(nh)
    ns = ne + nh
    P = _SCHENK
    n_p = P["alpha"][0] * ne + P["alpha"][1] * nh
    N_ion = (np.asarray(donors_cm3, dtype=float) + np.asarray(acceptors_cm3, dtype=float)) * a3
    ni = np.where(N_ion < np.real(ns), N_ion, ns)          # the cap at n + p (real comparison)
    ns2 = ns * ns
    U = ns2 / t3
    sq_ns = np.sqrt(ns)
    np12 = np.sqrt(n_p)
    np14 = np.sqrt(np12)
    np34 = np12 * np14
    np_pp = n_p ** P["p"][0]                               # p_e = p_h (asserted below the table)
    lg_ion = np.log1p(sq_ns / t)
    sq_tn = np.sqrt(t / (2 * np.pi)) * np12
    c0 = (4 * np.pi) ** 3 * ns2
    xc_t = np.sqrt(8 * np.pi) * sq_ns * (t2 * np.sqrt(t))
    den_common = c0 + t3 + 40.0 * (n_p * np12) * t
    num_i = ni * (1 + U)
    jU = U * np34
    total = 0.0
    for i, na in enumerate((ne, nh)):
        cb = na ** (1 / 3) if cplx else np.cbrt(na)
        num = (c0 * ((48.0 / (np.pi * P["g"][i])) ** (1 / 3) * cb + P["c"][i] * np.log1p(P["d"][i] * np_pp))
               + (8 * np.pi * P["alpha"][i] / P["g"][i]) * na * t2 + xc_t)
        den = den_common + P["b"][i] * sq_ns * t2
        npq = np34 if P["q"][i] == 0.75 else np14             # q_e = 3/4, q_h = 1/4
        ion_den = sq_tn * (1 + P["h"][i] * lg_ion) + P["j"][i] * jU * (1 + P["k"][i] * npq)
        ion = np.divide(num_i, ion_den, out=np.zeros(np.broadcast_shapes(np.shape(num_i), np.shape(ion_den)),
                                                     dtype=np.result_type(num_i, ion_den)),
                        where=np.real(ion_den) > 0)
        total = total + num / den + ion
    return _SCHENK_RY_eV * total


def _real_or_complex(a):
    """a as a float array, or as a complex array if it is complex (complex-step derivatives)."""
    return np.asarray(a) if np.iscomplexobj(a) else np.asarray(a, dtype=float)


def bgn_none(doping_cm3):
    """No band-gap narrowing: zeros shaped like the doping.

    Parameters
    ----------
    doping_cm3 : array_like
        Dopant density (only its shape is used) [cm^-3].

    Returns
    -------
    ndarray
        dEg = 0 [eV].
    """
    return np.zeros(np.shape(doping_cm3))



# Registered models: `call(material, T_K, N_D, N_A, n, p)` -> dEg [eV] (signature adapters only;
# which materials a model applies to is registry metadata, checked by `bgn_model`)
_KEYS = ("recombination.bandgap_narrowing", "absorber.custom.bgn_model")
registry.register(
    "bgn", "klaassen1992", bgn_klaassen1992, key=_KEYS,
    call=lambda material, T, nd, na, n, p: bgn_klaassen1992(nd + na) + 0.0 * T,
    materials=("Si",), aliases=("klaassen", "slotboom", "klaassen_slotboom_degraaff1992"),
    summary="apparent narrowing from the doping, used with Boltzmann statistics",
    reference="D. B. M. Klaassen, J. W. Slotboom and H. C. de Graaff, Solid-State Electron. 35, 125 (1992)",
    doi="10.1016/0038-1101(92)90051-D")
registry.register(
    "bgn", "schenk1998", bgn_schenk1998, key=_KEYS, call=lambda material, T, nd, na, n, p: bgn_schenk1998(T, nd, na, n, p),
    materials=("Si",), injection=True, aliases=("schenk",),
    summary="full random-phase approximation, doping and carriers, used with Fermi-Dirac statistics",
    reference="A. Schenk, J. Appl. Phys. 84, 3684 (1998)", doi="10.1063/1.368545")
registry.register(
    "bgn", "none", bgn_none, key=_KEYS, call=lambda material, T, nd, na, n, p: bgn_none(np.broadcast(T, nd, na)),
    aliases=("off", "no"), summary="no narrowing")

#: canonical band-gap narrowing model name -> dEg(material, T, N_D, N_A, n, p) (a view of the registry)
BGN_MODELS = {m.name: m.call for m in registry.models("bgn", load=False)}

#: carrier statistics each band-gap narrowing model is defined with.  Klaassen 1992 is an
#: *apparent* narrowing, fitted to measured n0 p0 products read with Boltzmann statistics;
#: it is combined with Boltzmann statistics (n = Nc exp(eta), p = Nv exp(eta_p)), so that
#: n0 p0 = n_i,eff^2 exactly at every doping.  Schenk 1998 is the real (full RPA) shift of
#: the band edges and is used with Fermi-Dirac statistics, like the unnarrowed gap.
STATISTICS = {"klaassen1992": "boltzmann", "schenk1998": "fermi_dirac", "none": "fermi_dirac"}


def pick_bgn_model(material: Material, model: str | None = None) -> registry.Model:
    """The registered band-gap narrowing model for `material` (checked to apply to it).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    model : str, optional
        Model name or alias (default: the material's ``bgn_model``, else "none").

    Returns
    -------
    optogen.registry.Model
        The registered model (its ``call(material, T, nd, na, n, p)`` gives dEg [eV]).

    Raises
    ------
    InputError
        For an unknown model, or one that does not apply to the material
        (field ``recombination.bandgap_narrowing``).
    """
    name = model or getattr(material, "bgn_model", None) or "none"
    field = "recombination.bandgap_narrowing"
    return registry.check_material(registry.pick("bgn", name, field), material, field, name)


def bgn_eV(material: Material, T_K, donors_cm3, acceptors_cm3, n_cm3=None, p_cm3=None,
           model: str | None = None):
    """Band-gap narrowing dEg by model name; n_i,eff = n_i exp(dEg / 2kT).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].
    n_cm3, p_cm3 : array_like, optional
        Carrier densities [cm^-3] for carrier-dependent models (complex values are passed
        through, for complex-step derivatives); when omitted, the full-ionisation neutral
        values (`full_ionisation_cm3`) with the material's default n_i model.
    model : str, optional
        A registered "bgn" model (default: the material's ``bgn_model``, else "none").

    Returns
    -------
    ndarray
        dEg [eV].

    References
    ----------
    The chosen model's (`optogen.registry.models("bgn")`).
    """
    T = _check_T(T_K)
    nd = np.asarray(check_range("absorber.donors_cm3", donors_cm3, 0.0, None, unit="cm^-3"))
    na = np.asarray(check_range("absorber.acceptors_cm3", acceptors_cm3, 0.0, None, unit="cm^-3"))
    fn = pick_bgn_model(material, model).call
    if n_cm3 is None or p_cm3 is None:
        n_est, p_est = full_ionisation_cm3(nd, na, ln_ni_cm3(material, T))
        n_cm3 = n_est if n_cm3 is None else n_cm3
        p_cm3 = p_est if p_cm3 is None else p_cm3
    return fn(material, T, nd, na, _real_or_complex(n_cm3), _real_or_complex(p_cm3))
