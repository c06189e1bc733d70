"""Umklapp phonon–phonon scattering, Slack–Morelli form."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.constants import hbar
from kappa.core.mechanisms.base import Mechanism, RateContext
from kappa.core.parameters import Parameter

__all__ = ["Umklapp", "umklapp_coefficient"]


def umklapp_coefficient(gruneisen, atomic_mass, sound_velocity, debye_temperature, T,
                        scale=1.0, exponent_divisor=3.0):
    """Coefficient B(T) of ω² in the Umklapp rate (Slack–Morelli form) [s].

    τ_U⁻¹ = s_U · ħγ²/(M̄ v² θ) · ω² T · exp(−θ/(b T)).
    Source: Morelli, Heremans & Slack, Phys. Rev. B 66, 195304 (2002); Slack & Galginaitis,
    Phys. Rev. 133, A253 (1964). Broadcasts over every argument.
    """
    T = np.asarray(T, dtype=float)
    return (scale * hbar * gruneisen**2 / (atomic_mass * sound_velocity**2 * debye_temperature)
            * T * np.exp(-debye_temperature / (exponent_divisor * T)))


@dataclass(frozen=True)
class Umklapp(Mechanism):
    """Umklapp phonon–phonon scattering, Slack–Morelli form (ω² T e^(−θ/bT))."""

    scale: float = 1.0
    exponent_divisor: float = 3.0

    key: ClassVar[str] = "umklapp"
    title: ClassVar[str] = "Umklapp"
    citation: ClassVar[str] = (
        "Umklapp rate: D. T. Morelli, J. P. Heremans & G. A. Slack, Phys. Rev. B 66, 195304 "
        "(2002); G. A. Slack & S. Galginaitis, Phys. Rev. 133, A253 (1964)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("scale", "1", "multiplier s_U of the rate; 0 switches Umklapp off", 1.0,
                  low=0.0, high=1e6, title="Umklapp scale", typical=(0.0, 30.0),
                  basis="common practice, no source: a scale far above 1 means the model "
                  "leaves out scattering the data need", start=1.0),
        Parameter("exponent_divisor", "1", "b in exp(−θ/(bT))", 3.0, low=0.0, high=100.0,
                  low_open=True, title="Umklapp exponent divisor b", typical=(1.0, 10.0),
                  basis="common practice, no source: b ≈ 2-3 in published fits", start=3.0),
    )

    @property
    def active(self) -> bool:
        return bool(np.any(np.asarray(self.scale) > 0))

    def unused(self, name: str) -> str | None:
        if name == "exponent_divisor" and not self.active:
            return "Umklapp is switched off (scattering.umklapp.scale = 0)"
        return None

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        b, m = ctx.branch, ctx.material
        return {2: umklapp_coefficient(b.gruneisen, m.atomic_mass, b.sound_velocity,
                                       b.debye_temperature, ctx.temperature, self.scale,
                                       self.exponent_divisor)}
