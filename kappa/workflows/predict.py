"""Predict κ_L(T) of a model: the curve, each resistive mechanism switched off in turn, the
per-branch contributions and the Debye heat capacity; and overlays for several values of a key.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from kappa.core.checks import model_warnings, temperature_warnings
from kappa.core.disorder import DISORDER_CITATIONS
from kappa.core.evaluator import (
    CALLAWAY_CITATION,
    DivergenceError,
    check_temperature,
    conductivity,
    optical_part,
    result_warnings,
)
from kappa.core.heat_capacity import DEBYE_CITATION, heat_capacity
from kappa.core.limits import (
    MINIMUM_CITATION,
    OPTICAL_CITATION,
    minimum_of_model,
)
from kappa.core.model import Model
from kappa.errors import ConfigError, warn
from kappa.workflows.export import Tabular, frame, key_column

__all__ = ["Prediction", "predict", "compare", "issue_warnings", "comparison_columns",
           "KAPPA_UNIT"]

KAPPA_UNIT = "W/(m K)"


@dataclass(frozen=True)
class Prediction(Tabular):
    """κ_L(T) of one model.

    Attributes
    ----------
    temperature : ndarray
        [K].
    kappa_L : ndarray
        Lattice thermal conductivity [W/(m K)].
    branches : dict[str, ndarray]
        Contribution of each branch entry (label → [W/(m K)]); one entry for the averaged model.
    without : dict[str, ndarray]
        κ_L with one resistive mechanism switched off (mechanism key → [W/(m K)]); NaN where
        the model diverges without it.
    molar_heat_capacity : ndarray
        Debye heat capacity of the acoustic branches per mole of atoms [J/(mol K)].
    model : Model
        The model it was computed from.
    citations : list of str
    optical : ndarray or None
        The optical part of κ_L for a cell with several atoms [W/(m K)] (None for one atom
        per cell); ``kappa_L`` = Σ ``branches`` + ``optical``.
    minimum : ndarray
        The minimum κ_L (:data:`kappa.core.limits.MINIMUM_MODEL`) [W/(m K)], for figures.
    """

    temperature: np.ndarray
    kappa_L: np.ndarray
    branches: dict[str, np.ndarray]
    without: dict[str, np.ndarray]
    molar_heat_capacity: np.ndarray
    model: Model = field(repr=False)
    citations: list[str] = field(default_factory=list)
    optical: np.ndarray | None = None
    minimum: np.ndarray | None = None

    @property
    def acoustic(self) -> np.ndarray:
        """The acoustic branches' part of κ_L [W/(m K)]."""
        return sum(self.branches.values())

    def columns(self) -> list[tuple[str, np.ndarray]]:
        """Columns of ``kappa_L.csv``: ``T [K]``, ``kappa_L``, κ_L without each resistive
        mechanism (``kappa_L_without_KEY``), the acoustic and optical parts (several atoms per
        cell), the branches (per-branch models) and ``C_V [J/(mol K)]``."""
        u = f" [{KAPPA_UNIT}]"
        cols = [("T [K]", self.temperature), ("kappa_L" + u, self.kappa_L)]
        cols += [(f"kappa_L_without_{key}" + u, k) for key, k in self.without.items()]
        if self.optical is not None:
            cols += [("kappa_L_acoustic" + u, self.acoustic),
                     ("kappa_L_optical" + u, self.optical)]
        if self.model.material.per_branch:
            cols += [(f"kappa_L_{label}" + u, k) for label, k in self.branches.items()]
        cols.append(("C_V [J/(mol K)]", self.molar_heat_capacity))
        return cols


def issue_warnings(model: Model, temperature) -> None:
    """Warn once about unusual parameters and temperatures the model is not meant for."""
    for message in model_warnings(model) + temperature_warnings(model, temperature):
        warn(message, stacklevel=3)


def predict(model: Model, temperature, *, switch_off: bool = True,
            warnings: bool = True) -> Prediction:
    """κ_L(T) of a model.

    Parameters
    ----------
    model : Model
        E.g. ``kappa.load_config(path).model``.
    temperature : array_like
        Temperatures [K].
    switch_off : bool
        Also compute κ_L with each resistive mechanism switched off.
    warnings : bool
        Issue the plausibility warnings (unusual parameters, temperatures out of range, a κ_L
        that comes out zero or above any solid).

    Examples
    --------
    >>> from kappa.core.material import MaterialSpec
    >>> from kappa.core.mechanisms import Boundary, Umklapp
    >>> from kappa.core.scattering import Scattering
    >>> si = Model(MaterialSpec(atomic_mass=4.664e-26, atomic_volume=2.002e-29,
    ...                         debye_temperature=645.0, sound_velocity=6084.0, gruneisen=1.0),
    ...            Scattering((Umklapp(), Boundary(grain_size=1e-6))))
    >>> p = predict(si, [300.0, 600.0])
    >>> bool(p.kappa_L[0] > p.kappa_L[1])
    True
    """
    T = check_temperature(temperature)
    if warnings:
        issue_warnings(model, T)
    per_branch = conductivity(model, T, by_branch=True)
    without: dict[str, np.ndarray] = {}
    resistive = model.mechanisms.resistive
    if switch_off and len(resistive) > 1:
        for mech in resistive:
            try:
                without[mech.key] = conductivity(model, T, exclude=(mech.key,))
            except DivergenceError:
                without[mech.key] = np.full(T.shape, np.nan)  # diverges without this mechanism
    kappa = per_branch.sum(axis=0)
    optical = None
    if model.material.has_optical:
        optical = np.broadcast_to(optical_part(model), T.shape).astype(float)
        kappa = kappa + optical
    if warnings:
        for message in result_warnings(kappa, T):
            warn(message, stacklevel=2)
    cites = [CALLAWAY_CITATION, *model.material.citations(), *model.mechanisms.citations(),
             DEBYE_CITATION]
    if optical is not None:
        cites.append(OPTICAL_CITATION)
    cites += [c for d in model.derived if d.key.startswith("scattering.point_defect")
              for c in DISORDER_CITATIONS if c not in cites]
    labels = model.material.branch_labels()
    minimum = None
    if not model.batch_shape:
        minimum = minimum_of_model(T, model)
        cites.append(MINIMUM_CITATION)
    return Prediction(T, kappa, dict(zip(labels, per_branch, strict=True)), without,
                      heat_capacity(model.material, T), model, cites, optical, minimum)


def compare(model: Model, key: str, values: Sequence[float], temperature
            ) -> list[Prediction]:
    """Predictions for several SI values of one numeric key, in the order given.

    Parameters
    ----------
    model : Model
    key : str
        A numeric key of the model, e.g. ``scattering.boundary.grain_size``.
    values : sequence of float
        Its values [SI], at most 12.
    temperature : array_like
        [K].
    """
    values = list(values)
    if not values:
        raise ConfigError("values", allowed="give at least one value")
    if len(values) > 12:
        raise ConfigError("values", f"{len(values)} values", "at most 12 values")
    reason = model.unused(key)
    if reason:
        raise ConfigError(key, allowed=f"has no effect in this model: {reason}")
    return [predict(model.with_values({key: float(v)}), temperature, switch_off=False,
                    warnings=False) for v in values]


def comparison_columns(key: str, parameter, values: Sequence[float],
                       predictions: Sequence[Prediction]) -> list[tuple[str, np.ndarray]]:
    """Long-form columns of several predictions of one key: one row per value and temperature.

    ``[(KEY [unit], values shown), ("T [K]", ...), ("kappa_L [W/(m K)]", ...)]``; the key's
    column is its last part in its display unit (``grain_size [nm]``).
    """
    nT = predictions[0].temperature.size
    shown = np.asarray(parameter.shown(np.asarray(values, dtype=float)), dtype=float)
    return [(key_column(key, parameter), np.repeat(shown, nT)),
            ("T [K]", np.concatenate([p.temperature for p in predictions])),
            (f"kappa_L [{KAPPA_UNIT}]", np.concatenate([p.kappa_L for p in predictions]))]


def comparison_frame(key: str, parameter, values: Sequence[float],
                     predictions: Sequence[Prediction]):
    """:func:`comparison_columns` as a ``pandas.DataFrame`` (needs pandas)."""
    return frame(comparison_columns(key, parameter, values, predictions))
