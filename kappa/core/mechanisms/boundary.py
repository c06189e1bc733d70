"""Boundary (grain-size) scattering, frequency independent (Casimir)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.mechanisms.base import Mechanism, RateContext
from kappa.core.parameters import Parameter

__all__ = ["Boundary", "boundary_rate"]


def boundary_rate(sound_velocity, grain_size, specularity=0.0):
    """Boundary (Casimir) rate τ_B⁻¹ = v(1−p)/((1+p)L) [1/s], independent of ω.

    Source: Casimir, Physica 5, 495 (1938); specularity factor after Ziman, Electrons and
    Phonons (1960). Broadcasts over every argument.
    """
    return sound_velocity * (1.0 - specularity) / ((1.0 + specularity) * grain_size)


@dataclass(frozen=True)
class Boundary(Mechanism):
    """Boundary (grain-size) scattering, frequency independent."""

    grain_size: float | None = None
    specularity: float = 0.0

    key: ClassVar[str] = "boundary"
    title: ClassVar[str] = "boundaries"
    citation: ClassVar[str] = (
        "Boundary rate: H. B. G. Casimir, Physica 5, 495 (1938); specularity factor "
        "(1−p)/(1+p) after J. M. Ziman, Electrons and Phonons (Oxford, 1960)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("grain_size", "m", "boundary (grain) length L", None, low=0.0, high=10.0,
                  low_open=True, display="nm", scale=1e-9,
                  title="grain size", typical=(1e-9, 0.1),
                  basis="common practice, no source: below 1 nm a boundary is closer than "
                  "an interatomic spacing", start=1e-6),
        Parameter("specularity", "1", "fraction p of specular reflections", 0.0, low=0.0,
                  high=1.0, high_open=True, title="specularity", start=0.1, linear=True),
    )

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        return {0: boundary_rate(ctx.branch.sound_velocity, self.grain_size, self.specularity)
                * np.ones(ctx.shape)}

    def warnings(self, material) -> list[str]:
        small = np.asarray(self.grain_size) < 1e-9
        if np.any(small):
            size = float(np.min(self.grain_size))
            return [f"scattering.boundary.grain_size = {size * 1e9:.3g} nm is below 1 nm, "
                    "smaller than an interatomic spacing; the boundary model is not meaningful "
                    "there"]
        return []
