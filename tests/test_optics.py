"""Optics: front reflectance models, light paths, absorptance."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from optogen import optics
from optogen.errors import InputError


# -- front reflectance -------------------------------------------------------------

def test_bare_fresnel():
    # normal incidence, air -> n = 3.5: R = ((n-1)/(n+1))^2 = (2.5/4.5)^2 (Fresnel, analytic)
    assert optics.reflectance_fresnel_normal(3.5) == pytest.approx((2.5 / 4.5) ** 2, rel=1e-15)
    # absorbing: ((n-1)^2 + k^2) / ((n+1)^2 + k^2) (Fresnel, analytic), n = 1.5, k = 2
    assert optics.reflectance_fresnel_normal(1.5, 2.0) == pytest.approx(4.25 / 10.25, rel=1e-15)


def test_quarter_wave_coating_cancels_reflection():
    n_s, lam = 3.9, 600.0
    n_c = np.sqrt(n_s)
    d = lam / (4 * n_c)
    # quarter-wave layer with n_c = sqrt(n_0 n_s): R = 0 at the design wavelength (analytic)
    assert optics.reflectance_single_layer(lam, n_c, d, n_s) == pytest.approx(0.0, abs=1e-15)
    # away from it reflection returns (analytic: R > 0 unless n_c d = lambda/4 (2m+1))
    assert optics.reflectance_single_layer(450.0, n_c, d, n_s) > 1e-3


@pytest.mark.parametrize("n, k", [(3.5, 0.0), (4.2, 0.3), (1.8, 2.5)])
def test_absentee_and_zero_thickness_layers_equal_bare(n, k):
    lam, n_c = 700.0, 2.05
    bare = optics.reflectance_fresnel_normal(n, k)
    # a layer of zero thickness, or a half-wave layer (n_c d = lambda/2), is "absent" (analytic)
    assert optics.reflectance_single_layer(lam, n_c, 0.0, n, k) == pytest.approx(bare, rel=1e-12)
    assert optics.reflectance_single_layer(lam, n_c, lam / (2 * n_c), n, k) == pytest.approx(bare, rel=1e-12)


def _characteristic_matrix_R(lam, n_c, d, n, k):
    """Independent check: characteristic (transfer) matrix of a single layer at normal incidence
    (Born & Wolf, Principles of Optics, 7th ed., Sec. 1.6.2), substrate N = n - ik."""
    delta = 2 * np.pi * n_c * d / lam
    M = np.array([[np.cos(delta), 1j * np.sin(delta) / n_c], [1j * n_c * np.sin(delta), np.cos(delta)]])
    N = n - 1j * k
    B, C = M @ np.array([1.0, N])
    r = (B - C) / (B + C)
    return abs(r) ** 2


@given(lam=st.floats(300, 1500), n_c=st.floats(1.3, 2.6), d=st.floats(0, 300),
       n=st.floats(1.5, 5.0), k=st.floats(0, 3))
@settings(max_examples=100, deadline=None)
def test_coating_matches_characteristic_matrix(lam, n_c, d, n, k):
    ours = optics.reflectance_single_layer(lam, n_c, d, n, k)
    assert ours == pytest.approx(_characteristic_matrix_R(lam, n_c, d, n, k), rel=1e-10, abs=1e-14)


def test_front_reflectance_dispatch(tmp_path):
    wl = np.array([500.0, 600.0, 700.0])
    n = np.array([4.3, 3.9, 3.8])
    np.testing.assert_allclose(optics.front_reflectance(0.1, wl), 0.1)
    np.testing.assert_allclose(optics.front_reflectance("Bare", wl, n), ((n - 1) / (n + 1)) ** 2)   # Fresnel
    R = optics.front_reflectance({"n_coating": 1.95, "thickness_nm": 77}, wl, n, 0.0)
    np.testing.assert_allclose(R, [_characteristic_matrix_R(l, 1.95, 77, m, 0.0) for l, m in zip(wl, n)], rtol=1e-10)
    (tmp_path / "R.csv").write_text("# measured\nwavelength_nm,reflectance\n550,0.1\n650,0.3\n")
    # linear interpolation between the file's rows, end values held outside (documented)
    np.testing.assert_allclose(optics.front_reflectance({"path": "R.csv"}, wl, base_dir=tmp_path), [0.1, 0.2, 0.3])
    np.testing.assert_allclose(optics.front_reflectance("R.csv", wl, base_dir=tmp_path), [0.1, 0.2, 0.3])


@pytest.mark.parametrize("spec, field", [
    (1.2, "optics.front_reflectance"), (-0.1, "optics.front_reflectance"),
    ("bear", "optics.front_reflectance"),
    ({"n_coating": 2.0, "thickness": 70}, "optics.front_reflectance.thickness"),
    ({"n_coating": 2.0}, "optics.front_reflectance.thickness_nm"),
    ({"n_coating": 0.5, "thickness_nm": 70}, "optics.front_reflectance.n_coating"),
])
def test_front_reflectance_bad(spec, field):
    with pytest.raises(InputError) as err:
        optics.front_reflectance(spec, np.array([500.0]), np.array([4.0]))
    assert err.value.field == field


def test_reflectance_file_out_of_range_and_bad_line(tmp_path):
    (tmp_path / "R.csv").write_text("wavelength_nm,reflectance\n550,0.1\n650,1.3\n")
    with pytest.raises(InputError) as err:
        optics.front_reflectance("R.csv", np.array([600.0]), base_dir=tmp_path)
    assert err.value.field == "optics.front_reflectance"
    (tmp_path / "S.csv").write_text("wavelength_nm,reflectance\n550,0.1\n540,0.2\n")
    with pytest.raises(InputError) as err:
        optics.front_reflectance("S.csv", np.array([600.0]), base_dir=tmp_path)
    assert "S.csv" in str(err.value) and "line 3" in str(err.value)


# -- light paths ---------------------------------------------------------------------

def test_single_and_mirror_are_beer_lambert():
    a, W, Rf, Rb = np.array([10.0, 1e3, 1e5]), 0.01, 0.1, 0.8
    T = np.exp(-a * W)
    # Beer-Lambert one pass, and a second pass after the rear reflection (analytic)
    np.testing.assert_allclose(optics.absorptance(a, W, 3.5, Rf, Rb, "single"), (1 - Rf) * (1 - T), rtol=1e-14)
    np.testing.assert_allclose(optics.absorptance(a, W, 3.5, Rf, Rb, "mirror"), (1 - Rf) * (1 - T) * (1 + Rb * T),
                               rtol=1e-14)


@given(aW=st.floats(1e-8, 50), n=st.floats(1.0, 5.0))
@settings(max_examples=200, deadline=None)
def test_lambertian_equals_green2002(aW, n):
    W = 0.01
    e4 = np.exp(-4 * aW)
    # A = (1 - e^{-4 alpha W}) / (1 - (1 - 1/n^2) e^{-4 alpha W}) (Green 2002, Prog. Photovolt. 10, 235; from memory)
    green = (1 - e4) / (1 - (1 - 1 / n**2) * e4)
    assert optics.absorptance(aW / W, W, n, 0.0, 1.0, "lambertian") == pytest.approx(green, rel=1e-9)


def test_lambertian_limits():
    n, W = 3.5, 0.02
    # weak absorption: A -> 4 n^2 alpha W (Yablonovitch 1982, J. Opt. Soc. Am. 72, 899); next-order term
    # is relative O(4 n^2 alpha W) ~ 5e-6 here
    a_weak = 1e-7 / W
    assert optics.absorptance(a_weak, W, n, 0.0, 1.0, "lambertian") == pytest.approx(4 * n**2 * a_weak * W, rel=1e-4)
    # thick: A -> 1, and (1 - R_f) with a front loss (analytic)
    assert optics.absorptance(1e4, W, n, 0.0, 1.0, "lambertian") == pytest.approx(1.0, abs=1e-12)
    assert optics.absorptance(1e4, W, n, 0.3, 1.0, "lambertian") == pytest.approx(0.7, abs=1e-12)
    # no rear reflector: one Lambertian pass of mean path 2W, A = 1 - e^{-2 alpha W} (analytic in this model)
    assert optics.absorptance(20.0, W, n, 0.0, 0.0, "lambertian") == pytest.approx(1 - np.exp(-0.8), rel=1e-14)


@given(aW=st.floats(0, 30), n=st.floats(1.0, 5.0), Rf=st.floats(0, 1), Rb=st.floats(0, 1),
       path=st.sampled_from(["single", "mirror", "lambertian"]))
@settings(max_examples=200, deadline=None)
def test_absorptance_bounded_and_rises_with_rear_reflectance(aW, n, Rf, Rb, path):
    A = optics.absorptance(aW, 1.0, n, Rf, Rb, path)
    # energy conservation: 0 <= A <= 1 - R_f (analytic)
    assert -1e-15 <= A <= (1 - Rf) * (1 + 1e-12) + 1e-15
    # a better rear mirror never absorbs less (analytic)
    assert optics.absorptance(aW, 1.0, n, Rf, min(1.0, Rb + 0.1), path) >= A - 1e-12


def test_paths_broadcast_over_temperature_and_wavelength():
    a = np.outer([1.0, 2.0, 3.0], [10.0, 100.0, 1e3, 1e4])        # (T, L)
    n = np.array([3.6, 3.55, 3.5, 3.45])
    A = optics.absorptance(a, 0.01, n, 0.05, 0.9, "lambertian")
    assert A.shape == (3, 4)
    np.testing.assert_allclose(A[1], optics.absorptance(a[1], 0.01, n, 0.05, 0.9, "lambertian"), rtol=0)


def test_light_path_names():
    assert optics.light_path_name("Lambertian") == "lambertian"
    assert optics.light_path_name("single-pass") == "single"
    with pytest.raises(InputError) as err:
        optics.absorptance(1.0, 1.0, 3.5, 0.0, 1.0, "lambertain")
    assert err.value.field == "optics.light_path" and "single" in str(err.value) and "mirror" in str(err.value)


@pytest.mark.parametrize("args, field", [
    ((-1.0, 0.01, 3.5, 0.0, 1.0), "absorber.alpha_cm1"),
    ((1.0, -0.01, 3.5, 0.0, 1.0), "absorber.thickness_um"),
    ((1.0, 0.01, 3.5, 1.5, 1.0), "optics.front_reflectance"),
    ((1.0, 0.01, 3.5, 0.0, -0.2), "optics.rear_reflectance"),
    ((1.0, 0.01, 0.5, 0.0, 1.0), "absorber.refractive_index"),
])
def test_absorptance_bad_input(args, field):
    with pytest.raises(InputError) as err:
        optics.absorptance(*args, light_path="lambertian")
    assert err.value.field == field
