"""Measured κ_L(T) prepared for a fit: validation of the arrays, the window, the NaN policy."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.core.model import Model
from kappa.errors import DataError

__all__ = ["FitData", "SeriesSample", "fit_data", "window_text", "NAN_POLICIES"]

NAN_POLICIES = ("raise", "omit")


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
        One-standard-deviation uncertainty of ``kappa_L`` [W/(m K)], or None.
    uncertainty_source : str
        Where ``uncertainty`` came from (column names), ``""`` if none.
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

    @property
    def size(self) -> int:
        return int(self.temperature.size)


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


def fit_data(temperature, kappa_L, uncertainty=None, *,
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
        Its one-standard-deviation uncertainty [W/(m K)], > 0.
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
                            "T, kappa_L and its uncertainty must be numbers; use nan='omit' "
                            "(--nan omit) to drop such rows")
        dropped.append(f"{source}: data rows {rows} dropped (NaN or blank)")
        T, k = T[~bad], k[~bad]
        s = None if s is None else s[~bad]
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
    return FitData(name, T, k, s, uncertainty_source if s is not None else "", window,
                   tuple(dropped), source)
