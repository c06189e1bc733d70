"""What-if answers with error bars: the band against a brute-force sample of the covariance,
the flags, the check that a fit record belongs to the model, alloys."""

import numpy as np
import pytest

from kappa.core.evaluator import conductivity
from kappa.errors import ConfigError
from kappa.io.config import config_from_dict
from kappa.workflows.fitting import Covariance
from kappa.workflows.whatif import PERCENTILES, alloy_what_if, flags, what_if

from .reference_values import VALUES

BASE = {"material": {"name": "what-if", "atomic_mass": "28.0855 u",
                     "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                     "sound_velocity": "6084 m/s", "gruneisen": 1.2},
        "scattering": {"boundary": {"grain_size": "300 nm"},
                       "point_defect": {"mass_variance": 3e-3}}}
KEYS = ("material.gruneisen", "scattering.boundary.grain_size")
# a covariance of the kind a fit gives (ln-space, correlated; numbers chosen for this test)
SD = np.array([0.06, 0.15])
CORR = np.array([[1.0, -0.6], [-0.6, 1.0]])
MATRIX = CORR * np.outer(SD, SD)


def _model():
    return config_from_dict(BASE).model


def _covariance(model):
    return Covariance(KEYS, ("log", "log"), tuple(float(model.value(k)) for k in KEYS), MATRIX)


def test_band_matches_a_brute_force_sample_of_the_covariance():
    # Brute force, independent of kappa's drawing: numpy's multivariate normal in ln-space,
    # one model per draw, κ_L of the scenario and of the sample per draw, percentiles.
    model = _model()
    T = np.array([100.0, 300.0])
    change = {"scattering.point_defect.mass_variance": [1e-4, 3e-2]}
    rng = np.random.default_rng(12345)
    n = 4000
    U = rng.multivariate_normal(np.log([model.value(k) for k in KEYS]), MATRIX, size=n)
    values = {k: np.exp(U[:, i]) for i, k in enumerate(KEYS)}
    ref = conductivity(model.with_values(values), T)
    expected = []
    for g in change["scattering.point_defect.mass_variance"]:
        k = conductivity(model.with_values({**values,
                                            "scattering.point_defect.mass_variance": g}), T)
        expected.append((np.percentile(k, PERCENTILES, axis=0),
                         np.percentile(k / ref, PERCENTILES, axis=0)))
    w = what_if(model, _covariance(model), change, T, draws=n, seed=1)
    assert w.draws == n and w.rejected == 0
    for s, (k_int, r_int) in enumerate(expected):
        # two independent samples of 4000: each percentile to about 0.025 standard deviations
        # of the distribution; compare to 0.15 half-widths
        half = 0.5 * (k_int[1] - k_int[0])
        np.testing.assert_allclose(w.low[s], k_int[0], atol=0.15 * half.max())
        np.testing.assert_allclose(w.high[s], k_int[1], atol=0.15 * half.max())
        half_r = 0.5 * (r_int[1] - r_int[0])
        np.testing.assert_allclose(w.ratio_low[s], r_int[0], atol=0.15 * half_r.max())
        np.testing.assert_allclose(w.ratio_high[s], r_int[1], atol=0.15 * half_r.max())
        # the central answer is the fitted values with the change
        g = change["scattering.point_defect.mass_variance"][s]
        np.testing.assert_allclose(
            w.kappa_L[s], conductivity(model.with_values(
                {"scattering.point_defect.mass_variance": g}), T), rtol=1e-12)
    # the sample itself: the prediction band of the same draws
    np.testing.assert_allclose(w.reference_low, np.percentile(ref, PERCENTILES, axis=0)[0],
                               rtol=0.01)


def test_interval_of_a_linear_case_is_plus_minus_one_sigma():
    # one log-space parameter with a small sigma: the interval of κ_L is κ (1 ± s |dlnκ/dlnγ|)
    # (first-order propagation written here, slope by central differences); 68.27 % is the
    # probability of ±1 sigma (tests/reference_values.py)
    assert PERCENTILES[1] - PERCENTILES[0] == pytest.approx(100 * VALUES["gaussian_68"].value,
                                                            rel=1e-12)
    model = _model()
    s = 0.01
    cov = Covariance(("material.gruneisen",), ("log",), (1.2,), np.array([[s**2]]))
    w = what_if(model, cov, {"scattering.boundary.grain_size": 1e-6}, [300.0], draws=20_000,
                seed=3)
    h = 1e-4
    k = [conductivity(model.with_values({"material.gruneisen": 1.2 * np.exp(e),
                                         "scattering.boundary.grain_size": 1e-6}), [300.0])[0]
         for e in (-h, h)]
    slope = (np.log(k[1]) - np.log(k[0])) / (2 * h)
    half = 0.5 * (w.high[0, 0] - w.low[0, 0]) / w.kappa_L[0, 0]
    assert half == pytest.approx(abs(slope) * s, rel=0.03)  # 2e4 draws: about 1 %


@pytest.mark.parametrize("ratio_low, ratio_high, includes, spans", [
    (1.06, 1.15, False, True),    # +6 % to +15 %: the change spans more than a factor of two
    (1.10, 1.12, False, False),   # +10 % to +12 %: pinned
    (0.97, 1.05, True, False),    # includes no change
    (0.55, 0.80, False, True),    # -45 % to -20 %: a factor 2.25 in the change
    (0.55, 0.70, False, False),   # -45 % to -30 %: a factor 1.5
    (1.0, 1.0, False, False),     # the sample itself: nothing to pin
])
def test_flags(ratio_low, ratio_high, includes, spans):
    lo, hi = np.array([[1.0]]), np.array([[1.5]])
    inc, spn = flags(lo, hi, np.array([[ratio_low]]), np.array([[ratio_high]]))
    assert bool(inc[0, 0]) == includes and bool(spn[0, 0]) == spans


def test_kappa_interval_of_more_than_a_factor_two_is_flagged():
    inc, spn = flags(np.array([[1.0]]), np.array([[2.5]]), np.array([[0.5]]),
                     np.array([[0.6]]))
    assert not inc[0, 0] and spn[0, 0]


def test_record_must_belong_to_the_model():
    model = _model()
    cov = _covariance(model)
    other = Covariance(("scattering.normal.ratio",), ("log",), (0.5,), np.array([[0.01]]))
    with pytest.raises(ConfigError, match="scattering.normal.ratio: the fit record's key is not "
                                          "in this config"):
        what_if(model, other, {"material.gruneisen": 1.0}, [300.0])
    moved = model.with_values({"material.gruneisen": 1.3})
    with pytest.raises(ConfigError, match="material.gruneisen = 1.3: differs from the fitted 1.2"):
        what_if(moved, cov, {"scattering.boundary.grain_size": 1e-7}, [300.0])
    # a change of a fitted key replaces its draws: no spread from that key left
    w = what_if(model, Covariance(KEYS[:1], ("log",), (1.2,), MATRIX[:1, :1]),
                {"material.gruneisen": 1.5}, [300.0], draws=200)
    assert w.low[0, 0] == pytest.approx(w.high[0, 0], rel=1e-12)


def test_bad_changes_and_draws():
    model = _model()
    cov = _covariance(model)
    with pytest.raises(ConfigError, match="give 1 or 3 values"):
        what_if(model, cov, {"material.gruneisen": [1, 2, 3],
                             "scattering.boundary.grain_size": [1e-7, 1e-6]}, [300.0])
    with pytest.raises(ConfigError, match="draws = 10"):
        what_if(model, cov, {"material.gruneisen": 1.0}, [300.0], draws=10)


def test_alloy_intervals_from_the_first_end_member():
    a = _model()
    b = config_from_dict({**BASE, "material": {**BASE["material"], "atomic_mass": "72.63 u",
                                                "sound_velocity": "3900 m/s"}}).model
    x = np.array([0.0, 0.1, 0.5])
    w = alloy_what_if(a, _covariance(a), b, x, [300.0], draws=400, seed=2)
    # the central values are the alloy series of the fitted end member
    from kappa.workflows.alloy import alloy_series

    series = alloy_series(a, b, x, [300.0], warnings=False)
    np.testing.assert_allclose(w.kappa_L, series.kappa_L, rtol=1e-12)
    assert np.all(w.low <= w.kappa_L) and np.all(w.kappa_L <= w.high)
    assert w.ratio[1, 0] < 1.0 and w.ratio_high[2, 0] < w.ratio_low[1, 0]
