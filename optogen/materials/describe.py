"""The material description printed by ``optogen materials NAME``.
"""
from __future__ import annotations

import dataclasses

from ..errors import check_range
from .record import Material
from .optical import _HC_eV_um, optical_temperature_rule
from .custom import _CT_KEYS


_UNITS = {
    "eg0_eV": "eV", "varshni_alpha_eV_K": "eV K^-1", "varshni_beta_K": "K", "me_dos_m0": "m0", "mh_dos_m0": "m0",
    "permittivity": "-", "vth_e_300K_cm_s": "cm s^-1", "vth_h_300K_cm_s": "cm s^-1", "radiative_B_cm3_s": "cm^3 s^-1",
    "auger_Cn_cm6_s": "cm^6 s^-1", "auger_Cp_cm6_s": "cm^6 s^-1", "refractive_index": "-",
    "edge_A_cm1_eV05": "cm^-1 eV^(-1/2)", "urbach_eV": "eV", "composition_x": "-", "kane_Ep_eV": "eV",
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
    """Rows describing `material` at a temperature (for the CLI).

    Parameters
    ----------
    material : Material
        The record.
    T_K : float
        Temperature [K].

    Returns
    -------
    list of dict
        One dict(field, value, unit, source) per row [unit in each row].
    """
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
    row("vth_e_cm_s", float(ve), "cm s^-1", f"at {T:g} K; " + src.get("vth_e_300K_cm_s", ""))
    row("vth_h_cm_s", float(vh), "cm s^-1", f"at {T:g} K; " + src.get("vth_h_300K_cm_s", ""))
    row("radiative_B_cm3_s", float(material.radiative_coefficient_cm3_s(T)), "cm^3 s^-1",
        f"at {T:g} K ({material.radiative_model}); " + src.get("radiative_B_cm3_s", ""))
    cn, cp = material.auger_coefficients_cm6_s(T)
    row("auger_Cn_cm6_s", float(cn), "cm^6 s^-1", f"at {T:g} K ({material.auger_model}); " + src.get("auger_Cn_cm6_s", ""))
    row("auger_Cp_cm6_s", float(cp), "cm^6 s^-1", f"at {T:g} K ({material.auger_model}); " + src.get("auger_Cp_cm6_s", ""))
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
                    {"mu_min_cm2_Vs": "cm^2 V^-1 s^-1", "mu_max_cm2_Vs": "cm^2 V^-1 s^-1", "n_ref_cm3": "cm^-3"}.get(k, "-"),
                    src.get(which, ""))
    page = "/".join(material.optical_page) if material.optical_page else "parametric edge"
    row("optical_page", page, "-", src.get("optical_page", ""))
    row("optical_temperature", optical_temperature_rule(material, T), "-", "how the optical data follow temperature")
    return rows
