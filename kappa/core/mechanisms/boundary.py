"""Boundary (grain-size) scattering (Casimir), grey or with Ziman's rough-surface specularity."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.mechanisms.base import Mechanism, RateContext, per_node
from kappa.core.parameters import Parameter

__all__ = ["Boundary", "boundary_rate", "rough_specularity", "rough_boundary_rate"]


def boundary_rate(sound_velocity, grain_size, specularity=0.0):
    """Boundary (Casimir) rate τ_B⁻¹ = v(1−p)/((1+p)L) [1/s], independent of ω.

    Source: Casimir, Physica 5, 495 (1938); specularity factor after Ziman, Electrons and
    Phonons (1960). Broadcasts over every argument.
    """
    return sound_velocity * (1.0 - specularity) / ((1.0 + specularity) * grain_size)


def rough_specularity(wavevector, roughness):
    """Ziman's specularity of a rough surface, p = exp(−16π³η²/λ²) = exp(−4πη²q²).

    λ = 2π/q is the phonon wavelength, η the rms roughness [m]; q [1/m]. Source: J. M. Ziman,
    Electrons and Phonons (Oxford, 1960), ch. 11. Broadcasts.
    """
    return np.exp(-4.0 * math.pi * np.asarray(roughness) ** 2 * np.asarray(wavevector) ** 2)


def rough_boundary_rate(group_velocity, wavevector, grain_size, roughness, specularity=0.0):
    """τ_B⁻¹ = v_g (1−p)/((1+p)L) with p = p₀ + (1−p₀)·exp(−4πη²q²) [1/s].

    p₀ (``specularity``) is a part of the surface that reflects specularly at every wavelength;
    p₀ = 0 is Ziman's rough surface. Limits: η → ∞ gives the grey boundary v_g(1−p₀)/((1+p₀)L);
    η → 0 gives p → 1, no boundary scattering. Broadcasts; (1−p) is computed with expm1 so
    that the ω² rate at long wavelengths keeps its digits.
    """
    a = 4.0 * math.pi * np.asarray(roughness) ** 2 * np.asarray(wavevector) ** 2
    one_minus = (1.0 - specularity) * -np.expm1(-a)
    one_plus = 1.0 + specularity + (1.0 - specularity) * np.exp(-a)
    return group_velocity * one_minus / (one_plus * grain_size)


@dataclass(frozen=True)
class Boundary(Mechanism):
    """Boundary (grain-size) scattering: grey, or with a wavelength-dependent specularity.

    Grey (``roughness`` 0, the default): τ⁻¹ = v(1−p)/((1+p)L), a polynomial (ω⁰). With an rms
    roughness η > 0 the specularity follows Ziman, p(ω) = p₀ + (1−p₀)exp(−16π³η²/λ²),
    λ = 2π/q(ω): long waves see a smooth surface (p → 1), short ones a diffuse one — the rate is
    then not a polynomial (ω² at long wavelengths). On a curved branch the rate uses the group
    velocity v_g(ω) and the wavevector q(ω) (``velocity = "flux"``).
    """

    grain_size: float | None = None
    specularity: float = 0.0
    roughness: float = 0.0

    key: ClassVar[str] = "boundary"
    title: ClassVar[str] = "boundaries"
    citation: ClassVar[str] = (
        "Boundary rate: H. B. G. Casimir, Physica 5, 495 (1938); specularity factor "
        "(1−p)/(1+p) and rough-surface specularity exp(−16π³η²/λ²) after J. M. Ziman, "
        "Electrons and Phonons (Oxford, 1960)")
    velocity: ClassVar[str] = "flux"
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("grain_size", "m", "boundary (grain) length L", None, low=0.0, high=10.0,
                  low_open=True, display="nm", scale=1e-9,
                  title="grain size", typical=(1e-9, 0.1),
                  basis="common practice, no source: below 1 nm a boundary is closer than "
                  "an interatomic spacing", start=1e-6),
        Parameter("specularity", "1", "fraction p of specular reflections (p₀ with a "
                  "roughness: the part specular at every wavelength)", 0.0, low=0.0,
                  high=1.0, high_open=True, title="specularity", start=0.1, linear=True),
        Parameter("roughness", "m", "rms surface roughness η of Ziman's p = exp(−16π³η²/λ²); "
                  "0: not used (grey boundary)", 0.0, low=0.0, high=1e-3, display="nm",
                  scale=1e-9, title="surface roughness", typical=(0.0, 1e-7),
                  basis="common practice, no source: rms roughness of grain boundaries and "
                  "etched surfaces is a few angstroms to a few nm", start=0.5e-9),
    )

    @property
    def polynomial(self) -> bool:  # type: ignore[override]
        """Grey boundaries are a polynomial (ω⁰); rough ones are not."""
        return not bool(np.any(np.asarray(self.roughness) > 0))

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        return {0: boundary_rate(ctx.branch.sound_velocity, self.grain_size, self.specularity)
                * np.ones(ctx.shape)}

    def rate(self, ctx: RateContext, omega: np.ndarray) -> np.ndarray:
        if self.polynomial:
            return super().rate(ctx, omega)
        eta = per_node(self.roughness)
        p0 = per_node(self.specularity)
        size = per_node(self.grain_size)
        v_g = ctx.group_velocity(omega)
        rough = rough_boundary_rate(v_g, ctx.wavevector(omega), size, eta, p0)
        grey = v_g * (1.0 - p0) / ((1.0 + p0) * size)
        out = np.where(np.asarray(eta) > 0, rough, grey)
        return np.broadcast_to(out, np.broadcast_shapes(ctx.shape + (1,), np.shape(omega)))

    def low_frequency(self, ctx: RateContext) -> dict[int, np.ndarray]:
        if self.polynomial:
            return self.coefficients(ctx)
        eta = np.broadcast_to(self.roughness, ctx.shape)
        v = ctx.branch.sound_velocity
        grey = np.broadcast_to(boundary_rate(v, self.grain_size, self.specularity), ctx.shape)
        # (1−p)/(1+p) → (1−p₀)·4πη²q²/2 with q = ω/v: an ω² rate
        c2 = 2.0 * math.pi * (1.0 - np.asarray(self.specularity)) * eta**2 / (
            v * np.asarray(self.grain_size))
        return {0: np.where(eta > 0, 0.0, grey), 2: np.broadcast_to(np.where(eta > 0, c2, 0.0),
                                                                       ctx.shape)}

    def warnings(self, material) -> list[str]:
        small = np.asarray(self.grain_size) < 1e-9
        if np.any(small):
            size = float(np.min(self.grain_size))
            return [f"scattering.boundary.grain_size = {size * 1e9:.3g} nm is below 1 nm, "
                    "smaller than an interatomic spacing; the boundary model is not meaningful "
                    "there"]
        return []
