"""Debye heat capacity of the acoustic branches."""

from __future__ import annotations

import numpy as np

from kappa.core.constants import N_A, h, k_B
from kappa.core.dispersion import sine_debye_function
from kappa.core.material import Material
from kappa.core.quadrature import X_CUT, phonon_weight, rule

__all__ = ["debye_function", "heat_capacity", "DEBYE_CITATION"]

DEBYE_CITATION = "Debye heat capacity: P. Debye, Ann. Phys. 39, 789 (1912)"


def debye_function(x_D) -> np.ndarray:
    """Debye heat-capacity function C_V/(3 N k_B) = (3/x_D³) ∫₀^{x_D} x⁴eˣ/(eˣ−1)² dx.

    Parameters
    ----------
    x_D : array_like
        θ/T [1], > 0.

    Returns
    -------
    ndarray
        The heat capacity per atom in units of 3k_B (→ 1 at high T, (4π⁴/5)/x_D³ at low T).
    """
    x_D = np.atleast_1d(np.asarray(x_D, dtype=float))
    out = np.empty_like(x_D)
    for i, top in enumerate(x_D):
        x, q = rule(top)
        integral = float(q @ phonon_weight(x)) + (min(top, X_CUT) * 1e-10) ** 3 / 3.0
        if top > X_CUT:
            integral = 4.0 * np.pi**4 / 15.0  # the rest of ∫₀^∞ w is below 1e-12 relative
        out[i] = 3.0 * integral / top**3
    return out


def heat_capacity(material: Material, T) -> np.ndarray:
    """Debye heat capacity of the acoustic branches per mole of atoms [J/(mol K)].

    C = 3R Σ_j (n_j/3) D(θ_j/T), with D the :func:`debye_function`; → 3R (Dulong–Petit) at
    high T. Source: P. Debye, Ann. Phys. 39, 789 (1912). A sine branch (``dispersion: sine``)
    uses its own density of states instead of D, with the same N modes per branch
    (:func:`kappa.core.dispersion.sine_debye_function`).

    Parameters
    ----------
    material : Material
    T : array_like
        Temperatures [K].
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    c = np.zeros_like(T)
    for b in material.branches:
        if b.curved:
            c += b.count / 3.0 * sine_debye_function(
                b.debye_temperature / T, h * np.asarray(b.zone_boundary_frequency) / (k_B * T))
        else:
            c += b.count / 3.0 * debye_function(b.debye_temperature / T)
    return 3.0 * k_B * N_A * c
