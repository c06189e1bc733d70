"""What a study computes after the fit: scenario answers with the fit's uncertainty, and zT.

The steps of a study (split → fit → spectrum → scenarios) are the library calls of the single
commands (:func:`~kappa.workflows.split.split_measurements`,
:func:`~kappa.workflows.fitting.fit_series`, :func:`~kappa.workflows.spectrum.spectrum`,
:func:`~kappa.workflows.predict.predict`); this module adds only what a study needs on top:

* :func:`what_if` — κ_L(T) of a scenario model next to the fitted model, with 68 % intervals
  from the fit's covariance. Parameter sets are drawn once
  (:func:`~kappa.workflows.fitting.band.draw_models`); the fitted model and the scenario are
  evaluated with the *same* draws (the scenario holds the keys it sets), so the ratio
  κ_L(scenario)/κ_L(fitted) is as well determined as the data allow — much better than
  either curve alone. This is the one place where uncertainty is propagated into the
  answers.
* :func:`project_zT` — zT of the measured sample if its κ_L changed by the model's ratio,
  with the measured Seebeck coefficient S, electrical conductivity σ and electronic part κ_e
  held fixed (zT' = S²σT / (κ + κ_L(r − 1)); at r = 1 it is the measured zT exactly).
* :func:`answers` — the answer table: κ_L change and projected zT at chosen temperatures.

It reads and writes no files.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kappa.core.electronic import figure_of_merit
from kappa.core.evaluator import check_temperature, conductivity
from kappa.core.model import Model
from kappa.errors import KappaError
from kappa.workflows.fitting.band import Covariance, draw_models
from kappa.workflows.predict import predict
from kappa.workflows.split import SplitResult
from kappa.workflows.whatif import PERCENTILES

__all__ = ["WhatIf", "what_if", "ZTProjection", "project_zT", "Answer", "answers",
           "default_at", "LOW", "HIGH", "ZT_ASSUMPTION", "CAUTIONS"]

#: Percentiles of the reported interval (the central 68 %, as every what-if answer of kappa).
LOW, HIGH = PERCENTILES
#: The assumption behind every projected zT, stated next to the numbers.
ZT_ASSUMPTION = ("measured S, σ and κ_e held fixed; only κ_L changes, by the model's ratio "
                 "κ_L(scenario)/κ_L(fitted)")
_MIN_ACCEPTED = 10

#: The cautions of every study report (also in its run.json).
CAUTIONS = [
    "Every number after the split is a model estimate: the Callaway/Debye model with the "
    "fitted parameters. The intervals carry the fit's statistical uncertainty only, not the "
    "error of the model itself.",
    "Projected zT holds the measured Seebeck coefficient S, electrical conductivity σ and "
    "electronic part κ_e fixed and changes only κ_L. Grain boundaries and alloying also "
    "scatter electrons: smaller grains and more alloying usually lower σ (and can change S), "
    "so the real gain in zT is usually smaller than projected, and can be a loss.",
    "The measured κ_L contains any bipolar part; the projection scales it with the phonon "
    "part. Above the bipolar onset the projected zT is less reliable.",
    "Validate by measurement: make the sample the scenario describes and measure it.",
    "These results are not a basis for the thermal design of any device without the "
    "applicable codes and licensed engineering practice.",
]


@dataclass(frozen=True)
class WhatIf:
    """κ_L(T) of a scenario next to the fitted model, with the fit's uncertainty.

    Attributes
    ----------
    temperature : ndarray
        [K].
    kappa_L : ndarray
        κ_L of the scenario model [W/(m K)] (as ``kappa predict`` gives it).
    reference : ndarray
        κ_L of the fitted model [W/(m K)].
    ratio : ndarray
        ``kappa_L / reference`` [1].
    low, high : ndarray or None
        16th/84th percentiles of the scenario's κ_L over the parameter sets drawn from the
        fit's covariance [W/(m K)] (None: no interval, see ``note``).
    ratio_low, ratio_high : ndarray or None
        The same for the ratio (same draws for both models).
    ratio_draws : ndarray or None
        The ratio of every accepted draw, shape (draws, temperatures).
    draws, rejected : int
        Accepted parameter sets and those left out (outside a parameter's allowed range).
    held : tuple of str
        Fitted keys the scenario sets; they are not drawn.
    note : str
        Why there is no interval (empty when there is one).
    """

    temperature: np.ndarray
    kappa_L: np.ndarray
    reference: np.ndarray
    ratio: np.ndarray
    low: np.ndarray | None
    high: np.ndarray | None
    ratio_low: np.ndarray | None
    ratio_high: np.ndarray | None
    ratio_draws: np.ndarray | None
    draws: int
    rejected: int
    held: tuple[str, ...]
    note: str = ""

    def at(self, temperature: Sequence[float]) -> WhatIf:
        """The same answer at some of its temperatures (each must be one of them)."""
        T = np.atleast_1d(np.asarray(temperature, dtype=float))
        idx = np.searchsorted(self.temperature, T)
        idx = np.clip(idx, 0, self.temperature.size - 1)
        if not np.allclose(self.temperature[idx], T, rtol=1e-12, atol=0.0):
            raise ValueError("temperature: not among the temperatures of this answer")

        def pick(a):
            return None if a is None else a[..., idx]

        return WhatIf(T, self.kappa_L[idx], self.reference[idx], self.ratio[idx], pick(self.low),
                      pick(self.high), pick(self.ratio_low), pick(self.ratio_high),
                      pick(self.ratio_draws), self.draws, self.rejected, self.held, self.note)


def what_if(model: Model, covariance: Covariance | None, scenario: Model, temperature, *,
            held: Sequence[str] = (), draws: int = 400, seed: int = 0,
            reference: np.ndarray | None = None) -> WhatIf:
    """κ_L(T) of ``scenario`` with 68 % intervals from the fit of ``model``.

    Parameters
    ----------
    model : Model
        The fitted model (a single parameter set).
    covariance : Covariance or None
        The fit's covariance (:meth:`Covariance.from_result`); None gives no interval.
    scenario : Model
        The fitted model with the scenario's changes (e.g. a smaller grain size).
    temperature : array_like
        [K], increasing.
    held : sequence of str
        Keys the scenario sets: fitted keys among them are not drawn for the scenario.
    draws, seed : int
        Parameter sets drawn from the covariance, and the seed of the draws.
    reference : ndarray, optional
        κ_L of ``model`` at ``temperature`` if already computed [W/(m K)].

    Returns
    -------
    WhatIf
        Without a usable covariance (an undetermined parameter, too many draws outside the
        allowed ranges) the intervals are None and ``note`` says why.
    """
    T = check_temperature(temperature)
    ref = (predict(model, T, switch_off=False, warnings=False).kappa_L if reference is None
           else np.asarray(reference, dtype=float))
    nominal = predict(scenario, T, switch_off=False).kappa_L
    ratio = nominal / ref
    held_fit = tuple(k for k in (covariance.keys if covariance is not None else ())
                     if k in held)
    empty = dict(low=None, high=None, ratio_low=None, ratio_high=None, ratio_draws=None,
                 draws=0, rejected=0, held=held_fit)
    if covariance is None:
        return WhatIf(T, nominal, ref, ratio, note="no fit covariance", **empty)
    try:
        base, rejected = draw_models(model, covariance, draws, seed)
    except KappaError as exc:
        return WhatIf(T, nominal, ref, ratio, note=str(exc), **empty)
    accepted = draws - rejected
    if accepted < _MIN_ACCEPTED:
        return WhatIf(T, nominal, ref, ratio, note=f"{rejected} of {draws} parameter draws fell "
                      "outside the allowed ranges", **{**empty, "rejected": rejected})
    drawn = {k: base.value(k) for k in covariance.keys if k not in held}
    changed = scenario.with_values(drawn) if drawn else scenario
    k_ref = np.broadcast_to(conductivity(base, T), (accepted, T.size))
    k_new = np.broadcast_to(conductivity(changed, T), (accepted, T.size))
    r = k_new / k_ref
    lo, hi = np.percentile(k_new, [LOW, HIGH], axis=0)
    r_lo, r_hi = np.percentile(r, [LOW, HIGH], axis=0)
    return WhatIf(T, nominal, ref, ratio, lo, hi, r_lo, r_hi, np.array(r), accepted, rejected,
                  held_fit)


@dataclass(frozen=True)
class ZTProjection:
    """zT of the measured sample with its κ_L scaled by a scenario's ratio.

    ``projected`` is NaN outside the measured temperatures (nothing is extrapolated); the
    interval carries the fit's uncertainty of the ratio only (the measurement uncertainty of
    S, σ and κ is in the split's zT band).
    """

    temperature: np.ndarray
    measured: np.ndarray
    projected: np.ndarray
    low: np.ndarray | None
    high: np.ndarray | None


def _measured(split: SplitResult, T: np.ndarray) -> tuple[np.ndarray, ...]:
    """S, σ, κ, κ_L of the split at ``T``: exact at measured temperatures, linear between,
    NaN outside."""
    Tm = split.temperature
    inside = (T >= Tm[0]) & (T <= Tm[-1])

    def at(values):
        out = np.interp(T, Tm, values)
        out[~inside] = np.nan
        return out

    return (at(split.seebeck), at(split.electrical_conductivity), at(split.kappa),
            at(split.kappa_L))


def project_zT(split: SplitResult, temperature, ratio, ratio_draws=None) -> ZTProjection:
    """zT if the sample's κ_L changed by ``ratio`` with S, σ and κ_e as measured.

    Parameters
    ----------
    split : SplitResult
        The measured sample (needs a Seebeck coefficient).
    temperature : array_like
        [K]; within the measured range (NaN outside).
    ratio : array_like
        κ_L(scenario)/κ_L(fitted) at ``temperature`` [1].
    ratio_draws : ndarray, optional
        The ratio per parameter draw, shape (draws, temperatures), for the 68 % interval.

    Returns
    -------
    ZTProjection
        zT' = S²σT / (κ + κ_L (r − 1)) [1]; κ_L' ≤ 0 gives NaN.
    """
    if split.seebeck is None:
        raise KappaError("zT", allowed="needs a Seebeck coefficient in the measurements")
    T = np.atleast_1d(np.asarray(temperature, dtype=float))
    S, sigma, kappa, kappa_L = _measured(split, T)

    def zt(r):
        k_lat = kappa_L * r
        with np.errstate(invalid="ignore"):
            out = figure_of_merit(S, sigma, kappa - kappa_L + k_lat, T)
        return np.where(k_lat > 0, out, np.nan)

    measured = zt(np.ones_like(T))
    projected = zt(np.asarray(ratio, dtype=float))
    low = high = None
    if ratio_draws is not None:
        draws = zt(np.asarray(ratio_draws, dtype=float))
        low, high = np.full(T.shape, np.nan), np.full(T.shape, np.nan)
        ok = np.isfinite(draws).all(axis=0)
        if ok.any():
            low[ok], high[ok] = np.percentile(draws[:, ok], [LOW, HIGH], axis=0)
    return ZTProjection(T, measured, projected, low, high)


def default_at(split: SplitResult) -> float:
    """The temperature of the highest measured zT (the highest temperature without S) [K]."""
    if split.zT is not None and np.isfinite(split.zT).any():
        return float(split.temperature[int(np.nanargmax(split.zT))])
    return float(split.temperature[-1])


@dataclass(frozen=True)
class Answer:
    """One row of the answer table: a scenario at one temperature (SI, ratios as fractions).

    ``change`` is κ_L(scenario)/κ_L(fitted) − 1; the zT fields are NaN outside the measured
    temperatures or without a Seebeck coefficient.
    """

    scenario: str
    changes: str
    temperature: float
    kappa_L_fitted: float
    kappa_L: float
    kappa_L_low: float
    kappa_L_high: float
    change: float
    change_low: float
    change_high: float
    zT_measured: float
    zT: float
    zT_low: float
    zT_high: float


def _float(a, i: int) -> float:
    return math.nan if a is None else float(a[i])


def answers(named: Sequence[tuple[str, str, WhatIf]], split: SplitResult, at) -> list[Answer]:
    """The answer table: every (name, changes text, what-if) at every temperature of ``at``.

    Each what-if must hold the temperatures of ``at`` (see :meth:`WhatIf.at`).
    """
    T = np.atleast_1d(np.asarray(at, dtype=float))
    rows: list[Answer] = []
    for name, text, w in named:
        a = w.at(T)
        z = (project_zT(split, T, a.ratio, a.ratio_draws) if split.seebeck is not None
             else None)
        for i, t in enumerate(T):
            rows.append(Answer(
                name, text, float(t), float(a.reference[i]), float(a.kappa_L[i]),
                _float(a.low, i), _float(a.high, i), float(a.ratio[i]) - 1.0,
                _float(a.ratio_low, i) - 1.0, _float(a.ratio_high, i) - 1.0,
                _float(None if z is None else z.measured, i),
                _float(None if z is None else z.projected, i),
                _float(None if z is None else z.low, i),
                _float(None if z is None else z.high, i)))
    return rows
