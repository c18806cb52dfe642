"""Physical constants from scipy.constants (CODATA), in the trade's units.

Nothing here is retyped: every value derives from scipy.constants.
"""
from __future__ import annotations

import numpy as np
from scipy import constants as _c

q_C = _c.e                                  #: elementary charge [C]
k_B_eV_K = _c.k / _c.e                      #: Boltzmann constant [eV K^-1]
k_B_J_K = _c.k                              #: Boltzmann constant [J K^-1]
h_J_s = _c.h                                #: Planck constant [J s]
h_eV_s = _c.h / _c.e                        #: Planck constant [eV s]
c_m_s = _c.c                                #: speed of light [m s^-1]
m0_kg = _c.m_e                              #: electron rest mass [kg]
eps0_F_cm = _c.epsilon_0 / 100.0            #: vacuum permittivity [F cm^-1]
hc_eV_nm = _c.h * _c.c / _c.e * 1e9         #: photon energy x wavelength [eV nm]
sigma_SB_W_m2_K4 = _c.sigma                 #: Stefan-Boltzmann constant [W m^-2 K^-4]

#: 2 (2 pi m0 k T / h^2)^(3/2) at T = 300 K [cm^-3]; effective density of states for m* = m0
NC_M0_300K_cm3 = 2.0 * (2.0 * np.pi * _c.m_e * _c.k * 300.0 / _c.h**2) ** 1.5 * 1e-6


def kT_eV(T_K):
    """Thermal energy kT.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        kT [eV].
    """
    return k_B_eV_K * np.asarray(T_K, dtype=float)


def thermal_voltage_V(T_K):
    """Thermal voltage kT/q.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        kT/q [V].
    """
    return kT_eV(T_K)
