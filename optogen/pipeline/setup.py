"""Pipeline, step 1: what is built once per group of points (material, spectrum, recombination).

`build` turns a scenario into a `Setup` (everything that does not change with the fast keys:
temperature, doping, resistivity, light level); the helpers here read the scenario values a
group of points needs (doping, equilibrium options, generation at each temperature) and label
input errors with scenario keys.  No physics lives here: each call goes to the core module
that owns it.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np

from .. import light, materials, schema
from ..materials import shortest_wavelength_nm
from ..constants import hc_eV_nm
from ..detector import detector_from_table
from ..errors import InputError, relabel
from ..generation import generate
from ..recombination import Recombination
from ..scenario import Scenario, validate
from ..transport import match_resistivity_cm3, mobility_cm2_Vs, missing_mobility_record, resistivity_to_doping


LIGHT_SCALING_KEYS = schema.LIGHT_SCALINGS   # declared once in optogen.schema


FAST_KEYS = set(schema.fast_keys())        # temperature, doping, resistivity and the light scalings


#: resistivity is taken as the room-temperature value (ASTM F723 is at 23 C; we use 300 K)
RESISTIVITY_REFERENCE_K = 300.0


@dataclass(frozen=True)
class Setup:
    """Everything built once from a scenario (fixed slow keys).

    Parameters
    ----------
    scenario : Scenario
        The scenario the set-up was built from.
    material : materials.Material
        The absorber material (built-in, tweaked or custom).
    thickness_cm : float
        Absorber thickness [cm].
    spectrum : light.Spectrum or None
        The incident light at the scenario's scaling, or at unit scaling of a swept scaling
        key; None without a [light] table.
    background : light.Spectrum or None
        The blackbody background seen by the absorber; None without a [background] table.
    recombination : recombination.Recombination or None
        The recombination settings; None for a dark run without a [recombination] table.
    optics : dict
        The [optics] table of the scenario.
    tables : dict
        Quantities that vary only with temperature, computed once for every temperature of a
        group of points and reused by each chunk (`tabulate_generation`); filled in place,
        not part of the identity of the set-up.
    """

    scenario: Scenario
    material: Any
    thickness_cm: float
    spectrum: Any | None           # at the scenario's scaling, or at unit scaling of a swept scaling key
    background: Any | None
    recombination: Any | None
    optics: dict
    tables: dict = field(default_factory=dict, compare=False, repr=False)


def build(sc: Scenario, unit_scaling: str | None = None) -> Setup:
    """Build material, spectrum, background and recombination from a scenario.

    Parameters
    ----------
    sc : Scenario
        The scenario (validated again here: one built by hand gets the same checks as a file).
    unit_scaling : str or None, optional
        A [light] scaling key that is swept; the spectrum is then built at value 1 of that key
        and the sweep multiplies it [-].

    Returns
    -------
    Setup
        Material, thickness, spectrum, background, recombination and optics of the scenario.

    Raises
    ------
    InputError
        For a missing material or thickness, or any value outside the schema.
    """
    validate(sc.data)                 # a Scenario built by hand gets the same checks as a file
    ab = sc.section("absorber")
    if "custom" in ab:
        base = materials.get(ab["material"], ab.get("composition_x")) if "material" in ab else None
        mat = materials.material_from_table(ab["custom"], base=base)
    else:
        if "material" not in ab:
            raise InputError("absorber.material", None, "a built-in name or an [absorber.custom] table")
        mat = materials.get(ab["material"], ab.get("composition_x"))
    if "mobility_model" in ab:
        mat = mat.with_(mobility_model=ab["mobility_model"])
    thickness_um = ab.get("thickness_um", 100.0 if "light" not in sc.data else None)
    if thickness_um is None:
        raise InputError("absorber.thickness_um", None, "a thickness > 0 um is needed under light")
    schema.check_value("absorber.thickness_um", thickness_um)

    spectrum = None
    if "light" in sc.data:
        table = sc.section("light")
        if unit_scaling is not None:
            for k in LIGHT_SCALING_KEYS:
                table.pop(k, None)
            table[unit_scaling] = 1.0
        spectrum = light.source_from_table(table, sc.base_dir)
        if unit_scaling is None:
            check_irradiance(sc, spectrum.irradiance_W_m2)
    background = None
    if "background" in sc.data:
        bg = sc.section("background")       # f_number with field_of_view_deg: a schema rule (_rule_background)
        with relabel({"light.": "background."}):
            background = light.blackbody(bg.get("temperature_K", 300.0), bg.get("field_of_view_deg", 90.0),
                                         bg.get("emissivity", 1.0), f_number=bg.get("f_number"),
                                         cuton_nm=bg.get("cuton_nm"), cutoff_nm=bg.get("cutoff_nm"))
        if "cuton_nm" in bg or "cutoff_nm" in bg:
            _check_filter_band(sc, mat, background.wavelength_nm[0], background.wavelength_nm[-1])
    recomb = None
    if "light" in sc.data or "recombination" in sc.data or "background" in sc.data:
        recomb = Recombination.from_table(sc.section("recombination"))
    _validate_point_fields(sc)
    return Setup(sc, mat, float(thickness_um) * 1e-4, spectrum, background, recomb, sc.section("optics"))


def _check_filter_band(sc: Scenario, material, lo_nm: float, hi_nm: float) -> None:
    """InputError unless the cold-filter band [lo_nm, hi_nm] overlaps the absorber's response.

    Response: from the shortest wavelength of the optical data to the gap
    cut-off hc/Eg(T), at every temperature of the run (scenario value and swept values) [nm].
    """
    temps = [np.atleast_1d(a.values) for a in sc.sweep if a.key == "absorber.temperature_K"]
    T = np.concatenate(temps) if temps else np.array([float(sc.get("absorber.temperature_K", 300.0))])
    T = T[np.isfinite(T) & (T > 0)]
    if T.size:
        T = T[np.asarray(material.bandgap_eV(T), dtype=float) > 0]    # a closed gap is its own InputError later
    if T.size == 0:
        return
    cut = float(np.max(hc_eV_nm / np.asarray(material.bandgap_eV(T), dtype=float)))
    short = shortest_wavelength_nm(material, T, page=sc.get("absorber.optical_page"), csv_path=optical_csv(sc))
    if lo_nm >= cut:
        raise InputError("background.cuton_nm", float(lo_nm),
                         f"below the absorber's cut-off wavelength {cut:.5g} nm (hc/Eg over the run's temperatures)",
                         "the filter band lies entirely beyond the material's response")
    if hi_nm <= short:
        raise InputError("background.cutoff_nm", float(hi_nm),
                         f"above {short:.5g} nm, the shortest wavelength of the absorber's optical data",
                         "the filter band lies entirely outside the material's response")


def check(sc: Scenario) -> Setup:
    """Everything `optogen check` can check without the physics.

    The schema (kinds, ranges, rules, every swept value), the model names, the material, light,
    background, recombination and detector records, and the light ceiling at the brightest
    swept value.

    Parameters
    ----------
    sc : Scenario
        The scenario to check.

    Returns
    -------
    Setup
        The set-up `build` makes (at unit scaling of a swept light scaling key).

    Raises
    ------
    InputError
        At the first fault found.
    """
    unit = swept_light_scaling(sc)
    setup = build(sc, unit)
    if unit is not None and setup.spectrum is not None:
        top = max(float(np.max(a.values)) for a in sc.sweep if a.key == f"light.{unit}")
        check_irradiance(sc, setup.spectrum.irradiance_W_m2 * top)
    return setup


def swept_light_scaling(sc: Scenario) -> str | None:
    """The [light] scaling key that is swept (suns, irradiance_W_m2, ...), or None.

    Parameters
    ----------
    sc : Scenario
        The scenario.

    Returns
    -------
    str or None
        The key without its ``light.`` prefix, or None when no scaling key is swept.

    Raises
    ------
    InputError
        When more than one light scaling key is swept.
    """
    scaling = [a.key.split(".")[1] for a in sc.sweep if a.key in FAST_KEYS and a.key.startswith("light.")]
    if len(scaling) > 1:
        raise InputError("sweep", ", ".join(scaling), "at most one light scaling key swept at a time")
    return scaling[0] if scaling else None


def _validate_point_fields(sc: Scenario) -> None:
    """Checks that `optogen check` must make without running: model names against the core's
    tables (the schema checked kinds and ranges) and the [detector] record."""
    schema.check_models(sc.data)
    if "detector" in sc.data:
        detector_from_table(sc.section("detector"))


def _scaling_key(sc: Scenario) -> str:
    """The dotted key that sets the light level (for messages)."""
    table = sc.data.get("light") or {}
    swept = [a.key for a in sc.sweep if a.key.startswith("light.") and a.key in FAST_KEYS]
    given = [f"light.{k}" for k in LIGHT_SCALING_KEYS if k in table]
    return (swept or given or ["light.source"])[0]


def check_irradiance(sc: Scenario, irradiance_W_m2) -> None:
    """Incident irradiance at most schema.IRRADIANCE_MAX_W_m2 (1e4 suns), whatever sets it.

    Parameters
    ----------
    sc : Scenario
        The scenario (names the key that sets the light level in the error).
    irradiance_W_m2 : float or array_like
        Incident irradiance [W m^-2].

    Raises
    ------
    InputError
        Where the irradiance exceeds the enforced domain (or is NaN).
    """
    irr = np.asarray(irradiance_W_m2, dtype=float)
    bad = ~(irr <= schema.IRRADIANCE_MAX_W_m2)
    if np.any(bad):
        key = _scaling_key(sc)
        raise InputError(key, sc.get(key),
                         f"a light level of at most {schema.IRRADIANCE_MAX_W_m2:g} W m^-2 incident "
                         f"({schema.SUNS_MAX:g} suns, the enforced domain)",
                         f"this source gives {float(np.max(np.where(bad, irr, -np.inf))):.4g} W m^-2")


def check_doping_sum(nd, na, field: str) -> None:
    """Total dopant density N_D + N_A at most schema.DOPING_MAX_cm3 (the enforced doping domain).

    Parameters
    ----------
    nd : float or array_like
        Donor density [cm^-3].
    na : float or array_like
        Acceptor density [cm^-3].
    field : str
        The dotted scenario key named in the error.

    Raises
    ------
    InputError
        Where the sum exceeds the domain (or is NaN).
    """
    total = np.asarray(nd, dtype=float) + np.asarray(na, dtype=float)
    bad = ~(total <= schema.DOPING_MAX_cm3)
    if np.any(bad):
        raise InputError(field, float(np.max(np.where(bad, total, -np.inf))),
                         f"a total dopant density N_D + N_A <= {schema.DOPING_MAX_cm3:g} cm^-3 "
                         "(the enforced doping domain)")


def doping_of(setup: Setup, values: Mapping[str, np.ndarray]):
    """Donor and acceptor densities from the scenario or the swept values.

    A resistivity input is converted at RESISTIVITY_REFERENCE_K (300 K), with incomplete
    ionisation (`transport.match_resistivity_cm3`) unless the scenario turns it off.

    Parameters
    ----------
    setup : Setup
        The set-up (scenario and material).
    values : Mapping[str, numpy.ndarray]
        Swept values by dotted scenario key; a key absent here takes its scenario value.

    Returns
    -------
    nd, na : numpy.ndarray
        Donor and acceptor densities [cm^-3].
    """
    sc = setup.scenario
    ab = sc.section("absorber")
    if "resistivity_ohm_cm" in ab:
        rho = np.asarray(values.get("absorber.resistivity_ohm_cm", ab["resistivity_ohm_cm"]), dtype=float)
        if ab.get("incomplete_ionisation", True):
            N = match_resistivity_cm3(setup.material, rho, ab["dopant"], RESISTIVITY_REFERENCE_K,
                                      equilibrium_options=equilibrium_options(setup))
        else:
            N = resistivity_to_doping(setup.material, rho, ab["dopant"], T_K=RESISTIVITY_REFERENCE_K)
        check_doping_sum(N, 0.0, "absorber.resistivity_ohm_cm")
        return (N, 0.0 * N) if ab["dopant"] == "n" else (0.0 * N, N)
    nd = values.get("absorber.donors_cm3", ab.get("donors_cm3", 0.0))
    na = values.get("absorber.acceptors_cm3", ab.get("acceptors_cm3", 0.0))
    return np.asarray(nd, dtype=float), np.asarray(na, dtype=float)


def equilibrium_options(setup: Setup) -> dict:
    """The keyword arguments of `equilibrium.equilibrium` that the scenario sets.

    Parameters
    ----------
    setup : Setup
        The set-up (scenario and recombination).

    Returns
    -------
    dict
        donor, acceptor (species names), ni_model, bgn_model and incomplete_ionisation.
    """
    ab = setup.scenario.section("absorber")
    return dict(donor=ab.get("donor_species"), acceptor=ab.get("acceptor_species"), ni_model=ab.get("ni_model"),
                bgn_model=getattr(setup.recombination, "bgn_model", None),
                incomplete_ionisation=ab.get("incomplete_ionisation", True))


def generation_of(setup: Setup, spectrum, T, depth_cm=None, profile: bool = False):
    """Generation of `spectrum` over temperatures T.

    Computed once per distinct temperature: a table made by `tabulate_generation` for the
    group is reused when it holds every T (no depth mesh, no profile asked).

    Parameters
    ----------
    setup : Setup
        The set-up (material, thickness, optics).
    spectrum : light.Spectrum
        The light or the background.
    T : array_like
        Temperatures, 1-D [K].
    depth_cm : array_like or None, optional
        Depths at which to compute G(x) [cm]; None for no depth mesh.
    profile : bool, optional
        Also compute G(x) on the automatic depth mesh (single points, plots).

    Returns
    -------
    g : generation.Generation
        Generation over the distinct temperatures (units per `generation.Generation`).
    rows : numpy.ndarray
        rows[i] is the row of g for T[i] [-].
    """
    T = np.asarray(T, dtype=float)
    Tu, inv = np.unique(T, return_inverse=True)
    table = setup.tables.get(_table_key(setup, spectrum)) if depth_cm is None and not profile else None
    if table is not None:
        known, g = table
        j = np.minimum(np.searchsorted(known, Tu), known.size - 1)
        if np.array_equal(known[j], Tu):
            return g, j[inv]
    o = setup.optics
    kw = dict(front_reflectance=o.get("front_reflectance", 0.0), rear_reflectance=o.get("rear_reflectance", 1.0),
              light_path=o.get("light_path", "lambertian"), base_dir=setup.scenario.base_dir,
              page=setup.scenario.get("absorber.optical_page"), csv_path=optical_csv(setup.scenario))
    if "coating" in o:
        kw["coating"] = o["coating"]
    g = generate(spectrum, setup.material, setup.thickness_cm, T_K=Tu, depth_cm=depth_cm,
                 with_profile=profile or depth_cm is not None, **kw)
    return g, inv


def tabulate_generation(setup: Setup, T) -> None:
    """Compute the generation of the light and the background once for every temperature in T.

    The temperatures are those of a whole group of points; the result is kept in
    `setup.tables`.

    Parameters
    ----------
    setup : Setup
        The set-up; its `tables` are filled in place.
    T : array_like
        Temperatures [K].
    """
    Tu = np.unique(np.asarray(T, dtype=float))
    for spectrum in (setup.spectrum, setup.background):
        if spectrum is not None:
            g, _ = generation_of(setup, spectrum, Tu)
            setup.tables[_table_key(setup, spectrum)] = (Tu, g)


def _table_key(setup: Setup, spectrum) -> str | None:
    return "light" if spectrum is setup.spectrum else "background" if spectrum is setup.background else None


def optical_csv(sc: Scenario):
    """The path of the scenario's own optical-constants CSV file, or None.

    Parameters
    ----------
    sc : Scenario
        The scenario (``absorber.optical_csv``, relative to its directory).

    Returns
    -------
    pathlib.Path or None
        The file's path, or None when the scenario names none.
    """
    p = sc.get("absorber.optical_csv")
    return None if p is None else sc.base_dir / p


def mobilities(setup, T, nd, na, n, p):
    """Electron and hole mobilities; NaN where n or p is NaN (an unconverged point).

    A material without mobilities for its model raises one InputError naming the
    missing `absorber.custom.mobility_*` field and what needs it (`transport.missing_mobility_record`).

    Parameters
    ----------
    setup : Setup
        The set-up (material).
    T : array_like
        Temperature [K].
    nd, na : array_like
        Donor and acceptor densities [cm^-3].
    n, p : array_like
        Electron and hole densities [cm^-3].

    Returns
    -------
    mu_e, mu_h : numpy.ndarray
        Electron and hole mobilities [cm^2 V^-1 s^-1].

    Raises
    ------
    InputError
        When the material has no mobility record for its model.
    """
    missing = missing_mobility_record(setup.material)
    if missing:
        raise InputError(f"absorber.custom.{missing}", None,
                         "Caughey-Thomas parameters {mu_min_cm2_Vs, mu_max_cm2_Vs, n_ref_cm3, alpha} for "
                         f"{setup.material.name}: a resistivity input, the [detector] figures and depth-resolved "
                         "runs need carrier mobilities", "without them the rest runs and photoconductance_S is null")
    n, p = np.asarray(n, dtype=float), np.asarray(p, dtype=float)
    bad = np.isnan(n) | np.isnan(p)
    if not np.any(bad):
        return mobility_cm2_Vs(setup.material, T, nd, na, n, p)
    mu_e, mu_h = mobility_cm2_Vs(setup.material, T, nd, na, np.where(bad, 0.0, n), np.where(bad, 0.0, p))
    return np.where(bad, np.nan, mu_e), np.where(bad, np.nan, mu_h)
