"""Limits of the lattice thermal conductivity.

Pure functions, SI units.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Sequence

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.constants import hbar, k_B

__all__ = ["cahill_minimum"]

_X_MAX = 60.0  # the integrand x^3 e^x/(e^x-1)^2 is below 1e-20 beyond


@functools.lru_cache(maxsize=1)
def _legendre(n: int = 96) -> tuple[np.ndarray, np.ndarray]:
    from scipy.special import roots_legendre

    return roots_legendre(n)


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
