"""Units: one caret spelling, read right by pint (default registry) and cf-units (UDUNITS-2).

Sources: the SI Brochure (BIPM, 9th ed. 2019) for the definitions of the units (W = kg m^2 s^-3,
S = A^2 s^3 kg^-1 m^-2, eV = 1.602176634e-19 J exactly, Hz = s^-1); UDUNITS-2 grammar (Unidata,
from memory): integer exponents only, so a half power cannot be written; pint's documentation
(from memory): "^" is read as "**", a space as multiplication.  Each expected value below is the
unit written out in SI base units by hand.
"""
import math
import re

import pytest

from optogen import schema
from optogen.scenario import HALF_POWER_UNITS, SQUARED_IN_FILES, UNIT_SUFFIXES, squared_name, unit_of

pint = pytest.importorskip("pint")
cf_units = pytest.importorskip("cf_units")

UREG = pint.UnitRegistry()          # the default registry, as a notebook user has it

E_CHARGE = 1.602176634e-19          # C, exact (SI Brochure 2019)

#: unit -> (factor to SI base units, {base unit: exponent}), worked by hand from the SI definitions
SI = {
    "cm^-3 s^-1": (1e6, {"m": -3, "s": -1}),
    "cm^-2 s^-1": (1e4, {"m": -2, "s": -1}),
    "W m^-2 nm^-1": (1e9, {"kg": 1, "m": -1, "s": -3}),          # W = kg m^2 s^-3; m^-2 nm^-1 = 1e9 m^-3
    "mA cm^-2": (10.0, {"A": 1, "m": -2}),
    "fA cm^-2": (1e-11, {"A": 1, "m": -2}),
    "W m^-2": (1.0, {"kg": 1, "s": -3}),
    "kW m^-2": (1e3, {"kg": 1, "s": -3}),
    "cm s^-1": (1e-2, {"m": 1, "s": -1}),
    "ohm cm": (1e-2, {"kg": 1, "m": 3, "s": -3, "A": -2}),       # ohm = kg m^2 s^-3 A^-2
    "ohm cm^2": (1e-4, {"kg": 1, "m": 4, "s": -3, "A": -2}),
    "cm^2 V^-1 s^-1": (1e-4, {"kg": -1, "s": 2, "A": 1}),       # V = kg m^2 s^-3 A^-1
    "S cm^-1": (1e2, {"kg": -1, "m": -3, "s": 3, "A": 2}),
    "mW cm^-2": (10.0, {"kg": 1, "s": -3}),
    "A W^-1": (1.0, {"A": 1, "kg": -1, "m": -2, "s": 3}),
    "cm^-3": (1e6, {"m": -3}),
    "cm^2": (1e-4, {"m": 2}),
    "um": (1e-6, {"m": 1}), "nm": (1e-9, {"m": 1}), "mm": (1e-3, {"m": 1}), "cm": (1e-2, {"m": 1}),
    "eV": (E_CHARGE, {"kg": 1, "m": 2, "s": -2}),
    "mV": (1e-3, {"kg": 1, "m": 2, "s": -3, "A": -1}),
    "V": (1.0, {"kg": 1, "m": 2, "s": -3, "A": -1}),
    "K": (1.0, {"K": 1}), "s": (1.0, {"s": 1}), "A": (1.0, {"A": 1}),
    "W": (1.0, {"kg": 1, "m": 2, "s": -3}),
    "S": (1.0, {"kg": -1, "m": -2, "s": 3, "A": 2}),
    "degree": (math.pi / 180.0, {}),
    "Hz": (1.0, {"s": -1}),
    "A Hz^(-1/2)": (1.0, {"A": 1, "s": 0.5}),                     # Hz^(-1/2) = s^(1/2)
    "cm Hz^(1/2) W^-1": (1e-2, {"m": -1, "kg": -1, "s": 2.5}),    # cm s^-1/2 kg^-1 m^-2 s^3
    "A^2 Hz^-1": (1.0, {"A": 2, "s": 1}),                         # the squares written to NetCDF
    "cm^2 Hz W^-2": (1e-4, {"m": -2, "kg": -2, "s": 5}),          # cm^2 s^-1 kg^-2 m^-4 s^6
}

_PINT_BASE = {"meter": "m", "kilogram": "kg", "second": "s", "ampere": "A", "kelvin": "K", "radian": None}


def _pint_si(unit: str):
    q = UREG.Quantity(1.0, unit).to_base_units()
    dims = {}
    for name, exp in q.unit_items():
        short = _PINT_BASE[name]
        if short:
            dims[short] = exp
    return q.magnitude, dims


def test_every_suffix_unit_has_a_hand_worked_si_form():
    assert set(UNIT_SUFFIXES.values()) <= set(SI)


@pytest.mark.parametrize("unit", sorted(SI))
def test_pint_default_registry_reads_each_unit_right(unit):
    factor, dims = SI[unit]
    got_factor, got_dims = _pint_si(unit)
    assert got_factor == pytest.approx(factor, rel=1e-12)
    assert got_dims == pytest.approx(dims)


@pytest.mark.parametrize("unit", sorted(u for u in SI if u not in HALF_POWER_UNITS))
def test_cf_units_reads_each_integer_power_unit_right(unit):
    factor, dims = SI[unit]
    u = cf_units.Unit(unit)
    base = cf_units.Unit(" ".join(f"{k}^{v}" for k, v in dims.items() if v) or "1")
    assert u.is_convertible(base)
    assert u.convert(1.0, base) == pytest.approx(factor, rel=1e-12)


@pytest.mark.parametrize("unit", HALF_POWER_UNITS)
def test_half_powers_are_refused_by_udunits_never_misread(unit):
    # UDUNITS-2 has integer exponents only: the unit must raise, not parse to something else
    with pytest.raises(ValueError):
        cf_units.Unit(unit)
    with pytest.raises(ValueError):                 # and UDUNITS cannot take the square root of Hz
        cf_units.Unit("Hz").root(2)


def test_old_spellings_were_misread_and_are_gone():
    # the spelling "cm Hz1/2 W-1" is read by UDUNITS as cm Hz / (2 W) (integer exponent 1, then /2)
    old = cf_units.Unit("cm Hz1/2 W-1")
    assert old.convert(1.0, cf_units.Unit("m-1 kg-1 s2")) == pytest.approx(0.005, rel=1e-12)  # 1e-2 / 2, by hand
    for unit in UNIT_SUFFIXES.values():
        # one spelling: a caret before every exponent, never a bare "cm-3" or "cm2"
        assert not re.search(r"[A-Za-z]-?\d", unit.replace("^", " ")), unit
        assert not re.search(r"[A-Za-z]-?\d", re.sub(r"\^\(?-?\d+(/\d+)?\)?", "", unit)), unit


def test_schema_units_parse_in_pint():
    words = {"", "-", "m0", "points", "suns"}    # not units: no value, dimensionless, electron masses, counts, suns
    for key in schema.KEYS.values():
        if key.unit in words:
            continue
        UREG.Quantity(1.0, key.unit)             # raises on an unknown or malformed unit
        assert not re.search(r"[A-Za-z]-\d", key.unit), (key.path, key.unit)


def test_unit_of_names():
    assert unit_of("light.suns") == "kW m^-2"                 # 1 sun = 1000 W m^-2 (IEC 60904-3, common practice)
    assert unit_of("light_suns") == "kW m^-2"
    assert unit_of("detectivity_cm_Hz05_W") == "cm Hz^(1/2) W^-1"
    assert unit_of("noise_total_A_Hz05") == "A Hz^(-1/2)"
    assert unit_of("implied_ff") == "1"


@pytest.mark.parametrize("suffix", sorted(SQUARED_IN_FILES))
def test_each_half_power_is_written_as_a_square_udunits_reads(suffix):
    half, square = UNIT_SUFFIXES[suffix], UNIT_SUFFIXES[SQUARED_IN_FILES[suffix]]
    assert half in HALF_POWER_UNITS and square not in HALF_POWER_UNITS
    # the square's SI form is the half-power unit's, squared (factor squared, exponents doubled)
    f_half, d_half = SI[half]
    f_sq, d_sq = SI[square]
    assert f_sq == pytest.approx(f_half ** 2, rel=1e-12)
    assert d_sq == pytest.approx({k: 2 * v for k, v in d_half.items()})
    assert (UREG.Quantity(1.0, half) ** 2).to(square).magnitude == pytest.approx(1.0, rel=1e-12)
    cf_units.Unit(square)                             # UDUNITS-2 parses it


def test_squared_names():
    # the naming rule of DEVELOPERS.md (Nomenclature): the unit suffix of the square after "_squared_"
    assert squared_name("noise_total_A_Hz05") == "noise_total_squared_A2_Hz"
    assert squared_name("detectivity_blip_cm_Hz05_W") == "detectivity_blip_squared_cm2_Hz_W2"
    assert unit_of(squared_name("detectivity_cm_Hz05_W")) == "cm^2 Hz W^-2"
    assert squared_name("responsivity_A_W") is None and squared_name("detectivity_over_blip") is None
