"""Light sources: standard spectra, blackbody, laser, LED, files, scaling, scenario tables."""
import math
from optogen._data import data_dir

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings, strategies as st

from optogen import light
from optogen.errors import InputError

PVLIB_COLUMN = {"AM1.5G": "global", "AM1.5D": "direct", "AM0": "extraterrestrial"}


@pytest.fixture(scope="module")
def pvlib_table():
    spectrum = pytest.importorskip("pvlib.spectrum")
    return spectrum.get_reference_spectra(standard="ASTM G173-03")


# -- standard spectra ---------------------------------------------------------

@pytest.mark.parametrize("name", ["AM1.5G", "AM1.5D", "AM0"])
def test_our_tables_equal_pvlib(name, pvlib_table):
    s = light.standard(name)
    # reference: pvlib's bundled copy of ASTM G173-03 (pvlib.spectrum.get_reference_spectra)
    np.testing.assert_array_equal(s.wavelength_nm, pvlib_table.index.to_numpy(float))
    # 1 ulp: pandas < 3.1 parses pvlib's CSV up to 1 ulp off the correctly rounded decimal value (ours)
    np.testing.assert_array_max_ulp(s.irradiance_W_m2_nm, pvlib_table[PVLIB_COLUMN[name]].to_numpy(float), maxulp=1)


@pytest.mark.parametrize("fname", ["am15g.csv", "am15d.csv", "am0.csv"])
def test_spectrum_files_carry_provenance(fname):
    lines = data_dir("spectra").joinpath(fname).read_text().splitlines()
    assert lines[0].startswith("# ") and "ASTM G173-03" in lines[0]      # project rule: provenance line
    assert lines[1] == "wavelength_nm,irradiance_W_m2_nm"


def test_am15g_integral():
    # 1000.4 W/m^2 over 280-4000 nm (ASTM G173-03); the table value is quoted to 0.1 W/m^2
    assert light.standard("AM1.5G").irradiance_W_m2 == pytest.approx(1000.4, abs=0.05)


def test_one_sun_is_1000_W_m2(pvlib_table):
    s = light.scale(light.standard("AM1.5G"), suns=1)
    assert s.irradiance_W_m2 == pytest.approx(1000.0, rel=1e-12)      # 1 sun = 1000 W/m^2 (common practice)
    # the shape is the ASTM table's, rescaled (pvlib table, rescaled independently here)
    E = pvlib_table["global"].to_numpy(float)
    wl = pvlib_table.index.to_numpy(float)
    np.testing.assert_allclose(s.irradiance_W_m2_nm, E * 1000.0 / np.trapezoid(E, wl), rtol=1e-12)
    assert light.scale(light.standard("AM1.5G"), suns=2.5).irradiance_W_m2 == pytest.approx(2500.0, rel=1e-12)


def test_photon_flux_of_am15g(pvlib_table):
    wl = pvlib_table.index.to_numpy(float)
    E = pvlib_table["global"].to_numpy(float)
    # independent: Phi = E lambda / (h c), scipy.constants (analytic), per m^2 -> per cm^2
    expected = np.trapezoid(E * wl * 1e-9 / (sc.h * sc.c), wl) * 1e-4
    assert light.standard("AM1.5G").photon_flux_cm2_s == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("alias", ["am1.5g", "AM15G", "AM 1.5 G", "am1_5g", "Am1.5-G"])
def test_name_lookup_ignores_case_and_separators(alias):
    assert light.standard(alias).name == "AM1.5G"


def test_unknown_standard_lists_valid_names():
    with pytest.raises(InputError) as err:
        light.standard("AM1.5X")
    msg = str(err.value)
    assert "light.source" in msg and "AM1.5G" in msg and "AM1.5D" in msg and "AM0" in msg


def test_names_lists_spectra_and_kinds():
    assert {"AM1.5G", "AM1.5D", "AM0", "blackbody", "laser", "led", "file"} <= set(light.names())


# -- blackbody ----------------------------------------------------------------

@pytest.mark.parametrize("T", [20.0, 77.0, 300.0, 1000.0, 6000.0])
def test_blackbody_total_is_stefan_boltzmann(T):
    # sigma T^4 (scipy.constants.sigma, CODATA); our default grid is a 2000-point trapezoid in log
    # wavelength, whose quadrature error is ~1e-6 and whose cut tails are < 1e-7 of the total
    assert light.blackbody(T).irradiance_W_m2 == pytest.approx(sc.sigma * T**4, rel=2e-5)


@pytest.mark.parametrize("fov", [5.0, 30.0, 60.0])
def test_blackbody_field_of_view_and_emissivity(fov):
    T, eps = 300.0, 0.7
    # projected solid angle of a cone: pi sin^2(theta) (analytic), so E = eps sin^2(theta) sigma T^4
    expected = eps * math.sin(math.radians(fov)) ** 2 * sc.sigma * T**4
    assert light.blackbody(T, fov, eps).irradiance_W_m2 == pytest.approx(expected, rel=2e-5)


def test_blackbody_spectrum_matches_astropy():
    u = pytest.importorskip("astropy.units")
    from astropy.modeling.models import BlackBody
    T = 300.0
    wl = np.geomspace(1e3, 1e5, 50)
    # astropy: B_nu per steradian per Hz; convert to per nm with the spectral-density equivalency,
    # then times pi sr for the irradiance on a flat surface from a full hemisphere (analytic)
    B = BlackBody(temperature=T * u.K)(wl * u.nm)
    B_lam = B.to(u.W / (u.m**2 * u.nm * u.sr), equivalencies=u.spectral_density(wl * u.nm)).value
    ours = light.blackbody(T, wavelength_nm=wl).irradiance_W_m2_nm
    np.testing.assert_allclose(ours, math.pi * B_lam, rtol=1e-9)


def test_blackbody_cold_source_underflows_to_zero_quietly():
    # at 20 K and 500 nm x = hc/(lambda k T) ~ 1440: B = 2hc^2/lambda^5 e^-1440 < 1e-600, below double range
    s = light.blackbody(20.0, wavelength_nm=[500.0, 600.0, 1e5])
    assert s.irradiance_W_m2_nm[0] == 0.0 and s.irradiance_W_m2_nm[2] > 0


@pytest.mark.parametrize("kw, field", [(dict(temperature_K=-1), "light.temperature_K"),
                                       (dict(temperature_K=300, field_of_view_deg=95), "light.field_of_view_deg"),
                                       (dict(temperature_K=300, emissivity=1.2), "light.emissivity")])
def test_blackbody_bad_input(kw, field):
    with pytest.raises(InputError) as err:
        light.blackbody(**kw)
    assert err.value.field == field


# -- laser and LED --------------------------------------------------------------

@given(lam=st.floats(200, 20000), P=st.floats(1e-9, 10), area=st.floats(1e-6, 100))
@settings(max_examples=50, deadline=None)
def test_laser_photon_counting(lam, P, area):
    s = light.laser(lam, P, spot_area_cm2=area)
    # photons per second per area = P lambda / (h c) / area (analytic)
    assert s.photon_flux_cm2_s == pytest.approx(P * lam * 1e-9 / (sc.h * sc.c) / area, rel=1e-12)
    assert s.irradiance_W_m2 == pytest.approx(P / area * 1e4, rel=1e-12)


def test_laser_beam_diameter():
    s = light.laser(633.0, 1e-3, beam_diameter_mm=2.0)
    # area = pi d^2 / 4 = pi (0.2 cm)^2 / 4 (analytic)
    assert s.irradiance_W_m2 == pytest.approx(1e-3 / (math.pi * 0.2**2 / 4) * 1e4, rel=1e-12)


def test_led_gaussian():
    peak, fwhm, P, area = 850.0, 30.0, 2e-3, 0.5
    s = light.led(peak, fwhm, P, spot_area_cm2=area)
    assert s.irradiance_W_m2 == pytest.approx(P / area * 1e4, rel=1e-12)        # power conservation (analytic)
    E = np.interp([peak - fwhm / 2, peak, peak + fwhm / 2], s.wavelength_nm, s.irradiance_W_m2_nm)
    # a Gaussian is at half its peak value at peak -/+ FWHM/2 (analytic); linear interpolation on 0.75 nm steps
    np.testing.assert_allclose(E[[0, 2]] / E[1], 0.5, rtol=1e-3)


@pytest.mark.parametrize("call, field", [
    (lambda: light.laser(800, -1.0, spot_area_cm2=1), "light.power_W"),
    (lambda: light.laser(-800, 1.0, spot_area_cm2=1), "light.wavelength_nm"),
    (lambda: light.laser(800, 1.0), "light.spot_area_cm2"),
    (lambda: light.laser(800, 1.0, spot_area_cm2=1, beam_diameter_mm=1), "light.spot_area_cm2"),
    (lambda: light.laser(800, 1.0, beam_diameter_mm=0), "light.beam_diameter_mm"),
    (lambda: light.led(850, -3, 1.0, spot_area_cm2=1), "light.fwhm_nm"),
])
def test_laser_led_bad_input(call, field):
    with pytest.raises(InputError) as err:
        call()
    assert err.value.field == field


# -- scaling -------------------------------------------------------------------

def test_scale_by_each_quantity():
    base = light.standard("AM1.5D")
    assert light.scale(base, irradiance_W_m2=850).irradiance_W_m2 == pytest.approx(850, rel=1e-12)
    assert light.scale(base, photon_flux_cm2_s=3e17).photon_flux_cm2_s == pytest.approx(3e17, rel=1e-12)
    # 0.1 W on 2 cm^2 = 0.05 W/cm^2 = 500 W/m^2 (analytic)
    assert light.scale(base, power_W=0.1, spot_area_cm2=2).irradiance_W_m2 == pytest.approx(500, rel=1e-12)
    assert base.scaled(suns=0.5).irradiance_W_m2 == pytest.approx(500, rel=1e-12)


def test_scale_zero_is_dark_and_dark_cannot_be_brightened():
    dark = light.scale(light.standard("AM0"), suns=0)
    assert dark.irradiance_W_m2 == 0.0 and dark.photon_flux_cm2_s == 0.0
    with pytest.raises(InputError):
        light.scale(dark, suns=1)


@pytest.mark.parametrize("kw", [{}, dict(suns=1, irradiance_W_m2=1000), dict(suns=-1),
                                dict(suns=1, spot_area_cm2=1), dict(power_W=1)])
def test_scale_bad_input(kw):
    with pytest.raises(InputError) as err:
        light.scale(light.standard("AM1.5G"), **kw)
    assert err.value.field.startswith("light.")


# -- measured spectrum files -------------------------------------------------------

def _write(tmp_path, text, name="s.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_from_file_irradiance_and_photon_flux(tmp_path):
    wl = np.array([400.0, 500.0, 600.0])
    E = np.array([1.0, 2.0, 0.5])
    p1 = _write(tmp_path, "# my lamp\nwavelength_nm,irradiance_W_m2_nm\n"
                + "".join(f"{a},{b}\n" for a, b in zip(wl, E)), "e.csv")
    # the same light as a photon flux: Phi = E lambda / (h c), per cm^2 (analytic, scipy.constants)
    phi = E * wl * 1e-9 / (sc.h * sc.c) * 1e-4
    p2 = _write(tmp_path, "wavelength_nm, photon_flux_cm2_s_nm\n# comment\n"
                + "".join(f"{a},{b!r}\n" for a, b in zip(wl, phi.tolist())), "p.csv")
    s1, s2 = light.from_file(p1), light.from_file(p2)
    np.testing.assert_allclose(s1.irradiance_W_m2_nm, E, rtol=0)
    np.testing.assert_allclose(s2.irradiance_W_m2_nm, E, rtol=1e-14)
    assert s1.irradiance_W_m2 == pytest.approx(np.trapezoid(E, wl), rel=1e-15)


@pytest.mark.parametrize("text, line, words", [
    ("wavelength_nm,irradiance_W_m2_nm\n400,1\n500,1\n450,1\n", 4, "rise"),
    ("wavelength_nm,irradiance_W_m2_nm\n400,1\n500,-1\n", 3, ">= 0"),
    ("wavelength_nm,irradiance_W_m2_nm\n400,1\n500,nan\n", 3, "finite"),
    ("wavelength_nm,irradiance_W_m2_nm\n400,1\n500,abc\n", 3, "not a number"),
    ("wavelength_nm,irradiance_W_m2_nm,note\n400,1,a\n500\n", 3, "column 2 is needed"),
    ("wavelength (furlong),irradiance (W m^-2 nm^-1)\n400,1\n500,1\n", 1, "nm, um, eV"),
    ("wavelength (nm),irradiance (W m^-2)\n400,1\n500,1\n", 1, "per wavelength"),
    ("wavelength (nm),irradiance (W m^-2 nm^-1),intensity (W m^-2 nm^-1)\n400,1,1\n500,1,1\n", 1,
     "light.irradiance_column"),
    ("400,1\n500,1\n", 1, "no header"),
    ("# only one row\nwavelength_nm,irradiance_W_m2_nm\n400,1\n", 3, "at least two"),
    ("lambda,power\n400,1\n500,1\n", 1, "header"),
])
def test_from_file_errors_name_file_line_problem(tmp_path, text, line, words):
    p = _write(tmp_path, text, "bad_spectrum.csv")
    with pytest.raises(InputError) as err:
        light.from_file(p)
    msg = str(err.value)
    assert "bad_spectrum.csv" in msg and f"line {line}:" in msg and words in msg


def test_from_file_missing():
    with pytest.raises(InputError) as err:
        light.from_file("/nonexistent/spectrum.csv")
    assert "spectrum.csv" in str(err.value)


# -- scenario [light] tables ------------------------------------------------------

def test_table_standard_laser_led_blackbody_file(tmp_path):
    s = light.source_from_table({"source": "AM1.5G", "suns": 1})
    assert s.irradiance_W_m2 == pytest.approx(1000.0, rel=1e-12)          # 1 sun (common practice)
    s = light.source_from_table({"source": "laser", "wavelength_nm": 1550, "power_W": 1e-3, "spot_area_cm2": 0.01})
    assert s.photon_flux_cm2_s == pytest.approx(1e-3 * 1550e-9 / (sc.h * sc.c) / 0.01, rel=1e-12)   # analytic
    s = light.source_from_table({"source": "LED", "peak_nm": 530, "fwhm_nm": 35, "power_W": 0.01,
                                 "beam_diameter_mm": 5})
    assert s.irradiance_W_m2 == pytest.approx(0.01 / (math.pi * 0.25 / 4) * 1e4, rel=1e-12)     # analytic
    s = light.source_from_table({"source": "blackbody", "temperature_K": 300, "field_of_view_deg": 90})
    assert s.irradiance_W_m2 == pytest.approx(sc.sigma * 300**4, rel=2e-5)     # Stefan-Boltzmann
    (tmp_path / "lamp.csv").write_text("wavelength_nm,irradiance_W_m2_nm\n400,1\n500,1\n")
    assert light.source_from_table({"source": "file", "path": "lamp.csv"}, tmp_path).irradiance_W_m2 == 100.0
    assert light.source_from_table({"source": "file", "path": "lamp.csv", "irradiance_W_m2": 10},
                                   tmp_path).irradiance_W_m2 == pytest.approx(10.0, rel=1e-12)


def test_table_suns_zero_is_dark():
    assert light.source_from_table({"source": "AM1.5G", "suns": 0}).irradiance_W_m2 == 0.0


@pytest.mark.parametrize("table, field, words", [
    ({"source": "AM1.5G", "sun": 1}, "light.sun", "did you mean 'suns'"),
    ({"source": "AM1.5G"}, "light.suns", "exactly one scaling"),
    ({"source": "AM1.5G", "suns": 1, "irradiance_W_m2": 1000}, "light.suns", "exactly one scaling"),
    ({"source": "blackbody", "temperature_K": 300, "suns": 1}, "light.suns", "not used for a blackbody"),
    ({"source": "laser", "wavelength_nm": 800, "power_W": -1, "spot_area_cm2": 1}, "light.power_W", ">= 0"),
    ({"source": "laser", "power_W": 1, "spot_area_cm2": 1}, "light.wavelength_nm", "required"),
    ({"source": "laser", "wavelength_nm": 800, "power_W": 1}, "light.spot_area_cm2", "exactly one"),
    ({"source": "AM1.5G", "suns": 1, "peak_nm": 500}, "light.peak_nm", "only used with"),
    ({"source": "sunshine", "suns": 1}, "light.source", "AM1.5G"),
])
def test_table_errors(table, field, words):
    with pytest.raises(InputError) as err:
        light.source_from_table(table)
    assert err.value.field == field and words in str(err.value)


# -- measured spectra: delimiters, header aliases, units, column choice ------------------------
# 1 W m^-2 um^-1 = 1e-3 W m^-2 nm^-1 (1 um = 1000 nm, analytic); E = hc / lambda with
# hc = 1239.84198 eV nm (CODATA 2018 through scipy.constants); per-energy densities become
# per-wavelength ones with |dE/dlambda| = hc / lambda^2 = E / lambda (analytic).

HC_EV_NM = sc.h * sc.c / sc.e * 1e9


@pytest.mark.parametrize("text", [
    "wavelength (nm),irradiance (W m^-2 nm^-1)\n400,1\n500,2\n600,0.5\n",
    "Wavelength [um]\tGlobal irradiance [W m^-2 um^-1]\tnote\n0.4\t1000\tx\n0.5\t2000\ty\n0.6\t500\tz\n",
    "wavelength [nm];irradiance [W/m2/nm]\n400;1\n500;2\n600;0,5\n",                 # decimal comma
    "lambda_nm   irradiance_W_m2_nm\n400   1\n500   2\n600   0.5\n",                    # white space
    "# lamp, measured\nwavelength (nm)  irradiance (W m-2 nm-1)\n600 0.5\n500 2\n400 1\n",  # falling rows
    "\ufeffwavelength_nm,irradiance (mW cm^-2 nm^-1)\n400,0.1\n500,0.2\n600,0.05\n",     # BOM; 1 mW cm^-2 = 10 W m^-2
])
def test_read_spectrum_delimiters_aliases_and_units(tmp_path, text):
    if "Global" in text:
        p = _write(tmp_path, text, "s.tsv")
        wl, E = light.read_spectrum(p, irradiance_column="Global irradiance")
    else:
        p = _write(tmp_path, text, "s.csv")
        wl, E = light.read_spectrum(p)
    np.testing.assert_allclose(wl, [400.0, 500.0, 600.0], rtol=1e-15)
    np.testing.assert_allclose(E, [1.0, 2.0, 0.5], rtol=1e-14)


def test_read_spectrum_energy_axis_uses_the_jacobian(tmp_path):
    e = np.array([1.5, 2.0, 2.5, 3.0])
    dens = np.array([1.0, 3.0, 2.0, 0.5])                       # W m^-2 eV^-1
    p = _write(tmp_path, "energy [eV],irradiance [W m^-2 eV^-1]\n" + "".join(f"{a},{b}\n" for a, b in zip(e, dens)),
               "e.csv")
    wl, E = light.read_spectrum(p)
    lam = HC_EV_NM / e
    np.testing.assert_allclose(wl, lam[::-1], rtol=1e-12)
    np.testing.assert_allclose(E, (dens * e / lam)[::-1], rtol=1e-12)
    # the same column with a photon flux per eV: E_lambda = Phi_E (E / lambda) * hc / lambda [J] (analytic)
    p2 = _write(tmp_path, "photon energy (eV),photon flux (cm^-2 s^-1 eV^-1)\n2,1e16\n3,1e16\n", "f.csv")
    wl2, E2 = light.read_spectrum(p2)
    lam2 = HC_EV_NM / np.array([3.0, 2.0])
    want = 1e16 * 1e4 * (np.array([3.0, 2.0]) / lam2) * sc.h * sc.c / (lam2 * 1e-9)
    np.testing.assert_allclose(E2, want, rtol=1e-12)


def test_read_spectrum_column_choice_and_unit_keys(tmp_path):
    p = _write(tmp_path, "a,b,c\n1,0.4,2\n2,0.5,4\n", "n.csv")
    wl, E = light.read_spectrum(p, wavelength_column=2, irradiance_column="c", wavelength_unit="um",
                                irradiance_unit="W m^-2 um^-1")
    np.testing.assert_allclose(wl, [400.0, 500.0])
    np.testing.assert_allclose(E, [2e-3, 4e-3], rtol=1e-14)
    p2 = _write(tmp_path, "1,400\n2,500\n", "h.csv")                     # no header: columns 1 and 2 ...
    wl, E = light.read_spectrum(p2, wavelength_column=2, irradiance_column=1, wavelength_unit="nm",
                                irradiance_unit="W m^-2 nm^-1")
    np.testing.assert_allclose(E, [1.0, 2.0])
    with pytest.raises(InputError) as err:
        light.read_spectrum(p, wavelength_column="z")
    assert err.value.field == "light.wavelength_column" and "'a', 'b', 'c'" in str(err.value)


def test_file_source_in_a_scenario_takes_the_column_keys(tmp_path):
    (tmp_path / "lamp.tsv").write_text("Wavelength [um]\tE1 [W m^-2 um^-1]\tE2 [W m^-2 um^-1]\n0.4\t1000\t1\n0.5\t1000\t1\n")
    s = light.source_from_table({"source": "file", "path": "lamp.tsv", "irradiance_column": "E1"}, tmp_path)
    assert s.irradiance_W_m2 == pytest.approx(100.0, rel=1e-12)        # 1 W m^-2 nm^-1 over 100 nm (analytic)


def test_spectrum_from_python_data():
    wl = np.array([400.0, 500.0, 600.0])
    E = np.array([1.0, 2.0, 0.5])
    s = light.spectrum_from_data((wl, E))
    np.testing.assert_array_equal(s.irradiance_W_m2_nm, E)
    pd = pytest.importorskip("pandas")
    s2 = light.spectrum_from_data(pd.Series(E, index=wl))
    np.testing.assert_allclose(s2.irradiance_W_m2_nm, E, rtol=1e-15)
    s3 = light.spectrum_from_data(pd.Series(E * 1e3, index=pd.Index(wl / 1e3, name="wavelength (um)"),
                                            name="irradiance (W m^-2 um^-1)"))
    np.testing.assert_allclose(s3.wavelength_nm, wl, rtol=1e-14)
    np.testing.assert_allclose(s3.irradiance_W_m2_nm, E, rtol=1e-14)
    df = pd.DataFrame({"energy [eV]": HC_EV_NM / wl, "irradiance [W m^-2 nm^-1]": E})
    np.testing.assert_allclose(light.spectrum_from_data(df).irradiance_W_m2_nm, E, rtol=1e-12)
    with pytest.raises(InputError, match="spectrum"):
        light.spectrum_from_data((wl, E[:2]))
