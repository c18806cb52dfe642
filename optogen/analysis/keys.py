"""Scenario keys of the analysis of measured lifetime data: ``[measurement]`` and ``[uncertainty]``.

Declared here as `optogen.schema.Key` objects (built with the schema's own `_k` helper) so
that the lead can register them in `optogen.schema` (append `KEYS` to ``schema._KEYS`` and the
two `SECTIONS` entries to ``schema.SECTIONS``).  Until then `optogen.analysis.command` checks
these two sections itself with `optogen.schema.check_value` against this list, and hands the
rest of the scenario to `optogen.scenario.load_scenario` unchanged.
"""
from __future__ import annotations

from optogen.schema import BOOL, INTEGER, NUMBER, STRING, Key, Section, _k

_C = "analysis.command"

#: the two new sections (for ``schema.SECTIONS``)
SECTIONS = (
    Section("measurement", "analysis.command.analyse", "measured lifetime or photoconductance data to analyse"),
    Section("uncertainty", "analysis.uncertainty", "input uncertainties of the analysis (relative, 1 sigma)"),
)

#: every key of ``[measurement]`` and ``[uncertainty]``
KEYS: list[Key] = [
    _k("measurement.file", STRING, "", None, consumer="analysis.data", sweep=None,
       doc="CSV of the measurement, relative to the scenario (lifetime curve or photoconductance record)"),
    _k("measurement.kind", STRING, "", "lifetime", choices=("lifetime", "photoconductance"), consumer=_C,
       doc="lifetime: delta_n_cm3,tau_s columns; photoconductance: time_s,photoconductance_S,suns columns"),
    _k("measurement.dissociated_file", STRING, "", None, consumer="analysis.iron", sweep=None,
       doc="lifetime CSV after FeB pair dissociation (file is then the paired state): iron density"),
    _k("measurement.optical_factor", NUMBER, "-", 1.0, 0.0, 2.0, low_open=True, consumer=_C,
       doc="factor on the optics model's 1-sun generation (sample absorption relative to the model)"),
    _k("measurement.one_sun_mA_cm2", NUMBER, "mA cm^-2", None, 0.0, 100.0, low_open=True, consumer=_C,
       doc="photogeneration current at 1 sun (default: AM1.5G through the [optics] model)"),
    _k("measurement.suns", NUMBER, "suns", 1.0, 0.0, 1e4, low_open=True, consumer="analysis.implied",
       doc="a further light level for the implied Voc, in suns"),
    _k("measurement.window_low_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
       doc="Kane-Swanson window, lowest excess density (default 5x the net doping)"),
    _k("measurement.window_high_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
       doc="Kane-Swanson window, highest excess density (default: the highest measured)"),
    _k("measurement.fit_low_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
       doc="global fit, lowest excess density used (default: all)"),
    _k("measurement.fit_high_cm3", NUMBER, "cm^-3", None, 0.0, 1e21, low_open=True, consumer="analysis.j0",
       doc="global fit, highest excess density used (default: all)"),
    _k("measurement.smoothing_points", INTEGER, "points", 0, 0, 10001, consumer="analysis.photoconductance",
       doc="Savitzky-Golay window of the dn/dt smoothing, odd (0: automatic, about 1/25 of the record)"),
    _k("measurement.smoothing_order", INTEGER, "-", 2, 1, 5, consumer="analysis.photoconductance",
       doc="polynomial order of the Savitzky-Golay smoothing"),
    _k("measurement.level_search", BOOL, "", False, consumer="analysis.j0",
       doc="global fit: search the SRH level in both halves of the gap (true) or hold it at mid-gap / the "
           "scenario's defect level (false)"),
    _k("uncertainty.thickness_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
       doc="relative 1-sigma uncertainty of the thickness"),
    _k("uncertainty.doping_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
       doc="relative 1-sigma uncertainty of the dopant density (or resistivity)"),
    _k("uncertainty.optical_factor_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
       doc="relative 1-sigma uncertainty of the optical factor (generation)"),
    _k("uncertainty.mobility_rel", NUMBER, "-", 0.0, 0.0, 0.5, consumer="analysis.uncertainty",
       doc="relative 1-sigma uncertainty of the mobility sum (photoconductance records)"),
    _k("uncertainty.method", STRING, "", "covariance", choices=("covariance", "bootstrap"),
       consumer="analysis.uncertainty", doc="fit uncertainty from the covariance or a residual bootstrap"),
    _k("uncertainty.samples", INTEGER, "-", 200, 20, 5000, consumer="analysis.uncertainty",
       doc="parameter samples for the propagation to implied Voc/FF (and bootstrap resamples)"),
    _k("uncertainty.seed", INTEGER, "-", 0, 0, 2**31 - 1, consumer="analysis.uncertainty",
       doc="seed of the random samples (results are reproducible)"),
]

KEY_BY_PATH: dict[str, Key] = {k.path: k for k in KEYS}
assert len(KEY_BY_PATH) == len(KEYS), "a key is declared twice"


def section_keys(section: str) -> tuple[str, ...]:
    """Key names of one of the two sections ("measurement" or "uncertainty") [-]."""
    return tuple(k.name for k in KEYS if k.section == section)


def default(path: str):
    """The declared default of a key [unit of the key]."""
    return KEY_BY_PATH[path].default
