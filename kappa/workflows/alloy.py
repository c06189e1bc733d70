"""Alloy series: κ_L(x) between two end members, with and without the strain disorder.

The interpolation rules and the alloy's disorder live in :mod:`kappa.core.alloy`; this
workflow evaluates the two batch models over x (mass + strain disorder, and mass only) with
the one evaluator. It holds no formula of its own.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kappa.core.alloy import ALLOY_CITATIONS, AlloyModels, alloy_models
from kappa.core.checks import model_warnings, temperature_warnings
from kappa.core.disorder import DEFAULT_STRAIN_PARAMETER, DISORDER_CITATIONS
from kappa.core.evaluator import CALLAWAY_CITATION, check_temperature, conductivity
from kappa.core.model import Model
from kappa.errors import warn

__all__ = ["AlloySeries", "alloy_series"]


@dataclass(frozen=True)
class AlloySeries:
    """κ_L over alloy fraction × temperature.

    Attributes
    ----------
    fraction : ndarray, shape (nx,)
    temperature : ndarray, shape (nT,)
    kappa_L : ndarray, shape (nx, nT)
        With mass and strain disorder [W/(m K)].
    kappa_L_mass_only : ndarray, shape (nx, nT)
        With the mass disorder only [W/(m K)].
    models : AlloyModels
        The batch models, interpolated values and Γ(x).
    """

    fraction: np.ndarray
    temperature: np.ndarray
    kappa_L: np.ndarray
    kappa_L_mass_only: np.ndarray
    models: AlloyModels = field(repr=False)
    citations: list[str] = field(default_factory=list)


def alloy_series(model_a: Model, model_b: Model, fraction, temperature, *,
                 strain_parameter: float = DEFAULT_STRAIN_PARAMETER,
                 names: tuple[str, str] = ("A", "B"), warnings: bool = True) -> AlloySeries:
    """κ_L(x, T) of the alloy (1 − x)·A + x·B.

    Parameters
    ----------
    model_a, model_b : Model
        The end members (single models).
    fraction : array_like
        Alloy fractions x in [0, 1].
    temperature : array_like
        [K].
    strain_parameter : float
        ε of the strain term.
    names : (str, str)
        How errors name the end members (e.g. their file names).
    """
    T = check_temperature(temperature)
    models = alloy_models(model_a, model_b, fraction, strain_parameter=strain_parameter,
                          names=names)
    if warnings:
        seen = set()
        for m in (model_a, model_b):
            for message in model_warnings(m) + temperature_warnings(m, T):
                if message not in seen:
                    seen.add(message)
                    warn(message)
    k = conductivity(models.model, T)
    k_mass = conductivity(models.mass_only, T)
    cites = [CALLAWAY_CITATION, *models.model.mechanisms.citations(), *ALLOY_CITATIONS,
             *DISORDER_CITATIONS]
    return AlloySeries(models.fraction, T, k, k_mass, models, list(dict.fromkeys(cites)))
