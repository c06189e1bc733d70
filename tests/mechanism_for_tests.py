"""A scattering mechanism whose rate is not a polynomial in ω, for the tests only.

A damped resonance, τ⁻¹ = A ω⁴ / ((ω₀² − ω²)² + (η ω₀ ω)²): Rayleigh-like (A ω⁴/ω₀⁴) far
below ω₀, peaked near ω₀, constant (A) far above. It is not shipped; the tests register it for
their own duration to show that a new mechanism of this kind is one class plus one registry
entry and then works in predict, fit, sweep and spectrum.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.mechanisms import Mechanism, RateContext, per_node
from kappa.core.parameters import Parameter


@dataclass(frozen=True)
class Resonance(Mechanism):
    """Damped resonant scattering (test mechanism)."""

    strength: float = 1e13
    frequency: float = 2e13
    damping: float = 0.3

    key: ClassVar[str] = "resonance"
    title: ClassVar[str] = "resonances"
    citation: ClassVar[str] = "Test mechanism (a damped resonance), not a published form"
    polynomial: ClassVar[bool] = False
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("strength", "1/s", "rate A far above the resonance", 1e13, low=0.0,
                  high=1e20, start=1e13),
        Parameter("frequency", "rad/s", "resonance ω₀", 2e13, low=0.0, high=1e16,
                  low_open=True, start=2e13),
        Parameter("damping", "1", "width η", 0.3, low=0.0, high=10.0, low_open=True,
                  start=0.3),
    )

    @property
    def active(self) -> bool:
        return bool(np.any(np.asarray(self.strength) > 0))

    def rate(self, ctx: RateContext, omega: np.ndarray) -> np.ndarray:
        a, w0, eta = per_node(self.strength), per_node(self.frequency), per_node(self.damping)
        return a * omega**4 / ((w0**2 - omega**2) ** 2 + (eta * w0 * omega) ** 2)

    def low_frequency(self, ctx: RateContext) -> dict[int, np.ndarray]:
        return {4: np.broadcast_to(np.asarray(self.strength) / np.asarray(self.frequency) ** 4,
                                   ctx.shape)}


def resonance_rate(omega: float, strength: float, frequency: float, damping: float) -> float:
    """The same formula, written out for the independent reference quadrature."""
    return strength * omega**4 / ((frequency**2 - omega**2) ** 2 + (damping * frequency * omega) ** 2)
