"""The set of scattering mechanisms of a model (at most one of each kind)."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass, replace

from kappa.core.mechanisms import REGISTRY, Mechanism, Umklapp
from kappa.errors import ConfigError

__all__ = ["Scattering"]


@dataclass(frozen=True)
class Scattering:
    """The mechanisms of a model, in registry order.

    Without an explicit ``umklapp`` entry a config gets Umklapp with its defaults; an Umklapp
    ``scale`` of 0 switches it off.
    """

    mechanisms: tuple[Mechanism, ...] = (Umklapp(),)

    def __post_init__(self) -> None:
        keys = [m.key for m in self.mechanisms]
        if len(set(keys)) != len(keys):
            raise ConfigError("scattering", ", ".join(keys), "each mechanism may appear once")
        unknown = [k for k in keys if k not in REGISTRY]
        if unknown:
            raise ConfigError(f"scattering.{unknown[0]}", allowed="not a registered mechanism")
        order = list(REGISTRY)
        object.__setattr__(self, "mechanisms",
                           tuple(sorted(self.mechanisms, key=lambda m: order.index(m.key))))

    def __iter__(self) -> Iterator[Mechanism]:
        return iter(self.mechanisms)

    def get(self, key: str) -> Mechanism | None:
        """The mechanism of config key ``key`` (None if absent)."""
        return next((m for m in self.mechanisms if m.key == key), None)

    @property
    def resistive(self) -> tuple[Mechanism, ...]:
        """Resistive mechanisms that are switched on."""
        return tuple(m for m in self.mechanisms if m.resistive and m.active)

    @property
    def normal(self) -> tuple[Mechanism, ...]:
        """Non-resistive (normal-process) mechanisms that are switched on."""
        return tuple(m for m in self.mechanisms if not m.resistive and m.active)

    @property
    def active(self) -> tuple[Mechanism, ...]:
        """Every mechanism that is switched on."""
        return tuple(m for m in self.mechanisms if m.active)

    def without(self, key: str) -> Scattering:
        """A copy with mechanism ``key`` removed."""
        return Scattering(tuple(m for m in self.mechanisms if m.key != key))

    def with_mechanism(self, mechanism: Mechanism) -> Scattering:
        """A copy with ``mechanism`` added or replacing the one of its kind."""
        rest = tuple(m for m in self.mechanisms if m.key != mechanism.key)
        return Scattering((*rest, mechanism))

    def replace(self, key: str, **changes) -> Scattering:
        """A copy with fields of mechanism ``key`` changed (validated)."""
        m = self.get(key)
        if m is None:
            raise ConfigError(f"scattering.{key}", allowed="not present in this model")
        return self.with_mechanism(replace(m, **changes))

    def citations(self) -> list[str]:
        """Citations of the mechanisms that are switched on."""
        return [m.citation for m in self.active]
