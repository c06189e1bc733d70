"""Figure of an alloy series: κ_L against the alloy fraction, one line per temperature."""

from __future__ import annotations

import numpy as np

from kappa.presentation.style import (
    KAPPA_L_LABEL,
    fill_limits,
    new_figure,
    sequential_colors,
    styled,
)
from kappa.workflows.alloy import AlloySeries

__all__ = ["plot_alloy"]

MAX_LINES = 8


@styled
def plot_alloy(series: AlloySeries, names: tuple[str, str] = ("A", "B")):
    """κ_L(x): mass + strain disorder (solid) and mass only (dashed); temperatures in
    sequential colours (they are ordered)."""
    fig, axes = new_figure()
    ax = axes[0, 0]
    x = series.fraction
    T = series.temperature
    picks = list(range(T.size)) if T.size <= MAX_LINES else list(np.unique(
        np.round(np.linspace(0, T.size - 1, MAX_LINES)).astype(int)))
    colors = sequential_colors(len(picks), "plasma")
    for color, t in zip(colors, picks, strict=True):
        ax.plot(x, series.kappa_L[:, t], color=color, marker="o" if x.size <= 25 else None,
                label=f"T = {T[t]:.6g} K")
        ax.plot(x, series.kappa_L_mass_only[:, t], color=color, lw=1.0, ls="--")
    ax.plot([], [], color="0.3", ls="-", label="mass and strain disorder")
    ax.plot([], [], color="0.3", ls="--", lw=1.0, label="mass disorder only")
    fill_limits(ax, [series.kappa_L[:, picks], series.kappa_L_mass_only[:, picks]])
    ax.set_xlim(float(x.min()), float(x.max()))
    ax.set_xlabel(f"alloy fraction x of {names[1]} in {names[0]}")
    ax.set_ylabel(KAPPA_L_LABEL)
    ax.set_title("Lattice thermal conductivity of the alloy series")
    ax.grid(True, which="major", alpha=0.3)
    handles, labels = ax.get_legend_handles_labels()
    if len(handles) > 6:
        ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), borderaxespad=0.0)
    else:
        ax.legend(loc="best")
    return fig
