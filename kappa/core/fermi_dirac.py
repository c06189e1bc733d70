"""Complete Fermi-Dirac integrals F_j(eta) by fixed-order quadrature (pure numpy/scipy).

Used by the single-parabolic-band Seebeck coefficient and Lorenz number of
:mod:`kappa.core.electronic` (which re-exports :func:`fermi_dirac_integral`).
"""

from __future__ import annotations

import functools

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["fermi_dirac_integral"]

# --- Fermi-Dirac integrals -------------------------------------------------------------------
#
# F_j(eta) = int_0^inf eps^j / (1 + exp(eps - eta)) d eps  for j > -1, by fixed-order quadrature:
#   eta <= _ETA_SWITCH: Gauss-Jacobi on [0, 1] (absorbs the eps^j end point), then 16-point
#     Gauss-Legendre panels of width 4 up to eps = _EPS_MAX (the integrand beyond is below
#     1e-40 of the integral). The Fermi factor's poles lie pi off the real axis, so panels of
#     width 4 converge to about 1e-16.
#   eta > _ETA_SWITCH: the exact rearrangement
#     F_j = eta^(j+1)/(j+1) + int_0^inf [(eta+u)^j - (eta-u)^j] / (1 + e^u) du,
#     with the u-integral over [0, _U_MAX] (its tail is below e^-50 of the integral); the
#     integrand is smooth there because eta - u > 10.

_PANEL_NODES = 16
_PANEL_WIDTH = 4.0
_EPS_MAX = 113.0
_ETA_SWITCH = 60.0
_U_MAX = 50.0


@functools.lru_cache(maxsize=64)
def _direct_nodes(j: float) -> tuple[np.ndarray, np.ndarray]:
    """Nodes eps_k and weights w_k with sum w_k g(eps_k) = int_0^_EPS_MAX eps^j g(eps) d eps."""
    from scipy.special import roots_jacobi, roots_legendre

    xj, wj = roots_jacobi(_PANEL_NODES + 8, 0.0, j)
    eps0 = 0.5 * (1.0 + xj)
    w0 = wj * 0.5 ** (j + 1.0)  # the eps^j weight is carried by the Jacobi rule
    xl, wl = roots_legendre(_PANEL_NODES)
    starts = np.arange(1.0, _EPS_MAX, _PANEL_WIDTH)
    half = 0.5 * _PANEL_WIDTH
    eps1 = (starts[:, None] + half * (1.0 + xl[None, :])).ravel()
    w1 = np.tile(half * wl, len(starts)) * eps1**j
    return np.concatenate([eps0, eps1]), np.concatenate([w0, w1])


@functools.lru_cache(maxsize=1)
def _u_nodes() -> tuple[np.ndarray, np.ndarray]:
    from scipy.special import roots_legendre

    xl, wl = roots_legendre(_PANEL_NODES)
    starts = np.arange(0.0, _U_MAX, _PANEL_WIDTH)
    half = 0.5 * _PANEL_WIDTH
    u = (starts[:, None] + half * (1.0 + xl[None, :])).ravel()
    return u, np.tile(half * wl, len(starts))


def _fermi(x: np.ndarray) -> np.ndarray:
    """1/(1 + e^x) without overflow or cancellation."""
    t = np.exp(-np.abs(x))
    return np.where(x > 0.0, t, 1.0) / (1.0 + t)


def fermi_dirac_integral(j: float, eta: ArrayLike) -> np.ndarray:
    """Complete Fermi-Dirac integral without the Gamma-function normalisation.

    F_j(eta) = int_0^inf eps^j / (1 + exp(eps - eta)) d eps  (equal to -Gamma(j+1) Li_{j+1}(-e^eta)).

    Parameters
    ----------
    j : float
        Order, j > -1.
    eta : array_like
        Reduced Fermi level E_F/(k_B T) [1], finite.

    Returns
    -------
    numpy.ndarray
        F_j(eta) [1], same shape as ``eta``; relative accuracy about 1e-13 for -700 < eta < 1e5.
    """
    j = float(j)
    if not j > -1.0:
        raise ValueError(f"fermi_dirac_integral: order j = {j} must be > -1")
    eta = np.asarray(eta, dtype=float)
    flat = eta.ravel()
    out = np.empty_like(flat)
    low = flat <= _ETA_SWITCH
    if np.any(low):
        eps, w = _direct_nodes(j)
        el = flat[low]
        pos = el >= 0.0
        vals = np.empty_like(el)
        if np.any(pos):
            vals[pos] = _fermi(eps[None, :] - el[pos, None]) @ w
        if np.any(~pos):
            # eta < 0: factor e^eta out so that nothing underflows before the sum.
            en = el[~pos, None]
            vals[~pos] = (np.exp(-eps[None, :]) / (1.0 + np.exp(en - eps[None, :])) @ w) \
                * np.exp(el[~pos])
        out[low] = vals
    high = ~low
    if np.any(high):
        u, w = _u_nodes()
        eh = flat[high][:, None]
        g = ((eh + u) ** j - (eh - u) ** j) * _fermi(u)[None, :]
        out[high] = flat[high] ** (j + 1.0) / (j + 1.0) + g @ w
    return out.reshape(eta.shape)
