"""The split workflow on arrays: nominal values, Monte Carlo bands, bipolar check, limits."""

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad

from kappa.core.electronic import LORENZ_DEGENERATE, lorenz_kim, lorenz_spb
from kappa.core.limits import cahill_minimum
from kappa.errors import DataError, KappaWarning
from kappa.workflows.split import DEFAULT_UNCERTAINTY, split

T5 = np.array([300.0, 350.0, 400.0, 450.0, 500.0])


def test_default_uncertainties_are_round_robin_values():
    # source: Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015): S 6 %, resistivity 8 %,
    # kappa 11 % (tests/reference_values.py)
    assert DEFAULT_UNCERTAINTY == {"kappa": 0.11, "sigma": 0.08, "S": 0.06, "L": 0.0}


def test_hand_worked_row_degenerate():
    # hand-worked: L0 = (pi^2/3)(k_B/e)^2 = 2.4430e-8; sigma = 1e5 S/m, T = 400 K
    # -> kappa_e = 2.4430e-8 * 1e5 * 400 = 0.97720 W/(m K); kappa_L = 2.0 - 0.97720 = 1.02280
    r = split(T5, kappa=np.full(5, 2.0), electrical_conductivity=np.full(5, 1e5), lorenz="degenerate", draws=200)
    L0 = math.pi**2 / 3 * (sc.k / sc.e) ** 2
    assert r.kappa_e[2] == pytest.approx(L0 * 1e5 * 400, rel=1e-14)
    assert r.kappa_e[2] == pytest.approx(0.97720, rel=1e-4)
    assert r.kappa_L[2] == pytest.approx(1.02280, rel=1e-4)
    assert r.zT is None and r.kappa_L_kim is None


def test_comparison_columns():
    S = np.array([100e-6, 150e-6, 200e-6, 250e-6, 300e-6])
    sigma = np.array([1e5, 8e4, 6e4, 5e4, 4e4])
    kappa = np.array([2.0, 1.9, 1.8, 1.7, 1.6])
    r = split(T5, kappa, sigma, S, draws=200)
    np.testing.assert_allclose(r.lorenz, lorenz_spb(S), rtol=1e-14)
    np.testing.assert_allclose(r.kappa_L, kappa - lorenz_spb(S) * sigma * T5, rtol=1e-14)
    np.testing.assert_allclose(r.kappa_L_degenerate, kappa - LORENZ_DEGENERATE * sigma * T5)
    np.testing.assert_allclose(r.kappa_L_kim, kappa - lorenz_kim(S) * sigma * T5)
    np.testing.assert_allclose(r.zT, S**2 * sigma * T5 / kappa)
    assert np.all(r.eta > -5) and r.lorenz_model == "spb"


def test_monte_carlo_linear_case_matches_analytic_propagation():
    # constant L: kappa_L = kappa (1 + u_k z1) - L sigma T (1 + u_s z2) is linear in Gaussian
    # z -> its sd is sqrt((u_k kappa)^2 + (u_s kappa_e)^2) (analytic propagation, exact);
    # the +-1 sd central interval holds 68.27 %.
    kappa, sigma, L = 2.0, 1e5, 2.0e-8
    u = {"kappa": (0.10, 0.0), "sigma": (0.05, 0.0), "S": 0.0}  # systematic parts only
    r = split(T5, np.full(5, kappa), np.full(5, sigma), lorenz=L, uncertainty=u, draws=100_000,
              seed=11)
    ke = L * sigma * T5
    sd = np.sqrt((0.10 * kappa) ** 2 + (0.05 * ke) ** 2)
    # MC quantile error at 1e5 draws (the most allowed) is ~0.5 % of sd; allow 1.5 %
    np.testing.assert_allclose(r.kappa_L_err, sd, rtol=0.015)
    np.testing.assert_allclose(r.kappa_L_low, (kappa - ke) - sd, atol=0.015 * sd.max())
    np.testing.assert_allclose(r.kappa_e_high - r.kappa_e, 0.05 * ke, rtol=0.015)


def test_seeded_reproducible():
    args = (T5, np.full(5, 2.0), np.full(5, 1e5), np.full(5, 150e-6))
    a, b = split(*args, seed=3, draws=300), split(*args, seed=3, draws=300)
    c = split(*args, seed=4, draws=300)
    np.testing.assert_array_equal(a.kappa_L_low, b.kappa_L_low)
    assert not np.array_equal(a.kappa_L_low, c.kappa_L_low)


def synthetic(bipolar: bool):
    T = np.arange(300.0, 801.0, 25.0)
    kL = 600.0 / T + 0.4
    if bipolar:
        kL = kL + np.where(T >= 600, 0.004 * (T - 575.0), 0.0)  # kink at 575 K: > 0 from 600 K
    sigma = np.full(T.size, 5e4)
    S = np.full(T.size, 180e-6)
    return T, kL + lorenz_spb(S) * sigma * T, sigma, S


def test_bipolar_onset_found_on_a_known_upturn():
    T, kappa, sigma, S = synthetic(True)
    r = split(T, kappa, sigma, S, draws=500, uncertainty={"S": 0.06})
    b = r.bipolar
    assert b.window_auto and b.fit_window == (300.0, 450.0)
    assert b.coefficients == pytest.approx((600.0, 0.4), rel=1e-9)
    assert b.onset == 600.0
    np.testing.assert_allclose(b.excess[T >= 600], 0.004 * (T[T >= 600] - 575.0), atol=1e-9)
    assert b.bipolar.sum() == np.sum(T >= 600)


def test_no_bipolar_onset_without_upturn():
    T, kappa, sigma, S = synthetic(False)
    r = split(T, kappa, sigma, S, draws=500, fit_window=(300.0, 500.0))
    assert r.bipolar.onset is None and not r.bipolar.window_auto
    assert r.bipolar.fit_window == (300.0, 500.0)


def test_fit_window_needs_three_rows():
    T, kappa, sigma, S = synthetic(False)
    with pytest.raises(DataError, match="fit_window = 300 K:330 K: contains 2 rows"):
        split(T, kappa, sigma, S, draws=200, fit_window=(300.0, 330.0))


def test_goldsmid_sharp_interior_maximum():
    T = np.array([300.0, 400.0, 500.0, 600.0, 700.0])
    S = np.array([150e-6, 200e-6, 250e-6, 220e-6, 180e-6])
    r = split(T, np.full(5, 1.5), np.full(5, 3e4), S, draws=200)
    # hand-worked: 2 * 250 uV/K * 500 K = 0.250 eV
    assert r.bipolar.gap / sc.e == pytest.approx(0.250, rel=1e-12)
    assert "rough estimate" in r.bipolar.gap_note


def test_missing_seebeck_for_spb_and_kim():
    for model in ("spb", "kim"):
        with pytest.raises(DataError, match=f"needed for lorenz {model}"):
            split(T5, np.full(5, 2.0), np.full(5, 1e5), lorenz=model)


def test_bad_options():
    args = (T5, np.full(5, 2.0), np.full(5, 1e5))
    with pytest.raises(DataError, match="keys allowed"):
        split(*args, lorenz="degenerate", uncertainty={"T": 0.01})
    with pytest.raises(DataError, match="lorenz = 2: a constant Lorenz number"):
        split(*args, lorenz=2.0)
    with pytest.raises(DataError, match="give both"):
        split(*args, lorenz="degenerate", number_density=5e28)


def test_nonpositive_flag_warns():
    with pytest.warns(KappaWarning, match="kappa_L <= 0"):
        r = split(T5, np.full(5, 0.5), np.full(5, 1e5), lorenz="degenerate", draws=200)
    assert r.nonpositive.all()


SI_N = 2329.0 / (28.0855e-3 / sc.N_A)  # silicon: rho 2.329 g/cm^3 (tests/reference_values.py, P)
SI_V = (8950.0, 5345.0, 5345.0)  # Hill-average velocities from tests/reference_values.py (D)


def test_cahill_minimum_silicon():
    # source: tests/reference_values.py (D): derived from the Cahill-Watson-Pohl formula (Phys. Rev. B 46,
    # 6131 (1992)) with the silicon velocities above: 1.148 W/(m K) at 300 K, 1.48 high-T limit
    assert cahill_minimum(300.0, SI_N, SI_V) == pytest.approx(1.148, abs=0.001)
    assert cahill_minimum(1e6, SI_N, SI_V) == pytest.approx(1.48, abs=0.005)
    high = (math.pi / 6) ** (1 / 3) * sc.k * SI_N ** (2 / 3) * sum(SI_V) / 2
    assert cahill_minimum(1e7, SI_N, SI_V) == pytest.approx(high, rel=1e-6)


def test_cahill_minimum_against_quad():
    # independent: scipy.integrate.quad of the same integral
    T = 120.0
    kd = (6 * math.pi**2 * SI_N) ** (1 / 3)
    total = 0.0
    for v in SI_V:
        th = v * sc.hbar / sc.k * kd
        integral = quad(lambda x: x**3 * math.exp(x) / math.expm1(x) ** 2, 0, th / T)[0]
        total += v * (T / th) ** 2 * integral
    expected = (math.pi / 6) ** (1 / 3) * sc.k * SI_N ** (2 / 3) * total
    assert cahill_minimum(T, SI_N, SI_V) == pytest.approx(expected, rel=1e-10)
    assert cahill_minimum(T, SI_N, [8950.0, 5345.0]) == pytest.approx(expected, rel=1e-14)


def test_below_cahill_minimum_flag():
    with pytest.warns(KappaWarning, match="below the Cahill minimum"):
        r = split(T5, np.full(5, 2.0), np.full(5, 1.0e5), lorenz="degenerate", draws=200,
                  number_density=SI_N, sound_velocities=SI_V)
    # kappa_L = 2.0 - 2.443e-8 * 1e5 * T: 1.267 at 300 K (above 1.148), 1.145 at 350 K and
    # lower after, while the minimum grows above 1.148 with T (hand arithmetic)
    np.testing.assert_array_equal(r.below_minimum, [False, True, True, True, True])
    assert r.kappa_min[0] == pytest.approx(1.148, abs=0.001)
