"""Elastic data → Debye quantities, minimum conductivities and Slack's estimate."""

import math

import pytest
import scipy.constants as sc

from kappa.core.elastic import from_sound_velocities
from kappa.core.limits import (
    cahill_high_temperature,
    diffuson_minimum,
    gruneisen_from_poisson,
    julian_coefficient,
    optical_conductivity,
    poisson_ratio,
    slack_conductivity,
)
from kappa.errors import DataError
from tests.reference_values import VALUES

U = sc.physical_constants["atomic mass constant"][0]  # scipy.constants
V = VALUES
SI = from_sound_velocities(V["si_vl_hill"].value, V["si_vt_hill"].value, V["si_density"].value,
                           28.0855 * U, 2)


@pytest.mark.parametrize("field, name", [
    ("sound_velocity", "si_vm_hill"),
    ("debye_temperature", "si_theta_hill"),
    ("poisson_ratio", "si_poisson_hill"),
    ("gruneisen", "si_gruneisen_from_poisson"),
    ("kappa_min_cahill_300K", "cahill_si_300K"),
    ("kappa_min_cahill", "cahill_si_high_T"),
    ("kappa_min_clarke", "clarke_si"),
])
def test_silicon_from_elastic_data(field, name):
    ref = V[name]
    assert getattr(SI, field) == pytest.approx(ref.value, rel=max(ref.tolerance, 1e-3))


def test_silicon_derived_values_within_half_a_percent():
    # the "derived" values (θ_D 648.6 K, ν 0.2228, γ 1.377, Cahill 1.148/1.48, Clarke 1.36)
    for field, name in (("debye_temperature", "si_theta_hill"), ("poisson_ratio",
                        "si_poisson_hill"), ("gruneisen", "si_gruneisen_from_poisson"),
                        ("kappa_min_cahill_300K", "cahill_si_300K"),
                        ("kappa_min_cahill", "cahill_si_high_T"),
                        ("kappa_min_clarke", "clarke_si")):
        assert getattr(SI, field) == pytest.approx(V[name].value, rel=5e-3), field
    # Young's modulus of the same average: E = 162.7 GPa (as used for the Clarke value)
    assert SI.youngs_modulus == pytest.approx(162.7e9, rel=2e-3)
    # acoustic θ for 2 atoms per cell: θ_D / 2^(1/3)
    assert SI.acoustic_debye_temperature == pytest.approx(648.6 / 2 ** (1 / 3), rel=1e-3)


def test_diffuson_is_its_formula_and_below_cahill():
    # Agne, Hanus & Snyder (2018): 0.76 n^(2/3) k_B (v_L + 2v_T)/3; Cahill high-T limit is
    # (π/6)^(1/3)/2·3 ≈ 1.209 times n^(2/3) k_B (v_L + 2v_T)/3 → ratio 0.76/1.209 = 0.629
    n = SI.number_density
    by_hand = 0.76 * n ** (2 / 3) * sc.k * (8950.0 + 2 * 5345.0) / 3
    assert SI.kappa_min_diffuson == pytest.approx(by_hand, rel=1e-12)
    ratio = SI.kappa_min_diffuson / SI.kappa_min_cahill
    assert ratio == pytest.approx(0.76 / (3 / 2 * (math.pi / 6) ** (1 / 3)), rel=1e-12)
    assert diffuson_minimum(n, 8950.0, 5345.0) == pytest.approx(by_hand, rel=1e-12)


def test_poisson_ratio_limits():
    # ν = (1−2r²)/(2−2r²): 0 at r = 1/√2; → −1 as r → √3/2 (closed form)
    assert poisson_ratio(1.0, 1 / math.sqrt(2)) == pytest.approx(0.0, abs=1e-15)
    assert poisson_ratio(1.0, 0.85) == pytest.approx(-0.445 / 0.555, rel=1e-12)  # r² = 0.7225
    assert gruneisen_from_poisson(0.25) == pytest.approx(3 * 1.25 / (2 * 1.25), rel=1e-15)
    for vt in (math.sqrt(3) / 2, 0.9, 1.0, 1.2):
        with pytest.raises(DataError, match="transverse"):
            poisson_ratio(1.0, vt)
    with pytest.raises(DataError, match="longitudinal"):
        poisson_ratio(0.0, 0.5)


def test_julian_coefficient_unit_convention():
    ref = V["slack_A_gamma_1"]  # A(1) = 3.403e-6 for W/(m K) with u, Å, K
    assert julian_coefficient(1.0) == pytest.approx(ref.value, rel=ref.tolerance)


def test_slack_by_hand_and_against_silicon():
    # Morelli & Slack list Si with θ_a = 395 K, γ = 0.56 (from memory); M̄ 28.09 u,
    # δ = (20.02 Å³)^(1/3), n = 2; hand arithmetic of κ = A(γ) M̄ θ_a³ δ n^(1/3)/(γ² T)
    delta = 20.02 ** (1 / 3)
    a = 2.43e-6 / (1 - 0.514 / 0.56 + 0.228 / 0.56**2)
    by_hand = a * 28.09 * 395.0**3 * delta * 2 ** (1 / 3) / (0.56**2 * 300.0)
    got = slack_conductivity(300.0, 28.09, 20.02e-30, 395.0, 0.56, 2)
    assert got == pytest.approx(by_hand, rel=1e-12)
    ref = V["slack_si_morelli"]  # measured 156 W/(m K): Slack's formula within ~30 %
    assert got == pytest.approx(ref.value, rel=ref.tolerance)
    # the W/(cm K) trap: the same numbers with 2.43e-8 would be 100 times smaller
    assert 50 < got < 500


def test_optical_part_formula():
    # Toberer, Zevalkink & Snyder (2011): (3/2)(π/6)^(1/3) k_B n^(2/3) v̄ (1 − N^(−2/3))
    n, v = 3.0e28, 2000.0
    assert optical_conductivity(n, v, 1.0) == 0.0
    full = cahill_high_temperature(n, [v])  # the Cahill high-T limit of all modes
    assert optical_conductivity(n, v, 8.0) == pytest.approx(full * (1 - 8 ** (-2 / 3)),
                                                            rel=1e-12)


def test_bad_elastic_input():
    with pytest.raises(DataError, match="density"):
        from_sound_velocities(8000.0, 5000.0, 0.0, 28 * U)
    with pytest.raises(DataError, match="transverse"):
        from_sound_velocities(8000.0, 7000.0, 2300.0, 28 * U)
    with pytest.raises(DataError, match="atoms_per_cell"):
        from_sound_velocities(8000.0, 5000.0, 2300.0, 28 * U, 0.5)
