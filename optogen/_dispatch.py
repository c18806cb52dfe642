"""Model selection by name: `model="..."` with case/separator-insensitive aliases."""
from __future__ import annotations

import re
from typing import Callable, Mapping

from .errors import InputError, did_you_mean


def normalise(name: str) -> str:
    """Lower-case a model name and drop separators: "Richter-2012" -> "richter2012"."""
    return re.sub(r"[\s_\-.&,/()]+", "", str(name).lower())


def pick(field: str, name: str, table: Mapping[str, Callable], aliases: Mapping[str, str] | None = None):
    """Return table[name] after normalising `name` and resolving aliases.

    `table` keys are canonical names.  An unknown name raises InputError that
    lists every valid canonical name.
    """
    key = normalise(name)
    canon = {normalise(k): k for k in table}
    for alias, target in (aliases or {}).items():
        canon.setdefault(normalise(alias), target)
    if key not in canon:
        raise InputError(field, name, "one of " + ", ".join(sorted(table)),
                         did_you_mean(key, list(canon)))
    return table[canon[key]]
