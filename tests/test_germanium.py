"""The bundled germanium config against measured κ(T) of natural germanium.

Measured values (tests/reference_values.py): Glassbrenner & Slack, Phys. Rev. 134, A1058 (1964)
and handbook tables, 100-800 K — from memory. Target (the project's): a fit freeing at most
three keys reproduces every point within 5 % with physical values (γ between 0.3 and 3,
normal-process scale between 0.1 and 10, none at a bound).
"""

import warnings
from pathlib import Path

import numpy as np
import pytest

from kappa.core.evaluator import conductivity
from kappa.errors import KappaWarning
from kappa.io.config import load_config
from kappa.workflows.fitting import fit, fit_data

from .reference_values import VALUES, value

CONFIG = Path(__file__).resolve().parents[1] / "configs" / "germanium.yaml"
TEMPERATURES = (100, 200, 300, 400, 500, 600, 800)
MEASURED = [(float(t), value(f"kappa_ge_{t}K"), VALUES[f"kappa_ge_{t}K"].source)
            for t in TEMPERATURES]
TARGET = 0.05
FREE = ["material.branches.0.gruneisen", "material.branches.1.gruneisen",
        "scattering.normal.scale"]


def test_config_as_bundled_within_target():
    model = load_config(CONFIG).model
    k = conductivity(model, [t for t, _, _ in MEASURED])
    for (T, kappa, source), got in zip(MEASURED, k, strict=True):
        assert got == pytest.approx(kappa, rel=TARGET), (T, source)


def test_three_key_fit_reproduces_measured_kappa():
    T = np.array([t for t, _, _ in MEASURED])
    k = np.array([v for _, v, _ in MEASURED])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", KappaWarning)
        res = fit(load_config(CONFIG).model, fit_data(T, k), FREE, starts=3)
    np.testing.assert_allclose(conductivity(res.model, T), k, rtol=TARGET)
    for p in res.parameters:
        low, high = (0.3, 3.0) if "gruneisen" in p.key else (0.1, 10.0)  # common practice
        assert low < p.value < high, p.key
        assert not p.at_bound, p.key
