"""Figures for the lattice/electronic split (matplotlib object API, Agg canvas, no pyplot)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import fields, replace
from typing import Any

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from kappa.presentation.style import styled
from kappa.workflows.split import SplitResult

__all__ = ["plot_split", "plot_kappa", "plot_lorenz", "plot_zT", "plot_series"]

#: Most temperatures drawn; longer results are thinned evenly (a figure shows no more).
MAX_POINTS = 2000


def _take(obj: Any, idx: np.ndarray, n: int) -> Any:
    """``obj`` with every array field of length ``n`` reduced to the rows ``idx``."""
    changes = {}
    for f in fields(obj):
        v = getattr(obj, f.name)
        if isinstance(v, np.ndarray) and v.shape[:1] == (n,):
            changes[f.name] = v[idx]
    return replace(obj, **changes)


def _thinned(result: SplitResult) -> SplitResult:
    n = result.temperature.size
    if n <= MAX_POINTS:
        return result
    idx = np.unique(np.linspace(0, n - 1, MAX_POINTS).round().astype(int))
    r = _take(result, idx, n)
    if r.bipolar is not None:
        r = replace(r, bipolar=_take(r.bipolar, idx, n))
    return r


def _axes(ax: Any, figsize: tuple[float, float] = (6.0, 4.0)) -> Any:
    if ax is not None:
        return ax
    fig = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(fig)
    return fig.add_subplot()


def plot_kappa(result: SplitResult, ax: Any = None) -> Any:
    """kappa, kappa_e and kappa_L (with 68 % bands) versus T; returns the Axes."""
    ax = _axes(ax)
    r = result
    T = r.temperature
    ax.plot(T, r.kappa, "o-", color="k", ms=3, label=r"$\kappa$ measured")
    ax.plot(T, r.kappa_e, "-", color="tab:orange", label=r"$\kappa_e = L\sigma T$")
    ax.fill_between(T, r.kappa_e_low, r.kappa_e_high, color="tab:orange", alpha=0.2, lw=0)
    ax.plot(T, r.kappa_L, "-", color="tab:blue", lw=2,
            label=rf"$\kappa_L$ ({r.lorenz_model})")
    ax.fill_between(T, r.kappa_L_low, r.kappa_L_high, color="tab:blue", alpha=0.2, lw=0,
                    label=r"$\kappa_L$ 68 % band")
    if r.lorenz_model != "degenerate":
        ax.plot(T, r.kappa_L_degenerate, "--", color="tab:blue", lw=1,
                label=r"$\kappa_L$, $L$ degenerate")
    if r.kappa_L_kim is not None and r.lorenz_model != "kim":
        ax.plot(T, r.kappa_L_kim, ":", color="tab:blue", lw=1.2, label=r"$\kappa_L$, $L$ Kim")
    if r.kappa_min is not None:
        ax.plot(T, r.kappa_min, "-.", color="tab:gray", lw=1, label=r"$\kappa_{min}$ Cahill")
    b = r.bipolar
    if b is not None:
        ax.plot(T, b.kappa_L_fit, "-", color="tab:green", lw=1,
                label=rf"$A/T+B$ fit {b.fit_window[0]:.0f}-{b.fit_window[1]:.0f} K")
        if b.onset is not None:
            ax.axvline(b.onset, color="tab:red", lw=1, ls="--",
                       label=f"bipolar onset {b.onset:.0f} K")
    ax.set_xlabel(r"$T$ [K]")
    ax.set_ylabel(r"$\kappa$ [W/(m K)]")
    ax.set_ylim(bottom=min(0.0, float(np.nanmin(r.kappa_L_low))))
    ax.legend(fontsize="x-small", ncols=2)
    return ax


def plot_lorenz(result: SplitResult, ax: Any = None) -> Any:
    """Lorenz number L(T) with its 68 % band; returns the Axes."""
    ax = _axes(ax)
    r = result
    ax.plot(r.temperature, r.lorenz * 1e8, "-", color="tab:purple", label=f"L ({r.lorenz_model})")
    ax.fill_between(r.temperature, r.lorenz_low * 1e8, r.lorenz_high * 1e8, color="tab:purple",
                    alpha=0.2, lw=0)
    ax.axhline(2.443, color="tab:gray", ls="--", lw=0.8, label="degenerate 2.44")
    ax.axhline(1.485, color="tab:gray", ls=":", lw=0.8, label="non-degenerate 1.49")
    ax.set_xlabel(r"$T$ [K]")
    ax.set_ylabel(r"$L$ [$10^{-8}$ W $\Omega$ K$^{-2}$]")
    ax.legend(fontsize="x-small")
    return ax


def plot_zT(result: SplitResult, ax: Any = None) -> Any:
    """zT versus T with its 68 % band (a note when there is no Seebeck data); returns the Axes."""
    ax = _axes(ax)
    r = result
    if r.zT is None:
        ax.text(0.5, 0.5, "no Seebeck data: zT not computed", ha="center", va="center",
                transform=ax.transAxes)
    else:
        ax.plot(r.temperature, r.zT, "-", color="tab:red")
        ax.fill_between(r.temperature, r.zT_low, r.zT_high, color="tab:red", alpha=0.2, lw=0)
    ax.set_xlabel(r"$T$ [K]")
    ax.set_ylabel(r"$zT$")
    return ax


@styled
def plot_split(result: SplitResult, title: str = "") -> Figure:
    """Three panels: kappa/kappa_e/kappa_L with bands, L(T), zT(T). Returns a new Figure.

    Results with more than :data:`MAX_POINTS` temperatures are drawn at that many, evenly
    spread (the table keeps every row).
    """
    fig = Figure(figsize=(6.4, 9.0), layout="constrained")
    FigureCanvasAgg(fig)
    a1, a2, a3 = fig.subplots(3, 1, sharex=True, height_ratios=[2.2, 1, 1])
    result = _thinned(result)
    plot_kappa(result, a1)
    plot_lorenz(result, a2)
    plot_zT(result, a3)
    a1.set_xlabel("")
    a2.set_xlabel("")
    if title:
        from kappa.presentation.predict import short_title

        fig.suptitle(short_title(title, 80))
    return fig


def plot_series(results: Sequence[tuple[str, SplitResult]], title: str = "") -> Figure:
    """A sample series on shared axes: kappa, kappa_L (68 % bands), kappa_e and zT.

    One colour per sample; each result is thinned like :func:`plot_split`. Returns a new
    Figure.
    """
    fig = Figure(figsize=(10.0, 7.6), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(2, 2, sharex=True)
    panels = [(axes[0, 0], "kappa", None, r"$\kappa$ measured [W/(m K)]"),
              (axes[0, 1], "kappa_L", ("kappa_L_low", "kappa_L_high"),
               r"$\kappa_L$ [W/(m K)] (68 % bands)"),
              (axes[1, 0], "kappa_e", ("kappa_e_low", "kappa_e_high"),
               r"$\kappa_e = L\sigma T$ [W/(m K)]"),
              (axes[1, 1], "zT", ("zT_low", "zT_high"), "zT [1]")]
    for n, (name, result) in enumerate(results):
        r = _thinned(result)
        color = f"C{n % 10}"
        for ax, field_name, band, _ in panels:
            y = getattr(r, field_name)
            if y is None:
                continue
            ax.plot(r.temperature, y, "-", color=color, lw=1.6, marker="o" if
                    r.temperature.size <= 30 else None, ms=3, label=name)
            if band is not None:
                ax.fill_between(r.temperature, getattr(r, band[0]), getattr(r, band[1]),
                                color=color, alpha=0.15, lw=0)
    for ax, _name, _, label in panels:
        ax.set_ylabel(label)
        ax.grid(True, alpha=0.3)
        if not ax.lines:
            ax.text(0.5, 0.5, "no Seebeck data: zT not computed", ha="center", va="center",
                    transform=ax.transAxes)
    for ax in axes[1]:
        ax.set_xlabel("T [K]")
    axes[0, 0].legend(fontsize=7)
    if title:
        fig.suptitle(title, fontsize=10)
    return fig
