"""Fermi-Dirac integrals F_1/2, F_-1/2 and the inverse of F_1/2 against mpmath.

Reference: the normalised integral F_j(eta) = -Li_{j+1}(-e^eta) evaluated with
mpmath.polylog at 20 digits (independent library).
"""
import math
import warnings

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from optogen.equilibrium import (fermi_dirac_half, fermi_dirac_minus_half, inverse_fermi_dirac_half,
                                 inverse_log_fermi_dirac_half, log_fermi_dirac_half)
from optogen.errors import InputError

mp.mp.dps = 20


def ref_fd(j, eta):
    """-Li_{j+1}(-e^eta) with mpmath (reference library)."""
    return float(mp.re(-mp.polylog(j + 1, -mp.exp(mp.mpf(float(eta))))))


# Dense grid over [-50, 50] (step 0.1) plus both sides of every internal switch (-1, 8, 30).
GRID = np.unique(np.concatenate([np.linspace(-50, 50, 1001),
                                 [-1 - 1e-9, -1, -1 + 1e-9, 8 - 1e-9, 8, 8 + 1e-9, 30 - 1e-9, 30, 30 + 1e-9]]))
REF_HALF = np.array([ref_fd(0.5, e) for e in GRID])
REF_MHALF = np.array([ref_fd(-0.5, e) for e in GRID])


def test_half_against_mpmath_dense_grid():
    # required 1e-6 relative (issue 2); the module documents 1e-12: assert that
    rel = np.abs(fermi_dirac_half(GRID) / REF_HALF - 1)
    assert rel.max() < 1e-12


def test_minus_half_against_mpmath_dense_grid():
    rel = np.abs(fermi_dirac_minus_half(GRID) / REF_MHALF - 1)
    assert rel.max() < 1e-12


def test_log_half_against_mpmath():
    assert np.allclose(log_fermi_dirac_half(GRID), np.log(REF_HALF), rtol=0, atol=1e-12)


def test_inverse_against_mpmath_dense_grid():
    eta = inverse_fermi_dirac_half(REF_HALF)
    assert np.max(np.abs(eta - GRID) / np.maximum(1.0, np.abs(GRID))) < 1e-10


@settings(max_examples=60, deadline=None)
@given(st.floats(-50, 50))
def test_half_random_points(eta):
    assert fermi_dirac_half(eta) == pytest.approx(ref_fd(0.5, eta), rel=1e-12)   # mpmath


@settings(max_examples=60, deadline=None)
@given(st.floats(-46, 9.5))
def test_inverse_random_values(log10_y):
    y = 10.0 ** log10_y                                   # F_1/2 from 1e-46 (eta ~ -106) to ~3e9 (eta ~ 3e6)
    eta = float(inverse_fermi_dirac_half(y))
    assert ref_fd(0.5, eta) == pytest.approx(y, rel=1e-11)   # mpmath: F_1/2(inverse(y)) = y


def test_far_tails_analytic():
    # eta -> -inf: F_1/2 = e^eta (1 - e^eta / 2^(3/2) + ...) -> ln F_1/2 = eta exactly in double (analytic)
    assert log_fermi_dirac_half(-800.0) == -800.0
    assert inverse_log_fermi_dirac_half(-2000.0) == pytest.approx(-2000.0, rel=1e-15)
    # eta -> +inf: F_1/2 = 4/(3 sqrt(pi)) eta^(3/2) (1 + pi^2/(8 eta^2) + 7 pi^4/(640 eta^4) + ...) (analytic,
    # Sommerfeld expansion)
    eta = 1e4
    expected = 4 / (3 * math.sqrt(math.pi)) * eta**1.5 * (1 + math.pi**2 / (8 * eta**2))
    assert fermi_dirac_half(eta) == pytest.approx(expected, rel=1e-14)


def test_derivative_identity():
    # dF_1/2/deta = F_-1/2 (analytic), central difference
    eta = np.array([-20.0, -3.0, 0.0, 2.5, 12.0, 40.0])
    h = 1e-5
    num = (fermi_dirac_half(eta + h) - fermi_dirac_half(eta - h)) / (2 * h)
    assert np.allclose(num, fermi_dirac_minus_half(eta), rtol=1e-8)


def test_shapes_and_no_warnings():
    eta = np.linspace(-1000, 1000, 24).reshape(2, 3, 4)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        f = log_fermi_dirac_half(eta)
        back = inverse_log_fermi_dirac_half(f)
    assert f.shape == eta.shape and np.all(np.isfinite(f))
    assert np.allclose(back, eta, rtol=1e-12, atol=1e-12)      # analytic: inverse of the function


def test_inverse_edges():
    assert inverse_fermi_dirac_half(0.0) == -np.inf           # F_1/2 > 0 for every finite eta (analytic)
    with pytest.raises(InputError) as err:
        inverse_fermi_dirac_half(-1.0)
    assert err.value.field == "y"
