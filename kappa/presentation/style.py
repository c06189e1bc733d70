"""The one plotting style of kappa: figures, labels, scales, colours, levels, saving.

Every figure module builds its figures with these pieces (matplotlib's object API on an Agg
canvas; pyplot's global state is never touched), so that all figures read alike:

* **labels** in mathtext and plain words: quantities (:data:`KAPPA_L_LABEL`, ``κ_L``,
  ``Λ₅₀``), mechanisms by their registry titles (:func:`mechanism_title`: "point defects"),
  keys by their declarations (:func:`key_label`: "grain size [nm]"), units written as in print
  (``µm``, ``Å³``);
* **scales** chosen so that the data and the fit fill the panel (:func:`fill_limits`); curves
  of secondary interest may leave it and are then marked in the legend;
* **colours**: sequential (viridis) for ordered values such as temperatures or a swept key
  (:func:`sequential_colors`), categorical only for unordered things such as mechanisms;
* **levels** of contour maps at round 1-2-5 steps (:func:`round_levels`), one colour scale and
  colour bar shared by all panels of a figure;
* **styles** ``paper`` (default; 8-9 pt text for a printed page) and ``talk`` (larger text and
  lines for slides), applied with :func:`use` or :func:`context`;
* **saving** (:func:`save`): PNG at 150 dpi, SVG with text kept as text, PDF with embedded
  TrueType fonts;
* **checks** (:func:`text_problems`): texts outside the canvas or overlapping each other,
  used by the tests on every figure.
"""

from __future__ import annotations

import contextlib
import math
import re
from collections.abc import Iterator, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from kappa.core.mechanisms import REGISTRY

if TYPE_CHECKING:  # matplotlib is loaded when a figure is made, not with this module
    from matplotlib.figure import Figure

__all__ = ["current", "load", "warm_up", "new_figure", "panel_figure", "save", "log_axes", "mechanism_title", "key_label", "unit_text",
           "value_text", "fill_limits", "round_levels", "sequential_colors", "use", "context",
           "text_problems", "STYLES", "FIGURE_FORMATS", "KAPPA_L_LABEL", "KAPPA_LABEL",
           "T_LABEL", "plot_prediction"]

KAPPA_L_LABEL = r"$\kappa_L$ [W/(m K)]"
KAPPA_LABEL = r"$\kappa$ [W/(m K)]"
T_LABEL = r"$T$ [K]"
FIGURE_FORMATS = ("png", "svg", "pdf")
PNG_DPI = 150

#: rcParams of each style (applied on top of matplotlib's defaults).
STYLES: dict[str, dict] = {
    "paper": {
        "font.size": 9.0, "axes.titlesize": 9.5, "axes.labelsize": 9.0,
        "xtick.labelsize": 8.0, "ytick.labelsize": 8.0, "legend.fontsize": 7.5,
        "legend.title_fontsize": 8.0, "figure.titlesize": 10.0, "lines.linewidth": 1.5,
        "lines.markersize": 4.0, "axes.linewidth": 0.8, "grid.linewidth": 0.5,
        "grid.alpha": 0.35, "legend.frameon": False, "axes.grid": False,
        "svg.fonttype": "none", "pdf.fonttype": 42, "mathtext.default": "regular",
        "axes.titlelocation": "left", "axes.titley": 1.0, "axes.titlepad": 4.0,
    },
    "talk": {
        "font.size": 13.0, "axes.titlesize": 14.0, "axes.labelsize": 13.0,
        "xtick.labelsize": 12.0, "ytick.labelsize": 12.0, "legend.fontsize": 11.0,
        "legend.title_fontsize": 11.0, "figure.titlesize": 14.0, "lines.linewidth": 2.4,
        "lines.markersize": 6.5, "axes.linewidth": 1.2, "grid.linewidth": 0.7,
        "grid.alpha": 0.35, "legend.frameon": False, "axes.grid": False,
        "svg.fonttype": "none", "pdf.fonttype": 42, "mathtext.default": "regular",
        "axes.titlelocation": "left", "axes.titley": 1.0, "axes.titlepad": 5.0,
    },
}
#: Figure sizes [in] per style (single panel); multi-panel figures scale from these.
SIZES = {"paper": (6.0, 4.2), "talk": (8.0, 5.6)}
_current = {"name": "paper"}


def use(name: str = "paper") -> None:
    """Make ``name`` the style of the figures kappa makes from now on.

    matplotlib's global settings are not changed: each figure function and :func:`save` apply
    the style to their own work only (:func:`styled`).
    """
    if name not in STYLES:
        raise ValueError(f"style must be one of {', '.join(STYLES)}")
    _current["name"] = name


def current() -> str:
    """The name of the current style."""
    return _current["name"]


def styled(func):
    """Run a figure function with the current style's settings (restored afterwards)."""
    import functools

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        import matplotlib

        with matplotlib.rc_context(STYLES[_current["name"]]):
            return func(*args, **kwargs)

    return wrapper


@contextlib.contextmanager
def context(name: str = "paper") -> Iterator[None]:
    """Make and save figures in style ``name`` inside the block, then restore the previous."""
    import matplotlib

    if name not in STYLES:
        raise ValueError(f"style must be one of {', '.join(STYLES)}")
    before = _current["name"]
    with matplotlib.rc_context(STYLES[name]):
        _current["name"] = name
        try:
            yield
        finally:
            _current["name"] = before


def base_size() -> tuple[float, float]:
    """(width, height) [in] of a one-panel figure in the current style."""
    return SIZES[_current["name"]]


def new_figure(width: float | None = None, height: float | None = None, nrows: int = 1,
               ncols: int = 1, layout: str | None = "constrained", **kwargs
               ) -> tuple[Figure, np.ndarray]:
    """A figure with an Agg canvas and its axes (2-D array). Sizes default to the style's."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    w0, h0 = base_size()
    scale = w0 / SIZES["paper"][0]
    fig = Figure(figsize=((width or w0 / scale) * scale, (height or h0 / scale) * scale),
                 layout=layout)
    FigureCanvasAgg(fig)
    axes = fig.subplots(nrows, ncols, squeeze=False, **kwargs)
    return fig, axes


@styled
def save(fig: Figure, stem: str | Path, formats: Sequence[str] = ("png", "svg")) -> list[Path]:
    """Write ``stem.FORMAT`` for each format (png, svg, pdf); return the paths.

    The layout is computed once, for the first format, and kept for the others.
    """
    paths = []
    for k, fmt in enumerate(formats):
        if fmt not in FIGURE_FORMATS:
            raise ValueError(f"figure format must be one of {', '.join(FIGURE_FORMATS)}")
        p = Path(f"{stem}.{fmt}")
        fig.savefig(p, dpi=PNG_DPI if fmt == "png" else None, format=fmt,
                    metadata={"Software": None} if fmt == "png" else None)
        if k == 0 and fig.get_layout_engine() is not None:
            fig.set_layout_engine("none")  # keep the layout just computed
        paths.append(p)
    return paths


def load() -> None:
    """Import the parts of matplotlib that making and saving a figure needs (a figure worker
    does this ahead, while the command computes)."""
    import matplotlib.backends.backend_agg
    import matplotlib.backends.backend_svg
    import matplotlib.figure  # noqa: F401


def warm_up() -> None:
    """Draw one small figure with math text on log axes: loads the fonts, the mathtext
    parser and what the first figure needs (a figure worker does this while it waits; it
    changes no figure)."""
    fig, axes = new_figure(1.0, 1.0, layout=None)
    ax = axes[0, 0]
    ax.loglog([1.0, 10.0], [1.0, 10.0])
    ax.set_xlabel(T_LABEL)
    ax.set_ylabel(KAPPA_L_LABEL)
    ax.set_title("T")
    fig.canvas.draw()


def panel_figure(nrows: int, ncols: int, panel: tuple[float, float] = (3.2, 2.6), *,
                 beside: float = 0.0, title: bool = False, **kwargs) -> tuple[Figure, np.ndarray]:
    """Panels of ``panel`` inches with fixed margins (no automatic layout pass, which costs
    more than drawing), room for tick labels, axis labels and titles in the current style,
    and ``beside`` inches on the right (a legend or colour bar). Returns (figure, axes)."""
    import matplotlib

    size = matplotlib.rcParams["font.size"] / 9.0
    pw, ph = panel[0] * max(1.0, 0.8 * size), panel[1] * max(1.0, 0.8 * size)
    left, right, bottom = 0.85 * size, 0.3 * size + beside, 0.6 * size
    top = 0.4 * size + (0.3 * size if title else 0.0)
    gap_w, gap_h = 0.85 * size, 0.6 * size
    if kwargs.get("sharey"):
        gap_w = 0.35 * size
    if kwargs.get("sharex"):
        gap_h = 0.4 * size
    width = left + ncols * pw + (ncols - 1) * gap_w + right
    height = bottom + nrows * ph + (nrows - 1) * gap_h + top
    scale = base_size()[0] / SIZES["paper"][0]
    fig, axes = new_figure(width / scale, height / scale, nrows, ncols, layout=None, **kwargs)
    fig.subplots_adjust(left=left / width, right=1 - right / width, bottom=bottom / height,
                        top=1 - top / height, wspace=gap_w / pw, hspace=gap_h / ph)
    return fig, axes


# --- words ----------------------------------------------------------------------------------


def mechanism_title(key: str) -> str:
    """The human name of a mechanism from the registry (``point defects``)."""
    cls = REGISTRY.get(key)
    return cls.title if cls is not None else key.replace("_", " ")


_UNITS = {"um": "µm", "angstrom**3": "Å³", "angstrom": "Å", "m^3": "m³", "1/s": "1/s",
          "m/s": "m/s", "km/s": "km/s", "W Ohm/K^2": "W Ω/K²", "mm^2/s": "mm²/s",
          "g/cm^3": "g/cm³", "uV/K": "µV/K", "kg/m^3": "kg/m³"}


def unit_text(unit: str) -> str:
    """A unit as printed: ``um`` → ``µm``, ``angstrom**3`` → ``Å³``; ``1`` → ``""``."""
    if unit in ("1", ""):
        return ""
    return _UNITS.get(unit, unit.replace("**", "^"))


_GREEK = {"Γ": r"\Gamma", "Λ": r"\Lambda", "ε": r"\varepsilon", "γ": r"\gamma",
          "κ": r"\kappa", "θ": r"\theta", "β": r"\beta", "τ": r"\tau", "ρ": r"\rho",
          "σ": r"\sigma", "ν": r"\nu", "ω": r"\omega"}
_SUBSCRIPT = re.compile(r"([A-Za-z" + "".join(_GREEK) + r"])_\{?([A-Za-z0-9]+)\}?")


def mathtext(text: str) -> str:
    r"""Symbols with subscripts as mathtext: ``Γ_M`` → ``$\Gamma_{M}$``."""
    def sub(m: re.Match) -> str:
        return f"${_GREEK.get(m.group(1), m.group(1))}_{{{m.group(2)}}}$"

    return _SUBSCRIPT.sub(sub, text)


def key_label(parameter, unit: bool = True) -> str:
    """Axis label of a key from its declaration: ``grain size [nm]``, ``specularity``."""
    u = unit_text(parameter.shown_unit)
    label = mathtext(parameter.label)
    return f"{label} [{u}]" if unit and u else label


def value_text(parameter, value: float) -> str:
    """``value`` [SI] of a key in its display unit with three figures: ``100 nm``."""
    v = float(parameter.shown(value))
    u = unit_text(parameter.shown_unit)
    return f"{number_text(v)} {u}".strip()


def number_text(v: float, digits: int = 3) -> str:
    """``v`` with ``digits`` significant figures, plain from 0.001 to 10⁶ (``1000``, not
    ``1e+03``)."""
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    if 1e-3 <= abs(v) < 1e6:
        decimals = max(0, digits - 1 - math.floor(math.log10(abs(v))))
        text = f"{round(v, decimals):.{decimals}f}"
        return text.rstrip("0").rstrip(".") if "." in text else text
    return f"{v:.{digits}g}"


# --- scales ---------------------------------------------------------------------------------


def _finite(values) -> np.ndarray:
    arrays = [np.asarray(v, dtype=float).ravel() for v in values]
    v = np.concatenate(arrays) if arrays else np.empty(0)
    return v[np.isfinite(v)]


def fill_limits(ax, primary: Sequence, *, axis: str = "y", log: bool | None = None,
                margin: float = 0.06, decades: float = 0.7) -> bool:
    """Scale and limits so that the ``primary`` values fill the panel; returns log or not.

    Log when the values span a factor of 8 or more (``log`` forces it). Curves drawn that lie
    outside these limits leave the panel (mark them with :func:`mark_clipped`).
    """
    v = _finite(primary)
    if v.size == 0:
        return False
    lo, hi = float(v.min()), float(v.max())
    if log is None:
        log = lo > 0 and hi / lo >= 8.0
    setter = ax.set_ylim if axis == "y" else ax.set_xlim
    if log and lo > 0:
        span = math.log10(hi / lo)
        log_axes(ax, x=axis == "x", y=axis == "y", decades=span * ax_scale(ax, axis))
        pad = max(margin * span, 0.02)
        setter(lo / 10 ** pad, hi * 10 ** pad)
    else:
        span = hi - lo if hi > lo else max(abs(hi), 1.0) * 0.1
        low = lo - margin * span
        if lo >= 0 and low < 0:
            low = 0.0 if lo < 0.5 * span else lo - margin * span
        setter(low, hi + margin * span)
    return bool(log)


def decades(values) -> float:
    """Decades spanned by the positive finite ``values``."""
    v = _finite([values])
    v = v[v > 0]
    return float(math.log10(v.max() / v.min())) if v.size >= 2 else 0.0


def ax_scale(ax, axis: str = "y") -> float:
    """How crowded an axis is compared with a 4-inch one (ticks per inch matter)."""
    w, h = ax.figure.get_size_inches()
    pos = ax.get_position()
    length = (pos.height * h) if axis == "y" else (pos.width * w)
    return 4.0 / max(length, 0.5)


def leaves(values, limits: tuple[float, float]) -> bool:
    """True when some finite value lies outside ``limits`` (a curve leaving the panel)."""
    v = _finite([values])
    return bool(v.size and (v.min() < limits[0] * (1 - 1e-9) or v.max() > limits[1] * (1 + 1e-9)))


def log_axes(ax, x: bool = True, y: bool = True, decades: float | None = None) -> None:
    """Log scales with plain-number tick labels at 1, 2, 5 × 10ⁿ, or at 10ⁿ only when the axis
    spans more than two decades (``decades``), so that labels never crowd."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter, NullLocator

    fmt = FuncFormatter(lambda v, _: _tick(v))
    subs = (1.0,) if decades is not None and decades > 2.2 else (1.0, 2.0, 5.0)
    for flag, axis, setter in ((x, ax.xaxis, ax.set_xscale), (y, ax.yaxis, ax.set_yscale)):
        if not flag:
            continue
        setter("log")
        axis.set_major_locator(LogLocator(base=10, subs=subs))
        axis.set_major_formatter(fmt)
        axis.set_minor_formatter(NullFormatter())
        if decades is not None and decades > 5:  # minor ticks would only clutter
            axis.set_minor_locator(NullLocator())


def _tick(v: float) -> str:
    if v == 0:
        return "0"
    if 1e-3 <= abs(v) < 1e4:
        return f"{v:g}"
    exp = math.floor(math.log10(abs(v)) + 1e-9)
    mant = v / 10**exp
    return rf"$10^{{{exp}}}$" if abs(mant - 1) < 1e-6 else rf"${mant:g}\times10^{{{exp}}}$"


def round_levels(lo: float, hi: float, log: bool, most: int = 12) -> np.ndarray:
    """Round contour levels between ``lo`` and ``hi``: 1-2-5 × 10ⁿ steps (log: 1, 2, 5 × 10ⁿ).

    At least two levels are returned when ``lo < hi``.
    """
    if not (np.isfinite(lo) and np.isfinite(hi)) or hi <= lo:
        return np.array([lo])
    if log and lo > 0:
        for subs in ((1.0, 2.0, 5.0), (1.0, 3.0), (1.0,)):
            levels = [m * 10.0**e for e in range(math.floor(math.log10(lo)) - 1,
                                                  math.ceil(math.log10(hi)) + 1)
                      for m in subs]
            levels = [v for v in levels if lo <= v * (1 + 1e-12) and v <= hi * (1 + 1e-12)]
            if 2 <= len(levels) <= most:
                return np.array(levels)
            if len(levels) > most:
                continue
        # few decades: fall back to linear 1-2-5 steps
    span = hi - lo
    for step in _steps(span / most, span):
        first = math.ceil(lo / step - 1e-9) * step
        levels = np.arange(first, hi + step * 1e-9, step)
        if 2 <= levels.size <= most:
            return np.round(levels, 12)
    return np.array([lo, hi])


def _steps(smallest: float, span: float) -> Iterator[float]:
    e = math.floor(math.log10(smallest)) if smallest > 0 else 0
    while True:
        for m in (1.0, 2.0, 5.0):
            step = m * 10.0**e
            if step >= smallest * (1 - 1e-12):
                yield step
            if step > span:
                return
        e += 1


def level_text(v: float) -> str:
    """A round level as text: ``2``, ``0.05``, ``5000``."""
    return f"{v:.6g}"


def sequential_colors(n: int, cmap: str = "viridis") -> list:
    """``n`` colours of a sequential map for ordered values (dark → light, ends trimmed)."""
    from matplotlib import colormaps

    m = colormaps[cmap]
    if n <= 1:
        return [m(0.35)]
    return [m(0.05 + 0.8 * i / (n - 1)) for i in range(n)]


# --- checks ---------------------------------------------------------------------------------


def text_problems(fig: Figure, tolerance: float = 1.0) -> list[str]:
    """Texts that leave the canvas or overlap another text (empty list: the figure is clean).

    Draws the figure once (Agg) and compares the renderer's window extents of every visible
    text — titles, axis labels, tick labels, legend entries, annotations, colour-bar labels —
    with the figure's bounding box and with each other (texts of one axis' tick labels are not
    compared among themselves; matplotlib thins those).
    """
    from matplotlib.text import Text

    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    box = fig.bbox
    texts = []
    for t in fig.findobj(Text):
        if not t.get_visible() or not t.get_text().strip() or t.figure is None:
            continue
        try:
            ext = t.get_window_extent(renderer)
        except (RuntimeError, ValueError):  # pragma: no cover - a text that cannot be placed
            continue
        if ext.width <= 0 or ext.height <= 0:
            continue
        texts.append((t, ext))
    ticks, hidden = {}, set()
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            lo, hi = sorted(axis.get_view_interval())
            span = (hi - lo) * 1e-9
            for tick in (*axis.get_major_ticks(), *axis.get_minor_ticks()):
                ticks[id(tick.label1)] = ticks[id(tick.label2)] = (id(ax), id(axis))
                loc = tick.get_loc()
                if loc is None or not (lo - span <= loc <= hi + span):
                    hidden.update((id(tick.label1), id(tick.label2)))  # not drawn
    texts = [(t, e) for t, e in texts if id(t) not in hidden]
    problems = []
    for t, ext in texts:
        if (ext.x0 < box.x0 - tolerance or ext.y0 < box.y0 - tolerance
                or ext.x1 > box.x1 + tolerance or ext.y1 > box.y1 + tolerance):
            problems.append(f"outside the canvas: {t.get_text()!r}")
    for i, (a, ea) in enumerate(texts):
        for b, eb in texts[i + 1:]:
            if getattr(a, "_kappa_inline", False) or getattr(b, "_kappa_inline", False):
                continue
            w = min(ea.x1, eb.x1) - max(ea.x0, eb.x0)
            h = min(ea.y1, eb.y1) - max(ea.y0, eb.y0)
            if w > tolerance and h > tolerance:
                problems.append(f"overlap: {a.get_text()!r} and {b.get_text()!r}")
    return problems


# --- the prediction figure (kept here for callers of kappa.presentation.style) ---------------


def plot_prediction(prediction, overlays=(), ax=None, **kwargs):
    """See :func:`kappa.presentation.predict.plot_prediction`."""
    from kappa.presentation.predict import plot_prediction as _plot

    return _plot(prediction, overlays, ax=ax, **kwargs)
