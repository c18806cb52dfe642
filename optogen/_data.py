"""Where the bundled data live: `spectra/` (standard spectra) and `scenarios/` (demo scenarios).

Both are top-level folders of the source tree, installed as the packages ``optogen.spectra``
and ``optogen.scenarios`` (pyproject's package-dir).  From an installed wheel or an editable
install they are found as package resources; when the package is imported straight from a
checkout (``python -m pytest`` puts the checkout first on sys.path, where ``optogen/`` has
no such subpackages) they are the checkout's own folders.
"""
from __future__ import annotations

from importlib.resources import files
from pathlib import Path

BUNDLED = ("spectra", "scenarios")


def data_dir(name: str):
    """The folder of bundled data `name` ("spectra" or "scenarios").

    Parameters
    ----------
    name : {"spectra", "scenarios"}
        Which bundled folder.

    Returns
    -------
    importlib.resources.abc.Traversable or pathlib.Path
        The package resource folder, or the checkout's own folder when imported from a
        source tree without its package-dir mapping.

    Raises
    ------
    KeyError
        For a name not in `BUNDLED`.
    """
    if name not in BUNDLED:
        raise KeyError(name)
    try:
        return files(f"optogen.{name}")
    except ModuleNotFoundError:     # imported from a checkout without its package-dir mapping
        return Path(__file__).resolve().parent.parent / name
