"""Scenario keys of the analysis of measured lifetime data: ``[measurement]`` and ``[uncertainty]``.

Declared once, in `optogen.schema` (sections ``SECTIONS["measurement"]``, ``SECTIONS["uncertainty"]``
and their keys in ``schema.KEYS``); this module only reads them for the analysis.
"""
from __future__ import annotations

from optogen import schema
from optogen.schema import Key

#: the two sections of the analysis
OWN_SECTIONS = ("measurement", "uncertainty")

#: every key of ``[measurement]`` and ``[uncertainty]``
KEYS: tuple[Key, ...] = tuple(k for k in schema.KEYS.values() if k.section in OWN_SECTIONS)

KEY_BY_PATH: dict[str, Key] = {k.path: k for k in KEYS}


def section_keys(section: str) -> tuple[str, ...]:
    """Key names of one of the two sections ("measurement" or "uncertainty") [-]."""
    return schema.section_keys(section)


def default(path: str):
    """The declared default of a key [unit of the key]."""
    return schema.KEYS[path].default
