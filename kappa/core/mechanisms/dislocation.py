"""Scattering by dislocations: the core (ω³) and the strain field around it (ω).

With N_D dislocation lines per area (line length per volume), Burgers vector b, the branch's
sound velocity v and Grüneisen parameter γ, volume per atom V₀ and Poisson ratio ν (the forms
used by Kim et al., Science 348, 109 (2015), after Klemens and Carruthers):

    core:    τ⁻¹ = N_D V₀^(4/3) ω³ / v²,
    strain:  τ⁻¹ = 0.6 b² N_D γ² ω · {1/2 + (1/24) [(1 − 2ν)/(1 − ν)]² [1 + √2 (v_L/v_T)²]²}.

The core term is Klemens' scattering by the missing or displaced atoms along the line
(P. G. Klemens, Proc. Phys. Soc. A 68, 1113 (1955)); the strain term the anharmonic scattering
by the long-range strain of edge and screw components (P. Carruthers, Rev. Mod. Phys. 33, 92
(1961); the constant 0.6 and the bracket as written by Kim et al.; the constants are quoted from
memory — verify against the source before relying on absolute values). Both are polynomials;
on a curved branch they carry over as v_g × cross-section(q) (``velocity = "flux"``).

**Poisson ratio and v_L/v_T.** Taken from the material when it gives a longitudinal and a
transverse velocity (per-branch models, or ``longitudinal_velocity`` + ``transverse_velocity``):
ν = (1 − 2r²)/(2 − 2r²), r = v_T/v_L (isotropic solid), reported as derived; with several
transverse entries r uses their mean velocity. Otherwise ``poisson_ratio`` (default 0.25, a
warning when it is left at the default) gives both: (v_L/v_T)² = 2(1 − ν)/(1 − 2ν).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import ClassVar

import numpy as np

from kappa.core.material import Derived
from kappa.core.mechanisms.base import Mechanism, RateContext
from kappa.core.parameters import Parameter
from kappa.errors import ConfigError

__all__ = ["Dislocation", "dislocation_core_coefficient", "dislocation_strain_coefficient",
           "poisson_ratio_from_velocities", "strain_factor"]

_DEFAULT_POISSON = 0.25


def poisson_ratio_from_velocities(longitudinal, transverse):
    """ν = (1 − 2r²)/(2 − 2r²), r = v_T/v_L (isotropic solid) [1]. Broadcasts."""
    r2 = (np.asarray(transverse, dtype=float) / np.asarray(longitudinal, dtype=float)) ** 2
    return (1.0 - 2.0 * r2) / (2.0 - 2.0 * r2)


def strain_factor(poisson_ratio, velocity_ratio=None):
    """{1/2 + (1/24)[(1−2ν)/(1−ν)]²[1 + √2 (v_L/v_T)²]²} [1]; v_L/v_T from ν when not given."""
    nu = np.asarray(poisson_ratio, dtype=float)
    if velocity_ratio is None:
        ratio2 = 2.0 * (1.0 - nu) / (1.0 - 2.0 * nu)
    else:
        ratio2 = np.asarray(velocity_ratio, dtype=float) ** 2
    return 0.5 + ((1.0 - 2.0 * nu) / (1.0 - nu)) ** 2 * (1.0 + math.sqrt(2.0) * ratio2) ** 2 / 24


def dislocation_core_coefficient(density, atomic_volume, sound_velocity):
    """Coefficient of ω³ in the core rate, N_D V₀^(4/3)/v² [s²]. Broadcasts."""
    return np.asarray(density) * np.asarray(atomic_volume) ** (4.0 / 3.0) / np.asarray(
        sound_velocity) ** 2


def dislocation_strain_coefficient(density, burgers_vector, gruneisen, poisson_ratio,
                                   velocity_ratio=None):
    """Coefficient of ω in the strain-field rate, 0.6 b² N_D γ² {…} [1]. Broadcasts."""
    return (0.6 * np.asarray(burgers_vector) ** 2 * np.asarray(density)
            * np.asarray(gruneisen) ** 2 * strain_factor(poisson_ratio, velocity_ratio))


def _velocities(material, spec):
    """(v_L, v_T) the material gives, or (None, None)."""
    if spec is not None and spec.branches is None and spec.longitudinal_velocity is not None:
        return spec.longitudinal_velocity, spec.transverse_velocity
    longs = [b for b in material.branches if b.polarization == "longitudinal"]
    trans = [b for b in material.branches if b.polarization == "transverse"]
    if longs and trans:
        vt = sum(np.asarray(b.sound_velocity, dtype=float) for b in trans) / len(trans)
        return longs[0].sound_velocity, vt
    return None, None


@dataclass(frozen=True)
class Dislocation(Mechanism):
    """Dislocations: core (ω³) and strain-field (ω) scattering, polynomial rates."""

    density: float | None = None
    burgers_vector: float | None = None
    poisson_ratio: float = _DEFAULT_POISSON
    velocity_ratio: float | None = None  # v_L/v_T from the material (set when resolved)

    key: ClassVar[str] = "dislocation"
    title: ClassVar[str] = "dislocations"
    citation: ClassVar[str] = (
        "Dislocation rates: core N_D V^(4/3) ω³/v² after P. G. Klemens, Proc. Phys. Soc. A 68, "
        "1113 (1955); strain field 0.6 b² N_D γ² ω {…} after P. Carruthers, Rev. Mod. Phys. "
        "33, 92 (1961); both as used by S. I. Kim et al., Science 348, 109 (2015)")
    velocity: ClassVar[str] = "flux"
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("density", "1/m**2", "dislocation density N_D (line length per volume)",
                  None, low=0.0, high=1e19, display="1/cm**2", scale=1e4,
                  title="dislocation density", typical=(0.0, 1e17),
                  basis="common practice, no source: 1e13 cm^-2 is about the densest "
                  "dislocation networks reported", start=1e15),
        Parameter("burgers_vector", "m", "magnitude of the Burgers vector b", None, low=0.0,
                  high=1e-8, low_open=True, display="angstrom", scale=1e-10,
                  title="Burgers vector", typical=(1e-10, 2e-9),
                  basis="common practice, no source: Burgers vectors are lattice "
                  "translations of about 1-20 angstrom", start=4e-10),
        Parameter("poisson_ratio", "1", "Poisson ratio ν, used only when the material gives no "
                  "longitudinal and transverse velocities", _DEFAULT_POISSON, low=-0.99,
                  high=0.49, title="Poisson ratio", typical=(0.0, 0.45),
                  basis="common practice, no source: ν of crystalline solids is mostly 0.1-0.4",
                  start=_DEFAULT_POISSON, linear=True),
    )

    @property
    def active(self) -> bool:
        return bool(np.any(np.asarray(self.density) > 0))

    def unused(self, name: str) -> str | None:
        if name == "poisson_ratio" and self.velocity_ratio is not None:
            return ("the Poisson ratio follows from the material's longitudinal and transverse "
                    "velocities in this model")
        return None

    def resolve(self, material, spec) -> tuple[Mechanism, list[Derived]]:
        vl, vt = _velocities(material, spec)
        if vl is None:
            return self, []
        if np.any(np.asarray(self.poisson_ratio) != _DEFAULT_POISSON):
            raise ConfigError(f"scattering.{self.key}.poisson_ratio", self.poisson_ratio,
                              "the material gives longitudinal and transverse velocities, from "
                              "which the Poisson ratio follows; remove this key")
        nu = poisson_ratio_from_velocities(vl, vt)
        bad = ~((nu > -1.0) & (nu < 0.5))
        if np.any(bad):
            raise ConfigError("material", "v_T/v_L", "the transverse velocity must be below "
                              "√3/2 of the longitudinal one for a Poisson ratio in (−1, 1/2) "
                              "(scattering.dislocation needs it)")
        ratio = np.asarray(vl, dtype=float) / np.asarray(vt, dtype=float)
        nu = float(nu) if np.ndim(nu) == 0 else nu
        ratio = float(ratio) if np.ndim(ratio) == 0 else ratio
        resolved = replace(self, poisson_ratio=nu, velocity_ratio=ratio)
        return resolved, [Derived(f"scattering.{self.key}.poisson_ratio", nu, "1",
                                  "from v_T/v_L of the material: (1 − 2r²)/(2 − 2r²)")]

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        b, m = ctx.branch, ctx.material
        one = np.ones(ctx.shape)
        return {
            1: dislocation_strain_coefficient(self.density, self.burgers_vector, b.gruneisen,
                                              self.poisson_ratio, self.velocity_ratio) * one,
            3: dislocation_core_coefficient(self.density, m.atomic_volume, b.sound_velocity)
            * one,
        }

    def warnings(self, material) -> list[str]:
        if self.velocity_ratio is None and np.all(np.asarray(self.poisson_ratio)
                                                  == _DEFAULT_POISSON):
            return [f"scattering.dislocation: the material gives no longitudinal and transverse "
                    f"velocities, so the Poisson ratio is the default {_DEFAULT_POISSON} "
                    "(common practice, no source); give scattering.dislocation.poisson_ratio "
                    "or the two velocities"]
        return []
