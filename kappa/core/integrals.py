"""The Callaway integrals I₁, I₂, I₃ for many samples: rule choice and kernel dispatch.

Samples sharing an upper limit (and zone boundary) share one quadrature rule. Small problems
(below 4,096 samples) are integrated in numpy (:mod:`kappa.core.array_kernels`: no compiled
code to load for one curve); larger ones by the numba kernels of :mod:`kappa.core.kernels`, in
one thread below 20,000 samples and in parallel above. Every path gives the same numbers to
rounding (``tests/test_kernels.py``).
"""

from __future__ import annotations

import numpy as np

from kappa.core import quadrature as _q
from kappa.core.dispersion import curved_rules
from kappa.core.mechanisms import NPOW
from kappa.core.quadrature import X_CUT, block_rule, rules

__all__ = ["integrals", "integrals_curved", "unique_pairs"]

_SERIAL_BELOW = 20_000  #: fewer samples than this run in one thread (no thread-pool start-up)
_ARRAY_BELOW = 4_096  #: fewer samples than this are integrated with numpy (no compiled code to load)
_BLOCK = block_rule()
_FREE = (*_q.relative_log_rule(), *_q.linear_nodes())
_LOG_W = _q.phonon_weight(_q.X_SWITCH * _FREE[0])


def integrals(tops: np.ndarray, res_x: np.ndarray, nrm_x: np.ndarray, nodes=None,
               rule_index: tuple[np.ndarray, np.ndarray] | None = None) -> np.ndarray:
    """(I₁, I₂, I₃) from 0 to each upper limit, for flat samples; shape (S, 3) [s].

    ``res_x``, ``nrm_x`` (S, 5): polynomial rates in powers of x [1/s]. ``nodes``: None, or a
    function ``nodes(xx, grid) -> (res_nodes, nrm_nodes, res_low, nrm_low)`` giving the
    non-polynomial parts at the rule nodes ``xx[grid]`` (S, M) and their x → 0 limits (S, 5).
    ``rule_index``: the distinct upper limits and each sample's position among them, when the
    caller knows them (saves sorting). Samples sharing an upper limit share one quadrature rule;
    when nearly every sample has its own (and all rates are polynomials) the rules are built
    inside the kernel instead. A sample with no x⁰–x² resistive term gets I₁ = inf.
    """
    tops = np.minimum(np.asarray(tops, dtype=float).ravel(), X_CUT)
    S = tops.size
    res_x = np.ascontiguousarray(np.broadcast_to(res_x, (S, NPOW)))
    nrm_x = np.ascontiguousarray(np.broadcast_to(nrm_x, (S, NPOW)))
    bt, bq = _BLOCK
    out = np.empty((S, 3))
    if rule_index is None:
        uniq, grid = np.unique(tops, return_inverse=True)
    else:
        uniq, grid = np.minimum(rule_index[0], X_CUT), rule_index[1]
    grid = np.ascontiguousarray(grid, dtype=np.int64).ravel()
    if S < _ARRAY_BELOW:  # numpy: no compiled code to load for a small job
        from kappa.core import array_kernels

        xx, wq, count, x_s = rules(uniq)
        if nodes is None:
            return array_kernels.integrals_shared_rules(xx, wq, count, x_s, grid, res_x, nrm_x,
                                                        bt, bq)
        rn, nn, rl, nl = nodes(xx, grid)
        return array_kernels.integrals_nodes_rules(xx, wq, count, x_s, grid, res_x, nrm_x,
                                                   np.asarray(rn), np.asarray(nn),
                                                   np.asarray(rl), np.asarray(nl), bt, bq)
    from kappa.core.kernels import (
        callaway_integrals,
        callaway_integrals_free,
        callaway_integrals_free_serial,
        callaway_integrals_nodes,
        callaway_integrals_serial,
    )

    small = S < _SERIAL_BELOW
    if nodes is None and uniq.size > 64 and uniq.size > S // 4:
        log_t, log_q, lin_t, lin_q = _FREE
        kernel = callaway_integrals_free_serial if small else callaway_integrals_free
        kernel(tops, res_x, nrm_x, log_t, log_q, _LOG_W, lin_t, lin_q, _q.X_SWITCH, _q.EPS_LOW,
               _q.LIN_WIDTH, bt, bq, out)
        return out
    xx, wq, count, x_s = rules(uniq)
    if nodes is None:
        kernel = callaway_integrals_serial if small else callaway_integrals
        kernel(xx, wq, count, x_s, grid, res_x, nrm_x, bt, bq, out)
    else:
        rn, nn, rl, nl = nodes(xx, grid)
        callaway_integrals_nodes(xx, wq, count, x_s, grid, res_x, nrm_x,
                                 np.ascontiguousarray(rn), np.ascontiguousarray(nn),
                                 np.ascontiguousarray(rl), np.ascontiguousarray(nl), bt, bq, out)
    return out


def integrals_curved(tops: np.ndarray, zbs: np.ndarray, res_x: np.ndarray, nrm_x: np.ndarray,
                      nodes=None, rule_index=None) -> np.ndarray:
    """(I₁, I₂, I₃) with the weights of curved branches; shape (S, 3) [s].

    ``tops``, ``zbs`` (S,): upper limits θ/T and x_zb = ħω_zb/(k_BT) (inf: a Debye branch).
    ``res_x`` (S, 2, 5): resistive coefficients of x^k as written and × g p^k;
    ``nrm_x`` (S, 5). ``nodes`` and ``rule_index`` as in :func:`integrals` (the distinct
    (top, x_zb) pairs as an (n, 2) array and each sample's row).
    """
    tops = np.asarray(tops, dtype=float).ravel()
    S = tops.size
    zbs = np.broadcast_to(np.asarray(zbs, dtype=float), (S,)).ravel()
    res_x = np.ascontiguousarray(np.broadcast_to(res_x, (S, 2, NPOW)))
    nrm_x = np.ascontiguousarray(np.broadcast_to(nrm_x, (S, NPOW)))
    if rule_index is None:
        pairs, grid = unique_pairs(tops, zbs)
    else:
        pairs, grid = rule_index
    grid = np.ascontiguousarray(grid, dtype=np.int64).ravel()
    xx, wq, gp, count, x_s = curved_rules(pairs[:, 0], pairs[:, 1])
    res_low = res_x.sum(axis=1)
    nrm_low = nrm_x
    if nodes is None:
        rn = nn = np.zeros((1, 1))
        has = False
    else:
        rn, nn, rl, nl = nodes(xx, grid)
        res_low = res_low + rl
        nrm_low = nrm_low + nl
        has = True
    bt, bq = _BLOCK
    if S < _ARRAY_BELOW:  # numpy: no compiled code to load for a small job
        from kappa.core.array_kernels import integrals_curved_rules

        return integrals_curved_rules(xx, wq, gp, count, x_s, grid, res_x, nrm_x,
                                      np.asarray(rn), np.asarray(nn), np.asarray(res_low),
                                      np.asarray(nrm_low), has, bt, bq)
    from kappa.core.kernels import callaway_integrals_curved

    out = np.empty((S, 3))
    callaway_integrals_curved(xx, wq, gp, count, x_s, grid, res_x, nrm_x,
                              np.ascontiguousarray(rn), np.ascontiguousarray(nn),
                              np.ascontiguousarray(res_low), np.ascontiguousarray(nrm_low), has,
                              bt, bq, out)
    return out


def unique_pairs(tops: np.ndarray, zbs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Distinct (top, x_zb) rows, shape (n, 2), and each sample's row (one 1-D sort: the pairs
    as complex numbers, which sort by real part, then imaginary part)."""
    key = np.empty(np.size(tops), dtype=complex)
    key.real = np.ravel(tops)
    key.imag = np.ravel(zbs)  # inf for Debye branches (kept: no inf·1j arithmetic)
    u, g = np.unique(key, return_inverse=True)
    return np.stack([u.real, u.imag], axis=1), g.ravel()
