"""Recombination: Shockley-Read-Hall, radiative, Auger and surfaces.

Every rate is a vectorised numpy function of the dark densities n0, p0 and the
excess density Delta n (Delta p = Delta n: uniform, no trapping), returning a
net rate U [cm^-3 s^-1] that is zero in the dark; its lifetime is Delta n / U.

The equilibrium product.  Every rate vanishes at n p = n_i,eff^2.  Here
n_i,eff^2 is taken as the dark product n0 p0 (equal to n_i,eff^2 of the
equilibrium statistics when non-degenerate; taking n0 p0 keeps the dark rate
exactly zero also where the dark statistics are degenerate).  With an
injection-dependent band-gap narrowing model (Schenk 1998) the product grows
with the carriers (n_i,eff = n_i exp(dEg / 2kT)):
n_i,eff^2(n, p) = n0 p0 exp((dEg(n, p) - dEg(n0, p0)) / kT),
written ``ni2_shift`` = (dEg(n, p) - dEg(n0, p0)) / kT [-] below.

Scenario table ``[recombination]`` (see `Recombination.from_table`)::

    intrinsic = "richter2012"         # Auger + radiative parametrisation
    bandgap_narrowing = "schenk1998"  # band-gap narrowing model (injection-dependent)
    front_J0_fA_cm2 = 5               # or front_S_cm_s
    rear_J0_fA_cm2 = 5                # or rear_S_cm_s
    photon_recycling = 0.0            # fraction of radiative events re-absorbed [-]
    B_rel = 1.0                       # relative radiative coefficient [-]
    [[recombination.defects]]
    name = "Fe_i"                     # built-in, or energy_eV + sigma_n_cm2 + sigma_p_cm2,
    density_cm3 = 1e11                # or tau_n0_s + tau_p0_s (+ energy_eV)
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Mapping

import numpy as np

from . import _dispatch
from .constants import kT_eV, q_C
from .equilibrium import bgn_eV, ni_nc_nv_eg
from . import schema as _schema
from .errors import InputError, check_range, did_you_mean

MECHANISMS = ("srh", "radiative", "auger", "surface")

# ---------------------------------------------------------------------------
# The common factor n p - n_i,eff^2
# ---------------------------------------------------------------------------


def excess_product_cm6(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift=0.0):
    """n p - n_i,eff^2 [cm^-6], written without cancellation.

    n p - n_i,eff^2 = dn (n0 + p0 + dn) - n0 p0 expm1(ni2_shift)

    n0_cm3, p0_cm3: dark densities [cm^-3]; delta_n_cm3: excess density [cm^-3];
    ni2_shift: ln(n_i,eff^2(n, p) / (n0 p0)) from injection-dependent band-gap
    narrowing, 0 otherwise [-].
    """
    n0, p0, dn = (np.asarray(a, dtype=float) for a in (n0_cm3, p0_cm3, delta_n_cm3))
    out = dn * (n0 + p0 + dn)
    if np.any(ni2_shift):
        # n0 p0 = 0 (below the float range) contributes nothing, even for a huge shift; a shift
        # beyond the float range gives -inf (a product the model cannot support), never NaN
        with np.errstate(over="ignore", invalid="ignore"):
            n0p0 = n0 * p0
            out = out - np.where(n0p0 > 0, n0p0 * np.expm1(ni2_shift), 0.0)
    return out


# ---------------------------------------------------------------------------
# Shockley-Read-Hall
# ---------------------------------------------------------------------------


def srh_shockley_read_hall1952(n0_cm3, p0_cm3, delta_n_cm3, tau_n0_s, tau_p0_s, n1_cm3, p1_cm3,
                               ni2_shift=0.0):
    """Net SRH rate through one level [cm^-3 s^-1].

    U = (n p - n_i,eff^2) / (tau_p0 (n + n1) + tau_n0 (p + p1))

    W. Shockley and W. T. Read, Phys. Rev. 87, 835 (1952), doi:10.1103/PhysRev.87.835;
    R. N. Hall, Phys. Rev. 87, 387 (1952), doi:10.1103/PhysRev.87.387.

    n0_cm3, p0_cm3: dark densities [cm^-3]; delta_n_cm3: excess density [cm^-3];
    tau_n0_s, tau_p0_s: capture time constants 1/(sigma v_th N_t) [s] (inf: no capture);
    n1_cm3, p1_cm3: densities with the Fermi level at the trap, n1 p1 = n_i,eff^2 [cm^-3];
    ni2_shift: see `excess_product_cm6` [-] (n1 and p1 each scale by exp(ni2_shift/2)).
    Several levels: give arrays with a trailing level axis and sum over it.
    """
    n0, p0, dn = (np.asarray(a, dtype=float) for a in (n0_cm3, p0_cm3, delta_n_cm3))
    # written with capture rates a = 1/tau_n0, b = 1/tau_p0 so that a missing capture (tau = inf) is exact
    with np.errstate(divide="ignore"):
        a = 1.0 / np.asarray(tau_n0_s, dtype=float)
        b = 1.0 / np.asarray(tau_p0_s, dtype=float)
    return _srh_rates(n0, p0, dn, a, b, np.asarray(n1_cm3, float), np.asarray(p1_cm3, float), ni2_shift)


def _srh_rates(n0, p0, dn, a, b, n1, p1, ni2_shift=0.0):
    """SRH with capture rates a = 1/tau_n0, b = 1/tau_p0 [s^-1]; shapes (..., K) for K levels."""
    exc = excess_product_cm6(n0, p0, dn, ni2_shift)[..., None]
    with np.errstate(over="ignore", invalid="ignore"):     # a shift beyond the float range: NaN, not a warning
        if np.any(ni2_shift):
            s = np.exp(0.5 * np.asarray(ni2_shift))[..., None]
            n1, p1 = n1 * s, p1 * s
        n, p = (n0 + dn)[..., None], (p0 + dn)[..., None]
        den = a * (n + n1) + b * (p + p1)
        num = exc * a * b
        out = np.divide(num, den, out=np.zeros(np.broadcast_shapes(num.shape, den.shape)), where=den > 0)
    return out.sum(axis=-1)


def trap_densities_cm3(level_from_ev_eV, effective_gap_eV, nc_cm3, nv_cm3, T_K):
    """SRH densities n1, p1 [cm^-3] for a level at Et - Ev = level_from_ev_eV [eV].

    n1 = Nc exp(-(Ec - Et)/kT), p1 = Nv exp(-(Et - Ev)/kT), Ec - Ev = effective gap,
    so that n1 p1 = Nc Nv exp(-Eg_eff/kT) = n_i,eff^2.
    effective_gap_eV [eV]; nc_cm3, nv_cm3 [cm^-3]; T_K [K].
    """
    kT = kT_eV(T_K)
    et = np.asarray(level_from_ev_eV, dtype=float)
    return nc_cm3 * np.exp((et - effective_gap_eV) / kT), nv_cm3 * np.exp(-et / kT)


_ISTRATOV = ("A. A. Istratov, H. Hieslmair and E. R. Weber, Appl. Phys. A 69, 13 (1999), "
             "doi:10.1007/s003390050968; D. Macdonald and L. J. Geerligs, Appl. Phys. Lett. 85, 4061 "
             "(2004), doi:10.1063/1.1812833 (from memory)")


@dataclass(frozen=True)
class Defect:
    """One SRH level.

    Either energy_eV + sigma_n_cm2 + sigma_p_cm2 + density_cm3 (tau_x0 = 1/(sigma_x v_th,x(T) N_t)),
    or tau_n0_s + tau_p0_s (+ energy_eV; mid-gap, at the intrinsic level, if absent).

    name: label or built-in name [-]
    energy_eV: level position measured from `energy_ref` [eV]
    energy_ref: "Ev" (upward from the valence band edge), "Ec" (downward from the
        conduction band edge) or "Ei" (signed, upward from the intrinsic level) [-]
    sigma_n_cm2, sigma_p_cm2: capture cross-sections [cm^2]
    density_cm3: defect density N_t [cm^-3]
    tau_n0_s, tau_p0_s: capture time constants [s]
    source: citation of the level parameters
    label: dotted scenario path used in error messages [-]
    """

    name: str = "custom"
    energy_eV: float | None = None
    energy_ref: str = "Ev"
    sigma_n_cm2: float | None = None
    sigma_p_cm2: float | None = None
    density_cm3: float | None = None
    tau_n0_s: float | None = None
    tau_p0_s: float | None = None
    source: str = ""
    label: str = field(default="", compare=False)

    def __post_init__(self):
        where = self.label or f"defect {self.name}"
        ref = {"ev": "Ev", "ec": "Ec", "ei": "Ei"}.get(str(self.energy_ref).lower())
        if ref is None:
            raise InputError(f"{where}.energy_ref", self.energy_ref, 'one of "Ev", "Ec", "Ei"')
        object.__setattr__(self, "energy_ref", ref)
        by_tau = self.tau_n0_s is not None or self.tau_p0_s is not None
        by_sigma = self.sigma_n_cm2 is not None or self.sigma_p_cm2 is not None
        if by_tau and by_sigma:
            raise InputError(f"{where}", "tau_*_s and sigma_*_cm2", "either tau_n0_s + tau_p0_s or "
                             "sigma_n_cm2 + sigma_p_cm2 + density_cm3, not both")
        if by_tau:
            for k in ("tau_n0_s", "tau_p0_s"):
                v = getattr(self, k)
                if v is None:
                    raise InputError(f"{where}.{k}", None, "a lifetime > 0 s (both tau_n0_s and tau_p0_s are needed)")
                check_range(f"{where}.{k}", v, 0.0, np.inf, low_open=True, unit="s")
        elif by_sigma:
            for k in ("sigma_n_cm2", "sigma_p_cm2"):
                v = getattr(self, k)
                if v is None:
                    raise InputError(f"{where}.{k}", None, "a cross-section >= 0 cm^2 (both are needed)")
                check_range(f"{where}.{k}", v, 0.0, None, unit="cm^2")
            if self.energy_eV is None:
                raise InputError(f"{where}.energy_eV", None, "a level energy [eV] with the cross-sections")
        if self.density_cm3 is not None:
            check_range(f"{where}.density_cm3", self.density_cm3, 0.0, None, unit="cm^-3")
        if self.energy_eV is not None:
            check_range(f"{where}.energy_eV", self.energy_eV, None if ref == "Ei" else 0.0, None, unit="eV")

    @property
    def complete(self) -> bool:
        """True when the defect has enough parameters to give a rate."""
        return self.tau_n0_s is not None or self.density_cm3 is not None

    def tau_s(self, material, T_K):
        """Capture time constants (tau_n0, tau_p0) [s] at T_K [K] (inf where no capture)."""
        if self.tau_n0_s is not None:
            T = np.asarray(T_K, dtype=float)
            return np.full_like(T, self.tau_n0_s), np.full_like(T, self.tau_p0_s)
        if self.density_cm3 is None:
            raise InputError(f"{self.label or 'defect ' + self.name}.density_cm3", None,
                             "a defect density [cm^-3] for a level given by cross-sections")
        ve, vh = material.vth_cm_s(T_K)
        with np.errstate(divide="ignore"):
            return (1.0 / (self.sigma_n_cm2 * ve * np.asarray(self.density_cm3, float)),
                    1.0 / (self.sigma_p_cm2 * vh * np.asarray(self.density_cm3, float)))

    def level_from_ev_eV(self, effective_gap_eV, intrinsic_level_eV):
        """Et - Ev [eV] given the gap and the intrinsic level (from Ev) [eV]; mid-gap (Eg/2) if no energy.

        Mid-gap, not E_i: in narrow-gap materials with unequal masses E_i can leave the gap.
        """
        if self.energy_eV is None:
            return 0.5 * np.asarray(effective_gap_eV, dtype=float) + 0.0 * np.asarray(intrinsic_level_eV)
        if self.energy_ref == "Ev":
            return np.asarray(self.energy_eV, dtype=float) + 0.0 * np.asarray(effective_gap_eV)
        if self.energy_ref == "Ec":
            return np.asarray(effective_gap_eV, dtype=float) - self.energy_eV
        return np.asarray(intrinsic_level_eV, dtype=float) + self.energy_eV


#: Built-in Si defects (density set per use: ``Defect`` fields via `defect_from_table`).
DEFECTS: dict[str, Defect] = {
    "Fe_i": Defect("Fe_i", 0.38, "Ev", 5e-14, 7e-17, source=_ISTRATOV),
    "FeB": Defect("FeB", 0.26, "Ec", 5e-15, 3e-15, source=_ISTRATOV),
}

_DEFECT_KEYS = _schema.section_keys("recombination.defects.*")    # declared once in optogen.schema


def defect_from_table(table: Mapping, label: str = "recombination.defects.0") -> Defect:
    """A `Defect` from one ``[[recombination.defects]]`` table.

    Keys: name (a built-in of `DEFECTS`, or a free label), density_cm3, energy_eV,
    energy_ref, sigma_n_cm2, sigma_p_cm2, tau_n0_s, tau_p0_s.  Keys given override the
    built-in values.  label: dotted path for error messages [-].
    """
    if not isinstance(table, Mapping):
        raise InputError(label, table, "a table of defect keys")
    for k in table:
        if k not in _DEFECT_KEYS:
            raise InputError(f"{label}.{k}", table[k], "one of " + ", ".join(_DEFECT_KEYS),
                             did_you_mean(k, _DEFECT_KEYS))
    name = str(table.get("name", "custom"))
    lib = {_dispatch.normalise(k): v for k, v in DEFECTS.items()}
    base = lib.get(_dispatch.normalise(name))
    given = {k: table[k] for k in _DEFECT_KEYS if k in table and k != "name"}
    if base is None:
        if not ({"tau_n0_s", "tau_p0_s"} & set(given) or {"sigma_n_cm2", "sigma_p_cm2"} & set(given)):
            raise InputError(f"{label}.name", name, "a built-in defect (" + ", ".join(DEFECTS) +
                             ") or a level given by energy_eV + sigma_n_cm2 + sigma_p_cm2 + density_cm3 "
                             "or by tau_n0_s + tau_p0_s", did_you_mean(name, list(DEFECTS)))
        d = Defect(name=name, label=label, **given)
    else:
        if {"tau_n0_s", "tau_p0_s"} & set(given):   # lifetimes replace the library cross-sections
            base = replace(base, sigma_n_cm2=None, sigma_p_cm2=None)
        d = replace(base, label=label, **given)
    if not d.complete:
        raise InputError(f"{label}.density_cm3", None, "a defect density >= 0 cm^-3 for " + name)
    return d


# ---------------------------------------------------------------------------
# Radiative
# ---------------------------------------------------------------------------

# (T [K], B [cm^3/s]) for intrinsic Si, T. Trupke et al., J. Appl. Phys. 94, 4930 (2003),
# doi:10.1063/1.1610231, Table I as recalled (from memory; the 300 K value 4.73e-15 is the
# paper's headline figure, the others are less certain, about +-20 %).
_TRUPKE2003_TABLE = np.array([
    (77.0, 8.01e-14), (90.0, 4.57e-14), (112.0, 2.14e-14), (170.0, 8.84e-15),
    (195.0, 7.35e-15), (249.0, 5.48e-15), (300.0, 4.73e-15),
])


def radiative_b_trupke2003(T_K):
    """Radiative coefficient B(T) of lightly doped crystalline Si [cm^3/s].

    Log-log interpolation in the table of T. Trupke, M. A. Green, P. Wuerfel,
    P. P. Altermatt, A. Wang, J. Zhao and R. Corkish, J. Appl. Phys. 94, 4930 (2003),
    doi:10.1063/1.1610231 (B(300 K) = 4.73e-15 cm^3/s; other entries from memory).
    Above 300 K the last segment's power law (B ~ T^-0.79) is continued; below 77 K
    B is held at its 77 K value.  T_K: temperature [K].
    """
    lt, lb = np.log(_TRUPKE2003_TABLE[:, 0]), np.log(_TRUPKE2003_TABLE[:, 1])
    x = np.log(np.clip(np.asarray(T_K, dtype=float), _TRUPKE2003_TABLE[0, 0], None))
    slope = (lb[-1] - lb[-2]) / (lt[-1] - lt[-2])
    y = np.where(x > lt[-1], lb[-1] + slope * (x - lt[-1]), np.interp(x, lt, lb))
    return np.exp(y)


def radiative_band_to_band(n0_cm3, p0_cm3, delta_n_cm3, B_cm3_s, B_rel=1.0, photon_recycling=0.0,
                           ni2_shift=0.0):
    """Net band-to-band radiative rate [cm^-3 s^-1].

    U = B_rel B (1 - f_PR) (n p - n_i,eff^2)

    W. van Roosbroeck and W. Shockley, Phys. Rev. 94, 1558 (1954) for the form.
    n0_cm3, p0_cm3, delta_n_cm3 [cm^-3]; B_cm3_s: radiative coefficient [cm^3/s];
    B_rel: relative coefficient (screening at high densities; 1 = none) [-];
    photon_recycling: fraction f_PR of emitted photons re-absorbed in the absorber [-];
    ni2_shift: see `excess_product_cm6` [-].
    """
    return (np.asarray(B_rel) * np.asarray(B_cm3_s) * (1.0 - np.asarray(photon_recycling))
            * excess_product_cm6(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift))


# ---------------------------------------------------------------------------
# Auger / intrinsic.  Every model is U_auger = (n p - n_i,eff^2) (A + C dn^e) with
# A, C, e from the published formula; `_coeffs_*` return (A, C, e, B_radiative).
# ---------------------------------------------------------------------------


def _coeffs_richter2012(material, n0, p0, T):
    g_eeh = 1.0 + 13.0 * (1.0 - np.tanh((n0 / 3.3e17) ** 0.66))
    g_ehh = 1.0 + 7.5 * (1.0 - np.tanh((p0 / 7.0e17) ** 0.63))
    return 2.5e-31 * g_eeh * n0 + 8.5e-32 * g_ehh * p0, 3.0e-29, 0.92, radiative_b_trupke2003(T)


def _coeffs_kerr_cuevas2002(material, n0, p0, T):
    return 1.8e-24 * n0**0.65 + 6.0e-25 * p0**0.65, 3.0e-27, 0.8, 9.5e-15 + 0.0 * np.asarray(T)


def _coeffs_dziewior_schmid1977(material, n0, p0, T):
    cn, cp = 2.8e-31, 9.9e-32
    return cn * n0 + cp * p0, cn + cp, 1.0, radiative_b_trupke2003(T)


def _coeffs_constant(material, n0, p0, T):
    cn, cp = material.auger_coefficients_cm6_s(T)     # temperature-dependent where published
    return cn * n0 + cp * p0, cn + cp, 1.0, material.radiative_coefficient_cm3_s(T)


def _auger(coeffs, n0, p0, dn, ni2_shift):
    A, C, e = coeffs[:3]
    dn = np.asarray(dn, dtype=float)
    return excess_product_cm6(n0, p0, dn, ni2_shift) * (A + C * dn**e)


def intrinsic_richter2012(n0_cm3, p0_cm3, delta_n_cm3, T_K=300.0, B_rel=1.0, ni2_shift=0.0):
    """Intrinsic (Auger + radiative) recombination of crystalline Si, split in its two parts.

    U = (n p - n_i,eff^2) (2.5e-31 g_eeh n0 + 8.5e-32 g_ehh p0 + 3.0e-29 dn^0.92 + B_rel B_low)
    g_eeh = 1 + 13 (1 - tanh((n0/3.3e17)^0.66)),  g_ehh = 1 + 7.5 (1 - tanh((p0/7.0e17)^0.63))

    A. Richter, S. W. Glunz, F. Werner, J. Schmidt and A. Cuevas, Phys. Rev. B 86, 165202
    (2012), doi:10.1103/PhysRevB.86.165202 (constants from memory).  B_low = 4.73e-15 cm^3/s
    at 300 K (Trupke 2003); here B_low(T) = `radiative_b_trupke2003`.  The fit is for 300 K.

    n0_cm3, p0_cm3: dark densities [cm^-3]; delta_n_cm3 [cm^-3]; T_K [K]; B_rel [-];
    ni2_shift: see `excess_product_cm6` [-].
    Returns (U_auger, U_radiative) [cm^-3 s^-1]; their sum is the published U.
    """
    c = _coeffs_richter2012(None, np.asarray(n0_cm3, float), np.asarray(p0_cm3, float), T_K)
    return (_auger(c, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift),
            radiative_band_to_band(n0_cm3, p0_cm3, delta_n_cm3, c[3], B_rel, 0.0, ni2_shift))


def intrinsic_kerr_cuevas2002(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift=0.0):
    """Intrinsic (Auger + radiative) recombination of crystalline Si, split in its two parts.

    U = (n p - n_i,eff^2) (1.8e-24 n0^0.65 + 6e-25 p0^0.65 + 3e-27 dn^0.8 + 9.5e-15)

    M. J. Kerr and A. Cuevas, J. Appl. Phys. 91, 2473 (2002), doi:10.1063/1.1432476
    (constants from memory).  The paper writes n p; n p - n_i,eff^2 is used so that the
    dark rate is zero (the difference is negligible under light).

    n0_cm3, p0_cm3, delta_n_cm3 [cm^-3]; ni2_shift [-].
    Returns (U_auger, U_radiative) [cm^-3 s^-1].
    """
    c = _coeffs_kerr_cuevas2002(None, np.asarray(n0_cm3, float), np.asarray(p0_cm3, float), 300.0)
    return (_auger(c, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift),
            radiative_band_to_band(n0_cm3, p0_cm3, delta_n_cm3, c[3], 1.0, 0.0, ni2_shift))


def auger_dziewior_schmid1977(n0_cm3, p0_cm3, delta_n_cm3, ni2_shift=0.0):
    """Band-to-band Auger rate of Si with constant coefficients [cm^-3 s^-1].

    U = (Cn n + Cp p)(n p - n_i,eff^2), Cn = 2.8e-31, Cp = 9.9e-32 cm^6/s

    J. Dziewior and W. Schmid, Appl. Phys. Lett. 31, 346 (1977), doi:10.1063/1.89694.
    n0_cm3, p0_cm3, delta_n_cm3 [cm^-3]; ni2_shift [-].
    """
    c = _coeffs_dziewior_schmid1977(None, np.asarray(n0_cm3, float), np.asarray(p0_cm3, float), 300.0)
    return _auger(c, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift)


def auger_constant(n0_cm3, p0_cm3, delta_n_cm3, Cn_cm6_s, Cp_cm6_s, ni2_shift=0.0):
    """Band-to-band Auger rate with constant coefficients [cm^-3 s^-1].

    U = (Cn n + Cp p)(n p - n_i,eff^2)  (e.g. Sze & Ng, Physics of Semiconductor Devices, 3rd ed., 2007)
    n0_cm3, p0_cm3, delta_n_cm3 [cm^-3]; Cn_cm6_s, Cp_cm6_s [cm^6/s]; ni2_shift [-].
    """
    n0, p0 = np.asarray(n0_cm3, float), np.asarray(p0_cm3, float)
    c = (Cn_cm6_s * n0 + Cp_cm6_s * p0, Cn_cm6_s + Cp_cm6_s, 1.0)
    return _auger(c, n0, p0, delta_n_cm3, ni2_shift)


INTRINSIC_MODELS = {
    "richter2012": _coeffs_richter2012,
    "kerr_cuevas2002": _coeffs_kerr_cuevas2002,
    "dziewior_schmid1977": _coeffs_dziewior_schmid1977,
    "constant": _coeffs_constant,
}
_INTRINSIC_ALIASES = {
    "richter": "richter2012", "intrinsic_richter2012": "richter2012",
    "kerr-cuevas": "kerr_cuevas2002", "kerr_cuevas": "kerr_cuevas2002", "kerr2002": "kerr_cuevas2002",
    "intrinsic_kerr_cuevas2002": "kerr_cuevas2002",
    "dziewior-schmid": "dziewior_schmid1977", "dziewior": "dziewior_schmid1977",
    "auger_dziewior_schmid1977": "dziewior_schmid1977",
    "auger_constant": "constant", "material": "constant",
}
_SILICON_ONLY = {"richter2012", "kerr_cuevas2002", "dziewior_schmid1977"}


def j0_at_temperature_fA_cm2(J0_fA_cm2, material, T_K, J0_reference_K=298.15):
    """A surface J0 quoted at J0_reference_K, carried to temperature T_K [fA/cm^2].

    J0(T) = J0(T_ref) n_i^2(T) / n_i^2(T_ref),  n_i^2 = Nc Nv exp(-Eg / kT) of the material
    without narrowing.  A surface (or emitter) J0 is proportional to n_i^2: the dark
    recombination flux J0/q (n p / n_i^2 - 1) is then fixed by the surface alone (D. E. Kane
    and R. M. Swanson, Proc. 18th IEEE PVSC (1985) 578, from memory; common practice).
    This is the only place the J0 temperature scaling is applied: `surface_j0_flux_cm2_s`,
    `Recombination.j0_at_fA_cm2` and so the uniform rates, the depth-resolved surface and
    the detector's rear S_eff all go through it.

    Parameters
    ----------
    J0_fA_cm2 : J0 at J0_reference_K [fA/cm^2]
    material : the absorber (Nc, Nv, Eg of T)
    T_K : temperature [K]
    J0_reference_K : temperature at which J0_fA_cm2 is quoted [K]; None: J0 as given at every T

    Returns
    -------
    J0 at T_K [fA/cm^2], broadcast over J0_fA_cm2 and T_K.
    """
    j0 = np.asarray(J0_fA_cm2, dtype=float)
    if J0_reference_K is None:
        return j0
    if J0_reference_K is not None and (material is None or T_K is None):
        raise InputError("recombination.J0_reference_K", J0_reference_K,
                         "material and T_K, to carry J0 from its reference temperature to T",
                         "pass material= and T_K=, or J0_reference_K=None for a J0 already at T")
    return j0 * _j0_scale(material, T_K, J0_reference_K)


def surface_j0_flux_cm2_s(n0_cm3, p0_cm3, delta_n_cm3, J0_fA_cm2, ni2_shift=0.0, *, material=None, T_K=None,
                          J0_reference_K=298.15, derivative=False):
    """Recombination flux into a surface described by a J0 [cm^-2 s^-1] (the one J0 surface law).

    Us = (J0(T) / q) (n p - n_i,eff^2) / n_i,eff^2,   n = n0 + dn, p = p0 + dn,
    n_i,eff^2 = n0 p0 exp(ni2_shift),  J0(T) from `j0_at_temperature_fA_cm2`.

    n p - n_i,eff^2 comes from `excess_product_cm6` (no cancellation).  The depth-resolved
    surface (the pipeline's depth-resolved run) and the detector's low-injection
    S_eff = dUs/ddn at dn = 0 = J0 (n0 + p0) / (q n0 p0) (`surface_velocity_j0_cm_s`) call this function; `surface_j0`
    (called by `PreparedRates.rates`) is the same law divided by W, through the same kernel
    and the same J0 temperature scaling.

    Parameters
    ----------
    n0_cm3, p0_cm3 : dark electron and hole densities [cm^-3]
    delta_n_cm3 : excess density at the surface [cm^-3]
    J0_fA_cm2 : saturation current density of the surface, quoted at J0_reference_K [fA/cm^2]
    ni2_shift : ln(n_i,eff^2(n, p) / (n0 p0)) from injection-dependent narrowing, 0 otherwise [-]
    material, T_K : the absorber and the temperature [K]; needed unless J0_reference_K is None
    J0_reference_K : temperature at which J0 is quoted [K] (default 298.15, as
        `Recombination.J0_reference_K`); None: J0_fA_cm2 is already the value at T
    derivative : also return dUs/ddn [cm/s] (at fixed ni2_shift)

    Returns
    -------
    Us [cm^-2 s^-1] (0 where J0 = 0), or (Us, dUs/ddn [cm/s]) with derivative=True.

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    j0 = j0_at_temperature_fA_cm2(J0_fA_cm2, material, T_K, J0_reference_K)
    return _j0_law(j0 * 1e-15 / q_C, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift, derivative)


def _j0_law(coef, n0_cm3, p0_cm3, delta_n_cm3, ni2_shift, derivative=False):
    """coef (n p - n_i,eff^2) / n_i,eff^2 (and its dn-derivative at fixed shift); coef = J0(T)/q
    [cm^-2 s^-1] for the flux, J0(T)/(q W) [cm^-3 s^-1] for the volume rate.  coef is applied
    before the division by n0 p0 so a subnormal rate is rounded once."""
    n0, p0 = np.asarray(n0_cm3, dtype=float), np.asarray(p0_cm3, dtype=float)
    dn = np.asarray(delta_n_cm3, dtype=float)
    coef = np.asarray(coef, dtype=float)
    exc = excess_product_cm6(n0, p0, dn, ni2_shift)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        ni2 = n0 * p0 * np.exp(ni2_shift)
        us = np.where(coef > 0, coef * exc / ni2, 0.0)
        if not derivative:
            return us
        dus = np.where(coef > 0, coef * ((n0 + p0 + 2.0 * dn) / n0) / p0 * np.exp(-np.asarray(ni2_shift)), 0.0)
    return us, dus


def surface_j0(n0_cm3, p0_cm3, delta_n_cm3, J0_fA_cm2, thickness_cm, ni2_shift=0.0, *, material=None, T_K=None,
               J0_reference_K=298.15):
    """Surface recombination through a J0 per surface, as a volume rate in a uniform wafer [cm^-3 s^-1].

    U_s = Us / W with Us from `surface_j0_flux_cm2_s` (same arguments and kernel; J0 carried
    from J0_reference_K to T_K as n_i^2 by `j0_at_temperature_fA_cm2`).  thickness_cm: W [cm].
    `PreparedRates.rates` (so `Recombination.rates`) calls this for its J0 surfaces, so the two
    agree at every temperature.

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    j0 = j0_at_temperature_fA_cm2(J0_fA_cm2, material, T_K, J0_reference_K)
    return _j0_law(j0 * 1e-15 / (q_C * np.asarray(thickness_cm, dtype=float)), n0_cm3, p0_cm3, delta_n_cm3,
                   ni2_shift)


def surface_velocity(delta_n_cm3, S_cm_s, thickness_cm):
    """Surface recombination through a velocity S per surface, as a volume rate [cm^-3 s^-1].

    U_s = S dn / W (uniform limit, S W / D << 1).
    delta_n_cm3 [cm^-3]; S_cm_s [cm/s]; thickness_cm [cm].
    """
    return np.asarray(S_cm_s) * np.asarray(delta_n_cm3, float) / np.asarray(thickness_cm)


def surface_velocity_j0_cm_s(n0_cm3, p0_cm3, J0_fA_cm2):
    """Low-injection recombination velocity of a surface described by a J0 [cm/s].

    S_eff = dUs/ddn at dn = 0 of the one J0 law (`surface_j0_flux_cm2_s`)
          = J0 (n0 + p0) / (q n0 p0),
    i.e. J0 N / (q n_i^2) in extrinsic material and finite for an intrinsic one.

    Parameters
    ----------
    n0_cm3, p0_cm3 : dark electron and hole densities [cm^-3]
    J0_fA_cm2 : saturation current density of the surface at the absorber's temperature [fA/cm^2]
        (carry a quoted value to T with `j0_at_temperature_fA_cm2` first)

    Returns
    -------
    S_eff [cm/s], broadcast over the inputs.

    References
    ----------
    D. E. Kane and R. M. Swanson, Proc. 18th IEEE PVSC, p. 578 (1985) (from memory).
    """
    return surface_j0_flux_cm2_s(n0_cm3, p0_cm3, 0.0, J0_fA_cm2, J0_reference_K=None, derivative=True)[1]


# ---------------------------------------------------------------------------
# Gathering parameters: Recombination -> PreparedRates (flat per-point constants)
# ---------------------------------------------------------------------------

_TABLE_KEYS = _schema.section_keys("recombination")               # declared once in optogen.schema

#: band-gap narrowing models whose narrowing depends on the carrier densities
INJECTION_BGN_MODELS = ("schenk1998", "schenk")


@dataclass(frozen=True, eq=False)
class Recombination:
    """The recombination mechanisms of an absorber (parameters only; rates come from `rates`).

    intrinsic: Auger + radiative model, one of `INTRINSIC_MODELS` (aliases accepted);
        None: "richter2012" for Si, "constant" (material Cn, Cp, B) otherwise [-]
    bgn_model: band-gap narrowing model name for the equilibrium and, if injection-dependent
        (Schenk 1998), for n_i,eff(n, p) inside the rates; None: the equilibrium's [-]
    defects: SRH levels [-]
    front_J0_fA_cm2 / front_S_cm_s, rear_J0_fA_cm2 / rear_S_cm_s: one per surface,
        or neither (no surface recombination) [fA/cm^2] / [cm/s]
    J0_reference_K: temperature at which the J0 values are quoted; at another temperature
        J0 scales as n_i^2(T) / n_i^2(J0_reference_K), n_i^2 = Nc Nv exp(-Eg/kT) of the material
        (a surface J0 is proportional to n_i^2; common practice).  None (false in a scenario):
        J0 as given at every T [K]
    photon_recycling: fraction f_PR of radiative events re-absorbed, in [0, 1) [-]
    B_rel: relative radiative coefficient applied to B (1: none, documented default;
        an injection/doping-dependent B_rel is not modelled) [-]
    injection_bgn: recompute n_i,eff(n, p) inside the rates; None: when bgn_model is Schenk 1998 [-]
    """

    intrinsic: str | None = None
    bgn_model: str | None = None
    defects: tuple[Defect, ...] = ()
    front_J0_fA_cm2: float | None = None
    front_S_cm_s: float | None = None
    rear_J0_fA_cm2: float | None = None
    rear_S_cm_s: float | None = None
    photon_recycling: float = 0.0
    B_rel: float = 1.0
    injection_bgn: bool | None = None
    J0_reference_K: float | None = 298.15

    def __post_init__(self):
        object.__setattr__(self, "defects", tuple(self.defects))
        if self.intrinsic is not None:
            _dispatch.pick("recombination.intrinsic", self.intrinsic, INTRINSIC_MODELS, _INTRINSIC_ALIASES)
        for side in ("front", "rear"):
            j0, s = getattr(self, f"{side}_J0_fA_cm2"), getattr(self, f"{side}_S_cm_s")
            if j0 is not None and s is not None:
                raise InputError(f"recombination.{side}_S_cm_s", s,
                                 f"only one of {side}_J0_fA_cm2 and {side}_S_cm_s per surface")
            if j0 is not None:
                check_range(f"recombination.{side}_J0_fA_cm2", j0, 0.0, None, unit="fA/cm^2")
            if s is not None:
                check_range(f"recombination.{side}_S_cm_s", s, 0.0, None, unit="cm/s")
        check_range("recombination.photon_recycling", self.photon_recycling, 0.0, 1.0, high_open=True)
        check_range("recombination.B_rel", self.B_rel, 0.0, None)
        if self.J0_reference_K is False:        # a scenario's `J0_reference_K = false`: J0 fixed at every T
            object.__setattr__(self, "J0_reference_K", None)
        if self.J0_reference_K is not None:
            check_range("recombination.J0_reference_K", self.J0_reference_K, 0.0, None, low_open=True, unit="K")
        for i, d in enumerate(self.defects):
            if not isinstance(d, Defect):
                raise InputError(f"recombination.defects.{i}", d, "a Defect")

    @classmethod
    def from_table(cls, table: Mapping | None) -> "Recombination":
        """Build from a scenario's ``[recombination]`` table (unknown keys are errors)."""
        table = dict(table or {})
        for k in table:
            if k not in _TABLE_KEYS:
                raise InputError(f"recombination.{k}", table[k], "one of " + ", ".join(_TABLE_KEYS),
                                 did_you_mean(k, _TABLE_KEYS))
        defects = table.pop("defects", [])
        if isinstance(defects, Mapping):
            defects = [defects]
        kw = {k: table[k] for k in table}
        if "bandgap_narrowing" in kw:
            kw["bgn_model"] = kw.pop("bandgap_narrowing")
        return cls(defects=tuple(defect_from_table(t, f"recombination.defects.{i}") for i, t in enumerate(defects)),
                   **kw)

    def intrinsic_model(self, material) -> str:
        """Canonical name of the intrinsic model used for `material` [-]."""
        if self.intrinsic is None:
            return "richter2012" if material.name == "Si" else "constant"
        fn = _dispatch.pick("recombination.intrinsic", self.intrinsic, INTRINSIC_MODELS, _INTRINSIC_ALIASES)
        name = next(k for k, v in INTRINSIC_MODELS.items() if v is fn)
        if name in _SILICON_ONLY and material.name != "Si":
            raise InputError("recombination.intrinsic", self.intrinsic,
                             f"a model for {material.name}: {name} is a silicon parametrisation",
                             'use "constant" (the material\'s Auger and radiative coefficients)')
        return name

    def bgn_model_for(self, eq) -> str | None:
        """The band-gap narrowing model name used inside the rates (None: none) [-]."""
        return self.bgn_model if self.bgn_model is not None else getattr(eq, "bgn_model", None)

    def uses_injection_bgn(self, eq) -> bool:
        """True when n_i,eff is recomputed from n and p inside the rates."""
        if self.injection_bgn is not None:
            return bool(self.injection_bgn)
        m = self.bgn_model_for(eq)
        return m is not None and _dispatch.normalise(m) in INJECTION_BGN_MODELS

    def prepare(self, material, eq, thickness_cm, shape=None, index=None) -> "PreparedRates":
        """Per-point constants of every mechanism, flattened.

        material: the absorber; eq: an `Equilibrium` (fields broadcast together);
        thickness_cm: W [cm]; shape: the operating-point shape to broadcast to (default:
        the equilibrium's broadcast with thickness); index: flat indices into `shape` to
        gather (default: all) [-].
        """
        return PreparedRates(self, material, eq, thickness_cm, shape, index)

    def j0_at_fA_cm2(self, material, T_K, side: str):
        """J0 of the "front" or "rear" surface at temperature T_K [fA/cm^2] (None if given as S).

        Scaled by n_i^2(T) / n_i^2(J0_reference_K) (`j0_at_temperature_fA_cm2`), as in the rates.
        """
        j0 = getattr(self, f"{side}_J0_fA_cm2")
        if j0 is None or self.J0_reference_K is None:
            return j0
        return j0_at_temperature_fA_cm2(j0, material, T_K, self.J0_reference_K)

    def rates(self, material, eq, delta_n_cm3, thickness_cm) -> dict:
        """Rates of every mechanism at excess density delta_n_cm3 [cm^-3 s^-1].

        Returns dict(srh=, radiative=, auger=, surface=) of arrays broadcast over eq,
        delta_n_cm3 and thickness_cm.
        """
        dn = np.asarray(delta_n_cm3, dtype=float)
        check_range("delta_n_cm3", dn, 0.0, None, unit="cm^-3")
        shape = np.broadcast_shapes(_eq_shape(eq), dn.shape, np.shape(thickness_cm))
        prep = self.prepare(material, eq, thickness_cm, shape)
        r = prep.rates(np.broadcast_to(dn, shape).reshape(-1))
        return {k: v.reshape(shape) for k, v in zip(MECHANISMS, r)}


_EQ_FIELDS = ("temperature_K", "donors_cm3", "acceptors_cm3", "n0_cm3", "p0_cm3", "nc_cm3", "nv_cm3",
              "effective_gap_eV", "intrinsic_level_eV", "fermi_level_eV")


def _j0_scale(material, T_K, reference_K):
    """n_i^2(T) / n_i^2(reference) of the material, no narrowing [-] (a J0 is proportional to n_i^2)."""
    return np.exp(2.0 * (ni_nc_nv_eg(material, T_K, log=True) - ni_nc_nv_eg(material, reference_K, log=True)))


def _eq_shape(eq):
    return np.broadcast_shapes(*(np.shape(getattr(eq, f)) for f in _EQ_FIELDS))


def _gather(a, shape, index):
    """Elements of `a` broadcast to `shape` at flat `index` (None: all), as a 1-D float array."""
    a = np.asarray(a, dtype=float)
    if index is None:
        return np.broadcast_to(a, shape).reshape(-1).copy()
    if a.ndim == 0:
        return np.full(len(index), float(a))
    b = np.broadcast_to(a, shape)
    return b[np.unravel_index(index, shape)]


class PreparedRates:
    """Per-point constants of all mechanisms for a flat set of P operating points.

    Built by `Recombination.prepare`; `rates(dn)` is the hot path of the solver and
    touches only these arrays.  `take(idx)` gives the subset at positions idx.
    """

    _ARRAYS = ("T", "kT", "ef", "nd", "na", "n0", "p0", "log_n0", "log_p0", "nc", "nv", "eg", "bgn0",
               "srh_a", "srh_b", "n1", "p1", "aug_A", "aug_C", "rad_B", "s_j0", "s_W", "s_s")

    def __init__(self, rec: Recombination, material, eq, thickness_cm, shape=None, index=None):
        if rec is None:
            return
        self.material = material
        self.recombination = rec
        shape = tuple(shape) if shape is not None else np.broadcast_shapes(_eq_shape(eq), np.shape(thickness_cm))
        self.shape = shape
        W = _gather(check_range("absorber.thickness_um", thickness_cm, 0.0, None, low_open=True), shape, index)
        g = {f: _gather(getattr(eq, f), shape, index) for f in _EQ_FIELDS}
        self.T, self.nd, self.na = g["temperature_K"], g["donors_cm3"], g["acceptors_cm3"]
        self.kT = kT_eV(self.T)
        self.nc, self.nv, self.eg = g["nc_cm3"], g["nv_cm3"], g["effective_gap_eV"]
        self.ef = g["fermi_level_eV"]
        log_ni2 = np.log(self.nc) + np.log(self.nv) - self.eg / self.kT
        n0, p0 = g["n0_cm3"], g["p0_cm3"]
        with np.errstate(divide="ignore"):
            ln0, lp0 = (_gather(getattr(eq, f"ln_{k}0_cm3"), shape, index) if hasattr(eq, f"ln_{k}0_cm3")
                        else np.log(g[f"{k}0_cm3"]) for k in "np")
        # a minority density below the float range: its log from the mass-action law
        self.log_n0 = np.where(n0 > 0, ln0, log_ni2 - lp0)
        self.log_p0 = np.where(p0 > 0, lp0, log_ni2 - ln0)
        self.n0, self.p0 = n0, p0
        # SRH levels, shape (P, K)
        taus_n, taus_p, n1s, p1s = [], [], [], []
        for i, d in enumerate(rec.defects):
            tn, tp = d.tau_s(material, self.T)
            et = d.level_from_ev_eV(self.eg, g["intrinsic_level_eV"])
            if np.any((et <= 0) | (et >= self.eg)):
                bad = et[(et <= 0) | (et >= self.eg)][0]
                raise InputError(f"{d.label or 'defect ' + d.name}.energy_eV", d.energy_eV,
                                 f"a level inside the gap (0 < Et - Ev < {float(np.min(self.eg)):.4g} eV); "
                                 f"this gives Et - Ev = {bad:.4g} eV", f"energy_ref is {d.energy_ref}")
            n1, p1 = trap_densities_cm3(et, self.eg, self.nc, self.nv, self.T)
            taus_n.append(np.broadcast_to(tn, self.T.shape))
            taus_p.append(np.broadcast_to(tp, self.T.shape))
            n1s.append(n1)
            p1s.append(p1)
        P = self.T.shape[0]
        with np.errstate(divide="ignore"):
            self.srh_a = 1.0 / np.stack(taus_n, axis=-1) if taus_n else np.zeros((P, 0))
            self.srh_b = 1.0 / np.stack(taus_p, axis=-1) if taus_p else np.zeros((P, 0))
        self.n1 = np.stack(n1s, axis=-1) if n1s else np.zeros((P, 0))
        self.p1 = np.stack(p1s, axis=-1) if p1s else np.zeros((P, 0))
        # intrinsic
        self.intrinsic = rec.intrinsic_model(material)
        A, C, e, B = INTRINSIC_MODELS[self.intrinsic](material, n0, p0, self.T)
        self.aug_A = np.broadcast_to(A, (P,)).astype(float)
        self.aug_C, self.aug_e = np.broadcast_to(C, (P,)).astype(float), float(e)
        self.rad_B = (np.broadcast_to(B, (P,)) * _gather(rec.B_rel, shape, index)
                      * (1.0 - _gather(rec.photon_recycling, shape, index)))
        # surfaces
        j0 = sum(_gather(v, shape, index) for v in (rec.front_J0_fA_cm2, rec.rear_J0_fA_cm2) if v is not None)
        s = sum(_gather(v, shape, index) for v in (rec.front_S_cm_s, rec.rear_S_cm_s) if v is not None)
        # s_j0: the summed J0 of both surfaces carried to T [fA/cm^2]; s_W: W [cm]
        self.s_j0 = np.zeros(P) + j0
        if rec.J0_reference_K is not None and np.any(self.s_j0):
            self.s_j0 = j0_at_temperature_fA_cm2(self.s_j0, material, self.T, rec.J0_reference_K)
        self.s_W = W + np.zeros(P)
        self.s_s = np.zeros(P) + s / W
        if np.any((self.s_j0 > 0) & (n0 * p0 <= 0)):
            raise InputError("recombination.front_J0_fA_cm2" if rec.front_J0_fA_cm2 is not None
                             else "recombination.rear_J0_fA_cm2", "J0",
                             "a J0 surface needs n_i,eff^2 above the float range (T too low here)",
                             "give the surface as front_S_cm_s / rear_S_cm_s")
        if not (np.any(self.srh_a) or np.any(self.aug_A) or np.any(self.aug_C) or np.any(self.rad_B)
                or np.any(self.s_j0) or np.any(self.s_s)) and P:
            raise InputError("recombination", "no mechanism",
                             "at least one recombination mechanism (defects, Auger/radiative coefficients "
                             "of the material, or a surface)")
        # carrier statistics of the narrowing model (optogen.equilibrium.STATISTICS)
        self.statistics = getattr(eq, "statistics", "fermi_dirac")
        # injection-dependent band-gap narrowing
        self.inj_bgn = rec.uses_injection_bgn(eq)
        self.bgn_model = rec.bgn_model_for(eq)
        if self.inj_bgn:
            self.bgn0 = self._bgn(n0, p0)
        else:
            self.bgn0 = np.zeros(P)

    # -- helpers ---------------------------------------------------------
    def _bgn(self, n, p, sub=None):
        T, nd, na = (self.T, self.nd, self.na) if sub is None else sub
        out = bgn_eV(self.material, T, nd, na, n_cm3=n, p_cm3=p, model=self.bgn_model)
        return np.asarray(out) if np.iscomplexobj(out) else np.asarray(out, dtype=float)

    def __len__(self):
        return self.T.shape[0]

    def take(self, idx) -> "PreparedRates":
        """The subset of points at positions idx [-]."""
        new = PreparedRates(None, None, None, None)
        new.__dict__.update(self.__dict__)
        for k in self._ARRAYS:
            setattr(new, k, getattr(self, k)[idx])
        return new

    def ni2_shift(self, dn, precise: bool = True):
        """ln(n_i,eff^2(n, p) / (n0 p0)) at excess density dn [-] (0 without injection BGN).

        precise=False: always the plain difference (enough where U need not be resolved to
        1e-10, e.g. the implied J-V curve).

        (dEg(n0 + dn, p0 + dn) - dEg(n0, p0)) / kT.  The plain difference of two nearly equal
        narrowings carries an absolute error of a few ulp of dEg; in U that error is weighted
        by n0 p0 / (dn (n0 + p0)) ~ min(n0, p0) / dn, so it only matters where dn is well below
        the minority density (near-intrinsic material at high temperature: up to ~5e-10 of U,
        enough to miss the 1e-10 residual).  There, dn < 1e-2 min(n0, p0), the difference is
        `_shift_integral` instead (no subtraction).
        """
        if not self.inj_bgn:
            return 0.0
        dn = np.asarray(dn, dtype=float)
        with np.errstate(over="ignore", invalid="ignore"):
            out = (self._bgn(self.n0 + dn, self.p0 + dn) - self.bgn0) / self.kT
        small = np.flatnonzero((dn > 0) & (dn < 1e-2 * np.minimum(self.n0, self.p0)))
        if small.size and precise:
            out = np.array(out, dtype=float, copy=True)
            out[small] = self._shift_integral(small, dn[small]) / self.kT[small]
        return out

    def _shift_integral(self, idx, dn):
        """dEg(n0 + dn, p0 + dn) - dEg(n0, p0) [eV] for dn < 1e-2 min(n0, p0), without cancellation.

        The integral over s = 0..dn of d dEg(n0 + s, p0 + s)/ds, split where n + p crosses the
        ion density (the kink of the ion-density cap in `bgn_schenk1998`), each piece by 2-point
        Gauss-Legendre (relative error ~ (dn / min(n0, p0))^4 / 4320 < 3e-12); the derivative by
        the complex step Im dEg(n + i h, p + i h) / h, exact to rounding (W. Squire and
        G. Trapp, SIAM Rev. 40, 110 (1998), doi:10.1137/S003614459631241X).
        """
        sub = (self.T[idx], self.nd[idx], self.na[idx])
        n0, p0 = self.n0[idx], self.p0[idx]
        kink = np.clip(0.5 * (self.nd[idx] + self.na[idx] - n0 - p0), 0.0, dn)
        h = 1e-30 * (n0 + p0)
        total = np.zeros(idx.size)
        for lo, hi in ((0.0, kink), (kink, dn)):
            for node in (0.5 - 0.5 / np.sqrt(3.0), 0.5 + 0.5 / np.sqrt(3.0)):
                s = lo + node * (hi - lo)
                f = self._bgn(n0 + s + 1j * h, p0 + s + 1j * h, sub)
                total += 0.5 * (hi - lo) * np.imag(f) / h
        return total

    def rates(self, dn, shift=None):
        """(srh, radiative, auger, surface) rates at excess density dn (length P) [cm^-3 s^-1]."""
        dn = np.asarray(dn, dtype=float)
        if shift is None:
            shift = self.ni2_shift(dn)
        n0, p0 = self.n0, self.p0
        exc = excess_product_cm6(n0, p0, dn, shift)
        srh = _srh_rates(n0, p0, dn, self.srh_a, self.srh_b, self.n1, self.p1, shift) if self.n1.shape[-1] else 0.0 * dn
        rad = self.rad_B * exc
        aug = exc * (self.aug_A + self.aug_C * dn**self.aug_e)
        sj = surface_j0(n0, p0, dn, self.s_j0, self.s_W, shift, J0_reference_K=None)   # s_j0 is already at T
        surf = sj + self.s_s * dn
        return srh, rad, aug, surf

    def total(self, dn):
        """Total rate at excess density dn [cm^-3 s^-1]."""
        s, r, a, f = self.rates(dn)
        return s + r + a + f
