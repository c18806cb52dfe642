"""Dark equilibrium: Fermi-Dirac statistics, n_i models, band-gap narrowing, dopant
ionisation and charge neutrality -> n0, p0, n_i, n_i,eff, E_F.

Layout (one file per topic): `fermi_dirac` (the integrals F_1/2, F_-1/2 and the inverse),
`intrinsic_density` (n_i models), `bgn` (band-gap narrowing models), `ionisation`
(incomplete ionisation, the full-ionisation state), `neutrality` (`Equilibrium`,
`equilibrium`).  Published n_i and narrowing models are registered in `optogen.registry`.
Every public name is re-exported here.
"""
from __future__ import annotations

from .fermi_dirac import (fermi_dirac_half, fermi_dirac_minus_half, inverse_fermi_dirac_half,
                          inverse_log_fermi_dirac_half, log_fermi_dirac_half, log_fermi_dirac_pair)
from .fermi_dirac import _log_fd_pair  # noqa: F401 (the former private name, still imported by optogen.steady_state)
from .intrinsic_density import NI_MODELS, ln_ni_cm3, ni_cm3, ni_hansen_schmit1983, ni_misiakos1993, ni_nc_nv_eg, pick_ni_model
from .bgn import BGN_MODELS, STATISTICS, bgn_eV, bgn_klaassen1992, bgn_none, bgn_schenk1998, pick_bgn_model
from .ionisation import dopant_species, full_ionisation_cm3, ionisation_altermatt2006
from .neutrality import Equilibrium, equilibrium

__all__ = [
    "fermi_dirac_half", "fermi_dirac_minus_half", "log_fermi_dirac_half", "log_fermi_dirac_pair",
    "inverse_fermi_dirac_half", "inverse_log_fermi_dirac_half",
    "ni_nc_nv_eg", "ni_misiakos1993", "ni_hansen_schmit1983", "ni_cm3", "ln_ni_cm3", "pick_ni_model",
    "bgn_klaassen1992", "bgn_schenk1998", "bgn_none", "bgn_eV", "pick_bgn_model",
    "ionisation_altermatt2006", "full_ionisation_cm3", "dopant_species", "equilibrium", "Equilibrium",
    "NI_MODELS", "BGN_MODELS", "STATISTICS",
]
