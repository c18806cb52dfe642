"""Materials: the `Material` record, the built-in absorbers and their sources.

Every parameter of a built-in material carries its published source in
`Material.sources` (field name -> citation).  Values recalled rather than
copied from a paper are marked "(from memory)" there; "common practice" marks
a convention of the trade rather than a measurement.

Field names carry their unit, and they are also the keys of an
``[absorber.custom]`` table in a scenario file (`material_from_table`).

Layout (one file per topic): `record` (the `Material`, `Dopant` and `CaugheyThomas`
records), `relations` (published relations the records use), one file per material
family (`silicon`, `germanium`, `iii_v`, `ii_vi`), `custom` (``[absorber.custom]`` tables),
`optical` (optical constants; its docstring gives their conventions), `describe` (the
``optogen materials NAME`` description).  This module holds the registry of built-in
materials (`BUILTIN`, `ALIASES`, `names`, `get`) and re-exports the public names.
"""
from __future__ import annotations

from ..registry import normalise
from ..errors import InputError, did_you_mean
from .record import Dopant, CaugheyThomas, Material
from .relations import (bandgap_hansen1982, electron_mass_weiler1981, mean_thermal_speed_cm_s,
                        hydrogenic_binding_eV, radiative_hall1959, auger1_beattie_landsberg1959)
from .silicon import SILICON
from .germanium import GERMANIUM
from .iii_v import GALLIUM_ARSENIDE, INDIUM_PHOSPHIDE, INGAAS, INDIUM_ANTIMONIDE
from .ii_vi import CADMIUM_TELLURIDE, HGCDTE_X_MIN, permittivity_hgcdte, mobility_hgcdte_rosbeck1982, hgcdte
from .custom import validate, material_from_table
from .optical import (OpticalConstants, decode_tabulated, page_temperature_K, absorption_edge_A_kane,
                      absorption_sqrt_urbach, optical_constants, optical_temperature_rule, shortest_wavelength_nm)
from .describe import describe

BUILTIN: dict[str, Material] = {m.name: m for m in (
    SILICON, GERMANIUM, GALLIUM_ARSENIDE, INDIUM_PHOSPHIDE, INGAAS, CADMIUM_TELLURIDE, INDIUM_ANTIMONIDE)}

#: accepted spellings (normalised: case and separators ignored) -> canonical name
ALIASES = {"In0.53Ga0.47As": "InGaAs", "Ga0.47In0.53As": "InGaAs", "GaInAs": "InGaAs",
           "Hg(1-x)Cd(x)Te": "HgCdTe", "Hg1-xCdxTe": "HgCdTe", "MCT": "HgCdTe",
           "silicon": "Si", "germanium": "Ge"}


def names() -> list[str]:
    """Names of the built-in materials.

    Returns
    -------
    list of str
        Sorted names, "HgCdTe" included [-].
    """
    return sorted(BUILTIN) + (["HgCdTe"] if "HgCdTe" not in BUILTIN else [])


def get(name: str, composition_x: float | None = None) -> Material:
    """A built-in material by name (case- and separator-insensitive; aliases such as "In0.53Ga0.47As").

    Parameters
    ----------
    name : str
        E.g. "Si", "GaAs", "InGaAs", "HgCdTe" [-].
    composition_x : float, optional
        Cd fraction for HgCdTe, required there and rejected elsewhere [-].

    Returns
    -------
    Material
        The built-in record.
    """
    canon = {normalise(k): k for k in names()}
    canon.update({normalise(a): k for a, k in ALIASES.items()})
    key = canon.get(normalise(name))
    if key is None:
        raise InputError("absorber.material", name, "one of " + ", ".join(names()),
                         did_you_mean(name, names()))
    if key == "HgCdTe":
        if composition_x is None:
            raise InputError("absorber.composition_x", None, f"a Cd fraction in [{HGCDTE_X_MIN}, 1] for HgCdTe")
        return hgcdte(composition_x)
    if composition_x is not None:
        raise InputError("absorber.composition_x", composition_x, f"only for HgCdTe, not {key}")
    return BUILTIN[key]


__all__ = ["ALIASES", "BUILTIN", "CADMIUM_TELLURIDE", "CaugheyThomas", "Dopant", "GALLIUM_ARSENIDE", "GERMANIUM",
           "HGCDTE_X_MIN", "INDIUM_ANTIMONIDE", "INDIUM_PHOSPHIDE", "INGAAS", "Material", "OpticalConstants",
           "SILICON", "absorption_edge_A_kane", "absorption_sqrt_urbach", "auger1_beattie_landsberg1959",
           "bandgap_hansen1982", "decode_tabulated", "describe", "electron_mass_weiler1981", "get", "hgcdte",
           "hydrogenic_binding_eV", "material_from_table", "mean_thermal_speed_cm_s",
           "mobility_hgcdte_rosbeck1982", "names", "optical_constants", "optical_temperature_rule",
           "page_temperature_K", "permittivity_hgcdte", "radiative_hall1959", "shortest_wavelength_nm",
           "validate"]
