"""Input errors that name the field, the value and what is allowed."""
from __future__ import annotations

import contextlib
import difflib
import os
from pathlib import Path
from typing import Iterable, Mapping

import numpy as np


class InputError(ValueError):
    """A bad input value.

    The message always names the field, the value given and what is allowed,
    and, where it helps, a fix.  The CLI prints it on one line and exits 2.

    Parameters
    ----------
    field : str
        The dotted scenario field (``absorber.temperature_K``) or a core argument name [-].
    value : object
        The value given (shown shortened: an array by its shape and range) [-].
    allowed : str
        What is allowed, e.g. "must be > 0 K" [-].
    hint : str, optional
        A fix or a "did you mean ..." [-].
    """

    def __init__(self, field: str, value, allowed: str, hint: str | None = None):
        self.field = field
        self.value = value
        self.allowed = allowed
        self.hint = hint
        msg = f"{field} = {_show(value)} is not allowed: {allowed}"
        if hint:
            msg += f" ({hint})"
        super().__init__(msg)


def _show(value) -> str:
    """A short text of a value for a message (an array by its shape and range; long text cut)."""
    if isinstance(value, np.ndarray) and value.ndim > 0 and value.size > 3:
        if value.dtype.kind in "iuf":
            finite = value[np.isfinite(value)] if value.dtype.kind == "f" else value
            if finite.size:
                return f"array(shape={value.shape}, min={finite.min():.4g}, max={finite.max():.4g})"
        return f"array(shape={value.shape}, dtype={value.dtype})"
    if isinstance(value, int) and not isinstance(value, bool) and value.bit_length() > 256:
        return f"an integer of {int(value.bit_length() * 0.30103) + 1} digits"
    text = repr(value)
    return text if len(text) <= 200 else text[:160] + f"... ({len(text)} characters)"


def did_you_mean(word: str, choices: Iterable[str]) -> str | None:
    """A "did you mean ..." hint for a misspelt key or name.

    Parameters
    ----------
    word : str
        The misspelt key or name [-].
    choices : iterable of str
        The allowed keys or names [-].

    Returns
    -------
    str or None
        ``did you mean 'x'?`` for the closest choice (difflib ratio >= 0.6), or None [-].
    """
    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return f"did you mean {close[0]!r}?" if close else None


def check_range(field: str, value, low=None, high=None, *, low_open=False,
                high_open=False, unit: str = ""):
    """Raise InputError unless every element of `value` lies in the range.

    NaN is always rejected; infinity only when `high` is None or infinite.

    Parameters
    ----------
    field : str
        The field named in the error (dotted scenario path) [-].
    value : array_like
        The value(s) to check [unit of the field].
    low, high : float, optional
        The bounds (None: unbounded on that side) [unit of the field].
    low_open, high_open : bool
        Exclude the bound itself [-].
    unit : str
        The unit printed after the bounds in the error, e.g. "K" [-].

    Returns
    -------
    ndarray or float
        `value` as a float array (a float for a scalar) [unit of the field].

    Raises
    ------
    InputError
        If an element is NaN or outside the range.
    """
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr) if (high is None or np.isfinite(high)) else np.isnan(arr)
    if low is not None:
        bad |= (arr <= low) if low_open else (arr < low)
    if high is not None:
        bad |= (arr >= high) if high_open else (arr > high)
    if np.any(bad):
        lo = "" if low is None else (f"> {low:g}" if low_open else f">= {low:g}")
        hi = "" if high is None else (f"< {high:g}" if high_open else f"<= {high:g}")
        allowed = " and ".join(s for s in (lo, hi) if s) or "a finite number"
        shown = arr[bad].flat[0] if arr.ndim else float(arr)
        raise InputError(field, float(shown), f"must be {allowed}{(' ' + unit) if unit else ''}")
    return arr if arr.ndim else float(arr)


@contextlib.contextmanager
def relabel(names: Mapping[str, str]):
    """Rename the field of an InputError raised inside the block.

    The one place where a core function's own argument name (or a prefix such as "light.")
    becomes a scenario path.  ``with relabel({"light.": "background."}): light.blackbody(...)``
    turns ``light.temperature_K`` into ``background.temperature_K``; a key without a trailing
    dot must match the whole field (``{"temperature_K": "absorber.temperature_K"}``).

    Parameters
    ----------
    names : mapping of str to str
        Old field (or prefix ending in ".") -> new field (or prefix) [-].

    Raises
    ------
    InputError
        The error raised in the block, with its field renamed where a key matches.
    """
    try:
        yield
    except InputError as exc:
        for old, new in names.items():
            if (old.endswith(".") and exc.field.startswith(old)) or exc.field == old:
                raise InputError(new + exc.field[len(old):], exc.value, exc.allowed, exc.hint) from None
        raise


def read_text_file(path, field: str, what: str = "CSV file", max_bytes: int | None = None) -> str:
    """The text of a user's file, UTF-8 (a byte-order mark dropped); every failure an InputError.

    Parameters
    ----------
    path : str, os.PathLike or importlib.resources.abc.Traversable
        The file (a bundled resource is read through its own ``read_bytes``).
    field : str
        The scenario field or option named in the errors, e.g. "light.path" [-].
    what : str, optional
        What the file should be, for the messages ("CSV file", "spectrum file", ...) [-].
    max_bytes : int or None, optional
        Refuse a file larger than this, before reading it [bytes].

    Returns
    -------
    str
        The decoded text.

    Raises
    ------
    InputError
        A missing or unreadable file, one above `max_bytes`, bytes that are not UTF-8; naming
        `field` and the path.
    """
    name = str(path)
    local = isinstance(path, (str, os.PathLike))
    try:
        if local and max_bytes is not None and (size := Path(path).stat().st_size) > max_bytes:
            raise InputError(field, name, f"a file of at most {max_bytes} bytes", f"it has {size}")
        raw = Path(path).read_bytes() if local else path.read_bytes()
    except OSError as err:
        raise InputError(field, name, f"an existing, readable {what}", err.strerror or str(err)) from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        raise InputError(field, name, f"a {what} of UTF-8 text", f"byte {err.start}: {err.reason}") from None


def content_lines(text: str) -> list[tuple[int, str]]:
    """The lines of a text table that hold content: stripped, without blank and ``#`` lines.

    Parameters
    ----------
    text : str
        The file's text.

    Returns
    -------
    list of (int, str)
        (line number from 1, the stripped line) [-].
    """
    lines = ((i, raw.strip()) for i, raw in enumerate(text.splitlines(), start=1))
    return [(i, line) for i, line in lines if line and not line.startswith("#")]


class DegenerateWarning(UserWarning):
    """A splitting above the band gap: degenerate carriers (Fermi-Dirac statistics)."""


class PhysicsNoteWarning(UserWarning):
    """A quantity is null because it does not apply (light below the gap, no mobilities, ...)."""
