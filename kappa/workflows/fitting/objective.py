"""The least-squares problem of a fit: residuals, Jacobians, the solver and the covariance.

Residuals. With uncertainties σ_i: r_i = (κ_model − κ_i)/σ_i, χ² = Σ r_i², and the covariance
is (JᵀJ)⁻¹ with the σ taken as true (not rescaled). Without uncertainties: relative residuals
r_i = ln κ_model − ln κ_i, and the covariance s²(JᵀJ)⁻¹ with s² = RSS/(n − k), i.e. the errors
are scaled by the residual scatter.

Every evaluation of the model for a set of parameter vectors is one batch per sample through
the evaluator (:func:`kappa.core.evaluator.conductivity`), so forward-difference Jacobians
and band draws cost one kernel call per sample.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from kappa.core.evaluator import conductivity
from kappa.errors import KappaError
from kappa.workflows.fitting.data import SeriesSample
from kappa.workflows.fitting.parameters import FreeParameter

__all__ = ["Problem", "solve", "covariance", "criteria", "MAX_EVALUATIONS"]

MAX_EVALUATIONS = 1000  #: solver evaluations per start before it stops (reported if reached)
_SAME_MINIMUM = 1e-6  #: relative cost difference counted as "the same minimum"
_STEP = 1e-6  #: finite-difference step in the transformed space (relative)
_PENALTY = 1e6  #: residual returned where the model rejects a trial point


class Problem:
    """Residuals of all samples as a function of the transformed parameter vector u."""

    def __init__(self, samples: Sequence[SeriesSample], params: Sequence[FreeParameter],
                 weighted: bool) -> None:
        self.samples = list(samples)
        self.params = list(params)
        self.weighted = weighted
        self.n = sum(s.data.size for s in samples)
        self.lo = np.array([p.search[0] for p in params])
        self.hi = np.array([p.search[1] for p in params])
        self.u0 = np.array([p.to_u(p.start) for p in params], dtype=float)
        self.data = np.concatenate([s.data.kappa_L for s in samples])
        self.sigma = (np.concatenate([s.data.uncertainty for s in samples]) if weighted
                      else None)
        self._cache: tuple[np.ndarray, np.ndarray] | None = None

    def values(self, u: np.ndarray, sample: SeriesSample) -> dict[str, Any]:
        """The SI values of the parameters acting on ``sample`` (arrays when ``u`` is 2-D)."""
        u = np.asarray(u, dtype=float)
        out = {}
        for i, p in enumerate(self.params):
            if p.sample is None or p.sample == sample.name:
                ui = u[..., i]
                out[p.key] = p.to_value(ui) if ui.ndim else float(p.to_value(ui))
        return out

    def models(self, u: np.ndarray) -> list:
        """The fitted model of each sample at ``u`` (one parameter vector)."""
        out = []
        for s in self.samples:
            values = self.values(u, s)
            out.append(s.model.with_values(values) if values else s.model)
        return out

    def model(self, U: np.ndarray) -> np.ndarray:
        """κ_model for each row of U, shape (len(U), n)."""
        U = np.atleast_2d(U)
        parts = []
        for s in self.samples:
            values = self.values(U, s)
            batch = s.model.with_values(values) if values else s.model
            k = conductivity(batch, s.data.temperature)
            parts.append(np.broadcast_to(k, (len(U), s.data.size)))
        return np.concatenate(parts, axis=1)

    def residuals_of(self, model: np.ndarray) -> np.ndarray:
        if self.weighted:
            return (model - self.data) / self.sigma
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log(model) - np.log(self.data)

    def residuals(self, U: np.ndarray) -> np.ndarray:
        U = np.atleast_2d(U)
        try:
            r = self.residuals_of(self.model(U))
        except KappaError:
            # a trial point the model rejects (e.g. a divergent rate set): steer the solver away
            r = np.full((len(U), self.n), _PENALTY)
        return np.where(np.isfinite(r), r, _PENALTY)

    def fun(self, u: np.ndarray) -> np.ndarray:
        if self._cache is not None and np.array_equal(self._cache[0], u):
            return self._cache[1]
        r = self.residuals(u[None, :])[0]
        self._cache = (u.copy(), r)
        return r

    def _steps(self, u: np.ndarray) -> np.ndarray:
        h = _STEP * np.maximum(1.0, np.abs(u))
        return np.where(u + h > self.hi, -h, h)  # step backwards at an upper bound

    def jac(self, u: np.ndarray, idx: Sequence[int] | None = None) -> np.ndarray:
        """Forward differences in the columns ``idx``, all shifted points in one evaluation."""
        idx = list(range(u.size)) if idx is None else list(idx)
        h = self._steps(u)[idx]
        U = np.repeat(u[None, :], len(idx), axis=0)
        U[np.arange(len(idx)), idx] += h
        return ((self.residuals(U) - self.fun(u)[None, :]) / h[:, None]).T

    def jac_central(self, u: np.ndarray) -> np.ndarray:
        """Central differences (one-sided at a bound), for the covariance."""
        h = _STEP ** (2.0 / 3.0) * np.maximum(1.0, np.abs(u))
        up = np.minimum(u + h, self.hi)
        dn = np.maximum(u - h, self.lo)
        k = u.size
        U = np.vstack([np.where(np.eye(k, dtype=bool), up[None, :], u[None, :]),
                       np.where(np.eye(k, dtype=bool), dn[None, :], u[None, :])])
        R = self.residuals(U)
        return ((R[:k] - R[k:]) / (up - dn)[:, None]).T


class _Null:
    """The result of a 'fit' with no free parameter."""

    def __init__(self, u, r):
        self.u, self.fun, self.cost, self.status = u, r, 0.5 * float(r @ r), 1


def solve(problem: Problem, starts: Sequence[np.ndarray], fixed: Mapping[int, float] = ()
          ) -> tuple[Any, int, int]:
    """Run least_squares from each start; return (best result, n reaching the best, nfev).

    Trust-region reflective method with bounds in the transformed space (scipy).
    """
    from scipy.optimize import least_squares  # imported here: keeps `import kappa` fast

    fixed = dict(fixed)
    free_idx = [i for i in range(len(problem.params)) if i not in fixed]
    base = problem.u0.copy()
    for i, v in fixed.items():
        base[i] = v

    def full(v):
        u = base.copy()
        u[free_idx] = v
        return u

    def fun(v):
        return problem.fun(full(v))

    def jac(v):
        return problem.jac(full(v), free_idx)

    if not free_idx:
        r = problem.fun(base)
        return _Null(base, r), 1, 1
    lo, hi = problem.lo[free_idx], problem.hi[free_idx]
    results, nfev = [], 0
    for s in starts:
        x0 = np.clip(np.asarray(s, dtype=float)[free_idx], lo, hi)
        res = least_squares(fun, x0, jac=jac, bounds=(lo, hi), method="trf", x_scale="jac",
                            xtol=1e-10, ftol=1e-12, gtol=1e-10, max_nfev=MAX_EVALUATIONS)
        nfev += res.nfev
        res.u = full(res.x)
        results.append(res)
    best = min(results, key=lambda r: r.cost)
    best.all_results = results
    same = sum(1 for r in results
               if r.cost <= best.cost * (1 + _SAME_MINIMUM) + 1e-14 * problem.n)
    return best, same, nfev


def covariance(J: np.ndarray, scale: float) -> np.ndarray:
    """(JᵀJ)⁻¹·scale via the SVD; exactly singular directions give infinite variance."""
    _, s, vt = np.linalg.svd(J, full_matrices=False)
    with np.errstate(divide="ignore"):
        inv = np.where(s > s.max() * 1e-15, 1.0 / s**2, np.inf)
    cov = (vt.T * inv) @ vt
    bad = ~np.isfinite(inv)
    if np.any(bad):  # a direction with no information: every parameter in it gets inf
        involved = np.any(np.abs(vt[bad]) > 1e-8, axis=0)
        cov = np.where(np.isfinite(cov), cov, 0.0)
        cov[involved, :] = np.inf
        cov[:, involved] = np.inf
    return cov * scale


def criteria(chi2: float, n: int, k: int, weighted: bool) -> tuple[float, float]:
    """(AIC, BIC): weighted χ² + 2k, χ² + k ln n; unweighted with n ln(RSS/n) for χ²."""
    base = chi2 if weighted else n * math.log(max(chi2, 1e-300) / n)
    return base + 2 * k, base + k * math.log(n)
