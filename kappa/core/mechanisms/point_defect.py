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


_DISORDER = ("given", "isotopes", "composition")


@dataclass(frozen=True)
class PointDefect(Mechanism):
    """Point-defect (mass and strain disorder) Rayleigh scattering, Klemens form (ω⁴).

    ``disorder: given`` takes ``mass_variance`` and ``strain_variance`` as written;
    ``isotopes`` derives Γ_M from the natural isotopes of ``material.composition`` (or
    ``material.alloy``), site-weighted, with Γ_S = 0; ``composition`` derives Γ_M from the
    isotopes and the alloy disorder (vacancies included) and Γ_S with the strain parameter ε
    from covalent radii (:mod:`kappa.core.disorder`). Derived values are recorded.

    On a curved branch the rate keeps this form (``velocity = "sound"``): V₀/(4πv³) is the
    Debye density of states of the branch. With the density of states of an isotropic sine
    branch, ∝ q²/v_g, the rate would diverge at the zone boundary — a van Hove singularity that
    a real crystal spreads over its zone — so kappa does not use it there.
    """

    mass_variance: float = 0.0
    strain_variance: float = 0.0
    disorder: str = "given"
    strain_parameter: float = 39.0

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
        Parameter("disorder", "", "where Γ comes from: given (the two values above), "
                  "isotopes or composition (derived from material.composition)", "given",
                  choices=_DISORDER),
        Parameter("strain_parameter", "1", "strain parameter ε of the composition's strain "
                  "term (disorder: composition)", 39.0, low=0.0, high=1e4,
                  title="strain parameter ε", typical=(0.0, 300.0),
                  basis="published fits of alloys: about 10 to a few hundred (Abeles 1963: 39 "
                  "for Si-Ge, from memory)", start=39.0),
    )

    def unused(self, name: str) -> str | None:
        if name in ("mass_variance", "strain_variance") and self.disorder != "given":
            if name == "strain_variance" and self.disorder == "isotopes":
                return None
            return (f"scattering.point_defect.{name} is derived from the composition "
                    f"(disorder: {self.disorder}); use disorder: given to set it")
        if name == "strain_parameter" and self.disorder != "composition":
            return ("scattering.point_defect.strain_parameter is used only with disorder: "
                    "composition")
        return None

    def resolve(self, material, spec):
        """Γ_M (and Γ_S) from the composition when ``disorder`` is not ``given``."""
        if self.disorder == "given":
            return self, []
        from dataclasses import replace

        from kappa.core.disorder import parse_sites, site_disorder
        from kappa.core.material import Derived
        from kappa.errors import ConfigError, KappaError

        key = "scattering.point_defect.disorder"
        try:
            if spec.alloy is not None:
                sites = spec.alloy.sites("material.alloy")
                what = spec.alloy.formula()
            elif spec.composition is not None:
                sites = parse_sites(spec.composition, "material.composition")
                what = spec.composition
            else:
                raise ConfigError(key, self.disorder, "needs material.composition (or "
                                  "material.alloy) to derive Γ from")
            full = self.disorder == "composition"
            d = site_disorder(sites, strain_parameter=1.0 if full else 0.0, with_isotopes=True,
                              key="material.composition", formula=what)
        except KappaError as exc:
            raise ConfigError(exc.key, exc.value, exc.allowed) from None
        # Γ_S is linear in ε (so a batch of ε costs nothing extra)
        strain = d.strain_variance * self.strain_parameter if full else self.strain_variance
        mass = d.mass_variance if full else d.isotope_mass_variance
        derived = [Derived("scattering.point_defect.mass_variance", mass, "1",
                           "natural isotopes + alloy disorder of " + what if full else
                           "natural isotopes of " + what + " (site-weighted)")]
        if full:
            derived.append(Derived("scattering.point_defect.strain_variance", strain, "1",
                                   f"strain term of {what}: ε = scattering.point_defect."
                                   "strain_parameter, covalent radii"))
        return replace(self, mass_variance=mass, strain_variance=strain), derived

    @property
    def active(self) -> bool:
        if self.disorder != "given":
            return True
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
