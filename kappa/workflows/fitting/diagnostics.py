"""Warnings that protect a fit's user: parameters at bounds, correlations, parameters the data
do not need, mechanisms driven to an effective zero, boundary lengths far from the grain size,
χ²_red far from 1 (either way), other minima, a possible bipolar rise. Each returns plain-words
messages; :func:`~kappa.workflows.fitting.fit_series` stores them in the result and issues each
once."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

import numpy as np

from kappa.core.evaluator import DivergenceError, conductivity
from kappa.core.model import Model
from kappa.errors import KappaError
from kappa.workflows.fitting.data import FitData
from kappa.workflows.fitting.parameters import SEARCH_DECADES, FreeParameter
from kappa.workflows.fitting.result import FittedParameter, FittedScale, SampleFit

__all__ = ["diagnostics", "other_minimum", "at_bound", "upturn", "chi2_message",
           "effective_zero", "CORRELATION_LIMIT", "DELTA_BIC", "BOUNDARY_FACTOR",
           "CHI2_RED_HIGH", "CHI2_TAIL", "BIPOLAR_EXCESS", "ALT_DELTA_CHI2", "NEGLIGIBLE"]

CORRELATION_LIMIT = 0.9  #: |r| above this: "not separately determined"
DELTA_BIC = 2.0  #: freeing a parameter must lower BIC by at least this much
BOUNDARY_FACTOR = 10.0  #: fitted boundary length vs. the model's grain size
CHI2_RED_HIGH = 3.0  #: weighted fit: χ²_red above this is always reported as too high
CHI2_TAIL = 0.005  #: χ² below/above this lower/upper tail probability of its distribution: warn
NEGLIGIBLE = 1e-3  #: a mechanism whose removal changes κ_L by less than this everywhere: "zero"
BIPOLAR_EXCESS = 0.10  #: relative rise above the high-T power-law trend that is flagged
ALT_DELTA_CHI2 = 4.0  #: another start within this Δχ² of the best, far away, is reported


def _fmt_T(values) -> str:
    return ", ".join(f"{t:g} K" for t in values)


def at_bound(p: FreeParameter, u: float) -> str:
    """``""``, ``"lower"``, ``"upper"`` or ``"search limit"``."""
    lo, hi = p.search
    tol = 1e-6 * max(1.0, hi - lo if math.isfinite(hi - lo) else abs(u))
    if p.space == "linear" or p.user_bounds:
        edge_lo, edge_hi = True, True
    else:  # log space: the search limit, unless the allowed range itself ends there
        edge_lo = p.low > 0 and math.isclose(lo, math.log(p.low), rel_tol=1e-12, abs_tol=1e-12)
        edge_hi = math.isfinite(p.high) and math.isclose(hi, math.log(p.high), rel_tol=1e-12,
                                                         abs_tol=1e-12)
    if u - lo <= tol:
        return "lower" if edge_lo else "search limit"
    if hi - u <= tol:
        return "upper" if edge_hi else "search limit"
    return ""


def other_minimum(best, u: np.ndarray, sd: np.ndarray, scale: float,
                  params: Sequence[FreeParameter]) -> str:
    """A warning if another start ended nearly as well at clearly different values."""
    for r in getattr(best, "all_results", ()):
        if r is best:
            continue
        d_chi2 = 2.0 * (r.cost - best.cost) / scale
        if d_chi2 > ALT_DELTA_CHI2:
            continue
        far = [i for i in range(u.size)
               if math.isfinite(sd[i]) and sd[i] > 0 and abs(r.u[i] - u[i]) > 3.0 * sd[i]]
        if far:
            shown = ", ".join(f"{params[i].label} = {params[i].to_value(r.u[i]):.4g}"
                              for i in far)
            return (f"another start ended at clearly different values ({shown}) with χ² only "
                    f"{d_chi2:.2g} higher: the best fit is not unique and the standard errors "
                    "understate the uncertainty; fix or bound one of these keys")
    return ""


def chi2_message(chi2_red: float, dof: int, scales: Sequence[FittedScale] = ()) -> str:
    """A plain-words warning when χ²_red is far from 1 for a weighted fit, else ``""``.

    "Far" means outside the central 1 − 2·:data:`CHI2_TAIL` of the χ² distribution with
    ``dof`` degrees of freedom (always above :data:`CHI2_RED_HIGH`): the stated uncertainties
    and the scatter of the data about the model disagree.
    """
    if dof < 1 or not math.isfinite(chi2_red):
        return ""
    from scipy.stats import chi2  # imported here: keeps `import kappa` fast

    low = float(chi2.ppf(CHI2_TAIL, dof)) / dof
    high = min(float(chi2.ppf(1.0 - CHI2_TAIL, dof)) / dof, CHI2_RED_HIGH)
    if chi2_red < low:
        shared = ("" if scales else " If they are mostly shared by all temperatures "
                  "(calibration, geometry), they are not point-to-point noise: give the "
                  "systematic and random parts separately ('kappa split' writes both), or "
                  "use --errors none.")
        return (f"χ²_red = {chi2_red:.3g} is far below 1 (below {low:.2g}, which noise of the "
                f"stated size reaches by chance in fewer than {100 * CHI2_TAIL:g} % of cases "
                f"with {dof} degrees of freedom): the data scatter much less about the fit than "
                "their uncertainties say, so the parameter errors are overstated." + shared)
    if chi2_red > high:
        return (f"χ²_red = {chi2_red:.3g} is far above 1 (above {high:.2g}): the model misses "
                "the data by more than their uncertainties — the model lacks something the "
                "data show, or the uncertainties are understated; the standard errors assume "
                "neither and are too small")
    return ""


def effective_zero(params: Sequence[FreeParameter], fitted: Sequence[FittedParameter],
                   sample_fits: Sequence[SampleFit]) -> list[str]:
    """Free parameters of a scattering mechanism that the fit drove to an effective zero.

    The mechanism is removed from each fitted model it acts on; if κ_L changes by less than
    :data:`NEGLIGIBLE` (0.1 %) at every data temperature, the fit has switched it off.
    """
    out = []
    for p, f in zip(params, fitted, strict=True):
        parts = p.key.split(".")
        if parts[0] != "scattering":
            continue
        mech = parts[1]
        largest = 0.0
        for s in sample_fits:
            if p.sample not in (None, s.name) or s.model.scattering.get(mech) is None:
                continue
            T = s.data.temperature
            try:
                without = conductivity(type(s.model)(s.model.spec,
                                                     s.model.scattering.without(mech)), T)
            except (DivergenceError, KappaError):
                largest = math.inf
                break
            with np.errstate(divide="ignore", invalid="ignore"):
                change = np.abs(without / s.kappa_L_fit - 1.0)
            largest = max(largest, float(np.nanmax(change)) if change.size else 0.0)
        if largest < NEGLIGIBLE:
            found = [s.model.scattering.get(mech) for s in sample_fits
                     if s.model.scattering.get(mech) is not None]
            title = found[0].title if found else mech
            out.append(f"{f.label} = {p.parameter.format(f.value, 4)}: the fit drove {title} "
                       f"to an effective zero — removing them changes κ_L by less than "
                       f"{100 * NEGLIGIBLE:g} % at every fitted temperature (at most "
                       f"{100 * largest:.2g} %). These data do not call for this mechanism; "
                       "its value and error bar mean nothing: hold it fixed or leave the "
                       "mechanism out")
    return out


def diagnostics(params: Sequence[FreeParameter], fitted: Sequence[FittedParameter],
                corr: np.ndarray, delta_bic: Mapping[str, float],
                sample_fits: Sequence[SampleFit], weighted: bool, chi2_red: float,
                as_given: Mapping[str, Model], *, dof: int | None = None,
                scales: Sequence[FittedScale] = ()) -> list[str]:
    """The warnings of a finished fit (see the module notes)."""
    out: list[str] = []
    for p, f in zip(params, fitted, strict=True):
        shown = p.parameter.format(f.value, 6)
        if f.at_bound == "search limit":
            out.append(f"{f.label} ran to its search limit ({shown}, {SEARCH_DECADES:g} "
                       "decades from its start): the data do not constrain it; hold it fixed "
                       "or give bounds")
        elif f.at_bound:
            out.append(f"{f.label} = {shown} is at its {f.at_bound} bound; the best value may "
                       "lie beyond it and its standard error is not reliable")
        if not math.isfinite(f.stderr):
            out.append(f"{f.label}: no standard error (the data carry no information on it "
                       "at the optimum)")
    k = len(params)
    for i in range(k):
        for j in range(i + 1, k):
            c = corr[i, j]
            if math.isfinite(c) and abs(c) > CORRELATION_LIMIT:
                out.append(f"{params[i].label} and {params[j].label} are correlated "
                           f"(r = {c:+.3f}): these two are not separately determined by these "
                           "data")
    for label, d in delta_bic.items():
        if d < DELTA_BIC:
            change = (f"lowers BIC by only {d:.2g}" if d > 0 else
                      f"does not lower BIC (it changes by {-d:+.2g})")
            out.append(f"freeing {label} {change} (less than {DELTA_BIC:g}; holding it at its "
                       "start value fits about as well): the data do not need it free")
    for p, f in zip(params, fitted, strict=True):
        if p.key != "scattering.boundary.grain_size":
            continue
        for name, model in as_given.items():
            if p.sample not in (None, name):
                continue
            boundary = model.scattering.get("boundary")
            if boundary is None:
                continue
            written = float(boundary.grain_size)
            ratio = f.value / written
            if ratio > BOUNDARY_FACTOR or ratio < 1.0 / BOUNDARY_FACTOR:
                out.append(f"{f.label}: fitted boundary length {p.parameter.format(f.value, 6)}"
                           f" is {ratio:.3g}× the grain size in the model "
                           f"({p.parameter.format(written, 6)}); the boundary term may be "
                           "standing in for another mechanism")
    if weighted:
        n_dof = dof if dof is not None else 0
        message = chi2_message(chi2_red, n_dof, scales) if n_dof else (
            f"χ²_red = {chi2_red:.3g}: the model misses the data by more than their "
            "uncertainties; the standard errors assume it does not"
            if chi2_red > CHI2_RED_HIGH else "")
        if message:
            out.append(message)
    for s in scales:
        if abs(s.z) > 2.0:
            out.append(f"{s.sample}: the fitted shared scale is {s.factor:.3g} ({s.z:+.2g} "
                       f"times the stated systematic uncertainty of {100 * s.width:.2g} %): "
                       "the data sit further from the model than their calibration error "
                       "allows; check the systematic uncertainty or the model")
    out += effective_zero(params, fitted, sample_fits)
    for s in sample_fits:
        flagged = upturn(s.data)
        if flagged:
            out.append(f"{s.name}: κ_L rises above its high-temperature power-law trend at "
                       f"{_fmt_T(flagged)} (possible bipolar part, which the lattice model "
                       "lacks); consider a window up to below these temperatures")
    return out


def upturn(data: FitData) -> list[float]:
    """Temperatures where κ_L rises above its high-temperature power-law trend (possible bipolar
    part).

    κ_L = A·T⁻ⁿ is fitted in log–log (n free: Umklapp-limited κ_L falls as T⁻¹ or a little
    faster) to the lower two thirds of the temperature range above twice the temperature of the
    κ_L maximum (all points when the data start past the maximum); points of the upper third
    are flagged when they exceed the extrapolation by more than 10 % and by more than 3× the
    RMS scatter of the fitted points about the trend. The scatter is used rather than the stated
    uncertainties, which are often mostly systematic (shared by all temperatures) and then say
    nothing about the shape.
    """
    T, k = data.temperature, data.kappa_L
    peak = int(np.argmax(k))  # data that start on the falling side have no peak to skip
    keep = ((T >= 2.0 * T[peak]) if peak > 0 else np.ones(T.size, dtype=bool)) & (k > 0)
    T, k = T[keep], k[keep]
    if T.size < 5:
        return []
    cut = T[0] + 2.0 / 3.0 * (T[-1] - T[0])
    low = T <= cut
    if low.sum() < 3 or (~low).sum() < 1:
        return []
    A = np.vstack([np.log(T[low]), np.ones(low.sum())]).T
    coef, *_ = np.linalg.lstsq(A, np.log(k[low]), rcond=None)
    pred = np.exp(coef[0] * np.log(T) + coef[1])
    rms = float(np.sqrt(np.mean((k[low] - pred[low]) ** 2)))
    excess = k - pred
    flag = (~low) & (excess > BIPOLAR_EXCESS * pred) & (excess > 3.0 * rms)
    return [float(t) for t in T[flag]]
