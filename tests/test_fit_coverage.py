"""Do the fit's 68 % intervals hold the truth 68 % of the time when the data carry a shared
(systematic) error and point-to-point scatter? And the what-if intervals built on them?

Synthetic data of a cheap averaged model (few points) with a known truth; every seed draws one
shared relative error (11 %, like the round-robin kappa uncertainty) and independent 2 %
scatter per point, and gives the two parts as a split would (proportional to the measured
values). Seeds are fixed, so the test is deterministic.

How many seeds: the fraction of N intervals holding the truth is binomial; for p = 0.6827
(erf(1/sqrt 2), tests/reference_values.py) its standard deviation is sqrt(p (1 - p) / N) =
0.033 at N = 200, so the accepted range 60-76 % is -2.5 to +2.4 standard deviations wide: a
correct method fails it with a few per cent probability for a random seed set, and the fixed
seed set below was not chosen after looking (it is the first 200 of a fixed base).
"""

import math
import warnings

import numpy as np
import pytest

from kappa.core.evaluator import conductivity
from kappa.errors import KappaWarning
from kappa.io.config import config_from_dict
from kappa.workflows.fitting import Covariance, fit, fit_data
from kappa.workflows.whatif import what_if

from .reference_values import VALUES

P68 = VALUES["gaussian_68"].value
N_SEEDS = 200
BASE_SEED = 20_000
LOW, HIGH = 0.60, 0.76
SHARED, SCATTER = 0.11, 0.02  # relative 1-sigma: shared by all points / per point

# A cheap averaged model (parameters chosen for this test, no outside source).
BASE = {"material": {"name": "coverage", "atomic_mass": "28.0855 u",
                     "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                     "sound_velocity": "6084 m/s", "gruneisen": 1.0},
        "scattering": {"boundary": {"grain_size": "1 um"},
                       "point_defect": {"mass_variance": 1e-3}}}
CASES = {
    "one": (np.linspace(150.0, 600.0, 8), {"material.gruneisen": 1.2},
            {"scattering.point_defect.mass_variance": 0.01}),
    "three": (np.geomspace(10.0, 600.0, 10),
              {"material.gruneisen": 1.2, "scattering.boundary.grain_size": 3e-7,
               "scattering.point_defect.mass_variance": 3e-3},
              {"scattering.boundary.grain_size": 5e-8}),
}
T_WHAT_IF = 300.0


def _run(case, errors="separate", n=N_SEEDS, what_ifs=True):
    T, truth, change = CASES[case]
    model = config_from_dict(BASE).model
    true_model = model.with_values(truth)
    k_true = conductivity(true_model, T)
    true_ratio = float(conductivity(true_model.with_values(change), [T_WHAT_IF])[0]
                       / conductivity(true_model, [T_WHAT_IF])[0])
    held = np.zeros(len(truth))
    ratio_held = 0
    for seed in range(n):
        rng = np.random.default_rng(BASE_SEED + seed)
        k = k_true * (1.0 + SHARED * rng.standard_normal() + SCATTER * rng.standard_normal(T.size))
        if errors == "separate":
            data = fit_data(T, k, SCATTER * k, systematic=SHARED * k)
        else:  # the total taken as independent per point
            data = fit_data(T, k, math.hypot(SHARED, SCATTER) * k)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", KappaWarning)  # χ² notes on some seeds
            res = fit(model, data, list(truth), starts=1, checks=False)
        for i, (key, value) in enumerate(truth.items()):
            p = res.parameter(key)
            held[i] += p.low68 <= value <= p.high68
        if what_ifs:
            w = what_if(res.model, Covariance.from_result(res), change, [T_WHAT_IF],
                        draws=200, seed=seed)
            ratio_held += w.ratio_low[0, 0] <= true_ratio <= w.ratio_high[0, 0]
    return held / n, ratio_held / n


@pytest.mark.parametrize("case", ["one", "three"])
def test_parameter_and_what_if_intervals_hold_the_truth_at_the_stated_rate(case):
    held, ratio_held = _run(case)
    print(f"{case}: parameters {held}, what-if ratio {ratio_held} (expected {P68:.3f})")
    assert np.all((held >= LOW) & (held <= HIGH)), held
    assert LOW <= ratio_held <= HIGH, ratio_held


def test_total_errors_as_independent_undercover_a_level_parameter():
    # the reason for the shared scale: with the total (11 % shared + 2 %) taken as independent
    # per point, the one parameter that sets the level gets an interval about 1/sqrt(n) too
    # narrow: it held the truth in about a quarter of the cases when this was written; half
    # is far outside the binomial spread of 100 seeds (0.047)
    held, _ = _run("one", errors="total", n=100, what_ifs=False)
    assert held[0] < 0.5
