"""Fit model parameters to measured κ_L(T): weighted least squares with standard errors.

Chosen parameters of a model ("free" keys such as ``material.gruneisen`` or
``scattering.boundary.grain_size``) are adjusted so that the Callaway model matches measured
lattice conductivities; every other value stays as the model gives it. See
:mod:`~kappa.workflows.fitting.parameters` (transformed space, bounds, starts),
:mod:`~kappa.workflows.fitting.objective` (residuals, solver, covariance) and
:mod:`~kappa.workflows.fitting.diagnostics` (warnings).

Uncertainties: ``stderr`` is the delta-method standard error in the parameter's own unit
(value·σ_u for log-space parameters); ``low68``/``high68`` is the 68 % interval exp(u ± σ_u)
(log space) or value ± σ (linear). Data with a systematic part (``FitData.systematic``, the
error shared by all temperatures of a sample) get one scale per sample as a nuisance parameter
with a Gaussian prior of that width (:mod:`~kappa.workflows.fitting.objective`); the random
part weights the points; the parameters' errors then include the shared error, and the fitted
scales are reported (``FitResult.scales``). Information criteria: weighted AIC = χ² + 2k,
BIC = χ² + k ln n; unweighted n ln(RSS/n) + 2k and + k ln n (only differences between fits
to the same data mean anything).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence

import numpy as np

from kappa.core.checks import temperature_warnings
from kappa.core.evaluator import CALLAWAY_CITATION
from kappa.errors import ConfigError, DataError, warn
from kappa.workflows.fitting.data import FitData, SeriesSample, window_text
from kappa.workflows.fitting.diagnostics import at_bound, diagnostics, other_minimum
from kappa.workflows.fitting.objective import MAX_EVALUATIONS, Problem, covariance, criteria, solve
from kappa.workflows.fitting.parameters import (
    FreeParameter,
    check_bounds,
    free_parameter,
    seeded_starts,
)
from kappa.workflows.fitting.result import FitResult, FittedParameter, FittedScale, SampleFit

__all__ = ["fit", "fit_series", "FIT_CITATIONS"]

FIT_CITATIONS = [
    "Least squares: trust-region reflective method, M. A. Branch, T. F. Coleman & Y. Li, "
    "SIAM J. Sci. Comput. 21, 1 (1999), as implemented in scipy.optimize.least_squares",
    "AIC: H. Akaike, IEEE Trans. Autom. Control 19, 716 (1974); BIC: G. Schwarz, "
    "Ann. Stat. 6, 461 (1978)",
]


def fit(model, data: FitData, free: Sequence[str], *,
        start_values: Mapping[str, float] | None = None,
        bounds: Mapping[str, tuple] | None = None, starts: int = 5, seed: int = 0,
        checks: bool = True, progress: Callable[[float, float], None] | None = None
        ) -> FitResult:
    """Fit free parameters of ``model`` to measured κ_L(T).

    Parameters
    ----------
    model : Model
        The model; every non-free value stays as given.
    data : FitData
        From :func:`~kappa.workflows.fitting.data.fit_data` (or read from a file).
    free : sequence of str
        Keys to adjust, e.g. ``["material.gruneisen", "scattering.boundary.grain_size"]``.
    start_values : mapping, optional
        ``{key: SI value}`` to start from instead of the model's value (also adds an absent
        mechanism).
    bounds : mapping, optional
        ``{key: (low, high)}`` [SI]; None for an open side.
    starts : int
        Number of starts (the first is the model's value; the others are seeded draws).
    seed : int
        Seed of the start draws.
    checks : bool
        Run the diagnostics (refits with each parameter held, bipolar check) and warn.
    progress : callable, optional
        ``progress(done, total)`` after every model evaluation: one unit per start and per
        diagnostic refit (a long fit can show how far it is).

    Returns
    -------
    FitResult
    """
    return fit_series([SeriesSample(data.name, model, data)], shared=free, per_sample=(),
                      start_values=start_values, bounds=bounds, starts=starts, seed=seed,
                      checks=checks, progress=progress)


def _check_keys(shared: Sequence[str], per_sample: Sequence[str],
                bounds: Mapping[str, tuple], start_values: Mapping[str, float]) -> None:
    for name, keys in (("shared", shared), ("per_sample", per_sample)):
        if len(set(keys)) != len(keys):
            dup = next(k for k in keys if list(keys).count(k) > 1)
            raise ConfigError(name, dup, "each key may be freed once")
    both = set(shared) & set(per_sample)
    if both:
        raise ConfigError("per_sample", sorted(both)[0], "a key is either shared or per "
                          "sample, not both")
    if not shared and not per_sample:
        raise ConfigError("free", allowed="name at least one key to fit, e.g. "
                          "material.gruneisen")
    for key in bounds:
        if key not in shared and key not in per_sample:
            raise ConfigError(f"bounds[{key}]", bounds[key], "bounds are only for free keys")
    for key in start_values:
        if key not in shared and key not in per_sample:
            raise ConfigError(f"start_values[{key}]", start_values[key],
                              "start values are only for free keys")


def fit_series(samples: Sequence[SeriesSample], shared: Sequence[str] = (),
               per_sample: Sequence[str] = (), *,
               start_values: Mapping[str, float] | None = None,
               bounds: Mapping[str, tuple] | None = None, starts: int = 5, seed: int = 0,
               checks: bool = True, progress: Callable[[float, float], None] | None = None
               ) -> FitResult:
    """One joint least-squares fit over several samples.

    ``shared`` keys take one value for all samples; ``per_sample`` keys one value per sample.
    ``start_values`` apply to every sample's model. Weighting is by uncertainties only if every
    sample has them (otherwise relative for all, with a warning). See :func:`fit`.
    """
    if isinstance(starts, bool) or not isinstance(starts, (int, np.integer)) or starts < 1:
        raise ConfigError("starts", starts, "must be a whole number >= 1")
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise ConfigError("seed", seed, "must be a whole number >= 0")
    if not samples:
        raise ConfigError("samples", allowed="at least one sample is needed")
    names = [s.name for s in samples]
    if len(set(names)) != len(names):
        raise ConfigError("samples", ", ".join(names), "sample names must be unique")
    shared, per_sample = list(shared), list(per_sample)
    bounds, start_values = dict(bounds or {}), dict(start_values or {})
    _check_keys(shared, per_sample, bounds, start_values)
    as_given = {s.name: s.model for s in samples}
    if start_values:
        samples = [SeriesSample(s.name, s.model.with_values(start_values), s.data)
                   for s in samples]
    parsed = {key: check_bounds(samples[0].model.parameter(key), key, b)
              for key, b in bounds.items()}
    params: list[FreeParameter] = []
    for key in shared:
        first = free_parameter(samples[0].model, key, None, parsed.get(key))
        for s in samples[1:]:
            other = free_parameter(s.model, key, None, parsed.get(key))
            if not math.isclose(other.start, first.start, rel_tol=1e-12):
                p = first.parameter
                raise ConfigError(key, f"{p.format(first.start, 6)} in {samples[0].name}, "
                                  f"{p.format(other.start, 6)} in {s.name}", "a shared key "
                                  "needs the same start in every sample (do not set it per "
                                  "sample)")
        params.append(first)
    for key in per_sample:
        for s in samples:
            params.append(free_parameter(s.model, key, s.name, parsed.get(key)))
    if len(samples) == 1:  # a single fit: no sample labels
        params = [FreeParameter(p.key, None, p.parameter, p.start, p.low, p.high, p.space,
                                p.search, p.user_bounds) for p in params]
    k = len(params)
    n = sum(s.data.size for s in samples)
    if n < k + 2:
        detail = ", ".join(f"{s.data.size} in {s.name}"
                           + (f" (window {window_text(s.data.window)})" if s.data.window
                              else "") for s in samples)
        raise DataError("window" if any(s.data.window for s in samples) else "data",
                        f"{n} point{'s' if n != 1 else ''}: {detail}",
                        f"fitting {k} free parameter{'s' if k != 1 else ''} needs at least "
                        f"{k + 2} points; widen the window or free fewer parameters")
    have = [s.data.uncertainty is not None for s in samples]
    weighted = all(have)
    notes: list[str] = []
    if len(samples) > 1 and per_sample:
        for s in samples:  # each sample's own parameters need data of that sample
            if s.data.size < len(per_sample) + 2:
                notes.append(f"sample {s.name} has {s.data.size} point"
                             f"{'s' if s.data.size != 1 else ''} for its {len(per_sample)} own "
                             f"parameter{'s' if len(per_sample) != 1 else ''}: its values rest "
                             "on too few points to be checked by the data")
    if any(have) and not weighted:
        notes.append("uncertainties ignored: sample(s) "
                     + ", ".join(s.name for s, h in zip(samples, have, strict=True) if not h)
                     + " have none, so all samples are fitted with relative residuals")
    for s in samples:
        for message in temperature_warnings(s.model, s.data.temperature):
            warn(message, stacklevel=2)
    problem = Problem(samples, params, weighted)
    problem.model(problem.u0[None, :])  # the start must be computable (a clear error if not)
    nz = problem.size - k  # nuisance scales, started at 0 (their prior's centre)
    start_list = [np.concatenate([s_, np.zeros(nz)])
                  for s_ in seeded_starts(problem.params, problem.u0[:k], int(starts), int(seed))]
    units = float(len(start_list) + (k if checks else 0))  # starts, then one refit per key
    best, same, nfev = solve(problem, start_list, progress=progress, total=units)
    u_full = best.u
    r = problem.fun(u_full)
    chi2 = float(r @ r)
    dof = n - k
    J = problem.jac_central(u_full)
    scale = 1.0 if weighted else chi2 / dof
    cov_full = covariance(J, scale)
    cov = cov_full[:k, :k]
    u = u_full[:k]
    sd = np.sqrt(np.diag(cov))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    corr[~np.isfinite(corr)] = np.nan
    np.fill_diagonal(corr, 1.0)
    aic, bic = criteria(chi2, n, k, weighted)
    fitted = []
    for i, p in enumerate(params):
        value = float(p.to_value(u[i]))
        s_u = float(sd[i])
        if p.space == "log":
            se = value * s_u
            lo68 = math.exp(max(u[i] - s_u, -745.0)) if math.isfinite(s_u) else 0.0
            hi68 = math.exp(min(u[i] + s_u, 709.0)) if math.isfinite(s_u) else math.inf
        else:
            se, lo68, hi68 = s_u, value - s_u, value + s_u
        fitted.append(FittedParameter(p.key, p.sample, value, se, lo68, hi68, p.start,
                                      p.parameter, p.space, at_bound(p, u[i])))
    models = problem.models(u)
    curve = problem.model(u_full[None, :])[0]
    factors = problem.factors(u_full[None, :])[0]
    r_all = problem.residuals_of(curve[None, :], u_full[None, :])[0]
    scaled = {problem.samples[j].name for j, _, _ in problem.scales}
    sample_fits, i0 = [], 0
    for s, m in zip(samples, models, strict=True):
        sl = slice(i0, i0 + s.data.size)
        c, f = curve[sl], factors[sl]
        sample_fits.append(SampleFit(s.name, s.data, c, s.data.kappa_L - c * f,
                                     np.log(s.data.kappa_L) - np.log(c * f), -r_all[sl], m,
                                     s.model, f if s.name in scaled else None))
        i0 = sl.stop
    sd_full = np.sqrt(np.diag(cov_full))
    fitted_scales = tuple(
        FittedScale(problem.samples[j].name, problem.samples[j].data.systematic_width,
                    float(u_full[k + i]), float(sd_full[k + i]))
        for i, (j, _, _) in enumerate(problem.scales))
    delta_bic: dict[str, float] = {}
    messages = list(notes)
    alt = other_minimum(best, u, sd, 1.0 if weighted else scale, params)
    if alt:
        messages.append(alt)
    if getattr(best, "status", 1) == 0:
        messages.append(f"the solver stopped after {MAX_EVALUATIONS} evaluations without "
                        "converging; the values are not a minimum (free fewer parameters or "
                        "give bounds)")
    if checks:
        for i, p in enumerate(params):
            held, _, more = solve(problem, [u_full], fixed={i: problem.u0[i]},
                                  progress=progress, done=len(start_list) + i, total=units)
            nfev += more
            c_i = float(held.fun @ held.fun)
            delta_bic[p.label] = criteria(c_i, n, k - 1, weighted)[1] - bic
        messages += diagnostics(params, fitted, corr, delta_bic, sample_fits, weighted,
                                chi2 / dof, as_given, dof=dof, scales=fitted_scales)
    cites = [CALLAWAY_CITATION]
    for s in sample_fits:
        cites += [c for c in s.model.mechanisms.citations() if c not in cites]
    cites += FIT_CITATIONS
    # "separate" data whose systematic part is zero leave only the random part
    modes = {("random" if s.data.errors == "separate" else s.data.errors) for s in samples
             if s.data.errors}
    errors = ("separate" if fitted_scales else (modes.pop() if len(modes) == 1 else "total")
              ) if weighted else "none"
    labels = tuple(p.label for p in params) + tuple(f"scale:{f.sample}" for f in fitted_scales)
    result = FitResult(
        tuple(fitted), tuple(sample_fits), u, cov, corr, weighted, n, k, dof, chi2,
        chi2 / dof if weighted else None, math.sqrt(chi2 / dof), aic, bic, int(starts), same,
        nfev, delta_bic, tuple(messages), cites, tuple(p.space for p in params), errors,
        fitted_scales, cov_full, labels)
    for msg in messages:
        warn(msg, stacklevel=2)
    return result
