"""Limits and quick estimates of the lattice thermal conductivity.

Pure functions, SI units: the minimum conductivities of Cahill–Watson–Pohl, Clarke and the
diffuson model; Debye quantities from sound velocities (Poisson ratio, Grüneisen parameter
from it, Young's modulus); Slack's high-temperature estimate; the optical-mode part of a cell
with several atoms.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Sequence

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.constants import hbar, k_B

__all__ = [
    "cahill_minimum",
    "cahill_high_temperature",
    "clarke_minimum",
    "diffuson_minimum",
    "poisson_ratio",
    "gruneisen_from_poisson",
    "youngs_modulus",
    "julian_coefficient",
    "slack_conductivity",
    "optical_conductivity",
    "minimum_conductivity",
    "minimum_of_model",
    "acoustic_velocities",
    "material_velocities",
    "MINIMUM_MODEL",
    "MINIMUM_CITATION",
    "OPTICAL_CITATION",
]

_X_MAX = 60.0  # the integrand x^3 e^x/(e^x-1)^2 is below 1e-20 beyond


@functools.lru_cache(maxsize=1)
def _legendre(n: int = 96) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Legendre nodes and weights on [-1, 1] (numpy's; scipy is not loaded for it)."""
    return np.polynomial.legendre.leggauss(n)


def cahill_minimum(temperature: ArrayLike, number_density: float,
                   velocities: Sequence[float]) -> np.ndarray:
    """Minimum thermal conductivity of Cahill, Watson & Pohl (Phys. Rev. B 46, 6131 (1992)).

    kappa_min = (pi/6)^(1/3) k_B n^(2/3) sum_i v_i (T/Theta_i)^2
                int_0^(Theta_i/T) x^3 e^x / (e^x - 1)^2 dx,
    with Theta_i = v_i (hbar/k_B) (6 pi^2 n)^(1/3); the high-temperature limit is
    (pi/6)^(1/3) k_B n^(2/3) sum_i v_i / 2.

    Parameters
    ----------
    temperature : array_like
        T [K], > 0.
    number_density : float
        Number of atoms per volume n [1/m^3].
    velocities : sequence of float
        Sound velocities of the three acoustic branches [m/s], usually (v_L, v_T, v_T). One
        value is used for all three branches; two values are read as (v_L, v_T) with v_T
        counted twice.

    Returns
    -------
    numpy.ndarray
        kappa_min [W/(m K)], same shape as ``temperature``.
    """
    T = np.asarray(temperature, dtype=float)
    v = [float(x) for x in velocities]
    if len(v) == 1:
        v = v * 3
    elif len(v) == 2:
        v = [v[0], v[1], v[1]]
    if len(v) != 3 or any(not (x > 0 and math.isfinite(x)) for x in v):
        raise ValueError("cahill_minimum: give 1 to 3 sound velocities > 0 m/s")
    n = float(number_density)
    if not (n > 0 and math.isfinite(n)):
        raise ValueError("cahill_minimum: number_density must be > 0 1/m^3")
    if np.any(~(T > 0)):
        raise ValueError("cahill_minimum: temperatures must be > 0 K")
    x, w = _legendre()
    kd = (6.0 * math.pi**2 * n) ** (1.0 / 3.0)
    total = np.zeros(T.shape)
    for vi in v:
        theta = vi * hbar / k_B * kd
        a = np.minimum(theta / T, _X_MAX)[..., None]
        xs = 0.5 * a * (1.0 + x)  # Gauss-Legendre on [0, a]
        em1 = np.expm1(xs)
        integrand = xs**3 * np.exp(xs) / em1**2
        integral = 0.5 * a[..., 0] * (integrand @ w)
        total += vi * (T / theta) ** 2 * integral
    return (math.pi / 6.0) ** (1.0 / 3.0) * k_B * n ** (2.0 / 3.0) * total


# --- elastic data → Debye quantities, minimum conductivities, Slack's estimate ----------------

MINIMUM_MODEL = "Cahill–Watson–Pohl"  #: the minimum κ_L kappa shows (check, predict, sweeps)
MINIMUM_CITATION = ("Minimum κ_L: D. G. Cahill, S. K. Watson & R. O. Pohl, Phys. Rev. B 46, "
                    "6131 (1992)")
OPTICAL_CITATION = ("Optical modes (n atoms per cell): E. S. Toberer, A. Zevalkink & G. J. "
                    "Snyder, J. Mater. Chem. 21, 15843 (2011)")
RATIO_LIMIT = math.sqrt(3.0) / 2.0  #: v_T/v_L at which the Poisson ratio reaches −1


def _positive(name: str, value) -> np.ndarray:
    v = np.asarray(value, dtype=float)
    if np.any(~(v > 0) | ~np.isfinite(v)):
        from kappa.errors import DataError

        bad = v.ravel()[int(np.argmax((~(v > 0) | ~np.isfinite(v)).ravel()))]
        raise DataError(name, float(bad), "must be a finite number > 0")
    return v


def poisson_ratio(longitudinal, transverse):
    """Poisson ratio of an isotropic solid from its sound velocities.

    ν = (1 − 2r²)/(2 − 2r²) with r = v_T/v_L. ν falls from 0.5 (r → 0) through 0
    (r = 1/√2) to −1 at r = √3/2; for r ≥ √3/2 (v_T ≥ 0.866 v_L) there is no stable isotropic
    solid (ν ≤ −1, or ν > 0.5 once r > 1), and a DataError names ``transverse``.

    Parameters
    ----------
    longitudinal, transverse : float or ndarray
        v_L, v_T [m/s], > 0.
    """
    vl = _positive("longitudinal", longitudinal)
    vt = _positive("transverse", transverse)
    r2 = (vt / vl) ** 2
    if np.any(vt >= RATIO_LIMIT * vl):
        from kappa.errors import DataError

        raise DataError("transverse", float(np.max(vt)), f"must be below (√3/2)·v_L = "
                        f"{float(np.min(RATIO_LIMIT * vl)):.6g} m/s (at v_T/v_L = √3/2 the "
                        "Poisson ratio reaches −1; no isotropic solid is stable beyond)")
    nu = (1.0 - 2.0 * r2) / (2.0 - 2.0 * r2)
    return float(nu) if nu.ndim == 0 else nu


def gruneisen_from_poisson(poisson):
    """Grüneisen parameter from the Poisson ratio, γ = 3(1 + ν)/(2(2 − 3ν)).

    Source: D. S. Belomestnykh & V. P. Tesleva, Tech. Phys. 49, 1098 (2004). ν in (−1, 0.5).
    """
    nu = np.asarray(poisson, dtype=float)
    g = 3.0 * (1.0 + nu) / (2.0 * (2.0 - 3.0 * nu))
    return float(g) if g.ndim == 0 else g


def youngs_modulus(density, longitudinal, transverse):
    """Young's modulus of an isotropic solid, E = ρ v_T² (3v_L² − 4v_T²)/(v_L² − v_T²) [Pa]."""
    vl2 = np.asarray(longitudinal, dtype=float) ** 2
    vt2 = np.asarray(transverse, dtype=float) ** 2
    return density * vt2 * (3.0 * vl2 - 4.0 * vt2) / (vl2 - vt2)


def cahill_high_temperature(number_density: float, velocities: Sequence[float]) -> float:
    """High-temperature limit of the Cahill–Watson–Pohl minimum [W/(m K)].

    κ_min = (π/6)^(1/3) k_B n^(2/3) Σ_i v_i / 2 over the three acoustic branches (one value:
    all three; two: v_L, v_T twice). Source: Cahill, Watson & Pohl, Phys. Rev. B 46, 6131
    (1992).
    """
    v = [float(x) for x in velocities]
    v = v * 3 if len(v) == 1 else ([v[0], v[1], v[1]] if len(v) == 2 else v)
    return (math.pi / 6.0) ** (1.0 / 3.0) * k_B * float(number_density) ** (2.0 / 3.0) * \
        sum(v) / 2.0


def clarke_minimum(atomic_volume, youngs, density):
    """Clarke's minimum κ = 0.87 k_B Ω_a^(−2/3) (E/ρ)^(1/2) [W/(m K)].

    Ω_a the volume per atom [m³], E Young's modulus [Pa], ρ the density [kg/m³]. Source:
    D. R. Clarke, Surf. Coat. Technol. 163-164, 67 (2003).
    """
    return 0.87 * k_B * np.asarray(atomic_volume, dtype=float) ** (-2.0 / 3.0) * np.sqrt(
        np.asarray(youngs, dtype=float) / density)


def diffuson_minimum(number_density, longitudinal, transverse):
    """Diffuson-mediated minimum, high-temperature limit: 0.76 n^(2/3) k_B (v_L + 2v_T)/3.

    Source: M. T. Agne, R. Hanus & G. J. Snyder, Energy Environ. Sci. 11, 609 (2018)
    ("Minimum thermal conductivity in the context of diffuson-mediated thermal transport").
    About 37 % below the Cahill–Watson–Pohl high-temperature limit.
    """
    return 0.76 * np.asarray(number_density, dtype=float) ** (2.0 / 3.0) * k_B * (
        np.asarray(longitudinal, dtype=float) + 2.0 * np.asarray(transverse, dtype=float)) / 3.0


def julian_coefficient(gruneisen):
    """Julian's A(γ) = 2.43e-6 / (1 − 0.514/γ + 0.228/γ²) for Slack's formula.

    Units: κ in W/(m K) with M̄ in u, δ in Å, θ in K (the same constant is printed as 2.43e-8
    for κ in W/(cm K)). Source: C. L. Julian, Phys. Rev. 137, A128 (1965); as used by
    Morelli & Slack, in "High Thermal Conductivity Materials" (Springer, 2006).
    """
    g = np.asarray(gruneisen, dtype=float)
    return 2.43e-6 / (1.0 - 0.514 / g + 0.228 / g**2)


def slack_conductivity(temperature, atomic_mass_u, atomic_volume, acoustic_debye_temperature,
                       gruneisen, atoms_per_cell=1.0):
    """Slack's high-temperature estimate κ = A(γ) M̄ θ_a³ δ n^(1/3) / (γ² T) [W/(m K)].

    Parameters
    ----------
    temperature : float or ndarray
        T [K].
    atomic_mass_u : float
        Mean atomic mass M̄ [u] (the unit the constant belongs to).
    atomic_volume : float
        Volume per atom V₀ [m³]; δ = V₀^(1/3) is used in Å.
    acoustic_debye_temperature : float
        θ_a = θ_D n^(−1/3) [K].
    gruneisen : float
        γ.
    atoms_per_cell : float
        n.

    Source: G. A. Slack, Solid State Phys. 34, 1 (1979); Morelli & Slack (2006), with Julian's
    A(γ) (:func:`julian_coefficient`).
    """
    delta = np.cbrt(np.asarray(atomic_volume, dtype=float)) * 1e10
    return (julian_coefficient(gruneisen) * atomic_mass_u * np.asarray(
        acoustic_debye_temperature, dtype=float) ** 3 * delta * np.asarray(
        atoms_per_cell, dtype=float) ** (1.0 / 3.0) / (gruneisen**2 * np.asarray(temperature,
                                                                                 dtype=float)))


def optical_conductivity(number_density, mean_velocity, atoms_per_cell):
    """Heat carried by the optical modes, κ_opt = (3/2)(π/6)^(1/3) k_B n^(2/3) v̄ (1 − N^(−2/3)).

    The Cahill–Watson–Pohl high-temperature limit restricted to the 3(N − 1) optical modes of a
    cell of N atoms. Source: E. S. Toberer, A. Zevalkink & G. J. Snyder, J. Mater. Chem. 21,
    15843 (2011). Temperature independent (a high-temperature form).

    Parameters
    ----------
    number_density : float or ndarray
        Atoms per volume n [1/m³].
    mean_velocity : float or ndarray
        v̄, the arithmetic mean of the three acoustic velocities (v_L + 2v_T)/3 [m/s].
    atoms_per_cell : float or ndarray
        N ≥ 1 (0 for N = 1).
    """
    return 1.5 * (math.pi / 6.0) ** (1.0 / 3.0) * k_B * np.asarray(
        number_density, dtype=float) ** (2.0 / 3.0) * mean_velocity * (
        1.0 - np.asarray(atoms_per_cell, dtype=float) ** (-2.0 / 3.0))


def material_velocities(material) -> list[float]:
    """The three acoustic velocities (v_L, v_T, v_T or v, v, v) of a single material [m/s]."""
    out: list[float] = []
    for b in material.branches:
        out += [float(b.sound_velocity)] * (max(1, round(float(b.count))) if material.per_branch
                                            else 3)
    return out


def acoustic_velocities(model) -> list:
    """The three acoustic velocities of a model [m/s] (floats, or arrays for a batch).

    ``(v_L, v_T, v_T)`` where the model gives them (``longitudinal_velocity`` and
    ``transverse_velocity``, or per-branch velocities), else the averaged velocity three times.
    """
    s, m = model.spec, model.material
    if not m.per_branch and s.longitudinal_velocity is not None:
        return [s.longitudinal_velocity, s.transverse_velocity, s.transverse_velocity]
    out: list = []
    for b in m.branches:
        out += [b.sound_velocity] * (max(1, round(float(np.max(b.count)))) if m.per_branch
                                     else 3)
    return out


def minimum_of_model(temperature, model) -> np.ndarray:
    """:func:`minimum_conductivity` of a single model, with its v_L and v_T where given."""
    return cahill_minimum(temperature, float(model.material.number_density),
                          [float(v) for v in acoustic_velocities(model)])


def minimum_conductivity(temperature, material) -> np.ndarray:
    """The minimum κ_L kappa shows beside its results: Cahill–Watson–Pohl (:data:`MINIMUM_MODEL`).

    Uses the volume per atom and the acoustic velocities of a single (non-batch) material;
    see :func:`cahill_minimum`.
    """
    return cahill_minimum(temperature, float(material.number_density),
                          material_velocities(material))
