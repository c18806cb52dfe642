"""Published relations the material records use (band gap, Kane mass, radiative and Auger constants).
"""
from __future__ import annotations

import numpy as np

from .. import constants as C
from ..constants import kT_eV


def bandgap_hansen1982(x, T_K):
    """Band gap of Hg(1-x)Cd(x)Te [eV].

    Eg = -0.302 + 1.93 x - 0.81 x^2 + 0.832 x^3 + 5.35e-4 T (1 - 2x)

    G. L. Hansen, J. L. Schmit and T. N. Casselman, J. Appl. Phys. 53, 7099
    (1982), doi:10.1063/1.330018.  x: Cd fraction [-]; T_K [K].
    """
    x = np.asarray(x, dtype=float)
    T = np.asarray(T_K, dtype=float)
    return -0.302 + 1.93 * x - 0.81 * x**2 + 0.832 * x**3 + 5.35e-4 * T * (1.0 - 2.0 * x)


def electron_mass_weiler1981(Eg_eV, Ep_eV=19.0, delta_eV=1.0, F=-0.8):
    """Conduction-band edge mass of a narrow-gap zinc-blende semiconductor, Kane k.p [m0].

    m0 / m_e = 1 + 2F + (Ep / 3) (2 / Eg + 1 / (Eg + Delta))

    M. H. Weiler, "Magnetooptical properties of Hg1-xCdxTe alloys", in
    Semiconductors and Semimetals vol. 16 (Academic, 1981), p. 119; for HgCdTe
    Ep = 19 eV, Delta = 1 eV, F = -0.8 (from memory).
    Eg_eV [eV]; Ep_eV [eV]; delta_eV [eV]; F [-].  Returns m_e [m0].
    """
    Eg = np.asarray(Eg_eV, dtype=float)
    return 1.0 / (1.0 + 2.0 * F + (Ep_eV / 3.0) * (2.0 / Eg + 1.0 / (Eg + delta_eV)))


def mean_thermal_speed_cm_s(m_m0, T_K=300.0):
    """Mean thermal speed sqrt(8 k T / (pi m)) [cm/s] of a carrier of mass m_m0 [m0] at T_K [K]."""
    T = np.asarray(T_K, dtype=float)
    return 100.0 * np.sqrt(8.0 * C.k_B_J_K * T / (np.pi * np.asarray(m_m0, dtype=float) * C.m0_kg))


def hydrogenic_binding_eV(m_m0, permittivity):
    """Effective-mass (hydrogenic) binding energy Ry m* / eps_r^2 [eV] (analytic).

    Ry = m0 q^4 / (8 eps0^2 h^2).  m_m0 [m0]; permittivity [-].
    """
    eps0_F_m = C.eps0_F_cm * 100.0
    ry_eV = C.m0_kg * C.q_C**3 / (8.0 * eps0_F_m**2 * C.h_J_s**2)
    return ry_eV * m_m0 / permittivity**2


def radiative_hall1959(T_K, Eg_eV, me_m0, mh_m0, permittivity):
    """Radiative coefficient of a direct-gap semiconductor, parabolic bands [cm^3/s].

    B = 5.8e-13 eps^(1/2) (m0/(me + mh))^(3/2) (1 + m0/me + m0/mh) (300/T)^(3/2)
        (Eg^2 + 3 kT Eg + 3.75 (kT)^2)        (Eg, kT in eV)

    R. N. Hall, Proc. IEE 106B, 923 (1959); in this form as used for HgCdTe by
    M. A. Kinch and others, e.g. A. Rogalski, Rep. Prog. Phys. 68, 2267 (2005)
    (from memory).  T_K [K]; Eg_eV [eV]; me_m0, mh_m0 [m0]; permittivity [-].
    """
    T = np.asarray(T_K, dtype=float)
    kT = kT_eV(T)
    Eg = np.asarray(Eg_eV, dtype=float)
    return (5.8e-13 * np.sqrt(permittivity) * (1.0 / (me_m0 + mh_m0)) ** 1.5
            * (1.0 + 1.0 / me_m0 + 1.0 / mh_m0) * (300.0 / T) ** 1.5
            * (Eg**2 + 3.0 * kT * Eg + 3.75 * kT**2))


def auger1_beattie_landsberg1959(T_K, Eg_eV, me_m0, mh_m0, permittivity, nc_cm3, nv_cm3, F1F2=0.2):
    """Auger-1 (CHCC) coefficient Cn of a direct-gap semiconductor [cm^6/s].

    Intrinsic Auger-1 lifetime (A. R. Beattie and P. T. Landsberg, Proc. R.
    Soc. A 249, 16 (1959), in the form of J. S. Blakemore, Semiconductor
    Statistics (1962)):

      tau_A1i = 3.8e-18 eps^2 (1 + mu)^(1/2) (1 + 2 mu) exp[(1 + 2 mu)/(1 + mu) Eg/kT]
                / [ (me/m0) |F1 F2|^2 (kT/Eg)^(3/2) ]  [s],   mu = me/mh,

    and Cn = 1 / (2 n_i^2 tau_A1i) with n_i^2 = Nc Nv exp(-Eg/kT); the two
    exponentials are combined so nothing overflows at low T:

      Cn = (me/m0) |F1F2|^2 (kT/Eg)^(3/2) exp(-mu/(1 + mu) Eg/kT)
           / (2 Nc Nv 3.8e-18 eps^2 (1 + mu)^(1/2) (1 + 2 mu)).

    T_K [K]; Eg_eV [eV]; me_m0, mh_m0 [m0]; permittivity [-]; nc_cm3, nv_cm3 [cm^-3];
    F1F2: overlap integral, 0.1-0.3 in the literature, 0.2 common practice [-].
    """
    T = np.asarray(T_K, dtype=float)
    x = np.asarray(Eg_eV, dtype=float) / kT_eV(T)
    mu = np.asarray(me_m0, dtype=float) / mh_m0
    return (me_m0 * F1F2**2 * x**-1.5 * np.exp(-mu / (1.0 + mu) * x)
            / (2.0 * nc_cm3 * nv_cm3 * 3.8e-18 * permittivity**2 * np.sqrt(1.0 + mu) * (1.0 + 2.0 * mu)))


def _radiative_constant(m, T):
    return m.radiative_B_cm3_s + 0.0 * T


def _radiative_hall(m, T):
    return radiative_hall1959(T, m.bandgap_eV(T), m.electron_mass_m0(T), m.mh_dos_m0, m.permittivity)


def _auger_constant(m, T):
    return m.auger_Cn_cm6_s + 0.0 * T, m.auger_Cp_cm6_s + 0.0 * T


def _auger_bl(m, T):
    cn = auger1_beattie_landsberg1959(T, m.bandgap_eV(T), m.electron_mass_m0(T), m.mh_dos_m0,
                                      m.permittivity, m.nc_cm3(T), m.nv_cm3(T), m.auger_F1F2)
    return cn, cn / m.auger_gamma


_RADIATIVE_MODELS = {"constant": _radiative_constant, "hall1959": _radiative_hall}
_AUGER_MODELS = {"constant": _auger_constant, "beattie_landsberg1959": _auger_bl}
