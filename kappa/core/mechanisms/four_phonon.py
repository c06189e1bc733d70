"""Higher-order anharmonic scattering, a phenomenological ω²T² rate (four-phonon-like)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.constants import hbar
from kappa.core.mechanisms.base import Mechanism, RateContext
from kappa.core.parameters import Parameter

__all__ = ["FourPhonon", "four_phonon_coefficient"]


def four_phonon_coefficient(gruneisen, atomic_mass, sound_velocity, debye_temperature, T,
                            scale=1.0):
    """Coefficient of ω² in the higher-order rate, s₄ ħγ²T²/(M̄v²θ²) [s].

    The Slack–Morelli Umklapp prefactor ħγ²ω²T/(M̄v²θ) times T/θ, without the freeze-out
    factor: a rate ∝ ω²T², the temperature dependence of four-phonon scattering at high T.
    Phenomenological (no source for the form as a whole): ``scale`` s₄ is a fit parameter.
    Broadcasts over every argument.
    """
    T = np.asarray(T, dtype=float)
    return (scale * hbar * gruneisen**2 * T**2
            / (atomic_mass * sound_velocity**2 * debye_temperature**2))


@dataclass(frozen=True)
class FourPhonon(Mechanism):
    """Higher-order anharmonicity: τ⁻¹ = s₄ ħγ²ω²T²/(M̄v²θ²), a polynomial (ω²).

    Phenomenological, for fits well above room temperature where three-phonon scattering alone
    falls too slowly: the T² growth is that of four-phonon processes at high temperature
    (four-phonon scattering rates grow as T² where three-phonon ones grow as T, Feng & Ruan,
    Phys. Rev. B 93, 045202 (2016)); the ω² shape and the prefactor are borrowed from the
    Slack–Morelli Umklapp rate, so that s₄ is a plain number (s₄·T/θ compares it with Umklapp
    at high T). Each branch uses its own γ, v, θ.
    """

    scale: float | None = None

    key: ClassVar[str] = "four_phonon"
    title: ClassVar[str] = "four-phonon-like processes"
    citation: ClassVar[str] = (
        "Higher-order (four-phonon-like) rate: phenomenological ω²T² form with the Slack–Morelli "
        "prefactor (D. T. Morelli, J. P. Heremans & G. A. Slack, Phys. Rev. B 66, 195304 "
        "(2002)); T² growth of four-phonon scattering: T. Feng & X. Ruan, Phys. Rev. B 93, "
        "045202 (2016)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("scale", "1", "s₄ in s₄ħγ²ω²T²/(M̄v²θ²)", None, low=0.0, high=1e6,
                  title="four-phonon scale", typical=(0.0, 10.0),
                  basis="common practice, no source: at T = θ a scale of 1 is about as "
                  "strong as Umklapp", start=0.1),
    )

    @property
    def active(self) -> bool:
        return bool(np.any(np.asarray(self.scale) > 0))

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        b, m = ctx.branch, ctx.material
        return {2: four_phonon_coefficient(b.gruneisen, m.atomic_mass, b.sound_velocity,
                                           b.debye_temperature, ctx.temperature, self.scale)
                * np.ones(ctx.shape)}
