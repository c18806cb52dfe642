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
    assert registry.kinds() == ["ni", "bgn", "mobility", "intrinsic", "bandgap", "mass", "radiative", "auger",
                                "light_path"]
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
    named = [k for k in schema.KEYS.values() if k.models and not k.models.startswith("materials.")]
    assert named and all(k.path in by_key for k in named)
    # each names the kind it checks ("registry:KIND"), the kind of the models that key selects
    for k in named:
        assert k.models == "registry:" + by_key[k.path].pop(), k.path
    # every registered scenario key is declared with models= in the schema
    assert {k.path for k in named} == set(by_key)


def test_schema_choices_of_a_model_key_are_the_canonical_names():
    # a model key that also lists choices (for the JSON Schema enum) lists exactly the registry's names
    from optogen import schema
    keys = [k for k in schema.KEYS.values() if k.models and k.models.startswith("registry:") and k.choices]
    assert {k.path for k in keys} >= {"absorber.custom.bandgap_model", "absorber.custom.mass_model"}
    for k in keys:
        assert set(k.choices) == {m.name for m in registry.models(k.models.split(":", 1)[1])}, k.path


def test_check_models_reads_the_kind_of_each_key():
    from optogen import schema
    with pytest.raises(InputError) as err:
        schema.check_models({"absorber": {"custom": {"mass_model": "weiler1918"}}})
    assert err.value.field == "absorber.custom.mass_model"
    assert "did you mean" in (err.value.hint or "") and "weiler1981" in err.value.hint


def test_bandgap_and_mass_models_of_the_record():
    # Varshni 1967 with the Si parameters of Thurmond 1975 (J. Electrochem. Soc. 122, 1133, from memory):
    # Eg(300 K) = 1.17 - 4.73e-4 * 300^2 / (300 + 636) = 1.17 - 42.57 / 936 = 1.124519 eV (worked by hand)
    varshni = registry.pick("bandgap", "Varshni")
    assert varshni.function(300.0, 1.17, 4.73e-4, 636.0) == pytest.approx(1.124519, abs=1e-6)
    si = SI.with_(eg0_eV=1.17, varshni_alpha_eV_K=4.73e-4, varshni_beta_K=636.0)
    assert si.bandgap_eV(300.0) == pytest.approx(1.124519, abs=1e-6)
    # Weiler 1981 Kane mass: m0/me = 1 + 2F + Ep/3 (2/Eg + 1/(Eg + Delta)); Eg = 0.1, Ep = 19, Delta = 1,
    # F = -0.8: -0.6 + 6.33333 * (20 + 0.909091) = 131.8242, me = 0.0075859 m0 (worked by hand)
    weiler = registry.pick("mass", "Weiler-1981")
    assert weiler.function(0.1, 19.0, 1.0, -0.8) == pytest.approx(0.0075859, rel=1e-4)
    # names are looked up in the registry, so any accepted spelling selects the model
    hg = materials.get("HgCdTe", composition_x=0.2)
    T = np.array([77.0, 300.0])
    assert np.array_equal(hg.with_(mass_model="Weiler-1981").electron_mass_m0(T), hg.electron_mass_m0(T))
    assert np.array_equal(hg.with_(bandgap_model="HANSEN 1982").bandgap_eV(T), hg.bandgap_eV(T))
    # the constant model is the record's own mass
    assert np.array_equal(SI.electron_mass_m0(T), [SI.me_dos_m0] * 2)


def test_electron_thermal_speed_follows_the_mass_model():
    # with a temperature-dependent mass: v = sqrt(8 k T / (pi m_e m0)) (Maxwell-Boltzmann mean speed, analytic;
    # k, m_e from scipy.constants); with the record's constant mass: v_300K sqrt(T / 300) (the record's law)
    from scipy import constants as sc
    hg = materials.get("HgCdTe", composition_x=0.3)
    T = 120.0
    v_e, _ = hg.vth_cm_s(T)
    expected = 100.0 * np.sqrt(8 * sc.k * T / (np.pi * hg.electron_mass_m0(T) * sc.m_e))
    assert v_e == pytest.approx(expected, rel=1e-9)
    flat = hg.with_(mass_model="constant")
    assert flat.vth_cm_s(T)[0] == pytest.approx(hg.vth_e_300K_cm_s * np.sqrt(T / 300.0), rel=1e-15)


def test_hansen_gap_needs_a_composition():
    # the registry's requires= metadata: one InputError instead of a NaN gap
    with pytest.raises(InputError) as err:
        SI.with_(bandgap_model="hansen1982").bandgap_eV(300.0)
    assert err.value.field == "absorber.custom.bandgap_model"
    assert "composition_x" in str(err.value)


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
