"""The layout: the DEVELOPERS.md module table matches the package, no import runs back up the chain,
and the test tree mirrors the package.

What is compared is the tree on disk and the import statements parsed with `ast` (nothing is
imported); relative imports are resolved as the Python language reference (section 5.7, "The
import system"; PEP 328) defines them: one leading dot is the module's own package, each further
dot one package up.  The chain is the one DEVELOPERS.md draws ("Data flows one way"):
materials -> equilibrium -> light, optics -> generation -> recombination -> steady_state ->
profile / detector -> pipeline -> report / plots / cli, `analysis` beside `pipeline`.
"""
from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

from conftest import ROOT

PKG = ROOT / "optogen"
TESTS = ROOT / "tests"

#: the upper layer: everything that is not the core (the package __init__ is "optogen")
UPPER = ("optogen", "optogen.pipeline", "optogen.analysis", "optogen.report", "optogen.plots", "optogen.cli")

#: rank of each core module in the chain (a module may import only modules of its rank or lower);
#: the foundation (rank 0) is what every layer may use: constants, errors, the schema, the registry,
#: the scenario reader, the version and the data folders.  transport sits with light and optics: it
#: needs the materials and the equilibrium and is used by the detector.
CORE_RANK = {
    "optogen._version": 0, "optogen._data": 0, "optogen.constants": 0, "optogen.errors": 0,
    "optogen.registry": 0, "optogen.schema": 0, "optogen.scenario": 0,
    "optogen.materials": 1,
    "optogen.equilibrium": 2,
    "optogen.light": 3, "optogen.optics": 3, "optogen.transport": 3,
    "optogen.generation": 4,
    "optogen.recombination": 5,
    "optogen.steady_state": 6,
    "optogen.profile": 7, "optogen.detector": 7,
}


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _exists(module: str) -> bool:
    base = ROOT.joinpath(*module.split("."))
    return base.with_suffix(".py").is_file() or (base / "__init__.py").is_file()


def _imports(path: Path) -> set[str]:
    """The optogen modules `path` imports (anywhere in the file, function-level imports included).

    ``from P import name`` counts as importing ``P.name`` when that is a module, else as importing
    ``P`` itself (its __init__ namespace)."""
    me = _module_name(path)
    package = me.split(".") if path.name == "__init__.py" else me.split(".")[:-1]
    found = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found |= {a.name for a in node.names if a.name.split(".")[0] == "optogen"}
        elif isinstance(node, ast.ImportFrom):
            if node.level:                               # PEP 328: level 1 = own package
                base = package[:len(package) - (node.level - 1)]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            if module.split(".")[0] != "optogen":
                continue
            for a in node.names:
                sub = f"{module}.{a.name}"
                found.add(sub if _exists(sub) else module)
    return found


def _top(module: str) -> str:
    """optogen.materials.record -> optogen.materials; optogen -> optogen."""
    return ".".join(module.split(".")[:2])


SOURCES = sorted(PKG.rglob("*.py"))


def _layout_table() -> dict[str, str]:
    """First cell -> second cell of the module table in the DEVELOPERS.md Layout section."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = re.search(r"^## Layout\n(.*?)^## ", text, flags=re.S | re.M)
    assert section, "DEVELOPERS.md has no Layout section"
    rows = re.findall(r"^\| `([^`|]+)` \| (.*) \|$", section.group(1), flags=re.M)
    assert rows, "the Layout section has no module table"
    return dict(rows)


def test_layout_table_names_every_module_and_nothing_else():
    table = set(_layout_table())
    tree = {p.stem for p in PKG.glob("*.py") if p.name != "__init__.py"}
    tree |= {d.name + "/" for d in PKG.iterdir() if (d / "__init__.py").is_file()}
    assert not tree - table, f"modules missing from the DEVELOPERS.md Layout table: {sorted(tree - table)}"
    assert not table - tree, f"the Layout table names what optogen/ does not hold: {sorted(table - tree)}"


def test_layout_table_names_every_public_module_of_a_subpackage():
    # a subpackage's row names each of its modules in backticks; a private helper module
    # (leading underscore, e.g. materials/_shared.py) may be left out
    for name, owns in _layout_table().items():
        if not name.endswith("/"):
            continue
        words = set(re.findall(r"`([A-Za-z_][A-Za-z0-9_]*)", owns))
        modules = {p.stem for p in (PKG / name).glob("*.py") if not p.name.startswith("_")}
        assert not modules - words, f"optogen/{name}: {sorted(modules - words)} not named in its Layout row"


@pytest.mark.parametrize("path", [p for p in SOURCES if _top(_module_name(p)) not in UPPER],
                         ids=lambda p: str(p.relative_to(PKG)))
def test_core_module_does_not_import_up_the_chain(path):
    me = _top(_module_name(path))
    assert me in CORE_RANK, f"{me} is neither core (CORE_RANK) nor upper layer (UPPER): place it"
    for target in _imports(path):
        top = _top(target)
        assert top not in UPPER, f"{path.relative_to(ROOT)} imports {target} (up the chain)"
        assert CORE_RANK[top] <= CORE_RANK[me], \
            f"{path.relative_to(ROOT)} (rank {CORE_RANK[me]}) imports {target} (rank {CORE_RANK[top]}): up the chain"


def test_nothing_imports_the_package_init_the_cli_or_the_analysis_from_outside():
    # the package __init__ only re-exports; the CLI is the top; `analysis` sits beside `pipeline`
    # and only the CLI (and the analysis itself) reaches it
    for path in SOURCES:
        me = _module_name(path)
        for target in _imports(path):
            assert target != "optogen", f"{path.relative_to(ROOT)} imports the package __init__"
            if me != "optogen":
                assert _top(target) != "optogen.cli", f"{path.relative_to(ROOT)} imports the CLI"
            if _top(me) not in ("optogen", "optogen.cli", "optogen.analysis"):
                assert _top(target) != "optogen.analysis", f"{path.relative_to(ROOT)} imports optogen.analysis"


def test_import_resolution_on_known_cases():
    # the resolver itself, on imports whose targets are written out by hand (PEP 328)
    got = _imports(PKG / "materials" / "record.py")
    assert {"optogen.registry", "optogen.constants", "optogen.errors", "optogen.materials.relations"} <= got
    assert _imports(PKG / "errors.py") == set()


def test_test_folders_mirror_subpackages_and_names_are_unique():
    # a folder of tests/ is named for a subpackage of optogen/ (benchmarks/: scripts, not collected);
    # basenames are unique because pytest's default "prepend" import mode imports each test file by
    # its basename (pytest documentation, "Choosing a test layout")
    subpackages = {d.name for d in PKG.iterdir() if (d / "__init__.py").is_file()}
    folders = {d.name for d in TESTS.iterdir() if d.is_dir() and not d.name.startswith(("_", "."))}
    assert folders - {"benchmarks"} <= subpackages, sorted(folders - {"benchmarks"} - subpackages)
    files = [p for p in TESTS.rglob("test_*.py") if "benchmarks" not in p.parts]
    names = [p.name for p in files]
    assert len(names) == len(set(names)), sorted(n for n in names if names.count(n) > 1)
    assert not list(TESTS.rglob("conftest.py"))[1:], "one conftest.py, at tests/"
