"""The model registry: one record per published model, lookup by kind, the README model list."""
import re
from pathlib import Path

import numpy as np
import pytest

from optogen import materials, registry
from optogen.equilibrium import bgn_eV, ni_cm3
from optogen.errors import InputError
from optogen.recombination import Recombination, intrinsic_rates_cm3_s
from optogen.transport import mobility_cm2_Vs

ROOT = Path(__file__).resolve().parents[1]
SI = materials.get("Si")
GAAS = materials.get("GaAs")


def test_readme_model_list_is_the_generated_one():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    m = re.search(r"<!-- models:start -->\n(.*?)<!-- models:end -->", text, flags=re.S)
    assert m, "README.md has no generated model list"
    assert m.group(1) == registry.markdown()


def test_every_kind_has_models_and_every_record_is_complete():
    assert registry.kinds() == ["ni", "bgn", "mobility", "intrinsic", "radiative", "auger", "light_path"]
    for m in registry.models():
        assert callable(m.function) and callable(m.call)
        assert m.keys and all("." in k for k in m.keys)
        assert m.function.__doc__, m.name                 # the public function carries formula and units
        assert registry.pick(m.kind, m.name) is m
        for a in m.aliases:
            assert registry.pick(m.kind, a) is m


def test_pick_is_case_and_separator_insensitive():
    assert registry.pick("intrinsic", "Richter-2012").name == "richter2012"
    assert registry.pick("bgn", "SCHENK 1998").name == "schenk1998"
    assert registry.pick("light_path", "Beer-Lambert").name == "single"


def test_unknown_name_lists_the_canonical_names_with_a_hint():
    with pytest.raises(InputError) as err:
        registry.pick("mobility", "klasen1992")
    assert err.value.field == "absorber.mobility_model"
    assert all(name in str(err.value) for name in ("caughey_thomas", "klaassen1992", "masetti1983"))
    assert "did you mean" in (err.value.hint or "")


def test_scenario_keys_select_the_kinds():
    # schema keys that name models map onto exactly one kind each
    from optogen import schema
    by_key = {}
    for m in registry.models():
        for k in m.keys:
            by_key.setdefault(k, set()).add(m.kind)
    assert all(len(v) == 1 for v in by_key.values())
    named = [k.path for k in schema.KEYS.values() if k.models and not k.models.startswith("materials.")]
    assert named and all(p in by_key for p in named)


@pytest.mark.parametrize("call, field", [
    (lambda: ni_cm3(GAAS, 300.0, model="misiakos1993"), "absorber.ni_model"),
    (lambda: bgn_eV(GAAS, 300.0, 1e16, 0.0, model="schenk1998"), "recombination.bandgap_narrowing"),
    (lambda: mobility_cm2_Vs(GAAS, 300.0, 1e16, 0.0, model="klaassen1992"), "absorber.mobility_model"),
    (lambda: Recombination(intrinsic="richter2012").intrinsic_model(GAAS), "recombination.intrinsic"),
    (lambda: intrinsic_rates_cm3_s("kerr_cuevas2002", 1e15, 1e5, 1e15, material=GAAS), "recombination.intrinsic"),
])
def test_a_silicon_model_on_another_material_is_one_input_error(call, field):
    with pytest.raises(InputError) as err:
        call()
    assert err.value.field == field
    assert "GaAs" in str(err.value) and "Si only" in str(err.value)


def test_injection_flag_drives_the_rates():
    # Schenk 1998 depends on n and p (injection), Klaassen 1992 narrowing on the doping only
    assert registry.get("bgn", "schenk1998").injection and not registry.get("bgn", "klaassen1992").injection
    eq = type("Eq", (), {"bgn_model": "schenk1998"})()
    assert Recombination().uses_injection_bgn(eq)
    eq.bgn_model = "klaassen1992"
    assert not Recombination().uses_injection_bgn(eq)


def test_default_intrinsic_model_follows_the_metadata():
    assert Recombination().intrinsic_model(SI) == "richter2012"
    assert Recombination().intrinsic_model(GAAS) == "constant"


def test_choose_for_table_keys_is_exact():
    with pytest.raises(InputError) as err:
        registry.choose("recombination.B_Rel", "B_Rel", ["B_rel", "photon_recycling"], exact=True)
    assert "did you mean 'B_rel'?" in err.value.hint
    assert registry.choose("x", "b-rel", ["B_rel"]) == "B_rel"


def test_full_ionisation_is_one_definition():
    # transport's resistivity state and the equilibrium's start are the same function:
    # n0 = N/2 + sqrt(N^2/4 + n_i^2), p0 = n_i^2 / n0 (analytic), here N = 1e15, n_i = 1e10
    from optogen.equilibrium import full_ionisation_cm3
    n, p = full_ionisation_cm3(1e15, 0.0, np.log(1e10))
    assert n == pytest.approx(5e14 + np.sqrt(2.5e29 + 1e20), rel=1e-15)
    assert p == pytest.approx(1e20 / n, rel=1e-14)
    from optogen.equilibrium import ni_nc_nv_eg
    from optogen.transport import carriers_full_ionisation
    T = np.array([77.0, 300.0, 600.0])
    nt, pt = carriers_full_ionisation(SI, T, 1e15, 0.0)
    ne, pe = full_ionisation_cm3(1e15, 0.0, ni_nc_nv_eg(SI, T, log=True))
    assert np.array_equal(nt, ne) and np.array_equal(pt, pe)
