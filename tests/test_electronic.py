"""Lorenz numbers, Fermi-Dirac integrals and the single-parabolic-band solve."""

import math

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc

from kappa.core.electronic import (
    K_B_OVER_E,
    LORENZ_DEGENERATE,
    LORENZ_NONDEGENERATE,
    electronic_thermal_conductivity,
    fermi_dirac_integral,
    figure_of_merit,
    goldsmid_sharp_gap,
    lorenz_kim,
    lorenz_number,
    lorenz_spb,
    reduced_fermi_level,
    spb_lorenz,
    spb_seebeck,
)
from kappa.errors import DataError

from . import spb_reference as ref

RTOL_FD = 1e-12  # fixed-order quadrature vs mpmath at 40 digits
RTOL_TABLE = 1e-8  # spline table of L(ln|S|) vs the exact solve; far below the 0.5 % target


def test_k_over_e_from_scipy_constants():
    # source: scipy.constants (exact 2019 SI k_B and e)
    assert K_B_OVER_E == pytest.approx(sc.k / sc.e, rel=1e-15)


def test_lorenz_limits_constants():
    # source: tests/reference_values.py, Sommerfeld L0 = 2.443e-8 W Ohm K^-2 (P/D)
    assert LORENZ_DEGENERATE == pytest.approx(2.443e-8, rel=2e-4)
    # source: tests/reference_values.py, non-degenerate SPB acoustic 2 (k_B/e)^2 = 1.485e-8 (D)
    assert LORENZ_NONDEGENERATE == pytest.approx(1.485e-8, rel=2e-4)


@pytest.mark.parametrize("j", [0.5, 1.0, 1.5, 2.0, 3.0, 4.0, -0.5, 2.5])
@pytest.mark.parametrize("eta", [-60.0, -20.0, -3.0, -0.5, 0.0, 0.7, 4.0, 25.0, 59.0, 61.0,
                                 150.0, 900.0, 8000.0])
def test_fermi_dirac_against_mpmath_polylog(j, eta):
    # source: mpmath, F_j(eta) = -Gamma(j+1) Li_{j+1}(-e^eta) at 40 digits (tests/reference_values.py)
    expected = float(ref.fd(j, eta))
    assert fermi_dirac_integral(j, eta) == pytest.approx(expected, rel=RTOL_FD)


@pytest.mark.parametrize("eta", [-700.0, -300.0, -40.0, 0.0, 12.0, 100.0, 3000.0])
def test_fermi_dirac_order_zero_closed_form(eta):
    # source: identity F_0(eta) = ln(1 + e^eta), evaluated with mpmath at 60 digits
    with mp.workdps(60):
        expected = float(mp.log1p(mp.exp(eta)))
    assert fermi_dirac_integral(0.0, eta) == pytest.approx(expected, rel=RTOL_FD)


def test_fermi_dirac_noninteger_against_mpmath_quad():
    # source: mpmath.quad of the defining integral (independent of polylog)
    for j, eta in [(0.3, 1.7), (1.25, -4.0), (2.75, 30.0)]:
        with mp.workdps(30):
            expected = float(mp.quad(lambda x, j=j, eta=eta: x**j / (1 + mp.exp(x - eta)),
                                     [0, max(eta, 0), mp.inf]))
        assert fermi_dirac_integral(j, eta) == pytest.approx(expected, rel=1e-12)


def test_fermi_dirac_vectorised_shape():
    eta = np.linspace(-5, 80, 12).reshape(3, 4)
    out = fermi_dirac_integral(1.0, eta)
    assert out.shape == (3, 4)
    assert out[1, 2] == pytest.approx(float(fermi_dirac_integral(1.0, eta[1, 2])), rel=1e-15)


def test_spb_published_points():
    # source: tests/reference_values.py (D), lambda = 0: eta=0 -> S=204.50 uV/K, L=1.6130e-8;
    # eta=5 -> S=55.81 uV/K, L=2.1790e-8
    assert spb_seebeck(0.0) * 1e6 == pytest.approx(204.50, abs=0.01)
    assert spb_lorenz(0.0) == pytest.approx(1.6130e-8, rel=1e-4)
    assert spb_seebeck(5.0) * 1e6 == pytest.approx(55.81, abs=0.01)
    assert spb_lorenz(5.0) == pytest.approx(2.1790e-8, rel=1e-4)


def test_spb_degenerate_and_nondegenerate_limits():
    # source: tests/reference_values.py: eta -> inf gives (pi^2/3)(k_B/e)^2; eta -> -inf gives
    # 2 (k_B/e)^2 for acoustic phonons; (2 + lambda)(k_B/e)^2 in general (standard SPB result)
    assert spb_lorenz(3000.0) == pytest.approx(math.pi**2 / 3 * (sc.k / sc.e) ** 2, rel=1e-6)
    assert spb_lorenz(-40.0) == pytest.approx(2 * (sc.k / sc.e) ** 2, rel=1e-12)
    assert spb_lorenz(-40.0, 2.0) == pytest.approx(4 * (sc.k / sc.e) ** 2, rel=1e-12)
    assert spb_lorenz(3000.0, 2.0) == pytest.approx(math.pi**2 / 3 * (sc.k / sc.e) ** 2,
                                                    rel=1e-5)


@pytest.mark.parametrize("lam", [0.0, 2.0])
@pytest.mark.parametrize("s_uV", [1.0, 10.0, 55.81, 100.0, 204.5, 400.0, 1000.0])
def test_reduced_fermi_level_against_mpmath_root(lam, s_uV):
    # source: mpmath polylog + findroot (tests/spb_reference.py), independent of kappa
    eta_ref = float(ref.eta_from_seebeck(s_uV * 1e-6, lam))
    eta = reduced_fermi_level(s_uV * 1e-6, lam)
    assert eta == pytest.approx(eta_ref, rel=1e-9, abs=1e-9)
    assert lorenz_spb(s_uV * 1e-6, lam) == pytest.approx(ref.lorenz_from_seebeck(s_uV * 1e-6, lam),
                                                        rel=1e-8)


@pytest.mark.parametrize("lam", [0.0, 1.0, 2.0, 0.5])
def test_spb_table_matches_exact_solve(lam):
    # the interpolation table against the exact bracketed solve, 1 uV/K to 2 mV/K
    s = np.geomspace(1e-6, 2e-3, 400)
    L_table, eta_table = lorenz_spb(s, lam, return_eta=True)
    eta = reduced_fermi_level(s, lam)
    np.testing.assert_allclose(L_table, spb_lorenz(eta, lam), rtol=RTOL_TABLE)
    np.testing.assert_allclose(eta_table, eta, rtol=1e-5, atol=1e-5)


def test_spb_sign_nan_zero_and_out_of_table():
    L = lorenz_spb([-150e-6, 150e-6, np.nan, 0.0, 5e-3, 0.02e-6])
    assert L[0] == L[1]
    assert np.isnan(L[2])
    assert L[3] == LORENZ_DEGENERATE
    # 5 mV/K and 0.02 uV/K are outside the table: exact solve, still near the limits
    assert L[4] == pytest.approx(2 * (sc.k / sc.e) ** 2, rel=1e-9)
    assert L[5] == pytest.approx(LORENZ_DEGENERATE, rel=1e-6)


def test_scattering_exponent_validated():
    with pytest.raises(DataError, match="scattering_exponent = -1.5"):
        lorenz_spb(1e-4, -1.5)


def test_kim_formula_hand_value():
    # source: Kim et al., APL Materials 3, 041506 (2015): L = 1.5 + exp(-|S|/116) (1e-8 units);
    # |S| = 116 uV/K -> 1.5 + 1/e = 1.867879 (hand arithmetic)
    assert lorenz_kim(-116e-6) == pytest.approx((1.5 + math.exp(-1)) * 1e-8, rel=1e-12)


def test_kim_within_5_percent_of_spb():
    # source: Kim et al., APL Materials 3, 041506 (2015): within 5 % of the SPB (acoustic)
    # result for 10 < |S| < 400 uV/K, as its authors state
    s = np.linspace(10e-6, 400e-6, 300)
    ratio = lorenz_kim(s) / lorenz_spb(s)
    assert np.all(np.abs(ratio - 1) < 0.05)


def test_lorenz_number_dispatch_and_errors():
    s = np.array([100e-6, 200e-6])
    np.testing.assert_array_equal(lorenz_number("degenerate", s), LORENZ_DEGENERATE)
    np.testing.assert_array_equal(lorenz_number("nondegenerate", s), LORENZ_NONDEGENERATE)
    np.testing.assert_array_equal(lorenz_number(2.0e-8, s), 2.0e-8)
    np.testing.assert_allclose(lorenz_number("kim", s), lorenz_kim(s))
    with pytest.raises(DataError, match="lorenz = metal"):
        lorenz_number("metal", s)
    with pytest.raises(DataError, match="Seebeck coefficient is needed"):
        lorenz_number("spb")


def test_kappa_e_hand_worked_row():
    # hand-worked: L = 2.0e-8 W Ohm/K^2, sigma = 1000 S/cm = 1e5 S/m, T = 500 K
    # -> kappa_e = 2.0e-8 * 1e5 * 500 = 1.0 W/(m K)
    assert electronic_thermal_conductivity(2.0e-8, 1e5, 500.0) == pytest.approx(1.0, rel=1e-14)


def test_zT_hand_worked():
    # hand-worked: S = 200 uV/K, sigma = 1e5 S/m, T = 600 K, kappa = 1.2 W/(m K)
    # -> zT = (2e-4)^2 * 1e5 * 600 / 1.2 = 2.0
    assert figure_of_merit(-200e-6, 1e5, 1.2, 600.0) == pytest.approx(2.0, rel=1e-14)


def test_goldsmid_sharp_hand_worked():
    # hand-worked: 2 e |S|max Tmax with 250 uV/K at 600 K = 0.300 eV
    assert goldsmid_sharp_gap(250e-6, 600.0) / sc.e == pytest.approx(0.300, rel=1e-12)
