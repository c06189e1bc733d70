"""A material from its sound velocities: Debye quantities, minimum conductivities, Slack.

Pure function over SI values; see :func:`from_sound_velocities`.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from kappa.core.constants import u
from kappa.core.limits import (
    cahill_high_temperature,
    cahill_minimum,
    clarke_minimum,
    diffuson_minimum,
    gruneisen_from_poisson,
    poisson_ratio,
    slack_conductivity,
    youngs_modulus,
)
from kappa.core.material import (
    acoustic_debye_temperature,
    debye_temperature_from_velocity,
    mean_sound_velocity,
)
from kappa.errors import DataError

__all__ = ["ElasticEstimate", "from_sound_velocities", "ELASTIC_CITATIONS"]

ELASTIC_CITATIONS = (
    "Debye temperature from the mean sound velocity: O. L. Anderson, J. Phys. Chem. Solids 24, "
    "909 (1963)",
    "Grüneisen parameter from the Poisson ratio: D. S. Belomestnykh & V. P. Tesleva, Tech. "
    "Phys. 49, 1098 (2004)",
    "Minimum κ: D. G. Cahill, S. K. Watson & R. O. Pohl, Phys. Rev. B 46, 6131 (1992); D. R. "
    "Clarke, Surf. Coat. Technol. 163-164, 67 (2003); M. T. Agne, R. Hanus & G. J. Snyder, "
    "Energy Environ. Sci. 11, 609 (2018)",
    "Slack's estimate: G. A. Slack, Solid State Phys. 34, 1 (1979), with Julian's A(γ), C. L. "
    "Julian, Phys. Rev. 137, A128 (1965)",
)


@dataclass(frozen=True)
class ElasticEstimate:
    """Quantities derived from v_L, v_T, ρ and M̄ (all SI; masses in kg)."""

    longitudinal_velocity: float
    transverse_velocity: float
    density: float
    atomic_mass: float
    atoms_per_cell: float
    atomic_volume: float
    number_density: float
    sound_velocity: float
    debye_temperature: float
    acoustic_debye_temperature: float
    longitudinal_debye_temperature: float
    transverse_debye_temperature: float
    poisson_ratio: float
    gruneisen: float
    youngs_modulus: float
    shear_modulus: float
    bulk_modulus: float
    kappa_min_cahill: float
    kappa_min_cahill_300K: float
    kappa_min_clarke: float
    kappa_min_diffuson: float
    kappa_slack_300K: float

    def as_dict(self) -> dict[str, float]:
        """Field → value (SI)."""
        return asdict(self)


def from_sound_velocities(longitudinal: float, transverse: float, density: float,
                          atomic_mass: float, atoms_per_cell: float = 1.0) -> ElasticEstimate:
    """Everything kappa derives from measured sound velocities, density and mean mass.

    * mean velocity v_m = [(1/v_L³ + 2/v_T³)/3]^(−1/3); θ_D = (ħ/k_B)(6π²/V₀)^(1/3) v_m
      (Anderson 1963) with V₀ = M̄/ρ; acoustic θ_a = θ_D n^(−1/3); branch θ_L, θ_T from v_L,
      v_T (times n^(−1/3));
    * Poisson ratio ν = (1 − 2r²)/(2 − 2r²), r = v_T/v_L; γ = 3(1 + ν)/(2(2 − 3ν))
      (Belomestnykh & Tesleva 2004);
    * moduli: E = ρv_T²(3v_L² − 4v_T²)/(v_L² − v_T²), G = ρv_T², K = ρ(v_L² − 4v_T²/3);
    * minimum κ: Cahill–Watson–Pohl (high-temperature limit and at 300 K), Clarke
      0.87 k_B V₀^(−2/3)(E/ρ)^(1/2), diffuson 0.76 n^(2/3) k_B (v_L + 2v_T)/3 (Agne, Hanus &
      Snyder 2018, high-temperature limit);
    * Slack's estimate at 300 K, A(γ) M̄ θ_a³ δ n^(1/3)/(γ² T), M̄ in u, δ = V₀^(1/3) in Å,
      θ_a in K, with γ from the Poisson ratio.

    Parameters
    ----------
    longitudinal, transverse : float
        v_L, v_T [m/s], > 0, v_T < (√3/2)·v_L.
    density : float
        ρ [kg/m³].
    atomic_mass : float
        Mean mass per atom M̄ [kg].
    atoms_per_cell : float
        Atoms per primitive cell n ≥ 1.

    Raises
    ------
    DataError
        Naming ``longitudinal``, ``transverse``, ``density``, ``atomic_mass`` or
        ``atoms_per_cell``.
    """
    for name, value in (("longitudinal", longitudinal), ("transverse", transverse),
                        ("density", density), ("atomic_mass", atomic_mass)):
        if not (isinstance(value, (int, float)) and value > 0 and math.isfinite(value)):
            raise DataError(name, value, "must be a finite number > 0")
    if not (atoms_per_cell >= 1 and math.isfinite(atoms_per_cell)):
        raise DataError("atoms_per_cell", atoms_per_cell, "must be a number >= 1")
    nu = poisson_ratio(longitudinal, transverse)
    gamma = gruneisen_from_poisson(nu)
    volume = atomic_mass / density
    n = 1.0 / volume
    vm = float(mean_sound_velocity(longitudinal, transverse))
    theta = float(debye_temperature_from_velocity(vm, volume))
    theta_a = float(acoustic_debye_temperature(theta, atoms_per_cell))
    scale = atoms_per_cell ** (-1.0 / 3.0)
    theta_l = float(debye_temperature_from_velocity(longitudinal, volume)) * scale
    theta_t = float(debye_temperature_from_velocity(transverse, volume)) * scale
    E = float(youngs_modulus(density, longitudinal, transverse))
    v = [longitudinal, transverse]
    return ElasticEstimate(
        longitudinal_velocity=float(longitudinal),
        transverse_velocity=float(transverse),
        density=float(density),
        atomic_mass=float(atomic_mass),
        atoms_per_cell=float(atoms_per_cell),
        atomic_volume=volume,
        number_density=n,
        sound_velocity=vm,
        debye_temperature=theta,
        acoustic_debye_temperature=theta_a,
        longitudinal_debye_temperature=theta_l,
        transverse_debye_temperature=theta_t,
        poisson_ratio=nu,
        gruneisen=gamma,
        youngs_modulus=E,
        shear_modulus=density * transverse**2,
        bulk_modulus=density * (longitudinal**2 - 4.0 * transverse**2 / 3.0),
        kappa_min_cahill=cahill_high_temperature(n, v),
        kappa_min_cahill_300K=float(cahill_minimum(300.0, n, v)),
        kappa_min_clarke=float(clarke_minimum(volume, E, density)),
        kappa_min_diffuson=float(diffuson_minimum(n, longitudinal, transverse)),
        kappa_slack_300K=float(slack_conductivity(300.0, atomic_mass / u, volume, theta_a,
                                                  gamma, atoms_per_cell)),
    )
