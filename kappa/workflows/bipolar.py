"""Bipolar check of a lattice/electronic split: A/T + B extrapolation and band-gap estimate.

kappa_L = A/T + B is fitted (least squares in 1/T) on a low-temperature window: given, or
chosen automatically as the rows up to one third of the temperature range, ending no later than
the minimum of kappa_L, and at least 3 rows. Above the window the excess kappa_L - (A/T + B)
is compared with its uncertainty (the Monte Carlo spread of the excess combined with the
prediction error of the fit from its residual scatter). The onset of bipolar conduction is the
lowest temperature above the window from which every row exceeds the extrapolation by more than
that uncertainty; the excess there estimates the bipolar part. The Goldsmid-Sharp gap
E_g = 2 e |S|_max T_max is reported with its caveat.

:func:`kappa.workflows.split.split_measurements` computes the per-draw fits and the Monte Carlo
spread of the excess (chunk by chunk) and calls :func:`bipolar_check`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kappa.core.electronic import goldsmid_sharp_gap
from kappa.errors import DataError
from kappa.workflows.measurements import PLAUSIBLE

__all__ = ["BipolarCheck", "bipolar_check", "window_rows", "goldsmid_sharp_estimate"]


@dataclass(frozen=True)
class BipolarCheck:
    """Result of the A/T + B extrapolation test for bipolar conduction.

    Attributes
    ----------
    fit_window : (float, float)
        Temperature window of the fit [K] (first and last row used).
    window_auto : bool
        True if the window was chosen automatically.
    coefficients : (float, float)
        A [W/m] and B [W/(m K)] of kappa_L = A/T + B.
    kappa_L_fit : numpy.ndarray
        A/T + B at every temperature [W/(m K)].
    excess : numpy.ndarray
        kappa_L - (A/T + B) [W/(m K)]; above the onset, the estimated bipolar part.
    excess_err : numpy.ndarray
        1-sigma uncertainty of the excess [W/(m K)].
    onset : float or None
        Onset temperature of the rise above the extrapolation [K], None if not found.
    bipolar : numpy.ndarray
        Bool per row: at or above the onset.
    seebeck_max, temperature_at_seebeck_max : float or None
        max |S| [V/K] and its temperature [K] (None without S).
    gap : float or None
        Goldsmid-Sharp E_g = 2 e |S|_max T_max [J] (None without an S maximum).
    gap_note : str
        How to read the gap estimate.
    """

    fit_window: tuple[float, float]
    window_auto: bool
    coefficients: tuple[float, float]
    kappa_L_fit: np.ndarray
    excess: np.ndarray
    excess_err: np.ndarray
    onset: float | None
    bipolar: np.ndarray
    seebeck_max: float | None = None
    temperature_at_seebeck_max: float | None = None
    gap: float | None = None
    gap_note: str = ""


def _auto_window(T: np.ndarray, kappa_L: np.ndarray) -> np.ndarray:
    n = T.size
    last = int(np.flatnonzero(T <= T[0] + (T[-1] - T[0]) / 3.0)[-1])
    last = min(last, int(np.argmin(kappa_L)))
    last = max(last, 2)
    idx = np.zeros(n, dtype=bool)
    idx[: last + 1] = True
    return idx



def window_rows(T: np.ndarray, kappa_L: np.ndarray,
                fit_window: tuple[float, float] | None) -> np.ndarray:
    """Rows of the A/T + B fit: ``fit_window`` [K] (at least 3 rows), or chosen automatically."""
    if fit_window is None:
        return _auto_window(T, kappa_L)
    lo, hi = float(fit_window[0]), float(fit_window[1])
    shown = f"{lo:g} K:{hi:g} K"
    if not lo < hi:
        raise DataError("fit_window", shown, "the lower end must be below the upper end, "
                        "e.g. 300K:450K")
    tol = 1e-9 * float(np.max(T))
    window = (T >= lo - tol) & (T <= hi + tol)
    if window.sum() < 3:
        raise DataError("fit_window", shown,
                        f"contains {int(window.sum())} rows of the data; needs at least 3 "
                        f"(data span {T[0]:g} K to {T[-1]:g} K)")
    return window


def goldsmid_sharp_estimate(T: np.ndarray, seebeck: np.ndarray | None
                            ) -> tuple[float | None, float | None, float | None, str]:
    """Goldsmid-Sharp estimate: (|S|max [V/K], T at max [K], gap [J] or None, note).

    Not estimated without Seebeck data, without a maximum (|S| falling from the first row),
    or when |S|max lies above what solids show (:data:`PLAUSIBLE`, most likely a unit error).
    """
    if seebeck is None:
        return None, None, None, "no Seebeck data"
    a = np.abs(seebeck)
    i = int(np.argmax(a))
    s_max, t_max = float(a[i]), float(T[i])
    limit = PLAUSIBLE["S"][1]
    if s_max > limit:
        return s_max, t_max, None, (f"not estimated: |S|max = {s_max * 1e6:.4g} uV/K is above "
                                    f"{limit * 1e6:,.0f} uV/K, more than solids show (is the "
                                    "unit of S right?)")
    if i == 0:
        return s_max, t_max, None, ("|S| falls from the lowest temperature on: no maximum, no "
                                    "gap estimate")
    gap = goldsmid_sharp_gap(s_max, t_max)
    if i == T.size - 1:
        return s_max, t_max, gap, ("|S| still rises at the highest temperature: the gap is at "
                                   "least this large (a lower bound)")
    return s_max, t_max, gap, ("rough estimate: assumes similar majority and minority weighted "
                               "mobilities and non-degenerate carriers; can be off by about 2x "
                               "otherwise")


def bipolar_check(T: np.ndarray, kappa_L: np.ndarray, window: np.ndarray, coef: np.ndarray,
                  mc_err: np.ndarray, seebeck: np.ndarray | None, auto: bool) -> BipolarCheck:
    """The A/T + B extrapolation test (see the module docstring).

    Parameters
    ----------
    T, kappa_L : numpy.ndarray
        Temperature [K] and lattice conductivity [W/(m K)] of every row.
    window : numpy.ndarray
        Bool per row: the rows of the fit (:func:`window_rows`).
    coef : numpy.ndarray
        A [W/m] and B [W/(m K)] fitted on the window rows.
    mc_err : numpy.ndarray
        Half width of the 68 % Monte Carlo interval of the excess per row [W/(m K)].
    seebeck : numpy.ndarray or None
        Seebeck coefficient [V/K] for the Goldsmid-Sharp gap.
    auto : bool
        Whether the window was chosen automatically.
    """
    X = np.column_stack([1.0 / T, np.ones_like(T)])
    Xw = X[window]
    fit = X @ coef
    excess = kappa_L - fit
    k = int(window.sum())
    resid = excess[window]
    s2 = float(resid @ resid) / (k - 2) if k > 2 else 0.0
    cov = np.linalg.inv(Xw.T @ Xw)
    pred = np.sqrt(s2 * (1.0 + np.einsum("ij,jk,ik->i", X, cov, X)))
    err = np.sqrt(mc_err**2 + pred**2)
    last = int(np.flatnonzero(window)[-1])
    above_window = T > T[last]
    exceeds = (excess > err) & above_window
    # onset: the first row above the window from which every row exceeds the extrapolation
    all_after = np.logical_and.accumulate(exceeds[::-1])[::-1]
    start = np.flatnonzero(above_window & all_after)
    onset = float(T[start[0]]) if start.size else None
    bip = np.zeros(T.size, dtype=bool)
    if start.size:
        bip[start[0]:] = True
    s_max, t_max, gap, note = goldsmid_sharp_estimate(T, seebeck)
    return BipolarCheck(
        fit_window=(float(T[window][0]), float(T[window][-1])),
        window_auto=auto, coefficients=(float(coef[0]), float(coef[1])),
        kappa_L_fit=fit, excess=excess, excess_err=err, onset=onset, bipolar=bip,
        seebeck_max=s_max, temperature_at_seebeck_max=t_max, gap=gap, gap_note=note,
    )
