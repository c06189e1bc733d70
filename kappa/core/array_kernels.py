"""The Callaway integrals of :mod:`kappa.core.kernels` in plain numpy, for small problems.

Loading the compiled kernels costs about a second on first use in a process (numba and the
libraries it pulls in); a prediction of one κ_L(T) curve needs only a few hundred samples, which
numpy integrates in milliseconds. These functions apply the same quadrature rules, the same
small-x blocks and the same divergence flag as the compiled kernels; ``tests/test_kernels.py``
checks that both agree to rounding. The evaluator chooses between them by problem size.
"""

from __future__ import annotations

import numpy as np

__all__ = ["integrals_shared_rules", "integrals_nodes_rules", "integrals_curved_rules"]

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


def _finish(i1, i2, i3, r_low, n_low, x_s, bt, bq) -> np.ndarray:
    """Add ∫₀^{x_s} with the x → 0 polynomial rates; I₁ = inf where they have no x⁰–x² term."""
    diverges = ~((r_low[:, 0] > 0) | (r_low[:, 1] > 0) | (r_low[:, 2] > 0))
    ok = ~diverges
    out = np.empty((i1.size, 3))
    if ok.any():
        a, b, c = _small_x(r_low[ok], n_low[ok], x_s[ok], bt, bq, i1[ok], i2[ok], i3[ok])
        out[ok, 0], out[ok, 1], out[ok, 2] = a, b, c
    out[diverges] = (np.inf, np.nan, np.nan)
    return out


def integrals_nodes_rules(x, wq, count, x_s, grid, res, nrm, res_nodes, nrm_nodes, res_low,
                          nrm_low, bt, bq) -> np.ndarray:
    """(I₁, I₂, I₃) per sample, shape (S, 3), as :func:`kappa.core.kernels.
    callaway_integrals_nodes` (rates with non-polynomial parts at the nodes)."""
    X = x[grid]
    W = wq[grid]
    M = X.shape[1]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        rr = _poly(res, X) + res_nodes[:, :M]
        rn = _poly(nrm, X) + nrm_nodes[:, :M]
        tc = np.where(W == 0.0, 0.0, W / (rr + rn))
        i1 = tc.sum(axis=1)
        i2 = (tc * rn).sum(axis=1)
        i3 = (tc * rn * rr).sum(axis=1)
    return _finish(i1, i2, i3, res + res_low, nrm + nrm_low, x_s[grid], bt, bq)


def integrals_curved_rules(x, wq, gp, count, x_s, grid, res, nrm, res_nodes, nrm_nodes,
                           res_low, nrm_low, has_nodes, bt, bq) -> np.ndarray:
    """(I₁, I₂, I₃) per sample, shape (S, 3), as :func:`kappa.core.kernels.
    callaway_integrals_curved` (branches with a dispersion; same arguments)."""
    X = x[grid]  # (S, M)
    W = wq[grid]  # (S, 3, M)
    G, P = gp[grid, 0], gp[grid, 1]
    used = np.arange(X.shape[1])[None, :] < count[grid][:, None]
    flux = np.any(res[:, 1] != 0.0, axis=1)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        rr = _poly(res[:, 0], X)
        if flux.any():
            rr = rr + np.where(flux[:, None], G * _poly(res[:, 1], X * P), 0.0)
        rn = _poly(nrm, X)
        if has_nodes:
            rr = rr + res_nodes[:, : X.shape[1]]
            rn = rn + nrm_nodes[:, : X.shape[1]]
        tc = np.where(used, 1.0 / (rr + rn), 0.0)
        w1, w2, w3 = (np.where(used, W[:, k], 0.0) for k in range(3))
        i1 = (w1 * tc).sum(axis=1)
        i2 = (w2 * tc * rn).sum(axis=1)
        i3 = (w3 * tc * rn * rr).sum(axis=1)
    return _finish(i1, i2, i3, res_low, nrm_low, x_s[grid], bt, bq)
