"""The scenario schema: every section and key once, with its type, unit, range, default and consumer.

This is the single declaration of what a scenario file may contain.  The scenario
layer (`optogen.scenario`) checks every file, every ``--set`` value and every swept
value against it before any physics runs; the builders in the core modules take
their key lists from here (`section_keys`); the README key tables and the JSON
Schema for editors (`json_schema`, ``optogen schema``) are tested against it or
generated from it.

A key is addressed by its dotted path.  Inside a list of tables the index is written
``*`` (``recombination.defects.*.density_cm3``); `key_for` maps a concrete path such
as ``recombination.defects.0.density_cm3`` onto it.

The enforced input domain (README "Enforced input domain"):

* absorber temperature 4-1000 K (`T_MIN_K`, `T_MAX_K`);
* each dopant density and their sum at most 1e21 cm^-3 (`DOPING_MAX_cm3`), near the
  solid solubility of the common dopants in Si (B, P, As are soluble to a few 1e20-1e21
  cm^-3 (from memory: Trumbore, Bell Syst. Tech. J. 39, 205 (1960))) and deep in
  degeneracy; the models themselves are validated to about 1e20 cm^-3;
* thickness 1 nm to 10 cm (`THICKNESS_MIN_um`, `THICKNESS_MAX_um`);
* incident light 0 to 1e4 suns, i.e. an incident irradiance of at most 1e7 W m^-2
  (`IRRADIANCE_MAX_W_m2`) whatever sets it;
* resource ceilings: `MAX_NODES`, `MAX_CHUNK`, `MAX_POINTS`, `MAX_SLOW_GROUPS`,
  `MAX_TEXT_BYTES`, `MAX_LIST_ITEMS`.

This module imports nothing from the core (it is a leaf like `constants`), so core
modules may import it.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any, Iterable, Mapping

import numpy as np

from .errors import InputError, did_you_mean

# ---------------------------------------------------------------------------
# The domain and the resource ceilings
# ---------------------------------------------------------------------------

T_MIN_K = 4.0                  #: lowest absorber temperature [K]
T_MAX_K = 1000.0               #: highest absorber temperature [K]
DOPING_MAX_cm3 = 1e21          #: ceiling of each dopant density and of their sum [cm^-3]
F_NUMBER_MIN, F_NUMBER_MAX = 0.5, 100.0   #: accepted f-numbers (F_NUMBER_MIN, F_NUMBER_MAX]: faster than
#: f/0.5 is beyond the aplanatic limit sin(theta) = 1/(2F) = 1, slower than f/100 a pinhole [-]
THICKNESS_MIN_um = 1e-3        #: thinnest absorber [um]
THICKNESS_MAX_um = 1e5         #: thickest absorber (10 cm) [um]
SUNS_MAX = 1e4                 #: brightest light in suns [-]
IRRADIANCE_MAX_W_m2 = 1e7      #: brightest incident irradiance (1e4 suns of 1000 W m^-2) [W m^-2]
MAX_NODES = 10_000             #: solver.nodes ceiling [-]
MAX_CHUNK = 1_000_000          #: solver.chunk_size ceiling [points]
MAX_POINTS = 100_000_000       #: hard ceiling of a sweep grid, even with --yes [points]
MAX_SLOW_GROUPS = 10_000       #: ceiling of slow-key combinations (each rebuilds the set-up) [-]
MAX_TEXT_BYTES = 1_000_000     #: largest scenario file [bytes]
MAX_LIST_ITEMS = 100           #: most defects or custom dopants (each adds a pass over every point) [-]

FAST, SLOW = "fast", "slow"

# value kinds
NUMBER, INTEGER, BOOL, STRING, TABLE, LIST, FALSE = "number", "integer", "bool", "string", "table", "list", "false"


@dataclass(frozen=True)
class Key:
    """One scenario key.

    Parameters
    ----------
    path : str
        Dotted path, ``*`` for the index inside a list of tables [-].
    kinds : tuple of str
        Accepted value kinds: "number", "integer", "bool", "string", "table", "list",
        "false" (the literal false) [-].
    unit : str
        Unit of a number ("-" dimensionless, "" not a number) [-].
    default : object
        The value used when the key is absent (None: none / required / see doc) [-].
    low, high : float or None
        Range of a number (None: unbounded) [unit].
    low_open, high_open : bool
        Exclude the bound itself [-].
    allow_inf : bool
        +inf accepted as "none" (e.g. a Caughey-Thomas n_ref_cm3) [-].
    choices : tuple of str or None
        Allowed strings (compared case-insensitively, "-"/" " as "_") [-].
    models : str or None
        "module.TABLE:ALIASES": the dispatch table (and alias table) naming the allowed strings;
        checked by `check_models` (imports the core), not by `validate` [-].
    pattern : str or None
        Regular expression a string must match (with its meaning in `doc`) [-].
    max_items : int or None
        Longest list of tables (a resource ceiling) [-].
    sweep : str or None
        "fast" (vectorised), "slow" (looped) or None (not sweepable) [-].
    consumer : str
        The module / function that reads it [-].
    doc : str
        One line for people [-].
    """

    path: str
    kinds: tuple[str, ...]
    unit: str = "-"
    default: Any = None
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    high_open: bool = False
    allow_inf: bool = False
    choices: tuple[str, ...] | None = None
    models: str | None = None
    pattern: str | None = None
    max_items: int | None = None
    sweep: str | None = SLOW
    consumer: str = ""
    doc: str = ""

    @property
    def section(self) -> str:
        """The top-level section of the key ("absorber" for "absorber.thickness_um") [-]."""
        return self.path.split(".")[0]

    @property
    def name(self) -> str:
        """The last part of the dotted path ("thickness_um") [-]."""
        return self.path.split(".")[-1]

    def allowed(self) -> str:
        """What the key accepts, in words (for error messages and docs).

        Returns
        -------
        str
            E.g. "a number > 0 um" or 'one of "single", "mirror"' [-].
        """
        parts = []
        for kind in self.kinds:
            if kind in (NUMBER, INTEGER):
                word = "a number" if kind == NUMBER else "an integer"
                rng = []
                if self.low is not None:
                    rng.append(f"{'>' if self.low_open else '>='} {self.low:g}")
                if self.high is not None:
                    rng.append(f"{'<' if self.high_open else '<='} {self.high:g}")
                unit = f" {self.unit}" if self.unit not in ("-", "") else ""
                parts.append(word + (" " + " and ".join(rng) if rng else "") + unit
                             + (" (or inf)" if self.allow_inf else ""))
            elif kind == BOOL:
                parts.append("true or false")
            elif kind == FALSE:
                parts.append("false")
            elif kind == STRING:
                parts.append("one of " + ", ".join(f'"{c}"' for c in self.choices) if self.choices
                             else "a string")
            elif kind == TABLE:
                parts.append("a table")
            elif kind == LIST:
                parts.append("a list of tables")
        return " or ".join(parts)


@dataclass(frozen=True)
class Section:
    """One top-level section: its name, its consumer and a line for people.

    Parameters
    ----------
    name : str
        Section name, e.g. "absorber" [-].
    consumer : str
        The module / function that reads it [-].
    doc : str
        One line for people [-].
    required : bool
        The section must be present [-].
    """

    name: str
    consumer: str
    doc: str
    required: bool = False


def _k(path, kinds, unit="-", default=None, low=None, high=None, *, low_open=False, high_open=False,
       allow_inf=False, choices=None, models=None, pattern=None, max_items=None, sweep=SLOW, consumer="", doc=""):
    kinds = (kinds,) if isinstance(kinds, str) else tuple(kinds)
    if sweep == SLOW and not set(kinds) & {NUMBER, INTEGER, BOOL}:
        sweep = None                       # strings, tables and lists are not swept (one run per value)
    return Key(path, kinds, unit, default, low, high, low_open, high_open, allow_inf,
               tuple(choices) if choices else None, models, pattern, max_items, sweep, consumer, doc)


SECTIONS: dict[str, Section] = {s.name: s for s in (
    Section("title", "report", "a title for the summary and the files"),
    Section("description", "report", "free text, kept in the files"),
    Section("absorber", "pipeline.build, materials, equilibrium", "the absorber (required)", required=True),
    Section("light", "light.source_from_table", "the light source"),
    Section("optics", "generation, optics", "front and rear optics"),
    Section("recombination", "recombination.Recombination.from_table", "recombination mechanisms"),
    Section("background", "pipeline.build, light", "a warm scene seen by the absorber"),
    Section("detector", "detector.detector_from_table", "detector figures"),
    Section("solver", "pipeline, profile", "solver settings"),
    Section("measurement", "analysis.command.analyse",
            "measured lifetime or photoconductance data (optogen analyse only; optogen run refuses it)"),
    Section("uncertainty", "analysis.uncertainty",
            "input uncertainties of the analysis, relative 1 sigma (optogen analyse only)"),
    Section("sweep", "scenario.sweep_axes", "swept keys (dotted paths) and their values"),
)}

_NUM = NUMBER
_R = "pipeline.build"
_DOMAIN_T = dict(low=T_MIN_K, high=T_MAX_K)

_A = "analysis.command"


def _ka(path, kinds, unit="-", default=None, low=None, high=None, **kw):
    """A key of [measurement] / [uncertainty]: never swept (one analysis per measured file)."""
    return _k(path, kinds, unit, default, low, high, sweep=None, **kw)


_KEYS: list[Key] = [
    _k("title", STRING, "", sweep=None, consumer="report", doc="title"),
    _k("description", STRING, "", sweep=None, consumer="report", doc="free text"),
    # -- [absorber] ---------------------------------------------------------------------
    _k("absorber.material", STRING, "", models="materials.BUILTIN", consumer="materials.get",
       doc="built-in material name (optogen materials), or omit it and give [absorber.custom]"),
    _k("absorber.custom", TABLE, "", consumer="materials.material_from_table",
       doc="a custom material (fields of optogen.materials.Material)"),
    _k("absorber.composition_x", _NUM, "-", None, 0.17, 1.0, consumer="materials.get",
       doc="Cd fraction x of Hg(1-x)Cd(x)Te"),
    _k("absorber.thickness_um", _NUM, "um", "100 in the dark; required under light",
       THICKNESS_MIN_um, THICKNESS_MAX_um, consumer=_R, doc="absorber thickness W"),
    _k("absorber.temperature_K", _NUM, "K", 300.0, **_DOMAIN_T, sweep=FAST, consumer="pipeline.evaluate",
       doc="absorber temperature"),
    _k("absorber.donors_cm3", _NUM, "cm^-3", 0.0, 0.0, DOPING_MAX_cm3, sweep=FAST, consumer="pipeline.setup.doping_of",
       doc="donor density"),
    _k("absorber.acceptors_cm3", _NUM, "cm^-3", 0.0, 0.0, DOPING_MAX_cm3, sweep=FAST, consumer="pipeline.setup.doping_of",
       doc="acceptor density"),
    _k("absorber.resistivity_ohm_cm", _NUM, "ohm cm", None, 1e-6, 1e9, sweep=FAST, consumer="pipeline.setup.doping_of",
       doc="300 K resistivity of an n- or p-type wafer, with dopant, instead of the densities"),
    _k("absorber.dopant", STRING, "", None, choices=("n", "p"), consumer="pipeline.setup.doping_of",
       doc='"n" or "p", with resistivity_ohm_cm'),
    _k("absorber.donor_species", STRING, "", None, consumer="equilibrium", doc="donor species of the material"),
    _k("absorber.acceptor_species", STRING, "", None, consumer="equilibrium",
       doc="acceptor species of the material"),
    _k("absorber.ni_model", STRING, "", None, models="registry:ni", consumer="equilibrium",
       doc="intrinsic density model"),
    _k("absorber.mobility_model", STRING, "", None, models="registry:mobility", consumer="transport",
       doc="mobility model"),
    _k("absorber.incomplete_ionisation", BOOL, "", True, consumer="equilibrium",
       doc="false: every dopant ionised"),
    _k("absorber.optical_page", STRING, "", None, consumer="materials.optical_constants",
       doc="another page of the refractive-index database, or \"parametric\""),
    _k("absorber.optical_csv", STRING, "", None, consumer="materials.optical_constants",
       doc="CSV of optical constants (wavelength_nm,n,k), relative to the scenario"),
    # -- [absorber.custom] (fields of materials.Material) -------------------------------
    *[_k(f"absorber.custom.{n}", _NUM, u, None, lo, hi, low_open=lo_open, consumer="materials.validate", doc=d)
      for n, u, lo, lo_open, hi, d in (
          ("eg0_eV", "eV", 0.0, True, 10.0, "band gap at 0 K (Varshni)"),
          ("varshni_alpha_eV_K", "eV K^-1", 0.0, False, 0.1, "Varshni alpha"),
          ("varshni_beta_K", "K", 0.0, True, 1e4, "Varshni beta"),
          ("me_dos_m0", "m0", 0.0, True, 100.0, "electron density-of-states mass"),
          ("mh_dos_m0", "m0", 0.0, True, 100.0, "hole density-of-states mass"),
          ("permittivity", "-", 0.0, True, 1e3, "static relative permittivity"),
          ("vth_e_300K_cm_s", "cm s^-1", 0.0, True, 1e9, "electron thermal velocity at 300 K"),
          ("vth_h_300K_cm_s", "cm s^-1", 0.0, True, 1e9, "hole thermal velocity at 300 K"),
          ("radiative_B_cm3_s", "cm^3 s^-1", 0.0, False, 1e-6, "radiative coefficient at 300 K"),
          ("auger_Cn_cm6_s", "cm^6 s^-1", 0.0, False, 1e-15, "electron Auger coefficient at 300 K"),
          ("auger_Cp_cm6_s", "cm^6 s^-1", 0.0, False, 1e-15, "hole Auger coefficient at 300 K"),
          ("refractive_index", "-", 1.0, False, 20.0, "constant real index"),
          ("edge_A_cm1_eV05", "cm^-1 eV^(-1/2)", 0.0, False, 1e8, "parametric edge A"),
          ("urbach_eV", "eV", 0.0, False, 1.0, "Urbach energy"),
          ("kane_Ep_eV", "eV", 0.0, False, 100.0, "Kane energy Ep"),
          ("spin_orbit_eV", "eV", 0.0, False, 10.0, "spin-orbit splitting"),
          ("m_lh_m0", "m0", 0.0, False, 100.0, "light-hole mass"),
          ("auger_F1F2", "-", 0.0, True, 1.0, "Auger-1 overlap integral |F1 F2|"),
          ("auger_gamma", "-", 0.0, True, 1e6, "tau_A7 / tau_A1"),
          ("kane_F", "-", -100.0, False, 100.0, "remote-band parameter F"),
          ("composition_x", "-", 0.17, False, 1.0, "Cd fraction for bandgap_model = hansen1982"),
      )],
    _k("absorber.custom.name", STRING, "", "custom", consumer="materials", doc="material name"),
    _k("absorber.custom.dopants", LIST, "", None, max_items=MAX_LIST_ITEMS, consumer="materials",
       doc="dopant species"),
    _k("absorber.custom.dopants.*.name", STRING, "", None, consumer="materials", doc="chemical symbol"),
    _k("absorber.custom.dopants.*.kind", STRING, "", None, choices=("donor", "acceptor"), consumer="materials",
       doc="donor or acceptor"),
    _k("absorber.custom.dopants.*.energy_eV", _NUM, "eV", None, 0.0, 5.0, consumer="materials",
       doc="ionisation energy"),
    _k("absorber.custom.dopants.*.degeneracy", _NUM, "-", None, 0.0, 100.0, low_open=True, consumer="materials",
       doc="ground-state degeneracy"),
    _k("absorber.custom.dopants.*.source", STRING, "", None, consumer="materials", doc="citation"),
    *[_k(f"absorber.custom.{m}", TABLE, "", None, consumer="materials", doc=f"Caughey-Thomas {m[-1]} mobility")
      for m in ("mobility_e", "mobility_h")],
    *[_k(f"absorber.custom.{m}.{n}", _NUM, u, dflt, lo, hi, low_open=lo_open, allow_inf=inf,
         consumer="materials", doc=d)
      for m in ("mobility_e", "mobility_h")
      for n, u, dflt, lo, lo_open, hi, inf, d in (
          ("mu_min_cm2_Vs", "cm^2 V^-1 s^-1", None, 0.0, False, 1e7, False, "minimum mobility"),
          ("mu_max_cm2_Vs", "cm^2 V^-1 s^-1", None, 0.0, True, 1e7, False, "lattice mobility at 300 K"),
          ("n_ref_cm3", "cm^-3", None, 0.0, True, 1e30, True, "reference density (inf: no doping dependence)"),
          ("alpha", "-", None, 0.0, True, 10.0, False, "exponent alpha"),
          ("theta", "-", 0.0, -10.0, False, 10.0, False, "temperature exponent of mu_max"),
          ("xi", "-", 0.0, -10.0, False, 10.0, False, "temperature exponent of n_ref"))],
    _k("absorber.custom.mobility_model", STRING, "", None, models="registry:mobility",
       consumer="materials", doc="default mobility model"),
    _k("absorber.custom.optical_page", (STRING, LIST), "", None, consumer="materials",
       doc='"shelf/book/page" of the refractive-index database, or none'),
    _k("absorber.custom.bandgap_model", STRING, "", "varshni", choices=("varshni", "hansen1982"),
       models="registry:bandgap", consumer="materials", doc="band gap model"),
    _k("absorber.custom.mass_model", STRING, "", "constant", choices=("constant", "weiler1981"),
       models="registry:mass", consumer="materials", doc="electron mass model"),
    _k("absorber.custom.radiative_model", STRING, "", "constant", choices=("constant", "hall1959"),
       models="registry:radiative", consumer="materials", doc="radiative coefficient model"),
    _k("absorber.custom.auger_model", STRING, "", "constant", choices=("constant", "beattie_landsberg1959"),
       models="registry:auger", consumer="materials", doc="Auger coefficient model"),
    _k("absorber.custom.ni_model", STRING, "", "nc_nv_eg", models="registry:ni", consumer="materials",
       doc="default intrinsic density model"),
    _k("absorber.custom.bgn_model", STRING, "", "none", models="registry:bgn", consumer="materials",
       doc="default band-gap narrowing model"),
    _k("absorber.custom.direct_gap", BOOL, "", True, consumer="materials", doc="direct fundamental gap"),
    _k("absorber.custom.sources", TABLE, "", None, consumer="materials", doc="field -> citation"),
    # -- [light] ---------------------------------------------------------------------------
    _k("light.source", STRING, "", "AM1.5G", consumer="light.source_from_table",
       doc="AM1.5G, AM1.5D, AM0, blackbody, laser, led or file (optogen spectra)"),
    _k("light.suns", _NUM, "suns", None, 0.0, SUNS_MAX, sweep=FAST, consumer="light.scale",
       doc="irradiance in suns (1 sun = 1000 W m^-2 of the spectrum's shape)"),
    _k("light.irradiance_W_m2", _NUM, "W m^-2", None, 0.0, IRRADIANCE_MAX_W_m2, sweep=FAST, consumer="light.scale",
       doc="total incident irradiance"),
    _k("light.power_W", _NUM, "W", None, 0.0, 1e6, sweep=FAST, consumer="light.scale",
       doc="power spread evenly over the spot"),
    _k("light.photon_flux_cm2_s", _NUM, "cm^-2 s^-1", None, 0.0, 1e23, sweep=FAST, consumer="light.scale",
       doc="total incident photon flux"),
    _k("light.spot_area_cm2", _NUM, "cm^2", None, 1e-12, 1e6, consumer="light.illuminated_area_cm2",
       doc="illuminated area, with power_W"),
    _k("light.beam_diameter_mm", _NUM, "mm", None, 1e-5, 1e4, consumer="light.illuminated_area_cm2",
       doc="beam diameter (top-hat), with power_W"),
    _k("light.wavelength_nm", _NUM, "nm", None, 100.0, 1e5, consumer="light.laser", doc="laser line wavelength"),
    _k("light.peak_nm", _NUM, "nm", None, 100.0, 1e5, consumer="light.led", doc="LED peak wavelength"),
    _k("light.fwhm_nm", _NUM, "nm", None, 0.1, 1e4, consumer="light.led", doc="LED line width (FWHM)"),
    _k("light.temperature_K", _NUM, "K", None, 1.0, 1e4, consumer="light.blackbody", doc="emitter temperature"),
    _k("light.field_of_view_deg", _NUM, "degree", 90.0, 0.0, 90.0, low_open=True, consumer="light.blackbody",
       doc="field-of-view half-angle"),
    _k("light.emissivity", _NUM, "-", 1.0, 0.0, 1.0, consumer="light.blackbody", doc="grey emissivity"),
    _k("light.path", STRING, "", None, consumer="light.from_file",
       doc="measured spectrum: a delimited text file (comma, tab, semicolon or white space) with a header "
           "naming a wavelength or energy column and an irradiance or photon-flux column, units in brackets; "
           "relative to the scenario"),
    _k("light.wavelength_column", (STRING, INTEGER), "", None, 1, None, sweep=None, consumer="light.read_spectrum",
       doc="the spectral-axis column of the file: its header name or 1-based number (default: the first "
           "wavelength or energy column)"),
    _k("light.irradiance_column", (STRING, INTEGER), "", None, 1, None, sweep=None, consumer="light.read_spectrum",
       doc="the value column of the file: its header name or 1-based number (default: the only irradiance or "
           "photon-flux column)"),
    _k("light.wavelength_unit", STRING, "", None, choices=("nm", "um", "eV"), consumer="light.read_spectrum",
       doc="unit of the spectral-axis column when its header gives none (or to override it): nm, um or eV"),
    _k("light.irradiance_unit", STRING, "", None, pattern=r"^[A-Za-z0-9 ^()/*.\-]{1,40}$", consumer="light.read_spectrum",
       doc="unit of the value column when its header gives none, e.g. W m^-2 nm^-1, W m^-2 um^-1, W m^-2 eV^-1, "
           "cm^-2 s^-1 nm^-1"),
    # -- [optics] --------------------------------------------------------------------------
    _k("optics.front_reflectance", (NUMBER, STRING, TABLE), "-", 0.0, 0.0, 1.0,
       pattern=r"(?i)\s*bare\s*|.*\.csv\s*", consumer="optics.front_reflectance",
       doc='a number in [0, 1], "bare", a coating table, a file table or a .csv path'),
    _k("optics.front_reflectance.n_coating", _NUM, "-", None, 1.0, 10.0, consumer="optics",
       doc="coating refractive index"),
    _k("optics.front_reflectance.thickness_nm", _NUM, "nm", None, 0.0, 1e5, consumer="optics",
       doc="coating thickness"),
    _k("optics.front_reflectance.path", STRING, "", None, consumer="optics", doc="reflectance CSV"),
    _k("optics.coating", TABLE, "", None, consumer="optics", doc="{ n_coating, thickness_nm }"),
    _k("optics.coating.n_coating", _NUM, "-", None, 1.0, 10.0, consumer="optics", doc="coating refractive index"),
    _k("optics.coating.thickness_nm", _NUM, "nm", None, 0.0, 1e5, consumer="optics", doc="coating thickness"),
    _k("optics.rear_reflectance", _NUM, "-", 1.0, 0.0, 1.0, consumer="optics", doc="rear reflectance"),
    _k("optics.light_path", STRING, "", "lambertian", models="registry:light_path", consumer="optics",
       doc="single, mirror or lambertian"),
    # -- [recombination] -------------------------------------------------------------------
    _k("recombination.intrinsic", STRING, "", None, models="registry:intrinsic",
       consumer="recombination", doc="Auger + radiative model"),
    _k("recombination.bandgap_narrowing", STRING, "", None, models="registry:bgn",
       consumer="recombination", doc="band-gap narrowing model"),
    _k("recombination.front_J0_fA_cm2", _NUM, "fA cm^-2", None, 0.0, 1e15, consumer="recombination",
       doc="front surface saturation current density"),
    _k("recombination.front_S_cm_s", _NUM, "cm s^-1", None, 0.0, 1e8, consumer="recombination",
       doc="front surface recombination velocity"),
    _k("recombination.rear_J0_fA_cm2", _NUM, "fA cm^-2", None, 0.0, 1e15, consumer="recombination",
       doc="rear surface saturation current density"),
    _k("recombination.rear_S_cm_s", _NUM, "cm s^-1", None, 0.0, 1e8, consumer="recombination",
       doc="rear surface recombination velocity"),
    _k("recombination.J0_reference_K", (NUMBER, FALSE), "K", 298.15, T_MIN_K, T_MAX_K, consumer="recombination",
       doc="temperature of the J0 values (false: J0 fixed)"),
    _k("recombination.photon_recycling", _NUM, "-", 0.0, 0.0, 1.0, high_open=True, consumer="recombination",
       doc="fraction of radiative events re-absorbed"),
    _k("recombination.B_rel", _NUM, "-", 1.0, 0.0, 1e3, consumer="recombination",
       doc="factor on the radiative coefficient"),
    _k("recombination.injection_bgn", BOOL, "", None, consumer="recombination",
       doc="recompute n_i,eff from n and p inside the rates"),
    _k("recombination.defects", (LIST, TABLE), "", None, max_items=MAX_LIST_ITEMS,
       consumer="recombination.defect_from_table",
       doc="SRH levels ([[recombination.defects]])"),
    _k("recombination.defects.*.name", STRING, "", "custom", consumer="recombination",
       doc="a built-in defect (Fe_i, FeB) or a label"),
    _k("recombination.defects.*.density_cm3", _NUM, "cm^-3", None, 0.0, DOPING_MAX_cm3, consumer="recombination",
       doc="defect density"),
    _k("recombination.defects.*.energy_eV", _NUM, "eV", None, -10.0, 10.0, consumer="recombination",
       doc="level energy from energy_ref"),
    _k("recombination.defects.*.energy_ref", STRING, "", "Ev", choices=("Ev", "Ec", "Ei"), consumer="recombination",
       doc="reference of energy_eV"),
    _k("recombination.defects.*.sigma_n_cm2", _NUM, "cm^2", None, 0.0, 1e-10, consumer="recombination",
       doc="electron capture cross-section"),
    _k("recombination.defects.*.sigma_p_cm2", _NUM, "cm^2", None, 0.0, 1e-10, consumer="recombination",
       doc="hole capture cross-section"),
    _k("recombination.defects.*.tau_n0_s", _NUM, "s", None, 1e-15, 1e6, consumer="recombination",
       doc="electron capture time constant"),
    _k("recombination.defects.*.tau_p0_s", _NUM, "s", None, 1e-15, 1e6, consumer="recombination",
       doc="hole capture time constant"),
    _k("recombination.defects.*.source", STRING, "", None, consumer="recombination", doc="citation"),
    # -- [background] ----------------------------------------------------------------------
    _k("background.temperature_K", _NUM, "K", 300.0, 1.0, 3000.0, consumer="light.blackbody",
       doc="scene temperature"),
    _k("background.field_of_view_deg", _NUM, "degree", 90.0, 0.0, 90.0, low_open=True, consumer="light.blackbody",
       doc="field-of-view half-angle (not with f_number)"),
    _k("background.emissivity", _NUM, "-", 1.0, 0.0, 1.0, consumer="light.blackbody", doc="grey emissivity"),
    _k("background.f_number", _NUM, "-", None, F_NUMBER_MIN, F_NUMBER_MAX, low_open=True, consumer="pipeline.build",
       doc="cold-stop f-number (instead of field_of_view_deg)"),
    _k("background.cuton_nm", _NUM, "nm", None, 0.0, 1e6, low_open=True, consumer="pipeline.build",
       doc="cold filter cut-on wavelength"),
    _k("background.cutoff_nm", _NUM, "nm", None, 0.0, 1e6, low_open=True, consumer="pipeline.build",
       doc="cold filter cut-off wavelength"),
    # -- [detector] ------------------------------------------------------------------------
    _k("detector.mode", STRING, "", "photoconductor", choices=("photoconductor", "photodiode"), consumer="detector",
       doc="photoconductor or photodiode"),
    _k("detector.electrode_spacing_um", _NUM, "um", 1000.0, 1e-3, 1e6, consumer="detector",
       doc="electrode spacing (photodiode: pixel side)"),
    _k("detector.width_um", _NUM, "um", 1000.0, 1e-3, 1e6, consumer="detector", doc="bar or pixel width"),
    _k("detector.bias_V", _NUM, "V", 1.0, -1e4, 1e4, consumer="detector", doc="bias"),
    _k("detector.junction_side_doping_cm3", _NUM, "cm^-3", None, 0.0, DOPING_MAX_cm3, low_open=True,
       consumer="detector", doc="heavy side doping (photodiode)"),
    _k("detector.bandwidth_Hz", _NUM, "Hz", 1.0, 1e-6, 1e12, consumer="detector", doc="noise bandwidth"),
    _k("detector.rear_S_cm_s", _NUM, "cm s^-1", None, 0.0, 1e8, consumer="detector",
       doc="rear velocity for the thin-base J0 (photodiode)"),
    _k("detector.generation_lifetime_s", _NUM, "s", None, 0.0, 1e6, low_open=True, consumer="detector",
       doc="depletion-region generation lifetime (photodiode)"),
    # -- [solver] --------------------------------------------------------------------------
    _k("solver.depth_resolved", BOOL, "", False, consumer="pipeline.point._depth_resolved", doc="solve dn(x) over depth"),
    _k("solver.voc_plane", STRING, "", "front", choices=("front", "rear"), consumer="pipeline.point._depth_resolved",
       doc="plane of the reported levels"),
    _k("solver.nodes", INTEGER, "-", 200, 3, MAX_NODES, consumer="profile.mesh", doc="depth nodes requested"),
    _k("solver.chunk_size", INTEGER, "points", 100_000, 1, MAX_CHUNK, consumer="pipeline.run",
       doc="operating points per chunk"),
    # -- [measurement] and [uncertainty]: read by optogen analyse only (optogen.analysis); not swept;
    # a forward run refuses them (_rule_analysis_sections)
    _ka("measurement.file", STRING, "", None, consumer="analysis.data",
        doc="CSV of the measurement, relative to the scenario (lifetime curve or photoconductance record)"),
    _ka("measurement.kind", STRING, "", "lifetime", choices=("lifetime", "photoconductance"), consumer=_A,
        doc="lifetime: delta_n_cm3,tau_s columns; photoconductance: time_s,photoconductance_S,suns columns"),
    _ka("measurement.dissociated_file", STRING, "", None, consumer="analysis.iron",
        doc="lifetime CSV after FeB pair dissociation (file is then the paired state): iron density"),
    _ka("measurement.optical_factor", NUMBER, "-", 1.0, 0.0, 2.0, low_open=True, consumer=_A,
        doc="factor on the optics model's 1-sun generation (sample absorption relative to the model)"),
    _ka("measurement.one_sun_mA_cm2", NUMBER, "mA cm^-2", None, 0.0, 100.0, low_open=True, consumer=_A,
        doc="photogeneration current at 1 sun (default: AM1.5G through the [optics] model)"),
    _ka("measurement.suns", NUMBER, "suns", 1.0, 0.0, 1e4, low_open=True, consumer="analysis.implied",
        doc="a further light level for the implied Voc, in suns"),
    _ka("measurement.window_low_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
        doc="Kane-Swanson window, lowest excess density (default 5x the net doping)"),
    _ka("measurement.window_high_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
        doc="Kane-Swanson window, highest excess density (default: the highest measured)"),
    _ka("measurement.fit_low_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
        doc="global fit, lowest excess density used (default: all)"),
    _ka("measurement.fit_high_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
        doc="global fit, highest excess density used (default: all)"),
    _ka("measurement.smoothing_points", INTEGER, "points", 0, 0, 10001, consumer="analysis.photoconductance",
        doc="Savitzky-Golay window of the dn/dt smoothing, odd (0: automatic, about 1/25 of the record)"),
    _ka("measurement.smoothing_order", INTEGER, "-", 2, 1, 5, consumer="analysis.photoconductance",
        doc="polynomial order of the Savitzky-Golay smoothing"),
    _ka("measurement.level_search", BOOL, "", False, consumer="analysis.j0",
        doc="global fit: search the SRH level in both halves of the gap (true) or hold it at mid-gap / the "
            "scenario's defect level (false)"),
    _ka("uncertainty.thickness_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
        doc="relative 1-sigma uncertainty of the thickness"),
    _ka("uncertainty.doping_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
        doc="relative 1-sigma uncertainty of the dopant density (or resistivity)"),
    _ka("uncertainty.optical_factor_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
        doc="relative 1-sigma uncertainty of the optical factor (generation)"),
    _ka("uncertainty.mobility_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
        doc="relative 1-sigma uncertainty of the mobility sum (photoconductance records)"),
    _ka("uncertainty.method", STRING, "", "covariance", choices=("covariance", "bootstrap"),
        consumer="analysis.uncertainty", doc="fit uncertainty from the covariance or a residual bootstrap"),
    _ka("uncertainty.samples", INTEGER, "-", 200, 20, 5000, consumer="analysis.uncertainty",
        doc="parameter samples for the propagation to implied Voc/FF (and bootstrap resamples)"),
    _ka("uncertainty.seed", INTEGER, "-", 0, 0, 2**31 - 1, consumer="analysis.uncertainty",
        doc="seed of the random samples (results are reproducible)"),
]

KEYS: dict[str, Key] = {k.path: k for k in _KEYS}
assert len(KEYS) == len(_KEYS), "a key is declared twice"

#: [light]: the scalings (exactly one per source that takes one), the spot keys (with power_W)
#: and the keys of each source kind (read by light.source_from_table)
LIGHT_SCALINGS = ("suns", "irradiance_W_m2", "power_W", "photon_flux_cm2_s")
LIGHT_SPOT_KEYS = ("spot_area_cm2", "beam_diameter_mm")
LIGHT_SOURCE_KEYS = {
    "standard": (),
    "blackbody": ("temperature_K", "field_of_view_deg", "emissivity"),
    "laser": ("wavelength_nm",),
    "led": ("peak_nm", "fwhm_nm"),
    "file": ("path", "wavelength_column", "irradiance_column", "wavelength_unit", "irradiance_unit"),
}

#: tables whose own keys are free (any name, string values)
_OPEN_TABLES = {"absorber.custom.sources"}


def section_keys(prefix: str) -> tuple[str, ...]:
    """The key names directly inside a section or table.

    Parameters
    ----------
    prefix : str
        A section or dotted table path, e.g. "light" or "recombination.defects.*" [-].

    Returns
    -------
    tuple of str
        The key names, e.g. section_keys("light") -> ("source", "suns", ...) [-].
    """
    depth = prefix.count(".") + 1
    return tuple(k.path.split(".")[depth] for k in _KEYS
                 if k.path.startswith(prefix + ".") and k.path.count(".") == depth)


assert set(section_keys("light")) == {"source", *LIGHT_SCALINGS, *LIGHT_SPOT_KEYS,
                                      *(k for v in LIGHT_SOURCE_KEYS.values() for k in v)}


def fast_keys() -> tuple[str, ...]:
    """Keys evaluated as arrays in a sweep.

    Returns
    -------
    tuple of str
        The dotted paths whose `Key.sweep` is "fast" [-].
    """
    return tuple(k.path for k in _KEYS if k.sweep == FAST)


_INDEX = re.compile(r"\.(\d+)(?=\.|$)")


def key_for(path: str) -> Key | None:
    """The Key of a concrete dotted path.

    Parameters
    ----------
    path : str
        A dotted path, list indices as numbers ("recombination.defects.0.density_cm3") [-].

    Returns
    -------
    Key or None
        The declared key (indices matched by ``*``), or None for an unknown path [-].
    """
    return KEYS.get(_INDEX.sub(".*", path))


# ---------------------------------------------------------------------------
# Checking values
# ---------------------------------------------------------------------------

def _norm(s: str) -> str:
    return re.sub(r"[\s\-]+", "_", str(s).strip().lower())


def _as_number(path: str, key: Key, value) -> float | None:
    """The value as a float if it is a number (bool excluded), else None; huge ints rejected."""
    if isinstance(value, (bool, np.bool_)):
        return None
    if isinstance(value, (int, np.integer)):
        try:
            return float(value)
        except OverflowError:
            raise InputError(path, value, key.allowed(), "the integer is too large") from None
    if isinstance(value, (float, np.floating)):
        return float(value)
    return None


def check_value(path: str, value, key: Key | None = None):
    """Check one value against its key.

    Tables are checked key by key (`check_table`).

    Parameters
    ----------
    path : str
        The dotted path, named in errors [-].
    value : object
        The value [unit of the key].
    key : Key, optional
        The key (default: `key_for(path)`) [-].

    Returns
    -------
    object
        The value (ints of a number key as float) [unit of the key].

    Raises
    ------
    InputError
        Naming `path` for a wrong kind, a value out of range or a choice not allowed.
    """
    key = key or key_for(path)
    if key is None:
        raise InputError(path, value, "a known key", _hint(path))
    kinds = key.kinds
    if NUMBER in kinds or INTEGER in kinds:
        if INTEGER in kinds and isinstance(value, (int, np.integer)) and not isinstance(value, (bool, np.bool_)):
            _check_range(path, key, value)
            return int(value)
        x = _as_number(path, key, value) if NUMBER in kinds else None
        if x is not None:
            _check_range(path, key, x)
            return x
    if BOOL in kinds and isinstance(value, (bool, np.bool_)):
        return bool(value)
    if FALSE in kinds and value is False:
        return False
    if STRING in kinds and isinstance(value, str):
        if key.choices and _norm(value) not in {_norm(c) for c in key.choices}:
            raise InputError(path, value, key.allowed(), did_you_mean(value, key.choices))
        if key.pattern and not re.fullmatch(key.pattern, value):
            raise InputError(path, value, key.doc or key.allowed())
        return value
    if LIST in kinds and TABLE in kinds and isinstance(value, Mapping):
        check_table(f"{path}.0", value)      # one table where a list of tables is allowed
        return value
    if TABLE in kinds and isinstance(value, Mapping):
        check_table(path, value)
        return value
    if LIST in kinds and isinstance(value, (list, tuple)):
        if key.max_items is not None and len(value) > key.max_items:
            raise InputError(path, f"{len(value)} entries", f"at most {key.max_items}")
        for i, item in enumerate(value):
            if not isinstance(item, Mapping) and STRING not in kinds:
                raise InputError(f"{path}.{i}", item, "a table")
            if isinstance(item, Mapping):
                check_table(f"{path}.{i}", item)
        if STRING in kinds:         # a list of strings (optical_page as [shelf, book, page])
            if not all(isinstance(s, str) for s in value):
                raise InputError(path, value, key.allowed())
        return value
    raise InputError(path, value, key.allowed())


def _check_range(path: str, key: Key, x) -> None:
    v = float(x)
    if math.isnan(v) or (math.isinf(v) and not (key.allow_inf and v > 0)):
        raise InputError(path, x, key.allowed(), "a finite number")
    if math.isinf(v):
        return
    bad = ((key.low is not None and (v <= key.low if key.low_open else v < key.low))
           or (key.high is not None and (v >= key.high if key.high_open else v > key.high)))
    if bad:
        raise InputError(path, x, key.allowed())


def check_table(path: str, table: Mapping) -> None:
    """Check every key of a table (a section, absorber.custom, a defect, ...) against the schema.

    Parameters
    ----------
    path : str
        The dotted path of the table [-].
    table : mapping
        Its keys and values [-].

    Raises
    ------
    InputError
        Naming the first unknown key or bad value.
    """
    if path in _OPEN_TABLES:
        for k, v in table.items():
            if not isinstance(v, str):
                raise InputError(f"{path}.{k}", v, "a string (a citation)")
        return
    for k, v in table.items():
        if not isinstance(k, str):
            raise InputError(path, k, "string keys")
        sub = f"{path}.{k}"
        key = key_for(sub)
        if key is None:
            names = section_keys(_INDEX.sub(".*", path))
            raise InputError(sub, v, f"a key of [{path}]: " + ", ".join(names), did_you_mean(k, names))
        check_value(sub, v, key)


def _hint(path: str) -> str | None:
    parts = path.split(".")
    if len(parts) == 1:
        return did_you_mean(parts[0], SECTIONS)
    prefix = _INDEX.sub(".*", ".".join(parts[:-1]))
    return did_you_mean(parts[-1], section_keys(prefix)) or did_you_mean(path, KEYS)


def validate(data: Mapping[str, Any]) -> None:
    """Check a whole scenario table (without [sweep]).

    Names, kinds, ranges, choices and the rules that tie keys together.

    Parameters
    ----------
    data : mapping
        A scenario's nested tables [-].

    Raises
    ------
    InputError
        Naming the first bad field.
    """
    if not isinstance(data, Mapping):
        raise InputError("scenario", data, "a table")
    for name, value in data.items():
        if name not in SECTIONS or name == "sweep":
            raise InputError(name, value, "a known section: " + ", ".join(s for s in SECTIONS if s != "sweep"),
                             did_you_mean(name, SECTIONS))
        if name in ("title", "description"):
            check_value(name, value)
        elif not isinstance(value, Mapping):
            raise InputError(name, value, f"a table ([{name}])")
        else:
            check_table(name, value)
    if "absorber" not in data:
        raise InputError("absorber", None, "a scenario needs an [absorber] section")
    for rule in _RULES:
        rule(data)


# -- rules that tie keys together (cheap, no physics) ---------------------------------------

def _rule_doping(data):
    ab = data["absorber"]
    has_density = any(k in ab for k in ("donors_cm3", "acceptors_cm3"))
    if "resistivity_ohm_cm" in ab:
        if has_density:
            raise InputError("absorber.resistivity_ohm_cm", ab["resistivity_ohm_cm"],
                             "either a resistivity or donors_cm3/acceptors_cm3, not both")
        if str(ab.get("dopant", "")).lower() not in ("n", "p"):
            raise InputError("absorber.dopant", ab.get("dopant"), '"n" or "p" with resistivity_ohm_cm')
    elif "dopant" in ab:
        raise InputError("absorber.dopant", ab["dopant"], "only with resistivity_ohm_cm")
    total = float(ab.get("donors_cm3", 0.0)) + float(ab.get("acceptors_cm3", 0.0))
    if total > DOPING_MAX_cm3:
        raise InputError("absorber.donors_cm3", ab.get("donors_cm3"),
                         f"donors_cm3 + acceptors_cm3 <= {DOPING_MAX_cm3:g} cm^-3 (the enforced doping domain)",
                         f"the sum is {total:.4g} cm^-3")


def _rule_background(data):
    bg = data.get("background") or {}
    if "f_number" in bg and "field_of_view_deg" in bg:
        raise InputError("background.f_number", bg["f_number"], "either f_number or field_of_view_deg, not both")
    if "cuton_nm" in bg and "cutoff_nm" in bg and not bg["cuton_nm"] < bg["cutoff_nm"]:
        raise InputError("background.cuton_nm", bg["cuton_nm"],
                         f"a cut-on wavelength below cutoff_nm = {bg['cutoff_nm']!r}")


def _rule_detector(data):
    det = data.get("detector") or {}
    mode = _norm(det.get("mode", "photoconductor"))
    for k in ("generation_lifetime_s", "junction_side_doping_cm3", "rear_S_cm_s"):
        if k in det and mode != "photodiode":
            raise InputError(f"detector.{k}", det[k], 'only with mode = "photodiode"')
    bias = det.get("bias_V", 1.0)
    if mode == "photoconductor" and isinstance(bias, (int, float)) and not bias > 0:
        raise InputError("detector.bias_V", bias, "> 0 V for a photoconductor (a bias magnitude)",
                         "without a bias there is no photocurrent; a photodiode takes 0 or a signed bias")


def _rule_surfaces(data):
    rec = data.get("recombination") or {}
    for side in ("front", "rear"):
        if f"{side}_J0_fA_cm2" in rec and f"{side}_S_cm_s" in rec:
            raise InputError(f"recombination.{side}_S_cm_s", rec[f"{side}_S_cm_s"],
                             f"only one of {side}_J0_fA_cm2 and {side}_S_cm_s per surface")


def _rule_analysis_sections(data):
    # [measurement] / [uncertainty] describe measured data: a forward run must not ignore them silently
    for name in ("measurement", "uncertainty"):
        if name in data:
            raise InputError(name, f"[{name}]", "no [measurement] or [uncertainty] section in a forward run: "
                             "they describe measured data", "use optogen analyse for this scenario")


_RULES = (_rule_doping, _rule_background, _rule_detector, _rule_surfaces, _rule_analysis_sections)


# ---------------------------------------------------------------------------
# Sweeps
# ---------------------------------------------------------------------------

def check_sweep_values(path: str, values) -> np.ndarray:
    """Check every value of one sweep axis against its key.

    Numbers become a float array (integers of an integer key an int array), booleans a
    bool array.  Mixed kinds, strings, tables and lists are rejected.

    Parameters
    ----------
    path : str
        The swept dotted key ("light.suns"); errors name ``sweep.<path>`` [-].
    values : list
        The values of the axis [unit of the key].

    Returns
    -------
    ndarray
        The values, 1-D [unit of the key].
    """
    field = f"sweep.{path}"
    key = key_for(path)
    if key is None:
        raise InputError(field, _abbreviate_values(values), "a dotted scenario key such as \"light.suns\"", _hint(path))
    if key.sweep is None:
        raise InputError(field, _abbreviate_values(values), f"a key that can be swept; {path} takes {key.allowed()}")
    if not values:
        raise InputError(field, values, "a non-empty list of values")
    kinds = {("number" if isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_))
              else type(v).__name__) for v in values}
    if len(kinds) != 1:
        raise InputError(field, _abbreviate_values(values), "values all of one kind (all numbers or all booleans)")
    kind = kinds.pop()
    if kind == "number":
        if INTEGER in key.kinds and NUMBER not in key.kinds:
            if not all(isinstance(v, (int, np.integer)) for v in values):
                raise InputError(field, _abbreviate_values(values), key.allowed())
            for v in values:
                check_value(path, v, key)
            return np.asarray([int(v) for v in values], dtype=np.int64)
        if NUMBER not in key.kinds:
            raise InputError(field, _abbreviate_values(values), key.allowed())
        try:
            arr = np.asarray([float(v) for v in values], dtype=float)
        except OverflowError:
            raise InputError(field, _abbreviate_values(values), key.allowed(), "an integer is too large") from None
        bad = _bad_mask(key, arr)
        if np.any(bad):
            raise InputError(path, float(arr[bad][0]), key.allowed(),
                             "a finite number" if not np.isfinite(arr[bad][0]) else None)
        return arr
    if kind == "bool":
        for v in values:
            check_value(path, v, key)
        return np.asarray(values, dtype=bool)
    raise InputError(field, _abbreviate_values(values), "numbers or booleans (strings, tables and lists are not swept: "
                     "run once per value)")


def _bad_mask(key: Key, arr: np.ndarray) -> np.ndarray:
    bad = np.isnan(arr) | (np.isinf(arr) & ~((arr > 0) & key.allow_inf))
    fin = np.where(np.isfinite(arr), arr, 0.0)
    if key.low is not None:
        bad |= np.isfinite(arr) & ((fin <= key.low) if key.low_open else (fin < key.low))
    if key.high is not None:
        bad |= np.isfinite(arr) & ((fin >= key.high) if key.high_open else (fin > key.high))
    return bad


def _abbreviate_values(values):
    if isinstance(values, (list, tuple)) and len(values) > 4:
        return f"[{', '.join(map(repr, values[:3]))}, ... ({len(values)} values)]"
    return values


def check_models(data: Mapping[str, Any]) -> None:
    """Check the model-name keys (`Key.models`) against the model registry (`optogen.registry`).

    Each key with ``models`` is matched to the registered models whose scenario keys include
    its path; an unknown name raises the registry's InputError (field, canonical names,
    did-you-mean).  Material names are left to `optogen.materials.get`.  Imports the core
    (the registering modules), so it runs in `optogen check` (pipeline.build), not in `validate`.

    Parameters
    ----------
    data : mapping
        A scenario's nested tables [-].

    Raises
    ------
    InputError
        For an unknown model name.
    """
    from . import registry
    by_key = {k: m.kind for m in registry.models() for k in m.keys}
    for key in _KEYS:
        if not key.models or "*" in key.path or key.models.startswith("materials."):
            continue                    # materials.get gives its own did-you-mean with aliases
        value = _get(data, key.path)
        if value is None or not isinstance(value, str):
            continue
        kind = by_key.get(key.path)
        if kind is None:
            raise RuntimeError(f"schema key {key.path} names models but no registered model uses it")
        registry.pick(kind, value, key.path)


def _get(data, path):
    node = data
    for part in path.split("."):
        if not isinstance(node, Mapping) or part not in node:
            return None
        node = node[part]
    return node


# ---------------------------------------------------------------------------
# Documents generated from the schema
# ---------------------------------------------------------------------------

def json_schema() -> dict:
    """A JSON Schema (draft 2020-12) of a scenario file, for editor completion of TOML files.

    Returns
    -------
    dict
        The schema, ready for `json.dump` [-].
    """

    def node(prefix: str) -> dict:
        props = {}
        for name in section_keys(prefix):
            path = f"{prefix}.{name}"
            props[name] = _json_key(KEYS[path], path)
        return {"type": "object", "properties": props, "additionalProperties": False}

    top = {"title": {"type": "string"}, "description": {"type": "string"}}
    for name in SECTIONS:
        if name in ("title", "description"):
            continue
        if name == "sweep":
            top[name] = {"type": "object", "description": SECTIONS[name].doc,
                         "propertyNames": {"enum": sorted(p for p, k in KEYS.items()
                                                          if k.sweep and "*" not in p)},
                         "additionalProperties": {"anyOf": [
                             {"type": "array", "minItems": 1},
                             {"type": "object", "properties": {
                                 "log": {"type": "array", "minItems": 2, "maxItems": 2},
                                 "linear": {"type": "array", "minItems": 2, "maxItems": 2},
                                 "points": {"type": "integer", "minimum": 1}},
                              "required": ["points"], "additionalProperties": False}]}}
            continue
        top[name] = {**node(name), "description": SECTIONS[name].doc}
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "title": "optogen scenario", "type": "object", "properties": top,
            "required": ["absorber"], "additionalProperties": False}


def _json_key(key: Key, path: str) -> dict:
    alts = []
    for kind in key.kinds:
        if kind in (NUMBER, INTEGER):
            s: dict = {"type": "number" if kind == NUMBER else "integer"}
            if key.low is not None:
                s["exclusiveMinimum" if key.low_open else "minimum"] = key.low
            if key.high is not None and not key.allow_inf:
                s["exclusiveMaximum" if key.high_open else "maximum"] = key.high
            alts.append(s)
        elif kind == BOOL:
            alts.append({"type": "boolean"})
        elif kind == FALSE:
            alts.append({"const": False})
        elif kind == STRING:
            alts.append({"type": "string", **({"enum": list(key.choices)} if key.choices else {})})
        elif kind == TABLE:
            sub = section_keys(path)
            if sub:
                alts.append({"type": "object", "additionalProperties": False,
                             "properties": {n: _json_key(KEYS[f"{path}.{n}"], f"{path}.{n}") for n in sub}})
            else:
                alts.append({"type": "object"})
        elif kind == LIST:
            sub = section_keys(f"{path}.*")
            item = ({"type": "object", "additionalProperties": False,
                     "properties": {n: _json_key(KEYS[f"{path}.*.{n}"], f"{path}.*.{n}") for n in sub}}
                    if sub else {"type": "string"})
            alts.append({"type": "array", "items": item})
    out = alts[0] if len(alts) == 1 else {"anyOf": alts}
    desc = key.doc + (f" [{key.unit}]" if key.unit not in ("-", "") else "")
    out = {**out, "description": desc}
    if key.default is not None and (not isinstance(key.default, str) or STRING in key.kinds):
        out["default"] = key.default
    return out


def markdown_keys(prefix: str) -> str:
    """A Markdown table of the keys directly inside `prefix`.

    Parameters
    ----------
    prefix : str
        A section or dotted table path, e.g. "absorber" [-].

    Returns
    -------
    str
        The table: key, what it accepts (kind, range, unit), default, sweep [-].
    """
    rows = ["| key | accepts | default | sweep |", "|---|---|---|---|"]
    for name in section_keys(prefix):
        k = KEYS[f"{prefix}.{name}"]
        rows.append(f"| `{name}` | {k.allowed()} | {'–' if k.default is None else k.default} | {k.sweep or '–'} |")
    return "\n".join(rows)


def documented_keys() -> Iterable[str]:
    """Every declared dotted path.

    Returns
    -------
    tuple of str
        The dotted paths of `KEYS` [-].
    """
    return tuple(KEYS)


if __name__ == "__main__":  # pragma: no cover
    import json
    import sys
    json.dump(json_schema(), sys.stdout, indent=2)
    sys.stdout.write("\n")
