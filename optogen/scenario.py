"""Scenario files (TOML): reading, validating, overriding and expanding sweeps.

This layer only translates a file into plain values; the physics lives in the
core modules.  Keys carry their unit (``thickness_um``, ``temperature_K``).
"""
from __future__ import annotations

import copy
import dataclasses
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

import numpy as np

from . import schema
from .errors import InputError, did_you_mean, read_text_file

# Section -> key names, from the schema (optogen.schema declares every key once).
SECTIONS: dict[str, set[str] | None] = {name: set(schema.section_keys(name)) for name in schema.SECTIONS
                                        if name not in ("title", "description", "sweep")}
SECTIONS["sweep"] = None
TOP_LEVEL = {"title", "description", *SECTIONS}

#: sweep grids larger than this need an explicit yes (``--yes``) or chunked ``--out``
MAX_POINTS_WITHOUT_CONFIRMATION = 2_000_000


@dataclass(frozen=True)
class SweepAxis:
    """One swept key and its values.

    Parameters
    ----------
    key : str
        The dotted scenario key, e.g. "light.suns" [-].
    values : ndarray
        Its values, 1-D [unit of the key].
    """

    key: str
    values: np.ndarray

    @property
    def unit(self) -> str:
        """The unit of the key, from its suffix (`unit_of`) [-]."""
        return unit_of(self.key)


@dataclass(frozen=True)
class Scenario:
    """A validated scenario: the parsed table, its source text and its folder.

    ``data`` never contains the ``[sweep]`` section; sweeps live in ``sweep``.

    Parameters
    ----------
    data : mapping
        The scenario's nested tables, without [sweep] [-].
    text : str
        The TOML source text ("" for a table given as a dict) [-].
    base_dir : Path
        The folder that relative file names in the scenario refer to [-].
    sweep : tuple of SweepAxis
        The swept keys, outer product in this order [-].
    path : str
        The file read, or "<text>" [-].
    """

    data: Mapping[str, Any]
    text: str = ""
    base_dir: Path = field(default_factory=Path.cwd)
    sweep: tuple[SweepAxis, ...] = ()
    path: str = "<text>"

    @property
    def title(self) -> str:
        """The scenario's title (the file's stem when it has none) [-]."""
        return str(self.data.get("title", Path(self.path).stem))

    def get(self, dotted: str, default=None):
        """The value at a dotted key.

        Parameters
        ----------
        dotted : str
            A dotted key such as "light.suns"; list indices as numbers
            ("recombination.defects.0.density_cm3") [-].
        default : object, optional
            Returned when the key is absent [-].

        Returns
        -------
        object
            The value [unit of the key], or `default`.
        """
        node: Any = self.data
        for part in dotted.split("."):
            if isinstance(node, list) and part.isdigit() and int(part) < len(node):
                node = node[int(part)]
            elif isinstance(node, Mapping) and part in node:
                node = node[part]
            else:
                return default
        return node

    def section(self, name: str) -> dict:
        """A copy of a section table.

        Parameters
        ----------
        name : str
            The section, e.g. "absorber" [-].

        Returns
        -------
        dict
            A deep copy of the table ({} if absent) [-].
        """
        return copy.deepcopy(dict(self.data.get(name, {}) or {}))

    def with_values(self, overrides: Mapping[str, Any] | None = None, **kw) -> "Scenario":
        """A copy with fields replaced by dotted key.

        ``scenario.with_values({"light.suns": 0.1})`` or, as keywords with "__"
        for the dot, ``scenario.with_values(light__suns=0.1)``.  A fixed value replaces a
        sweep of the same key.

        Parameters
        ----------
        overrides : mapping, optional
            Dotted key -> value [unit of the key].
        **kw
            More overrides, "__" for the dot [unit of the key].

        Returns
        -------
        Scenario
            The validated copy.
        """
        items = dict(overrides or {})
        items.update({k.replace("__", "."): v for k, v in kw.items()})
        data = copy.deepcopy(dict(self.data))
        sweep = list(self.sweep)
        for key, value in items.items():
            if key.startswith("sweep."):
                raise InputError(key, value, "a scenario field; edit [sweep] in the file to change a sweep")
            _set_dotted(data, key, value)
            sweep = [a for a in sweep if a.key != key]   # a fixed value replaces a sweep of that key
        validate(data)
        return dataclasses.replace(self, data=data, sweep=tuple(sweep))

    @property
    def n_points(self) -> int:
        """The number of operating points (product of the sweep sizes; 1 without a sweep) [-]."""
        return int(np.prod([a.values.size for a in self.sweep])) if self.sweep else 1

    def to_toml(self) -> str:
        """The scenario as it runs (after ``--set`` / `with_values`), as TOML text.

        Every field of `data` and the sweep axes as explicit value lists, so that
        ``load_scenario(sc.to_toml(), base_dir=sc.base_dir)`` gives the same scenario.

        Returns
        -------
        str
            TOML text [-].
        """
        data = {k: v for k, v in self.data.items() if k in ("title", "description")}
        data.update({k: v for k, v in self.data.items() if k not in ("title", "description")})
        if self.sweep:
            data["sweep"] = {a.key: a.values.tolist() for a in self.sweep}
        return toml_text(data)

    def __repr__(self) -> str:
        sweep = " x ".join(f"{a.key} ({a.values.size})" for a in self.sweep)
        return (f"Scenario({self.title!r}, sections: {', '.join(k for k in self.data if k in SECTIONS)}; "
                + (f"sweep {sweep} = {self.n_points} points" if sweep else "single point")
                + (f"; from {self.path}" if self.path != "<text>" else "") + ")")

    def _repr_html_(self) -> str:
        import html
        rows = "".join(f"<tr><td><code>{html.escape(k)}</code></td><td>{html.escape(_clip_text(v))}</td></tr>"
                       for k, v in _flat_items(self.data))
        rows += "".join(f"<tr><td><code>sweep: {html.escape(a.key)}</code></td><td>{a.values.size} values, "
                        f"{html.escape(_clip_text(a.values.tolist()))}</td></tr>" for a in self.sweep)
        return (f"<div><b>optogen Scenario</b>: {html.escape(self.title)} ({self.n_points} point"
                f"{'s' if self.n_points != 1 else ''})<table>{rows}</table></div>")


def unit_of(key: str) -> str:
    """The unit encoded in a key's suffix.

    Works on dotted scenario keys and on Dataset names ("light_suns" -> "kW m^-2").

    Parameters
    ----------
    key : str
        A dotted scenario key or a Dataset name [-].

    Returns
    -------
    str
        The unit from `UNIT_SUFFIXES` ("absorber.temperature_K" -> "K", "delta_n_cm3" ->
        "cm^-3"); "1" for a name without a unit suffix (a dimensionless quantity) [-].
    """
    name = key.split(".")[-1]
    for suffix in _SUFFIX_ORDER:
        if name.endswith("_" + suffix) or name == suffix:
            return UNIT_SUFFIXES[suffix]
    return "1"


#: key suffix -> unit, in the one spelling of files, summary, plots and docs: UDUNITS-2 / CF
#: symbols, a space between factors, a caret before every exponent, parentheses around a
#: fractional one ("cm^-3 s^-1", "A Hz^(-1/2)").  Every entry parses to the right dimension in
#: pint's default registry, and all but the two half-power units in cf-units (UDUNITS-2 has no
#: fractional exponents: tests/test_units.py).  "suns" is stored as kW m^-2: 1 sun is 1000 W m^-2
#: of the spectrum's shape (README, Light), so a level in suns is that irradiance in kW m^-2.
#: The longest matching suffix wins.
UNIT_SUFFIXES: dict[str, str] = {
    "cm3_s": "cm^-3 s^-1", "cm2_s": "cm^-2 s^-1", "W_m2_nm": "W m^-2 nm^-1", "mA_cm2": "mA cm^-2",
    "fA_cm2": "fA cm^-2", "W_m2": "W m^-2", "cm_s": "cm s^-1", "ohm_cm": "ohm cm", "cm2_Vs": "cm^2 V^-1 s^-1",
    "S_cm": "S cm^-1", "cm_Hz05_W": "cm Hz^(1/2) W^-1", "mW_cm2": "mW cm^-2", "A_W": "A W^-1",
    "cm3": "cm^-3", "cm2": "cm^2", "um": "um", "nm": "nm", "mm": "mm", "cm": "cm", "eV": "eV", "mV": "mV",
    "K": "K", "V": "V", "s": "s", "W": "W", "A": "A", "S": "S", "deg": "degree", "Hz": "Hz",
    "suns": "kW m^-2", "A_Hz05": "A Hz^(-1/2)", "ohm_cm2": "ohm cm^2",
    "A2_Hz": "A^2 Hz^-1", "cm2_Hz_W2": "cm^2 Hz W^-2",
}
_SUFFIX_ORDER = sorted(UNIT_SUFFIXES, key=len, reverse=True)

#: units that UDUNITS-2 (cf-units, the CF checkers) cannot express: it has no fractional
#: exponents (cf_units.Unit("Hz").root(2) is refused as meaningless); pint reads them right
HALF_POWER_UNITS = ("A Hz^(-1/2)", "cm Hz^(1/2) W^-1")

#: the quantities in a half-power unit are written to NetCDF as their squares, whose units
#: UDUNITS-2 expresses: suffix -> suffix of the square ("noise_total_A_Hz05" is written as
#: "noise_total_squared_A2_Hz" [A^2 Hz^-1], the one-sided noise power spectral density;
#: "detectivity_cm_Hz05_W" as "detectivity_squared_cm2_Hz_W2" [cm^2 Hz W^-2])
SQUARED_IN_FILES: dict[str, str] = {"A_Hz05": "A2_Hz", "cm_Hz05_W": "cm2_Hz_W2"}


def squared_name(name: str) -> str | None:
    """The NetCDF name of the square of a half-power quantity, or None for any other name.

    Parameters
    ----------
    name : str
        A Dataset variable name, e.g. "detectivity_cm_Hz05_W" [-].

    Returns
    -------
    str or None
        "detectivity_squared_cm2_Hz_W2" for that example (unit from `UNIT_SUFFIXES`); None
        when the name's unit is not a half power [-].
    """
    for suffix, square in SQUARED_IN_FILES.items():
        if name.endswith("_" + suffix):
            return f"{name[: -len(suffix)]}squared_{square}"
    return None


def dim_name(key: str) -> str:
    """The Dataset / NetCDF name of a swept key: dots become underscores.

    CF names hold letters, digits and underscores only (CF 1.10 section 2.3); the dotted key is
    kept in the coordinate's ``scenario_key`` attribute.

    Parameters
    ----------
    key : str
        A dotted scenario key, e.g. "light.suns" [-].

    Returns
    -------
    str
        The dimension name, e.g. "light_suns" [-].

    References
    ----------
    NetCDF Climate and Forecast (CF) Metadata Conventions, version 1.10, section 2.3.
    """
    return str(key).replace(".", "_")


#: the human name of every quantity (without its unit), shared by plot labels and the
#: ``long_name`` attributes of the files; keys are Dataset variable names and dotted scenario keys
LONG_NAMES: dict[str, str] = {
    # swept scenario keys
    "light.suns": "incident irradiance in suns",
    "light.irradiance_W_m2": "incident irradiance",
    "light.photon_flux_cm2_s": "incident photon flux",
    "light.power_W": "light power",
    "light.wavelength_nm": "laser wavelength",
    "absorber.temperature_K": "temperature",
    "absorber.thickness_um": "absorber thickness",
    "absorber.donors_cm3": "donor density",
    "absorber.acceptors_cm3": "acceptor density",
    "absorber.resistivity_ohm_cm": "resistivity",
    "background.temperature_K": "background temperature",
    "solver.depth_resolved": "depth-resolved run",
    # equilibrium
    "n0_cm3": "dark electron density n0", "p0_cm3": "dark hole density p0",
    "ni_cm3": "intrinsic density n_i", "ni_eff_cm3": "effective intrinsic density n_i,eff",
    "fermi_level_eV": "Fermi level above Ev", "bandgap_eV": "band gap Eg(T)",
    "ionised_donors_cm3": "ionised donor density", "ionised_acceptors_cm3": "ionised acceptor density",
    # light and generation
    "irradiance_W_m2": "incident irradiance", "photon_flux_cm2_s": "incident photon flux",
    "generation_average_cm3_s": "average generation rate", "photocurrent_mA_cm2": "photogenerated current density",
    "absorbed_fraction": "absorbed fraction of incident photons",
    "generation_background_average_cm3_s": "average generation rate of the background",
    # steady state
    "delta_n_cm3": "excess carrier density Δn", "delta_p_cm3": "excess hole density Δp",
    "n_cm3": "electron density n", "p_cm3": "hole density p", "np_over_ni2": "n·p / n_i,eff^2",
    "log10_np_over_ni2": "log10 of n·p / n_i,eff^2", "splitting_eV": "quasi-Fermi level splitting",
    "implied_voc_V": "implied Voc", "implied_ff": "implied fill factor", "tau_eff_s": "effective lifetime",
    "tau_srh_s": "SRH lifetime", "tau_radiative_s": "radiative lifetime", "tau_auger_s": "Auger lifetime",
    "tau_surface_s": "surface lifetime", "electron_qfl_eV": "electron quasi-Fermi level above Ev",
    "hole_qfl_eV": "hole quasi-Fermi level above Ev", "injection_ratio": "injection ratio Δn / max(n0, p0)",
    "limiting_mechanism": "limiting recombination mechanism", "degenerate": "degenerate statistics at the point",
    "converged": "steady state converged", "photoconductance_S": "sheet photoconductance",
    # implied J-V
    "jv_voc_V": "implied J-V open-circuit voltage", "jv_vmp_V": "implied J-V maximum-power voltage",
    "jv_jmp_mA_cm2": "implied J-V maximum-power current density", "jv_ff": "implied J-V fill factor",
    "jv_pmax_mW_cm2": "implied J-V maximum power density", "jv_efficiency": "implied efficiency",
    # detector
    "signal_current_A": "signal current", "background_current_A": "background current",
    "dark_current_A": "dark current", "photocurrent_A": "photocurrent",
    "noise_signal_A_Hz05": "signal photon noise current", "noise_background_A_Hz05": "background photon noise current",
    "noise_thermal_A_Hz05": "thermal noise current", "noise_johnson_A_Hz05": "Johnson noise current",
    "noise_total_A_Hz05": "total noise current", "responsivity_A_W": "responsivity",
    "detectivity_cm_Hz05_W": "specific detectivity D*", "detectivity_blip_cm_Hz05_W": "background-limited D*_BLIP",
    "detectivity_over_blip": "D* / D*_BLIP", "noise_equivalent_power_W": "noise-equivalent power",
    "background_limited": "background-limited", "conductivity_contrast": "conductivity contrast Δσ/σ0",
    "minority_ratio": "illuminated / dark minority density", "photoconductive_gain": "photoconductive gain",
    "thermal_generation_cm3_s": "thermal generation rate", "optical_generation_cm3_s": "optical generation rate",
    "background_generation_cm3_s": "background generation rate",
    "background_absorbed_flux_cm2_s": "absorbed background photon flux",
    "sigma_dark_S_cm": "dark conductivity", "sigma_light_S_cm": "illuminated conductivity",
    "transit_time_s": "transit time", "bulk_lifetime_s": "bulk lifetime", "generation_lifetime_s": "generation lifetime",
    "quantum_efficiency": "quantum efficiency", "mode": "detector mode",
    "high_field_caution": "high-field caution", "tunnelling_may_dominate": "tunnelling may dominate",
    "built_in_potential_V": "built-in potential", "depletion_width_um": "depletion width",
    "forward_bias_limit_V": "forward-bias limit", "r0a_ohm_cm2": "zero-bias resistance-area product R0A",
    "dark_current_density_mA_cm2": "dark current density at the bias",
    "dark_current_density_thick_base_mA_cm2": "dark current density (thick base)",
    "diffusion_current_density_mA_cm2": "diffusion current density",
    "depletion_current_density_mA_cm2": "depletion-region current density",
    "j0_thin_base_mA_cm2": "diffusion J0 (thin base)", "j0_thick_base_mA_cm2": "diffusion J0 (thick base)",
    "j0_depletion_mA_cm2": "depletion-region saturation current density",
    "tunnelling_estimate_mA_cm2": "tunnelling current density estimate",
    "background_limit_temperature_K": "background-limit temperature", "background_limit_note": "background-limit note",
    # depth profile
    "plane": "plane of the reported levels", "front_delta_n_cm3": "Δn at the front",
    "rear_delta_n_cm3": "Δn at the rear", "average_delta_n_cm3": "depth-average Δn",
    "uniformity": "min/max of Δn(x)", "uniform_implied_voc_V": "implied Voc of the uniform approximation",
    "uniform_error_implied_voc_mV": "uniform-approximation error of implied Voc",
    "uniform_error_average_delta_n": "relative uniform-approximation error of average Δn",
    "nodes": "depth mesh nodes", "profile_converged": "depth profile converged",
    # curves
    "depth_cm": "depth from the front", "depth_um": "depth from the front", "generation_cm3_s": "generation rate",
    "voltage_V": "implied voltage", "current_mA_cm2": "current density", "wavelength_nm": "wavelength",
}


def long_name(name: str) -> str:
    """The human name of a Dataset variable, coordinate or dotted key, without its unit.

    Parameters
    ----------
    name : str
        A Dataset name or a dotted scenario key [-].

    Returns
    -------
    str
        From `LONG_NAMES` (a dotted key is also found by its underscore name); otherwise the
        name with its unit suffix dropped and underscores as spaces ("absorber.donors_cm3" ->
        "absorber donors") [-].
    """
    name = str(name)
    if name in LONG_NAMES:
        return LONG_NAMES[name]
    dotted = {dim_name(k): k for k in LONG_NAMES if "." in k}
    if name in dotted:
        return LONG_NAMES[dotted[name]]
    stem = name
    for suffix in _SUFFIX_ORDER:
        if name.endswith("_" + suffix) and len(name) > len(suffix) + 1:
            stem = name[: -len(suffix) - 1]
            break
    return " ".join(p.replace("_", " ") for p in stem.split("."))


def label(name: str, units: str | None = None) -> str:
    """A label "long name (unit)" for axes and tables.

    Parameters
    ----------
    name : str
        A Dataset name or a dotted scenario key [-].
    units : str, optional
        The unit (default: from the name's suffix, `unit_of`) [-].

    Returns
    -------
    str
        "long name (unit)", or the long name alone for a unit "1" or "" [-].
    """
    units = unit_of(name) if units is None else str(units)
    return f"{long_name(name)} ({units})" if units not in ("1", "") else long_name(name)


def _clip_text(v, width: int = 60) -> str:
    text = repr(v) if not isinstance(v, str) else v
    return text if len(text) <= width else text[: width - 3] + "..."


def _flat_items(data, prefix=""):
    for k, v in data.items():
        if isinstance(v, Mapping):
            yield from _flat_items(v, f"{prefix}{k}.")
        else:
            yield prefix + k, v


def _toml_key(k: str) -> str:
    return k if k and all(c.isalnum() or c in "_-" for c in k) else '"' + _toml_str_body(k) + '"'


def _toml_str_body(s: str) -> str:
    out = []
    for ch in s:
        if ch in '"\\':
            out.append("\\" + ch)
        elif ch == "\n":
            out.append("\\n")
        elif ch == "\t":
            out.append("\\t")
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04x}")
        else:
            out.append(ch)
    return "".join(out)


def _toml_value(v) -> str:
    if isinstance(v, (bool, np.bool_)):
        return "true" if v else "false"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (float, np.floating)):
        v = float(v)
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        text = repr(v)
        return text if any(c in text for c in ".en") else text + ".0"
    if isinstance(v, str):
        return '"' + _toml_str_body(v) + '"'
    if isinstance(v, (list, tuple, np.ndarray)):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, Mapping):
        return "{ " + ", ".join(f"{_toml_key(str(k))} = {_toml_value(x)}" for k, x in v.items()) + " }"
    raise TypeError(f"no TOML form for {type(v).__name__}")


def toml_text(data: Mapping[str, Any]) -> str:
    """TOML text of a table as tomllib returns it.

    Tables, arrays of tables, strings, numbers, booleans, lists;
    ``tomllib.loads(toml_text(d)) == d`` for such a table.

    Parameters
    ----------
    data : mapping
        The nested tables [-].

    Returns
    -------
    str
        TOML text [-].
    """
    lines: list[str] = []

    def is_table_list(v):
        return isinstance(v, list) and v and all(isinstance(x, Mapping) for x in v)

    def emit(table: Mapping, path: list[str]):
        scalars = [(k, v) for k, v in table.items() if not isinstance(v, Mapping) and not is_table_list(v)]
        for k, v in scalars:
            lines.append(f"{_toml_key(str(k))} = {_toml_value(v)}")
        for k, v in table.items():
            sub = path + [_toml_key(str(k))]
            if isinstance(v, Mapping):
                lines.append("")
                lines.append("[" + ".".join(sub) + "]")
                emit(v, sub)
            elif is_table_list(v):
                for item in v:
                    lines.append("")
                    lines.append("[[" + ".".join(sub) + "]]")
                    emit(item, sub)

    emit(data, [])
    return "\n".join(lines).lstrip("\n") + "\n"


def _set_dotted(data: dict, key: str, value) -> None:
    parts = key.split(".")
    if parts[0] not in TOP_LEVEL:
        raise InputError(key, value, "a key starting with one of " + ", ".join(sorted(SECTIONS)),
                         did_you_mean(parts[0], TOP_LEVEL))
    node = data
    for part in parts[:-1]:         # a list of tables is indexed by number: recombination.defects.0.density_cm3
        if isinstance(node, list):
            if not (part.isdigit() and int(part) < len(node)):
                raise InputError(key, value, f"an index 0..{len(node) - 1} into that list of tables")
            node = node[int(part)]
        else:
            node = node.setdefault(part, {})
        if not isinstance(node, (dict, list)):
            raise InputError(key, value, f"a key inside a table, but {part!r} is not a table")
    if isinstance(node, list):
        raise InputError(key, value, "a key inside one table of the list, e.g. recombination.defects.0.density_cm3")
    node[parts[-1]] = value


def parse_overrides(items, example: str = "light.suns=0.1") -> dict:
    """``--set KEY=VALUE`` items as a dict of dotted keys to TOML values.

    Parameters
    ----------
    items : iterable of str
        The ``KEY=VALUE`` strings [-].
    example : str
        An example shown in the error [-].

    Returns
    -------
    dict
        Dotted key -> value (parsed by `parse_value`).

    Raises
    ------
    InputError
        For an item without "=".
    """
    out = {}
    for item in items:
        if "=" not in item:
            raise InputError("--set", item, f"KEY=VALUE, e.g. {example}")
        k, v = item.split("=", 1)
        out[k.strip()] = parse_value(v.strip())
    return out


def parse_value(text: str):
    """A --set value: TOML syntax if it parses (numbers, booleans, lists), else a string.

    Parameters
    ----------
    text : str
        The text after "=" in ``--set key=value`` [-].

    Returns
    -------
    object
        The parsed TOML value, or `text` itself [-].
    """
    try:
        return tomllib.loads(f"v = {text}")["v"]
    except tomllib.TOMLDecodeError:
        return text


def validate(data: Mapping[str, Any]) -> None:
    """Check a scenario table (without [sweep]) against the schema.

    Section and key names, kinds, ranges, choices and the rules between keys
    (`optogen.schema.validate`).

    Parameters
    ----------
    data : mapping
        A scenario's nested tables [-].

    Raises
    ------
    InputError
        Naming the first bad field.
    """
    schema.validate(data)


def _axis_spec(field_name: str, spec):
    """(size, make) for one [sweep] entry: the number of values and a function building them."""
    if isinstance(spec, list):
        return len(spec), lambda: list(spec)
    if isinstance(spec, Mapping):
        extra = set(spec) - {"log", "linear", "points"}
        kind = [k for k in ("log", "linear") if k in spec]
        if extra or len(kind) != 1 or "points" not in spec:
            raise InputError(field_name, dict(spec),
                             "a list, { log = [a, b], points = N } or { linear = [a, b], points = N }")
        lo_hi, n = spec[kind[0]], spec["points"]
        if not (isinstance(lo_hi, list) and len(lo_hi) == 2 and all(is_number(v) for v in lo_hi)):
            raise InputError(field_name, dict(spec), "[a, b] of two finite numbers")
        if isinstance(n, bool) or not isinstance(n, int) or n < 1:
            raise InputError(field_name, dict(spec), "an integer points >= 1")
        if n > schema.MAX_POINTS:
            raise InputError(field_name, dict(spec), f"points <= {schema.MAX_POINTS}")
        a, b = float(lo_hi[0]), float(lo_hi[1])
        if kind[0] == "log":
            if min(a, b) <= 0:
                raise InputError(field_name, dict(spec), "log ends > 0")
            return n, lambda: np.geomspace(a, b, n).tolist() if n > 1 else [a]
        if not math.isfinite(b - a):
            raise InputError(field_name, dict(spec), "linear ends whose difference is a finite number")
        return n, lambda: np.linspace(a, b, n).tolist() if n > 1 else [a]
    return 1, lambda: [spec]


def sweep_axes(table: Mapping[str, Any], data: Mapping[str, Any]) -> tuple[SweepAxis, ...]:
    """Expand a [sweep] table into axes (outer product of their values).

    Every value is checked against the schema; the grid size is checked against
    `schema.MAX_POINTS` and the number of slow-key groups against
    `schema.MAX_SLOW_GROUPS` before any array is built.

    Parameters
    ----------
    table : mapping
        The [sweep] table: dotted key -> a list of values, ``{log = [a, b], points = N}`` or
        ``{linear = [a, b], points = N}`` [unit of the key].
    data : mapping
        The rest of the scenario, to validate the swept values against the rules between keys [-].

    Returns
    -------
    tuple of SweepAxis
        One axis per swept key, in the table's order.
    """
    if not isinstance(table, Mapping):
        raise InputError("sweep", table, "a table of dotted keys")
    specs = []
    total, slow_groups = 1, 1
    for key, spec in table.items():
        field_name = f"sweep.{key}"
        k = schema.key_for(key)
        if k is None or "." not in key:
            raise InputError(field_name, spec, "a dotted scenario key such as \"light.suns\"",
                             did_you_mean(key, _numeric_keys(data)) or schema._hint(key))
        if key.split(".")[0] in ("light", "background", "detector") and key.split(".")[0] not in data:
            raise InputError(field_name, spec, f"a key of a section the scenario has; add [{key.split('.')[0]}]")
        size, make = _axis_spec(field_name, spec)
        if size == 0:
            raise InputError(field_name, spec, "a non-empty list of values")
        total *= size
        if k.sweep != schema.FAST:
            slow_groups *= size
        specs.append((key, make))
    if total > schema.MAX_POINTS:
        raise InputError("sweep", f"{total} points", f"at most {schema.MAX_POINTS} grid points",
                         "split the sweep into several runs")
    if slow_groups > schema.MAX_SLOW_GROUPS:
        raise InputError("sweep", f"{slow_groups} combinations of slow keys",
                         f"at most {schema.MAX_SLOW_GROUPS} (each rebuilds the material and spectrum)",
                         "sweep fewer values of the slow keys, or split the run")
    axes = []
    for key, make in specs:
        values = make()
        axes.append(SweepAxis(key, schema.check_sweep_values(key, values)))
    return tuple(axes)


def _numeric_keys(data, prefix=""):
    out = []
    for k, v in data.items():
        if isinstance(v, Mapping):
            out += _numeric_keys(v, f"{prefix}{k}.")
        elif isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append(prefix + k)
    return out


def load_scenario(source, overrides: Mapping[str, Any] | None = None, *, base_dir=None) -> Scenario:
    """Read a scenario from a path, from TOML text or from an already parsed table.

    Parameters
    ----------
    source : str, Path or mapping
        A path to a .toml file, the TOML text itself, or a dict as tomllib returns it [-].
    overrides : mapping, optional
        Dotted-key values applied on top (as ``--set``) [unit of the key].
    base_dir : str or Path, optional
        Folder that relative paths in a text or dict scenario refer to (default: the
        current folder; a file's own folder for a path) [-].

    Returns
    -------
    Scenario
        The validated scenario.
    """
    if isinstance(source, Mapping):        # an already parsed table (as tomllib gives it)
        data = copy.deepcopy(dict(source))
        return _from_data(data, "", base_dir if base_dir is not None else Path.cwd(), "<text>", overrides)
    data, text, path, base = read_toml(source)
    return _from_data(data, text, Path(base_dir) if base_dir is not None and path == "<text>" else base,
                      path, overrides)


def read_toml(source) -> tuple[dict, str, str, Path]:
    """Parse a scenario's TOML from a path or from the text itself, with the size and encoding checks.

    Parameters
    ----------
    source : str or Path
        A path to a .toml file, or the TOML text [-].

    Returns
    -------
    data : dict
        The parsed tables.
    text : str
        The TOML text.
    path : str
        The file, or "<text>".
    base : Path
        The folder relative paths refer to: the file's own folder, or the current folder.

    Raises
    ------
    InputError
        For a missing or unreadable file, more than `schema.MAX_TEXT_BYTES`, text that is not
        UTF-8, or invalid TOML.
    """
    if not isinstance(source, (str, Path)):
        raise InputError("scenario", type(source).__name__,
                         "a path to a .toml file, the TOML text or a table (dict)")
    path, base = "<text>", Path.cwd()
    if isinstance(source, Path) or ("\n" not in source and source.strip().endswith(".toml")):
        p = Path(source)
        if not p.is_file():
            raise InputError("scenario", str(source), "an existing .toml file")
        text = read_text_file(p, "scenario", "TOML file", max_bytes=schema.MAX_TEXT_BYTES)
        path, base = str(p), p.resolve().parent
    else:
        text = str(source)
        if len(text.encode("utf-8", "surrogatepass")) > schema.MAX_TEXT_BYTES:
            raise InputError("scenario", "<text>", f"at most {schema.MAX_TEXT_BYTES} bytes of TOML")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError("scenario", path, f"valid TOML ({exc})") from None
    return data, text, path, base


def _from_data(data: dict, text: str, base: Path, path: str, overrides) -> Scenario:
    sweep_table = data.pop("sweep", {})
    sweep_table = {} if sweep_table is None else sweep_table
    validate(data)
    axes = sweep_axes(sweep_table, data)
    _probe_axes(data, axes)
    sc = Scenario(data=data, text=text, base_dir=Path(base), sweep=axes, path=path)
    if overrides:
        sc = sc.with_values(overrides)
    return sc


def _probe_axes(data, axes) -> None:
    """Validate the scenario with each swept key set to its extreme (numbers) or each (other)
    value, so that rules between keys (e.g. the doping sum) hold across the sweep."""
    for ax in axes:
        vals = ax.values
        if vals.dtype.kind == "f":
            picks = {float(vals.min()), float(vals.max())}
        else:
            picks = {v.item() if hasattr(v, "item") else v for v in vals[:64]}
        for v in picks:
            probe = copy.deepcopy(data)
            _set_dotted(probe, ax.key, v)
            validate(probe)


def is_number(x) -> bool:
    """Whether a value is a finite number.

    Parameters
    ----------
    x : object
        Any value [-].

    Returns
    -------
    bool
        True for a finite int or float (not a bool; an int too large for a float is not a
        number) [-].
    """
    if isinstance(x, (bool, np.bool_)) or not isinstance(x, (int, float, np.integer, np.floating)):
        return False
    try:
        return math.isfinite(float(x))
    except OverflowError:
        return False
