"""Reading measured data: lifetime curves, photoconductance records, a folder of them.

Formats (our own, plain CSV, ``#`` comment lines and blank lines skipped, the first other line
the header; column names carry their unit and may come in any order):

* lifetime curve: ``delta_n_cm3,tau_s`` and optionally ``tau_uncertainty_s`` (1 sigma);
* photoconductance record: ``time_s,photoconductance_S`` and the light, either ``suns`` or
  ``photon_flux_cm2_s`` (incident photon flux, converted to suns with the AM1.5G flux at 1 sun).

Every problem is one `InputError` naming the scenario field (``measurement.file``), the file,
the line and what is wrong; nothing is read half.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from optogen.errors import InputError, content_lines, read_text_file

#: a file larger than this is refused before reading [bytes]
MAX_FILE_BYTES = 50_000_000
#: a lifetime above this [s] is taken as a unit mistake (microseconds in the tau_s column);
#: crystalline Si, the longest-lived absorber, stays below ~0.1 s (common practice)
TAU_MAX_s = 1.0
#: an excess density below this [cm^-3] is taken as a unit mistake (e.g. units of 1e15 cm^-3 or m^-3 scaled)
DN_MIN_cm3 = 1e3

LIFETIME_COLUMNS = ("delta_n_cm3", "tau_s")
LIFETIME_OPTIONAL = ("tau_uncertainty_s",)
RECORD_COLUMNS = ("time_s", "photoconductance_S")
RECORD_LIGHT = ("suns", "photon_flux_cm2_s")


@dataclass(frozen=True, eq=False)
class LifetimeData:
    """A measured lifetime curve, sorted by rising dn.

    delta_n_cm3 (D,) [cm^-3]; tau_s (D,) [s]; tau_uncertainty_s (D,) [s] or None; path [-];
    correlated_points: neighbouring points share their noise over this many points (the smoothing
    window of a converted record; 1 for independent points): fit variances are multiplied by it [-].
    """

    delta_n_cm3: np.ndarray
    tau_s: np.ndarray
    tau_uncertainty_s: np.ndarray | None = None
    path: str = "<data>"
    correlated_points: int = 1

    @property
    def sigma_rel(self):
        """Relative 1-sigma uncertainty of tau [-], or None."""
        return None if self.tau_uncertainty_s is None else self.tau_uncertainty_s / self.tau_s


@dataclass(frozen=True, eq=False)
class Record:
    """A photoconductance record in time.

    time_s (N,) [s]; photoconductance_S (N,) [S]; light (N,) [suns or cm^-2 s^-1];
    light_column: "suns" or "photon_flux_cm2_s" [-]; path [-].
    """

    time_s: np.ndarray
    photoconductance_S: np.ndarray
    light: np.ndarray
    light_column: str
    path: str = "<data>"


def _table(path, field: str):
    """(header names, rows [(line_no, floats)]) of a CSV file; InputError naming file and line."""
    p = Path(path)
    text = read_text_file(p, field, max_bytes=MAX_FILE_BYTES)
    header, rows = None, []
    for line_no, line in content_lines(text):
        cells = [c.strip() for c in line.split(",")]
        if header is None:
            header = cells
            header_line = line_no
            continue
        rows.append((line_no, cells, line))
    if header is None:
        raise InputError(field, str(p), "line 1: a header line naming the columns", "the file has no data")
    return header, header_line, rows


def _numbers(header, rows, path, field):
    """[(line_no, floats)] of the raw rows: each with one finite number per column."""
    out = []
    for line_no, cells, line in rows:
        if len(cells) != len(header):
            raise InputError(field, str(path), f"line {line_no}: {len(header)} comma-separated values "
                                               f"({','.join(header)})", f"found {len(cells)} in {line!r}")
        try:
            vals = [float(c) for c in cells]
        except ValueError:
            raise InputError(field, str(path), f"line {line_no}: numbers only", f"found {line!r}") from None
        bad = [h for h, v in zip(header, vals) if not math.isfinite(v)]
        if bad:
            raise InputError(field, str(path), f"line {line_no}: finite numbers",
                             f"{bad[0]} is {cells[header.index(bad[0])]!r}")
        out.append((line_no, vals))
    return out


def _columns(header, header_line, required, optional, path, field, one_of=()):
    lower = [h.lower() for h in header]
    idx = {}
    for name in required:
        if name.lower() not in lower:
            allowed = ",".join(required) + (f",<one of {'/'.join(one_of)}>" if one_of else "") + \
                (f"[,{','.join(optional)}]" if optional else "")
            raise InputError(field, str(path), f"line {header_line}: a header with the columns {allowed}",
                             f"column {name!r} is missing from {','.join(header)!r}")
        idx[name] = lower.index(name.lower())
    for name in optional:
        if name.lower() in lower:
            idx[name] = lower.index(name.lower())
    if one_of:
        found = [n for n in one_of if n.lower() in lower]
        if len(found) != 1:
            raise InputError(field, str(path), f"line {header_line}: exactly one light column, "
                                               f"{' or '.join(one_of)}", f"the header is {','.join(header)!r}")
        idx[found[0]] = lower.index(found[0].lower())
    extra = [h for i, h in enumerate(header) if i not in idx.values()]
    if extra:
        raise InputError(field, str(path), f"line {header_line}: only the columns "
                                           f"{','.join(required + tuple(optional) + tuple(one_of))}",
                         f"unknown column {extra[0]!r}")
    return idx


def read_lifetime_csv(path, field: str = "measurement.file") -> LifetimeData:
    """Read a lifetime curve: columns delta_n_cm3, tau_s [, tau_uncertainty_s].

    Checks: the header; every value finite; dn > 0 and >= `DN_MIN_cm3` (smaller values mean a unit
    mistake); 0 < tau <= `TAU_MAX_s` (larger: microseconds in the seconds column); uncertainties
    > 0; no two rows at the same dn; at least 5 rows.  Returns `LifetimeData` sorted by dn.
    """
    header, hl, rows = _table(path, field)
    idx = _columns(header, hl, LIFETIME_COLUMNS, LIFETIME_OPTIONAL, path, field)
    rows = _numbers(header, rows, path, field)
    for line_no, v in rows:
        dn, tau = v[idx["delta_n_cm3"]], v[idx["tau_s"]]
        if dn <= 0:
            raise InputError(field, str(path), f"line {line_no}: delta_n_cm3 > 0 (an excess density)",
                             f"found {dn:g}")
        if dn < DN_MIN_cm3:
            raise InputError(field, str(path), f"line {line_no}: delta_n_cm3 in cm^-3 (>= {DN_MIN_cm3:g})",
                             f"found {dn:g}: a unit mistake? (1e15 cm^-3 is written 1e15)")
        if tau <= 0:
            raise InputError(field, str(path), f"line {line_no}: tau_s > 0", f"found {tau:g}")
        if tau > TAU_MAX_s:
            raise InputError(field, str(path), f"line {line_no}: tau_s in seconds (<= {TAU_MAX_s:g} s)",
                             f"found {tau:g}: microseconds in the seconds column? (100 us is 1e-4)")
        if "tau_uncertainty_s" in idx and not v[idx["tau_uncertainty_s"]] > 0:
            raise InputError(field, str(path), f"line {line_no}: tau_uncertainty_s > 0",
                             f"found {v[idx['tau_uncertainty_s']]:g}")
    if len(rows) < 5:
        raise InputError(field, str(path), "at least 5 data rows", f"found {len(rows)}")
    a = np.array([r[1] for r in rows])
    lines = np.array([r[0] for r in rows])
    order = np.argsort(a[:, idx["delta_n_cm3"]], kind="stable")
    a, lines = a[order], lines[order]
    dn = a[:, idx["delta_n_cm3"]]
    dup = np.flatnonzero(np.diff(dn) == 0)
    if dup.size:
        raise InputError(field, str(path), f"line {lines[dup[0] + 1]}: one row per excess density",
                         f"delta_n_cm3 = {dn[dup[0]]:g} also on line {lines[dup[0]]}")
    unc = a[:, idx["tau_uncertainty_s"]] if "tau_uncertainty_s" in idx else None
    return LifetimeData(dn, a[:, idx["tau_s"]], unc, str(path))


def read_record_csv(path, field: str = "measurement.file") -> Record:
    """Read a photoconductance record: columns time_s, photoconductance_S and suns or photon_flux_cm2_s.

    Checks: the header; every value finite; time rising strictly; photoconductance >= 0 (a
    negative value is an offset or a sign mistake: subtract the dark value first); light >= 0;
    at least 7 rows.  Returns a `Record`.
    """
    header, hl, rows = _table(path, field)
    idx = _columns(header, hl, RECORD_COLUMNS, (), path, field, one_of=RECORD_LIGHT)
    rows = _numbers(header, rows, path, field)
    light = next(n for n in RECORD_LIGHT if n in idx)
    prev = None
    for line_no, v in rows:
        t, s, g = v[idx["time_s"]], v[idx["photoconductance_S"]], v[idx[light]]
        if prev is not None and not t > prev[1]:
            raise InputError(field, str(path), f"line {line_no}: time_s rising strictly",
                             f"{t:g} s follows {prev[1]:g} s on line {prev[0]}")
        if s < 0:
            raise InputError(field, str(path), f"line {line_no}: photoconductance_S >= 0 (the light-minus-dark "
                                               "sheet conductance)", f"found {s:g}; subtract the dark offset")
        if g < 0:
            raise InputError(field, str(path), f"line {line_no}: {light} >= 0", f"found {g:g}")
        prev = (line_no, t)
    if len(rows) < 7:
        raise InputError(field, str(path), "at least 7 data rows", f"found {len(rows)}")
    a = np.array([r[1] for r in rows])
    return Record(a[:, idx["time_s"]], a[:, idx["photoconductance_S"]], a[:, idx[light]], light, str(path))


def folder_files(folder, field: str = "measurement.file") -> list[Path]:
    """The CSV files of a folder (sorted by name) for a batch analysis."""
    p = Path(folder)
    if not p.is_dir():
        raise InputError(field, str(p), "an existing folder of CSV files")
    files = sorted(f for f in p.iterdir() if f.suffix.lower() == ".csv" and f.is_file())
    if not files:
        raise InputError(field, str(p), "a folder holding at least one .csv file")
    return files
