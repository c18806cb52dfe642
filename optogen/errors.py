"""Input errors that name the field, the value and what is allowed."""
from __future__ import annotations

import difflib
from typing import Iterable

import numpy as np


class InputError(ValueError):
    """A bad input value.

    The message always names the field, the value given and what is allowed,
    and, where it helps, a fix.  The CLI prints it on one line and exits 2.
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
    arr = np.asarray(value) if not isinstance(value, (str, dict, list, tuple)) else None
    if arr is not None and arr.ndim > 0 and arr.size > 3:
        return f"array(shape={arr.shape}, min={np.nanmin(arr):.4g}, max={np.nanmax(arr):.4g})"
    return repr(value)


def did_you_mean(word: str, choices: Iterable[str]) -> str | None:
    """A "did you mean ..." hint for a misspelt key or name, or None."""
    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return f"did you mean {close[0]!r}?" if close else None


def check_range(field: str, value, low=None, high=None, *, low_open=False,
                high_open=False, unit: str = ""):
    """Raise InputError unless every element of `value` lies in the range.

    NaN is always rejected.  Returns `value` as a float array (or float).
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
