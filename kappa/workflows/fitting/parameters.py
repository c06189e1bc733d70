"""Free parameters of a fit: transformed space, search bounds and seeded starts.

A parameter whose allowed range is ``> 0`` (or ``>= 0``) with no upper limit (velocities, Debye
temperatures, Grüneisen parameters, grain size, scales, mass variance, ...) is fitted as
u = ln(value); its start must then be > 0. A parameter with a finite allowed range
(specularity, [0, 1)) is fitted as itself, within that range. Bounds narrow the search; without
them a log-space parameter may move at most :data:`SEARCH_DECADES` decades from its start
(reported as "search limit" if hit).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kappa.core.model import Model
from kappa.core.parameters import Parameter
from kappa.errors import ConfigError

__all__ = ["FreeParameter", "free_parameter", "check_bounds", "seeded_starts",
           "SEARCH_DECADES", "START_DECADES", "START_DECADES_MATERIAL"]

SEARCH_DECADES = 6.0  #: default search range of a log-space parameter: start ×/÷ 10^6
START_DECADES = 3.0  #: extra starts of an unbounded log-space scattering parameter: ± decades
START_DECADES_MATERIAL = 1.0  #: the same for material parameters (known within a decade)


@dataclass(frozen=True)
class FreeParameter:
    """One adjustable parameter of a fit.

    Attributes
    ----------
    key : str
        Dotted key.
    sample : str or None
        Sample name for a per-sample parameter of a series; None when shared by all samples.
    parameter : Parameter
        Its declaration (SI unit, allowed range, display unit).
    start : float
        Start value [SI].
    low, high : float
        Bounds [SI] given by the user, or the allowed range.
    space : {"log", "linear"}
        Transformed space of the fit.
    search : tuple of float
        Bounds in the transformed space used by the solver.
    user_bounds : bool
        Whether ``low``/``high`` came from the user.
    """

    key: str
    sample: str | None
    parameter: Parameter
    start: float
    low: float
    high: float
    space: str
    search: tuple[float, float]
    user_bounds: bool = False

    @property
    def label(self) -> str:
        return self.key if self.sample is None else f"{self.sample}:{self.key}"

    def to_value(self, u):
        return np.exp(u) if self.space == "log" else u

    def to_u(self, value):
        return np.log(value) if self.space == "log" else value


def check_bounds(p: Parameter, key: str, bounds: tuple) -> tuple[float, float]:
    """(low, high) [SI] with None for an open side → checked floats within the allowed range."""
    lo, hi = bounds
    shown = f"{lo}:{hi}"
    lo = p.low if lo is None else float(lo)
    hi = p.high if hi is None else float(hi)
    if not lo < hi:
        raise ConfigError(f"bounds[{key}]", shown, "the lower bound must be below the upper one")
    for v in (lo, hi):
        if math.isfinite(v) and not (p.low <= v <= p.high):
            raise ConfigError(f"bounds[{key}]", shown, "bounds outside the allowed range: "
                              + p.allowed())
    return lo, hi


def free_parameter(model: Model, key: str, sample: str | None,
                   bounds: tuple[float, float] | None) -> FreeParameter:
    """The free parameter ``key`` of ``model`` (start = the model's value)."""
    p = model.check_key(key)
    parts = key.split(".")
    if parts[0] == "scattering" and model.scattering.get(parts[1]) is None:
        raise ConfigError(key, allowed=f"scattering.{parts[1]} is not in the model, so there "
                          "is no start value; add it to the config or give a start "
                          f"(e.g. {key}={p.format(p.start or 1.0)})")
    reason = model.unused(key)
    if reason:
        raise ConfigError(key, allowed=f"has no effect in this model: {reason}")
    start = float(model.value(key))
    space = "log" if p.log_space else "linear"
    label = key if sample is None else f"{key} (sample {sample})"
    if space == "log" and not start > 0:
        raise ConfigError(label, p.format(start, 6), "is fitted in log space and needs a start "
                          "value > 0; give one")
    if bounds is None:
        lo, hi, user = p.low, p.high, False
    else:
        (lo, hi), user = bounds, True
        if not lo <= start <= hi:
            raise ConfigError(f"bounds[{key}]", f"{p.format(lo, 6)}:{p.format(hi, 6)}",
                              f"must contain the start value {p.format(start, 6)}"
                              + (f" of sample {sample}" if sample else ""))
    if space == "log":
        span = SEARCH_DECADES * math.log(10.0)
        u0 = math.log(start)
        if user:
            s_lo = math.log(lo) if lo > 0 else u0 - span
            s_hi = math.log(hi) if math.isfinite(hi) else u0 + span
        else:  # at most SEARCH_DECADES from the start, and never past the allowed range
            s_lo = max(math.log(lo), u0 - span) if lo > 0 else u0 - span
            s_hi = min(math.log(hi), u0 + span) if math.isfinite(hi) else u0 + span
    else:
        eps = 1e-9 * max(1.0, abs(lo), abs(hi)) if (math.isfinite(lo) and math.isfinite(hi)) \
            else 1e-9
        s_lo = lo + (eps if p.low_open and lo == p.low else 0.0)
        s_hi = hi - (eps if p.high_open and hi == p.high else 0.0)
        if not s_lo <= start <= s_hi:
            raise ConfigError(label, p.format(start, 6), "start value outside the allowed "
                              "range: " + p.allowed())
    return FreeParameter(key, sample, p, start, float(lo), float(hi), space,
                         (float(s_lo), float(s_hi)), user)


def seeded_starts(params: Sequence[FreeParameter], u0: np.ndarray, count: int,
                  seed: int) -> list[np.ndarray]:
    """The model's values first, then seeded starts stratified over each parameter's range.

    Each parameter's range (its bounds, or ±START_DECADES decades around the start for an
    unbounded log-space scattering parameter, ±START_DECADES_MATERIAL for a material one) is
    cut into ``count − 1`` equal strata; every extra start takes one point from a different
    stratum per parameter (a Latin hypercube), so the starts cover the range even when there
    are few of them.
    """
    rng = np.random.default_rng(seed)
    out = [u0.copy()]
    extra = max(0, count - 1)
    if not extra:
        return out
    columns = []
    for i, p in enumerate(params):
        lo, hi = p.search
        if p.space == "log" and not p.user_bounds:
            decades = START_DECADES_MATERIAL if p.key.startswith("material.") else START_DECADES
            width = decades * math.log(10.0)
            lo, hi = max(lo, u0[i] - width), min(hi, u0[i] + width)
        elif not (math.isfinite(lo) and math.isfinite(hi)):
            w = 0.5 * max(abs(u0[i]), 1e-12)
            lo, hi = max(lo, u0[i] - w), min(hi, u0[i] + w)
        strata = (rng.permutation(extra) + rng.uniform(0.0, 1.0, extra)) / extra
        columns.append(lo + strata * (hi - lo))
    for k in range(extra):
        out.append(np.array([col[k] for col in columns]))
    return out
