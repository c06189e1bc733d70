"""Debye heat capacity against tabulated values (tests/reference_values.py)."""

import math

import pytest

from kappa.core.heat_capacity import debye_function, heat_capacity
from kappa.core.material import Material

# C_V/3Nk_B at T/θ: tabulated Debye function values (tests/reference_values.py, P and D agree to 6 digits)
TABLE = [(0.10, 0.075821), (0.20, 0.368635), (1.00, 0.951732), (2.00, 0.987611)]


@pytest.mark.parametrize(("t", "expected"), TABLE)
def test_debye_function_table(t, expected):
    assert debye_function(1 / t)[0] == pytest.approx(expected, abs=2e-6)


def test_low_temperature_limit():
    # C_V = (12π⁴/5) N k_B (T/θ)³ → D = (4π⁴/5)(T/θ)³ (tests/reference_values.py)
    t = 1e-3
    assert debye_function(1 / t)[0] == pytest.approx(4 * math.pi**4 / 5 * t**3, rel=1e-9)


def test_dulong_petit_limit_per_mole_of_atoms():
    # 3R = 24.943 J/(mol K) per mole of atoms (tests/reference_values.py)
    m = Material.averaged(28.0855 * 1.6605e-27, 20.02e-30, 645.0, 6084.0, 1.0)
    assert heat_capacity(m, [1e5])[0] == pytest.approx(24.943, abs=2e-3)
