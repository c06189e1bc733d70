"""Fit model parameters to measured κ_L(T): weighted least squares with standard errors.

The workflow behind ``kappa fit`` (and ``kappa predict --band``). Chosen parameters of a config
("free" dotted keys such as ``material.gruneisen`` or ``scattering.boundary.grain_size``) are
adjusted so that the Callaway model matches measured lattice conductivities; all other values
stay as the config gives them.

Method (decisions, also in the README):

* **Transformed space.** A parameter whose allowed range is ``> 0`` or ``>= 0`` with no upper
  limit (velocities, Debye temperatures, Grüneisen parameters, grain size, the Umklapp scale,
  mass variance, ...) is fitted as u = ln(value); its start must then be > 0. A parameter with
  a finite allowed range (specularity, [0, 1)) is fitted as itself, within that range.
  Optional bounds (``low:high``) narrow the search; without them a log-space parameter may move
  at most :data:`SEARCH_DECADES` decades from its start (reported as "search limit" if hit).
* **Start** is the value the config resolves to (defaults and derived values included).
  Freeing a key of a mechanism that is absent from the config needs a start:
  ``scattering.boundary.grain_size=1um`` (the same as ``--set`` plus ``--free``).
* **Residuals.** With uncertainties σ_i (column ``kappa_L_err``, or half of
  ``kappa_L_high − kappa_L_low``): r_i = (κ_model − κ_i)/σ_i, χ² = Σ r_i², and the covariance is
  (JᵀJ)⁻¹ with the σ taken as true (not rescaled). Without uncertainties: relative residuals
  r_i = ln κ_model − ln κ_i, and the covariance s²(JᵀJ)⁻¹ with s² = RSS/(n − k), i.e. the errors
  are scaled by the residual scatter.
* **Solver.** :func:`scipy.optimize.least_squares` (trust-region reflective, bounds in the
  transformed space), Jacobian by forward differences evaluated in one batched kernel call;
  the covariance uses central differences at the optimum. Several seeded starts (the config's
  value first, then uniform within the bounds, or ±1 decade in log space); the best is kept and
  the number of starts reaching it is reported.
* **Uncertainties.** ``stderr`` is the delta-method standard error in the parameter's own unit
  (value·σ_u for log-space parameters); ``low68``/``high68`` is the 68 % interval
  exp(u ± σ_u) (log space) or value ± σ (linear), which is asymmetric for log-space parameters.
  The correlation matrix is the same in both spaces.
* **Information criteria.** Weighted: AIC = χ² + 2k, BIC = χ² + k ln n. Unweighted:
  AIC = n ln(RSS/n) + 2k, BIC = n ln(RSS/n) + k ln n (Gaussian likelihood, constants dropped;
  only differences between fits to the same data mean anything).
* **Warnings** (also kept in :attr:`FitResult.warnings`): a parameter at a bound or search
  limit; |correlation| > 0.9; a free parameter whose release does not lower BIC by at least 2
  (each is refitted held at its start); a fitted boundary length more than 10× away from the
  grain size written in the config; χ²_red > 3 (weighted fits); data rising above the
  high-temperature power-law trend A·T⁻ⁿ (possible bipolar part, which the lattice model lacks).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from kappa.core.evaluator import (
    branch_prefactors,
    check_convergence,
    conductivity_from_rates,
    rate_tables,
)
from kappa.core.scattering import NPOW, Parameter
from kappa.errors import ConfigError, DataError, KappaError, warn
from kappa.io.config import (
    Config,
    check_temperatures,
    config_from_dict,
    numeric_keys,
    parameter_for,
    set_value,
    unused_key,
)
from kappa.io.units import format_quantity, parse_quantity, unit_factor
from kappa.workflows.predict import CALLAWAY_CITATION, Prediction, predict

__all__ = [
    "FitData",
    "FreeParameter",
    "FittedParameter",
    "SampleFit",
    "FitResult",
    "SeriesSample",
    "Series",
    "Band",
    "fit_data",
    "read_fit_data",
    "parse_window",
    "parse_bounds",
    "fit",
    "fit_series",
    "series_from_dict",
    "fit_curves",
    "fitted_yaml_data",
    "fit_record",
    "read_fit_record",
    "prediction_band",
    "model_values",
    "SEARCH_DECADES",
    "CORRELATION_LIMIT",
    "FIT_CITATIONS",
]

SEARCH_DECADES = 6.0  #: default search range of a log-space parameter: start ×/÷ 10^6
CORRELATION_LIMIT = 0.9  #: |r| above this: "not separately determined"
DELTA_BIC = 2.0  #: freeing a parameter must lower BIC by at least this much
BOUNDARY_FACTOR = 10.0  #: fitted boundary length vs. the config's grain size
CHI2_RED_HIGH = 3.0  #: weighted fit: model misses the data by more than the uncertainties
BIPOLAR_EXCESS = 0.10  #: relative rise above the high-T power-law trend that is flagged
_SAME_MINIMUM = 1e-6  #: relative cost difference counted as "the same minimum"
_STEP = 1e-6  #: finite-difference step in the transformed space (relative)

FIT_CITATIONS = [
    "Least squares: trust-region reflective method, M. A. Branch, T. F. Coleman & Y. Li, "
    "SIAM J. Sci. Comput. 21, 1 (1999), as implemented in scipy.optimize.least_squares",
    "AIC: H. Akaike, IEEE Trans. Autom. Control 19, 716 (1974); BIC: G. Schwarz, "
    "Ann. Stat. 6, 461 (1978)",
]

_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._+-]*$")


# --- data -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FitData:
    """Measured κ_L(T) prepared for a fit (inside the window, validated).

    Attributes
    ----------
    name : str
        Label (the file name or the sample name).
    temperature : ndarray
        [K], strictly increasing.
    kappa_L : ndarray
        Measured lattice conductivity [W/(m K)], all > 0.
    sigma : ndarray or None
        One-standard-deviation uncertainty of ``kappa_L`` [W/(m K)], or None.
    sigma_source : str
        Where ``sigma`` came from (column names), ``""`` if none.
    window : tuple of float or None
        (low, high) [K] the data were restricted to (either may be ±inf).
    dropped : tuple of str
        What was left out, one line each (NaN rows, rows outside the window).
    source : str
        File the data came from.
    """

    name: str
    temperature: np.ndarray
    kappa_L: np.ndarray
    sigma: np.ndarray | None = None
    sigma_source: str = ""
    window: tuple[float, float] | None = None
    dropped: tuple[str, ...] = ()
    source: str = "<arrays>"

    @property
    def size(self) -> int:
        return int(self.temperature.size)


def parse_window(text: str | None, key: str = "--window") -> tuple[float, float] | None:
    """``"100K:600K"`` → (100.0, 600.0) [K]; either side may be empty (``"300K:"``)."""
    if text is None or not str(text).strip():
        return None
    text = str(text)
    if text.count(":") != 1:
        raise ConfigError(key, text, "must be LOW:HIGH with temperatures, e.g. 100K:600K "
                          "(one side may be empty)")
    lo_t, hi_t = (s.strip() for s in text.split(":"))
    lo = parse_quantity(lo_t, "K", key) if lo_t else -math.inf
    hi = parse_quantity(hi_t, "K", key) if hi_t else math.inf
    if not lo < hi:
        raise ConfigError(key, text, "the lower temperature must be below the upper one")
    return lo, hi


def _fmt_T(values) -> str:
    return ", ".join(f"{t:g} K" for t in values)


def fit_data(temperature, kappa_L, sigma=None, *, window: tuple[float, float] | str | None = None,
             name: str = "data", source: str = "<arrays>", sigma_source: str = "sigma",
             nan: str = "raise") -> FitData:
    """Validate measured κ_L(T) for a fit.

    Parameters
    ----------
    temperature : array_like
        [K], finite, > 0, strictly increasing.
    kappa_L : array_like
        Lattice thermal conductivity [W/(m K)]; must be > 0 inside the window.
    sigma : array_like, optional
        Its one-standard-deviation uncertainty [W/(m K)], > 0.
    window : (low, high) [K] or str, optional
        Keep only LOW <= T <= HIGH.
    nan : {"raise", "omit"}
        NaN in T, κ_L or σ: error (default) or drop the row (reported in ``dropped``).

    Raises
    ------
    DataError
        Non-increasing or non-positive T, NaN (with ``raise``), κ_L <= 0 or σ <= 0 in the window,
        no points left.
    """
    if nan not in ("raise", "omit"):
        raise DataError("--nan", nan, "raise or omit")
    T = np.atleast_1d(np.asarray(temperature, dtype=float)).copy()
    k = np.atleast_1d(np.asarray(kappa_L, dtype=float)).copy()
    s = None if sigma is None else np.atleast_1d(np.asarray(sigma, dtype=float)).copy()
    if k.shape != T.shape or (s is not None and s.shape != T.shape):
        raise DataError(source, f"{T.size} temperatures, {k.size} values",
                        "temperature, kappa_L (and its uncertainty) need the same length")
    dropped: list[str] = []
    bad = ~np.isfinite(T) | ~np.isfinite(k)
    if s is not None:
        bad |= ~np.isfinite(s)
    if np.any(bad):
        rows = ", ".join(str(i + 1) for i in np.flatnonzero(bad))
        if nan == "raise":
            raise DataError(f"{source}, data rows {rows}", "NaN or blank",
                            "T, kappa_L and its uncertainty must be numbers; use --nan omit to "
                            "drop such rows")
        dropped.append(f"{source}: data rows {rows} dropped (NaN or blank, --nan omit)")
        T, k = T[~bad], k[~bad]
        s = None if s is None else s[~bad]
    if T.size and np.any(T <= 0):
        raise DataError(f"{source}, column 'T'", _fmt_T(T[T <= 0]), "temperatures must be > 0 K")
    if T.size > 1 and np.any(np.diff(T) <= 0):
        i = int(np.flatnonzero(np.diff(T) <= 0)[0])
        raise DataError(f"{source}, column 'T'", f"{T[i]:g} K followed by {T[i + 1]:g} K",
                        "temperatures must be strictly increasing")
    win = parse_window(window, "window") if isinstance(window, str) else window
    if win is not None:
        keep = (T >= win[0]) & (T <= win[1])
        if np.any(~keep):
            dropped.append(f"{source}: {int(np.sum(~keep))} points outside the window "
                           f"{_window_text(win)} left out")
        T, k = T[keep], k[keep]
        s = None if s is None else s[keep]
    if T.size == 0:
        raise DataError(source, "no data points" + (f" in the window {_window_text(win)}"
                                                    if win else ""),
                        "the fit needs measured points; check --window")
    if np.any(k <= 0):
        raise DataError(f"{source}, column 'kappa_L'", "<= 0 at " + _fmt_T(T[k <= 0]),
                        "the lattice conductivity of the model is > 0; leave these temperatures "
                        "out with --window, or revisit the Lorenz number chosen in 'kappa split'")
    if s is not None and np.any(s <= 0):
        raise DataError(f"{source}, column '{sigma_source}'", "<= 0 at " + _fmt_T(T[s <= 0]),
                        "uncertainties must be > 0")
    return FitData(name, T, k, s, sigma_source if s is not None else "", win, tuple(dropped),
                   source)


def _window_text(win: tuple[float, float] | None) -> str:
    if win is None:
        return "all"
    lo = "" if math.isinf(win[0]) else f"{win[0]:g} K"
    hi = "" if math.isinf(win[1]) else f"{win[1]:g} K"
    return f"{lo}:{hi}"


#: Other names accepted for the columns of fit data (exact spelling).
FIT_ALIASES = {
    "T": ("temperature", "Temperature", "temp"),
    "kappa_L": ("kappa_lattice", "kappaL", "k_L", "kappa_lat"),
    "kappa_L_err": ("kappa_L_sigma", "kappa_L_unc", "kappa_L_error", "dkappa_L"),
}


def _fit_columns(table):
    """Rename accepted alternative column names (``kappa_lattice``, ...) to the canonical ones."""
    from dataclasses import replace

    from kappa.io.tables import Table

    lookup = {a: name for name, aliases in FIT_ALIASES.items() for a in aliases}
    cols: dict = {}
    for col in table.columns.values():
        name = lookup.get(col.name, col.name)
        if name in cols:
            raise DataError(f"{table.source}, column '{col.header}'", col.name,
                            f"gives the same quantity as column '{cols[name].header}'; keep one")
        cols[name] = replace(col, name=name)
    return Table(source=table.source, columns=cols)


def read_fit_data(path: str | Path, *, window: tuple[float, float] | str | None = None,
                  nan: str = "raise", name: str | None = None) -> FitData:
    """Read a CSV with ``T [K]`` and ``kappa_L [W/(m K)]`` (units converted) for a fit.

    Uncertainties are taken from ``kappa_L_err`` or, failing that, from half the width of
    ``kappa_L_low``..``kappa_L_high`` (the 68 % band that ``kappa split`` writes).
    """
    from kappa.io.tables import read_table

    table = _fit_columns(read_table(path))
    src = table.source
    if "T" not in table:
        raise DataError(src, "no column 'T [...]'", "the fit needs a temperature column, "
                        "e.g. 'T [K]'")
    if "kappa_L" not in table:
        hint = (" (this file has total 'kappa'; run 'kappa split' first to get the lattice part)"
                if "kappa" in table else "")
        raise DataError(src, "no column 'kappa_L [...]'",
                        "the fit needs the lattice conductivity, e.g. 'kappa_L [W/(m K)]'" + hint)
    T = table.get("T", "K")
    k = table.get("kappa_L", "W/(m K)")
    sigma, how = None, ""
    if "kappa_L_err" in table:
        sigma, how = table.get("kappa_L_err", "W/(m K)"), "kappa_L_err"
    elif "kappa_L_low" in table and "kappa_L_high" in table:
        lo, hi = table.get("kappa_L_low", "W/(m K)"), table.get("kappa_L_high", "W/(m K)")
        if np.any(hi < lo):
            raise DataError(f"{src}, column 'kappa_L_high'", "below kappa_L_low",
                            "kappa_L_high must be >= kappa_L_low in every row")
        sigma, how = 0.5 * (hi - lo), "kappa_L_low/kappa_L_high (half width)"
    return fit_data(T, k, sigma, window=window, name=name or Path(path).stem, source=src,
                    sigma_source=how, nan=nan)


# --- free parameters --------------------------------------------------------------------------


@dataclass(frozen=True)
class FreeParameter:
    """One adjustable parameter of a fit.

    Attributes
    ----------
    key : str
        Dotted config key.
    sample : str or None
        Sample name for a per-sample parameter of a series; None when shared by all samples.
    parameter : Parameter
        Its declaration (SI unit, allowed range, display unit).
    start : float
        Start value [SI].
    low, high : float
        Bounds [SI] given by the user, or the allowed range (±inf / 0 when open).
    space : {"log", "linear"}
        Transformed space of the fit.
    search : tuple of float
        Bounds in the transformed space used by the solver.
    user_bounds : bool
        Whether ``low``/``high`` came from the user.
    """

    key: str
    sample: str | None
    parameter: Parameter
    start: float
    low: float
    high: float
    space: str
    search: tuple[float, float]
    user_bounds: bool = False

    @property
    def label(self) -> str:
        return self.key if self.sample is None else f"{self.sample}:{self.key}"

    def to_value(self, u):
        return np.exp(u) if self.space == "log" else u

    def to_u(self, value):
        return np.log(value) if self.space == "log" else value


def _bare_unit(key: str, p: Parameter) -> str:
    return "u" if key.endswith("atomic_mass") else p.unit


def parse_bounds(key: str, text: str | tuple) -> tuple[float, float]:
    """Bounds of a free key: ``"10nm:1mm"`` or a (low, high) pair of SI floats (None = open)."""
    p = parameter_for(key)
    opt = f"--bounds {key}"
    if isinstance(text, str):
        if text.count(":") != 1:
            raise ConfigError(opt, text, "must be LOW:HIGH with units, e.g. 10nm:1mm (one side "
                              "may be empty)")
        a, b = (s.strip() for s in text.split(":"))
        lo = parse_quantity(a, p.unit, opt, bare=_bare_unit(key, p)) if a else None
        hi = parse_quantity(b, p.unit, opt, bare=_bare_unit(key, p)) if b else None
    else:
        lo, hi = text
    shown = text if isinstance(text, str) else f"{lo}:{hi}"
    lo = p.low if lo is None else float(lo)
    hi = p.high if hi is None else float(hi)
    if not lo < hi:
        raise ConfigError(opt, shown, "the lower bound must be below the upper bound")
    for v in (lo, hi):
        if math.isfinite(v) and not (v >= p.low and v <= p.high):
            raise ConfigError(opt, shown, "bounds outside the allowed range: " + p.allowed())
    return lo, hi


def _space(p: Parameter) -> str:
    return "log" if (p.low == 0.0 and p.high == math.inf) else "linear"


def _free_parameter(config: Config, key: str, sample: str | None,
                    bounds: tuple[float, float] | None) -> FreeParameter:
    available = numeric_keys(config)
    p = parameter_for(key)  # unknown / non-numeric key -> ConfigError naming the key
    if key not in available:
        raise ConfigError(key, allowed="not a numeric key of this config; keys that can be "
                          "freed here: " + ", ".join(available))
    parts = key.split(".")
    if parts[0] == "scattering" and config.scattering.get(parts[1]) is None:
        raise ConfigError(key, allowed=f"scattering.{parts[1]} is not in the config, so there "
                          f"is no start value; add it to the config or give a start, e.g. "
                          f"--free {key}={_example_start(key)}")
    reason = unused_key(config, key)
    if reason:
        raise ConfigError(f"--free {key}", allowed=f"has no effect in this config: {reason}")
    start = config.value(key)
    space = _space(p)
    label = key if sample is None else f"{key} (sample {sample})"
    if space == "log" and not start > 0:
        raise ConfigError(label, format_quantity(start, p.unit, 6),
                          "is fitted in log space and needs a start value > 0; give one with "
                          f"--free {key}=START")
    if bounds is None:
        lo, hi, user = p.low, p.high, False
    else:
        (lo, hi), user = bounds, True
        if not lo <= start <= hi:
            raise ConfigError(f"--bounds {key}", f"{_show(lo, p)}:{_show(hi, p)}",
                              f"must contain the start value {_show(start, p)}"
                              + (f" of sample {sample}" if sample else ""))
    if space == "log":
        span = SEARCH_DECADES * math.log(10.0)
        u0 = math.log(start)
        s_lo = math.log(lo) if lo > 0 else u0 - span
        s_hi = math.log(hi) if math.isfinite(hi) else u0 + span
    else:
        eps = 1e-9 * max(1.0, abs(lo), abs(hi)) if (math.isfinite(lo) and math.isfinite(hi)) \
            else 1e-9
        s_lo = lo + (eps if p.low_open and lo == p.low else 0.0)
        s_hi = hi - (eps if p.high_open and hi == p.high else 0.0)
        if not s_lo <= start <= s_hi:
            raise ConfigError(label, _show(start, p), "start value outside the allowed range: "
                              + p.allowed())
    return FreeParameter(key, sample, p, float(start), float(lo), float(hi), space,
                         (float(s_lo), float(s_hi)), user)


def _example_start(key: str) -> str:
    return {"grain_size": "1um", "mass_variance": "1e-4", "strain_variance": "1e-4",
            "ratio": "1", "scale": "1", "specularity": "0.1"}.get(key.split(".")[-1], "VALUE")


def _show(value: float, p: Parameter) -> str:
    unit = p.display or p.unit
    if unit in ("1", ""):
        return f"{value:.6g}"
    scale, offset = unit_factor(p.unit, unit, "display")
    return f"{value * scale + offset:.6g} {unit}"


def _split_start(item: str) -> tuple[str, Any | None]:
    """``"key"`` → (key, None); ``"key=1um"`` → (key, "1um")."""
    if "=" not in item:
        key = item.strip()
        if not key:
            raise ConfigError("--free", item, "must be KEY or KEY=START, e.g. material.gruneisen")
        return key, None
    key, _, text = item.partition("=")
    key, text = key.strip(), text.strip()
    if not key or not text:
        raise ConfigError("--free", item, "must be KEY or KEY=START, e.g. "
                          "scattering.boundary.grain_size=1um")
    return key, text


def _bounds_from_items(items: Sequence[str], bounds: dict) -> list[str]:
    """Move ``KEY=LOW:HIGH`` items into ``bounds`` (in place); return the remaining items."""
    out = []
    for item in items:
        key, text = _split_start(item)
        if text is not None and ":" in text:
            if key in bounds:
                raise ConfigError(f"--free {key}", text, "bounds given twice (here and in "
                                  "--bounds); give them once")
            bounds[key] = text
            out.append(key)
        else:
            out.append(item)
    return out


def _apply_starts(data: Mapping, items: Sequence[str]) -> tuple[dict, list[str]]:
    """Set ``KEY=START`` items in plain config data; return (data, keys)."""
    from kappa.io.config import parse_override

    out, keys = dict(data), []
    for item in items:
        key, text = _split_start(item)
        parameter_for(key)
        if key in keys:
            raise ConfigError("--free", key, "each key may be freed once")
        keys.append(key)
        if text is not None:
            _, value = parse_override(f"{key}={text}")
            out = set_value(out, key, value)
    return out, keys


# --- model evaluation (batched) ---------------------------------------------------------------


def model_values(jobs: Sequence[tuple[Config, np.ndarray]]) -> list[np.ndarray]:
    """κ_L [W/(m K)] of several (config, temperatures) pairs in one kernel call.

    Equivalent to ``lattice_conductivity(cfg.material, cfg.scattering, T)`` for each pair; the
    samples of all pairs are flattened into one call of
    :func:`kappa.conductivity.conductivity_from_rates`, which is what makes finite-difference
    Jacobians and parameter draws cheap.
    """
    x_top, pre, res, nrm, temps, sizes = [], [], [], [], [], []
    for cfg, T in jobs:
        T = np.asarray(T, dtype=float)
        m = cfg.material
        tables = rate_tables(m, cfg.scattering, T)
        check_convergence(tables.resistive)
        pre.extend(branch_prefactors(m, T))
        for b in m.branches:
            x_top.append(b.debye_temperature / T)
            temps.append(T)
        res.append(tables.resistive.reshape(-1, NPOW))
        nrm.append(tables.normal.reshape(-1, NPOW))
        sizes.append((len(m.branches), T.size))
    k = conductivity_from_rates(np.concatenate(x_top), np.concatenate(pre),
                                np.concatenate(res), np.concatenate(nrm), np.concatenate(temps))
    out, i = [], 0
    for nb, nt in sizes:
        out.append(k[i: i + nb * nt].reshape(nb, nt).sum(axis=0))
        i += nb * nt
    return out


@dataclass(frozen=True)
class SeriesSample:
    """One sample of a series fit: its name, its config (after per-sample settings), its data."""

    name: str
    config: Config
    data: FitData


class _Problem:
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
        self._cache: tuple[np.ndarray, np.ndarray] | None = None

    def configs(self, u: np.ndarray) -> list[Config]:
        out = []
        for s in self.samples:
            values = {p.key: float(p.to_value(ui)) for p, ui in zip(self.params, u, strict=True)
                      if p.sample is None or p.sample == s.name}
            out.append(s.config.with_values(values) if values else s.config)
        return out

    def model(self, U: np.ndarray) -> np.ndarray:
        """κ_model for each row of U, shape (len(U), n)."""
        jobs = []
        for u in U:
            jobs += [(c, s.data.temperature) for c, s in zip(self.configs(u), self.samples,
                                                             strict=True)]
        vals = model_values(jobs)
        ns = len(self.samples)
        return np.array([np.concatenate(vals[i * ns:(i + 1) * ns]) for i in range(len(U))])

    def residuals_of(self, model: np.ndarray) -> np.ndarray:
        data = np.concatenate([s.data.kappa_L for s in self.samples])
        if self.weighted:
            sig = np.concatenate([s.data.sigma for s in self.samples])
            return (model - data) / sig
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log(model) - np.log(data)

    def residuals(self, U: np.ndarray) -> np.ndarray:
        try:
            r = self.residuals_of(self.model(U))
        except KappaError:
            # a trial point the model rejects (e.g. a divergent rate set): steer the solver away
            r = np.full((len(U), self.n), 1e6)
        return np.where(np.isfinite(r), r, 1e6)

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


def _solve(problem: _Problem, starts: Sequence[np.ndarray], fixed: Mapping[int, float] = ()
           ) -> tuple[Any, int, int]:
    """Run least_squares from each start; return (best result, n converged to best, nfev)."""
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


ALT_DELTA_CHI2 = 4.0  #: another start within this Δχ² of the best, far away, is reported


def _other_minimum(best, u: np.ndarray, sd: np.ndarray, scale: float, params) -> str:
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
            shown = ", ".join(f"{params[i].label} = {params[i].to_value(r.u[i]):.4g}" for i in far)
            return (f"another start ended at clearly different values ({shown}) with χ² only "
                    f"{d_chi2:.2g} higher: the best fit is not unique and the standard errors "
                    "understate the uncertainty; fix or bound one of these keys")
    return ""


class _Null:
    """The result of a 'fit' with no free parameter."""

    def __init__(self, u, r):
        self.u, self.fun, self.cost, self.status = u, r, 0.5 * float(r @ r), 1


BAND_MAX_LOG_SIGMA = math.log(10.0)  #: --band refuses a log-space parameter with σ_u above this
MAX_EVALUATIONS = 1000  #: solver evaluations per start before it stops (reported if reached)
START_DECADES = 3.0  #: extra starts of an unbounded log-space scattering parameter: ± decades
START_DECADES_MATERIAL = 1.0  #: the same for material parameters (known within a decade)


def _starts(problem: _Problem, count: int, seed: int) -> list[np.ndarray]:
    """The config's values first, then seeded starts stratified over each parameter's range.

    Each parameter's range (its bounds, or ±START_DECADES decades around the start for an
    unbounded log-space scattering parameter, ±START_DECADES_MATERIAL for a material one) is cut into ``count − 1`` equal strata; every extra start
    takes one point from a different stratum per parameter (a Latin hypercube), so the starts
    cover the range even when there are few of them.
    """
    rng = np.random.default_rng(seed)
    out = [problem.u0.copy()]
    extra = max(0, count - 1)
    if not extra:
        return out
    columns = []
    for i, p in enumerate(problem.params):
        lo, hi = p.search
        u0 = problem.u0[i]
        if p.space == "log" and not (p.low > 0 and math.isfinite(p.high)):
            decades = START_DECADES_MATERIAL if p.key.startswith("material.") else START_DECADES
            width = decades * math.log(10.0)
            lo, hi = max(lo, u0 - width), min(hi, u0 + width)
        elif not (math.isfinite(lo) and math.isfinite(hi)):
            w = 0.5 * max(abs(u0), 1e-12)
            lo, hi = max(lo, u0 - w), min(hi, u0 + w)
        strata = (rng.permutation(extra) + rng.uniform(0.0, 1.0, extra)) / extra
        columns.append(lo + strata * (hi - lo))
    for k in range(extra):
        out.append(np.array([col[k] for col in columns]))
    return out


# --- results ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class FittedParameter:
    """A fitted value with its uncertainty (values in SI; ``display`` is the unit shown).

    ``stderr`` is the delta-method standard error; ``low68``/``high68`` the 68 % interval
    (exp(u ± σ_u) for log-space parameters). ``at_bound`` is ``""``, ``"lower"``, ``"upper"``
    or ``"search limit"``.
    """

    key: str
    sample: str | None
    value: float
    stderr: float
    low68: float
    high68: float
    start: float
    unit: str
    display: str
    space: str
    at_bound: str

    @property
    def label(self) -> str:
        return self.key if self.sample is None else f"{self.sample}:{self.key}"

    def shown(self, value: float) -> float:
        """``value`` [SI] converted to the display unit."""
        if self.display == self.unit:
            return value
        scale, offset = unit_factor(self.unit, self.display, self.key)
        return value * scale + offset


@dataclass(frozen=True)
class SampleFit:
    """Data, fitted curve and residuals of one sample.

    ``residual`` is κ_fit − κ [W/(m K)]; ``relative`` is ln κ_fit − ln κ [1]; ``normalized`` is
    the residual the fit minimised (r_i: (κ_fit − κ)/σ, or the relative residual).
    """

    name: str
    data: FitData
    kappa_L_fit: np.ndarray
    residual: np.ndarray
    relative: np.ndarray
    normalized: np.ndarray
    config: Config = field(repr=False)
    start_config: Config = field(repr=False)


@dataclass(frozen=True)
class FitResult:
    """Outcome of :func:`fit` or :func:`fit_series`.

    Attributes
    ----------
    parameters : tuple of FittedParameter
    samples : tuple of SampleFit
    u, covariance : ndarray
        Optimum and covariance in the transformed space (ln value for log-space parameters).
    correlation : ndarray
    weighted : bool
        True when the residuals were weighted by measurement uncertainties (absolute χ²).
    n_points, n_free, dof : int
    chi2 : float
        Σ r_i² at the optimum (weighted: χ²; unweighted: RSS of the log residuals).
    chi2_red : float or None
        χ²/dof for weighted fits; None otherwise.
    scatter : float
        RMS of the residuals the covariance is scaled with (unweighted: relative, s).
    aic, bic : float
    starts, converged : int
        Number of starts, and how many reached the best minimum.
    delta_bic : dict
        BIC with each parameter held at its start minus BIC of the fit.
    warnings : tuple of str
    citations : list of str
    """

    parameters: tuple[FittedParameter, ...]
    samples: tuple[SampleFit, ...]
    u: np.ndarray
    covariance: np.ndarray
    correlation: np.ndarray
    weighted: bool
    n_points: int
    n_free: int
    dof: int
    chi2: float
    chi2_red: float | None
    scatter: float
    aic: float
    bic: float
    starts: int
    converged: int
    nfev: int
    delta_bic: dict[str, float]
    warnings: tuple[str, ...]
    citations: list[str]
    spaces: tuple[str, ...]

    @property
    def config(self) -> Config:
        """The fitted config of the first (for a single fit: the only) sample."""
        return self.samples[0].config

    def value(self, key: str, sample: str | None = None) -> float:
        """Fitted SI value of ``key`` (per-sample parameters need ``sample``)."""
        for p in self.parameters:
            if p.key == key and (p.sample is None or p.sample == sample):
                return p.value
        raise KeyError(key)

    def parameter(self, key: str, sample: str | None = None) -> FittedParameter:
        for p in self.parameters:
            if p.key == key and (p.sample is None or p.sample == sample):
                return p
        raise KeyError(key)

    @property
    def weighting(self) -> str:
        if self.weighted:
            return "weighted by the measurement uncertainties (absolute chi-square)"
        return ("no uncertainties given: relative residuals ln(kappa_fit/kappa), errors scaled "
                "by the residual scatter")


def _covariance(J: np.ndarray, scale: float) -> np.ndarray:
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


def _criteria(chi2: float, n: int, k: int, weighted: bool) -> tuple[float, float]:
    base = chi2 if weighted else n * math.log(max(chi2, 1e-300) / n)
    return base + 2 * k, base + k * math.log(n)


# --- the fits ---------------------------------------------------------------------------------


def fit(config: Config, data: FitData, free: Sequence[str], *,
        bounds: Mapping[str, str | tuple] | None = None, starts: int = 5, seed: int = 0,
        checks: bool = True) -> FitResult:
    """Fit free parameters of ``config`` to measured κ_L(T).

    Parameters
    ----------
    config : Config
        The model; every non-free value stays as given.
    data : FitData
        From :func:`fit_data` or :func:`read_fit_data`.
    free : sequence of str
        Dotted keys to adjust, each optionally with a start: ``"material.gruneisen"``,
        ``"scattering.boundary.grain_size=1um"``.
    bounds : mapping, optional
        ``{key: "low:high"}`` (units in the string) or ``{key: (low, high)}`` [SI].
    starts : int
        Number of starts (the first is the config's value; the others are seeded draws).
    seed : int
        Seed of the start draws.
    checks : bool
        Run the diagnostics (over-parametrisation refits, bipolar check) and issue warnings.

    Returns
    -------
    FitResult

    Examples
    --------
    >>> # res = fit(cfg, read_fit_data("k.csv", window="100K:600K"), ["material.gruneisen"])
    """
    return fit_series([SeriesSample(data.name, config, data)], shared=free, per_sample=(),
                      bounds=bounds, starts=starts, seed=seed, checks=checks)


def fit_series(samples: Sequence[SeriesSample], shared: Sequence[str] = (),
               per_sample: Sequence[str] = (), *, bounds: Mapping[str, str | tuple] | None = None,
               starts: int = 5, seed: int = 0, checks: bool = True) -> FitResult:
    """One joint least-squares fit over several samples.

    ``shared`` keys take one value for all samples; ``per_sample`` keys one value per sample.
    Items may carry a start (``KEY=START``), applied to every sample's config, or bounds
    (``KEY=LOW:HIGH``, e.g. ``scattering.boundary.grain_size=10nm:100um``). Weighting is by
    uncertainties only if every sample has them (otherwise relative for all, with a warning).
    See the module docstring for the method.
    """
    if isinstance(starts, bool) or not isinstance(starts, (int, np.integer)) or starts < 1:
        raise ConfigError("--starts", starts, "must be a whole number >= 1")
    if not samples:
        raise ConfigError("samples", allowed="at least one sample is needed")
    names = [s.name for s in samples]
    if len(set(names)) != len(names):
        raise ConfigError("samples", ", ".join(names), "sample names must be unique")
    # KEY=LOW:HIGH items are bounds (the start stays the config value)
    bounds = dict(bounds or {})
    shared = _bounds_from_items(shared, bounds)
    per_sample = _bounds_from_items(per_sample, bounds)
    # starts given as KEY=START apply to every sample's config
    shared_keys = [_split_start(item)[0] for item in shared]
    per_keys = [_split_start(item)[0] for item in per_sample]
    both = set(shared_keys) & set(per_keys)
    if both:
        raise ConfigError("free keys", sorted(both)[0], "a key is either shared or per sample, "
                          "not both")
    as_written = {s.name: s.config for s in samples}  # before any KEY=START
    new_samples = []
    for s in samples:
        data, _ = _apply_starts(s.config.data, [*shared, *per_sample])
        cfg = (s.config if data == s.config.data
               else config_from_dict(data, s.config.source, check_physics=False))
        new_samples.append(SeriesSample(s.name, cfg, s.data))
    samples = new_samples
    both = set(shared_keys) & set(per_keys)
    if both:
        raise ConfigError("--free", sorted(both)[0], "a key is either shared or per sample")
    if not shared_keys and not per_keys:
        raise ConfigError("--free", allowed="name at least one key to fit, e.g. --free "
                          "material.gruneisen")
    for key in bounds:
        if key not in shared_keys and key not in per_keys:
            raise ConfigError(f"--bounds {key}", bounds[key], "bounds are only for free keys")
    parsed = {key: parse_bounds(key, b) for key, b in bounds.items()}
    params: list[FreeParameter] = []
    for key in shared_keys:
        first = _free_parameter(samples[0].config, key, None, parsed.get(key))
        for s in samples[1:]:
            other = _free_parameter(s.config, key, None, parsed.get(key))
            if not math.isclose(other.start, first.start, rel_tol=1e-12):
                raise ConfigError(key, f"{_show(first.start, first.parameter)} in "
                                  f"{samples[0].name}, {_show(other.start, other.parameter)} in "
                                  f"{s.name}", "a shared key needs the same start in every "
                                  "sample (do not set it per sample)")
        params.append(first)
    for key in per_keys:
        for s in samples:
            params.append(_free_parameter(s.config, key, s.name, parsed.get(key)))
    if len(samples) == 1:  # a single fit: no sample labels
        params = [FreeParameter(p.key, None, p.parameter, p.start, p.low, p.high, p.space,
                                p.search, p.user_bounds) for p in params]
    k = len(params)
    n = sum(s.data.size for s in samples)
    if n < k + 2:
        detail = ", ".join(f"{s.data.size} in {s.name}"
                           + (f" (window {_window_text(s.data.window)})" if s.data.window
                              else "") for s in samples)
        raise DataError("--window" if any(s.data.window for s in samples) else "data",
                        f"{n} point{'s' if n != 1 else ''}: {detail}",
                        f"fitting {k} free parameter{'s' if k != 1 else ''} needs at least "
                        f"{k + 2} points; widen "
                        "--window or free fewer parameters")
    have = [s.data.sigma is not None for s in samples]
    weighted = all(have)
    notes: list[str] = []
    if len(samples) > 1 and per_keys:
        for s in samples:  # each sample's own parameters need data of that sample
            if s.data.size < len(per_keys) + 2:
                notes.append(f"sample {s.name} has {s.data.size} point"
                             f"{'s' if s.data.size != 1 else ''} for its {len(per_keys)} own "
                             f"parameter{'s' if len(per_keys) != 1 else ''}: its values rest on "
                             "too few points to be checked by the data")
    if any(have) and not weighted:
        notes.append("uncertainties ignored: sample(s) "
                     + ", ".join(s.name for s, h in zip(samples, have, strict=True) if not h)
                     + " have none, so all samples are fitted with relative residuals")
    for s in samples:
        check_temperatures(s.config, s.data.temperature)
    problem = _Problem(samples, params, weighted)
    # the start must be computable (raises a clear ConfigError otherwise)
    model_values([(c, s.data.temperature) for c, s in zip(problem.configs(problem.u0), samples,
                                                          strict=True)])
    best, same, nfev = _solve(problem, _starts(problem, int(starts), seed))
    u = best.u
    r = problem.fun(u)
    chi2 = float(r @ r)
    dof = n - k
    J = problem.jac_central(u)
    scale = 1.0 if weighted else chi2 / dof
    cov = _covariance(J, scale)
    sd = np.sqrt(np.diag(cov))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    corr[~np.isfinite(corr)] = np.nan
    np.fill_diagonal(corr, 1.0)
    aic, bic = _criteria(chi2, n, k, weighted)
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
                                      p.parameter.unit, p.parameter.display or p.parameter.unit,
                                      p.space, _at_bound(p, u[i])))
    configs = problem.configs(u)
    model = problem.model(u[None, :])[0]
    sample_fits, i0 = [], 0
    r_all = problem.residuals_of(model)
    for s, cfg in zip(samples, configs, strict=True):
        m = model[i0:i0 + s.data.size]
        sample_fits.append(SampleFit(s.name, s.data, m, m - s.data.kappa_L,
                                     np.log(m) - np.log(s.data.kappa_L),
                                     r_all[i0:i0 + s.data.size], cfg, s.config))
        i0 += s.data.size
    delta_bic: dict[str, float] = {}
    messages = list(notes)
    alt = _other_minimum(best, u, sd, 1.0 if weighted else scale, params)
    if alt:
        messages.append(alt)
    if getattr(best, "status", 1) == 0:
        messages.append(f"the solver stopped after {MAX_EVALUATIONS} evaluations without "
                        "converging; the values are not a minimum (free fewer parameters or "
                        "give --bounds)")
    if checks:
        for i, p in enumerate(params):
            held, _, more = _solve(problem, [u], fixed={i: problem.u0[i]})
            nfev += more
            c_i = float(held.fun @ held.fun)
            delta_bic[p.label] = _criteria(c_i, n, k - 1, weighted)[1] - bic
        messages += _diagnostics(params, fitted, corr, delta_bic, sample_fits, weighted,
                                 chi2 / dof, as_written)
    cites = [CALLAWAY_CITATION]
    for s in sample_fits:
        cites += [c for c in s.config.scattering.citations() if c not in cites]
    cites += FIT_CITATIONS
    result = FitResult(
        tuple(fitted), tuple(sample_fits), u, cov, corr, weighted, n, k, dof, chi2,
        chi2 / dof if weighted else None, math.sqrt(chi2 / dof), aic, bic, int(starts), same,
        nfev, delta_bic, tuple(messages), cites, tuple(p.space for p in params))
    for msg in messages:
        warn(msg, stacklevel=2)
    return result


def _at_bound(p: FreeParameter, u: float) -> str:
    lo, hi = p.search
    tol = 1e-6 * max(1.0, hi - lo if math.isfinite(hi - lo) else abs(u))
    if u - lo <= tol:
        return "lower" if (p.space == "linear" or p.low > 0) else "search limit"
    if hi - u <= tol:
        return "upper" if (p.space == "linear" or math.isfinite(p.high)) else "search limit"
    return ""


def _diagnostics(params, fitted, corr, delta_bic, sample_fits, weighted, chi2_red,
                 as_written: Mapping[str, Config]) -> list[str]:
    out: list[str] = []
    for p, f in zip(params, fitted, strict=True):
        if f.at_bound == "search limit":
            out.append(f"{f.label} ran to its search limit ({_show(f.value, p.parameter)}, "
                       f"{SEARCH_DECADES:g} decades from its start): the data do not "
                       "constrain it; hold it fixed or give --bounds")
        elif f.at_bound:
            out.append(f"{f.label} = {_show(f.value, p.parameter)} is at its {f.at_bound} bound;"
                       " the best value may lie beyond it and its standard error is not "
                       "reliable")
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
        for name, config in as_written.items():
            if p.sample not in (None, name):
                continue
            written = _written_grain_size(config)
            if written is None:
                continue
            ratio = f.value / written
            if ratio > BOUNDARY_FACTOR or ratio < 1.0 / BOUNDARY_FACTOR:
                out.append(f"{f.label}: fitted boundary length {_show(f.value, p.parameter)} is "
                           f"{ratio:.3g}× the grain size in the config "
                           f"({_show(written, p.parameter)}); the boundary term may be standing "
                           "in for another mechanism")
    if weighted and chi2_red > CHI2_RED_HIGH:
        out.append(f"χ²_red = {chi2_red:.3g}: the model misses the data by more than their "
                   "uncertainties; the standard errors assume it does not")
    for s in sample_fits:
        flagged = _upturn(s.data)
        if flagged:
            out.append(f"{s.name}: κ_L rises above its high-temperature power-law trend at "
                       f"{_fmt_T(flagged)} (possible bipolar part, which the lattice model "
                       "lacks); consider --window up to below these temperatures")
    return out


def _written_grain_size(config: Config) -> float | None:
    try:
        text = config.data["scattering"]["boundary"]["grain_size"]
    except (KeyError, TypeError):
        return None
    try:
        return parse_quantity(text, "m", "scattering.boundary.grain_size")
    except KappaError:
        return None


def _upturn(data: FitData) -> list[float]:
    """Temperatures where κ_L rises above its high-temperature power-law trend (possible bipolar
    part).

    κ_L = A·T⁻ⁿ is fitted in log–log (n free: Umklapp-limited κ_L falls as T⁻¹ or a little
    faster) to the lower two thirds of the temperature range above twice the temperature of the
    κ_L maximum (all points when the data start past the maximum); points of the upper third are flagged when they exceed the extrapolation by
    more than 10 % and by more than 3× the RMS scatter of the fitted points about the trend.
    The scatter is used rather than the stated uncertainties, which are often mostly systematic
    (shared by all temperatures) and then say nothing about the shape.
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


# --- series files -----------------------------------------------------------------------------

_SERIES_KEYS = ("config", "shared", "per_sample", "bounds", "window", "samples", "notes")
_SAMPLE_KEYS = ("name", "data", "set", "window", "config")


@dataclass(frozen=True)
class Series:
    """A loaded series description: the arguments of :func:`fit_series` and the files read."""

    samples: tuple[SeriesSample, ...]
    shared: tuple[str, ...]
    per_sample: tuple[str, ...]
    bounds: dict[str, str]
    files: tuple[Path, ...]


def series_from_dict(data: Any, base: str | Path, *, nan: str = "raise") -> Series:
    """Validate a series description (as read from YAML) and load its configs and data.

    Returns a :class:`Series` for :func:`fit_series`. Relative paths are relative to ``base``
    (the series file's folder). Layout::

        config: base.yaml
        shared: [material.gruneisen, scattering.umklapp.scale]
        per_sample: [scattering.boundary.grain_size]
        bounds: {scattering.boundary.grain_size: "10 nm:1 mm"}   # optional
        window: 100K:700K                                        # optional, for every sample
        samples:
          - {name: A, data: a.csv, set: {scattering.boundary.grain_size: 2 um}}
          - {name: B, data: b.csv, window: 100K:500K, config: other.yaml}
    """
    from kappa.io.config import load_config

    base = Path(base)
    if not isinstance(data, dict):
        raise ConfigError("series", data, "must be a mapping with config, shared, per_sample, "
                          "samples")
    for k in data:
        if k not in _SERIES_KEYS:
            raise ConfigError(f"series.{k}", allowed="unknown key; allowed: "
                              + ", ".join(_SERIES_KEYS))
    shared = _key_list(data.get("shared"), "series.shared")
    per = _key_list(data.get("per_sample"), "series.per_sample")
    bounds = data.get("bounds") or {}
    if not isinstance(bounds, dict):
        raise ConfigError("series.bounds", bounds, "must be a mapping KEY: 'LOW:HIGH'")
    bounds = {str(k): str(v) for k, v in bounds.items()}
    window = data.get("window")
    items = data.get("samples")
    if not isinstance(items, list) or not items:
        raise ConfigError("series.samples", items, "must be a non-empty list of "
                          "{name, data, set, window, config}")
    shared_keys = [_split_start(item)[0] for item in shared]
    started = [_split_start(item)[0] for item in per if _split_start(item)[1] is not None]
    default_cfg = data.get("config")
    configs: dict[str, Config] = {}
    samples, files = [], []
    for i, item in enumerate(items):
        key = f"series.samples.{i}"
        if not isinstance(item, dict):
            raise ConfigError(key, item, "must be a mapping {name, data, ...}")
        for k in item:
            if k not in _SAMPLE_KEYS:
                raise ConfigError(f"{key}.{k}", allowed="unknown key; allowed: "
                                  + ", ".join(_SAMPLE_KEYS))
        name = item.get("name")
        if not isinstance(name, str) or not _NAME.match(name):
            raise ConfigError(f"{key}.name", name, "a name of letters, digits, '.', '_', '+', "
                              "'-' (used as a folder name)")
        if "data" not in item:
            raise ConfigError(f"{key}.data", allowed="missing; the CSV file with T and kappa_L")
        cfg_name = item.get("config", default_cfg)
        if cfg_name is None:
            raise ConfigError("series.config", allowed="missing; the base config of the series "
                              "(or a config per sample)")
        path = base / str(cfg_name)
        if str(path) not in configs:
            configs[str(path)] = load_config(path)
            files.append(path)
        cfg = configs[str(path)]
        sets = item.get("set") or {}
        if not isinstance(sets, dict):
            raise ConfigError(f"{key}.set", sets, "must be a mapping KEY: VALUE")
        if sets:
            d = cfg.data
            for k, v in sets.items():
                k = str(k)
                if k in shared_keys:
                    raise ConfigError(f"{key}.set.{k}", v, "is a shared free key; it cannot "
                                      "be set per sample")
                if k in started:
                    raise ConfigError(f"{key}.set.{k}", v, "has a start value in "
                                      "series.per_sample already; give it in one place")
                d = set_value(d, k, v)
            cfg = config_from_dict(d, f"{path} ({name})")
        win = item.get("window", window)
        files.append(base / str(item["data"]))
        if not files[-1].is_file():
            raise ConfigError(f"{key}.data", str(item["data"]),
                              f"file not found (looked for {files[-1]})")
        try:
            fdata = read_fit_data(files[-1], window=None if win is None else str(win), nan=nan,
                                  name=name)
        except KappaError as exc:
            if exc.key == "--window":  # name the series key the window came from
                where = f"{key}.window" if "window" in item else "series.window"
                raise ConfigError(where, exc.value, exc.allowed) from None
            raise
        samples.append(SeriesSample(name, cfg, fdata))
    names = [s.name for s in samples]
    if len({n.lower() for n in names}) != len(names):
        raise ConfigError("series.samples", ", ".join(names), "sample names must be unique "
                          "(ignoring upper/lower case: they name output folders)")
    return Series(tuple(samples), tuple(shared), tuple(per), bounds, tuple(files))


def _key_list(value: Any, key: str) -> list[str]:
    if value is None:
        return []
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        raise ConfigError(key, value, "must be a list of dotted keys, e.g. [material.gruneisen]")
    return list(value)


# --- presentation helpers (data, not files) ---------------------------------------------------


def fit_curves(result: FitResult, points: int = 160) -> list[Prediction]:
    """Predictions of each fitted sample on a fine grid spanning its data (for figures)."""
    out = []
    for s in result.samples:
        T = s.data.temperature
        lo, hi = float(T.min()), float(T.max())
        grid = (np.geomspace(lo, hi, points) if hi / lo >= 5 else np.linspace(lo, hi, points))
        out.append(predict(s.config, grid))
    return out


def fitted_yaml_data(sample: SampleFit, result: FitResult) -> dict:
    """Plain config data of a fitted sample: fitted values written with their display units.

    A ``temperature`` section spanning the data (100 points) is added when the config has
    none, so the file runs in ``kappa predict`` as it is.
    """
    data = sample.start_config.data
    for p in result.parameters:
        if p.sample not in (None, sample.name):
            continue
        value = float(f"{p.shown(p.value):.12g}")
        data = set_value(data, p.key, value if p.display in ("1", "") else
                         format_quantity(value, p.display, 12))
    if data.get("temperature") is None:
        T = sample.data.temperature
        data = set_value(data, "temperature", {"start": f"{T.min():g} K",
                                               "stop": f"{T.max():g} K", "points": 100})
    return data


def fit_record(result: FitResult, sample: str | None = None) -> dict:
    """The sidecar ``fit.json`` content for one sample: free keys, values, covariance.

    Only the parameters that act on ``sample`` (shared ones and its own) are kept, with the
    matching block of the covariance (transformed space).
    """
    idx = [i for i, p in enumerate(result.parameters) if p.sample in (None, sample)]
    return {
        "kind": "kappa fit covariance",
        "sample": sample,
        "weighted": result.weighted,
        "n_points": result.n_points,
        "dof": result.dof,
        "parameters": [{"key": result.parameters[i].key, "space": result.spaces[i],
                        "value": result.parameters[i].value, "unit": result.parameters[i].unit,
                        "stderr": result.parameters[i].stderr,
                        "at_bound": result.parameters[i].at_bound} for i in idx],
        "covariance": [[float(result.covariance[i, j]) for j in idx] for i in idx],
        "covariance_space": "u = ln(value) for space 'log', u = value [SI] for 'linear'",
    }


def read_fit_record(path: str | Path) -> dict:
    """Read and check a ``fit.json`` written by ``kappa fit``."""
    import json

    path = Path(path)
    if not path.is_file():
        raise ConfigError("--band", str(path), "needs the fit.json that 'kappa fit' writes "
                          "beside fitted.yaml; keep the two files together")
    try:
        record = json.loads(path.read_text(encoding="utf-8"))
        params = record["parameters"]
        cov = np.array(record["covariance"], dtype=float)
        keys = [p["key"] for p in params]
        spaces = [p["space"] for p in params]
        [float(p["value"]) for p in params]
    except (ValueError, KeyError, TypeError):
        raise ConfigError(str(path), allowed="not a fit record written by 'kappa fit'") from None
    if cov.shape != (len(keys), len(keys)) or any(s not in ("log", "linear") for s in spaces):
        raise ConfigError(str(path), allowed="not a fit record written by 'kappa fit' "
                          "(covariance does not match the parameters)")
    return record


@dataclass(frozen=True)
class Band:
    """κ_L(T) with the 68 % band from the fit covariance.

    ``low``/``high`` are the 16th/84th percentiles of κ_L over ``draws`` parameter sets drawn
    from the covariance (transformed space) around the config's values of the free keys.
    """

    temperature: np.ndarray
    kappa_L: np.ndarray
    low: np.ndarray
    high: np.ndarray
    draws: int
    rejected: int
    keys: tuple[str, ...]


def prediction_band(config: Config, record: Mapping, temperature=None, draws: int = 400,
                    seed: int = 1) -> Band:
    """68 % band of κ_L(T) from a fit's covariance (for ``kappa predict --band``).

    Parameters
    ----------
    config : Config
        Usually the fitted.yaml the record belongs to.
    record : mapping
        From :func:`read_fit_record` / :func:`fit_record`.
    temperature : array_like, optional
        [K]; default the config's temperature section.
    draws : int
        Number of parameter sets (draws outside a parameter's allowed range are rejected and
        counted; the band needs at least 10 accepted).
    seed : int
        Seed of the draws.
    """
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or draws < 10:
        raise ConfigError("--draws", draws, "must be a whole number >= 10")
    T = (config.require_temperature() if temperature is None
         else np.atleast_1d(np.asarray(temperature, dtype=float)))
    params = record["parameters"]
    keys = tuple(p["key"] for p in params)
    spaces = [p["space"] for p in params]
    cov = np.array(record["covariance"], dtype=float)
    if not np.all(np.isfinite(cov)):
        raise ConfigError("--band", "covariance with infinite entries",
                          "the fit left a parameter undetermined; no band can be drawn")
    for i, (p, space) in enumerate(zip(params, spaces, strict=True)):
        sigma_u = math.sqrt(max(cov[i, i], 0.0))
        if p.get("at_bound") == "search limit" or (space == "log" and sigma_u > BAND_MAX_LOG_SIGMA):
            raise ConfigError("--band", p["key"], "was not determined by the fit (it ran to its "
                              "search limit or its 68 % interval spans more than a factor "
                              f"{math.exp(2 * BAND_MAX_LOG_SIGMA):.0f}); a band from this fit "
                              "would be meaningless: refit with this key fixed or bounded")
    centre = []
    for p, space in zip(params, spaces, strict=True):
        key = p["key"]
        try:
            now = config.value(key)
        except KappaError:
            raise ConfigError("--band", key, "a key of the fit record is not in this config"
                              ) from None
        if not math.isclose(now, float(p["value"]), rel_tol=1e-8, abs_tol=1e-300):
            fitted = float(p["value"])
            warn(f"{key} = {now:.6g} in the config differs from the fitted {fitted:.6g}; the "
                 "band is drawn around the config's value")
        centre.append(math.log(now) if space == "log" else now)
    rng = np.random.default_rng(seed)
    U = rng.multivariate_normal(np.array(centre), cov, size=int(draws), method="eigh")
    values = np.where(np.array(spaces) == "log", np.exp(U), U)
    jobs, rejected = [], 0
    for row in values:
        try:
            cfg = config.with_values(dict(zip(keys, row.tolist(), strict=True)))
        except KappaError:
            rejected += 1
            continue
        jobs.append((cfg, T))
    if len(jobs) < 10:
        raise ConfigError("--band", f"{rejected} of {draws} draws rejected",
                          "too few parameter sets inside the allowed ranges for a band")
    if rejected > 0.1 * draws:
        warn(f"{rejected} of {draws} parameter draws fell outside the allowed ranges and were "
             "left out; the band is only indicative")
    curves = np.array(model_values(jobs))
    centre_curve = model_values([(config, T)])[0]
    low, high = np.percentile(curves, [16.0, 84.0], axis=0)
    return Band(T, centre_curve, low, high, len(jobs), rejected, keys)
