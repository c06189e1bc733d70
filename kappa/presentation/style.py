"""Figures (matplotlib object API; never touches pyplot's global state)."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from kappa.core.mechanisms import REGISTRY
from kappa.workflows.predict import Prediction

__all__ = ["new_figure", "save", "plot_prediction", "log_axes", "mechanism_title",
           "KAPPA_L_LABEL"]

KAPPA_L_LABEL = r"$\kappa_L$ [W/(m K)]"


def mechanism_title(key: str) -> str:
    """The human name of a mechanism from the registry (``point defects``)."""
    cls = REGISTRY.get(key)
    return cls.title if cls is not None else key.replace("_", " ")


def new_figure(width: float = 6.4, height: float = 4.4, nrows: int = 1, ncols: int = 1,
               layout: str | None = "constrained", **kwargs) -> tuple[Figure, np.ndarray]:
    """A figure with an Agg canvas and its axes (array).

    ``layout=None`` skips the automatic layout (faster; the caller sets the margins).
    """
    fig = Figure(figsize=(width, height), layout=layout)
    FigureCanvasAgg(fig)
    axes = fig.subplots(nrows, ncols, squeeze=False, **kwargs)
    return fig, axes


def save(fig: Figure, stem: str | Path, formats: Sequence[str] = ("png", "svg")) -> list[Path]:
    """Write ``stem.png`` and ``stem.svg``; return the paths."""
    paths = []
    for fmt in formats:
        p = Path(f"{stem}.{fmt}")
        fig.savefig(p, dpi=150 if fmt == "png" else None)
        paths.append(p)
    return paths


def _log_axes(T: np.ndarray) -> bool:
    return T.min() > 0 and T.max() / T.min() >= 5.0


def log_axes(ax, x: bool = True, y: bool = True) -> None:
    """Log scales with plain-number tick labels at 1, 2, 5 × 10ⁿ (no overlapping minor labels)."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    fmt = FuncFormatter(lambda v, _: f"{v:g}")
    for flag, axis, setter in ((x, ax.xaxis, ax.set_xscale), (y, ax.yaxis, ax.set_yscale)):
        if not flag:
            continue
        setter("log")
        axis.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))
        axis.set_major_formatter(fmt)
        axis.set_minor_formatter(NullFormatter())


def plot_prediction(prediction: Prediction, overlays: Sequence[tuple[str, Prediction]] = (),
                    ax=None):  # overlays: (label, prediction) pairs
    """κ_L(T): the model (solid), each mechanism switched off (dashed), optional overlays.

    Returns the figure.
    """
    if ax is None:
        fig, axes = new_figure(layout=None)  # fixed margins: this figure is drawn on every run
        fig.subplots_adjust(left=0.13, right=0.97, bottom=0.12, top=0.92)
        ax = axes[0, 0]
    else:
        fig = ax.figure
    T = prediction.temperature
    name = prediction.model.material.name or "model"
    if overlays:
        for label, p in overlays:
            ax.plot(p.temperature, p.kappa_L, lw=1.8, label=label)
        ax.plot(T, prediction.kappa_L, color="black", lw=1.2, ls=":", label="config as written")
    else:
        ax.plot(T, prediction.kappa_L, color="black", lw=2.0 if prediction.without else 1.2,
                label=r"$\kappa_L$ (all mechanisms)")
        for key, k in prediction.without.items():
            if np.all(np.isnan(k)):
                continue
            ax.plot(T, k, ls="--", lw=1.2, label=f"without {mechanism_title(key)}")
    if prediction.optical is not None and not overlays:
        ax.plot(T, prediction.acoustic, color="tab:blue", lw=1.0, ls="-.",
                label="acoustic branches")
        ax.plot(T, prediction.optical, color="tab:purple", lw=1.0, ls="-.",
                label="optical modes (Toberer et al. 2011)")
    if prediction.minimum is not None:
        from kappa.core.limits import MINIMUM_MODEL

        ax.plot(T, prediction.minimum, color="tab:gray", lw=1.0, ls="--",
                label=f"minimum κ_L ({MINIMUM_MODEL})")
    if _log_axes(T):
        curves = [prediction.kappa_L, *[p.kappa_L for _, p in overlays],
                  *[k for k in prediction.without.values() if not np.all(np.isnan(k))]]
        if prediction.minimum is not None:
            curves.append(prediction.minimum)
        values = np.concatenate([np.asarray(c)[np.isfinite(c)] for c in curves])
        log_axes(ax, x=True, y=bool(values.size and values.min() > 0
                                    and values.max() / values.min() >= 5.0))
    ax.set_xlabel("T [K]")
    ax.set_ylabel(KAPPA_L_LABEL)
    ax.set_title(f"Lattice thermal conductivity: {name}")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=8)
    return fig
