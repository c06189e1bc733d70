"""Figure of an alloy series: κ_L against the alloy fraction, one line per temperature."""

from __future__ import annotations

import numpy as np

from kappa.presentation.style import KAPPA_L_LABEL, new_figure
from kappa.workflows.alloy import AlloySeries

__all__ = ["plot_alloy"]

MAX_LINES = 8


def plot_alloy(series: AlloySeries, names: tuple[str, str] = ("A", "B")):
    """κ_L(x): mass + strain disorder (solid) and mass only (dashed), a colour per T."""
    fig, axes = new_figure()
    ax = axes[0, 0]
    x = series.fraction
    T = series.temperature
    picks = range(T.size) if T.size <= MAX_LINES else np.unique(
        np.round(np.linspace(0, T.size - 1, MAX_LINES)).astype(int))
    for n, t in enumerate(picks):
        color = f"C{n % 10}"
        ax.plot(x, series.kappa_L[:, t], color=color, lw=1.8, marker="o" if x.size <= 25
                else None, ms=3, label=f"T = {T[t]:.4g} K, mass + strain")
        ax.plot(x, series.kappa_L_mass_only[:, t], color=color, lw=1.2, ls="--",
                label=f"T = {T[t]:.4g} K, mass only")
    k = series.kappa_L[np.isfinite(series.kappa_L)]
    if k.size and k.min() > 0 and k.max() / k.min() >= 20:
        ax.set_yscale("log")
    ax.set_xlabel(f"alloy fraction x  ((1-x)·{names[0]} + x·{names[1]})")
    ax.set_ylabel(KAPPA_L_LABEL)
    ax.set_title("Lattice thermal conductivity of the alloy series", fontsize=10)
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=7)
    return fig
