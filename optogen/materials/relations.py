"""Published relations the material records use (band gap, Kane mass, radiative and Auger constants).

Each selectable relation is registered in `optogen.registry` under the kind a `Material` field
names: "bandgap" (``bandgap_model``: varshni, hansen1982), "mass" (``mass_model``: constant,
weiler1981), "radiative" (``radiative_model``) and "auger" (``auger_model``); the record's methods
look the model up there (`Model.call(material, T_K)`), so no model name is compared by hand.
"""
from __future__ import annotations

import numpy as np

from .. import constants as C
from .. import registry
from ..constants import kT_eV


def bandgap_varshni1967(T_K, eg0_eV, alpha_eV_K, beta_K):
    """Band gap of a semiconductor by the Varshni relation.

    Eg(T) = Eg(0) - alpha T^2 / (T + beta)

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    eg0_eV : array_like
        Band gap at 0 K [eV].
    alpha_eV_K : array_like
        Varshni alpha [eV K^-1].
    beta_K : array_like
        Varshni beta [K].

    Returns
    -------
    ndarray
        Eg [eV].

    References
    ----------
    Y. P. Varshni, "Temperature dependence of the energy gap in semiconductors", Physica 34, 149
    (1967), doi:10.1016/0031-8914(67)90062-6.
    """
    T = np.asarray(T_K, dtype=float)
    return eg0_eV - alpha_eV_K * T**2 / (T + beta_K)


def bandgap_hansen1982(x, T_K):
    """Band gap of Hg(1-x)Cd(x)Te.

    Eg = -0.302 + 1.93 x - 0.81 x^2 + 0.832 x^3 + 5.35e-4 T (1 - 2x)

    Parameters
    ----------
    x : array_like
        Cd fraction [-].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        Eg [eV].

    References
    ----------
    G. L. Hansen, J. L. Schmit and T. N. Casselman, J. Appl. Phys. 53, 7099 (1982),
    doi:10.1063/1.330018.
    """
    x = np.asarray(x, dtype=float)
    T = np.asarray(T_K, dtype=float)
    return -0.302 + 1.93 * x - 0.81 * x**2 + 0.832 * x**3 + 5.35e-4 * T * (1.0 - 2.0 * x)


def electron_mass_weiler1981(Eg_eV, Ep_eV=19.0, delta_eV=1.0, F=-0.8):
    """Conduction-band edge mass of a narrow-gap zinc-blende semiconductor, Kane k.p.

    m0 / m_e = 1 + 2F + (Ep / 3) (2 / Eg + 1 / (Eg + Delta)); for HgCdTe Ep = 19 eV,
    Delta = 1 eV, F = -0.8 (from memory).

    Parameters
    ----------
    Eg_eV : array_like
        Band gap [eV].
    Ep_eV : float
        Kane energy [eV].
    delta_eV : float
        Spin-orbit splitting [eV].
    F : float
        Remote-band parameter [-].

    Returns
    -------
    ndarray
        m_e [m0].

    References
    ----------
    M. H. Weiler, "Magnetooptical properties of Hg1-xCdxTe alloys", in Semiconductors and
    Semimetals vol. 16 (Academic, 1981), p. 119.
    """
    Eg = np.asarray(Eg_eV, dtype=float)
    return 1.0 / (1.0 + 2.0 * F + (Ep_eV / 3.0) * (2.0 / Eg + 1.0 / (Eg + delta_eV)))


def mean_thermal_speed_cm_s(m_m0, T_K=300.0):
    """Mean thermal speed sqrt(8 k T / (pi m)) of a carrier.

    Parameters
    ----------
    m_m0 : array_like
        Mass [m0].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        Speed [cm/s].

    References
    ----------
    Maxwell-Boltzmann mean speed (analytic; e.g. S. M. Sze and K. K. Ng, Physics of
    Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1).
    """
    T = np.asarray(T_K, dtype=float)
    return 100.0 * np.sqrt(8.0 * C.k_B_J_K * T / (np.pi * np.asarray(m_m0, dtype=float) * C.m0_kg))


def hydrogenic_binding_eV(m_m0, permittivity):
    """Effective-mass (hydrogenic) binding energy Ry m* / eps_r^2 (analytic).

    Ry = m0 q^4 / (8 eps0^2 h^2).

    Parameters
    ----------
    m_m0 : array_like
        Effective mass [m0].
    permittivity : array_like
        Static relative permittivity [-].

    Returns
    -------
    ndarray
        Binding energy [eV].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1.
    """
    eps0_F_m = C.eps0_F_cm * 100.0
    ry_eV = C.m0_kg * C.q_C**3 / (8.0 * eps0_F_m**2 * C.h_J_s**2)
    return ry_eV * m_m0 / permittivity**2


def radiative_hall1959(T_K, Eg_eV, me_m0, mh_m0, permittivity):
    """Radiative coefficient of a direct-gap semiconductor, parabolic bands.

    B = 5.8e-13 eps^(1/2) (m0/(me + mh))^(3/2) (1 + m0/me + m0/mh) (300/T)^(3/2)
        (Eg^2 + 3 kT Eg + 3.75 (kT)^2)        (Eg, kT in eV)

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    Eg_eV : array_like
        Band gap [eV].
    me_m0, mh_m0 : array_like
        Electron and hole masses [m0].
    permittivity : array_like
        Static relative permittivity [-].

    Returns
    -------
    ndarray
        B [cm^3 s^-1].

    References
    ----------
    R. N. Hall, Proc. IEE 106B, 923 (1959); in this form as used for HgCdTe, e.g. A. Rogalski,
    Rep. Prog. Phys. 68, 2267 (2005) (from memory).
    """
    T = np.asarray(T_K, dtype=float)
    kT = kT_eV(T)
    Eg = np.asarray(Eg_eV, dtype=float)
    return (5.8e-13 * np.sqrt(permittivity) * (1.0 / (me_m0 + mh_m0)) ** 1.5
            * (1.0 + 1.0 / me_m0 + 1.0 / mh_m0) * (300.0 / T) ** 1.5
            * (Eg**2 + 3.0 * kT * Eg + 3.75 * kT**2))


def auger1_beattie_landsberg1959(T_K, Eg_eV, me_m0, mh_m0, permittivity, nc_cm3, nv_cm3, F1F2=0.2):
    """Auger-1 (CHCC) coefficient Cn of a direct-gap semiconductor.

    Intrinsic Auger-1 lifetime (in the form of J. S. Blakemore, Semiconductor Statistics (1962)):

      tau_A1i = 3.8e-18 eps^2 (1 + mu)^(1/2) (1 + 2 mu) exp[(1 + 2 mu)/(1 + mu) Eg/kT]
                / [ (me/m0) |F1 F2|^2 (kT/Eg)^(3/2) ]  [s],   mu = me/mh,

    and Cn = 1 / (2 n_i^2 tau_A1i) with n_i^2 = Nc Nv exp(-Eg/kT); the two exponentials are
    combined so nothing overflows at low T:

      Cn = (me/m0) |F1F2|^2 (kT/Eg)^(3/2) exp(-mu/(1 + mu) Eg/kT)
           / (2 Nc Nv 3.8e-18 eps^2 (1 + mu)^(1/2) (1 + 2 mu)).

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    Eg_eV : array_like
        Band gap [eV].
    me_m0, mh_m0 : array_like
        Electron and hole masses [m0].
    permittivity : array_like
        Static relative permittivity [-].
    nc_cm3, nv_cm3 : array_like
        Effective densities of states [cm^-3].
    F1F2 : float
        Overlap integral, 0.1-0.3 in the literature, 0.2 common practice [-].

    Returns
    -------
    ndarray
        Cn [cm^6/s].

    References
    ----------
    A. R. Beattie and P. T. Landsberg, Proc. R. Soc. A 249, 16 (1959).
    """
    T = np.asarray(T_K, dtype=float)
    x = np.asarray(Eg_eV, dtype=float) / kT_eV(T)
    mu = np.asarray(me_m0, dtype=float) / mh_m0
    return (me_m0 * F1F2**2 * x**-1.5 * np.exp(-mu / (1.0 + mu) * x)
            / (2.0 * nc_cm3 * nv_cm3 * 3.8e-18 * permittivity**2 * np.sqrt(1.0 + mu) * (1.0 + 2.0 * mu)))


def electron_mass_from_record(material, T_K):
    """The electron density-of-states mass stored in a material record, at every temperature.

    Parameters
    ----------
    material : Material
        Its me_dos_m0 [m0].
    T_K : array_like
        Temperature [K] (shapes the result only).

    Returns
    -------
    ndarray
        m_e [m0].
    """
    return material.me_dos_m0 + 0.0 * np.asarray(T_K, dtype=float)


def radiative_from_record(material, T_K):
    """The radiative coefficient stored in a material record, at every temperature.

    Parameters
    ----------
    material : Material
        Its radiative_B_cm3_s [cm^3 s^-1].
    T_K : array_like
        Temperature [K] (shapes the result only).

    Returns
    -------
    ndarray
        B [cm^3 s^-1].
    """
    return material.radiative_B_cm3_s + 0.0 * np.asarray(T_K, dtype=float)


def auger_from_record(material, T_K):
    """The Auger coefficients stored in a material record, at every temperature.

    Parameters
    ----------
    material : Material
        Its auger_Cn_cm6_s, auger_Cp_cm6_s [cm^6/s].
    T_K : array_like
        Temperature [K] (shapes the result only).

    Returns
    -------
    (ndarray, ndarray)
        Cn, Cp [cm^6/s].
    """
    T = np.asarray(T_K, dtype=float)
    return material.auger_Cn_cm6_s + 0.0 * T, material.auger_Cp_cm6_s + 0.0 * T


# Registered models of a material record's band gap, mass and coefficients: `call(material, T_K)`
# (signature adapters only)
registry.register(
    "bandgap", "varshni", bandgap_varshni1967, key="absorber.custom.bandgap_model",
    call=lambda m, T: bandgap_varshni1967(T, m.eg0_eV, m.varshni_alpha_eV_K, m.varshni_beta_K),
    summary="Eg(T) = eg0_eV - varshni_alpha_eV_K T^2 / (T + varshni_beta_K), the record's fields",
    reference="Y. P. Varshni, Physica 34, 149 (1967)", doi="10.1016/0031-8914(67)90062-6")
registry.register(
    "bandgap", "hansen1982", bandgap_hansen1982, key="absorber.custom.bandgap_model",
    call=lambda m, T: bandgap_hansen1982(m.composition_x, T), requires="composition_x",
    summary="Hg(1-x)Cd(x)Te, a cubic in the Cd fraction x plus a term linear in T",
    reference="G. L. Hansen, J. L. Schmit and T. N. Casselman, J. Appl. Phys. 53, 7099 (1982)",
    doi="10.1063/1.330018")
registry.register(
    "mass", "constant", electron_mass_from_record, key="absorber.custom.mass_model",
    summary="the record's me_dos_m0 at every temperature (electron thermal speed: the record's, as sqrt(T/300))",
    reference="The record's source")
registry.register(
    "mass", "weiler1981", electron_mass_weiler1981, key="absorber.custom.mass_model",
    call=lambda m, T: electron_mass_weiler1981(m.bandgap_eV(T), m.kane_Ep_eV, m.spin_orbit_eV, m.kane_F),
    summary=("Kane k.p edge mass from Eg(T), kane_Ep_eV (> 0), spin_orbit_eV and kane_F; "
             "electron thermal speed sqrt(8 k T / (pi m_e(T)))"),
    reference="M. H. Weiler, Semiconductors and Semimetals vol. 16 (Academic, 1981), p. 119")
registry.register(
    "radiative", "constant", radiative_from_record, key="absorber.custom.radiative_model",
    summary="the record's radiative_B_cm3_s at every temperature", reference="The record's source")
registry.register(
    "radiative", "hall1959", radiative_hall1959, key="absorber.custom.radiative_model",
    call=lambda m, T: radiative_hall1959(T, m.bandgap_eV(T), m.electron_mass_m0(T), m.mh_dos_m0, m.permittivity),
    summary="direct gap, parabolic bands, from the gap, masses and permittivity",
    reference="R. N. Hall, Proc. IEE 106B, 923 (1959)")
registry.register(
    "auger", "constant", auger_from_record, key="absorber.custom.auger_model",
    summary="the record's auger_Cn_cm6_s, auger_Cp_cm6_s at every temperature", reference="The record's source")
registry.register(
    "auger", "beattie_landsberg1959", auger1_beattie_landsberg1959, key="absorber.custom.auger_model",
    call=lambda m, T: _auger_bl(m, T),
    summary="Auger-1 (CHCC) of a direct-gap semiconductor; Cp = Cn / auger_gamma",
    reference="A. R. Beattie and P. T. Landsberg, Proc. R. Soc. A 249, 16 (1959)")


def _auger_bl(m, T):
    cn = auger1_beattie_landsberg1959(T, m.bandgap_eV(T), m.electron_mass_m0(T), m.mh_dos_m0,
                                      m.permittivity, m.nc_cm3(T), m.nv_cm3(T), m.auger_F1F2)
    return cn, cn / m.auger_gamma


#: model name -> band gap, mass or coefficient(s) of (material, T_K) (views of the registry)
_BANDGAP_MODELS = {m.name: m.call for m in registry.models("bandgap", load=False)}
_MASS_MODELS = {m.name: m.call for m in registry.models("mass", load=False)}
_RADIATIVE_MODELS = {m.name: m.call for m in registry.models("radiative", load=False)}
_AUGER_MODELS = {m.name: m.call for m in registry.models("auger", load=False)}
