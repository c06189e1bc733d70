"""Predict κ_L(T) from a config: the curve, each resistive mechanism switched off in turn, the
per-branch contributions and the Debye heat capacity; and overlays for several values of a key.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import asdict, dataclass, field

import numpy as np

from kappa.core.evaluator import branch_conductivities
from kappa.core.heat_capacity import heat_capacity
from kappa.errors import ConfigError, KappaError
from kappa.io.config import Config, check_temperatures, config_from_dict, parse_override, set_value

__all__ = ["Prediction", "predict", "compare", "CALLAWAY_CITATION", "model_summary"]

CALLAWAY_CITATION = "Callaway model: J. Callaway, Phys. Rev. 113, 1046 (1959)"
DEBYE_CITATION = "Debye heat capacity: P. Debye, Ann. Phys. 39, 789 (1912)"


@dataclass(frozen=True)
class Prediction:
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
    heat_capacity : ndarray
        Debye heat capacity of the acoustic branches per mole of atoms [J/(mol K)].
    config : Config
        The model it was computed from.
    citations : list of str
    """

    temperature: np.ndarray
    kappa_L: np.ndarray
    branches: dict[str, np.ndarray]
    without: dict[str, np.ndarray]
    heat_capacity: np.ndarray
    config: Config = field(repr=False)
    citations: list[str] = field(default_factory=list)


def predict(config: Config, temperature: Sequence[float] | np.ndarray | None = None,
            *, switch_off: bool = True) -> Prediction:
    """κ_L(T) of a validated config.

    Parameters
    ----------
    config : Config
        From :func:`kappa.load_config` or :func:`kappa.config_from_dict`.
    temperature : array_like, optional
        Temperatures [K]; default the config's ``temperature`` section.
    switch_off : bool
        Also compute κ_L with each resistive mechanism switched off.
    """
    T = (config.require_temperature() if temperature is None
         else np.atleast_1d(np.asarray(temperature, dtype=float)))
    check_temperatures(config, T)
    m, s = config.material, config.scattering
    per_branch = branch_conductivities(m, s, T)
    labels = _branch_labels(config)
    without: dict[str, np.ndarray] = {}
    if switch_off and len(s.resistive) > 1:
        for mech in s.resistive:
            try:
                without[mech.key] = branch_conductivities(m, s, T, (mech.key,)).sum(axis=0)
            except KappaError:
                without[mech.key] = np.full(T.shape, np.nan)  # diverges without this mechanism
    cites = [CALLAWAY_CITATION, *s.citations(), DEBYE_CITATION]
    return Prediction(T, per_branch.sum(axis=0), dict(zip(labels, per_branch, strict=True)),
                      without, heat_capacity(m, T), config, cites)


def _branch_labels(config: Config) -> list[str]:
    if not config.material.per_branch:
        return ["average"]
    labels, seen = [], {}
    for b in config.material.branches:
        seen[b.polarization] = seen.get(b.polarization, 0) + 1
        labels.append(b.polarization if seen[b.polarization] == 1
                      else f"{b.polarization}{seen[b.polarization]}")
    return labels


def compare(config: Config, item: str, temperature=None) -> list[tuple[str, Prediction]]:
    """Predictions for several values of one key: ``"scattering.boundary.grain_size=1um,100nm"``.

    Returns ``[(label, prediction), ...]`` in the order given; labels are ``key=value``.
    """
    key, _, rest = item.partition("=")
    key = key.strip()
    if not key or not rest.strip():
        raise ConfigError("--compare", item, "must be KEY=V1,V2,..., e.g. "
                          "scattering.boundary.grain_size=1um,100nm,20nm")
    values = [v.strip() for v in rest.split(",") if v.strip()]
    if not values:
        raise ConfigError(f"--compare {key}", rest, "needs at least one value")
    if len(values) > 12:
        raise ConfigError(f"--compare {key}", f"{len(values)} values", "at most 12 values")
    out = []
    leaf = key.split(".")[-1]
    for text in values:
        _, value = parse_override(f"{key}={text}")
        data = set_value(config.data, key, value)
        cfg = config_from_dict(data, config.source)
        out.append((f"{leaf}={text}", predict(cfg, temperature, switch_off=False)))
    return out


def model_summary(config: Config) -> dict:
    """The resolved model in SI units, for run records."""
    m = config.material
    return {
        "material": {
            "name": m.name,
            "atomic_mass [kg]": m.atomic_mass,
            "atomic_volume [m^3]": m.atomic_volume,
            "branches": [asdict(b) for b in m.branches],
        },
        "scattering": {mech.key: mech.values() for mech in config.scattering},
        "units": "SI: K, m/s, m, kg, m^3",
    }
