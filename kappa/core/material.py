"""Material parameters of the Debye/Callaway model and quantities derived from them.

A material is one or more acoustic branches. The single averaged-branch Debye model is one
branch of ``count`` 3 (polarization ``"average"``); the per-branch model is one longitudinal
branch (count 1) and one transverse entry of count 2 (two degenerate transverse branches), each
with its own Debye temperature, sound velocity and Grüneisen parameter. Everything is SI.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from kappa.core.constants import hbar, k_B
from kappa.errors import ConfigError

__all__ = [
    "Branch",
    "Material",
    "POLARIZATIONS",
    "debye_temperature_from_velocity",
    "mean_sound_velocity",
]

POLARIZATIONS = ("longitudinal", "transverse", "average")


def debye_temperature_from_velocity(sound_velocity, atomic_volume):
    """Debye temperature θ = (ħ/k_B)(6π²n)^(1/3) v with n = 1/V₀ atoms per volume.

    Parameters
    ----------
    sound_velocity : float or ndarray
        Sound velocity v [m/s].
    atomic_volume : float or ndarray
        Volume per atom V₀ [m³].

    Returns
    -------
    float or ndarray
        θ [K]. Source: Anderson, J. Phys. Chem. Solids 24, 909 (1963).
    """
    return hbar / k_B * np.cbrt(6.0 * math.pi**2 / np.asarray(atomic_volume)) * sound_velocity


def mean_sound_velocity(longitudinal, transverse):
    """Debye mean velocity v_m = [(1/v_L³ + 2/v_T³)/3]^(−1/3) [m/s].

    Parameters
    ----------
    longitudinal, transverse : float or ndarray
        Longitudinal and transverse sound velocities [m/s].
    """
    vl = np.asarray(longitudinal, dtype=float)
    vt = np.asarray(transverse, dtype=float)
    return ((1.0 / vl**3 + 2.0 / vt**3) / 3.0) ** (-1.0 / 3.0)


def _check_positive(key: str, value: float, unit: str) -> None:
    if not (isinstance(value, (int, float, np.floating)) and math.isfinite(value) and value > 0):
        raise ConfigError(key, f"{value} {unit}".strip(), f"must be a finite number > 0 {unit}".strip())


@dataclass(frozen=True)
class Branch:
    """One acoustic branch (or the averaged Debye branch).

    Parameters
    ----------
    debye_temperature : float
        Debye temperature of the branch θ_j [K]; sets the cutoff x_D = θ_j/T.
    sound_velocity : float
        Sound velocity v_j [m/s].
    gruneisen : float
        Grüneisen parameter γ_j [1].
    count : float
        Number of branches this entry stands for (3 averaged, 1 longitudinal, 2 transverse).
    polarization : str
        ``"average"``, ``"longitudinal"`` or ``"transverse"``.
    """

    debye_temperature: float
    sound_velocity: float
    gruneisen: float
    count: float = 3.0
    polarization: str = "average"

    def __post_init__(self) -> None:
        self.validate("branch")

    def validate(self, prefix: str) -> None:
        _check_positive(f"{prefix}.debye_temperature", self.debye_temperature, "K")
        _check_positive(f"{prefix}.sound_velocity", self.sound_velocity, "m/s")
        _check_positive(f"{prefix}.gruneisen", self.gruneisen, "")
        _check_positive(f"{prefix}.count", self.count, "")
        if self.polarization not in POLARIZATIONS:
            raise ConfigError(f"{prefix}.polarization", self.polarization,
                              "allowed: " + ", ".join(POLARIZATIONS))


@dataclass(frozen=True)
class Material:
    """A solid described by its acoustic branches, mean atomic mass and volume per atom.

    Parameters
    ----------
    atomic_mass : float
        Mean mass per atom M̄ [kg].
    atomic_volume : float
        Volume per atom V₀ [m³].
    branches : tuple of Branch
        One averaged branch (count 3), or per-branch entries whose counts add up to 3.
    name : str
        Free text.
    """

    atomic_mass: float
    atomic_volume: float
    branches: tuple[Branch, ...]
    name: str = ""
    derived: dict = field(default_factory=dict, compare=False, repr=False)

    def __post_init__(self) -> None:
        _check_positive("material.atomic_mass", self.atomic_mass, "kg")
        _check_positive("material.atomic_volume", self.atomic_volume, "m**3")
        if not isinstance(self.branches, tuple) or not self.branches:
            raise ConfigError("material.branches", self.branches, "needs at least one branch")
        for i, b in enumerate(self.branches):
            b.validate(f"material.branches.{i}" if self.per_branch else "material")
        total = sum(b.count for b in self.branches)
        if abs(total - 3.0) > 1e-9:
            raise ConfigError("material.branches", f"counts adding up to {total:g}",
                              "the branch counts must add up to 3 (1 longitudinal + 2 transverse)")

    @classmethod
    def averaged(cls, atomic_mass: float, atomic_volume: float, debye_temperature: float,
                 sound_velocity: float, gruneisen: float, name: str = "") -> Material:
        """The single averaged-branch Debye model (one branch standing for three)."""
        return cls(atomic_mass, atomic_volume,
                   (Branch(debye_temperature, sound_velocity, gruneisen, 3.0, "average"),), name)

    @property
    def per_branch(self) -> bool:
        """True unless the material is one averaged branch."""
        return not (len(self.branches) == 1 and self.branches[0].polarization == "average")

    @property
    def number_density(self) -> float:
        """Atoms per volume n = 1/V₀ [1/m³]."""
        return 1.0 / self.atomic_volume

    @property
    def mean_velocity(self) -> float:
        """Debye mean of the branch velocities, Σ(n_j/3)/v_j³ = 1/v_m³ [m/s]."""
        s = sum(b.count / 3.0 / b.sound_velocity**3 for b in self.branches)
        return s ** (-1.0 / 3.0)
