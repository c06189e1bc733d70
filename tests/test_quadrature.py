"""The fixed quadrature rule against closed forms (see tests/reference_values.py, identities marked D)."""

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import zeta

from kappa.core.quadrature import X_CUT, phonon_weight, rule


def _integrate(f, top):
    x, q = rule(top)
    return float(q @ f(x))


def test_integral_of_phonon_weight_is_4pi4_over_15():
    # ∫₀^∞ x⁴eˣ/(eˣ−1)² dx = 4π⁴/15 (textbook identity; tests/reference_values.py, D)
    assert _integrate(phonon_weight, 1e4) == pytest.approx(4 * math.pi**4 / 15, rel=1e-9)


def test_integral_of_weight_over_x2_is_pi2_over_3():
    # ∫₀^∞ x²eˣ/(eˣ−1)² dx = π²/3 (textbook identity; tests/reference_values.py, D)
    assert _integrate(lambda x: phonon_weight(x) / x**2, 1e4) == pytest.approx(
        math.pi**2 / 3, rel=1e-9)


def test_integral_of_weight_over_x_is_6_zeta3():
    # ∫₀^∞ x³eˣ/(eˣ−1)² dx = 6ζ(3) (textbook identity; ζ from scipy.special)
    assert _integrate(lambda x: phonon_weight(x) / x, 1e4) == pytest.approx(
        6 * zeta(3), rel=1e-9)


@pytest.mark.parametrize("top", [0.05, 0.3, 1.0, 2.0, 3.7, 11.0, 39.0])
def test_finite_upper_limit_against_quad(top):
    ref = quad(lambda t: float(phonon_weight(np.array(t))), 0, top, epsabs=0,
               epsrel=1e-13, limit=200)[0]
    assert _integrate(phonon_weight, top) == pytest.approx(ref, rel=1e-9)


def test_phonon_weight_small_and_large_x():
    x = np.array([0.0, 1e-12, 1e-3, 50.0, 800.0])
    w = phonon_weight(x)
    assert w[0] == 0.0
    assert w[1] == pytest.approx(1e-24, rel=1e-9)  # w ≈ x² for x → 0
    assert w[2] == pytest.approx(1e-6 * (1 - 1e-6 / 12), rel=1e-9)
    assert w[3] == pytest.approx(50**4 * math.exp(-50), rel=1e-9)
    assert w[4] == 0.0 or w[4] < 1e-300
    assert X_CUT >= 36.0  # w(X_CUT)·X_CUT below 1e-9 of ∫w
