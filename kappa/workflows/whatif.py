"""What-if answers with error bars: κ_L of changed scenarios from a fit's covariance.

A fit pins some parameters of a sample's model, each with an uncertainty and correlations (its
:class:`~kappa.workflows.fitting.Covariance`; with a systematic part in the data the
covariance is the parameters' block of the joint covariance with the data's shared scale, so it
includes what the calibration error does to them). A what-if question changes other values —
smaller grains, more disorder, an isotope-enriched crystal — and asks for κ_L. The answer
inherits the fitted parameters' uncertainty: :func:`what_if` draws parameter sets from the
covariance (:func:`~kappa.workflows.fitting.draw_models`), applies each scenario's changes to
every draw, and evaluates scenario × draw in one batch per block of scenarios. It reports for
every scenario and temperature κ_L (the fitted values with the change), its 68 % interval, the
ratio to the fitted sample (numerator and denominator from the same draw, so that what they
share cancels) and its interval.

Two flags say when the data do not pin an answer (:attr:`WhatIf.pinned` is False): the
interval of the change (ratio − 1) includes no change, or spans more than a factor of two
(e.g. +6 % to +15 %), or the κ_L interval spans more than a factor of two. Equally good fits
can then give quite different answers: measure more (another temperature range, another
sample) before trusting the number.

The answers are model estimates on the scale of the true conductivity of the sample; a new
sample measured in the same set-up would add its own calibration error to κ_L (not to the
ratio).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from kappa.core.evaluator import DivergenceError, check_temperature, conductivity
from kappa.core.model import Model
from kappa.errors import ConfigError, KappaError, warn
from kappa.workflows.fitting.band import Covariance, draw_models

__all__ = ["WhatIf", "what_if", "alloy_what_if", "check_covariance", "flags", "DRAW_RANGE",
           "PERCENTILES", "FACTOR", "FAR"]

#: Allowed number of parameter draws.
DRAW_RANGE: tuple[int, int] = (50, 100_000)
#: Percentiles of the reported interval: the central 68.27 % (±1 standard deviation).
PERCENTILES: tuple[float, float] = (50.0 * (1.0 - math.erf(1 / math.sqrt(2))),
                                    50.0 * (1.0 + math.erf(1 / math.sqrt(2))))
#: An answer whose interval spans more than this factor is "not pinned by the data".
FACTOR: float = 2.0
#: A config value further than this many standard errors (in the fit's space) from the fitted
#: value: the fit record does not belong to the config.
FAR: float = 0.1
_BLOCK_SETS = 1 << 16  #: parameter sets per evaluator call


@dataclass(frozen=True)
class WhatIf:
    """What-if answers with their 68 % intervals (SI units; scenarios × temperatures).

    Attributes
    ----------
    changes : dict
        Changed key -> its SI value in each scenario, shape (S,).
    temperature : ndarray, shape (nT,)
        [K].
    kappa_L, low, high : ndarray, shape (S, nT)
        κ_L with the fitted values and the change [W/(m K)], and the 68 % interval over the
        parameter draws.
    reference, reference_low, reference_high : ndarray, shape (nT,)
        κ_L of the fitted sample (no change) and its interval [W/(m K)].
    ratio, ratio_low, ratio_high : ndarray, shape (S, nT)
        κ_L(scenario)/κ_L(fitted sample) [1], central and 68 % interval (per draw).
    includes_no_change : ndarray of bool, shape (S, nT)
        The ratio's interval contains 1 (the data cannot tell whether κ_L changes).
    spans_factor_two : ndarray of bool, shape (S, nT)
        The change's interval (ratio − 1) or the κ_L interval spans more than :data:`FACTOR`.
    fitted_keys : tuple of str
        The keys drawn from the covariance.
    draws, rejected, seed : int
        Accepted and rejected draws (outside the allowed ranges), seed.
    """

    changes: dict[str, np.ndarray]
    temperature: np.ndarray
    kappa_L: np.ndarray
    low: np.ndarray
    high: np.ndarray
    reference: np.ndarray
    reference_low: np.ndarray
    reference_high: np.ndarray
    ratio: np.ndarray
    ratio_low: np.ndarray
    ratio_high: np.ndarray
    includes_no_change: np.ndarray
    spans_factor_two: np.ndarray
    fitted_keys: tuple[str, ...]
    draws: int
    rejected: int
    seed: int
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def pinned(self) -> np.ndarray:
        """True where the data pin the answer (neither flag set), shape (S, nT)."""
        return ~(self.includes_no_change | self.spans_factor_two)

    @property
    def size(self) -> int:
        """Number of scenarios."""
        return int(self.kappa_L.shape[0])

    def columns(self, ratio: bool = True) -> list[tuple[str, np.ndarray]]:
        """The answers as table columns, one row per scenario and temperature (scenario by
        scenario): ``kappa_L_low``, ``kappa_L_high`` [W/(m K)], ``kappa_L_ratio`` (left out with
        ``ratio=False``, for tables that have their own), ``kappa_L_ratio_low``,
        ``kappa_L_ratio_high`` [1] and ``pinned`` (1 or 0)."""
        cols = [("kappa_L_low [W/(m K)]", self.low.ravel()),
                ("kappa_L_high [W/(m K)]", self.high.ravel())]
        if ratio:
            cols.append(("kappa_L_ratio [1]", self.ratio.ravel()))
        return cols + [("kappa_L_ratio_low [1]", self.ratio_low.ravel()),
                       ("kappa_L_ratio_high [1]", self.ratio_high.ravel()),
                       ("pinned [1]", self.pinned.ravel().astype(int))]

    def reason(self, s: int, t: int) -> str:
        """Why scenario ``s`` at temperature index ``t`` is not pinned (``""`` if it is)."""
        why = []
        if self.includes_no_change[s, t]:
            why.append("its interval includes no change")
        if self.spans_factor_two[s, t]:
            why.append(f"its interval spans more than a factor of {FACTOR:g}")
        return " and ".join(why)


def check_covariance(model: Model, covariance: Covariance) -> None:
    """Raise ConfigError naming the key unless ``covariance`` belongs to ``model``.

    Every fitted key must be a key of the model, and the model's value must equal the fitted
    value to within :data:`FAR` standard errors (in the fit's space; at least 1e-6
    relative): a fit record describes the fitted config written beside it.
    """
    for i, (key, space, fitted) in enumerate(zip(covariance.keys, covariance.spaces,
                                                 covariance.values, strict=True)):
        try:
            model.check_key(key)
            parts = key.split(".")
            if parts[0] == "scattering" and model.scattering.get(parts[1]) is None:
                raise ConfigError(key, allowed=f"scattering.{parts[1]} is absent")
            now = float(model.value(key))
        except KappaError as exc:
            raise ConfigError(key, allowed=f"the fit record's key is not in this config "
                              f"({exc.allowed}); use the fitted.yaml written with the record"
                              ) from None
        sd = math.sqrt(max(float(covariance.matrix[i, i]), 0.0))
        if space == "log":
            if not (now > 0 and fitted > 0):
                far = now != fitted
            else:
                far = abs(math.log(now) - math.log(fitted)) > max(FAR * sd, 1e-6)
        else:
            far = abs(now - fitted) > max(FAR * sd, 1e-6 * max(abs(fitted), 1e-300))
        if far:
            p = model.parameter(key)
            raise ConfigError(key, p.format(now, 6),
                              f"differs from the fitted {p.format(fitted, 6)} of the fit record "
                              "(more than a tenth of its standard error): the record belongs to "
                              "another config; use the fitted.yaml written with it")


def _changes(model: Model, changes: Mapping[str, object]) -> dict[str, np.ndarray]:
    if not changes:
        raise ConfigError("changes", allowed="give at least one key to change")
    arrays = {}
    for key, values in changes.items():
        model.check_key(key)
        reason = model.unused(key)
        if reason:
            raise ConfigError(key, allowed=f"has no effect in this model: {reason}")
        a = np.atleast_1d(np.asarray(values, dtype=float)).ravel()
        if a.size == 0:
            raise ConfigError(key, "no values", "give at least one value")
        model.parameter(key).check(key, a)
        arrays[key] = a
    n = max(a.size for a in arrays.values())
    for key, a in arrays.items():
        if a.size not in (1, n):
            raise ConfigError(f"changes[{key}]", f"{a.size} values", f"give 1 or {n} values "
                              "(one per scenario, the same count for every key)")
    return {key: np.broadcast_to(a, (n,)).copy() for key, a in arrays.items()}


def flags(kappa_low: np.ndarray, kappa_high: np.ndarray, ratio_low: np.ndarray,
          ratio_high: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(includes_no_change, spans_factor_two) from the 68 % intervals (see :class:`WhatIf`).

    A scenario identical to the fitted sample (a ratio interval of zero width) includes no
    change by construction and is not flagged.
    """
    c_lo, c_hi = ratio_low - 1.0, ratio_high - 1.0
    same = (ratio_high - ratio_low) <= 1e-9
    includes = (c_lo <= 0.0) & (c_hi >= 0.0) & ~same
    small = np.minimum(np.abs(c_lo), np.abs(c_hi))
    large = np.maximum(np.abs(c_lo), np.abs(c_hi))
    with np.errstate(divide="ignore", invalid="ignore"):
        change_span = ~includes & ~same & (large > FACTOR * small)
        kappa_span = (kappa_high > FACTOR * kappa_low) | ~(kappa_low > 0)
    return includes, change_span | kappa_span


def _check_run(draws: object, seed: object) -> None:
    low, high = DRAW_RANGE
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or not \
            low <= draws <= high:
        raise ConfigError("draws", draws, f"a whole number from {low} to {high:,}")
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise ConfigError("seed", seed, "a whole number >= 0")


def _drawn(model: Model, covariance: Covariance, draws: int, seed: int
           ) -> tuple[Model, int, list[str]]:
    batch, rejected = draw_models(model, covariance, int(draws), int(seed))
    if int(draws) - rejected < 20:
        raise ConfigError("draws", f"{rejected} of {draws} draws rejected",
                          "too few parameter sets inside the allowed ranges for an interval")
    notes = []
    if rejected > 0.1 * draws:
        notes.append(f"{rejected} of {draws} parameter draws fell outside the allowed ranges "
                     "and were left out; the intervals are only indicative")
        warn(notes[-1])
    return batch, rejected, notes


def what_if(model: Model, covariance: Covariance, changes: Mapping[str, object],
            temperature, *, draws: int = 400, seed: int = 0,
            progress: Callable[[int, int], None] | None = None) -> WhatIf:
    """κ_L of changed scenarios of a fitted model, with 68 % intervals from the fit.

    Parameters
    ----------
    model : Model
        The fitted model (e.g. ``load_config("fit/fitted.yaml").model`` or
        ``FitResult.samples[i].model``).
    covariance : Covariance
        Its fit's covariance (:meth:`Covariance.from_result` or
        :func:`kappa.io.fitfiles.read_fit_record`); checked to belong to ``model``
        (:func:`check_covariance`).
    changes : mapping
        Key -> value or array of SI values, one per scenario (all arrays the same length;
        single values apply to every scenario). A fitted key may be changed too: its draws
        are then replaced by the value.
    temperature : array_like
        [K].
    draws : int
        Parameter sets drawn from the covariance (:data:`DRAW_RANGE`).
    seed : int
        Seed of the draws (>= 0).
    progress : callable, optional
        ``progress(done, total)`` in scenarios.

    Returns
    -------
    WhatIf

    Raises
    ------
    ConfigError
        A record that does not belong to the model, an unknown or unused key, a value
        outside its allowed range, too few accepted draws, or a scenario where κ_L diverges.

    Examples
    --------
    >>> import numpy as np
    >>> from kappa.core.material import MaterialSpec
    >>> from kappa.core.mechanisms import Boundary, Umklapp
    >>> from kappa.core.scattering import Scattering
    >>> from kappa.workflows.fitting import Covariance
    >>> m = Model(MaterialSpec(atomic_mass=4.664e-26, atomic_volume=2.002e-29,
    ...                        debye_temperature=645.0, sound_velocity=6084.0, gruneisen=1.0),
    ...           Scattering((Umklapp(), Boundary(grain_size=1e-6))))
    >>> cov = Covariance(("material.gruneisen",), ("log",), (1.0,), np.array([[0.05**2]]))
    >>> w = what_if(m, cov, {"scattering.boundary.grain_size": [1e-7, 1e-8]}, [300.0],
    ...             draws=200)
    >>> bool(np.all(w.ratio < 1)) and w.kappa_L.shape == (2, 1)
    True
    """
    _check_run(draws, seed)
    T = check_temperature(temperature)
    check_covariance(model, covariance)
    values = _changes(model, changes)
    n = next(iter(values.values())).size
    batch, rejected, notes = _drawn(model, covariance, draws, seed)
    D = int(draws) - rejected
    drawn = {k: np.broadcast_to(np.asarray(batch.value(k), dtype=float), (D,))
             for k in covariance.keys}
    try:
        ref_draws = conductivity(batch, T)  # (D, nT)
        reference = conductivity(model, T)
    except DivergenceError as exc:
        raise ConfigError("covariance", exc.value, exc.allowed) from None
    kappa = np.empty((n, T.size))
    lo, hi = np.empty((n, T.size)), np.empty((n, T.size))
    r_lo, r_hi = np.empty((n, T.size)), np.empty((n, T.size))
    try:
        kappa[:] = conductivity(model.with_values(values), T).reshape(n, T.size)
    except DivergenceError as exc:
        raise ConfigError("changes", exc.value, exc.allowed) from None
    per_block = max(1, _BLOCK_SETS // D)
    for a in range(0, n, per_block):
        b = min(n, a + per_block)
        m = b - a
        sets = {k: np.tile(v, m) for k, v in drawn.items() if k not in values}
        sets.update({k: np.repeat(v[a:b], D) for k, v in values.items()})
        try:
            k_draws = conductivity(model.with_values(sets), T).reshape(m, D, T.size)
        except DivergenceError as exc:
            s = a + exc.index // D
            point = ", ".join(f"{k}={model.parameter(k).format(v[s], 6)}"
                              for k, v in values.items())
            raise ConfigError("changes", f"at {point}, T = {exc.temperature:.6g} K",
                              exc.allowed) from None
        lo[a:b], hi[a:b] = np.percentile(k_draws, PERCENTILES, axis=1)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratios = k_draws / ref_draws[None, :, :]
        r_lo[a:b], r_hi[a:b] = np.percentile(ratios, PERCENTILES, axis=1)
        if progress is not None:
            progress(b, n)
    ref_lo, ref_hi = np.percentile(ref_draws, PERCENTILES, axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = kappa / reference[None, :]
    includes, spans = flags(lo, hi, r_lo, r_hi)
    return WhatIf(values, T, kappa, lo, hi, reference, ref_lo, ref_hi, ratio, r_lo, r_hi,
                  includes, spans, tuple(covariance.keys), D, rejected, int(seed), tuple(notes))


def alloy_what_if(model_a: Model, covariance: Covariance, model_b: Model, fraction,
                  temperature, *, strain_parameter: float | None = None,
                  names: tuple[str, str] = ("A", "B"), draws: int = 400,
                  seed: int = 0) -> WhatIf:
    """κ_L of the alloy series (1 − x)·A + x·B with 68 % intervals from A's fit.

    The fitted end member A is drawn from its covariance; every draw becomes its own alloy
    series (the rules of :func:`kappa.core.alloy.alloy_models`), and all draws × fractions
    are evaluated in one batch. ``ratio`` is κ_L(x)/κ_L(A) per draw. ``changes`` of the result
    holds ``{"material.alloy.fraction": x}``.

    Parameters
    ----------
    model_a : Model
        The fitted end member (x = 0); ``covariance`` must belong to it.
    covariance : Covariance
    model_b : Model
        The other end member (x = 1), taken as exact.
    fraction : array_like
        Alloy fractions in [0, 1].
    temperature : array_like
        [K].
    strain_parameter : float, optional
        ε of the strain term (default: :data:`kappa.core.disorder.DEFAULT_STRAIN_PARAMETER`).
    names : (str, str)
        How errors name the end members.
    draws, seed : int
        As in :func:`what_if`.
    """
    from kappa.core.alloy import alloy_models
    from kappa.core.disorder import DEFAULT_STRAIN_PARAMETER

    eps = DEFAULT_STRAIN_PARAMETER if strain_parameter is None else strain_parameter
    _check_run(draws, seed)
    T = check_temperature(temperature)
    check_covariance(model_a, covariance)
    nominal = alloy_models(model_a, model_b, fraction, strain_parameter=eps, names=names)
    x = nominal.fraction
    batch, rejected, notes = _drawn(model_a, covariance, draws, seed)
    D = int(draws) - rejected
    drawn = {k: np.broadcast_to(np.asarray(batch.value(k), dtype=float), (D,))
             for k in covariance.keys}
    keys = list(nominal.values)
    extra = [k for k in covariance.keys if k not in keys and k in nominal.model.keys()]
    stacked: dict[str, list[np.ndarray]] = {k: [] for k in keys + extra}
    for d in range(D):  # builds the models only; they are evaluated in one batch below
        a_d = model_a.with_values({k: float(v[d]) for k, v in drawn.items()})
        m_d = alloy_models(a_d, model_b, x, strain_parameter=eps, names=names)
        for k in keys:
            stacked[k].append(np.broadcast_to(m_d.values[k], x.shape))
        for k in extra:
            stacked[k].append(np.broadcast_to(np.asarray(m_d.model.value(k), dtype=float),
                                              x.shape))
    sets = {k: np.concatenate(v) for k, v in stacked.items()}  # draw-major: (D * nx,)
    try:
        k_draws = conductivity(nominal.model.with_values(sets), T).reshape(D, x.size, T.size)
        ref_draws = conductivity(batch, T)
        kappa = conductivity(nominal.model, T)
        reference = conductivity(model_a, T)
    except DivergenceError as exc:
        raise ConfigError("fraction", exc.value, exc.allowed) from None
    k_draws = np.swapaxes(k_draws, 0, 1)  # (nx, D, nT)
    lo, hi = np.percentile(k_draws, PERCENTILES, axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        r_lo, r_hi = np.percentile(k_draws / ref_draws[None], PERCENTILES, axis=1)
        ratio = kappa / reference[None, :]
    ref_lo, ref_hi = np.percentile(ref_draws, PERCENTILES, axis=0)
    includes, spans = flags(lo, hi, r_lo, r_hi)
    return WhatIf({"material.alloy.fraction": x}, T, kappa, lo, hi, reference, ref_lo, ref_hi,
                  ratio, r_lo, r_hi, includes, spans, tuple(covariance.keys), D, rejected,
                  int(seed), tuple(notes))
