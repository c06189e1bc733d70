"""The bundled silicon config against measured κ(T) of natural silicon and the isotope effect.

Measured values (tests/reference_values.py, with their sources): Glassbrenner & Slack,
Phys. Rev. 134, A1058 (1964) and handbook tables — 300 K 148–156 W/(m K) (published, 152 used);
100 K ≈ 880–950 (915), 200 K ≈ 260–270 (265), 400 K ≈ 100, 500 K ≈ 76, 600 K ≈ 62, 800 K ≈ 42
(from memory). Isotopically enriched ²⁸Si: +10 ± 2 % at 300 K (Inyushkin et al., phys. stat.
sol. (c) 1, 2995 (2004), published).

Target (the project's): a fit freeing at most three keys reproduces every point within 5 %, with
physical values (γ between 0.3 and 3, normal-process scale between 0.1 and 10, none at a bound
of the fit) — met. The isotope effect within ±2 % is NOT met: the model gives +16 % (README.md,
"Silicon and germanium", says why); the strict xfail below records that, and the test beside it
checks the size within a factor of two.
"""

import warnings
from pathlib import Path

import numpy as np
import pytest

from kappa.core.evaluator import conductivity
from kappa.errors import KappaWarning
from kappa.io.config import load_config
from kappa.workflows.fitting import fit, fit_data
from kappa.workflows.predict import predict

from .reference_values import VALUES, value

CONFIG = Path(__file__).resolve().parents[1] / "configs" / "silicon.yaml"
TEMPERATURES = (100, 200, 300, 400, 500, 600, 800)
MEASURED = [(float(t), value(f"kappa_si_{t}K"), VALUES[f"kappa_si_{t}K"].source)
            for t in TEMPERATURES]
TARGET = 0.05  # the project's target for the bundled configs, 100-800 K
FREE = ["material.branches.0.gruneisen", "material.branches.1.gruneisen",
        "scattering.normal.scale"]
GAMMA_RANGE = (0.3, 3.0)  # common practice, no source: Grüneisen parameters of solids
SCALE_RANGE = (0.1, 10.0)  # common practice, no source: the branch forms hold within ~10x
ENRICHED_GAMMA = 3.4e-7  # derived: Σf(1−m/m̄)² of 99.983/0.014/0.003 % 28/29/30Si (IUPAC masses)


def _model():
    return load_config(CONFIG).model


@pytest.fixture(scope="module")
def fitted():
    T = np.array([t for t, _, _ in MEASURED])
    k = np.array([v for _, v, _ in MEASURED])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", KappaWarning)
        return fit(_model(), fit_data(T, k), FREE, starts=3)


@pytest.mark.parametrize(("T", "kappa", "source"), MEASURED)
def test_config_as_bundled_within_target(T, kappa, source):
    p = predict(_model(), [T], warnings=False)
    assert p.kappa_L[0] == pytest.approx(kappa, rel=TARGET), source


def test_three_key_fit_reproduces_measured_kappa(fitted):
    for (T, kappa, source), model_value in zip(
            MEASURED, conductivity(fitted.model, [t for t, _, _ in MEASURED]), strict=True):
        assert model_value == pytest.approx(kappa, rel=TARGET), (T, source)
    for p in fitted.parameters:
        low, high = GAMMA_RANGE if "gruneisen" in p.key else SCALE_RANGE
        assert low < p.value < high, p.key
        assert not p.at_bound, p.key


def test_transverse_branches_are_sine():
    b = _model().material.branches[1]
    assert b.dispersion == "sine" and b.polarization == "transverse"


def _gain(model):
    enriched = model.with_values({"scattering.point_defect.mass_variance": ENRICHED_GAMMA})
    return conductivity(enriched, [300.0])[0] / conductivity(model, [300.0])[0] - 1.0


def test_isotope_gain_has_the_measured_sign_and_size(fitted):
    # within a factor of two of the published +10 % (Inyushkin et al. 2004)
    gain = _gain(fitted.model)
    assert value("si28_gain_300K") / 2 < gain < 2 * value("si28_gain_300K")


@pytest.mark.xfail(strict=True, reason="known limit of the model: +16 % against the measured "
                   "+10 ± 2 % (README, 'Silicon and germanium')")
def test_isotope_gain_within_its_published_uncertainty(fitted):
    ref = VALUES["si28_gain_300K"]
    assert _gain(fitted.model) == pytest.approx(ref.value, rel=ref.tolerance)
