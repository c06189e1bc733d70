"""Scattering by precipitates (nanoparticles): Rayleigh at long wavelengths, geometric at short.

The cross section of one spherical precipitate of radius R interpolates between the two limits
(Kim & Majumdar, J. Appl. Phys. 99, 084306 (2006); used so by Mingo et al., Nano Lett. 9, 711
(2009)):

    1/σ = 1/σ_R + 1/σ_g,   σ_g = 2πR²,
    σ_R = (4π/9) R² (qR)⁴ [(ΔD/D)² + 3(ΔK/K)²],

and the rate is τ⁻¹ = v_g n_p σ, n_p precipitates per volume (given, or φ/⟨(4π/3)R³⟩ from the
volume fraction φ). ΔD/D is the relative difference of mass density, ΔK/K that of the elastic
(bulk) modulus, precipitate against matrix. The geometric limit 2πR² is twice the projected
area (extinction: diffraction around the particle doubles it).

**The Rayleigh constant.** kappa derives it rather than copying it: scattering of a scalar
elastic wave by a small sphere in the Born approximation gives σ = (4π/9)R²(qR)⁴[(ΔK/K)² +
(ΔD/D)²/3] (the stiffness term a monopole, the density term a dipole); a lattice phonon scattered
by a mass difference has three polarizations to go to, which multiplies both by three. Then a
precipitate of one atom's volume with n_p = c/V₀ gives exactly Klemens' point-defect rate
V₀c(ΔM/M)²ω⁴/(4πv³) — the limit tests/test_precipitates.py checks. Published Rayleigh constants
for this problem differ by factors of order one (treat ΔK/K and ΔD/D as effective contrasts).

**Size distribution.** With ``width`` σ_ln > 0 the radii are log-normal with median R₀ (the
``radius``) and ln R of standard deviation σ_ln; the rate averages σ over the distribution with a
fixed Gauss–Hermite rule in ln R: :data:`HERMITE_NODES` nodes up to σ_ln = 0.5, 128 above
(within 1e-6 of adaptive quadrature up to the largest width allowed, 1; the Rayleigh part
∝ R⁶ weights the wide tail heavily). n_p from φ uses ⟨R³⟩ = R₀³e^(9σ_ln²/2).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.material import Derived
from kappa.core.mechanisms.base import Mechanism, RateContext, per_node
from kappa.core.parameters import Parameter
from kappa.errors import ConfigError

__all__ = ["Precipitate", "precipitate_cross_section", "rayleigh_cross_section",
           "HERMITE_NODES", "size_rule"]

HERMITE_NODES = 24  #: Gauss–Hermite nodes over ln R for a log-normal size distribution
_GH = np.polynomial.hermite.hermgauss(HERMITE_NODES)
_GH_WIDE = np.polynomial.hermite.hermgauss(128)  # widths above 0.5


def rayleigh_cross_section(radius, wavevector, mass_contrast, elastic_contrast=0.0):
    """σ_R = (4π/9) R² (qR)⁴ [(ΔD/D)² + 3(ΔK/K)²] [m²] (module notes). Broadcasts."""
    r = np.asarray(radius, dtype=float)
    qr = np.asarray(wavevector, dtype=float) * r
    contrast = np.asarray(mass_contrast) ** 2 + 3.0 * np.asarray(elastic_contrast) ** 2
    return 4.0 * math.pi / 9.0 * r * r * qr**4 * contrast


def precipitate_cross_section(radius, wavevector, mass_contrast, elastic_contrast=0.0):
    """σ = (1/σ_R + 1/(2πR²))⁻¹ [m²]: Rayleigh at qR ≪ 1, geometric 2πR² at qR ≫ 1.

    Source: Kim & Majumdar, J. Appl. Phys. 99, 084306 (2006) (the interpolation); Rayleigh
    constant as in the module notes. Broadcasts; 0 where the contrast is 0.
    """
    s_r = rayleigh_cross_section(radius, wavevector, mass_contrast, elastic_contrast)
    s_g = 2.0 * math.pi * np.asarray(radius, dtype=float) ** 2
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(s_r > 0, s_r * s_g / (s_r + s_g), 0.0)


def size_rule(radius, width):
    """Radii and weights of the size average: (R_k, w_k) with Σ w_k = 1.

    Log-normal in R with median ``radius`` and σ_ln = ``width``: R_k = R₀ exp(√2 σ_ln t_k),
    w_k = h_k/√π (Gauss–Hermite t_k, h_k; 24 nodes up to σ_ln = 0.5, 128 above). A single
    radius when every width is 0. Arrays gain a trailing axis of size K.
    """
    r0 = np.asarray(radius, dtype=float)[..., None]
    w = np.asarray(width, dtype=float)[..., None]
    if not np.any(w > 0):
        return r0, np.ones((1,))
    t, h = _GH if np.all(w <= 0.5) else _GH_WIDE
    return r0 * np.exp(math.sqrt(2.0) * w * t), h / math.sqrt(math.pi)


def mean_volume(radius, width):
    """⟨(4π/3)R³⟩ of the log-normal sizes, (4π/3)R₀³exp(9σ_ln²/2) [m³]."""
    return 4.0 * math.pi / 3.0 * np.asarray(radius) ** 3 * np.exp(4.5 * np.asarray(width) ** 2)


@dataclass(frozen=True)
class Precipitate(Mechanism):
    """Precipitates (nanoparticles) with mass and/or elastic contrast (not a polynomial)."""

    radius: float | None = None
    volume_fraction: float = 0.0
    number_density: float = 0.0
    mass_contrast: float = 0.0
    elastic_contrast: float = 0.0
    width: float = 0.0

    key: ClassVar[str] = "precipitate"
    title: ClassVar[str] = "precipitates"
    citation: ClassVar[str] = (
        "Precipitate cross section 1/σ = 1/σ_Rayleigh + 1/(2πR²): W. Kim & A. Majumdar, "
        "J. Appl. Phys. 99, 084306 (2006), as used by N. Mingo, D. Hauser, N. P. Kobayashi, "
        "M. Plissonnier & A. Shakouri, Nano Lett. 9, 711 (2009)")
    polynomial: ClassVar[bool] = False
    velocity: ClassVar[str] = "flux"
    exclusive: ClassVar[tuple[tuple[str, ...], ...]] = (("volume_fraction", "number_density"),)
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("radius", "m", "precipitate radius R (the median R₀ with a size width)", None,
                  low=0.0, high=1e-3, low_open=True, display="nm", scale=1e-9,
                  title="precipitate radius", typical=(2e-10, 1e-5),
                  basis="common practice, no source: below an atomic radius a precipitate is "
                  "a point defect (use scattering.point_defect)", start=2e-9),
        Parameter("volume_fraction", "1", "volume fraction φ of precipitates", 0.0, low=0.0,
                  high=1.0, high_open=True, title="precipitate volume fraction",
                  typical=(0.0, 0.3), basis="common practice, no source: above about 30 % "
                  "the 'precipitates' are a second phase", start=0.02),
        Parameter("number_density", "1/m**3", "precipitates per volume n_p (instead of the "
                  "volume fraction)", 0.0, low=0.0, high=1e30, display="1/cm**3", scale=1e6,
                  title="precipitate number density", typical=(0.0, 1e27),
                  basis="common practice, no source"),
        Parameter("mass_contrast", "1", "|ΔD/D|, relative mass-density difference "
                  "precipitate/matrix", 0.0, low=0.0, high=100.0, title="mass contrast |ΔD/D|",
                  typical=(0.0, 5.0), basis="common practice, no source", start=0.5),
        Parameter("elastic_contrast", "1", "|ΔK/K|, relative elastic-modulus difference "
                  "precipitate/matrix", 0.0, low=0.0, high=100.0,
                  title="elastic contrast |ΔK/K|", typical=(0.0, 5.0),
                  basis="common practice, no source", start=0.3),
        Parameter("width", "1", "σ of ln R (log-normal sizes; 0: one radius)", 0.0, low=0.0,
                  high=1.0, title="size-distribution width σ_ln", typical=(0.0, 0.6),
                  basis="common practice, no source: measured precipitate size "
                  "distributions have σ_ln of about 0.1-0.5", start=0.3, linear=True),
    )

    def __post_init__(self) -> None:
        super().__post_init__()
        amount = np.asarray(self.volume_fraction) + np.asarray(self.number_density)
        contrast = np.asarray(self.mass_contrast) + np.asarray(self.elastic_contrast)
        if np.any(amount > 0) and not np.any(contrast > 0):
            raise ConfigError(f"scattering.{self.key}.mass_contrast", 0,
                              "precipitates without a contrast do not scatter: give "
                              "mass_contrast (|ΔD/D|) and/or elastic_contrast (|ΔK/K|)")

    @property
    def active(self) -> bool:
        amount = np.asarray(self.volume_fraction) + np.asarray(self.number_density)
        contrast = np.asarray(self.mass_contrast) + np.asarray(self.elastic_contrast)
        return bool(np.any((amount > 0) & (contrast > 0)))

    def density(self):
        """Precipitates per volume n_p [1/m³] (given, or φ/⟨V_p⟩)."""
        fraction = np.asarray(self.volume_fraction, dtype=float)
        from_fraction = fraction / mean_volume(self.radius, self.width)
        return np.where(fraction > 0, from_fraction, np.asarray(self.number_density, float))

    def rate(self, ctx: RateContext, omega: np.ndarray) -> np.ndarray:
        # parameters broadcast to ctx.shape; per_node adds the node axis, [..., None] the size
        # axis of the distribution
        n_p = per_node(self.density())
        v_g = ctx.group_velocity(omega)
        q = np.asarray(ctx.wavevector(omega))
        radii, weights = size_rule(per_node(self.radius), per_node(self.width))
        dm = np.asarray(per_node(self.mass_contrast))[..., None]
        dk = np.asarray(per_node(self.elastic_contrast))[..., None]
        sigma = precipitate_cross_section(radii, q[..., None], dm, dk)
        out = v_g * n_p * np.sum(sigma * weights, axis=-1)
        return np.broadcast_to(out, np.broadcast_shapes(ctx.shape + (1,), q.shape))

    def low_frequency(self, ctx: RateContext) -> dict[int, np.ndarray]:
        # σ → σ_R: τ⁻¹ → n_p (4π/9)⟨R⁶⟩ C ω⁴/v³ (⟨R⁶⟩ with the same size rule as the nodes)
        radii, weights = size_rule(self.radius, self.width)
        r6 = np.sum(radii**6 * weights, axis=-1)
        contrast = np.asarray(self.mass_contrast) ** 2 + 3.0 * np.asarray(
            self.elastic_contrast) ** 2
        c4 = (self.density() * 4.0 * math.pi / 9.0 * r6 * contrast
              / np.asarray(ctx.branch.sound_velocity, dtype=float) ** 3)
        return {4: np.broadcast_to(c4, ctx.shape)}

    def resolve(self, material, spec):
        if np.all(np.asarray(self.volume_fraction) == 0):
            return self, []
        return self, [Derived(f"scattering.{self.key}.number_density", _float(self.density()),
                              "1/cm**3", "volume fraction / mean precipitate volume "
                              "(4π/3)R₀³exp(9σ_ln²/2)")]

    def warnings(self, material) -> list[str]:
        out = []
        r = np.asarray(self.radius)
        spacing = np.cbrt(np.asarray(material.atomic_volume))
        if np.any(r < spacing):
            out.append(f"scattering.precipitate.radius = {float(r.min()) * 1e9:.3g} nm is below "
                       "an interatomic spacing; such a 'precipitate' is a point defect (use "
                       "scattering.point_defect)")
        return out


def _float(x):
    return float(x) if np.ndim(x) == 0 else x
