"""Band-gap narrowing: Klaassen 1992 (doping only), Schenk 1998 (doping and injection), none."""
import math
import warnings

import numpy as np
import pytest
from scipy import constants as sc

from optogen import materials
from optogen.equilibrium import BGN_MODELS, bgn_eV, bgn_klaassen1992, bgn_none, bgn_schenk1998
from optogen.errors import InputError

SI = materials.get("Si")


def test_klaassen_worked_by_hand():
    # dEg = 6.92 meV [L + sqrt(L^2 + 0.5)], L = ln(N / 1.3e17) (Klaassen, Slotboom & de Graaff 1992, from memory)
    # N = 1e18: N/1.3e17 = 7.69231, L = 2.04022, L^2 + 0.5 = 4.66250, sqrt = 2.15928,
    #           L + sqrt = 4.19950 -> 6.92 * 4.19950 = 29.061 meV (by hand)
    assert bgn_klaassen1992(1e18) * 1e3 == pytest.approx(29.061, abs=0.002)
    # N = 1e19: N/1.3e17 = 76.9231, L = 4.34281, L^2 + 0.5 = 19.3600, sqrt = 4.40000,
    #           L + sqrt = 8.74281 -> 6.92 * 8.74281 = 60.500 meV (by hand)
    assert bgn_klaassen1992(1e19) * 1e3 == pytest.approx(60.500, abs=0.002)


def test_klaassen_limits():
    N = np.array([0.0, 1e10, 1e14, 1e16, 1e18, 1e20, 1e21])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        dEg = bgn_klaassen1992(N)
    assert dEg[0] == 0.0                                   # N -> 0: L + sqrt(L^2 + 0.5) -> 0 (analytic)
    assert np.all(np.diff(dEg) > 0)                        # increasing in N (analytic)
    # low-N asymptote: L + sqrt(L^2 + 0.5) -> 0.25 / |L| (analytic; next term relative 1/(8 L^2) = 5e-4 here)
    assert dEg[1] == pytest.approx(6.92e-3 * 0.25 / abs(math.log(1e10 / 1.3e17)), rel=1e-3)


def test_schenk_debye_huckel_limit():
    # Low-density limit of any plasma BGN theory: each band edge shifts by the Debye-Hueckel self-energy
    # q^2 kappa / (8 pi eps), kappa^2 = q^2 (n + p) / (eps k T), so the gap shrinks by q^2 kappa / (4 pi eps)
    # (analytic; e.g. Schenk 1998 Sec. II).  Undoped plasma n = p, eps_r = 11.7 for Si (Sze & Ng, from memory).
    # Tolerance 1 %: Schenk's excitonic units imply eps_r = 11.69-11.7.
    for T in (77.0, 300.0):
        for n in (1e10, 1e12):
            eps = 11.7 * sc.epsilon_0
            kappa = math.sqrt(sc.e**2 * 2 * n * 1e6 / (eps * sc.k * T))        # [1/m]
            expected_eV = sc.e * kappa / (4 * math.pi * eps)
            assert bgn_schenk1998(T, 0.0, 0.0, n, n) == pytest.approx(expected_eV, rel=0.01)


def test_schenk_low_doping_low_injection_small():
    # ~0 at low doping: below 3 meV for N <= 1e15 at 300 K (Schenk 1998, Fig. of dEg vs N, from memory)
    for N in (1e13, 1e14, 1e15):
        assert 0 < bgn_eV(SI, 300.0, N, 0.0, model="schenk1998") < 3e-3
        assert 0 < bgn_eV(SI, 300.0, 0.0, N, model="schenk1998") < 3e-3


def test_schenk_high_doping_tens_of_meV_and_close_to_klaassen():
    # Tens of meV at 1e19-1e20 (Schenk 1998; Altermatt et al. 2003, J. Appl. Phys. 93, 1598; from memory).
    for N, lo, hi in ((1e19, 30e-3, 100e-3), (1e20, 60e-3, 160e-3)):
        assert lo < bgn_eV(SI, 300.0, N, 0.0, model="schenk1998") < hi
        assert lo < bgn_eV(SI, 300.0, 0.0, N, model="schenk1998") < hi
    # Doping only, 1e17-1e20: measured apparent BGN scatters by about +-20 meV around the Klaassen fit
    # (Klaassen, Slotboom & de Graaff 1992, data compilation, from memory); Schenk stays inside that band.
    N = np.logspace(17, 20, 13)
    for nd, na in ((N, 0 * N), (0 * N, N)):
        diff = bgn_eV(SI, 300.0, nd, na, model="schenk1998") - bgn_klaassen1992(N)
        assert np.all(np.abs(diff) < 20e-3)


def test_schenk_grows_with_injection():
    # More carriers, more narrowing (Schenk 1998: dEg rises with the e-h plasma density; from memory)
    dn = np.array([0.0, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18])
    nd = 1e15
    n0, p0 = nd, 9.7e9**2 / nd                 # n_i = 9.7e9 (Misiakos & Tsamakis 1993 at 300 K)
    dEg = bgn_schenk1998(300.0, nd, 0.0, n0 + dn, p0 + dn)
    assert np.all(np.diff(dEg) > 0)
    # a 1e17 e-h plasma narrows the gap by ~5-20 meV (Schenk 1998, from memory)
    assert 5e-3 < dEg[5] < 20e-3


def test_schenk_finite_everywhere():
    # no NaN/inf/warning, also with no carriers at all (4 K) and strong compensation
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        T = np.array([4.0, 30.0, 300.0, 1000.0])[:, None]
        out = bgn_schenk1998(T, np.array([0, 1e16, 1e16, 1e20]), np.array([0, 1e16, 0, 0]),
                             np.array([0.0, 1e3, 1e16, 1e20]), np.array([0.0, 1e3, 1e4, 1.0]))
    assert np.all(np.isfinite(out)) and np.all(out >= 0)


def test_none_and_dispatch():
    assert np.all(bgn_none(np.ones((2, 3))) == 0)
    assert bgn_eV(SI, 300.0, 1e18, 0.0, model="none") == 0.0
    # case/separator-insensitive names and aliases give the same model
    a = bgn_eV(SI, 300.0, 1e18, 0.0, model="Klaassen-1992")
    b = bgn_eV(SI, 300.0, 1e18, 0.0, model="klaassen")
    assert a == b == pytest.approx(bgn_klaassen1992(1e18), rel=1e-15)
    # default from the material (Si: schenk1998)
    assert bgn_eV(SI, 300.0, 1e18, 0.0) == bgn_eV(SI, 300.0, 1e18, 0.0, model="SCHENK 1998")


def test_bad_inputs():
    with pytest.raises(InputError) as err:
        bgn_eV(SI, 300.0, 1e16, 0.0, model="slotboom77x")
    assert err.value.field == "recombination.bandgap_narrowing"
    assert all(name in str(err.value) for name in BGN_MODELS)
    with pytest.raises(InputError) as err:
        bgn_eV(SI, 300.0, -1.0, 0.0)
    assert err.value.field == "absorber.donors_cm3"
    with pytest.raises(InputError) as err:
        bgn_eV(SI, 0.0, 1e16, 0.0)
    assert err.value.field == "absorber.temperature_K"
    with pytest.raises(InputError):                     # Klaassen's fit is for silicon only
        bgn_eV(materials.get("GaAs"), 300.0, 1e18, 0.0, model="klaassen1992")


def test_schenk_accepts_complex_densities_for_the_complex_step():
    # the complex step Im f(x + i h) / h is f'(x) to rounding (Squire & Trapp, SIAM Rev. 40, 110 (1998));
    # it must match a central difference (f(x + d) - f(x - d)) / 2d, whose truncation error is
    # ~ (d/x)^2 ~ 1e-8 here (analytic), on both sides of the ion-density cap (n + p below / above N_D)
    from optogen.equilibrium import bgn_schenk1998
    for n0, nd in ((1e16, 1e15), (1e14, 1e15)):
        p0 = 1e10
        h = 1e-30 * n0
        cs = np.imag(bgn_schenk1998(300.0, nd, 0.0, n0 + 1j * h, p0)) / h
        d = 1e-4 * n0
        cd = (bgn_schenk1998(300.0, nd, 0.0, n0 + d, p0) - bgn_schenk1998(300.0, nd, 0.0, n0 - d, p0)) / (2 * d)
        assert cs == pytest.approx(cd, rel=1e-6)
        # the real part is the function itself (to rounding: complex sqrt/log may differ in the last ulp)
        assert np.real(bgn_schenk1998(300.0, nd, 0.0, n0 + 1j * h, p0)) == pytest.approx(
            bgn_schenk1998(300.0, nd, 0.0, n0, p0), rel=1e-14)
