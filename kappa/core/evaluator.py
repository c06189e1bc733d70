"""Lattice thermal conductivity of the Callaway/Debye model (public core functions).

    κ_L = Σ_j (n_j/3) · k_B/(2π² v_j) · (k_B T/ħ)³ · (I₁ + I₂²/I₃)_j

with the integrals of :mod:`kappa.kernels` over x ∈ [0, θ_j/T] (DESIGN §2). Without normal
processes I₂ = I₃ = 0 and κ_L is the plain relaxation-time integral.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.core import quadrature as _q
from kappa.core.constants import hbar, k_B
from kappa.core.kernels import callaway_integrals, callaway_integrals_free
from kappa.core.material import Material
from kappa.core.quadrature import X_CUT, block_rule, rules
from kappa.core.scattering import NPOW, Scattering
from kappa.errors import ConfigError

__all__ = [
    "RateTables",
    "rate_tables",
    "lattice_conductivity",
    "branch_conductivities",
    "conductivity_from_rates",
    "check_convergence",
    "branch_prefactors",
    "integrals",
]


@dataclass(frozen=True)
class RateTables:
    """Rate coefficients of every branch at every temperature (ω powers, SI).

    ``resistive[j, t, k]`` and ``normal[j, t, k]`` are the coefficients of ω^k [s^(k−1)].
    """

    temperature: np.ndarray
    resistive: np.ndarray
    normal: np.ndarray


def rate_tables(material: Material, scattering: Scattering, T: np.ndarray,
                exclude: tuple[str, ...] = ()) -> RateTables:
    """Sum the mechanisms' coefficients per branch; ``exclude`` drops resistive mechanisms.

    Normal processes are always taken from the full ``scattering`` (switching off a resistive
    mechanism does not switch off the normal processes tied to it).
    """
    T = np.asarray(T, dtype=float)
    nb = len(material.branches)
    res = np.zeros((nb, T.size, NPOW))
    nrm = np.zeros((nb, T.size, NPOW))
    normal = scattering.normal
    for j, branch in enumerate(material.branches):
        for m in scattering.resistive:
            if m.key in exclude:
                continue
            res[j] += m.coefficients(material, branch, T, scattering).T
        if normal is not None:
            nrm[j] = normal.coefficients(material, branch, T, scattering).T
    return RateTables(T, res, nrm)


def check_convergence(res: np.ndarray, what: str = "") -> None:
    """Raise if a rate has no term of order ω² or lower (κ_L would diverge at ω → 0)."""
    low = res[..., :3].max(axis=-1) if res.size else np.zeros(0)
    if np.any(~(low > 0)):
        raise ConfigError(
            "scattering", what or "this combination",
            "κ_L diverges: the resistive rate has no ω⁰–ω² term at some temperature "
            "(add boundary scattering or keep Umklapp on)")


def conductivity_from_rates(x_top: np.ndarray, prefactor: np.ndarray, res_omega: np.ndarray,
                            nrm_omega: np.ndarray, T: np.ndarray) -> np.ndarray:
    """κ for flat arrays of samples (the workhorse behind predictions and sweeps).

    Parameters
    ----------
    x_top : ndarray, shape (S,)
        Upper limits θ_j/T [1].
    prefactor : ndarray, shape (S,)
        (n_j/3) k_B/(2π² v_j) (k_B T/ħ)³ [W/(m K s)].
    res_omega, nrm_omega : ndarray, shape (S, 5)
        Resistive and normal rate coefficients of ω^k [s^(k−1)].
    T : ndarray, shape (S,)
        Temperature of each sample [K].

    Returns
    -------
    ndarray, shape (S,)
        Contribution of each sample to κ_L [W/(m K)].
    """
    wt = k_B * np.asarray(T, dtype=float) / hbar
    scale = np.empty((wt.size, NPOW))
    scale[:, 0] = 1.0
    for k in range(1, NPOW):
        scale[:, k] = scale[:, k - 1] * wt
    res_x = np.ascontiguousarray(res_omega * scale)
    nrm_x = np.ascontiguousarray(nrm_omega * scale)
    out = integrals(x_top, res_x, nrm_x)
    i1, i2, i3 = out[:, 0], out[:, 1], out[:, 2]
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = np.where(i3 > 0, i2 * i2 / np.where(i3 > 0, i3, 1.0), 0.0)
    return prefactor * (i1 + corr)


_BLOCK = block_rule()
_FREE = (*_q.relative_log_rule(), *_q.linear_nodes())


def integrals(x_top: np.ndarray, res_x: np.ndarray, nrm_x: np.ndarray) -> np.ndarray:
    """(I₁, I₂, I₃) from 0 to each upper limit, for flat samples; shape (S, 3) [s].

    ``res_x``, ``nrm_x`` (S, 5) are rate coefficients in powers of x [1/s]. Samples sharing an
    upper limit share one quadrature rule; when nearly every sample has its own, the rules are
    built inside the kernel instead.
    """
    tops = np.minimum(np.asarray(x_top, dtype=float).ravel(), X_CUT)
    res_x = np.ascontiguousarray(np.broadcast_to(res_x, (tops.size, NPOW)))
    nrm_x = np.ascontiguousarray(np.broadcast_to(nrm_x, (tops.size, NPOW)))
    bt, bq = _BLOCK
    out = np.empty((tops.size, 3))
    uniq, grid = np.unique(tops, return_inverse=True)
    if uniq.size > 64 and uniq.size > tops.size // 4:
        log_t, log_q, lin_t, lin_q = _FREE
        log_w = _q.phonon_weight(_q.X_SWITCH * log_t)
        callaway_integrals_free(tops, res_x, nrm_x, log_t, log_q, log_w, lin_t, lin_q,
                                _q.X_SWITCH, _q.EPS_LOW, _q.LIN_WIDTH, bt, bq, out)
    else:
        xx, wq, count, x_s = rules(uniq)
        callaway_integrals(xx, wq, count, x_s, grid.astype(np.int64).ravel(), res_x, nrm_x,
                           bt, bq, out)
    return out


def branch_prefactors(material: Material, T: np.ndarray) -> np.ndarray:
    """(n_j/3) k_B/(2π² v_j) (k_B T/ħ)³ for every branch and temperature, shape (nB, nT).

    Multiplied by the dimensionless-in-x integral (I₁ + I₂²/I₃) [s] it gives κ_j [W/(m K)].
    """
    T = np.asarray(T, dtype=float)
    pre = np.empty((len(material.branches), T.size))
    cube = (k_B * T / hbar) ** 3
    for j, b in enumerate(material.branches):
        pre[j] = b.count / 3.0 * k_B / (2.0 * math.pi**2 * b.sound_velocity) * cube
    return pre


def branch_conductivities(material: Material, scattering: Scattering, T,
                          exclude: tuple[str, ...] = ()) -> np.ndarray:
    """κ contribution of each branch, (n_j/3)κ_j, shape ``(n_branches, n_T)`` [W/(m K)].

    Parameters
    ----------
    material : Material
    scattering : Scattering
    T : array_like
        Temperatures [K], all > 0.
    exclude : tuple of str
        Keys of resistive mechanisms to switch off.
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    if T.size == 0 or np.any(~(T > 0)) or not np.all(np.isfinite(T)):
        raise ConfigError("temperature", T.tolist() if T.size < 8 else "array",
                          "temperatures must be finite and > 0 K")
    tables = rate_tables(material, scattering, T, exclude)
    check_convergence(tables.resistive, "with " + (", ".join(exclude) + " off" if exclude
                                                   else "the configured mechanisms"))
    nb = len(material.branches)
    x_top = np.array([[b.debye_temperature / t for t in T] for b in material.branches])
    pre = branch_prefactors(material, T)
    TT = np.broadcast_to(T, (nb, T.size))
    k = conductivity_from_rates(x_top.ravel(), pre.ravel(),
                                tables.resistive.reshape(-1, NPOW),
                                tables.normal.reshape(-1, NPOW), TT.ravel())
    return k.reshape(nb, T.size)


def lattice_conductivity(material: Material, scattering: Scattering, T,
                         exclude: tuple[str, ...] = ()) -> np.ndarray:
    """Lattice thermal conductivity κ_L(T) [W/(m K)] of the Callaway/Debye model.

    Parameters
    ----------
    material : Material
        Branches, mean atomic mass [kg], volume per atom [m³].
    scattering : Scattering
        Resistive mechanisms and (optionally) normal processes.
    T : array_like
        Temperatures [K].
    exclude : tuple of str
        Keys of resistive mechanisms to switch off (e.g. ``("boundary",)``).

    Examples
    --------
    >>> from kappa.core.material import Material
    >>> from kappa.core.scattering import Scattering, Boundary
    >>> m = Material.averaged(28.0855 * 1.66054e-27, 2.002e-29, 645.0, 6084.0, 0.56)
    >>> k = lattice_conductivity(m, Scattering((Boundary(1e-3),)), [2.0])
    >>> round(float(k[0]), 3)  # boundary-only: (2π²/15) k_B⁴T³L/(ħ³v²)
    0.152
    """
    return branch_conductivities(material, scattering, T, exclude).sum(axis=0)
