"""Point-defect (mass and strain disorder) Rayleigh scattering, Klemens form."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.mechanisms.base import Mechanism, RateContext
from kappa.core.parameters import Parameter

__all__ = ["PointDefect", "point_defect_coefficient"]


def point_defect_coefficient(atomic_volume, sound_velocity, mass_variance, strain_variance=0.0):
    """Coefficient A of ω⁴ in the point-defect rate (Klemens) [s³].

    τ_PD⁻¹ = V₀ (Γ_M + Γ_S) ω⁴ / (4π v³).
    Source: Klemens, Proc. Phys. Soc. A 68, 1113 (1955). Broadcasts over every argument.
    """
    return atomic_volume * (mass_variance + strain_variance) / (4.0 * math.pi * sound_velocity**3)


_GAMMA_BASIS = ("common practice, no source: Γ above 1 is far outside the perturbative range "
                "of the Klemens formula")


@dataclass(frozen=True)
class PointDefect(Mechanism):
    """Point-defect (mass and strain disorder) Rayleigh scattering, Klemens form (ω⁴).

    On a curved branch the rate keeps this form (``velocity = "sound"``): V₀/(4πv³) is the
    Debye density of states of the branch. With the density of states of an isotropic sine
    branch, ∝ q²/v_g, the rate would diverge at the zone boundary — a van Hove singularity that
    a real crystal spreads over its zone — so kappa does not use it there.
    """

    mass_variance: float = 0.0
    strain_variance: float = 0.0

    key: ClassVar[str] = "point_defect"
    title: ClassVar[str] = "point defects"
    citation: ClassVar[str] = (
        "Point-defect rate: P. G. Klemens, Proc. Phys. Soc. A 68, 1113 (1955)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("mass_variance", "1", "mass disorder Γ_M", 0.0, low=0.0, high=100.0,
                  title="mass disorder Γ_M", typical=(0.0, 1.0), basis=_GAMMA_BASIS,
                  start=1e-4),
        Parameter("strain_variance", "1", "strain disorder Γ_S", 0.0, low=0.0, high=100.0,
                  title="strain disorder Γ_S", typical=(0.0, 1.0), basis=_GAMMA_BASIS,
                  start=1e-4),
    )

    @property
    def active(self) -> bool:
        return bool(np.any(np.asarray(self.mass_variance) + self.strain_variance > 0))

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        return {4: point_defect_coefficient(ctx.material.atomic_volume,
                                            ctx.branch.sound_velocity, self.mass_variance,
                                            self.strain_variance) * np.ones(ctx.shape)}

    def warnings(self, material) -> list[str]:
        total = np.asarray(self.mass_variance) + self.strain_variance
        if np.any(total > 1.0):
            return [f"scattering.point_defect: Γ_M + Γ_S = {float(np.max(total)):.3g} is above "
                    "1, far outside the perturbative range of the Klemens formula"]
        return []
