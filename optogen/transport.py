"""Carrier transport: mobility models, resistivity <-> doping, conductivity,
ambipolar diffusion, diffusion length and photoconductance.

Every function is a pure numpy function that broadcasts over any shape.
Densities [cm^-3], mobilities [cm^2 V^-1 s^-1], temperatures [K], lengths [cm].

Mobility models (each its own function, registered in `optogen.registry` as kind
"mobility" and selected by `mobility_cm2_Vs`):

* ``klaassen1992``   silicon, lattice + donor/acceptor (majority and minority)
                     + carrier-carrier scattering, with clustering and temperature
                     dependence (Klaassen 1992, parts I and II).
* ``masetti1983``    silicon, majority-carrier doping dependence (Masetti, Severi
                     & Solmi 1983) with the lattice part scaled by (T/300)^-theta.
* ``caughey_thomas`` any material whose record carries `mobility_e` / `mobility_h`
                     (`optogen.materials.CaugheyThomas`).
"""
from __future__ import annotations

import numpy as np

from . import registry
from .constants import kT_eV, q_C
from .equilibrium import equilibrium, full_ionisation_cm3, ni_nc_nv_eg
from .errors import InputError, check_range
from .materials.silicon import MOBILITY_E_SI as _E, MOBILITY_H_SI as _H

__all__ = [
    "mobility_klaassen1992", "mobility_masetti1983", "mobility_caughey_thomas",
    "mobility_cm2_Vs", "MOBILITY_MODELS", "missing_mobility_record", "carriers_full_ionisation",
    "doping_to_resistivity", "resistivity_to_doping", "match_resistivity_cm3", "conductivity_S_cm",
    "diffusivity_cm2_s", "ambipolar_diffusivity_cm2_s", "diffusion_length_cm",
    "photoconductance_S",
]


def _arr(x):
    return np.asarray(x, dtype=float)


# ---------------------------------------------------------------------------
# Klaassen 1992
# ---------------------------------------------------------------------------

#: Parameters of Klaassen 1992 (part I, Table 1 and eqs. for P, G, F; part II
#: for the temperature exponents), as recalled (from memory).  Electrons use
#: the phosphorus set, holes the boron set; the lattice and doping constants are
#: the silicon record's (`optogen.materials.silicon.MOBILITY_E_SI` / `MOBILITY_H_SI`).
KLAASSEN1992 = dict(
    mu_max=(_E.mu_max_cm2_Vs, _H.mu_max_cm2_Vs),   # lattice mobility at 300 K [cm^2 V^-1 s^-1] (e, h)
    mu_min=(_E.mu_min_cm2_Vs, _H.mu_min_cm2_Vs),   # [cm^2 V^-1 s^-1]
    theta=(_E.theta, _H.theta),                    # lattice temperature exponent [-]
    n_ref=(_E.n_ref_cm3, _H.n_ref_cm3),            # [cm^-3]
    alpha=(_E.alpha, _H.alpha),                    # [-]
    mass=(1.0, 1.258),           # carrier masses used in P, G, F [m0]
    c_D=0.21, c_A=0.50,          # clustering [-]
    n_ref_D=4.0e20, n_ref_A=7.2e20,   # clustering reference densities [cm^-3]
    f_CW=2.459, f_BH=3.828,      # weights of Conwell-Weisskopf / Brooks-Herring [-]
    s=(0.89233, 0.41372, 0.19778, 0.28227, 0.005978, 1.80618, 0.72169),
    r=(0.7643, 2.2999, 6.5502, 2.3670, -0.01552, 0.6478),
)


def _klaassen_G(P, mass, T):
    """Klaassen's G(P) for minority-impurity (repulsive) scattering [-].

    G(P) = 1 - s1 / [s2 + (T/300/m)^s4 P]^s3 + s5 / [(m 300/T)^s7 P]^s6
    The fitted G(P) has a minimum near P ~ 0.3 (at 300 K); below it the fit
    turns up unphysically, so P is held at the position of that minimum
    (located by a vectorised bisection on dG/dP).
    """
    s1, s2, s3, s4, s5, s6, s7 = KLAASSEN1992["s"]
    a = (T / 300.0 / mass) ** s4
    b = (mass * 300.0 / T) ** s7
    # the minimum depends on T only: locate it once per distinct temperature
    Tu, inverse = np.unique(T, return_inverse=True)
    au, bu = (Tu / 300.0 / mass) ** s4, (mass * 300.0 / Tu) ** s7

    def dG(p):
        return s1 * s3 * au * (s2 + au * p) ** (-s3 - 1.0) - s5 * s6 * bu ** (-s6) * p ** (-s6 - 1.0)

    lo = np.full(Tu.shape, np.log(1e-4))
    hi = np.full(Tu.shape, np.log(1e2))
    for _ in range(50):                      # fixed-count bisection in ln P (vectorised)
        mid = 0.5 * (lo + hi)
        up = dG(np.exp(mid)) > 0.0
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
    P_min = np.exp(0.5 * (lo + hi))[inverse].reshape(np.shape(T))
    P = np.maximum(P, P_min)
    with np.errstate(divide="ignore", over="ignore"):
        return 1.0 - s1 / (s2 + a * P) ** s3 + s5 / (b * P) ** s6


def _klaassen_F(P, mass_ratio):
    """Klaassen's F(P) for electron-hole scattering [-].

    F(P) = (r1 P^r6 + r2 + r3 m_i/m_j) / (P^r6 + r4 + r5 m_i/m_j)
    """
    r1, r2, r3, r4, r5, r6 = KLAASSEN1992["r"]
    with np.errstate(over="ignore", invalid="ignore"):
        Pr = P ** r6
        F = (r1 * Pr + r2 + r3 * mass_ratio) / (Pr + r4 + r5 * mass_ratio)
    return np.where(np.isinf(Pr), r1, F)


def mobility_klaassen1992(T_K, donors_cm3, acceptors_cm3, n_cm3, p_cm3):
    """Silicon electron and hole mobilities, Klaassen's unified model.

    For carrier i (e or h), Matthiessen's rule:
        1/mu_i = 1/mu_i,L + 1/mu_i,DAj
        mu_i,L   = mu_max (T/300)^-theta                                  (lattice)
        mu_i,DAj = mu_N (N_sc/N_sc,eff) (N_ref/N_sc)^alpha + mu_c (n+p)/N_sc,eff
        mu_N = mu_max^2/(mu_max - mu_min) (T/300)^(3 alpha - 1.5)
        mu_c = mu_max mu_min/(mu_max - mu_min) (300/T)^0.5
    with clustering Z_D = 1 + 1/(c_D + (N_ref,D/N_D)^2) (likewise Z_A),
        electrons: N_sc = Z_D N_D + Z_A N_A + p,  N_sc,eff = Z_D N_D + G(P_e) Z_A N_A + p/F(P_e)
        holes:     N_sc = Z_A N_A + Z_D N_D + n,  N_sc,eff = Z_A N_A + G(P_h) Z_D N_D + n/F(P_h)
    and the screening parameter
        1/P_i = f_CW / P_CW + f_BH / P_BH,
        P_CW = 3.97e13 (T/300)^2 / N_sc^(2/3),  P_BH = 1.36e20 (m_i/m0) (T/300)^2 / (n + p).
    G(P) corrects repulsive (minority-impurity) scattering, F(P) electron-hole
    scattering (see `_klaassen_G`, `_klaassen_F`).  Parameters in `KLAASSEN1992`.

    With N_D only, n = N_D and Z_D = 1 this reduces exactly to Caughey-Thomas
    mu = mu_min + (mu_max - mu_min)/(1 + (N/N_ref)^alpha) at 300 K.

    Simplifications (stated): no velocity saturation (low field); the
    arsenic-specific electron parameters and the ultra-pure-material
    lattice corrections of part II are not used (phosphorus set for electrons,
    boron set for holes); G(P) is held at its minimum for P below it (see
    `_klaassen_G`); the charge number Z in P_CW is taken as 1.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Ionised dopant densities [cm^-3].
    n_cm3, p_cm3 : array_like
        Electron and hole densities [cm^-3].

    Returns
    -------
    (ndarray, ndarray)
        mu_e, mu_h [cm^2 V^-1 s^-1].

    References
    ----------
    D. B. M. Klaassen, "A unified mobility model for device simulation - I. Model equations and
    concentration dependence", Solid-State Electron. 35, 953 (1992), doi:10.1016/0038-1101(92)90325-7;
    "- II. Temperature dependence of carrier mobility and lifetime", ibid. 961,
    doi:10.1016/0038-1101(92)90326-8.
    """
    k = KLAASSEN1992
    T, Nd, Na, n, p = np.broadcast_arrays(*(_arr(x) for x in (T_K, donors_cm3, acceptors_cm3, n_cm3, p_cm3)))
    t = T / 300.0
    Zd = 1.0 + Nd**2 / (k["c_D"] * Nd**2 + k["n_ref_D"] ** 2)
    Za = 1.0 + Na**2 / (k["c_A"] * Na**2 + k["n_ref_A"] ** 2)
    NdZ, NaZ = Zd * Nd, Za * Na
    m_e, m_h = k["mass"]
    out = []
    for i, (N_same, N_other, other, mass, ratio) in enumerate(
            ((NdZ, NaZ, p, m_e, m_e / m_h), (NaZ, NdZ, n, m_h, m_h / m_e))):
        mu_max, mu_min = k["mu_max"][i], k["mu_min"][i]
        alpha, n_ref = k["alpha"][i], k["n_ref"][i]
        mu_L = mu_max * t ** (-k["theta"][i])
        mu_N = mu_max**2 / (mu_max - mu_min) * t ** (3.0 * alpha - 1.5)
        mu_c = mu_max * mu_min / (mu_max - mu_min) * t ** (-0.5)
        N_sc = N_same + N_other + other
        inv_P = (k["f_CW"] * N_sc ** (2.0 / 3.0) / (3.97e13 * t**2)
                 + k["f_BH"] * (n + p) / (1.36e20 * mass * t**2))
        with np.errstate(divide="ignore"):
            P = np.where(inv_P > 0.0, 1.0 / np.where(inv_P > 0.0, inv_P, 1.0), np.inf)
        N_eff = N_same + _klaassen_G(P, mass, T) * N_other + other / _klaassen_F(P, ratio)
        # 1/mu_DAj = N_sc,eff / (mu_N N_sc^(1-alpha) N_ref^alpha + mu_c (n+p)); 0 with no scatterers
        den = mu_N * N_sc ** (1.0 - alpha) * n_ref**alpha + mu_c * (n + p)
        inv_DAj = np.divide(N_eff, den, out=np.zeros_like(den), where=den > 0.0)
        out.append(1.0 / (1.0 / mu_L + inv_DAj))
    return out[0], out[1]


# ---------------------------------------------------------------------------
# Masetti 1983
# ---------------------------------------------------------------------------

#: Masetti, Severi & Solmi 1983, Table (from memory):
#: (mu_min1, mu_min2, mu_1, mu_max, C_r, C_s, alpha, beta, P_c); the P and B sets share
#: mu_min, mu_max, C_r and alpha with the silicon record (`MOBILITY_E_SI` / `MOBILITY_H_SI`).
MASETTI1983 = {
    "P": (_E.mu_min_cm2_Vs, _E.mu_min_cm2_Vs, 56.1, _E.mu_max_cm2_Vs, _E.n_ref_cm3, 3.41e20, _E.alpha, 1.98, 0.0),
    "As": (52.2, 52.2, 43.4, 1417.0, 9.68e16, 3.43e20, 0.680, 2.00, 0.0),
    "B": (_H.mu_min_cm2_Vs, 0.0, 29.0, _H.mu_max_cm2_Vs, _H.n_ref_cm3, 6.10e20, _H.alpha, 2.00, 9.23e16),
}
#: Lattice temperature exponents theta (e, h), Klaassen 1992 part I (from memory), as in the Si record.
_THETA_SI = (_E.theta, _H.theta)


def _masetti(N, T, pars, theta):
    mu_min1, mu_min2, mu_1, mu_max, C_r, C_s, alpha, beta, P_c = pars
    mu_L = mu_max * (T / 300.0) ** (-theta)
    with np.errstate(divide="ignore", over="ignore"):
        first = mu_min1 * np.exp(-np.divide(P_c, N, out=np.full_like(N, np.inf), where=N > 0))
        last = mu_1 / (1.0 + np.divide(C_s, N, out=np.full_like(N, np.inf), where=N > 0) ** beta)
    return first + (mu_L - mu_min2) / (1.0 + (N / C_r) ** alpha) - last


def mobility_masetti1983(T_K, donors_cm3, acceptors_cm3, n_cm3=None, p_cm3=None, donor_species="P"):
    """Silicon mobilities from Masetti, Severi & Solmi, with a lattice temperature factor.

        mu(N) = mu_min1 exp(-P_c/N) + (mu_L - mu_min2)/(1 + (N/C_r)^alpha)
                - mu_1/(1 + (C_s/N)^beta),        N = N_D + N_A,
        mu_L  = mu_max (T/300)^-theta   (theta = 2.285 e, 2.247 h, Klaassen 1992).

    Electrons use the phosphorus (or arsenic) set, holes the boron set.  The
    fit is for majority carriers at 300 K; applied to minority carriers it is
    the common approximation (Klaassen 1992 treats them properly).  Only the
    lattice term is scaled with temperature.

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].
    n_cm3, p_cm3 : array_like, optional
        Accepted for a common signature and ignored (no carrier-carrier scattering) [cm^-3].
    donor_species : str
        "P" or "As" [-].

    Returns
    -------
    (ndarray, ndarray)
        mu_e, mu_h [cm^2 V^-1 s^-1].

    References
    ----------
    G. Masetti, M. Severi and S. Solmi, "Modeling of carrier mobility against carrier concentration
    in arsenic-, phosphorus-, and boron-doped silicon", IEEE Trans. Electron Devices 30, 764 (1983),
    doi:10.1109/T-ED.1983.21207.
    """
    T, Nd, Na = np.broadcast_arrays(_arr(T_K), _arr(donors_cm3), _arr(acceptors_cm3))
    N = Nd + Na
    key = {"p": "P", "as": "As"}.get(str(donor_species).lower())
    if key is None:
        raise InputError("absorber.dopant_species", donor_species, "P or As for the Masetti 1983 electron mobility")
    return _masetti(N, T, MASETTI1983[key], _THETA_SI[0]), _masetti(N, T, MASETTI1983["B"], _THETA_SI[1])


# ---------------------------------------------------------------------------
# Caughey-Thomas (generic)
# ---------------------------------------------------------------------------

def _caughey_thomas_one(ct, N, T):
    t = T / 300.0
    mu_L = ct.mu_max_cm2_Vs * t ** (-ct.theta)
    return ct.mu_min_cm2_Vs + (mu_L - ct.mu_min_cm2_Vs) / (1.0 + (N / (ct.n_ref_cm3 * t**ct.xi)) ** ct.alpha)


def mobility_caughey_thomas(T_K, donors_cm3, acceptors_cm3, electron, hole):
    """Caughey-Thomas doping-dependent mobility with power-law temperature factors.

        mu(N, T) = mu_min + (mu_max (T/300)^-theta - mu_min) / (1 + (N / (N_ref (T/300)^xi))^alpha),
        N = N_D + N_A (total ionised impurity density).

    Parameters
    ----------
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].
    electron, hole : optogen.materials.CaugheyThomas
        Parameter records of the two carriers.

    Returns
    -------
    (ndarray, ndarray)
        mu_e, mu_h [cm^2 V^-1 s^-1].

    References
    ----------
    D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967), doi:10.1109/PROC.1967.6123;
    temperature factors in the form of N. D. Arora, J. R. Hauser and D. J. Roulston, IEEE Trans.
    Electron Devices 29, 292 (1982).
    """
    T, Nd, Na = np.broadcast_arrays(_arr(T_K), _arr(donors_cm3), _arr(acceptors_cm3))
    N = Nd + Na
    return _caughey_thomas_one(electron, N, T), _caughey_thomas_one(hole, N, T)


# ---------------------------------------------------------------------------
# Dispatcher
# ---------------------------------------------------------------------------

def _klaassen_entry(material, T, Nd, Na, n, p):
    return mobility_klaassen1992(T, Nd, Na, n, p)


def _masetti_entry(material, T, Nd, Na, n, p):
    return mobility_masetti1983(T, Nd, Na)


def _ct_entry(material, T, Nd, Na, n, p):
    if material.mobility_e is None or material.mobility_h is None:
        raise InputError("absorber.custom.mobility_e", None,
                         f"Caughey-Thomas parameters (mobility_e and mobility_h) for {material.name}",
                         "give them in [absorber.custom] or choose another mobility model")
    return mobility_caughey_thomas(T, Nd, Na, material.mobility_e, material.mobility_h)


_KEYS = ("absorber.mobility_model", "absorber.custom.mobility_model")
registry.register(
    "mobility", "klaassen1992", mobility_klaassen1992, key=_KEYS, call=_klaassen_entry, materials=("Si",),
    injection=True, aliases=("klaassen",),
    summary="lattice, impurity (majority and minority) and carrier-carrier scattering, with temperature",
    reference="D. B. M. Klaassen, Solid-State Electron. 35, 953 and 961 (1992)", doi="10.1016/0038-1101(92)90325-7")
registry.register(
    "mobility", "masetti1983", mobility_masetti1983, key=_KEYS, call=_masetti_entry, materials=("Si",),
    aliases=("masetti",), summary="majority-carrier doping dependence, lattice part scaled with T",
    reference="G. Masetti, M. Severi and S. Solmi, IEEE Trans. Electron Devices 30, 764 (1983)",
    doi="10.1109/T-ED.1983.21207")
registry.register(
    "mobility", "caughey_thomas", mobility_caughey_thomas, key=_KEYS, call=_ct_entry,
    aliases=("ct", "caughey-thomas1967", "caughey"),
    summary="doping and temperature dependence from the material record's mobility_e / mobility_h",
    reference="D. M. Caughey and R. E. Thomas, Proc. IEEE 55, 2192 (1967)", doi="10.1109/PROC.1967.6123")

#: canonical mobility model name -> (mu_e, mu_h)(material, T, N_D, N_A, n, p) (a view of the registry)
MOBILITY_MODELS = {m.name: m.call for m in registry.models("mobility", load=False)}


def pick_mobility_model(material, model: str | None = None) -> registry.Model:
    """The registered mobility model for `material` (checked to apply to it).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    model : str, optional
        Model name or alias (default: `material.mobility_model`).

    Returns
    -------
    optogen.registry.Model
        The registered model (its ``call(material, T, nd, na, n, p)`` gives (mu_e, mu_h)
        [cm^2 V^-1 s^-1]).

    Raises
    ------
    InputError
        For an unknown model, or one that does not apply to the material
        (field ``absorber.mobility_model``).
    """
    name = model or material.mobility_model
    return registry.check_material(registry.pick("mobility", name, "absorber.mobility_model"), material,
                                   "absorber.mobility_model", name)


def missing_mobility_record(material) -> str | None:
    """The missing Caughey-Thomas record of a material whose mobility model needs it.

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.

    Returns
    -------
    str or None
        "mobility_e" or "mobility_h" when `material.mobility_model` is caughey_thomas and that
        record is absent, else None.
    """
    if registry.pick("mobility", material.mobility_model, "absorber.mobility_model").name != "caughey_thomas":
        return None
    for k in ("mobility_e", "mobility_h"):
        if getattr(material, k, None) is None:
            return k
    return None


def carriers_full_ionisation(material, T_K, donors_cm3, acceptors_cm3):
    """Equilibrium (n0, p0) with every dopant ionised.

    n0 - p0 = N_D - N_A and n0 p0 = n_i^2 with n_i = sqrt(Nc Nv) exp(-Eg/2kT) from the material
    record (Boltzmann statistics, no band-gap narrowing), through the one definition of this state,
    `optogen.equilibrium.full_ionisation_cm3`.  This is the simple state used for resistivity
    conversion (ASTM F723 practice); `optogen.equilibrium.equilibrium` gives the full Fermi-Dirac,
    incomplete-ionisation result.

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber (Nc, Nv, Eg of T).
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Dopant densities [cm^-3].

    Returns
    -------
    (ndarray, ndarray)
        n0, p0 [cm^-3].

    References
    ----------
    ASTM F723 (W. R. Thurber et al., NBS Special Publication 400-64, 1981) for the convention.
    """
    T, Nd, Na = np.broadcast_arrays(_arr(T_K), _arr(donors_cm3), _arr(acceptors_cm3))
    return full_ionisation_cm3(Nd, Na, ni_nc_nv_eg(material, T, log=True))


def mobility_cm2_Vs(material, T_K, donors_cm3, acceptors_cm3, n_cm3=None, p_cm3=None, model=None):
    """Electron and hole mobilities of a material by model name.

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber (its mobility records and default model).
    T_K : array_like
        Temperature [K].
    donors_cm3, acceptors_cm3 : array_like
        Ionised dopant densities [cm^-3].
    n_cm3, p_cm3 : array_like, optional
        Carrier densities [cm^-3] (default: the full-ionisation equilibrium, `carriers_full_ionisation`).
    model : str, optional
        A registered "mobility" model (default `material.mobility_model`).

    Returns
    -------
    (ndarray, ndarray)
        mu_e, mu_h [cm^2 V^-1 s^-1], broadcast over all array arguments.

    References
    ----------
    The chosen model's (`optogen.registry.models("mobility")`).
    """
    fn = pick_mobility_model(material, model).call
    T = check_range("absorber.temperature_K", T_K, 0.0, low_open=True, unit="K")
    Nd = check_range("absorber.donors_cm3", donors_cm3, 0.0, unit="cm^-3")
    Na = check_range("absorber.acceptors_cm3", acceptors_cm3, 0.0, unit="cm^-3")
    if n_cm3 is None or p_cm3 is None:
        n0, p0 = carriers_full_ionisation(material, T, Nd, Na)
        n_cm3 = n0 if n_cm3 is None else n_cm3
        p_cm3 = p0 if p_cm3 is None else p_cm3
    n = check_range("n_cm3", n_cm3, 0.0, unit="cm^-3")
    p = check_range("p_cm3", p_cm3, 0.0, unit="cm^-3")
    return fn(material, _arr(T), _arr(Nd), _arr(Na), _arr(n), _arr(p))


# ---------------------------------------------------------------------------
# Conductivity, resistivity <-> doping
# ---------------------------------------------------------------------------

def conductivity_S_cm(n_cm3, p_cm3, mu_e_cm2_Vs, mu_h_cm2_Vs):
    """Conductivity sigma = q (n mu_e + p mu_h).

    Parameters
    ----------
    n_cm3, p_cm3 : array_like
        Electron and hole densities [cm^-3].
    mu_e_cm2_Vs, mu_h_cm2_Vs : array_like
        Mobilities [cm^2 V^-1 s^-1].

    Returns
    -------
    ndarray
        sigma [S cm^-1].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1.
    """
    return q_C * (_arr(n_cm3) * _arr(mu_e_cm2_Vs) + _arr(p_cm3) * _arr(mu_h_cm2_Vs))


def _doping_pair(density, dopant_type):
    kind = str(dopant_type).strip().lower()
    if kind not in ("n", "p"):
        raise InputError("absorber.dopant", dopant_type, '"n" (donors) or "p" (acceptors)')
    zero = np.zeros_like(density)
    return (density, zero) if kind == "n" else (zero, density)


def _resistivity(material, N, kind, T, model):
    Nd, Na = _doping_pair(N, kind)
    n0, p0 = carriers_full_ionisation(material, T, Nd, Na)
    mu_e, mu_h = mobility_cm2_Vs(material, T, Nd, Na, n0, p0, model)
    return 1.0 / conductivity_S_cm(n0, p0, mu_e, mu_h)


def doping_to_resistivity(material, density_cm3, dopant_type, T_K=300.0, model=None):
    """Resistivity of material doped with `density_cm3` of one type.

    rho = 1 / (q (n0 mu_e + p0 mu_h)), with (n0, p0) from full ionisation and n0 p0 = n_i^2
    (`carriers_full_ionisation`) and the mobilities of `model`.

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    density_cm3 : array_like
        Donor (dopant_type "n") or acceptor ("p") density [cm^-3].
    dopant_type : {"n", "p"}
        The dopant type.
    T_K : array_like
        Temperature [K].
    model : str, optional
        A registered "mobility" model (default `material.mobility_model`).

    Returns
    -------
    ndarray
        Resistivity [ohm cm].

    References
    ----------
    ASTM F723; W. R. Thurber, R. L. Mattis, Y. M. Liu and J. J. Filliben, NBS Special
    Publication 400-64 (1981): conversion between dopant density and resistivity with full ionisation.
    """
    N = check_range("absorber.donors_cm3" if str(dopant_type).lower() == "n" else "absorber.acceptors_cm3",
                    density_cm3, 0.0, unit="cm^-3")
    T = check_range("absorber.temperature_K", T_K, 0.0, low_open=True, unit="K")
    return _resistivity(material, _arr(N), dopant_type, _arr(T), model)


def resistivity_to_doping(material, resistivity_ohm_cm, dopant_type, T_K=300.0, model=None,
                          max_density_cm3=1e22):
    """Dopant density giving `resistivity_ohm_cm` (inverse of `doping_to_resistivity`).

    Solves rho(N) = rho_target for N by a vectorised bisection in ln N (all array elements at
    once, 60 halvings: relative accuracy ~1e-16 of the bracket), bracketed between
      * N_lo: below the highest resistivity reachable with this dopant type.
        With lattice mobilities mu_maj, mu_min, sigma(majority m) = q (mu_maj m
        + mu_min n_i^2/m) is smallest at m = n_i (mu_min/mu_maj)^(1/2), i.e.
        N* = n_i (r^(1/2) - r^(-1/2)), r = mu_min/mu_maj; rho(N) falls
        monotonically above N* (above N = 0 when r <= 1, e.g. n-type Si);
      * N_hi = max_density_cm3.
    A target outside [rho(N_hi), rho(N_lo)] raises InputError.  Full ionisation is assumed
    (ASTM F723 practice; see `doping_to_resistivity`).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    resistivity_ohm_cm : array_like
        Target resistivity, > 0 [ohm cm].
    dopant_type : {"n", "p"}
        The dopant type.
    T_K : array_like
        Temperature [K].
    model : str, optional
        A registered "mobility" model (default `material.mobility_model`).
    max_density_cm3 : float
        Upper end of the bracket [cm^-3].

    Returns
    -------
    ndarray or float
        The donor ("n") or acceptor ("p") density [cm^-3].

    Raises
    ------
    InputError
        For a target outside [rho(N_hi), rho(N_lo)], or a bad dopant type or resistivity.

    References
    ----------
    ASTM F723; W. R. Thurber et al., NBS Special Publication 400-64 (1981).
    """
    rho = check_range("absorber.resistivity_ohm_cm", resistivity_ohm_cm, 0.0, low_open=True, unit="ohm cm")
    _doping_pair(np.zeros(1), dopant_type)        # validates dopant_type
    T = check_range("absorber.temperature_K", T_K, 0.0, low_open=True, unit="K")
    rho, T = np.broadcast_arrays(_arr(rho), _arr(T))
    kind = str(dopant_type).strip().lower()
    ni = ni_nc_nv_eg(material, T)
    mu_e, mu_h = mobility_cm2_Vs(material, T, 0.0, 0.0, ni, ni, model)
    r = (mu_h / mu_e) if kind == "n" else (mu_e / mu_h)
    N_star = np.where(r > 1.0, ni * (np.sqrt(r) - 1.0 / np.sqrt(r)), 0.0)
    lo = np.log(np.maximum(1.01 * N_star, 1e-6 * ni + 1e-30))
    hi = np.full_like(lo, np.log(max_density_cm3))
    rho_max = _resistivity(material, np.exp(lo), kind, T, model)
    rho_min = _resistivity(material, np.exp(hi), kind, T, model)
    if np.any(rho > rho_max) or np.any(rho < rho_min):
        bad = (rho > rho_max) | (rho < rho_min)
        i = np.flatnonzero(bad)[0]
        raise InputError("absorber.resistivity_ohm_cm", float(rho.flat[i]),
                         f"between {rho_min.flat[i]:.4g} and {rho_max.flat[i]:.4g} ohm cm for "
                         f"{kind}-type {material.name} at {T.flat[i]:g} K",
                         "the upper end is near the intrinsic resistivity")
    target = np.log(rho)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        too_resistive = np.log(_resistivity(material, np.exp(mid), kind, T, model)) > target
        lo = np.where(too_resistive, mid, lo)
        hi = np.where(too_resistive, hi, mid)
    out = np.exp(0.5 * (lo + hi))
    return out if out.ndim else float(out)


def match_resistivity_cm3(material, resistivity_ohm_cm, dopant_type, T_K=300.0, model=None,
                          equilibrium_options=None, iterations: int = 20):
    """Dopant density whose dark conductivity, with incomplete ionisation, is 1/rho.

    Starts from the full-ionisation answer of `resistivity_to_doping` (the ASTM F723
    convention) and rescales N by (1/rho) / sigma(N), sigma from the Fermi-Dirac,
    incomplete-ionisation equilibrium (`optogen.equilibrium.equilibrium`) and the
    mobilities at its carrier densities, until they agree to 1e-12 (a few steps: sigma
    is nearly linear in N).

    Parameters
    ----------
    material : optogen.materials.Material
        The absorber.
    resistivity_ohm_cm : array_like
        Target resistivity rho > 0 [ohm cm].
    dopant_type : {"n", "p"}
        "n" (donors) or "p" (acceptors).
    T_K : array_like
        Temperature of the resistivity [K].
    model : str, optional
        Mobility model name (default `material.mobility_model`).
    equilibrium_options : dict, optional
        Keyword arguments of `optogen.equilibrium.equilibrium`
        (donor, acceptor, ni_model, bgn_model, incomplete_ionisation).
    iterations : int, optional
        Most rescaling steps [-].

    Returns
    -------
    ndarray or float
        The donor ("n") or acceptor ("p") density [cm^-3], shaped like `resistivity_ohm_cm`.

    References
    ----------
    ASTM F723; W. R. Thurber et al., NBS Special Publication 400-64 (1981) (the
    full-ionisation start); P. P. Altermatt et al., J. Appl. Phys. 100, 113714 (2006),
    doi:10.1063/1.2386934 (incomplete ionisation, through `optogen.equilibrium.equilibrium`).
    """
    rho = _arr(check_range("absorber.resistivity_ohm_cm", resistivity_ohm_cm, 0.0, low_open=True,
                           unit="ohm cm"))
    N = _arr(resistivity_to_doping(material, rho, dopant_type, T_K, model))
    T = np.broadcast_to(_arr(T_K), N.shape)
    for _ in range(iterations):
        nd, na = _doping_pair(N, dopant_type)
        eq = equilibrium(material, T, nd, na, **(equilibrium_options or {}))
        sigma = conductivity_S_cm(eq.n0_cm3, eq.p0_cm3,
                                  *mobility_cm2_Vs(material, T, nd, na, eq.n0_cm3, eq.p0_cm3, model))
        ratio = 1.0 / (rho * sigma)
        N = N * ratio
        if np.all(np.abs(ratio - 1.0) < 1e-12):
            break
    return N


# ---------------------------------------------------------------------------
# Diffusion and photoconductance
# ---------------------------------------------------------------------------

def diffusivity_cm2_s(mobility_cm2_Vs, T_K):
    """Einstein relation D = mu kT/q (non-degenerate).

    Parameters
    ----------
    mobility_cm2_Vs : array_like
        Mobility [cm^2 V^-1 s^-1].
    T_K : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        D [cm^2 s^-1].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1.
    """
    return _arr(mobility_cm2_Vs) * kT_eV(T_K)


def ambipolar_diffusivity_cm2_s(n_cm3, p_cm3, D_e_cm2_s, D_h_cm2_s):
    """Ambipolar diffusion coefficient D_amb = (n + p) D_e D_h / (n D_e + p D_h).

    Tends to the minority-carrier D in low injection and to 2 D_e D_h/(D_e + D_h)
    in high injection (n = p).

    Parameters
    ----------
    n_cm3, p_cm3 : array_like
        Electron and hole densities [cm^-3].
    D_e_cm2_s, D_h_cm2_s : array_like
        Electron and hole diffusivities [cm^2 s^-1].

    Returns
    -------
    ndarray
        D_amb [cm^2 s^-1].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1;
    R. F. Pierret, Advanced Semiconductor Fundamentals, 2nd ed. (Prentice Hall, 2003).
    """
    n, p, De, Dh = (_arr(x) for x in (n_cm3, p_cm3, D_e_cm2_s, D_h_cm2_s))
    return (n + p) * De * Dh / (n * De + p * Dh)


def diffusion_length_cm(D_cm2_s, tau_s):
    """Diffusion length L = sqrt(D tau).

    Parameters
    ----------
    D_cm2_s : array_like
        Diffusivity [cm^2 s^-1].
    tau_s : array_like
        Lifetime [s].

    Returns
    -------
    ndarray
        L [cm].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), ch. 1.
    """
    return np.sqrt(_arr(D_cm2_s) * _arr(tau_s))


def photoconductance_S(n0_cm3, p0_cm3, n_cm3, p_cm3, mu_e_dark_cm2_Vs, mu_h_dark_cm2_Vs,
                       mu_e_light_cm2_Vs, mu_h_light_cm2_Vs, thickness_cm):
    """Sheet photoconductance: the conductance change between dark and light [S].

    Delta_sigma W = [sigma(n, p) - sigma(n0, p0)] W
                  = q [(n mu_e(n, p) + p mu_h(n, p)) - (n0 mu_e(n0, p0) + p0 mu_h(n0, p0))] W

    each state with its own mobilities (injection-dependent, e.g. Klaassen 1992).  This is
    the quantity a photoconductance lifetime measurement records: the change of the wafer's sheet
    conductance under light, from which the excess density is inferred (D. K. Schroder, Semiconductor Material and Device Characterization, 3rd ed. (Wiley, 2006), ch. 7;
    from memory).  With
    the same mobilities in both states it is q (Delta_n mu_e + Delta_p mu_h) W
    (S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007),
    sect. 13.2); with injection-dependent mobilities that form differs by about 1-3 %.

    Parameters
    ----------
    n0_cm3, p0_cm3 : array_like
        Dark electron and hole densities [cm^-3].
    n_cm3, p_cm3 : array_like
        Electron and hole densities under light [cm^-3].
    mu_e_dark_cm2_Vs, mu_h_dark_cm2_Vs : array_like
        Mobilities at (n0, p0) [cm^2 V^-1 s^-1].
    mu_e_light_cm2_Vs, mu_h_light_cm2_Vs : array_like
        Mobilities at (n, p) [cm^2 V^-1 s^-1].
    thickness_cm : array_like
        Wafer thickness W [cm].

    Returns
    -------
    ndarray
        Sheet photoconductance [S] (siemens per square), broadcast over the inputs.

    References
    ----------
    D. K. Schroder, Semiconductor Material and Device Characterization, 3rd ed. (Wiley, 2006), ch. 7 (from memory).
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley, 2007), sect. 13.2.
    """
    light = conductivity_S_cm(n_cm3, p_cm3, mu_e_light_cm2_Vs, mu_h_light_cm2_Vs)
    dark = conductivity_S_cm(n0_cm3, p0_cm3, mu_e_dark_cm2_Vs, mu_h_dark_cm2_Vs)
    return (light - dark) * _arr(thickness_cm)
