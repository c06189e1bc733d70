"""Figures for sweeps and spectra (matplotlib object API via :func:`kappa.presentation.style.new_figure`).

Sweeps: one key → κ_L against the key, one line per temperature; two or more keys → a filled
contour map of κ_L over the first two keys with labelled iso-κ lines, one panel per temperature
(small multiples, at most :data:`MAX_PANELS`, evenly picked); further keys are held at their
first value (named in the panel title). Spectra: spectral κ, cumulative κ against frequency and
against mean free path, and scattering rates against frequency.
"""

from __future__ import annotations

import math

import numpy as np

from kappa.presentation.style import (
    KAPPA_L_LABEL,
    SIZES,
    ax_scale,
    base_size,
    decades,
    fill_limits,
    key_label,
    level_text,
    log_axes,
    new_figure,
    panel_figure,
    round_levels,
    sequential_colors,
    styled,
    value_text,
)
from kappa.workflows.spectrum import Spectrum
from kappa.workflows.sweep import SweepResult

__all__ = ["plot_sweep", "sweep_figure", "plot_sweep_lines", "plot_sweep_map", "plot_spectral",
           "plot_cumulative", "plot_rates", "pick", "MAX_PANELS", "MAX_LINES"]

MAX_PANELS = 6  #: temperatures shown as panels of a map figure
MAX_LINES = 8  #: temperatures shown as lines of a line figure


def pick(n: int, most: int) -> list[int]:
    """At most ``most`` indices out of ``range(n)``, evenly spread, first and last included."""
    if n <= most:
        return list(range(n))
    return sorted({round(i * (n - 1) / (most - 1)) for i in range(most)})


def _log_scale(values: np.ndarray, log: bool) -> bool:
    v = np.asarray(values, dtype=float)
    return bool(log or (v.min() > 0 and v.max() / v.min() >= 50.0))


def _fmt_T(T: float) -> str:
    return f"{T:.6g} K"


def _minimum(result: SweepResult) -> np.ndarray | None:
    """The minimum κ_L of the config as written at each temperature (None for a batch)."""
    from kappa.core.limits import minimum_of_model

    if result.model.batch_shape:
        return None
    return minimum_of_model(result.temperature, result.model)


def _config_value(result: SweepResult, d: int) -> float | None:
    """The config's own value of axis ``d`` in its display unit (None if not a number)."""
    a = result.axes[d]
    try:
        v = float(np.asarray(result.model.value(a.key)))
    except (TypeError, ValueError, KeyError, AttributeError):
        return None
    return float(a.parameter.shown(v)) if np.isfinite(v) else None


MAP_CELLS = 300  #: most grid values per axis drawn in a map (the table keeps every point)


def _columns(n: int) -> int:
    """Columns of a grid of ``n`` panels (2 × 2 for four)."""
    return 2 if n == 4 else min(n, 3)


def _hide_unused(axes, n: int, nrows: int, ncols: int) -> None:
    """Hide the empty cells of the last row; the panels above them show their x tick labels."""
    for p in range(n, nrows * ncols):
        axes[p // ncols, p % ncols].set_visible(False)
        if p - ncols >= 0:
            above = axes[(p - ncols) // ncols, p % ncols]
            above.xaxis.set_tick_params(labelbottom=True)


def _thin(n: int, most: int = MAP_CELLS) -> np.ndarray:
    """Indices of at most ``most`` of ``n`` sorted values, evenly spread, ends included."""
    return np.arange(n) if n <= most else np.unique(np.linspace(0, n - 1, most).round()
                                                    .astype(int))


def sweep_figure(result: SweepResult, fitted: dict | None = None, answers=None):
    """The figure of ``kappa sweep``: :func:`plot_sweep`, with the what-if intervals of
    ``answers`` (:func:`kappa.presentation.whatif.add_sweep_intervals`) when given."""
    fig = plot_sweep(result, fitted=fitted)
    if answers is not None:
        from kappa.presentation.whatif import add_sweep_intervals

        add_sweep_intervals(fig, result, answers)
    return fig


@styled
def plot_sweep(result: SweepResult, fitted: dict | None = None):
    """The sweep's figure: lines for one key, contour maps for two or more keys.

    ``fitted`` maps swept keys to (value, low, high) [SI] of a fit (68 % interval); the fitted
    point is marked with its interval on maps.
    """
    sizes = [a.values.size for a in result.axes]
    if len(sizes) >= 2 and sizes[0] >= 2 and sizes[1] >= 2:
        return plot_sweep_map(result, fitted=fitted)
    return plot_sweep_lines(result)


def _held(result: SweepResult, keep: tuple[int, ...]) -> tuple[tuple, str]:
    """Index holding every axis not in ``keep`` at its first value, and a note naming them."""
    idx = tuple(slice(None) if d in keep else 0 for d in range(len(result.axes)))
    held = [f"{a.parameter.label} = {value_text(a.parameter, a.values[0])}"
            for d, a in enumerate(result.axes) if d not in keep]
    return idx, ("; ".join(held))


@styled
def _fitted_marks(result: SweepResult, fitted: dict | None):
    """((x, y), (xerr, yerr)) of a fitted point on a map, in display units (None: none)."""
    if not fitted:
        return None
    point, errs = [], []
    for d in (0, 1):
        a = result.axes[d]
        if a.key in fitted:
            v, lo, hi = (float(a.parameter.shown(u)) for u in fitted[a.key])
            point.append(v)
            errs.append([[v - lo], [hi - v]])
        else:
            v = _config_value(result, d)
            if v is None:
                return None
            point.append(v)
            errs.append(None)
    if all(e is None for e in errs):
        return None
    return tuple(point), tuple(errs)


def plot_sweep_lines(result: SweepResult, ax=None):
    """κ_L against the longest axis (others at their first value), one line per temperature
    (sequential colours: temperature is ordered); the config's value is marked."""
    if ax is None:
        fig, axes = new_figure()
        ax = axes[0, 0]
    else:
        fig = ax.figure
    d = int(np.argmax([a.values.size for a in result.axes]))
    axis = result.axes[d]
    idx, note = _held(result, (d,))
    k = result.kappa_L[idx]  # (N_d, nT)
    x = axis.shown
    order = np.argsort(x)
    kmin = _minimum(result)
    ts = pick(result.temperature.size, MAX_LINES)
    colors = sequential_colors(len(ts), "plasma")
    for color, t in zip(colors, ts, strict=True):
        ax.plot(x[order], k[order, t], marker="o" if x.size <= 25 else None, color=color,
                label=f"T = {_fmt_T(result.temperature[t])}")
    if _log_scale(x, axis.log):
        log_axes(ax, x=True, y=False, decades=decades(x) * ax_scale(ax, "x"))
    ax.set_xlim(x.min(), x.max()) if x.min() < x.max() else None
    fill_limits(ax, [k[:, ts]])
    limits = ax.get_ylim()
    if kmin is not None:
        shown = [(c, kmin[t]) for c, t in zip(colors, ts, strict=True)
                 if limits[0] <= kmin[t] <= limits[1]]
        for n, (c, v) in enumerate(shown):
            ax.axhline(v, color=c, lw=0.8, ls=(0, (1, 2)),
                       label=r"minimum $\kappa_L$ (Cahill)" if n == 0 else None)
    ref = _config_value(result, d)
    if ref is not None and x.min() <= ref <= x.max():
        ax.axvline(ref, color="0.3", lw=0.8, ls="--", label="config value")
    ax.set_ylim(limits)
    ax.set_xlabel(key_label(axis.parameter))
    ax.set_ylabel(KAPPA_L_LABEL)
    if note:
        ax.set_title(f"with {note}")
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(loc="best")
    return fig


@styled
def plot_sweep_map(result: SweepResult, temperatures: list[int] | None = None,
                   fitted: dict | None = None):
    """Maps of κ_L over the first two keys, one panel per temperature, on one colour scale.

    All panels share the colour scale and its colour bar; iso-κ lines sit at round levels
    (1-2-5 steps), labelled; the config's point is marked with a star; the minimum κ_L is a
    dashed red line where the map reaches it. Further keys are held at their first value.
    """
    from matplotlib.colors import LogNorm, Normalize  # noqa: TID251 - plotting module

    nT = result.temperature.size
    ts = temperatures if temperatures is not None else pick(nT, MAX_PANELS)
    n = len(ts)
    ncols = _columns(n)
    nrows = math.ceil(n / ncols)
    # fixed margins in inches (no automatic layout: a map is drawn once, quickly)
    from matplotlib import rcParams

    size = rcParams["font.size"] / 9.0  # margins grow with the style's text
    panel_w, panel_h = 3.0 * max(1.0, 0.8 * size), 2.5 * max(1.0, 0.8 * size)
    left, right, bottom, top = 0.8 * size, 1.15 * size, 0.6 * size, 0.55 * size
    gap_w, gap_h = 0.35 * size, 0.45 * size
    width = left + ncols * panel_w + (ncols - 1) * gap_w + right
    height = bottom + nrows * panel_h + (nrows - 1) * gap_h + top
    scale = base_size()[0] / SIZES["paper"][0]  # new_figure scales sizes to the style
    fig, axes = new_figure(width / scale, height / scale, nrows, ncols, layout=None,
                           sharex=True, sharey=True)
    fig.subplots_adjust(left=left / width, right=1 - right / width, bottom=bottom / height,
                        top=1 - top / height, wspace=gap_w / panel_w, hspace=gap_h / panel_h)
    a0, a1 = result.axes[0], result.axes[1]
    idx, note = _held(result, (0, 1))
    k2 = result.kappa_L[idx]  # (N0, N1, nT)
    x, y = a0.shown, a1.shown
    ox, oy = np.argsort(x), np.argsort(y)
    kmin = _minimum(result)
    finite = k2[..., ts][np.isfinite(k2[..., ts])]
    lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    log = lo > 0 and hi / lo >= 10
    if hi <= lo:
        hi = lo * 1.01 + 1e-12
    norm = LogNorm(lo, hi) if log else Normalize(lo, hi)
    levels = round_levels(lo, hi, log, most=9)
    ref = (_config_value(result, 0), _config_value(result, 1))
    mesh = None
    sx, sy = ox[_thin(ox.size)], oy[_thin(oy.size)]  # a figure shows at most MAP_CELLS
    for p, t in enumerate(ts):
        ax = axes[p // ncols, p % ncols]
        z = k2[np.ix_(sx, sy, [t])][:, :, 0].T  # rows: y, columns: x (thinned)
        mesh = ax.pcolormesh(x[sx], y[sy], z, shading="gouraud" if z.size <= 20_000 else
                             "nearest", norm=norm, cmap="viridis", rasterized=True)
        zf = z[np.isfinite(z)]
        inner = [v for v in levels if zf.size and zf.min() < v < zf.max()]
        if inner:
            iso = ax.contour(x[sx], y[sy], z, levels=inner, colors="white", linewidths=0.7)
            for label in ax.clabel(iso, fmt=level_text, fontsize="x-small"):
                label._kappa_inline = True
        if kmin is not None and zf.size and zf.min() < kmin[t] < zf.max():
            low = ax.contour(x[sx], y[sy], z, levels=[kmin[t]], colors="red",
                             linewidths=1.0, linestyles="--")
            for label in ax.clabel(low, fmt=lambda v: f"min {v:.2g}", fontsize="x-small"):
                label._kappa_inline = True
        if None not in ref:
            ax.plot([ref[0]], [ref[1]], marker="*", ms=10, color="white", mec="black",
                    mew=0.8, ls="none", label="config", clip_on=True)
        marks = _fitted_marks(result, fitted)
        if marks is not None:
            (fx, fy), (xerr, yerr) = marks
            ax.errorbar([fx], [fy], xerr=xerr, yerr=yerr, fmt="o", ms=4, color="white",
                        mec="black", ecolor="white", elinewidth=1.2, capsize=2,
                        label="fitted (68 %)")
        if _log_scale(x, a0.log):
            log_axes(ax, x=True, y=False, decades=decades(x) * ax_scale(ax, "x"))
        if _log_scale(y, a1.log):
            log_axes(ax, x=False, y=True, decades=decades(y) * ax_scale(ax, "y"))
        ax.set_xlim(x.min(), x.max())
        ax.set_ylim(y.min(), y.max())
        if p // ncols == nrows - 1 or p + ncols >= n:
            ax.set_xlabel(key_label(a0.parameter))
        if p % ncols == 0:
            ax.set_ylabel(key_label(a1.parameter))
        ax.set_title(f"T = {_fmt_T(result.temperature[t])}")
    _hide_unused(axes, n, nrows, ncols)
    used = [axes[p // ncols, p % ncols] for p in range(n)]
    cax = fig.add_axes([1 - (right - 0.2) / width, bottom / height, 0.14 / width,
                        1 - (top + bottom) / height], label="<colorbar>")
    cb = fig.colorbar(mesh, cax=cax, ticks=levels)
    cb.ax.minorticks_off()
    cb.set_ticklabels([level_text(v) for v in levels])
    cb.set_label(KAPPA_L_LABEL)
    if None not in ref or fitted:
        used[0].legend(loc="upper right", fontsize="x-small", framealpha=0.8, frameon=True)
    words = []
    if note:
        words.append(f"with {note}")
    if n < nT:
        words.append(f"{n} of {nT} temperatures")
    if words:
        fig.suptitle("; ".join(words), y=1 - 0.08 / height, va="top")
    return fig


# --- spectra -------------------------------------------------------------------------------------

_STYLES = ("-", "--", ":", "-.")


def _temperature_colors(sp: Spectrum) -> list:
    return sequential_colors(sp.temperature.size, "plasma")


@styled
def plot_spectral(sp: Spectrum, ax=None):
    """Spectral κ per THz against frequency: colour by temperature, line style by branch."""
    if ax is None:
        fig, axes = new_figure()
        ax = axes[0, 0]
    else:
        fig = ax.figure
    colors = _temperature_colors(sp)
    for t in range(sp.temperature.size):
        for j in range(len(sp.branches)):
            ax.plot(sp.frequency[t, j] / 1e12, sp.spectral[t, j] * 1e12,
                    color=colors[t], ls=_STYLES[j % 4])
    _key(ax, sp, colors)
    ax.set_xlabel(r"frequency $\nu = \omega/2\pi$ [THz]")
    ax.set_ylabel(r"$\kappa$ per frequency [W/(m K THz)]")
    ax.set_xlim(left=0)
    ax.set_ylim(bottom=0)
    ax.set_title("Spectral lattice thermal conductivity")
    ax.grid(True, alpha=0.3)
    _legend(ax)
    return fig


def _key(ax, sp: Spectrum, colors, extra=()) -> None:
    """One legend entry per temperature (colour) and per branch (line style)."""
    for t, color in enumerate(colors):
        ax.plot([], [], color=color, label=_fmt_T(sp.temperature[t]))
    if len(sp.branches) > 1:
        for j, label in enumerate(sp.branches):
            ax.plot([], [], color="0.35", ls=_STYLES[j % 4], label=label)
    for label, ls in extra:
        ax.plot([], [], color="0.35", lw=0.8, ls=ls, label=label)
    _legend(ax)


def _legend(ax, most_inside: int = 6) -> None:
    handles, labels = ax.get_legend_handles_labels()
    if len(handles) > most_inside:
        ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), borderaxespad=0.0)
    elif handles:
        ax.legend(loc="best")


def _length_text(nm: float) -> str:
    """A mean free path in nm as short text with a fitting unit (``85 nm``, ``1.2 µm``)."""
    from kappa.presentation.style import number_text

    if nm >= 1e6:
        return f"{number_text(nm / 1e6, 2)} mm"
    if nm >= 1e3:
        return f"{number_text(nm / 1e3, 2)} µm"
    return f"{number_text(nm, 2)} nm"


@styled
def plot_cumulative(sp: Spectrum):
    """Two panels: κ carried below a frequency (per branch) and below a mean free path, with
    the mean free paths Λ₅₀ and Λ₈₀ marked and written beside their lines."""
    fig, axes = panel_figure(1, 2, (4.0, 3.0), title=True)
    ax_f, ax_l = axes[0, 0], axes[0, 1]
    colors = _temperature_colors(sp)
    for t in range(sp.temperature.size):
        color = colors[t]
        for j in range(len(sp.branches)):
            ax_f.plot(sp.frequency[t, j] / 1e12, sp.cumulative[t, j], color=color,
                      ls=_STYLES[j % 4])
        lam, acc = sp.mfp_nodes[t], sp.mfp_cumulative[t]
        keep = lam <= lam[0] * 1e6 if lam.size > 2 else np.ones(lam.size, dtype=bool)
        if lam.size >= 2 and keep.sum() >= 2:
            ax_l.plot(lam[keep] * 1e9, acc[keep], color=color)
        else:  # a single mean free path (e.g. boundary scattering only)
            ax_l.plot([lam[0] * 1e9, lam[0] * 1e9], [0, acc[-1]], color=color)
    ax_f.set_xlabel(r"frequency $\nu$ [THz]")
    ax_f.set_ylabel(r"$\kappa$ carried below $\nu$ [W/(m K)]")
    ax_f.set_title("Cumulative over frequency")
    ax_f.set_xlim(left=0)
    ax_f.set_ylim(bottom=0)
    # the range where K rises from 10⁻⁴ to 1 − 10⁻⁴ of κ_L (the largest Λ may lie far out)
    ends = [(g[0], g[-2] if g.size > 2 else g[-1]) for g in sp.mfp_nodes]
    left = min(e[0] for e in ends) * 1e9 / 1.3
    right = max(max(e[1] for e in ends) * 1e9 * 1.3, left * 10)
    log_axes(ax_l, x=True, y=False, decades=math.log10(right / left) * ax_scale(ax_l, "x"))
    ax_l.set_xlim(left, right)
    top = float(np.nanmax([a[-1] for a in sp.mfp_cumulative]))
    ax_l.set_ylim(0, top * 1.08)
    ymax = ax_l.get_ylim()[1]
    for t in range(sp.temperature.size):
        for value, frac, ls in ((sp.mfp50[t], 0.5, "--"), (sp.mfp80[t], 0.8, ":")):
            nm = value * 1e9
            ax_l.axvline(nm, color=colors[t], lw=0.8, ls=ls)
            if sp.temperature.size <= 3:  # values written beside the lines (few lines only)
                text = ax_l.annotate(
                    rf"$\Lambda_{{{int(frac * 100)}}}$ = {_length_text(nm)}",
                    (nm, ymax * (0.97 - 0.09 * t - (0.045 if frac == 0.8 else 0.0))),
                    xytext=(3, 0), textcoords="offset points", fontsize="x-small",
                    color=colors[t], ha="left", va="top",
                    bbox={"boxstyle": "square,pad=0.1", "fc": "white", "ec": "none",
                          "alpha": 0.85})
                text.set_clip_on(True)
    ax_l.set_xlabel(r"mean free path $\Lambda$ [nm]")
    ax_l.set_ylabel(r"$\kappa_L$ carried below $\Lambda$ [W/(m K)]")
    ax_l.set_title("Cumulative over mean free path")
    ax_f.grid(True, alpha=0.3)
    ax_l.grid(True, which="major", alpha=0.3)
    _key(ax_f, sp, colors)
    for label, ls in ((r"$\Lambda_{50}$", "--"), (r"$\Lambda_{80}$", ":")):
        ax_l.plot([], [], color="0.35", lw=0.8, ls=ls, label=label)
    ax_l.legend(loc="lower right")
    return fig


@styled
def plot_rates(sp: Spectrum):
    """Scattering rate of each mechanism against frequency, one panel per temperature on
    shared axes (colour: mechanism, line style: branch)."""
    from kappa.presentation.style import mechanism_title

    ts = pick(sp.temperature.size, MAX_PANELS)
    ncols = _columns(len(ts))
    nrows = math.ceil(len(ts) / ncols)
    labels = [f"{mechanism_title(key)}, {b}" for key in sp.rates for b in sp.branches]
    beside = 0.9 + 0.065 * max(len(t) for t in labels) if labels else 0.0
    fig, axes = panel_figure(nrows, ncols, (3.0, 2.5), beside=beside, title=True, sharex=True,
                             sharey=True)
    freq = sp.frequency[sp.frequency > 0] / 1e12
    rates = np.concatenate([r[r > 0] for r in sp.rates.values()]) if sp.rates else freq
    for p, t in enumerate(ts):
        ax = axes[p // ncols, p % ncols]
        for i, (key, r) in enumerate(sp.rates.items()):
            for j, label in enumerate(sp.branches):
                y = r[t, j]
                ok = y > 0
                if ok.any():
                    ax.plot(sp.frequency[t, j][ok] / 1e12, y[ok], color=f"C{i % 10}",
                            ls=_STYLES[j % 4], label=f"{mechanism_title(key)}, {label}")
        log_axes(ax, x=True, y=False, decades=decades(freq) * ax_scale(ax, "x"))
        log_axes(ax, x=False, y=True, decades=decades(rates) * ax_scale(ax, "y"))
        if p // ncols == nrows - 1 or p + ncols >= len(ts):
            ax.set_xlabel(r"frequency $\nu$ [THz]")
        if p % ncols == 0:
            ax.set_ylabel(r"scattering rate $\tau^{-1}$ [1/s]")
        ax.set_title(f"T = {_fmt_T(sp.temperature[t])}")
        ax.grid(True, which="major", alpha=0.3)
    _hide_unused(axes, len(ts), nrows, ncols)
    handles, labels = axes[0, 0].get_legend_handles_labels()
    if handles:
        axes[0, ncols - 1].legend(handles, labels, loc="upper left", bbox_to_anchor=(1.04, 1.0),
                                  borderaxespad=0.0)
    return fig
