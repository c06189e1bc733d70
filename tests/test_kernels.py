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
