"""Measured κ_L(T) prepared for a fit: validation of the arrays, the window, the NaN policy."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.core.model import Model
from kappa.errors import DataError

__all__ = ["FitData", "SeriesSample", "fit_data", "window_text", "NAN_POLICIES", "ERROR_MODES"]

NAN_POLICIES = ("raise", "omit")
#: How a fit uses the uncertainties of the data (see :func:`fit_data`):
#: ``separate``: the random part as point-to-point noise and the systematic part as one shared
#: scale of the sample (a nuisance parameter); ``random``: the random part only (the shared
#: calibration error is left out of the parameter errors); ``total``: one uncertainty per
#: point taken as independent; ``none``: no uncertainties (relative residuals, errors scaled by
#: the scatter); ``auto``: ``separate`` when both parts are given, else ``total`` when an
#: uncertainty is given, else ``none``.
ERROR_MODES = ("auto", "separate", "random", "total", "none")


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
    uncertainty : ndarray or None
        One-standard-deviation uncertainty of ``kappa_L`` [W/(m K)] taken as independent from
        point to point (the weights of the fit), or None.
    uncertainty_source : str
        Where ``uncertainty`` came from (column names), ``""`` if none.
    systematic : ndarray or None
        One-standard-deviation uncertainty shared by all points of the sample [W/(m K)] (a
        calibration or geometry error: all points move together), or None. The fit models it
        as one scale of the sample with a Gaussian prior.
    errors : str
        How the uncertainties are used: ``separate``, ``random``, ``total`` or ``none``
        (:data:`ERROR_MODES`).
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
    uncertainty: np.ndarray | None = None
    uncertainty_source: str = ""
    window: tuple[float, float] | None = None
    dropped: tuple[str, ...] = ()
    source: str = "<arrays>"
    systematic: np.ndarray | None = None
    errors: str = ""

    @property
    def size(self) -> int:
        return int(self.temperature.size)

    @property
    def systematic_width(self) -> float | None:
        """Median relative systematic uncertainty systematic/kappa_L [1], or None."""
        if self.systematic is None:
            return None
        return float(np.median(self.systematic / self.kappa_L))


@dataclass(frozen=True)
class SeriesSample:
    """One sample of a fit: its name, its model (after per-sample settings), its data."""

    name: str
    model: Model
    data: FitData


def _fmt_T(values) -> str:
    return ", ".join(f"{t:g} K" for t in values)


def window_text(win: tuple[float, float] | None) -> str:
    """``(100, 600)`` → ``"100 K:600 K"`` (open ends left empty)."""
    if win is None:
        return "all"
    lo = "" if math.isinf(win[0]) else f"{win[0]:g} K"
    hi = "" if math.isinf(win[1]) else f"{win[1]:g} K"
    return f"{lo}:{hi}"


def fit_data(temperature, kappa_L, uncertainty=None, *, systematic=None,
             window: tuple[float, float] | None = None, name: str = "data",
             source: str = "<arrays>", uncertainty_source: str = "uncertainty",
             nan: str = "raise") -> FitData:
    """Validate measured κ_L(T) for a fit.

    Parameters
    ----------
    temperature : array_like
        [K], finite, > 0, strictly increasing.
    kappa_L : array_like
        Lattice thermal conductivity [W/(m K)]; must be > 0 inside the window.
    uncertainty : array_like, optional
        Its one-standard-deviation uncertainty [W/(m K)], > 0, independent from point to point
        (with ``systematic``: the random part).
    systematic : array_like, optional
        The part shared by all points [W/(m K)], >= 0 (needs ``uncertainty``): the fit adds one
        scale of the sample with this width as a nuisance parameter.
    window : (low, high), optional
        Keep only low ≤ T ≤ high [K] (either may be ±inf).
    name, source, uncertainty_source : str
        Labels used in results and messages.
    nan : {"raise", "omit"}
        NaN in T, κ_L or its uncertainty: error (default) or drop the row (reported).

    Raises
    ------
    DataError
        Non-increasing or non-positive T, NaN (with ``raise``), κ_L ≤ 0 or uncertainty ≤ 0 in
        the window, no points left.
    """
    if nan not in NAN_POLICIES:
        raise DataError("nan", nan, "raise or omit")
    T = np.atleast_1d(np.asarray(temperature, dtype=float)).copy()
    k = np.atleast_1d(np.asarray(kappa_L, dtype=float)).copy()
    s = None if uncertainty is None else np.atleast_1d(np.asarray(uncertainty, dtype=float)).copy()
    if systematic is not None and s is None:
        raise DataError("systematic", "given without uncertainty", "a shared (systematic) "
                        "uncertainty needs the random one too (the point-to-point noise)")
    c = None if systematic is None else np.atleast_1d(np.asarray(systematic, dtype=float)).copy()
    if c is not None and c.shape != T.shape:
        raise DataError(source, f"{T.size} temperatures, {c.size} systematic uncertainties",
                        "temperature, kappa_L and its uncertainties need the same length")
    if k.shape != T.shape or (s is not None and s.shape != T.shape):
        raise DataError(source, f"{T.size} temperatures, {k.size} values",
                        "temperature, kappa_L (and its uncertainty) need the same length")
    dropped: list[str] = []
    bad = ~np.isfinite(T) | ~np.isfinite(k)
    if s is not None:
        bad |= ~np.isfinite(s)
    if c is not None:
        bad |= ~np.isfinite(c)
    if np.any(bad):
        rows = ", ".join(str(i + 1) for i in np.flatnonzero(bad))
        if nan == "raise":
            raise DataError(f"{source}, data rows {rows}", "NaN or blank",
                            "T, kappa_L and its uncertainty must be numbers; use nan='omit' "
                            "(--nan omit) to drop such rows")
        dropped.append(f"{source}: data rows {rows} dropped (NaN or blank)")
        T, k = T[~bad], k[~bad]
        s = None if s is None else s[~bad]
        c = None if c is None else c[~bad]
    if T.size and np.any(T <= 0):
        raise DataError(f"{source}, column 'T'", _fmt_T(T[T <= 0]), "temperatures must be > 0 K")
    if T.size > 1 and np.any(np.diff(T) <= 0):
        i = int(np.flatnonzero(np.diff(T) <= 0)[0])
        raise DataError(f"{source}, column 'T'", f"{T[i]:g} K followed by {T[i + 1]:g} K",
                        "temperatures must be strictly increasing")
    if window is not None:
        lo, hi = float(window[0]), float(window[1])
        if not lo < hi:
            raise DataError("window", f"{lo:g} K:{hi:g} K", "the lower temperature must be "
                            "below the upper one")
        window = (lo, hi)
        keep = (T >= lo) & (T <= hi)
        if np.any(~keep):
            dropped.append(f"{source}: {int(np.sum(~keep))} points outside the window "
                           f"{window_text(window)} left out")
        T, k = T[keep], k[keep]
        s = None if s is None else s[keep]
        c = None if c is None else c[keep]
    if T.size == 0:
        raise DataError(source, "no data points" + (f" in the window {window_text(window)}"
                                                    if window else ""),
                        "the fit needs measured points; check the window")
    if np.any(k <= 0):
        raise DataError(f"{source}, column 'kappa_L'", "<= 0 at " + _fmt_T(T[k <= 0]),
                        "the lattice conductivity of the model is > 0; leave these temperatures "
                        "out with the window, or revisit the Lorenz number chosen in the split")
    if s is not None and np.any(s <= 0):
        raise DataError(f"{source}, column '{uncertainty_source}'",
                        "<= 0 at " + _fmt_T(T[s <= 0]), "uncertainties must be > 0")
    if c is not None and np.any(c < 0):
        raise DataError(f"{source}, systematic uncertainty", "< 0 at " + _fmt_T(T[c < 0]),
                        "uncertainties must be >= 0")
    if c is not None and not np.any(c > 0):
        c = None  # no shared part: nothing to model
    mode = "none" if s is None else ("separate" if c is not None else "total")
    return FitData(name, T, k, s, uncertainty_source if s is not None else "", window,
                   tuple(dropped), source, c, mode)
