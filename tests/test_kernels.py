"""The compiled kernels and their numpy twin give the same integrals (to rounding).

The evaluator integrates small problems with numpy (no compiled code to load) and large ones
with the numba kernels, in one thread or in parallel; every path must give the same numbers.
"""

from __future__ import annotations

import numpy as np

from kappa.core import kernels
from kappa.core.array_kernels import integrals_shared_rules
from kappa.core.quadrature import block_rule, rules


def _samples(n: int, seed: int = 3):
    rng = np.random.default_rng(seed)
    tops = rng.choice(np.geomspace(0.05, 60.0, 40), n)
    res = np.zeros((n, 5))
    res[:, 0] = np.where(rng.random(n) < 0.7, 10 ** rng.uniform(6, 11, n), 0.0)
    res[:, 2] = 10 ** rng.uniform(5, 11, n)
    res[:, 4] = 10 ** rng.uniform(0, 9, n)
    res[rng.random(n) < 0.1, :3] = 0.0  # some divergent samples
    nrm = np.zeros((n, 5))
    with_n = rng.random(n) < 0.5
    nrm[with_n, 1] = 10 ** rng.uniform(5, 10, with_n.sum())
    nrm[with_n, 2] = 10 ** rng.uniform(5, 10, with_n.sum())
    return tops, res, nrm


def test_numpy_twin_matches_compiled_kernels():
    tops, res, nrm = _samples(600)
    uniq, grid = np.unique(np.minimum(tops, 40.0), return_inverse=True)
    xx, wq, count, x_s = rules(uniq)
    bt, bq = block_rule()
    grid = grid.astype(np.int64)
    a = integrals_shared_rules(xx, wq, count, x_s, grid, res, nrm, bt, bq)
    for kernel in (kernels.callaway_integrals, kernels.callaway_integrals_serial):
        b = np.empty_like(a)
        kernel(xx, wq, count, x_s, grid, res, nrm, bt, bq, b)
        np.testing.assert_allclose(a, b, rtol=1e-12, equal_nan=True)
    assert np.isinf(a[:, 0]).any()  # the divergent samples are flagged the same way


def test_numpy_twin_with_rates_at_the_nodes_matches_the_compiled_kernel():
    from kappa.core.array_kernels import integrals_nodes_rules

    tops, res, nrm = _samples(400, seed=5)
    uniq, grid = np.unique(np.minimum(tops, 40.0), return_inverse=True)
    xx, wq, count, x_s = rules(uniq)
    bt, bq = block_rule()
    grid = grid.astype(np.int64)
    rng = np.random.default_rng(1)
    X = xx[grid]
    amp = 10 ** rng.uniform(6, 10, (grid.size, 1))
    res_nodes = amp * X**2 / (1.0 + X**2)  # a rate that is not a polynomial in x
    nrm_nodes = np.zeros_like(res_nodes)
    res_low = np.zeros((grid.size, 5))
    res_low[:, 2] = amp[:, 0]  # its x → 0 limit
    nrm_low = np.zeros((grid.size, 5))
    a = integrals_nodes_rules(xx, wq, count, x_s, grid, res, nrm, res_nodes, nrm_nodes,
                              res_low, nrm_low, bt, bq)
    b = np.empty_like(a)
    kernels.callaway_integrals_nodes(xx, wq, count, x_s, grid, res, nrm, res_nodes, nrm_nodes,
                                     res_low, nrm_low, bt, bq, b)
    np.testing.assert_allclose(a, b, rtol=1e-12, equal_nan=True)


def test_numpy_twin_of_curved_branches_matches_the_compiled_kernel():
    from kappa.core.array_kernels import integrals_curved_rules
    from kappa.core.dispersion import curved_rules

    tops, res, nrm = _samples(300, seed=7)
    rng = np.random.default_rng(2)
    zbs = np.where(rng.random(tops.size) < 0.8, tops * rng.uniform(1.0, 1.5, tops.size), np.inf)
    key = tops + 1j * np.where(np.isfinite(zbs), zbs, 1e300)
    _, first, grid = np.unique(key, return_index=True, return_inverse=True)
    xx, wq, gp, count, x_s = curved_rules(tops[first], zbs[first])
    bt, bq = block_rule()
    grid = grid.astype(np.int64).ravel()
    res2 = np.zeros((tops.size, 2, 5))
    res2[:, 0] = res
    res2[:, 1, 0] = np.where(rng.random(tops.size) < 0.5, 10 ** rng.uniform(8, 10, tops.size),
                             0.0)  # a boundary-like rate carried as v_g × σ(q)
    res_low = res2.sum(axis=1)
    for has in (False, True):
        rn = 1e7 * xx[grid] if has else np.zeros((1, 1))
        nn = np.zeros_like(rn)
        a = integrals_curved_rules(xx, wq, gp, count, x_s, grid, res2, nrm, rn, nn, res_low,
                                   nrm, has, bt, bq)
        b = np.empty_like(a)
        kernels.callaway_integrals_curved(xx, wq, gp, count, x_s, grid, res2, nrm, rn, nn,
                                          res_low, nrm, has, bt, bq, b)
        np.testing.assert_allclose(a, b, rtol=1e-12, equal_nan=True)
        assert np.isinf(a[:, 0]).any()
