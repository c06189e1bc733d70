"""The least-squares problem of a fit: residuals, Jacobians, the solver and the covariance.

Residuals. With uncertainties σ_i: r_i = (κ_model − κ_i)/σ_i, χ² = Σ r_i², and the covariance
is (JᵀJ)⁻¹ with the σ taken as true (not rescaled). Without uncertainties: relative residuals
r_i = ln κ_model − ln κ_i, and the covariance s²(JᵀJ)⁻¹ with s² = RSS/(n − k), i.e. the errors
are scaled by the residual scatter.

Shared (systematic) uncertainties. A sample whose data carry a systematic part c_i (the same
calibration or geometry error at every temperature) gets one nuisance parameter z ~ N(0, 1):
the model of its points is κ_model,i (1 + z w_i) with w_i = c_i/κ_i, the residuals are
(κ_model,i (1 + z w_i) − κ_i)/σ_i with σ_i the random part, and z itself is one more residual
(the Gaussian prior). The nuisances sit after the model parameters in the vector u; the
covariance of the model parameters is their block of the joint covariance, so it includes what
the shared error does to them.

Every evaluation of the model for a set of parameter vectors is one batch per sample through
the evaluator (:func:`kappa.core.evaluator.conductivity`), so forward-difference Jacobians
and band draws cost one kernel call per sample.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from kappa.core.evaluator import conductivity
from kappa.errors import KappaError
from kappa.workflows.fitting.data import SeriesSample
from kappa.workflows.fitting.parameters import FreeParameter

__all__ = ["Problem", "solve", "covariance", "criteria", "MAX_EVALUATIONS", "SCALE_LIMIT"]

MAX_EVALUATIONS = 1000  #: solver evaluations per start before it stops (reported if reached)
_SAME_MINIMUM = 1e-6  #: relative cost difference counted as "the same minimum"
_STEP = 1e-6  #: finite-difference step in the transformed space (relative)
_PENALTY = 1e6  #: residual returned where the model rejects a trial point
SCALE_LIMIT = 8.0  #: search range of a nuisance scale, in standard deviations of its prior


class Problem:
    """Residuals of all samples as a function of the transformed parameter vector u.

    u holds the model parameters (``params``, transformed) followed by one standardized scale
    per sample with a systematic uncertainty (:attr:`scales`).
    """

    def __init__(self, samples: Sequence[SeriesSample], params: Sequence[FreeParameter],
                 weighted: bool) -> None:
        self.samples = list(samples)
        self.params = list(params)
        self.weighted = weighted
        self.n = sum(s.data.size for s in samples)
        self.k = len(self.params)
        self.scales: list[tuple[int, slice, np.ndarray]] = []  # (sample, points, w_i)
        i0 = 0
        for j, s in enumerate(self.samples):
            sl = slice(i0, i0 + s.data.size)
            if weighted and s.data.systematic is not None:
                self.scales.append((j, sl, s.data.systematic / s.data.kappa_L))
            i0 = sl.stop
        self.size = self.k + len(self.scales)
        self.lo = np.array([p.search[0] for p in params] + [-SCALE_LIMIT] * len(self.scales))
        self.hi = np.array([p.search[1] for p in params] + [SCALE_LIMIT] * len(self.scales))
        self.u0 = np.array([p.to_u(p.start) for p in params] + [0.0] * len(self.scales),
                           dtype=float)
        self.data = np.concatenate([s.data.kappa_L for s in samples])
        self.sigma = (np.concatenate([s.data.uncertainty for s in samples]) if weighted
                      else None)
        self._cache: tuple[np.ndarray, np.ndarray] | None = None
        self._curve: tuple[np.ndarray, np.ndarray] | None = None

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
        """κ_model for each row of U, shape (len(U), n) (without the scales)."""
        U = np.atleast_2d(U)
        parts = []
        for s in self.samples:
            values = self.values(U, s)
            batch = s.model.with_values(values) if values else s.model
            k = conductivity(batch, s.data.temperature)
            parts.append(np.broadcast_to(k, (len(U), s.data.size)))
        return np.concatenate(parts, axis=1)

    def factors(self, U: np.ndarray) -> np.ndarray:
        """The scale factor 1 + z w_i of every point for each row of U: (len(U), n)."""
        U = np.atleast_2d(U)
        f = np.ones((len(U), self.n))
        for j, (_, sl, w) in enumerate(self.scales):
            f[:, sl] = 1.0 + U[:, self.k + j, None] * w[None, :]
        return f

    def residuals_of(self, model: np.ndarray, U: np.ndarray | None = None) -> np.ndarray:
        """Residuals of the data points for model values ``model`` (and the scales in U)."""
        if self.scales and U is not None:
            model = model * self.factors(U)
        if self.weighted:
            return (model - self.data) / self.sigma
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log(model) - np.log(self.data)

    def residuals(self, U: np.ndarray) -> np.ndarray:
        """All residuals for each row of U: the data points, then the scales' priors."""
        U = np.atleast_2d(U)
        try:
            r = self.residuals_of(self.model(U), U)
        except KappaError:
            # a trial point the model rejects (e.g. a divergent rate set): steer the solver away
            r = np.full((len(U), self.n), _PENALTY)
        r = np.where(np.isfinite(r), r, _PENALTY)
        if self.scales:
            r = np.concatenate([r, U[:, self.k:]], axis=1)
        return r

    def fun(self, u: np.ndarray) -> np.ndarray:
        if self._cache is not None and np.array_equal(self._cache[0], u):
            return self._cache[1]
        r = self.residuals(u[None, :])[0]
        self._cache = (u.copy(), r)
        return r

    def curve(self, u: np.ndarray) -> np.ndarray:
        """κ_model at one parameter vector (cached), shape (n,)."""
        if self._curve is not None and np.array_equal(self._curve[0], u[:self.k]):
            return self._curve[1]
        c = self.model(u[None, :])[0]
        self._curve = (u[:self.k].copy(), c)
        return c

    def _scale_columns(self, u: np.ndarray, idx: Sequence[int]) -> np.ndarray:
        """Exact derivatives of the residuals with respect to the scales ``idx`` (≥ k)."""
        out = np.zeros((self.n + len(self.scales), len(idx)))
        if not idx:
            return out
        c = self.curve(u)
        for col, i in enumerate(idx):
            j = i - self.k
            _, sl, w = self.scales[j]
            out[sl, col] = c[sl] * w / self.sigma[sl]
            out[self.n + j, col] = 1.0
        return out

    def _steps(self, u: np.ndarray) -> np.ndarray:
        h = _STEP * np.maximum(1.0, np.abs(u))
        return np.where(u + h > self.hi, -h, h)  # step backwards at an upper bound

    def jac(self, u: np.ndarray, idx: Sequence[int] | None = None) -> np.ndarray:
        """Forward differences in the model columns of ``idx`` (all shifted points in one
        evaluation), exact derivatives in the scale columns."""
        idx = list(range(u.size)) if idx is None else list(idx)
        model_idx = [i for i in idx if i < self.k]
        J = np.empty((self.n + len(self.scales), len(idx)))
        if model_idx:
            h = self._steps(u)[model_idx]
            U = np.repeat(u[None, :], len(model_idx), axis=0)
            U[np.arange(len(model_idx)), model_idx] += h
            cols = ((self.residuals(U) - self.fun(u)[None, :]) / h[:, None]).T
            J[:, [idx.index(i) for i in model_idx]] = cols
        scale_idx = [i for i in idx if i >= self.k]
        if scale_idx:
            J[:, [idx.index(i) for i in scale_idx]] = self._scale_columns(u, scale_idx)
        return J

    def jac_central(self, u: np.ndarray) -> np.ndarray:
        """Central differences (one-sided at a bound) in the model columns, for the
        covariance; exact derivatives in the scale columns."""
        k = self.k
        J = np.empty((self.n + len(self.scales), u.size))
        if k:
            h = _STEP ** (2.0 / 3.0) * np.maximum(1.0, np.abs(u[:k]))
            up = np.minimum(u[:k] + h, self.hi[:k])
            dn = np.maximum(u[:k] - h, self.lo[:k])
            eye = np.eye(k, dtype=bool)
            U_up = np.repeat(u[None, :], k, axis=0)
            U_dn = U_up.copy()
            U_up[:, :k] = np.where(eye, up[None, :], u[None, :k])
            U_dn[:, :k] = np.where(eye, dn[None, :], u[None, :k])
            R = self.residuals(np.vstack([U_up, U_dn]))
            J[:, :k] = ((R[:k] - R[k:]) / (up - dn)[:, None]).T
        if self.scales:
            J[:, k:] = self._scale_columns(u, list(range(k, u.size)))
        return J


class _Null:
    """The result of a 'fit' with no free parameter."""

    def __init__(self, u, r):
        self.u, self.fun, self.cost, self.status = u, r, 0.5 * float(r @ r), 1


def solve(problem: Problem, starts: Sequence[np.ndarray], fixed: Mapping[int, float] = (),
          progress: Callable[[float, float], None] | None = None, done: float = 0.0,
          total: float | None = None) -> tuple[Any, int, int]:
    """Run least_squares from each start; return (best result, n reaching the best, nfev).

    Trust-region reflective method with bounds in the transformed space (scipy).
    ``progress(done, total)``, if given, is called after every evaluation: one unit per start,
    counted from ``done`` out of ``total`` (default: the number of starts); within a start the
    unit fills as 1 − 1/(1 + evaluations/10), since how many a start needs is not known.
    """
    from scipy.optimize import least_squares  # imported here: keeps `import kappa` fast

    fixed = dict(fixed)
    free_idx = [i for i in range(problem.size) if i not in fixed]
    base = problem.u0.copy()
    for i, v in fixed.items():
        base[i] = v

    def full(v):
        u = base.copy()
        u[free_idx] = v
        return u

    total = float(len(starts)) if total is None else total
    counted = {"start": 0, "evaluations": 0}

    def fun(v):
        r = problem.fun(full(v))
        if progress is not None:
            counted["evaluations"] += 1
            within = 1.0 - 1.0 / (1.0 + counted["evaluations"] / 10.0)
            progress(min(done + counted["start"] + within, total), total)
        return r

    def jac(v):
        return problem.jac(full(v), free_idx)

    if not free_idx:
        r = problem.fun(base)
        return _Null(base, r), 1, 1
    lo, hi = problem.lo[free_idx], problem.hi[free_idx]
    results, nfev = [], 0
    for n_start, s in enumerate(starts):
        counted["start"], counted["evaluations"] = n_start, 0
        x0 = np.clip(np.asarray(s, dtype=float)[free_idx], lo, hi)
        res = least_squares(fun, x0, jac=jac, bounds=(lo, hi), method="trf", x_scale="jac",
                            xtol=1e-10, ftol=1e-12, gtol=1e-10, max_nfev=MAX_EVALUATIONS)
        if progress is not None:
            progress(min(done + n_start + 1, total), total)
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
