"""Light sources: standard sun spectra, blackbody, laser, LED, a measured file; scaling.

Every source is a `Spectrum`: spectral irradiance on a grid of wavelengths.  All
totals (irradiance, photon flux) and everything downstream (absorbed photons,
photocurrent) integrate with the trapezoidal rule on the spectrum's own grid, so
nothing is lost to re-gridding.

What "1 sun" means here (common practice, e.g. IEC 60904-3 standard test
conditions): 1 sun = 1000 W m^-2 = 100 mW cm^-2.  ``suns`` is therefore a unit of
irradiance, the same for every spectrum: ``scale(s, suns=x)`` rescales the shape of
``s`` to x * 1000 W m^-2.  The ASTM G173-03 AM1.5G table integrates to 1000.4 W m^-2
(trapezoid over 280-4000 nm: 1000.37 W m^-2); at 1 sun it is rescaled by
1000/1000.37 to exactly 1000 W m^-2.  AM1.5D and AM0 at ``suns = 1`` are also
1000 W m^-2 of their own shape; use ``standard(name)`` unscaled (AM0: about
1348 W m^-2, AM1.5D: about 900 W m^-2) or ``irradiance_W_m2`` for other levels.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ._data import data_dir
from .registry import normalise
from .constants import c_m_s, h_J_s, hc_eV_nm, k_B_J_K
from . import schema as _schema
from .errors import InputError, check_range, content_lines, did_you_mean, read_text_file

SUN_W_m2 = 1000.0            #: irradiance of 1 sun [W m^-2] (common practice)
LASER_LINE_FWHM_nm = 0.01    #: full width of the triangular line that represents a laser [nm]

#: standard spectra: name -> (file in optogen.spectra, description)
STANDARD = {
    "AM1.5G": ("am15g.csv", "ASTM G173-03 global, 37 deg tilt (terrestrial, flat plate)"),
    "AM1.5D": ("am15d.csv", "ASTM G173-03 direct normal + circumsolar (concentrator)"),
    "AM0": ("am0.csv", "ASTM G173-03 extraterrestrial"),
}
_STANDARD_ALIASES = {"am15": "AM1.5G", "am15global": "AM1.5G", "global": "AM1.5G",
                     "am15direct": "AM1.5D", "direct": "AM1.5D",
                     "extraterrestrial": "AM0", "space": "AM0"}
SOURCE_KINDS = ("blackbody", "laser", "led", "file")

_PHOTON_PER_W_nm = 1e-9 / (h_J_s * c_m_s) * 1e-4   # E [W m^-2 nm^-1] * lambda [nm] * this = [cm^-2 s^-1 nm^-1]


# ---------------------------------------------------------------------------
# The Spectrum record
# ---------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Spectrum:
    """Spectral irradiance on a wavelength grid.

    Parameters
    ----------
    wavelength_nm : array_like
        Strictly rising wavelengths, shape (L,) [nm].
    irradiance_W_m2_nm : array_like
        Spectral irradiance, shape (L,) [W m^-2 nm^-1].
    name : str
        A label, e.g. "AM1.5G x 1 sun" [-].
    """

    wavelength_nm: np.ndarray
    irradiance_W_m2_nm: np.ndarray
    name: str = "spectrum"

    def __post_init__(self):
        for attr in ("wavelength_nm", "irradiance_W_m2_nm"):
            arr = np.array(getattr(self, attr), dtype=float)
            arr.setflags(write=False)
            object.__setattr__(self, attr, arr)
        if self.wavelength_nm.ndim != 1 or self.wavelength_nm.shape != self.irradiance_W_m2_nm.shape:
            raise InputError("light.wavelength_nm", self.wavelength_nm,
                             "a 1-D array of the same length as irradiance_W_m2_nm")

    @property
    def photon_flux_cm2_s_nm(self) -> np.ndarray:
        """Spectral photon flux (L,) [cm^-2 s^-1 nm^-1]."""
        return photon_flux_cm2_s_nm(self.wavelength_nm, self.irradiance_W_m2_nm)

    @property
    def irradiance_W_m2(self) -> float:
        """Total irradiance, trapezoid over the grid [W m^-2]."""
        return float(np.trapezoid(self.irradiance_W_m2_nm, self.wavelength_nm))

    @property
    def photon_flux_cm2_s(self) -> float:
        """Total photon flux, trapezoid over the grid [cm^-2 s^-1]."""
        return float(np.trapezoid(self.photon_flux_cm2_s_nm, self.wavelength_nm))

    def scaled(self, **scaling) -> "Spectrum":
        """This spectrum rescaled (see `scale`).

        Parameters
        ----------
        **scaling
            Exactly one scaling, keywords as for `scale` (``suns``, ``irradiance_W_m2``,
            ``power_W`` with a spot, ``photon_flux_cm2_s``) [unit of the keyword].

        Returns
        -------
        Spectrum
            The rescaled spectrum.
        """
        return scale(self, **scaling)

    def __repr__(self):
        return (f"Spectrum({self.name!r}, {self.wavelength_nm.size} points, "
                f"{self.wavelength_nm[0]:g}-{self.wavelength_nm[-1]:g} nm, "
                f"{self.irradiance_W_m2:.6g} W m^-2)")


def photon_flux_cm2_s_nm(wavelength_nm, irradiance_W_m2_nm):
    """Spectral photon flux Phi = E lambda / (h c).

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength [nm].
    irradiance_W_m2_nm : array_like
        Spectral irradiance E [W m^-2 nm^-1].

    Returns
    -------
    ndarray
        Spectral photon flux [cm^-2 s^-1 nm^-1].
    """
    return np.asarray(irradiance_W_m2_nm, float) * np.asarray(wavelength_nm, float) * _PHOTON_PER_W_nm


def irradiance_from_photon_flux(wavelength_nm, photon_flux_cm2_s_nm):
    """Spectral irradiance E = Phi h c / lambda from a spectral photon flux.

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength [nm].
    photon_flux_cm2_s_nm : array_like
        Spectral photon flux Phi [cm^-2 s^-1 nm^-1].

    Returns
    -------
    ndarray
        Spectral irradiance [W m^-2 nm^-1].
    """
    return np.asarray(photon_flux_cm2_s_nm, float) / (np.asarray(wavelength_nm, float) * _PHOTON_PER_W_nm)


def names() -> list[str]:
    """Standard spectra and source kinds accepted by `source_from_table` (`light.source`).

    Returns
    -------
    list of str
        "AM1.5G", "AM1.5D", "AM0", then the source kinds [-].
    """
    return list(STANDARD) + list(SOURCE_KINDS)


# ---------------------------------------------------------------------------
# Standard spectra and measured files
# ---------------------------------------------------------------------------

def _spectra_dir():
    """The bundled spectra (`optogen._data.data_dir`)."""
    return data_dir("spectra")


def standard(name: str) -> Spectrum:
    """A standard spectrum as tabulated (not rescaled): "AM1.5G", "AM1.5D" or "AM0".

    Lookup ignores case and separators ("am1.5g", "AM15G").  Data: ASTM G173-03
    (copies in optogen/spectra, provenance on each file's first line).

    Parameters
    ----------
    name : str
        Standard spectrum name or alias [-].

    Returns
    -------
    Spectrum
        The tabulated spectrum.

    References
    ----------
    ASTM G173-03, Standard Tables for Reference Solar Spectral Irradiances: Direct Normal and
    Hemispherical on 37 deg Tilted Surface (ASTM International, 2003).
    """
    key = _standard_key(name)
    if key is None:
        raise InputError("light.source", name, "one of " + ", ".join(names()),
                         did_you_mean(normalise(name), [normalise(n) for n in names()]))
    wl, values, _ = read_columns(_spectra_dir().joinpath(STANDARD[key][0]),
                                 ("irradiance_W_m2_nm",), field="light.source")
    return Spectrum(wl, values, key)


def _standard_key(name) -> str | None:
    lookup = {normalise(k): k for k in STANDARD}
    lookup.update({normalise(a): k for a, k in _STANDARD_ALIASES.items()})
    return lookup.get(normalise(name))


def read_columns(path, value_columns, field="light.path"):
    """Read a two-column CSV: ``wavelength_nm`` and one of `value_columns`.

    Lines starting with '#' and blank lines are skipped; the first other line is
    the header.  Checks: the header names wavelength_nm and one allowed column;
    every row has two finite numbers; wavelengths rise strictly; values are
    non-negative; at least two rows.  Errors name the file, the line and the problem.

    Parameters
    ----------
    path : str, Path or Traversable
        The CSV file [-].
    value_columns : sequence of str
        Allowed names of the second column [-].
    field : str
        The scenario field named in errors [-].

    Returns
    -------
    wavelength_nm : ndarray
        Wavelengths [nm].
    values : ndarray
        The second column [unit of the column].
    column : str
        The column name, as spelt in `value_columns` [-].
    """
    text = read_text_file(path, field)

    def fail(line_no, problem):
        raise InputError(field, str(path), f"line {line_no}: {problem}")

    header, rows = None, []
    for line_no, line in content_lines(text):
        cells = [c.strip() for c in line.split(",")]
        if header is None:
            header = [c.lower() for c in cells]
            if len(header) != 2 or header[0] != "wavelength_nm" or header[1] not in [v.lower() for v in value_columns]:
                fail(line_no, f"header {line!r} must be 'wavelength_nm,<one of {', '.join(value_columns)}>'")
            column = next(v for v in value_columns if v.lower() == header[1])
            continue
        if len(cells) != 2:
            fail(line_no, f"expected 2 comma-separated numbers, found {len(cells)} fields in {line!r}")
        try:
            wl, val = float(cells[0]), float(cells[1])
        except ValueError:
            fail(line_no, f"not a number in {line!r}")
        if not (math.isfinite(wl) and math.isfinite(val)):
            fail(line_no, f"values must be finite, got {line!r}")
        if wl <= 0:
            fail(line_no, f"wavelength_nm must be > 0, got {cells[0]}")
        if val < 0:
            fail(line_no, f"{column} must be >= 0, got {cells[1]}")
        if rows and wl <= rows[-1][1]:
            fail(line_no, f"wavelength_nm {cells[0]} is not above the previous row's {rows[-1][1]:g} "
                          "(wavelengths must rise strictly)")
        rows.append((line_no, wl, val))
    if header is None:
        fail(1, "no header line found (expected 'wavelength_nm,...')")
    if len(rows) < 2:
        fail(len(text.splitlines()), f"at least two data rows are needed, found {len(rows)}")
    data = np.array([(wl, val) for _, wl, val in rows])
    return data[:, 0], data[:, 1], column


def from_file(path, wavelength_column=None, irradiance_column=None, wavelength_unit=None, irradiance_unit=None,
              field: str = "light.path") -> Spectrum:
    """A measured spectrum from a delimited text file (`read_spectrum`); values taken as absolute.

    Parameters
    ----------
    path : str or Path
        The file [-].
    wavelength_column, irradiance_column : str or int, optional
        The columns to use, a header name or a 1-based number (default: the first
        wavelength/energy column and the only irradiance/photon-flux column) [-].
    wavelength_unit : str, optional
        "nm", "um" or "eV" (default from the header) [-].
    irradiance_unit : str, optional
        E.g. "W m^-2 nm^-1", "W m^-2 um^-1", "W m^-2 eV^-1", "cm^-2 s^-1 nm^-1" (default
        from the header) [-].
    field : str
        The scenario field named in errors [-].

    Returns
    -------
    Spectrum
        The spectrum, named after the file.
    """
    wl, E = read_spectrum(path, wavelength_column, irradiance_column, wavelength_unit, irradiance_unit, field)
    return Spectrum(wl, E, Path(str(path)).name)


# ---------------------------------------------------------------------------
# Measured spectra: delimiter, header aliases, units in the header, column choice
# ---------------------------------------------------------------------------

#: header names (lower case, letters and digits only) of the spectral axis and of the values
_AXIS_ALIASES = {"wavelength": "length", "wavelengthnm": "length", "wavelengthum": "length", "lambda": "length",
                 "lambdanm": "length", "lambdaum": "length", "wl": "length", "wave": "length", "λ": "length",
                 "energy": "energy", "photonenergy": "energy", "energyev": "energy", "photonenergyev": "energy",
                 "e": "energy"}
_VALUE_ALIASES = {"irradiance": "power", "spectralirradiance": "power", "irradiancewm2nm": "power",
                  "irradiancewm2um": "power", "irradiancewm2ev": "power", "intensity": "power",
                  "photonflux": "photons", "spectralphotonflux": "photons", "flux": "photons",
                  "photonfluxcm2snm": "photons", "photonfluxcm2sev": "photons"}
#: unit suffixes written into a header name (``irradiance_W_m2_nm``, ``lambda_nm``)
_NAME_UNITS = {"W_m2_nm": "W m^-2 nm^-1", "W_m2_um": "W m^-2 um^-1", "W_m2_eV": "W m^-2 eV^-1",
               "cm2_s_nm": "cm^-2 s^-1 nm^-1", "cm2_s_eV": "cm^-2 s^-1 eV^-1", "nm": "nm", "um": "um", "eV": "eV"}
#: unit symbols the reader knows: symbol -> (dimension, factor to nm / W / cm / s / eV)
_UNIT_SYMBOLS = {"nm": ("L", 1.0), "um": ("L", 1e3), "µm": ("L", 1e3), "μm": ("L", 1e3), "micron": ("L", 1e3),
                 "microns": ("L", 1e3), "mm": ("L", 1e6), "cm": ("L", 1e7), "m": ("L", 1e9), "eV": ("E", 1.0),
                 "meV": ("E", 1e-3), "W": ("P", 1.0), "mW": ("P", 1e-3), "uW": ("P", 1e-6), "µW": ("P", 1e-6),
                 "s": ("T", 1.0)}
ALLOWED_SPECTRUM_UNITS = ("wavelength in nm, um or eV; spectral irradiance per wavelength or energy "
                          "(W m^-2 nm^-1, W m^-2 um^-1, mW cm^-2 nm^-1, W m^-2 eV^-1, ...) or spectral photon "
                          "flux (cm^-2 s^-1 nm^-1, m^-2 s^-1 nm^-1, cm^-2 s^-1 eV^-1, ...)")


def _parse_unit(text: str):
    """A unit string -> {dimension: exponent} and a factor, or None.

    Accepts "W m^-2 nm^-1", "W/m2/nm", "W/(m^2 nm)", "W m-2 um-1", "W·m⁻²·nm⁻¹"; dimensions L
    (length, factor to nm), E (photon energy, eV), P (power, W), T (time, s); "photons" and
    "1" are dimensionless.
    """
    t = str(text).strip().translate(str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻", "0123456789-")).replace("·", " ").replace("*", " ")
    t = t.replace("**", "^")
    if not t:
        return None
    dims: dict[str, int] = {}
    factor = 1.0
    sign = 1
    for part in re.split(r"(/)", t):
        if part == "/":
            sign = -1
            continue
        group = part.strip().strip("()")
        for tok in group.replace("(", " ").replace(")", " ").split():
            m = re.fullmatch(r"([A-Za-zµμ]+)\^?(-?\d+)?", tok)
            if not m:
                return None
            sym, exp = m.group(1), int(m.group(2) or 1)
            if sym.lower() in ("photons", "photon", "ph", "quanta"):
                continue
            if sym not in _UNIT_SYMBOLS:
                return None
            dim, f = _UNIT_SYMBOLS[sym]
            e = sign * exp
            dims[dim] = dims.get(dim, 0) + e
            factor *= f ** e
    dims = {d: e for d, e in dims.items() if e}
    return dims, factor


def _split_header_cell(cell: str):
    """A header cell -> (base name in lower-case letters and digits, unit text or None)."""
    m = re.fullmatch(r"\s*(.*?)\s*[\[(]\s*([^\])]*?)\s*[\])]\s*", cell)
    if m:
        name, unit = m.group(1), m.group(2)
    else:
        name, unit = cell.strip(), None
        for suffix in sorted(_NAME_UNITS, key=len, reverse=True):
            if name.lower().endswith("_" + suffix.lower()):
                unit = _NAME_UNITS[suffix]
                break
    base = "".join(ch for ch in name.lower() if ch.isalnum() or ch == "λ")
    return base, unit


def _sniff(line: str):
    """The delimiter of a header or data line: tab, semicolon, comma, else runs of white space (None)."""
    for d in ("\t", ";", ","):
        if d in line:
            return d
    return None


def _cells(line: str, delim):
    if delim is None:       # white space, keeping "name (unit)" / "name [unit]" together
        return re.findall(r"[^\s\[(]+(?:\s*[\[(][^\])]*[\])])?|[\[(][^\])]*[\])]", line)
    return [c.strip() for c in line.split(delim)]


def read_spectrum(path, wavelength_column=None, irradiance_column=None, wavelength_unit=None, irradiance_unit=None,
                  field: str = "light.path"):
    """Read a measured spectrum: (wavelength [nm], spectral irradiance [W m^-2 nm^-1]), rising in wavelength.

    The file: text (UTF-8), '#' comment lines and blank lines skipped; columns separated by
    commas, tabs, semicolons or white space (sniffed from the header; with tabs or
    semicolons a decimal comma is read as a point); a header line naming the columns, with
    the unit in brackets or parentheses ("wavelength (nm)", "Wavelength [um]", "energy [eV]",
    "irradiance [W m^-2 um^-1]") or as a suffix ("lambda_nm", "irradiance_W_m2_nm").  Extra
    columns are ignored.  The spectral axis may be a wavelength in nm / um or a photon
    energy in eV (E = hc / lambda); values per energy interval are converted with the
    Jacobian |dE/dlambda| = hc / lambda^2, a photon flux with E = Phi hc / lambda.
    Without a header, `wavelength_unit` and `irradiance_unit` must be given (columns 1, 2).

    Parameters
    ----------
    path : str, Path or Traversable
        The file [-].
    wavelength_column, irradiance_column : str or int, optional
        A header name or a 1-based column number [-].
    wavelength_unit, irradiance_unit : str, optional
        Override the header's units [-].
    field : str
        The scenario field named in errors [-].

    Returns
    -------
    wavelength_nm : ndarray
        Wavelengths, strictly rising [nm].
    irradiance_W_m2_nm : ndarray
        Spectral irradiance [W m^-2 nm^-1].

    Raises
    ------
    InputError
        Naming the file, the line and column, and what is allowed.
    """
    name = str(path)
    text = read_text_file(path, field, "spectrum file")

    def fail(line_no, problem, allowed=None):
        raise InputError(field, name, f"line {line_no}: {problem}" + (f"; allowed: {allowed}" if allowed else ""))

    lines = content_lines(text)
    if not lines:
        fail(1, "no header or data found")
    head_no, head = lines[0]
    delim = _sniff(head)
    cells = _cells(head, delim)

    def number(cell):
        c = cell.strip()
        if delim in ("\t", ";") and "," in c and "." not in c:
            c = c.replace(",", ".")                  # decimal comma
        return float(c)

    try:
        [number(c) for c in cells]
        has_header = False
    except ValueError:
        has_header = True
    if has_header:
        parsed = [_split_header_cell(c) for c in cells]
        data = lines[1:]
    else:
        if wavelength_unit is None or irradiance_unit is None:
            fail(head_no, "no header line: name the columns, e.g. 'wavelength (nm),irradiance (W m^-2 nm^-1)', "
                          "or give light.wavelength_unit and light.irradiance_unit")
        parsed = [(f"column{k + 1}", None) for k in range(len(cells))]
        data = lines

    def pick(choice, aliases, what, key):
        if choice is not None:
            if isinstance(choice, int) and not isinstance(choice, bool) or str(choice).isdigit():
                k = int(choice) - 1
                if not 0 <= k < len(parsed):
                    raise InputError(f"light.{key}", choice, f"a column number 1..{len(parsed)} of {name}")
                return k
            want = str(choice).strip().lower()
            for k, (c, (base, _)) in enumerate(zip(cells, parsed)):
                if c.lower() == want or base == "".join(ch for ch in want if ch.isalnum()):
                    return k
            raise InputError(f"light.{key}", choice, f"a column of {name}: " + ", ".join(repr(c) for c in cells))
        found = [k for k, (base, _) in enumerate(parsed) if base in aliases]
        if not has_header:
            return 0 if what == "axis" else 1
        if not found:
            fail(head_no, f"no {'wavelength or energy' if what == 'axis' else 'irradiance or photon flux'} column "
                          f"in the header {head!r}",
                 "headers such as 'wavelength (nm)', 'Wavelength [um]', 'lambda_nm', 'energy [eV]', "
                 "'irradiance [W m^-2 nm^-1]', 'photon_flux_cm2_s_nm', or choose one with light."
                 + key)
        if what == "value" and len(found) > 1:
            fail(head_no, "several value columns: " + ", ".join(repr(cells[k]) for k in found),
                 f"one, chosen with light.{key}")
        return found[0]

    ia = pick(wavelength_column, _AXIS_ALIASES, "axis", "wavelength_column")
    iv = pick(irradiance_column, _VALUE_ALIASES, "value", "irradiance_column")
    if ia == iv:
        raise InputError("light.irradiance_column", irradiance_column, "a column other than the wavelength column")
    axis_unit = wavelength_unit or parsed[ia][1]
    value_unit = irradiance_unit or parsed[iv][1]
    if axis_unit is None:
        if parsed[ia][0] in ("energy", "photonenergy", "e"):
            axis_unit = "eV"
        else:
            fail(head_no, f"column {ia + 1} {cells[ia]!r} gives no unit", "nm, um or eV, e.g. 'wavelength (nm)', "
                          "or set light.wavelength_unit")
    au = _parse_unit(axis_unit)
    if au is None or au[0] not in ({"L": 1}, {"E": 1}):
        fail(head_no, f"column {ia + 1} {cells[ia]!r}: unit {axis_unit!r} is not a wavelength or photon energy unit",
             "nm, um, eV")
    if value_unit is None:
        fail(head_no, f"column {iv + 1} {cells[iv]!r} gives no unit",
             ALLOWED_SPECTRUM_UNITS + "; e.g. 'irradiance (W m^-2 nm^-1)', or set light.irradiance_unit")
    vu = _parse_unit(value_unit)
    kinds = {(("L", -3), ("P", 1)): (True, "L"), (("E", -1), ("L", -2), ("P", 1)): (True, "E"),
             (("L", -3), ("T", -1)): (False, "L"), (("E", -1), ("L", -2), ("T", -1)): (False, "E")}
    kind = kinds.get(tuple(sorted(vu[0].items()))) if vu is not None else None
    if kind is None:
        fail(head_no, f"column {iv + 1} {cells[iv]!r}: unit {value_unit!r} is not a spectral irradiance or photon "
                      "flux per wavelength or energy interval", ALLOWED_SPECTRUM_UNITS)
    is_power, per = kind

    need = max(ia, iv) + 1
    x = np.empty(len(data))
    y = np.empty(len(data))
    for r, (line_no, line) in enumerate(data):
        row = _cells(line, delim)
        if len(row) < need:
            fail(line_no, f"{len(row)} field(s), column {need} is needed", f"rows with the {len(cells)} columns "
                          "of the header, separated like it")
        for k, dest in ((ia, x), (iv, y)):
            try:
                dest[r] = number(row[k])
            except ValueError:
                fail(line_no, f"column {k + 1} ({cells[k]!r}): not a number: {row[k]!r}", "a decimal number")
            if not math.isfinite(dest[r]):
                fail(line_no, f"column {k + 1} ({cells[k]!r}): values must be finite, got {row[k]!r}")
        if x[r] <= 0:
            fail(line_no, f"column {ia + 1} ({cells[ia]!r}) must be > 0, got {row[ia]!r}")
        if y[r] < 0:
            fail(line_no, f"column {iv + 1} ({cells[iv]!r}) must be >= 0, got {row[iv]!r}")
        if r >= 1 and (x[r] - x[r - 1]) * (x[1] - x[0]) <= 0:
            fail(line_no, f"column {ia + 1} ({cells[ia]!r}) {row[ia]} does not continue the order of the rows "
                          "above (values must rise or fall strictly)")
    if len(data) < 2:
        fail(lines[-1][0], f"at least two data rows are needed, found {len(data)}")
    # axis -> wavelength [nm] and photon energy [eV]; values -> per nm (Jacobian |dE/dlambda| = E / lambda)
    if au[0] == {"L": 1}:
        wl = x * au[1]
    else:
        wl = hc_eV_nm / (x * au[1])
    dens = y * vu[1]                               # [W or s^-1] nm^-2 per nm or per eV
    if per == "E":
        dens = dens * (hc_eV_nm / wl) / wl
    if is_power:
        E = dens * 1e18                            # W nm^-2 nm^-1 -> W m^-2 nm^-1 (1 nm^-2 = 1e18 m^-2)
    else:
        E = irradiance_from_photon_flux(wl, dens * 1e14)     # nm^-2 s^-1 nm^-1 -> cm^-2 s^-1 nm^-1
    order = np.argsort(wl)
    return wl[order], E[order]


def spectrum_from_data(data, field: str = "spectrum") -> Spectrum:
    """A Spectrum from Python data.

    Parameters
    ----------
    data : Spectrum, tuple of array_like, pandas.Series or pandas.DataFrame
        A `Spectrum`; a pair (wavelength [nm], spectral irradiance [W m^-2 nm^-1]) of arrays;
        a pandas Series (index: wavelength [nm], values: irradiance [W m^-2 nm^-1]; a unit in
        the index or series name, e.g. "wavelength (um)", is read as in a file); or a pandas
        DataFrame with columns named as in a file (`read_spectrum`).
    field : str
        The field named in errors [-].

    Returns
    -------
    Spectrum
        The spectrum, rising in wavelength.
    """
    if isinstance(data, Spectrum):
        return data
    if hasattr(data, "to_csv") and hasattr(data, "index"):       # pandas: go through the file reader's rules
        import io
        import tempfile
        if hasattr(data, "columns"):
            frame = data
        else:
            frame = data.rename(data.name or "irradiance (W m^-2 nm^-1)").to_frame()
            frame.index.name = frame.index.name or "wavelength (nm)"
            frame = frame.reset_index()
        header = [str(c) for c in frame.columns]
        header = [h if _split_header_cell(h)[1] or _split_header_cell(h)[0] not in _AXIS_ALIASES
                  else f"{h} (nm)" for h in header]
        header = [h if _split_header_cell(h)[1] or _split_header_cell(h)[0] not in _VALUE_ALIASES
                  else f"{h} (W m^-2 nm^-1)" for h in header]
        buf = io.StringIO()
        frame.to_csv(buf, index=False, header=header, float_format="%.17g")
        with tempfile.TemporaryDirectory() as tmp:
            p = Path(tmp) / "spectrum.csv"
            p.write_text(buf.getvalue(), encoding="utf-8")
            try:
                wl, E = read_spectrum(p, field=field)
            except InputError as err:
                raise InputError(field, "the pandas object", str(err.allowed or err), err.hint) from None
        return Spectrum(wl, E, "spectrum from pandas")
    try:
        wl, E = (np.asarray(a, dtype=float) for a in data)
    except (TypeError, ValueError):
        raise InputError(field, type(data).__name__, "a Spectrum, (wavelength_nm, irradiance_W_m2_nm) arrays, "
                         "a pandas Series (index wavelength in nm) or DataFrame") from None
    if wl.ndim != 1 or wl.shape != E.shape or wl.size < 2:
        raise InputError(field, f"arrays of shapes {wl.shape} and {E.shape}",
                         "two 1-D arrays of the same length, at least 2")
    if not (np.all(np.isfinite(wl)) and np.all(np.isfinite(E))) or np.any(wl <= 0) or np.any(E < 0):
        raise InputError(field, "the arrays", "finite wavelengths > 0 nm and irradiances >= 0 W m^-2 nm^-1")
    d = np.diff(wl)
    if not (np.all(d > 0) or np.all(d < 0)):
        raise InputError(field, "the wavelengths", "strictly rising or falling values")
    order = np.argsort(wl)
    return Spectrum(wl[order], E[order], "spectrum from arrays")


# ---------------------------------------------------------------------------
# Sources
# ---------------------------------------------------------------------------

def planck_W_m2_nm_sr(wavelength_nm, T_K):
    """Planck's law, spectral radiance per wavelength B_lambda(T).

    B_lambda = 2 h c^2 / lambda^5 / (exp(h c / (lambda k T)) - 1).  Written as
    exp(-x) / (1 - exp(-x)) so that large x = hc/(lambda k T) underflows to 0 instead of
    overflowing.

    Parameters
    ----------
    wavelength_nm : array_like
        Wavelength [nm].
    T_K : array_like
        Temperature, broadcast with `wavelength_nm` [K].

    Returns
    -------
    ndarray
        Spectral radiance B_lambda [W m^-2 nm^-1 sr^-1].

    References
    ----------
    M. Planck, Ann. Phys. 309, 553 (1901), doi:10.1002/andp.19013090310 (from memory).
    """
    lam_m = np.asarray(wavelength_nm, float) * 1e-9
    x = h_J_s * c_m_s / (lam_m * k_B_J_K * np.asarray(T_K, float))
    return 2.0 * h_J_s * c_m_s**2 / lam_m**5 * np.exp(-x) / -np.expm1(-x) * 1e-9


def blackbody_grid_nm(T_K, points=2000):
    """Default wavelength grid for a blackbody.

    Log-spaced in x = hc/(lambda k T) from 50 down to 0.01, i.e. from about 0.1x to 500x
    the Wien peak wavelength, so any temperature from a few K to 10^4 K keeps all but
    ~1e-7 of its power (tails: x^3 e^-x at x = 50 and x^3/3 at x = 0.01, against pi^4/15).

    Parameters
    ----------
    T_K : float
        Blackbody temperature [K].
    points : int
        Number of wavelengths [-].

    Returns
    -------
    ndarray
        Wavelengths, shape (points,), rising [nm].
    """
    lam_x1_nm = h_J_s * c_m_s / (k_B_J_K * float(T_K)) * 1e9   # where x = 1 [nm]
    return np.geomspace(lam_x1_nm / 50.0, lam_x1_nm / 0.01, points)


def half_angle_from_f_number_deg(f_number, field="light.f_number"):
    """Cone half-angle theta = arctan(1 / (2F)) of an f/F aperture.

    Then sin^2(theta) = 1 / (1 + 4 F^2), the usual cold-shield factor.  f/0.5 is the
    aplanatic limit, where sin(theta) = 1/(2F) reaches 1 (a full hemisphere; no
    faster f-number exists), above 100 the aperture is a pinhole.  The cone used
    here, tan(theta) = 1/(2F), is the common cold-shield form.

    Parameters
    ----------
    f_number : float
        The f-number F, in (F_NUMBER_MIN, F_NUMBER_MAX] = (0.5, 100] of `optogen.schema` [-].
    field : str
        The field named in errors [-].

    Returns
    -------
    float
        Half-angle theta [deg].

    References
    ----------
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3 (from memory).
    """
    F = check_range(field, f_number, _schema.F_NUMBER_MIN, _schema.F_NUMBER_MAX, low_open=True, unit="(f-number)")
    return math.degrees(math.atan(1.0 / (2.0 * F)))


def cold_filter_grid_nm(T_K, cuton_nm=None, cutoff_nm=None, points=2000, field="light"):
    """Wavelength grid [nm] of a blackbody seen through an ideal band-pass cold filter.

    The filter transmits 1 from cuton_nm to cutoff_nm and 0 outside (either edge
    may be omitted: a long-pass or short-pass filter).  The grid runs
    log-spaced from edge to edge (the default `blackbody_grid_nm` limits for a
    missing edge), so the trapezoid integrates exactly the band.

    Parameters
    ----------
    T_K : float
        Blackbody temperature [K].
    cuton_nm, cutoff_nm : float, optional
        The band edges [nm].
    points : int
        Number of wavelengths [-].
    field : str
        Prefix of the field names in errors [-].

    Returns
    -------
    ndarray
        Wavelengths, shape (points,), rising [nm].
    """
    full = blackbody_grid_nm(T_K, points)
    lo = full[0] if cuton_nm is None else check_range(f"{field}.cuton_nm", cuton_nm, 0.0, low_open=True, unit="nm")
    hi = full[-1] if cutoff_nm is None else check_range(f"{field}.cutoff_nm", cutoff_nm, 0.0, low_open=True,
                                                        unit="nm")
    if not hi > lo:
        name = "cutoff_nm" if cutoff_nm is not None else "cuton_nm"
        raise InputError(f"{field}.{name}", cutoff_nm if cutoff_nm is not None else cuton_nm,
                         f"{field}.cutoff_nm above {field}.cuton_nm (a band from cuton_nm to cutoff_nm)",
                         f"cuton_nm = {lo:g}, cutoff_nm = {hi:g}: is the band reversed?")
    return np.geomspace(lo, hi, points)


def blackbody(T_K=None, field_of_view_deg=90.0, emissivity=1.0, wavelength_nm=None, *,
              f_number=None, cuton_nm=None, cutoff_nm=None, temperature_K=None) -> Spectrum:
    """Irradiance on a flat detector from a Lambertian (grey) emitter filling a cone.

    E_lambda = emissivity * pi * sin^2(theta) * B_lambda(T), theta = field-of-view half-angle;
    pi sin^2(theta) is the projected solid angle of a cone of half-angle theta seen by a flat
    surface (90 deg = full hemisphere, pi sr).  Total at 90 deg: emissivity sigma T^4
    (Stefan-Boltzmann).  Use for a warm background seen by a cooled detector.  Errors name
    the [light] keys (``light.temperature_K``, ...).

    Parameters
    ----------
    T_K : float
        Emitter temperature [K].
    field_of_view_deg : float
        Half-angle of the cone the emitter fills, (0, 90] [deg].
    emissivity : float
        Grey emissivity, [0, 1] [-].
    wavelength_nm : array_like, optional
        Grid [nm]; default `blackbody_grid_nm(T_K)`, or the filter band.
    f_number : float, optional
        The cone as an f/F aperture instead of field_of_view_deg
        (`half_angle_from_f_number_deg`: sin^2(theta) = 1 / (1 + 4 F^2)) [-].
    cuton_nm, cutoff_nm : float, optional
        An ideal cold filter passing only this band (`cold_filter_grid_nm`) [nm].
    temperature_K : float, optional
        Former name of `T_K`, kept for callers that pass it by keyword [K].

    Returns
    -------
    Spectrum
        Spectral irradiance on the detector.

    References
    ----------
    M. Planck, Ann. Phys. 309, 553 (1901), doi:10.1002/andp.19013090310 (from memory);
    A. Rogalski, Infrared Detectors, 2nd ed. (CRC Press, 2011), ch. 3 (from memory).
    """
    if temperature_K is not None:
        if T_K is not None:
            raise InputError("light.temperature_K", temperature_K, "one temperature: T_K or temperature_K, not both")
        T_K = temperature_K
    if T_K is None:
        raise TypeError("blackbody() missing the emitter temperature T_K")
    T = check_range("light.temperature_K", T_K, 0.0, None, low_open=True, unit="K")
    if f_number is not None:
        fov = half_angle_from_f_number_deg(f_number)
    else:
        fov = check_range("light.field_of_view_deg", field_of_view_deg, 0.0, 90.0, low_open=True, unit="deg")
    eps = check_range("light.emissivity", emissivity, 0.0, 1.0)
    filtered = cuton_nm is not None or cutoff_nm is not None
    if wavelength_nm is not None:
        wl = _check_grid(wavelength_nm)
    elif filtered:
        wl = cold_filter_grid_nm(T, cuton_nm, cutoff_nm)
    else:
        wl = blackbody_grid_nm(T)
    if filtered and wavelength_nm is not None:
        lo = -np.inf if cuton_nm is None else cuton_nm
        hi = np.inf if cutoff_nm is None else cutoff_nm
        passed = (wl >= lo) & (wl <= hi)
    else:
        passed = np.ones(wl.shape, bool)
    view = math.pi * math.sin(math.radians(fov)) ** 2
    label = f"blackbody {T:g} K, " + (f"f/{f_number:g}" if f_number is not None else f"{fov:g} deg")
    label += f", emissivity {eps:g}"
    if filtered:
        label += f", filter {wl[0]:g}-{wl[-1]:g} nm" if wavelength_nm is None else ", filtered"
    return Spectrum(wl, np.where(passed, eps * view * planck_W_m2_nm_sr(wl, T), 0.0), label)


def _check_grid(wavelength_nm):
    wl = np.asarray(wavelength_nm, dtype=float)
    if wl.ndim != 1 or wl.size < 2 or not np.all(np.isfinite(wl)) or np.any(wl <= 0) or np.any(np.diff(wl) <= 0):
        raise InputError("light.wavelength_nm", wl, "a 1-D grid of at least two positive, strictly rising wavelengths")
    return wl


def illuminated_area_cm2(spot_area_cm2=None, beam_diameter_mm=None) -> float:
    """The illuminated area from exactly one of a spot area or a beam diameter.

    The power is taken as spread evenly (top-hat) over the area pi d^2 / 4; for a Gaussian
    beam with 1/e^2 diameter d the centre irradiance is twice that average.

    Parameters
    ----------
    spot_area_cm2 : float, optional
        Spot area [cm^2].
    beam_diameter_mm : float, optional
        Beam diameter d [mm].

    Returns
    -------
    float
        Illuminated area [cm^2].
    """
    if (spot_area_cm2 is None) == (beam_diameter_mm is None):
        raise InputError("light.spot_area_cm2", spot_area_cm2,
                         "give exactly one of light.spot_area_cm2 and light.beam_diameter_mm")
    if spot_area_cm2 is not None:
        return check_range("light.spot_area_cm2", spot_area_cm2, 0.0, None, low_open=True, unit="cm^2")
    d_cm = check_range("light.beam_diameter_mm", beam_diameter_mm, 0.0, None, low_open=True, unit="mm") / 10.0
    return math.pi * d_cm**2 / 4.0


def laser(wavelength_nm, power_W, spot_area_cm2=None, beam_diameter_mm=None) -> Spectrum:
    """A laser line of `power_W` spread evenly over a spot.

    Represented as a triangle of full width at half maximum LASER_LINE_FWHM_nm: three
    samples, lambda0 -/+ FWHM at zero and lambda0 at the peak.  The trapezoidal rule then
    integrates any f(lambda) E(lambda) over the line to exactly f(lambda0) P / area, so
    photon counting gives q P lambda0 / (h c) per area with no discretisation error.

    Parameters
    ----------
    wavelength_nm : float
        Laser wavelength lambda0 [nm].
    power_W : float
        Power P [W].
    spot_area_cm2 : float, optional
        Spot area (or give `beam_diameter_mm`) [cm^2].
    beam_diameter_mm : float, optional
        Beam diameter [mm].

    Returns
    -------
    Spectrum
        The line, three samples.
    """
    lam = float(check_range("light.wavelength_nm", wavelength_nm, 0.0, None, low_open=True, unit="nm"))
    P = check_range("light.power_W", power_W, 0.0, None, unit="W")
    irr = P / illuminated_area_cm2(spot_area_cm2, beam_diameter_mm) * 1e4          # [W m^-2]
    wl = np.array([lam - LASER_LINE_FWHM_nm, lam, lam + LASER_LINE_FWHM_nm])
    peak = irr * 2.0 / (wl[2] - wl[0])        # the trapezoid weight of the middle sample, as rounded
    return Spectrum(wl, [0.0, peak, 0.0], f"laser {lam:g} nm, {P:g} W")


def led(peak_nm, fwhm_nm, power_W, spot_area_cm2=None, beam_diameter_mm=None) -> Spectrum:
    """An LED: a Gaussian in wavelength with the given peak and FWHM, `power_W` over a spot.

    E(lambda) ~ exp(-(lambda - peak)^2 / (2 s^2)), s = FWHM / (2 sqrt(2 ln 2)), sampled on
    241 points over peak +/- 3 FWHM (+/- 7 s; wavelengths <= 0 dropped) and normalised on
    that grid so the trapezoid total is exactly P / area.  Real LED lines are slightly
    asymmetric; the Gaussian is the usual first approximation.

    Parameters
    ----------
    peak_nm : float
        Peak wavelength [nm].
    fwhm_nm : float
        Full width at half maximum [nm].
    power_W : float
        Power P [W].
    spot_area_cm2 : float, optional
        Spot area (or give `beam_diameter_mm`) [cm^2].
    beam_diameter_mm : float, optional
        Beam diameter [mm].

    Returns
    -------
    Spectrum
        The Gaussian line.
    """
    peak = float(check_range("light.peak_nm", peak_nm, 0.0, None, low_open=True, unit="nm"))
    fwhm = float(check_range("light.fwhm_nm", fwhm_nm, 0.0, None, low_open=True, unit="nm"))
    P = check_range("light.power_W", power_W, 0.0, None, unit="W")
    irr = P / illuminated_area_cm2(spot_area_cm2, beam_diameter_mm) * 1e4          # [W m^-2]
    wl = np.linspace(peak - 3 * fwhm, peak + 3 * fwhm, 241)
    wl = wl[wl > 0]
    s = fwhm / (2.0 * math.sqrt(2.0 * math.log(2.0)))
    shape = np.exp(-0.5 * ((wl - peak) / s) ** 2)
    return Spectrum(wl, shape * (irr / np.trapezoid(shape, wl)), f"LED {peak:g} nm, FWHM {fwhm:g} nm, {P:g} W")


# ---------------------------------------------------------------------------
# Scaling and scenario tables
# ---------------------------------------------------------------------------

_SCALINGS = _schema.LIGHT_SCALINGS           # ("suns", "irradiance_W_m2", "power_W", "photon_flux_cm2_s")


def scale(spectrum: Spectrum, suns=None, irradiance_W_m2=None, power_W=None, spot_area_cm2=None,
          photon_flux_cm2_s=None, beam_diameter_mm=None) -> Spectrum:
    """The spectrum's shape rescaled by exactly one scaling.

    A zero value gives a dark spectrum (valid).

    Parameters
    ----------
    spectrum : Spectrum
        The shape to rescale.
    suns : float, optional
        Irradiance in suns, 1 sun = 1000 W m^-2 (module docstring) [-].
    irradiance_W_m2 : float, optional
        Total irradiance [W m^-2].
    power_W : float, optional
        Power on `spot_area_cm2` (or `beam_diameter_mm`), spread evenly [W].
    spot_area_cm2 : float, optional
        Spot area, with `power_W` only [cm^2].
    photon_flux_cm2_s : float, optional
        Total photon flux [cm^-2 s^-1].
    beam_diameter_mm : float, optional
        Beam diameter, with `power_W` only [mm].

    Returns
    -------
    Spectrum
        The rescaled spectrum.
    """
    given = {k: v for k, v in (("suns", suns), ("irradiance_W_m2", irradiance_W_m2), ("power_W", power_W),
                               ("photon_flux_cm2_s", photon_flux_cm2_s)) if v is not None}
    if len(given) != 1:
        field = f"light.{sorted(given)[1]}" if given else "light.suns"
        raise InputError(field, given.get(field[6:]),
                         "exactly one scaling: " + ", ".join(f"light.{k}" for k in _SCALINGS),
                         f"given: {', '.join(sorted(given))}" if given else None)
    (key, value), = given.items()
    if key != "power_W" and (spot_area_cm2 is not None or beam_diameter_mm is not None):
        raise InputError("light.spot_area_cm2", spot_area_cm2 if spot_area_cm2 is not None else beam_diameter_mm,
                         "a spot size only goes with light.power_W")
    value = check_range(f"light.{key}", value, 0.0, None)
    if key == "suns":
        target, current = value * SUN_W_m2, spectrum.irradiance_W_m2
    elif key == "irradiance_W_m2":
        target, current = value, spectrum.irradiance_W_m2
    elif key == "power_W":
        target, current = value / illuminated_area_cm2(spot_area_cm2, beam_diameter_mm) * 1e4, spectrum.irradiance_W_m2
    else:
        target, current = value, spectrum.photon_flux_cm2_s
    if target == 0.0:
        factor = 0.0
    elif current > 0.0:
        factor = target / current
    else:
        raise InputError(f"light.{key}", value, "0 for a spectrum that is dark (nothing to rescale)")
    return Spectrum(spectrum.wavelength_nm, spectrum.irradiance_W_m2_nm * factor,
                    f"{spectrum.name}, {key} = {value:g}")


#: keys of a [light] table per source kind (besides `source` and the scalings)
_SOURCE_KEYS = _schema.LIGHT_SOURCE_KEYS      # declared once in optogen.schema
_SPOT_KEYS = _schema.LIGHT_SPOT_KEYS
_ALL_KEYS = sorted({"source", *_SCALINGS, *_SPOT_KEYS, *(k for v in _SOURCE_KEYS.values() for k in v)})


def source_from_table(table: dict, base_dir=".") -> Spectrum:
    """A Spectrum from a scenario's [light] table.

    source: a standard spectrum (AM1.5G, AM1.5D, AM0) or blackbody | laser | led | file.
    Scaling, exactly one of suns | irradiance_W_m2 | power_W (+ spot_area_cm2 or
    beam_diameter_mm) | photon_flux_cm2_s:
      * standard spectra, laser and led: required (laser/led usually power_W + spot);
      * file: optional (without one the file's absolute values are used);
      * blackbody: not allowed (temperature_K, field_of_view_deg, emissivity fix it).
    Other keys: blackbody temperature_K [K], field_of_view_deg [deg] (half-angle, default 90),
    emissivity [-] (default 1); laser wavelength_nm [nm]; led peak_nm, fwhm_nm [nm];
    file path (relative to base_dir).

    Parameters
    ----------
    table : dict
        The [light] table [-].
    base_dir : str or Path
        The folder a file source's ``path`` refers to [-].

    Returns
    -------
    Spectrum
        The scaled source.
    """
    table = dict(table)
    for key in table:
        if key not in _ALL_KEYS:
            raise InputError(f"light.{key}", table[key], "a known [light] key: " + ", ".join(_ALL_KEYS),
                             did_you_mean(key, _ALL_KEYS))
    source = table.get("source", "AM1.5G")
    kind = "standard" if _standard_key(source) else normalise(source)
    if kind not in _SOURCE_KEYS:
        raise InputError("light.source", source, "one of " + ", ".join(names()),
                         did_you_mean(normalise(source), [normalise(n) for n in names()]))
    for key in table:
        if key in ("source", *_SCALINGS, *_SPOT_KEYS) or key in _SOURCE_KEYS[kind]:
            continue
        owner = next(k for k, v in _SOURCE_KEYS.items() if key in v)
        raise InputError(f"light.{key}", table[key], f"only used with light.source = {owner!r}, not {source!r}")
    scaling = {k: table[k] for k in _SCALINGS if k in table}
    spot = {k: table[k] for k in _SPOT_KEYS if k in table}

    def need(key):
        if key not in table:
            raise InputError(f"light.{key}", None, f"required for light.source = {source!r}")
        return table[key]

    if kind == "blackbody":
        if scaling or spot:
            raise InputError(f"light.{next(iter(scaling or spot))}", next(iter((scaling or spot).values())),
                             "not used for a blackbody: its irradiance follows from light.temperature_K, "
                             "light.field_of_view_deg and light.emissivity")
        return blackbody(need("temperature_K"), table.get("field_of_view_deg", 90.0), table.get("emissivity", 1.0))
    if kind == "standard":
        shape = standard(source)
    elif kind == "laser":
        shape = laser(need("wavelength_nm"), 1.0, spot_area_cm2=1.0)
    elif kind == "led":
        shape = led(need("peak_nm"), need("fwhm_nm"), 1.0, spot_area_cm2=1.0)
    else:
        shape = from_file(Path(base_dir) / str(need("path")), table.get("wavelength_column"),
                          table.get("irradiance_column"), table.get("wavelength_unit"), table.get("irradiance_unit"))
        if not scaling and not spot:
            return shape
    if len(scaling) != 1:
        field = f"light.{sorted(scaling)[1]}" if scaling else "light.suns"
        raise InputError(field, table.get(field[6:]),
                         f"exactly one scaling for light.source = {source!r}: "
                         + ", ".join(f"light.{k}" for k in _SCALINGS)
                         + " (power_W with light.spot_area_cm2 or light.beam_diameter_mm)",
                         f"given: {', '.join(sorted(scaling))}" if scaling else "e.g. suns = 1")
    out = scale(shape, **scaling, **spot)
    label = shape.name.rsplit(",", 1)[0] if kind in ("laser", "led") else shape.name
    (key, value), = scaling.items()
    return Spectrum(out.wavelength_nm, out.irradiance_W_m2_nm, f"{label}, {key} = {value:g}")
