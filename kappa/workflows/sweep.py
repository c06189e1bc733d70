"""Parameter sweeps: κ_L on a grid of parameter values × temperatures.

A sweep varies one or more numeric keys of a model over a grid and evaluates κ_L at every grid
point and temperature. The grid is one batch of parameter sets (:meth:`Model.with_values` with
arrays), so derived values (θ from a velocity, V₀ from a density) follow every point and the
one evaluator (:func:`kappa.core.evaluator.conductivity`) does all the physics; the sweep holds
no formula of its own. Every value equals ``conductivity(model.with_values({key: v, ...}), T)``
at that point.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from kappa.core.checks import model_warnings, temperature_warnings
from kappa.core.evaluator import (
    CALLAWAY_CITATION,
    DivergenceError,
    check_temperature,
    conductivity,
    result_warnings,
)
from kappa.core.model import Model
from kappa.core.parameters import Parameter
from kappa.errors import ConfigError, warn
from kappa.workflows.export import Tabular, key_columns, require

__all__ = ["Axis", "SweepResult", "sweep", "grid_points", "check_axes", "MAX_POINTS"]

MAX_POINTS = 10**8  #: sweeps above this many κ_L points need ``allow_large=True`` (``--yes``)
HARD_MAX_POINTS = 2 * 10**9  #: never attempted: the table alone would not fit in memory
_BLOCK = 1 << 16  #: parameter sets per evaluator call (progress is reported per block)


@dataclass(frozen=True)
class Axis:
    """One varied key of a sweep.

    Attributes
    ----------
    key : str
        Dotted key, e.g. ``scattering.boundary.grain_size``.
    values : ndarray
        Grid values in SI.
    parameter : Parameter
        The key's declaration (SI unit, allowed range, display unit, title).
    log : bool
        True for a log-spaced range (figures use a log axis).
    spec : str
        The grid as written (``10nm:10um:31:log``), for records.
    """

    key: str
    values: np.ndarray
    parameter: Parameter
    log: bool = False
    spec: str = ""

    @property
    def name(self) -> str:
        """The last part of the key (``grain_size``)."""
        return self.key.rsplit(".", 1)[-1]

    @property
    def unit(self) -> str:
        """The unit values are shown in."""
        return self.parameter.shown_unit

    @property
    def shown(self) -> np.ndarray:
        """The values in :attr:`unit`."""
        return np.asarray(self.parameter.shown(self.values), dtype=float)


def check_axes(model: Model, axes: Mapping[str, object] | Sequence[Axis]) -> tuple[Axis, ...]:
    """Axes from ``{key: SI values}`` or Axis objects: keys known, applicable, used, unique.

    Raises
    ------
    ConfigError
        No axis; a repeated key; a key that does not apply to this model or has no effect in
        it; a value outside the key's allowed range.
    """
    if isinstance(axes, Mapping):
        items = []
        for key, values in axes.items():
            if isinstance(values, Axis):
                items.append(values)
                continue
            arr = np.atleast_1d(np.asarray(values, dtype=float)).ravel()
            items.append(Axis(key, arr, model.parameter(key), spec=f"{arr.size} values"))
        axes = items
    axes = tuple(axes)
    if not axes:
        raise ConfigError("axes", allowed="missing; give at least one key to vary")
    seen: set[str] = set()
    for a in axes:
        if a.key in seen:
            raise ConfigError(a.key, allowed="each key may be varied only once")
        seen.add(a.key)
        if a.key.split(".")[0] == "temperature":
            raise ConfigError(a.key, allowed="temperatures are not swept as a parameter; give "
                              "them as the temperatures of the sweep")
        model.check_key(a.key)
        reason = model.unused(a.key)
        if reason:
            raise ConfigError(a.key, allowed=f"has no effect in this model: {reason}")
        if a.values.size < 1:
            raise ConfigError(a.key, "no values", "give at least one value")
        a.parameter.check(a.key, a.values)
    return axes


def grid_points(axes: Sequence[Axis], n_temperatures: int) -> int:
    """Number of κ_L points of a sweep (parameter sets × temperatures)."""
    return math.prod(a.values.size for a in axes) * n_temperatures


@dataclass(frozen=True)
class SweepResult(Tabular):
    """κ_L on a grid.

    Attributes
    ----------
    axes : tuple of Axis
        The varied keys, in the order given.
    temperature : ndarray, shape (nT,)
        [K].
    kappa_L : ndarray, shape (N_1, ..., N_d, nT)
        Lattice thermal conductivity at every grid point and temperature [W/(m K)].
    reference : ndarray, shape (nT,)
        κ_L of the model as given (NaN where it diverges) [W/(m K)].
    model : Model
        The model the sweep started from.
    citations : list of str
    """

    axes: tuple[Axis, ...]
    temperature: np.ndarray
    kappa_L: np.ndarray
    reference: np.ndarray
    model: Model = field(repr=False)
    citations: list[str] = field(default_factory=list)

    @property
    def ratio(self) -> np.ndarray:
        """κ_L relative to the model as given at the same temperature [1]."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return self.kappa_L / self.reference

    def long_form(self) -> dict[str, np.ndarray]:
        """One entry per column of a long table (one row per grid point and temperature):
        each key's values [SI], ``temperature`` [K], ``kappa_L`` and ``kappa_L_ratio``."""
        shape = self.kappa_L.shape
        grids = np.meshgrid(*[a.values for a in self.axes], self.temperature, indexing="ij")
        out = {a.key: g.ravel() for a, g in zip(self.axes, grids[:-1], strict=True)}
        out["temperature"] = grids[-1].ravel()
        out["kappa_L"] = self.kappa_L.reshape(-1)
        out["kappa_L_ratio"] = self.ratio.reshape(-1)
        assert out["kappa_L"].size == math.prod(shape)
        return out

    @property
    def column_names(self) -> list[str]:
        """``name [unit]`` of each varied key (the last part of the key; the whole dotted
        key where two last parts clash), in its display unit."""
        return key_columns([a.key for a in self.axes], [a.parameter for a in self.axes])

    def columns(self) -> list[tuple[str, np.ndarray]]:
        """Long form, one row per grid point and temperature: one column per varied key (in
        its display unit), ``T [K]``, ``kappa_L [W/(m K)]``, ``kappa_L_ratio [1]``."""
        long = self.long_form()
        cols = [(n, np.asarray(a.parameter.shown(long[a.key]), dtype=float))
                for a, n in zip(self.axes, self.column_names, strict=True)]
        return cols + [("T [K]", long["temperature"]), ("kappa_L [W/(m K)]", long["kappa_L"]),
                       ("kappa_L_ratio [1]", long["kappa_L_ratio"])]

    def to_xarray(self):
        """The grid as an ``xarray.Dataset``: variables ``kappa_L`` and ``kappa_L_ratio`` over
        one dimension per varied key (named by its last part, values in the display unit) and
        ``T``; every variable and coordinate has ``attrs["units"]`` (and the dotted key).
        Needs xarray (``pip install 'kappa[xarray]'``)."""
        xr = require("xarray", "xarray")
        dims = [n.split(" [")[0] for n in self.column_names] + ["T"]
        coords = {d: (d, a.shown, {"units": a.unit, "key": a.key})
                  for d, a in zip(dims, self.axes, strict=False)}
        coords["T"] = ("T", self.temperature, {"units": "K"})
        data = {"kappa_L": (dims, self.kappa_L, {"units": "W/(m K)",
                                                 "long_name": "lattice thermal conductivity"}),
                "kappa_L_ratio": (dims, self.ratio, {"units": "1", "long_name":
                                                     "kappa_L relative to the config"})}
        return xr.Dataset(data, coords=coords, attrs={"reference kappa_L [W/(m K)]":
                                                      list(self.reference)})


def sweep(model: Model, axes: Mapping[str, object] | Sequence[Axis], temperature, *,
          progress: Callable[[int, int], None] | None = None,
          allow_large: bool = False) -> SweepResult:
    """κ_L of ``model`` on the grid of ``axes`` at every temperature.

    Parameters
    ----------
    model : Model
        The starting model; keys not varied keep their values.
    axes : mapping or sequence of Axis
        ``{key: SI values}`` (one grid axis per key, in the order given) or Axis objects.
    temperature : array_like
        Temperatures [K].
    progress : callable, optional
        Called as ``progress(done, total)`` with counts of parameter sets.
    allow_large : bool
        Allow more than :data:`MAX_POINTS` κ_L points.

    Returns
    -------
    SweepResult
        ``kappa_L[i_1, ..., i_d, t]`` is κ_L of ``model.with_values({key_1: v_1[i_1], ...})``
        at ``temperature[t]``.

    Raises
    ------
    ConfigError
        Bad axes (see :func:`check_axes`), bad temperatures, too many points, or a grid point
        where κ_L diverges (no ω⁰–ω² scattering term), named by its values.
    """
    T = check_temperature(temperature)
    axes = check_axes(model, axes)
    points = grid_points(axes, T.size)
    if points > HARD_MAX_POINTS or (points > MAX_POINTS and not allow_large):
        raise ConfigError("axes", f"{points:,} κ_L points",
                          f"more than {MAX_POINTS:,} needs allow_large=True (about 50 bytes "
                          f"per point in a table); above {HARD_MAX_POINTS:,} it is refused")
    shape = tuple(a.values.size for a in axes)
    n_sets = math.prod(shape)
    grids = [g.ravel() for g in np.meshgrid(*[a.values for a in axes], indexing="ij")]
    full = model.with_values({a.key: g for a, g in zip(axes, grids, strict=True)})
    for message in model_warnings(full) + temperature_warnings(full, T):
        warn(message, stacklevel=2)
    kappa = np.empty((n_sets, T.size))
    for a0 in range(0, n_sets, _BLOCK):
        a1 = min(n_sets, a0 + _BLOCK)
        block = model.with_values({a.key: g[a0:a1] for a, g in zip(axes, grids, strict=True)})
        try:
            kappa[a0:a1] = conductivity(block, T)
        except DivergenceError as exc:
            i = a0 + exc.index
            point = ", ".join(f"{a.key}={a.parameter.format(g[i], 6)}"
                              for a, g in zip(axes, grids, strict=True))
            raise ConfigError("scattering", f"at {point}, T = {exc.temperature:.6g} K",
                              exc.allowed) from None
        if progress is not None:
            progress(a1, n_sets)
    kappa = kappa.reshape(*shape, T.size)
    for message in result_warnings(kappa, T):
        warn(message, stacklevel=2)
    try:
        reference = conductivity(model, T)
    except DivergenceError:
        reference = np.full(T.shape, np.nan)
    cites = [CALLAWAY_CITATION, *full.material.citations(), *full.mechanisms.citations()]
    return SweepResult(axes, T, kappa, reference, model, cites)
