"""Every public function and class carries a numpydoc docstring, with units in one spelling.

The numpydoc layout (a one-line summary, then ``Parameters`` / ``Returns`` sections, each a title
underlined with dashes, each entry ``name : type``) is the numpydoc docstring standard
(https://numpydoc.readthedocs.io/en/latest/format.html, common practice in scientific Python).
The unit spelling (a caret before each exponent, a space between factors: ``cm^-3 s^-1``) is the
UDUNITS symbol form that DEVELOPERS.md "Nomenclature" adopts.

``MODULES`` lists the modules checked; extend it (or pass another list to ``problems``) to cover
more of optogen.  ``problems(names)`` returns one line per fault, so a failure names every fault
at once.
"""
from __future__ import annotations

import ast
import dataclasses
import importlib
import inspect
import re
import textwrap

import pytest

MODULES = [
    "optogen.constants",
    "optogen.errors",
    "optogen.schema",
    "optogen.scenario",
    "optogen.light",
    "optogen.optics",
    "optogen.generation",
    "optogen.profile",
    "optogen.detector",
    "optogen.report",
    "optogen.plots",
    "optogen.materials",
    "optogen.materials._shared",
    "optogen.materials.custom",
    "optogen.materials.describe",
    "optogen.materials.germanium",
    "optogen.materials.ii_vi",
    "optogen.materials.iii_v",
    "optogen.materials.optical",
    "optogen.materials.silicon",
    "optogen",
    "optogen._data",
    "optogen._version",
    "optogen.cli",
    "optogen.equilibrium",
    "optogen.equilibrium.bgn",
    "optogen.equilibrium.fermi_dirac",
    "optogen.equilibrium.intrinsic_density",
    "optogen.equilibrium.ionisation",
    "optogen.equilibrium.neutrality",
    "optogen.pipeline",
    "optogen.pipeline.point",
    "optogen.pipeline.result",
    "optogen.pipeline.setup",
    "optogen.pipeline.sweep",
    "optogen.recombination",
    "optogen.recombination.intrinsic",
    "optogen.recombination.product",
    "optogen.recombination.rates",
    "optogen.recombination.srh",
    "optogen.recombination.surface",
    "optogen.steady_state",
    "optogen.transport",
]

#: old unit spellings (DEVELOPERS.md "Nomenclature": `cm^-3`, `cm^-2 s^-1`, `mA cm^-2`)
OLD_UNIT = re.compile(r"cm-\d|cm⁻|/cm2|/cm\^2")

_SECTION = re.compile(r"^(\w[\w ]*)\n-{3,}\s*$", re.MULTILINE)


def sections(doc: str) -> dict[str, str]:
    """The numpydoc sections of a docstring: title -> body text."""
    doc = inspect.cleandoc(doc)
    found = list(_SECTION.finditer(doc))
    out = {}
    for i, m in enumerate(found):
        end = found[i + 1].start() if i + 1 < len(found) else len(doc)
        out[m.group(1).strip()] = doc[m.end():end]
    return out


def documented_names(body: str) -> set[str]:
    """The entry names of a Parameters section (``a, b : float`` gives a and b)."""
    names = set()
    for line in body.splitlines():
        if not line or line[0].isspace():
            continue
        head = line.split(" : ")[0].strip()
        for name in head.split(","):
            names.add(name.strip().lstrip("*"))
    return names


def _own_body(fn_node):
    """The nodes of a function body, not descending into nested functions or classes."""
    stack = list(fn_node.body)
    while stack:
        node = stack.pop()
        yield node
        for child in ast.iter_child_nodes(node):
            if not isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef, ast.Lambda)):
                stack.append(child)


def returns_value(fn) -> tuple[bool, bool]:
    """(has a ``return <value>``, has a ``yield <value>``) in the function's own source."""
    try:
        src = textwrap.dedent(inspect.getsource(fn))
    except (OSError, TypeError):
        return False, False
    tree = ast.parse(src)
    node = next(n for n in ast.walk(tree) if isinstance(n, (ast.FunctionDef, ast.AsyncFunctionDef)))
    ret = yld = False
    for n in _own_body(node):
        if isinstance(n, ast.Return) and n.value is not None and not (
                isinstance(n.value, ast.Constant) and n.value.value is None):
            ret = True
        if isinstance(n, (ast.Yield, ast.YieldFrom)) and n.value is not None:
            yld = True
    return ret, yld


def _arguments(fn, skip_first: bool) -> list[str]:
    params = list(inspect.signature(fn).parameters.values())
    if skip_first and params:
        params = params[1:]
    return [p.name for p in params]


def _check_function(where: str, fn, doc: str | None, skip_first: bool, out: list[str]):
    if not doc or not doc.strip():
        out.append(f"{where}: no docstring")
        return
    secs = sections(doc)
    args = _arguments(fn, skip_first)
    if args:
        if "Parameters" not in secs:
            out.append(f"{where}: no Parameters section (takes {', '.join(args)})")
        else:
            missing = [a for a in args if a not in documented_names(secs["Parameters"])]
            if missing:
                out.append(f"{where}: Parameters does not document {', '.join(missing)}")
    ret, yld = returns_value(fn)
    if ret and "Returns" not in secs:
        out.append(f"{where}: returns a value but has no Returns section")
    if yld and "Yields" not in secs and "Returns" not in secs:
        out.append(f"{where}: yields a value but has no Yields section")


def _check_class(where: str, cls, out: list[str]):
    doc = cls.__dict__.get("__doc__")
    if not doc or not doc.strip():
        out.append(f"{where}: no docstring")
        return
    secs = sections(doc)
    init = cls.__dict__.get("__init__")
    if init is None and hasattr(cls, "_fields"):        # a NamedTuple: its fields are the arguments
        init = cls.__dict__.get("__new__")
    if init is not None:
        args = _arguments(init, skip_first=True)
        if args:
            documented = set()
            for title in ("Parameters", "Attributes"):
                documented |= documented_names(secs.get(title, ""))
            if "Parameters" not in secs and "Attributes" not in secs:
                out.append(f"{where}: no Parameters section (the constructor takes {', '.join(args)})")
            else:
                missing = [a for a in args if a not in documented]
                if missing:
                    out.append(f"{where}: Parameters does not document {', '.join(missing)}")
    for name, member in vars(cls).items():
        if name.startswith("_"):
            continue
        if isinstance(member, property):
            if not (member.fget.__doc__ or "").strip():
                out.append(f"{where}.{name}: no docstring")
            continue
        if isinstance(member, (staticmethod, classmethod)):
            fn = member.__func__
            _check_function(f"{where}.{name}", fn, fn.__doc__, isinstance(member, classmethod), out)
        elif inspect.isfunction(member):
            _check_function(f"{where}.{name}", member, member.__doc__, True, out)


def _public(module):
    """The public functions and classes a module defines itself (not those it imports)."""
    for name, obj in vars(module).items():
        if name.startswith("_"):
            continue
        if (inspect.isfunction(obj) or inspect.isclass(obj)) and obj.__module__ == module.__name__:
            yield name, obj


def problems(module_names) -> list[str]:
    """Every docstring fault in the named modules, one line each."""
    out = []
    for mod_name in module_names:
        module = importlib.import_module(mod_name)
        for name, obj in _public(module):
            where = f"{mod_name}.{name}"
            if inspect.isclass(obj):
                _check_class(where, obj, out)
            else:
                _check_function(where, obj, obj.__doc__, False, out)
    return out


def unit_problems(module_names) -> list[str]:
    """Old unit spellings in the docstrings of the named modules (module, functions, classes)."""
    out = []
    for mod_name in module_names:
        module = importlib.import_module(mod_name)
        docs = [(mod_name, module.__doc__)]
        for name, obj in _public(module):
            docs.append((f"{mod_name}.{name}", obj.__doc__))
            if inspect.isclass(obj):
                for mname, member in vars(obj).items():
                    fn = getattr(member, "fget", None) or getattr(member, "__func__", member)
                    if callable(fn) and not mname.startswith("__"):
                        docs.append((f"{mod_name}.{name}.{mname}", getattr(fn, "__doc__", None)))
        for where, doc in docs:
            for m in OLD_UNIT.finditer(doc or ""):
                out.append(f"{where}: old unit spelling {m.group(0)!r}")
    return out


# --- the checker checks: hand-made docstrings with known faults --------------------------------

def _good(x_K, y_cm3=1.0):
    """Sum of two numbers.

    Parameters
    ----------
    x_K : float
        Temperature [K].
    y_cm3 : float, optional
        Density [cm^-3].

    Returns
    -------
    float
        The sum.
    """
    return x_K + y_cm3


def _no_returns(x_K):
    """Twice a number.

    Parameters
    ----------
    x_K : float
        Temperature [K].
    """
    return 2 * x_K


def _undocumented_arg(x_K, y):
    """Nothing.

    Parameters
    ----------
    x_K : float
        Temperature [K].
    """


def test_checker_finds_known_faults():
    out = []
    _check_function("good", _good, _good.__doc__, False, out)
    assert out == []
    _check_function("no_returns", _no_returns, _no_returns.__doc__, False, out)
    assert out == ["no_returns: returns a value but has no Returns section"]
    out.clear()
    _check_function("undocumented", _undocumented_arg, _undocumented_arg.__doc__, False, out)
    assert out == ["undocumented: Parameters does not document y"]
    assert OLD_UNIT.search("density [cm-3]") and OLD_UNIT.search("J [mA/cm2]")
    assert OLD_UNIT.search("flux [/cm^2/s]") and OLD_UNIT.search("[cm⁻³]")
    assert not OLD_UNIT.search("density [cm^-3], flux [cm^-2 s^-1], J [mA cm^-2]")


@dataclasses.dataclass
class _Record:
    """A record.

    Parameters
    ----------
    a_K : float
        Temperature [K].
    """

    a_K: float
    b_cm3: float


def test_checker_finds_undocumented_field():
    out = []
    _check_class("rec", _Record, out)
    assert out == ["rec: Parameters does not document b_cm3"]


# --- the modules --------------------------------------------------------------------------------

@pytest.mark.parametrize("module", MODULES)
def test_numpydoc_sections(module):
    found = problems([module])
    assert not found, "\n".join(found)


@pytest.mark.parametrize("module", MODULES)
def test_unit_spelling_in_docstrings(module):
    found = unit_problems([module])
    assert not found, "\n".join(found)
