"""The Callaway integrals of :mod:`kappa.core.kernels` in plain numpy, for small problems.

Loading the compiled kernels costs about a second on first use in a process (numba and the
libraries it pulls in); a prediction of one κ_L(T) curve needs only a few hundred samples, which
numpy integrates in milliseconds. These functions apply the same quadrature rules, the same
small-x blocks and the same divergence flag as the compiled kernels; ``tests/test_kernels.py``
checks that both agree to rounding. The evaluator chooses between them by problem size.
"""

from __future__ import annotations

import numpy as np

__all__ = ["integrals_shared_rules"]

_TAIL_TOL = 1e-10  # the compiled kernels' tolerance for the small-x blocks
_MAX_BLOCKS = 38


def _poly(c: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Σ c_k x^k with c of shape (S, 5) and x of shape (S, ...)."""
    c = c.reshape(c.shape + (1,) * (x.ndim - 1))
    return c[:, 0] + x * (c[:, 1] + x * (c[:, 2] + x * (c[:, 3] + x * c[:, 4])))


def _small_terms(r: np.ndarray, n: np.ndarray, x: np.ndarray):
    """τ_c w, τ_c w/τ_N, τ_c w/(τ_N τ_R) with w = x²(1 − x²/12), as in the compiled kernels."""
    c = r + n
    shape = (c.shape[0],) + (1,) * (x.ndim - 1)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        rr, rn = _poly(r, x), _poly(n, x)
        inv = 1.0 / x
        s = c[:, 2].reshape(shape) + x * (c[:, 3].reshape(shape) + x * c[:, 4].reshape(shape))
        c1, c0 = c[:, 1].reshape(shape), c[:, 0].reshape(shape)
        s = s + np.where(c1 > 0, c1 * inv, 0.0) + np.where(c0 > 0, c0 * inv * inv, 0.0)
        tc = (1.0 - x * x / 12.0) / s
        return tc, tc * rn, tc * rn * rr


def _small_x(r, n, xs, bt, bq, i1, i2, i3):
    """Add ∫₀^{x_s} for every sample (blocks of 8 decades until negligible)."""
    lo = xs.copy()
    active = np.ones(lo.size, dtype=bool)
    for _ in range(_MAX_BLOCKS):
        f1, f2, f3 = _small_terms(r, n, lo)
        with np.errstate(invalid="ignore", over="ignore"):
            done = ((lo * f1 <= _TAIL_TOL * i1) & (lo * f2 <= _TAIL_TOL * i2)
                    & (lo * f3 <= _TAIL_TOL * i3))
        active &= ~done
        if not active.any():
            break
        idx = np.flatnonzero(active)
        x = lo[idx, None] * bt[None, :]
        a, b, c = _small_terms(r[idx], n[idx], x)
        q = lo[idx, None] * bq[None, :]
        with np.errstate(invalid="ignore", over="ignore"):
            i1[idx] += (a * q).sum(axis=1)
            i2[idx] += (b * q).sum(axis=1)
            i3[idx] += (c * q).sum(axis=1)
        lo = lo * 1e-8
    return i1, i2, i3


def integrals_shared_rules(x, wq, count, x_s, grid, res, nrm, bt, bq) -> np.ndarray:
    """(I₁, I₂, I₃) per sample, shape (S, 3), with the shared rules of
    :func:`kappa.core.kernels.callaway_integrals` (same arguments, padding nodes have weight 0).
    """
    X = x[grid]
    W = wq[grid]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        rr, rn = _poly(res, X), _poly(nrm, X)
        tc = np.where(W == 0.0, 0.0, W / (rr + rn))
        i1 = tc.sum(axis=1)
        i2 = (tc * rn).sum(axis=1)
        i3 = (tc * rn * rr).sum(axis=1)
    diverges = ~((res[:, 0] > 0) | (res[:, 1] > 0) | (res[:, 2] > 0))
    ok = ~diverges
    out = np.empty((grid.size, 3))
    if ok.any():
        a, b, c = _small_x(res[ok], nrm[ok], x_s[grid][ok], bt, bq, i1[ok], i2[ok], i3[ok])
        out[ok, 0], out[ok, 1], out[ok, 2] = a, b, c
    out[diverges] = (np.inf, np.nan, np.nan)
    return out
