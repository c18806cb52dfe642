"""The registry of published models: one record per model, looked up by kind and name.

Every model the core selects by name (``model=`` arguments, scenario keys such as
``absorber.ni_model`` or ``recombination.intrinsic``) is registered once, by the module
that defines it, with `register`: its kind, canonical name, the public vectorised
function that computes it, the scenario key that selects it, the materials it applies
to, whether it depends on the carrier densities, its reference and its aliases.

* `pick(kind, name)`: the `Model` record of a name (case- and separator-insensitive,
  aliases accepted); an unknown name raises `InputError` naming the scenario field and
  listing the canonical names, with a did-you-mean hint.
* `check_material(model, material)`: one `InputError` when a model does not apply to a
  material (e.g. a silicon parametrisation asked for GaAs).
* `models(kind=None)`, `kinds()`: the records, for listings; `markdown()`: the model
  list of the README's "Physics and models" section.
* `choose(field, name, choices)`: the same normalised, alias-aware lookup for any fixed
  set of names (table keys, built-in defects, materials), with the same error.

Kinds: ``ni`` (intrinsic density), ``bgn`` (band-gap narrowing), ``mobility``,
``intrinsic`` (Auger + radiative parametrisation of the recombination), ``bandgap`` and
``mass`` (a material record's band gap Eg(T) and electron mass), ``radiative`` and ``auger``
(a material record's coefficient models), ``light_path``.
"""
from __future__ import annotations

import importlib
import re
from dataclasses import dataclass
from typing import Callable, Iterable, Mapping

from .errors import InputError, did_you_mean

__all__ = ["Model", "register", "pick", "get", "check_material", "models", "kinds", "markdown",
           "normalise", "choose", "KIND_TITLES"]

#: kind -> heading of its list in `markdown` (also the order of the listing)
KIND_TITLES = {
    "ni": "Intrinsic carrier density (`absorber.ni_model`)",
    "bgn": "Band-gap narrowing (`recombination.bandgap_narrowing`)",
    "mobility": "Mobility (`absorber.mobility_model`)",
    "intrinsic": "Intrinsic recombination, Auger + radiative (`recombination.intrinsic`)",
    "bandgap": "Band gap Eg(T) of a material record (`absorber.custom.bandgap_model`)",
    "mass": "Electron mass of a material record (`absorber.custom.mass_model`)",
    "radiative": "Radiative coefficient of a material record (`absorber.custom.radiative_model`)",
    "auger": "Auger coefficients of a material record (`absorber.custom.auger_model`)",
    "light_path": "Light path (`optics.light_path`)",
}

#: modules that register models (imported by `models`, `markdown` and `pick` of a kind not yet seen)
_PROVIDERS = ("optogen.materials", "optogen.equilibrium", "optogen.transport", "optogen.recombination",
              "optogen.optics")


@dataclass(frozen=True)
class Model:
    """One published model.

    kind: what it computes, a key of `KIND_TITLES` [-]
    name: canonical name, as written in scenarios and results [-]
    function: the public vectorised function of the model (its docstring gives the formula,
        units and reference) [-]
    call: the same model with the signature common to its kind (what the core calls; an
        adapter that only normalises arguments, or `function` itself) [-]
    key: the scenario key that selects it (dotted path; the first of `keys`) [-]
    keys: every scenario key that selects it [-]
    materials: material names it applies to; None: any material [-]
    requires: a material attribute that must be set for the model (e.g. "composition_x"), or None [-]
    injection: True when it depends on the carrier densities under light (injection-dependent) [-]
    reference: citation [-]; doi: DOI without the "doi:" prefix, or "" [-]
    aliases: other accepted spellings [-]
    summary: one line for listings [-]
    """

    kind: str
    name: str
    function: Callable
    call: Callable
    keys: tuple[str, ...]
    materials: tuple[str, ...] | None = None
    requires: str | None = None
    injection: bool = False
    reference: str = ""
    doi: str = ""
    aliases: tuple[str, ...] = ()
    summary: str = ""

    @property
    def key(self) -> str:
        """The main scenario key that selects the model [-]."""
        return self.keys[0]


_REGISTRY: dict[str, dict[str, Model]] = {}


def normalise(name) -> str:
    """Lower-case a name and drop separators: "Richter-2012" -> "richter2012".

    Parameters
    ----------
    name : str
        A model, material or key name [-].

    Returns
    -------
    str
        The name without case and separators (space _ - . & , / ( )) [-].
    """
    return re.sub(r"[\s_\-.&,/()]+", "", str(name).lower())


def register(kind: str, name: str, function: Callable, *, key: str | Iterable[str], call: Callable | None = None,
             materials: Iterable[str] | None = None, requires: str | None = None, injection: bool = False,
             reference: str = "", doi: str = "", aliases: Iterable[str] = (), summary: str = "") -> Model:
    """Register one model (called once, by the module that defines it).

    Parameters
    ----------
    kind : str
        A key of `KIND_TITLES` [-].
    name : str
        Canonical name [-].
    function : callable
        The public vectorised function of the model [-].
    key : str or iterable of str
        The scenario key(s) that select the model [-].
    call : callable, optional
        The model with its kind's common signature (default: `function`) [-].
    materials : iterable of str, optional
        Material names the model applies to (default: any) [-].
    requires : str, optional
        A material attribute the model needs (not None) [-].
    injection : bool
        True when the model depends on the carrier densities under light [-].
    reference, doi, summary : str
        Citation, DOI (no "doi:" prefix) and a one-line description [-].
    aliases : iterable of str
        Other accepted spellings [-].

    Returns
    -------
    Model
        The record (also stored in the registry).
    """
    if kind not in KIND_TITLES:
        raise ValueError(f"unknown model kind {kind!r}")
    table = _REGISTRY.setdefault(kind, {})
    if name in table:
        raise ValueError(f"{kind} model {name!r} registered twice")
    keys = (key,) if isinstance(key, str) else tuple(key)
    m = Model(kind, name, function, call or function, keys, None if materials is None else tuple(materials),
              requires, bool(injection), reference, doi, tuple(aliases), summary)
    taken = {normalise(a) for other in table.values() for a in (other.name, *other.aliases)}
    clash = [a for a in (name, *m.aliases) if normalise(a) in taken]
    if clash:
        raise ValueError(f"{kind} model {name!r}: the name or alias {clash[0]!r} is taken")
    table[name] = m
    return m


def _load(kind: str | None = None) -> None:
    if kind is not None and kind in _REGISTRY:
        return
    for mod in _PROVIDERS:
        importlib.import_module(mod)


def choose(field: str, name, choices: Iterable[str], aliases: Mapping[str, str] | None = None, *,
           exact: bool = False, allowed: str | None = None) -> str:
    """The canonical name among `choices` that `name` stands for.

    Parameters
    ----------
    field : str
        Dotted scenario field named in the error [-].
    name : str
        The name given [-].
    choices : iterable of str
        Canonical names [-].
    aliases : mapping, optional
        Other spellings -> canonical name [-].
    exact : bool
        Compare as written (table keys) instead of case- and separator-insensitively [-].
    allowed : str, optional
        Text of what is allowed in the error (default "one of " + the sorted choices) [-].

    Returns
    -------
    str
        The canonical name [-].

    Raises
    ------
    InputError
        For an unknown name: names the field and the choices, with a did-you-mean hint.
    """
    choices = list(choices)
    norm = (lambda s: str(s)) if exact else normalise
    canon = {norm(c): c for c in choices}
    for alias, target in (aliases or {}).items():
        canon.setdefault(norm(alias), target)
    key = norm(name)
    if key not in canon:
        raise InputError(field, name, allowed or ("one of " + ", ".join(sorted(choices))),
                         did_you_mean(key, list(canon)))
    return canon[key]


def pick(kind: str, name, field: str | None = None) -> Model:
    """The registered model of `kind` called `name` (case/separator-insensitive; aliases).

    Parameters
    ----------
    kind : str
        A key of `KIND_TITLES` [-].
    name : str
        Model name or alias [-].
    field : str, optional
        Scenario field named in the error (default: the kind's main scenario key) [-].

    Returns
    -------
    Model

    Raises
    ------
    InputError
        For an unknown name, listing the canonical names with a did-you-mean hint.
    """
    _load(kind)
    table = _REGISTRY[kind]
    if field is None:
        field = next(iter(table.values())).key
    aliases = {a: m.name for m in table.values() for a in m.aliases}
    return table[choose(field, name, table, aliases)]


def get(kind: str, name: str) -> Model:
    """The model of `kind` by its canonical name (no normalisation).

    Parameters
    ----------
    kind : str
        A key of `KIND_TITLES` [-].
    name : str
        Canonical name [-].

    Returns
    -------
    Model

    Raises
    ------
    KeyError
        If no such model is registered.
    """
    _load(kind)
    return _REGISTRY[kind][name]


def applies(model: Model, material) -> bool:
    """True when `model` applies to `material` (its name and required attributes).

    Parameters
    ----------
    model : Model
    material : optogen.materials.Material

    Returns
    -------
    bool
    """
    if model.materials is not None and getattr(material, "name", None) not in model.materials:
        return False
    return model.requires is None or getattr(material, model.requires, None) is not None


def check_material(model: Model, material, field: str | None = None, value=None) -> Model:
    """Raise one `InputError` unless `model` applies to `material`; returns `model`.

    Parameters
    ----------
    model : Model
    material : optogen.materials.Material
    field : str, optional
        Scenario field named in the error (default: the model's key) [-].
    value : optional
        The value shown in the error (default: the model's name) [-].

    Returns
    -------
    Model
        `model` itself.

    Raises
    ------
    InputError
        Naming the field, the model, the material and the models that do apply.
    """
    if applies(model, material):
        return model
    name = getattr(material, "name", material)
    if model.materials is not None and name not in model.materials:
        why = f"{model.name} is for {', '.join(model.materials)} only"
    else:
        why = f"{model.name} needs a material with {model.requires}"
    fits = [m.name for m in _REGISTRY[model.kind].values() if applies(m, material)]
    raise InputError(field or model.key, model.name if value is None else value,
                     f"a model that applies to {name}: {why}",
                     ("use " + " or ".join(fits)) if fits else None)


def kinds() -> list[str]:
    """The model kinds, in listing order.

    Returns
    -------
    list of str
        Keys of `KIND_TITLES` that have registered models [-].
    """
    _load()
    return [k for k in KIND_TITLES if k in _REGISTRY]


def models(kind: str | None = None, *, load: bool = True) -> list[Model]:
    """The registered models, of one kind or all (in listing order).

    Parameters
    ----------
    kind : str, optional
        A key of `KIND_TITLES`; None: every kind [-].
    load : bool
        Import every module that registers models first (False: only those registered so
        far, for use while the package is being imported) [-].

    Returns
    -------
    list of Model
    """
    if load:
        _load()
    if kind is not None:
        if kind not in _REGISTRY:
            raise InputError("kind", kind, "one of " + ", ".join(kinds()), did_you_mean(kind, kinds()))
        return list(_REGISTRY[kind].values())
    return [m for k in kinds() for m in _REGISTRY[k].values()]


def _line(m: Model) -> str:
    where = "any material" if m.materials is None else ", ".join(m.materials) + " only"
    if m.requires:
        where += f" (needs `{m.requires}`)"
    bits = [f"- `{m.name}`: {m.summary}" if m.summary else f"- `{m.name}`",
            f" [{where}{'; injection-dependent' if m.injection else ''}]"]
    if m.reference:
        bits.append(f". {m.reference}")
        if m.doi:
            bits.append(f", doi:{m.doi}")
    if m.aliases:
        bits.append(". Also: " + ", ".join(f"`{a}`" for a in m.aliases))
    return "".join(bits)


def markdown() -> str:
    """The list of models as markdown (the README's generated model list).

    Returns
    -------
    str
        One bold heading line per kind followed by one bullet per model: canonical name,
        summary, materials, injection dependence, reference with DOI, aliases.
    """
    out = []
    for k in kinds():
        out.append(f"**{KIND_TITLES[k]}**")
        out.append("")
        out.extend(_line(m) for m in _REGISTRY[k].values())
        out.append("")
    return "\n".join(out).rstrip("\n") + "\n"
