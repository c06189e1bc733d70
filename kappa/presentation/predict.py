"""The figure of a prediction: κ_L(T), each mechanism switched off, overlays, bands, data."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from kappa.presentation.style import (
    KAPPA_L_LABEL,
    T_LABEL,
    fill_limits,
    leaves,
    log_axes,
    mechanism_title,
    new_figure,
    sequential_colors,
    styled,
)
from kappa.workflows.predict import Prediction

__all__ = ["plot_prediction", "prediction_figure", "add_legend", "short_title",
           "fixed_margins"]

#: Titles longer than this are shortened with "…" (they must fit above the panel).
TITLE_CHARS = 60


def short_title(text: str, most: int = TITLE_CHARS) -> str:
    """``text`` shortened to ``most`` characters with an ellipsis."""
    return text if len(text) <= most else text[: most - 1].rstrip() + "…"


def add_legend(ax, outside_from: int = 6) -> None:
    """A legend inside the panel, or beside it when it has many entries."""
    handles, labels = ax.get_legend_handles_labels()
    if not handles:
        return
    if len(handles) >= outside_from:
        ax.legend(handles, labels, loc="upper left", bbox_to_anchor=(1.02, 1.0),
                  borderaxespad=0.0)
    else:
        ax.legend(handles, labels, loc="best")


def prediction_figure(prediction: Prediction,
                      overlays: Sequence[tuple[str, Prediction]] = (), *, band=None,
                      data=None, answers=None, order=None):
    """The figure of ``kappa predict``: :func:`plot_prediction`, with the what-if bands of
    ``answers`` (:func:`kappa.presentation.whatif.add_overlay_bands`) when given. With a
    ``band`` the curves of the mechanisms switched off are left out (the band is the point)."""
    if band is not None:
        import dataclasses

        prediction = dataclasses.replace(prediction, without={})
    fig = plot_prediction(prediction, overlays, band=band, data=data)
    if answers is not None:
        from kappa.presentation.whatif import add_overlay_bands

        add_overlay_bands(fig, answers, order)
    return fig


@styled
def plot_prediction(prediction: Prediction, overlays: Sequence[tuple[str, Prediction]] = (),
                    ax=None, *, band=None, data=None, title: str | None = None):
    """κ_L(T): the model, each resistive mechanism switched off, optional overlays.

    Parameters
    ----------
    prediction : Prediction
    overlays : sequence of (label, Prediction)
        Curves for several values of one key, in the order of the values (sequential
        colours); the config's own curve is then drawn dotted.
    band : (T, low, high), optional
        A shaded 68 % band (e.g. from a fit's covariance).
    data : (T, kappa_L, error or None), optional
        Measured points drawn on top.
    title : str, optional
        Default: the material's name.

    The axes are chosen so that κ_L (and overlays, band and data) fill the panel; curves with
    a mechanism switched off and the minimum κ_L may leave it, which their legend entry says.
    Returns the figure.
    """
    own = ax is None
    if own:  # fixed margins (no automatic layout pass: this figure is drawn on every run)
        fig, axes = new_figure(layout=None)
        ax = axes[0, 0]
    else:
        fig = ax.figure
    T = prediction.temperature
    primary = [prediction.kappa_L]
    secondary: list[tuple[np.ndarray, dict]] = []
    if overlays:
        colors = sequential_colors(len(overlays))
        for (label, p), color in zip(overlays, colors, strict=True):
            ax.plot(p.temperature, p.kappa_L, color=color, label=label)
            primary.append(p.kappa_L)
        ax.plot(T, prediction.kappa_L, color="black", lw=1.0, ls=":", label="config as written")
    else:
        ax.plot(T, prediction.kappa_L, color="black", lw=2.0, label=r"$\kappa_L$, all mechanisms",
                zorder=3)
        for i, (key, k) in enumerate(prediction.without.items()):
            if np.all(np.isnan(k)):
                continue
            secondary.append((k, {"ls": "--", "lw": 1.2, "color": f"C{i % 10}",
                                  "label": f"without {mechanism_title(key)}"}))
        if prediction.optical is not None:
            secondary.append((prediction.acoustic, {"color": "tab:blue", "lw": 1.0, "ls": "-.",
                                                    "label": "acoustic branches"}))
            secondary.append((prediction.optical, {"color": "tab:purple", "lw": 1.0, "ls": "-.",
                                                   "label": "optical modes"}))
    if prediction.minimum is not None:
        secondary.append((prediction.minimum, {"color": "0.5", "lw": 1.0, "ls": (0, (1, 2)),
                                               "label": r"minimum $\kappa_L$ (Cahill)"}))
    if band is not None:
        bt, lo, hi = band
        ax.fill_between(bt, lo, hi, color="tab:blue", alpha=0.3, lw=0,
                        label="68 % band (fit covariance)")
        primary += [lo, hi]
    if data is not None:
        dt, dk, de = data
        if de is not None:
            ax.errorbar(dt, dk, yerr=de, fmt="o", color="tab:red", ms=3.5, capsize=2,
                        label="data", zorder=4)
        else:
            ax.plot(dt, dk, "o", color="tab:red", ms=3.5, label="data", zorder=4)
        primary.append(dk)
    if T.min() > 0 and T.max() / T.min() >= 5.0:
        log_axes(ax, x=True, y=False)
    ax.set_xlim(T.min(), T.max())
    fill_limits(ax, primary)
    limits = ax.get_ylim()
    for values, style in secondary:
        if leaves(values, limits):
            style = {**style, "label": style["label"] + " (leaves the panel)"}
        ax.plot(T, values, **style)
    ax.set_ylim(limits)
    ax.set_xlabel(T_LABEL)
    ax.set_ylabel(KAPPA_L_LABEL)
    name = title if title is not None else (prediction.model.material.name or "")
    if name:
        ax.set_title(short_title(name))
    ax.grid(True, which="major", alpha=0.3)
    outside = len(ax.get_legend_handles_labels()[0]) >= 6
    add_legend(ax)
    if own:
        fixed_margins(fig, legend_beside=outside)
    return fig


def fixed_margins(fig, legend_beside: bool = False, legend_width: float | None = None) -> None:
    """Margins in inches for a one-panel figure (room for labels, title and a legend beside).

    The figure is widened by the legend's width (measured) when it sits beside the panel.
    """
    from matplotlib import rcParams

    w, h = fig.get_size_inches()
    legend = fig.axes[0].get_legend()
    if legend_beside and legend_width is None and legend is not None:
        extent = legend.get_window_extent(fig.canvas.get_renderer())
        legend_width = extent.width / fig.dpi + 0.25
    legend_width = legend_width or 0.0
    if legend_beside:
        w += legend_width
        fig.set_size_inches(w, h)
    size = rcParams["font.size"] / 9.0  # margins grow with the style's text
    left, bottom, top = 0.85 * size, 0.6 * size, 0.4 * size
    right = (legend_width if legend_beside else 0.0) + 0.35 * size
    fig.subplots_adjust(left=left / w, right=1 - right / w, bottom=bottom / h, top=1 - top / h)
