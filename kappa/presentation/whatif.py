"""What-if intervals drawn onto the figures of predict, sweep and alloy (object API only).

Each function adds to a figure the command already drew: shaded 68 % bands in the colours of
its lines, and hatching where the data do not pin the answer
(:attr:`kappa.workflows.whatif.WhatIf.pinned`).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from kappa.presentation.style import sequential_colors, styled
from kappa.presentation.sweep import MAX_LINES, MAX_PANELS, pick
from kappa.workflows.sweep import SweepResult
from kappa.workflows.whatif import WhatIf

__all__ = ["add_overlay_bands", "add_sweep_intervals", "add_alloy_bands"]

_HATCH = "////"


@styled
def add_overlay_bands(fig: Any, w: WhatIf, order: Any = None) -> Any:
    """Bands around the overlays of ``kappa predict --compare``, in the colours of their lines
    (sequential, in the order of the values: ``order`` is ``argsort`` of the values, as the
    figure draws them); unpinned stretches hatched. The config's own band is the figure's."""
    ax = fig.axes[0]
    T = w.temperature
    order = np.arange(w.size) if order is None else np.asarray(order)
    for color, i in zip(sequential_colors(w.size), order, strict=True):
        ax.fill_between(T, w.low[i], w.high[i], color=color, alpha=0.2, lw=0)
        bad = ~w.pinned[i]
        if bad.any():
            ax.fill_between(T, w.low[i], w.high[i], where=bad, facecolor="none",
                            edgecolor=color, hatch=_HATCH, lw=0)
    if (~w.pinned).any():
        ax.fill_between([], [], [], facecolor="none", edgecolor="black", hatch=_HATCH, lw=0,
                        label="not pinned by the data")
    _legend_again(ax)
    return fig


def _legend_again(ax) -> None:
    """Redraw the legend where the figure had it (inside, or beside the panel); a figure with
    fixed margins is widened by what a longer legend beside the panel needs."""
    from kappa.presentation.predict import add_legend

    fig = ax.figure
    renderer = fig.canvas.get_renderer()
    old = ax.get_legend()
    beside = old is not None and old.get_bbox_to_anchor().x0 > ax.bbox.x1 - 1
    before = old.get_window_extent(renderer).width if beside else 0.0
    handles, labels = ax.get_legend_handles_labels()
    if not beside:
        add_legend(ax, outside_from=len(handles) + 1)
        return
    legend = ax.legend(handles, labels, loc="upper left", bbox_to_anchor=(1.02, 1.0),
                       borderaxespad=0.0)
    extra = (legend.get_window_extent(renderer).width - before) / fig.dpi
    if extra > 0 and fig.get_layout_engine() is None:
        w, h = fig.get_size_inches()
        pos = ax.get_position()
        left, right = pos.x0 * w, pos.x1 * w  # keep the panel's size in inches
        fig.set_size_inches(w + extra, h)
        fig.subplots_adjust(left=left / (w + extra), right=right / (w + extra))


@styled
def add_sweep_intervals(fig: Any, result: SweepResult, w: WhatIf) -> Any:
    """Line figures: 68 % bands per temperature; maps: hatching where not pinned."""
    shape = tuple(a.values.size for a in result.axes) + (result.temperature.size,)
    low, high = w.low.reshape(shape), w.high.reshape(shape)
    bad = (~w.pinned).reshape(shape)
    sizes = [a.values.size for a in result.axes]
    if len(sizes) >= 2 and sizes[0] >= 2 and sizes[1] >= 2:
        idx = tuple([slice(None), slice(None)] + [0] * (len(sizes) - 2))
        a0, a1 = result.axes[0], result.axes[1]
        x, y = a0.shown, a1.shown
        ox, oy = np.argsort(x), np.argsort(y)
        panels = [ax for ax in fig.axes if ax.get_label() != "<colorbar>" and ax.has_data()]
        for ax, t in zip(panels, pick(result.temperature.size, MAX_PANELS), strict=False):
            z = bad[idx][np.ix_(ox, oy, [t])][:, :, 0].T.astype(float)
            if z.any():
                ax.contourf(x[ox], y[oy], z, levels=[0.5, 1.5], colors="none",
                            hatches=[_HATCH])
        return fig
    ax = fig.axes[0]
    d = int(np.argmax(sizes))
    idx = tuple(slice(None) if i == d else 0 for i in range(len(sizes)))
    xv = result.axes[d].shown
    order = np.argsort(xv)
    ts = pick(result.temperature.size, MAX_LINES)
    for color, t in zip(sequential_colors(len(ts), "plasma"), ts, strict=True):
        lo, hi, b = low[idx][order, t], high[idx][order, t], bad[idx][order, t]
        ax.fill_between(xv[order], lo, hi, color=color, alpha=0.2, lw=0)
        if b.any():
            ax.fill_between(xv[order], lo, hi, where=b, facecolor="none", edgecolor=color,
                            hatch=_HATCH, lw=0)
    if bad.any():
        ax.fill_between([], [], [], facecolor="none", edgecolor="black", hatch=_HATCH, lw=0,
                        label="not pinned by the data")
        _legend_again(ax)
    return fig


@styled
def add_alloy_bands(fig: Any, w: WhatIf, most: int = MAX_LINES) -> Any:
    """68 % bands around the alloy lines (colour per temperature as in the alloy figure)."""
    ax = fig.axes[0]
    x = w.changes["material.alloy.fraction"]
    T = w.temperature
    picks = range(T.size) if T.size <= most else np.unique(
        np.round(np.linspace(0, T.size - 1, most)).astype(int))
    for color, t in zip(sequential_colors(len(picks), "plasma"), picks, strict=True):
        ax.fill_between(x, w.low[:, t], w.high[:, t], color=color, alpha=0.2, lw=0)
        bad = ~w.pinned[:, t]
        if bad.any():
            ax.fill_between(x, w.low[:, t], w.high[:, t], where=bad, facecolor="none",
                            edgecolor=color, hatch=_HATCH, lw=0)
    return fig
