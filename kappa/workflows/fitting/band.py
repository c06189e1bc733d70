"""Bands from a fit's covariance: parameter sets drawn around the fitted values.

The fitted parameters' joint uncertainty is a :class:`Covariance` in the fit's transformed
space (ln value for log-space parameters). :func:`draw_models` draws parameter sets from it
into one batch of models; :func:`prediction_band` turns them into a 68 % band of κ_L(T).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kappa.core.evaluator import check_temperature, conductivity
from kappa.core.model import Model
from kappa.errors import ConfigError, warn
from kappa.workflows.fitting.result import FitResult

__all__ = ["Covariance", "Band", "draw_models", "prediction_band", "BAND_MAX_LOG_SIGMA"]

BAND_MAX_LOG_SIGMA = math.log(10.0)  #: bands refuse a log-space parameter with σ_u above this


@dataclass(frozen=True)
class Covariance:
    """Fitted keys with their values and joint covariance in the transformed space.

    Attributes
    ----------
    keys : tuple of str
    spaces : tuple of str
        ``"log"`` (u = ln value) or ``"linear"`` (u = value) per key.
    values : tuple of float
        Fitted values [SI].
    matrix : ndarray
        Covariance of u.
    at_bound : tuple of str
        ``""``, ``"lower"``, ``"upper"`` or ``"search limit"`` per key.
    """

    keys: tuple[str, ...]
    spaces: tuple[str, ...]
    values: tuple[float, ...]
    matrix: np.ndarray
    at_bound: tuple[str, ...] = ()

    @classmethod
    def from_result(cls, result: FitResult, sample: str | None = None) -> Covariance:
        """The parameters acting on ``sample`` (shared ones and its own) and their block."""
        idx = [i for i, p in enumerate(result.parameters) if p.sample in (None, sample)]
        return cls(tuple(result.parameters[i].key for i in idx),
                   tuple(result.spaces[i] for i in idx),
                   tuple(result.parameters[i].value for i in idx),
                   result.covariance[np.ix_(idx, idx)],
                   tuple(result.parameters[i].at_bound for i in idx))

    def check(self) -> None:
        """Raise unless every parameter was determined well enough for a band."""
        if not np.all(np.isfinite(self.matrix)):
            raise ConfigError("covariance", "infinite entries", "the fit left a parameter "
                              "undetermined; no band can be drawn")
        for i, (key, space) in enumerate(zip(self.keys, self.spaces, strict=True)):
            sigma_u = math.sqrt(max(self.matrix[i, i], 0.0))
            bound = self.at_bound[i] if i < len(self.at_bound) else ""
            if bound == "search limit" or (space == "log" and sigma_u > BAND_MAX_LOG_SIGMA):
                raise ConfigError("covariance", key, "was not determined by the fit (it ran "
                                  "to its search limit or its 68 % interval spans more than a "
                                  f"factor {math.exp(2 * BAND_MAX_LOG_SIGMA):.0f}); a band "
                                  "from this fit would be meaningless: refit with this key "
                                  "fixed or bounded")


def draw_models(model: Model, covariance: Covariance, draws: int, seed: int = 0
                ) -> tuple[Model, int]:
    """A batch of models with the covariance's keys drawn around the model's own values.

    Draws outside a parameter's allowed range are left out. Returns (batch, rejected).
    """
    covariance.check()
    centre = []
    for key, space, fitted in zip(covariance.keys, covariance.spaces, covariance.values,
                                  strict=True):
        now = float(model.value(key))
        if not math.isclose(now, float(fitted), rel_tol=1e-8, abs_tol=1e-300):
            warn(f"{key} = {now:.6g} in the model differs from the fitted {float(fitted):.6g}; "
                 "the band is drawn around the model's value")
        centre.append(math.log(now) if space == "log" else now)
    rng = np.random.default_rng(seed)
    U = rng.multivariate_normal(np.array(centre), covariance.matrix, size=int(draws),
                                method="eigh")
    values = np.where(np.array(covariance.spaces) == "log", np.exp(U), U)
    ok = np.ones(len(values), dtype=bool)
    for i, key in enumerate(covariance.keys):
        ok &= np.asarray(model.parameter(key).contains(values[:, i]))
    batch = model.with_values({key: values[ok, i] for i, key in enumerate(covariance.keys)})
    return batch, int((~ok).sum())


@dataclass(frozen=True)
class Band:
    """κ_L(T) with the 68 % band from a fit covariance.

    ``low``/``high`` are the 16th/84th percentiles of κ_L over the accepted parameter sets
    drawn from the covariance around the model's values of the fitted keys.
    """

    temperature: np.ndarray
    kappa_L: np.ndarray
    low: np.ndarray
    high: np.ndarray
    draws: int
    rejected: int
    keys: tuple[str, ...]


def prediction_band(model: Model, covariance: Covariance, temperature: Sequence[float], *,
                    draws: int = 400, seed: int = 0) -> Band:
    """68 % band of κ_L(T) from a fit's covariance.

    Parameters
    ----------
    model : Model
        Usually the fitted model the covariance belongs to.
    covariance : Covariance
        From :meth:`Covariance.from_result` or a fit record.
    temperature : array_like
        [K].
    draws : int
        Number of parameter sets (at least 10 must fall inside the allowed ranges).
    seed : int
        Seed of the draws.
    """
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or not \
            10 <= draws <= 100_000:
        raise ConfigError("draws", draws, "must be a whole number from 10 to 100000")
    T = check_temperature(temperature)
    batch, rejected = draw_models(model, covariance, draws, seed)
    accepted = draws - rejected
    if accepted < 10:
        raise ConfigError("draws", f"{rejected} of {draws} draws rejected",
                          "too few parameter sets inside the allowed ranges for a band")
    if rejected > 0.1 * draws:
        warn(f"{rejected} of {draws} parameter draws fell outside the allowed ranges and were "
             "left out; the band is only indicative")
    curves = conductivity(batch, T)
    low, high = np.percentile(curves, [16.0, 84.0], axis=0)
    return Band(T, conductivity(model, T), low, high, accepted, rejected, covariance.keys)
