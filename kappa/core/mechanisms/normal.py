"""Normal (momentum-conserving) three-phonon processes, Callaway's non-resistive term."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from kappa.core.constants import hbar, k_B
from kappa.core.mechanisms.base import Mechanism, RateContext
from kappa.core.parameters import Parameter
from kappa.errors import ConfigError

__all__ = ["Normal", "normal_branch_coefficient"]


def normal_branch_coefficient(gruneisen, atomic_mass, atomic_volume, sound_velocity, T,
                              polarization: str, scale=1.0):
    """Normal-process rate of one branch in the branch forms: ``(power of ω, coefficient)``.

    Longitudinal: k_B³γ²V₀ω²T³/(M̄ħ²v⁵) → (2, coefficient [s]); transverse:
    k_B⁴γ²V₀ωT⁴/(M̄ħ³v⁵) → (1, coefficient [1]); times ``scale``. In x = ħω/(k_B T) both read
    k_B⁵γ²V₀xⁿT⁵/(M̄ħ⁴v⁵). Source: Morelli, Heremans & Slack, Phys. Rev. B 66, 195304 (2002).
    """
    T = np.asarray(T, dtype=float)
    pre = scale * gruneisen**2 * atomic_volume / (atomic_mass * sound_velocity**5)
    if polarization == "longitudinal":
        return 2, pre * k_B**3 / hbar**2 * T**3
    if polarization == "transverse":
        return 1, pre * k_B**4 / hbar**3 * T**4
    raise ConfigError("scattering.normal.form", "branch",
                      "the branch forms need a per-branch material (material.branches); "
                      "use form: ratio for the averaged model")


@dataclass(frozen=True)
class Normal(Mechanism):
    """Normal (momentum-conserving) three-phonon processes, Callaway's non-resistive term.

    ``form: ratio`` — τ_N⁻¹ = β τ_U⁻¹ (β = ``ratio``; the Umklapp rate as configured, so the
    normal processes freeze out with Umklapp's e^(−θ/bT) at low temperature).
    ``form: branch`` — the branch forms used by Morelli, Heremans & Slack (2002):
    longitudinal k_B³γ²V₀ω²T³/(M̄ħ²v⁵), transverse k_B⁴γ²V₀ωT⁴/(M̄ħ³v⁵), times ``scale``;
    needs a per-branch material. In the reduced frequency x = ħω/(k_B T) both read
    k_B⁵γ²V₀ xⁿ T⁵/(M̄ħ⁴v⁵) (n = 2 longitudinal, 1 transverse), the way the source writes them;
    with ω, the powers of k_B and ħ above are the ones that make each a rate in 1/s.
    """

    ratio: float = 0.0
    form: str = "ratio"
    scale: float = 1.0

    key: ClassVar[str] = "normal"
    title: ClassVar[str] = "normal processes"
    resistive: ClassVar[bool] = False
    citation: ClassVar[str] = (
        "Normal processes: J. Callaway, Phys. Rev. 113, 1046 (1959); branch forms after "
        "D. T. Morelli, J. P. Heremans & G. A. Slack, Phys. Rev. B 66, 195304 (2002)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("ratio", "1", "β = τ_N⁻¹/τ_U⁻¹ (form: ratio)", 0.0, low=0.0, high=1e6,
                  title="normal-to-Umklapp ratio", typical=(0.0, 100.0),
                  basis="common practice, no source", start=1.0),
        Parameter("form", "", "ratio or branch", "ratio", choices=("ratio", "branch")),
        Parameter("scale", "1", "multiplier of the branch forms (form: branch)", 1.0, low=0.0,
                  high=1e6, title="normal-process scale", typical=(0.0, 100.0),
                  basis="common practice, no source: the branch forms hold within about a "
                  "factor of ten", start=1.0),
    )

    @property
    def active(self) -> bool:
        value = self.ratio if self.form == "ratio" else self.scale
        return bool(np.any(np.asarray(value) > 0))

    def unused(self, name: str) -> str | None:
        if self.form == "branch" and name == "ratio":
            return ("scattering.normal.ratio is used only with form: ratio (this config has "
                    "form: branch; its strength is scattering.normal.scale)")
        if self.form == "ratio" and name == "scale":
            return ("scattering.normal.scale is used only with form: branch (this config has "
                    "form: ratio; its strength is scattering.normal.ratio)")
        return None

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        if self.form == "ratio":
            umklapp = ctx.scattering.get("umklapp")
            if umklapp is None:
                return {}
            return {k: self.ratio * c for k, c in umklapp.coefficients(ctx).items()}
        b, m = ctx.branch, ctx.material
        power, coefficient = normal_branch_coefficient(
            b.gruneisen, m.atomic_mass, m.atomic_volume, b.sound_velocity, ctx.temperature,
            b.polarization, self.scale)
        return {power: coefficient * np.ones(ctx.shape)}
