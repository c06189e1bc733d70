"""Fits of model parameters to measured κ_L(T), and bands from their covariance."""

from kappa.workflows.fitting.band import Band, Covariance, draw_models, prediction_band
from kappa.workflows.fitting.data import FitData, SeriesSample, fit_data
from kappa.workflows.fitting.fit import FIT_CITATIONS, fit, fit_series
from kappa.workflows.fitting.parameters import FreeParameter
from kappa.workflows.fitting.result import FitResult, FittedParameter, SampleFit

__all__ = [
    "Band",
    "Covariance",
    "FIT_CITATIONS",
    "FitData",
    "FitResult",
    "FittedParameter",
    "FreeParameter",
    "SampleFit",
    "SeriesSample",
    "draw_models",
    "fit",
    "fit_data",
    "fit_series",
    "prediction_band",
]
