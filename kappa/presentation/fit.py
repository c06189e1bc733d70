"""Figures of a fit: data, fitted curve, each mechanism switched off, residuals.

Object-API matplotlib through :func:`kappa.presentation.style.new_figure`; no pyplot state.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from kappa.presentation.predict import short_title
from kappa.presentation.style import (
    KAPPA_L_LABEL,
    T_LABEL,
    log_axes,
    mechanism_title,
    new_figure,
    styled,
)
from kappa.workflows.fitting import FitResult
from kappa.workflows.predict import Prediction, predict

__all__ = ["plot_fit", "add_band", "fit_curves", "plot_notes", "note_pairs"]


def fit_curves(result: FitResult, points: int = 160) -> list[Prediction]:
    """Predictions of each fitted sample on a fine grid spanning its data (for figures)."""
    out = []
    for s in result.samples:
        T = s.data.temperature
        lo, hi = float(T.min()), float(T.max())
        grid = (np.geomspace(lo, hi, points) if hi / lo >= 5 else np.linspace(lo, hi, points))
        out.append(predict(s.model, grid, warnings=False))
    return out


def _log_axes(T: np.ndarray) -> bool:
    return T.min() > 0 and T.max() / T.min() >= 5.0


@styled
def plot_fit(result: FitResult, curves: Sequence[Prediction], title: str = "") -> Any:
    """One column per sample: data and fit (top), residuals (bottom). Returns the Figure.

    ``curves`` are the fitted models on a fine grid (:func:`fit_curves`), one per
    sample; each curve's ``without`` entries are drawn dashed (that mechanism switched off).
    Residual panel: (κ − κ_fit)/σ for weighted fits, 100·(κ/κ_fit − 1) % otherwise.
    """
    n = len(result.samples)
    ncols = min(n, 3)
    nrows = 2 * ((n + ncols - 1) // ncols)
    ratios = [3, 1] * (nrows // 2)
    fig, axes = new_figure(4.8 * ncols if n > 1 else 6.4, 5.6 * nrows / 2, nrows=nrows,
                           ncols=ncols, gridspec_kw={"height_ratios": ratios})
    for i, (s, curve) in enumerate(zip(result.samples, curves, strict=True)):
        row, col = 2 * (i // ncols), i % ncols
        ax, rax = axes[row, col], axes[row + 1, col]
        d = s.data
        ax.plot(curve.temperature, curve.kappa_L, color="black", lw=1.8, label="fit")
        if s.scale_factor is not None:  # the data's fitted calibration scale, for the eye
            ax.plot(d.temperature, s.kappa_L_fit * s.scale_factor, color="black", lw=0.8,
                    ls=":", label="fit × fitted scale of the data")
        for key, k in curve.without.items():
            if np.all(np.isnan(k)):
                continue
            ax.plot(curve.temperature, k, ls="--", lw=1.0,
                    label=f"fit without {mechanism_title(key)}")
        if d.uncertainty is not None:
            ax.errorbar(d.temperature, d.kappa_L, yerr=d.uncertainty, fmt="o", ms=4, color="tab:red",
                        capsize=2, label="data")
        else:
            ax.plot(d.temperature, d.kappa_L, "o", ms=4, color="tab:red", label="data")
        if _log_axes(curve.temperature):
            log_axes(ax)  # plain-number ticks at 1, 2, 5 × 10ⁿ on both axes
            log_axes(rax, y=False)
        lo = float(np.nanmin(d.kappa_L))
        hi = float(np.nanmax(d.kappa_L))
        if ax.get_yscale() == "log":
            ax.set_ylim(lo / 2.0, hi * 2.0)
        ax.set_ylabel(KAPPA_L_LABEL)
        ax.set_title(short_title(s.name if n > 1 else
                                 (title or f"Fit: {s.model.material.name or s.name}")))
        ax.grid(True, which="both", alpha=0.3)
        ax.legend(loc="best", fontsize="x-small")
        if result.weighted:
            rax.plot(d.temperature, s.normalized, "o", ms=4, color="tab:red")
            rax.set_ylabel(r"$(\kappa_L - \mathrm{fit})/\sigma$")
        else:
            rax.plot(d.temperature, 100.0 * (d.kappa_L / s.kappa_L_fit - 1.0), "o", ms=4,
                     color="tab:red")
            rax.set_ylabel(r"$\kappa_L/\mathrm{fit} - 1$ [%]")
        rax.axhline(0.0, color="black", lw=0.8)
        rax.set_xlim(ax.get_xlim())
        rax.set_xlabel(T_LABEL)
        rax.grid(True, which="both", alpha=0.3)
    if n > 1:  # a series: every sample on the same axes, so that the panels compare
        data_axes = [axes[2 * (i // ncols), i % ncols] for i in range(n)]
        res_axes = [axes[2 * (i // ncols) + 1, i % ncols] for i in range(n)]
        _share(data_axes, [np.concatenate([s.data.kappa_L, c.kappa_L])
                           for s, c in zip(result.samples, curves, strict=True)])
        _share(res_axes, None)
    for j in range(n, (nrows // 2) * ncols):  # unused cells of the last row
        row, col = 2 * (j // ncols), j % ncols
        axes[row, col].set_visible(False)
        axes[row + 1, col].set_visible(False)
    if title and n > 1:
        fig.suptitle(title, fontsize=11)
    return fig


def _share(axes, values) -> None:
    """The same x and y limits on every panel (the union of their limits, or of ``values``)."""
    xs = [ax.get_xlim() for ax in axes]
    lo_x, hi_x = min(x[0] for x in xs), max(x[1] for x in xs)
    if values is not None:
        v = np.concatenate([np.asarray(a, dtype=float).ravel() for a in values])
        v = v[np.isfinite(v)]
        log = axes[0].get_yscale() == "log"
        lo_y, hi_y = (v.min() / 1.3, v.max() * 1.3) if log else (
            v.min() - 0.06 * np.ptp(v), v.max() + 0.06 * np.ptp(v))
    else:
        ys = [ax.get_ylim() for ax in axes]
        lo_y, hi_y = min(y[0] for y in ys), max(y[1] for y in ys)
    for ax in axes:
        ax.set_xlim(lo_x, hi_x)
        ax.set_ylim(lo_y, hi_y)


def add_band(ax: Any, temperature: np.ndarray, low: np.ndarray, high: np.ndarray,
             label: str = "68 % band (fit covariance)") -> Any:
    """Shade the band between ``low`` and ``high`` on ``ax``; returns ``ax``."""
    ax.fill_between(temperature, low, high, color="tab:blue", alpha=0.35, lw=0, label=label)
    ax.plot(temperature, low, color="tab:blue", lw=0.8)
    ax.plot(temperature, high, color="tab:blue", lw=0.8)
    ax.legend(loc="best")
    return ax


def note_pairs(result: FitResult, notes: Mapping[str, Mapping[str, Any]],
               most: int = 9) -> list[tuple[str, str]]:
    """(per-sample key, note name) pairs worth a panel: numeric notes of at least two fitted
    samples, the note named like the key first (its 1:1 comparison)."""
    keys = list(dict.fromkeys(p.key for p in result.parameters if p.sample is not None))
    names: list[str] = []
    for sample_notes in notes.values():
        names += [n for n, note in sample_notes.items() if note.numeric and n not in names]
    pairs = []
    for key in keys:
        for name in names:
            have = [s for s in notes if name in notes[s] and notes[s][name].numeric
                    and any(p.key == key and p.sample == s for p in result.parameters)]
            if len(have) >= 2:
                pairs.append((key, name))
    pairs.sort(key=lambda kn: kn[0].rsplit(".", 1)[-1] != kn[1])
    return pairs[:most]


def plot_notes(result: FitResult, notes: Mapping[str, Mapping[str, Any]]) -> Any:
    """Each per-sample fitted value against the sample's own note (one panel per pair of
    :func:`note_pairs`), with its 68 % interval; the 1:1 line where the note is the same
    quantity as the key (same name and unit). Returns the Figure."""
    pairs = note_pairs(result, notes)
    n = max(1, len(pairs))
    ncols = min(n, 3)
    nrows = (n + ncols - 1) // ncols
    fig, axes = new_figure(4.4 * ncols, 3.8 * nrows, nrows=nrows, ncols=ncols)
    for i, (key, name) in enumerate(pairs):
        ax = axes[i // ncols, i % ncols]
        fitted = [p for p in result.parameters if p.key == key and p.sample in notes
                  and name in notes[p.sample] and notes[p.sample][name].numeric]
        par = fitted[0]
        note0 = notes[fitted[0].sample][name]
        same = (key.rsplit(".", 1)[-1] == name and note0.unit == par.unit)
        xs = np.array([par.shown(notes[p.sample][name].value) if same
                       else notes[p.sample][name].shown for p in fitted], dtype=float)
        ys = np.array([p.shown(p.value) for p in fitted])
        lo = np.array([p.shown(p.low68) for p in fitted])
        hi = np.array([p.shown(p.high68) for p in fitted])
        ax.errorbar(xs, ys, yerr=[np.clip(ys - lo, 0, None), np.clip(hi - ys, 0, None)],
                    fmt="o", ms=5, capsize=3, color="tab:blue", label="fit (68 %)")
        for x, y, p in zip(xs, ys, fitted, strict=True):
            ax.annotate(p.sample, (x, y), textcoords="offset points", xytext=(4, 4), fontsize=7)
        unit_x = par.display if same else (note0.display if note0.display not in ("", "1")
                                           else "1")
        if same:
            finite = np.concatenate([xs, lo, hi])
            finite = finite[np.isfinite(finite) & (finite > 0)]
            if finite.size:
                a, b = float(finite.min()) / 1.5, float(finite.max()) * 1.5
                ax.plot([a, b], [a, b], color="black", lw=0.8, ls="--", label="1:1")
        positive = np.all(xs > 0) and np.all(ys > 0)
        if positive and xs.max() / xs.min() > 10 and ys.max() / ys.min() > 10:
            ax.set_xscale("log")
            ax.set_yscale("log")
        ax.set_xlabel(f"{name} (note) [{unit_x}]")
        ax.set_ylabel(f"fitted {key.rsplit('.', 1)[-1]} [{par.display}]")
        ax.set_title(key, fontsize=9)
        ax.grid(True, which="both", alpha=0.3)
        ax.legend(fontsize=7)
    for j in range(len(pairs), nrows * ncols):
        axes[j // ncols, j % ncols].set_visible(False)
    return fig
