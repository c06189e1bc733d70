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
from matplotlib.colors import LogNorm  # noqa: TID251 - plotting module

from kappa.io.tables import axis_columns as column_names
from kappa.presentation.style import new_figure
from kappa.workflows.spectrum import Spectrum
from kappa.workflows.sweep import SweepResult

__all__ = ["plot_sweep", "plot_sweep_lines", "plot_sweep_map", "plot_spectral",
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
    return f"{T:.4g} K"


def _minimum(result: SweepResult) -> np.ndarray | None:
    """The minimum κ_L of the config as written at each temperature (None for a batch)."""
    from kappa.core.limits import minimum_of_model

    if result.model.batch_shape:
        return None
    return minimum_of_model(result.temperature, result.model)


def plot_sweep(result: SweepResult):
    """The sweep's figure: lines for one key, contour maps for two or more keys."""
    sizes = [a.values.size for a in result.axes]
    if len(sizes) >= 2 and sizes[0] >= 2 and sizes[1] >= 2:
        return plot_sweep_map(result)
    return plot_sweep_lines(result)


def _held(result: SweepResult, keep: tuple[int, ...]) -> tuple[tuple, str]:
    """Index holding every axis not in ``keep`` at its first value, and a note naming them."""
    idx = tuple(slice(None) if d in keep else 0 for d in range(len(result.axes)))
    names = column_names(result.axes)
    held = [f"{names[d].split(' [')[0]} = {result.axes[d].shown[0]:.4g}"
            + ("" if result.axes[d].unit == "1" else f" {result.axes[d].unit}")
            for d in range(len(result.axes)) if d not in keep]
    return idx, ("; ".join(held))


def plot_sweep_lines(result: SweepResult, ax=None):
    """κ_L against the longest axis (others at their first value), one line per temperature."""
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
    for n, t in enumerate(pick(result.temperature.size, MAX_LINES)):
        ax.plot(x[order], k[order, t], marker="o" if x.size <= 25 else None, ms=3,
                color=f"C{n % 10}", label=f"T = {_fmt_T(result.temperature[t])}")
        if kmin is not None:
            from kappa.core.limits import MINIMUM_MODEL

            ax.axhline(kmin[t], color=f"C{n % 10}", lw=0.8, ls="--",
                       label=f"minimum κ_L ({MINIMUM_MODEL}), {_fmt_T(result.temperature[t])}")
    if _log_scale(x, axis.log):
        ax.set_xscale("log")
    kk = k[np.isfinite(k)]
    if kk.size and kk.min() > 0 and kk.max() / kk.min() >= 20:
        ax.set_yscale("log")
    ax.set_xlabel(column_names(result.axes)[d])
    ax.set_ylabel("κ_L [W/(m K)]")
    title = "κ_L sweep" + (f" ({note})" if note else "")
    ax.set_title(title, fontsize=10)
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=8)
    return fig


def plot_sweep_map(result: SweepResult, temperatures: list[int] | None = None):
    """Filled contour maps of κ_L over the first two keys, one panel per temperature."""
    ts = temperatures if temperatures is not None else pick(result.temperature.size, MAX_PANELS)
    n = len(ts)
    ncols = min(n, 3)
    nrows = math.ceil(n / ncols)
    fig, axes = new_figure(5.2 * ncols, 4.3 * nrows, nrows, ncols)
    a0, a1 = result.axes[0], result.axes[1]
    idx, note = _held(result, (0, 1))
    k2 = result.kappa_L[idx]  # (N0, N1, nT)
    x, y = a0.shown, a1.shown
    ox, oy = np.argsort(x), np.argsort(y)
    names = column_names(result.axes)
    kmin = _minimum(result)
    for p, t in enumerate(ts):
        ax = axes[p // ncols, p % ncols]
        z = k2[np.ix_(ox, oy, [t])][:, :, 0].T  # rows: y, columns: x
        finite = z[np.isfinite(z)]
        lo, hi = (finite.min(), finite.max()) if finite.size else (0.0, 0.0)
        if not finite.size or hi <= lo * (1 + 1e-9):
            mesh = ax.pcolormesh(x[ox], y[oy], z, shading="nearest")
            fig.colorbar(mesh, ax=ax, label="κ_L [W/(m K)]")
        else:
            if lo > 0 and hi / lo >= 10:
                levels = np.geomspace(lo, hi, 25)
                norm = LogNorm(lo, hi)
                lines = np.geomspace(lo, hi, 9)[1:-1]
            else:
                levels = np.linspace(lo, hi, 25)
                norm = None
                lines = np.linspace(lo, hi, 9)[1:-1]
            filled = ax.contourf(x[ox], y[oy], z, levels=levels, norm=norm, cmap="viridis")
            iso = ax.contour(x[ox], y[oy], z, levels=lines, colors="white", linewidths=0.8)
            ax.clabel(iso, fmt=lambda v: f"{v:.3g}", fontsize=7)
            cb = fig.colorbar(filled, ax=ax)
            cb.set_ticks(lines)
            cb.set_ticklabels([f"{v:.3g}" for v in lines])
            cb.ax.minorticks_off()
            cb.set_label("κ_L [W/(m K)]")
        if kmin is not None and finite.size and lo < kmin[t] < hi:
            from kappa.core.limits import MINIMUM_MODEL

            low = ax.contour(x[ox], y[oy], z, levels=[kmin[t]], colors="red",
                             linewidths=1.2, linestyles="--")
            ax.clabel(low, fmt=lambda v: f"κ_min {MINIMUM_MODEL} {v:.3g}", fontsize=7)
        if _log_scale(x, a0.log):
            ax.set_xscale("log")
        if _log_scale(y, a1.log):
            ax.set_yscale("log")
        ax.set_xlabel(names[0])
        ax.set_ylabel(names[1])
        ax.set_title(f"T = {_fmt_T(result.temperature[t])}", fontsize=10)
    for p in range(n, nrows * ncols):
        axes[p // ncols, p % ncols].set_visible(False)
    if note:
        fig.suptitle(f"κ_L with {note}", fontsize=10)
    return fig


# --- spectra -------------------------------------------------------------------------------------

_STYLES = ("-", "--", ":", "-.")


def plot_spectral(sp: Spectrum, ax=None):
    """Spectral κ per THz against frequency, per branch and temperature."""
    if ax is None:
        fig, axes = new_figure()
        ax = axes[0, 0]
    else:
        fig = ax.figure
    colors = [f"C{i}" for i in range(10)]
    for t in range(sp.temperature.size):
        for j, label in enumerate(sp.branches):
            ax.plot(sp.frequency[t, j] / 1e12, sp.spectral[t, j] * 1e12,
                    color=colors[t % 10], ls=_STYLES[j % 4],
                    label=f"{_fmt_T(sp.temperature[t])}, {label}")
    ax.set_xlabel("frequency ν = ω/2π [THz]")
    ax.set_ylabel("κ per frequency [W/(m K THz)]")
    ax.set_title("Spectral lattice thermal conductivity", fontsize=10)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=7)
    return fig


def plot_cumulative(sp: Spectrum):
    """Two panels: cumulative κ against frequency (all branches) and against mean free path."""
    fig, axes = new_figure(11.0, 4.4, 1, 2)
    ax_f, ax_l = axes[0, 0], axes[0, 1]
    for t in range(sp.temperature.size):
        color = f"C{t % 10}"
        for j, label in enumerate(sp.branches):
            ax_f.plot(sp.frequency[t, j] / 1e12, sp.cumulative[t, j], color=color,
                      ls=_STYLES[j % 4], label=f"{_fmt_T(sp.temperature[t])}, {label}")
        lam, acc = sp.mfp_nodes[t], sp.mfp_cumulative[t]
        keep = lam <= lam[0] * 1e6 if lam.size > 2 else np.ones(lam.size, dtype=bool)
        if lam.size >= 2 and keep.sum() >= 2:
            ax_l.plot(lam[keep] * 1e9, acc[keep], color=color, label=_fmt_T(sp.temperature[t]))
        else:  # a single mean free path (e.g. boundary scattering only)
            ax_l.plot([lam[0] * 1e9, lam[0] * 1e9], [0, acc[-1]], color=color,
                      label=_fmt_T(sp.temperature[t]))
        ax_l.axvline(sp.mfp50[t] * 1e9, color=color, lw=0.8, ls="--")
    ax_f.set_xlabel("frequency ν = ω/2π [THz]")
    ax_f.set_ylabel("cumulative κ [W/(m K)]")
    ax_f.set_title("κ carried by phonons below ν (per branch)", fontsize=10)
    ax_l.set_xscale("log")
    ax_l.set_xlabel("mean free path Λ [nm]")
    ax_l.set_ylabel("cumulative κ_L [W/(m K)]")
    ax_l.set_title("κ_L carried by phonons with Λ below (dashed: Λ50)", fontsize=10)
    for ax in (ax_f, ax_l):
        ax.grid(True, which="both", alpha=0.3)
        ax.legend(fontsize=7)
    return fig


def plot_rates(sp: Spectrum):
    """Scattering rate of each mechanism against frequency, one panel per temperature."""
    ts = pick(sp.temperature.size, MAX_PANELS)
    ncols = min(len(ts), 3)
    nrows = math.ceil(len(ts) / ncols)
    fig, axes = new_figure(5.2 * ncols, 4.2 * nrows, nrows, ncols)
    for p, t in enumerate(ts):
        ax = axes[p // ncols, p % ncols]
        for i, (key, r) in enumerate(sp.rates.items()):
            for j, label in enumerate(sp.branches):
                y = r[t, j]
                ok = y > 0
                if ok.any():
                    ax.plot(sp.frequency[t, j][ok] / 1e12, y[ok], color=f"C{i % 10}",
                            ls=_STYLES[j % 4], label=f"{key}, {label}")
        ax.set_xscale("log")
        ax.set_yscale("log")
        ax.set_xlabel("frequency ν = ω/2π [THz]")
        ax.set_ylabel("scattering rate τ⁻¹ [1/s]")
        ax.set_title(f"T = {_fmt_T(sp.temperature[t])}", fontsize=10)
        ax.grid(True, which="both", alpha=0.3)
        ax.legend(fontsize=7)
    for p in range(len(ts), nrows * ncols):
        axes[p // ncols, p % ncols].set_visible(False)
    return fig
