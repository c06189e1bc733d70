"""The study report: the figures of the scenarios, and one self-contained HTML file.

:func:`render_report` turns a finished (or partly finished) study
(:class:`kappa.io.study.StudyRun`) into one HTML file that needs nothing else: CSS inline,
figures embedded as base64 PNG read from the step folders, no scripts, no fonts and nothing
fetched from anywhere. The template (``kappa/templates/report.html.j2``) is rendered by jinja2
with autoescaping on, so text from study files and data files is shown, never interpreted.
"""

from __future__ import annotations

import base64
import datetime as _dt
import math
from collections.abc import Sequence
from importlib.resources import files
from pathlib import Path
from typing import Any

import numpy as np

from kappa.presentation.style import KAPPA_L_LABEL, new_figure
from kappa.workflows.study import CAUTIONS

__all__ = ["render_report", "plot_scenarios", "plot_changes", "plot_zT", "CAUTIONS",
           "READING", "image_data", "change_text", "interval_text", "zt_text"]

#: How to read the report (shown at its top).
READING = [
    "Answers first: the table gives, for every scenario, κ_L at the answer temperature of the "
    "fitted model and of the scenario, the change with its 68 % interval from the fit, and "
    "the projected zT.",
    "Then the steps in the order they ran: the measured data split into lattice and "
    "electronic parts (bands: measurement uncertainty), the fit of the model to κ_L "
    "(parameters, correlations, warnings), what carries the heat (spectrum, mean free "
    "paths), and the scenarios as curves.",
    "An interval that is missing means the fit could not determine a parameter well enough to "
    "draw from its covariance; the step's note says which.",
]

_GROUP_MAPS = ("Blues", "Greens", "Purples", "Greys")
_SINGLE = ("tab:orange", "tab:red", "tab:brown", "tab:pink", "tab:olive", "tab:cyan",
           "tab:purple", "tab:gray")


# --- figures -----------------------------------------------------------------------------------


def _colors(scenarios: Sequence[Any]) -> dict[str, Any]:
    """One colour per scenario: shades of one colour per list of values (lighter to darker in
    the order given), distinct colours for the others."""
    from matplotlib import colormaps

    colors: dict[str, Any] = {}
    groups: dict[str, list[str]] = {}
    for s in scenarios:
        if s.group is not None:
            groups.setdefault(s.group, []).append(s.name)
    for g, names in enumerate(groups.values()):
        cmap = colormaps[_GROUP_MAPS[g % len(_GROUP_MAPS)]]
        for i, name in enumerate(names):
            colors[name] = cmap(0.45 + 0.5 * i / max(1, len(names) - 1))
    singles = [s.name for s in scenarios if s.name not in colors]
    for i, name in enumerate(singles):
        colors[name] = _SINGLE[i % len(_SINGLE)]
    return colors


def plot_scenarios(run):
    """κ_L(T) of the fitted model, of every scenario (68 % bands) and the measured κ_L."""
    fig, axes = new_figure(7.2, 4.8)
    ax = axes[0, 0]
    name = run.study.projection.sample
    split = run.splits[name]
    grid = run.grid
    colors = _colors([s for s, _, _ in run.scenarios])
    ax.errorbar(split.temperature, split.kappa_L, yerr=split.kappa_L_err, fmt="o", ms=3.5,
                color="0.35", capsize=2, lw=0.8, label=f"{name} measured (split)", zorder=5)
    first = run.scenarios[0][2].at(grid)
    ax.plot(grid, first.reference, color="black", lw=2.0, label=f"{name} fitted model")
    for s, _, w in run.scenarios:
        a = w.at(grid)
        color = colors[s.name]
        ax.plot(grid, a.kappa_L, color=color, lw=1.6, label=s.name)
        if a.low is not None:
            ax.fill_between(grid, a.low, a.high, color=color, alpha=0.18, lw=0)
    for t in run.at:
        ax.axvline(t, color="0.5", lw=0.8, ls=":")
    ax.set_xlabel("T [K]")
    ax.set_ylabel(KAPPA_L_LABEL)
    ax.set_xlim(grid[0], grid[-1])
    ax.set_ylim(bottom=0.0)
    ax.set_title(rf"What-ifs for {name}: $\kappa_L(T)$, bands 68 % from the fit", fontsize=10)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=7, loc="center left", bbox_to_anchor=(1.01, 0.5))
    return fig


def plot_changes(run):
    """At the first answer temperature: κ_L change per scenario and zT measured → projected."""
    t0 = float(run.at[0])
    rows = [a for a in run.answers if a.temperature == t0]
    has_zt = any(math.isfinite(a.zT) for a in rows)
    fig, axes = new_figure(9.6 if has_zt else 6.4, 0.9 + 0.42 * len(rows), 1, 2 if has_zt else 1,
                           sharey=True)
    colors = _colors([s for s, _, _ in run.scenarios])
    y = np.arange(len(rows))[::-1]
    ax = axes[0, 0]
    change = np.array([100 * a.change for a in rows])
    lo = np.array([100 * a.change_low for a in rows])
    hi = np.array([100 * a.change_high for a in rows])
    err = np.vstack([np.where(np.isfinite(lo), change - lo, 0.0),
                     np.where(np.isfinite(hi), hi - change, 0.0)])
    ax.barh(y, change, color=[colors[a.scenario] for a in rows], alpha=0.85,
            xerr=err if np.isfinite(lo).any() else None, capsize=3, error_kw={"lw": 1})
    ax.axvline(0, color="black", lw=0.8)
    ax.set_yticks(y, [a.scenario for a in rows], fontsize=8)
    ax.set_xlabel(rf"$\kappa_L$ change at {t0:.4g} K [%]")
    ax.grid(True, axis="x", alpha=0.3)
    if has_zt:
        az = axes[0, 1]
        measured = rows[0].zT_measured
        z = np.array([a.zT for a in rows])
        zlo = np.array([a.zT_low for a in rows])
        zhi = np.array([a.zT_high for a in rows])
        zerr = np.vstack([np.where(np.isfinite(zlo), z - zlo, 0.0),
                          np.where(np.isfinite(zhi), zhi - z, 0.0)])
        if np.isfinite(zlo).any():
            az.errorbar(z, y, xerr=zerr, fmt="none", ecolor="black", capsize=3, lw=1)
        for yi, a in zip(y, rows, strict=True):
            az.plot([a.zT], [yi], "o", ms=8, color=colors[a.scenario], mec="black", mew=0.8,
                    zorder=3)
        az.axvline(measured, color="0.4", ls="--", lw=1, label=f"measured {measured:.2f}")
        az.set_xlabel(rf"projected zT at {t0:.4g} K ($S$, $\sigma$ as measured)")
        az.grid(True, axis="x", alpha=0.3)
        az.legend(fontsize=8, loc="best")
    fig.suptitle(f"Scenarios for {run.study.projection.sample} at {t0:.4g} K (bars: 68 % from "
                 "the fit)", fontsize=10)
    return fig


def plot_zT(run):
    """Measured zT (68 % band of the split) and the projected zT of every scenario."""
    fig, axes = new_figure(7.2, 4.6)
    ax = axes[0, 0]
    name = run.study.projection.sample
    split = run.splits[name]
    T = split.temperature
    colors = _colors([s for s, _, _ in run.scenarios])
    ax.fill_between(T, split.zT_low, split.zT_high, color="0.6", alpha=0.3, lw=0,
                    label="measured, 68 % band (split)")
    ax.plot(T, split.zT, "o-", color="black", ms=3.5, lw=1.4, label=f"{name} measured")
    for s, _, _ in run.scenarios:
        z = run.zT[s.name]
        ax.plot(T, z.projected, color=colors[s.name], lw=1.5, label=s.name)
        if z.low is not None:
            ax.fill_between(T, z.low, z.high, color=colors[s.name], alpha=0.15, lw=0)
    ax.set_xlabel("T [K]")
    ax.set_ylabel("zT [1]")
    ax.set_ylim(bottom=0.0)
    ax.set_title(rf"Projected zT of {name}: $S$, $\sigma$, $\kappa_e$ as measured, $\kappa_L$ "
                 "from the scenario", fontsize=10)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=7, loc="center left", bbox_to_anchor=(1.01, 0.5))
    return fig


# --- text helpers ---------------------------------------------------------------------------


def _num(x: float, digits: int = 3, zeros: bool = True) -> str:
    """``x`` to ``digits`` significant digits, no exponent between 10⁻³ and 10⁶, a Unicode
    minus; trailing zeros kept (``1.10``) unless ``zeros`` is False."""
    if x is None or not math.isfinite(x):
        return "–"
    if x == 0:
        return "0"
    if 1e-3 <= abs(x) < 1e6:
        decimals = max(0, digits - 1 - math.floor(math.log10(abs(x))))
        text = f"{round(x, decimals):.{decimals}f}"
        if not zeros and "." in text:
            text = text.rstrip("0").rstrip(".")
    else:
        text = f"{x:.{digits - 1}e}"
    return text.replace("-", "−")


def _signed_pct(x: float) -> str:
    if not math.isfinite(x):
        return "–"
    v = 100 * x
    text = f"{v:+.0f}" if abs(v) >= 9.5 else f"{v:+.1f}"
    return text.replace("-", "−") + " %"


def change_text(a) -> str:
    """``−34 % (−39…−28 %)``: the change of κ_L with its 68 % interval."""
    text = _signed_pct(a.change)
    if math.isfinite(a.change_low) and math.isfinite(a.change_high):
        lo, hi = sorted((a.change_low, a.change_high))
        text += f" ({_signed_pct(lo)[:-2]}…{_signed_pct(hi)})"
    return text


def interval_text(value: float, low: float, high: float, digits: int = 3) -> str:
    """``1.15 (1.12…1.17)`` or just the value without an interval."""
    text = _num(value, digits)
    if math.isfinite(low) and math.isfinite(high):
        text += f" ({_num(low, digits)}…{_num(high, digits)})"
    return text


def _zt(x: float) -> str:
    """zT with two decimals (two significant digits below 0.1)."""
    if x is None or not math.isfinite(x):
        return "–"
    return (f"{x:.2f}" if abs(x) >= 0.1 else f"{x:.2g}").replace("-", "−")


def zt_text(value: float, low: float, high: float) -> str:
    """``0.97 (0.92…1.01)``: a zT with its interval, if any."""
    text = _zt(value)
    if math.isfinite(low) and math.isfinite(high):
        text += f" ({_zt(low)}…{_zt(high)})"
    return text


def image_data(path: str | Path) -> str:
    """A PNG file as a ``data:`` URI (embedded in the page; nothing is fetched)."""
    data = Path(path).read_bytes()
    return "data:image/png;base64," + base64.b64encode(data).decode("ascii")


def _figure(out: Path, rel: str, caption: str, narrow: bool = False) -> dict | None:
    path = out / rel
    if not path.is_file():
        return None
    return {"src": image_data(path), "caption": caption, "file": rel, "narrow": narrow,
            "svg": rel[:-4] + ".svg" if (out / (rel[:-4] + ".svg")).is_file() else None}


def _thin(n: int, most: int = 14) -> list[int]:
    if n <= most:
        return list(range(n))
    return sorted({round(i * (n - 1) / (most - 1)) for i in range(most)})


# --- the page ------------------------------------------------------------------------------


def _inputs(run) -> dict:
    from kappa.io.records import file_record

    study = run.study
    base = study.path.parent

    def rel(p: Path) -> str:
        try:
            return p.resolve().relative_to(base.resolve()).as_posix()
        except ValueError:
            return p.name

    def record(p: Path) -> dict:
        from kappa.io.labfiles import split_sheet

        r = file_record(split_sheet(p)[0])  # book.xlsx:Sheet: the book's checksum
        return {"name": rel(p), "bytes": r.get("bytes"), "sha256": r.get("sha256", ""),
                "error": r.get("error")}

    try:
        config_text = study.config_path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        config_text = "(could not be read again)"
    return {"study": record(study.path), "config": record(study.config_path),
            "config_text": config_text,
            "samples": [{"name": s.name, "notes": s.notes, "composition": s.composition,
                         "set": s.changes, "window": s.window_text,
                         "files": [record(p) for p in s.files]} for s in study.samples]}


def _options(run) -> list[tuple[str, str]]:
    from kappa.workflows.split import DEFAULT_UNCERTAINTY

    st = run.study
    sp, ft, pj = st.split, st.fit, st.projection
    first = next(iter(run.splits.values()), None)  # the uncertainties the split used
    if first is not None:
        unc = {k: (v, first.uncertainty_random.get(k, 0.0))
               for k, v in first.uncertainty.items()}
    else:
        unc = {k: (v, 0.0) for k, v in DEFAULT_UNCERTAINTY.items()}
    lorenz = sp.lorenz if isinstance(sp.lorenz, str) else f"{sp.lorenz:.4g} W Ω/K²"
    if sp.lorenz == "spb":
        lorenz += f" (single parabolic band, scattering exponent λ = {sp.scattering_exponent:g})"
    out = [
        ("Lorenz number", lorenz),
        ("measurement uncertainties (relative, 1σ, systematic + random)",
         ", ".join(f"{k} {100 * v:g} % + {100 * w:g} %" for k, (v, w) in unc.items())),
        ("split Monte Carlo", f"{sp.draws} draws, seed {sp.seed}; bipolar check window "
                              f"{sp.window_text or 'automatic'}; NaN cells: {sp.nan}"),
        ("fitted keys, shared", ", ".join(ft.shared) or "–"),
        ("fitted keys, per sample", ", ".join(ft.per_sample) or "–"),
        ("fit bounds", "; ".join(f"{k}: {v}" for k, v in ft.written.get("bounds", {}).items())
         or "default (6 decades around the start)"),
        ("fit window", ft.window_text or "all measured temperatures"),
        ("fit starts", f"{ft.starts} (seed {ft.seed})"),
        ("reference sample of the scenarios", pj.sample),
        ("answer temperatures", ", ".join(f"{t:.4g} K" for t in run.at)
         + (" (automatic: highest measured zT)" if pj.at is None else "")
         if run.at is not None else "–"),
        ("scenario draws", f"{pj.draws} parameter sets from the fit's covariance, seed "
                           f"{pj.seed}"),
    ]
    if run.grid is not None:
        out.append(("curve temperatures", f"{run.grid[0]:.4g}–{run.grid[-1]:.4g} K, "
                                          f"{run.grid.size} points"))
    return out


def _splits(run) -> list[dict]:
    out = []
    for s in run.study.samples:
        r = run.splits.get(s.name)
        if r is None:
            continue
        rows = []
        for i in _thin(r.temperature.size):
            rows.append([f"{r.temperature[i]:.5g}", _num(r.lorenz[i] * 1e8, 3),
                         _num(r.kappa[i]), _num(r.kappa_e[i]),
                         interval_text(r.kappa_L[i], r.kappa_L_low[i], r.kappa_L_high[i]),
                         "–" if r.zT is None else zt_text(r.zT[i], r.zT_low[i],
                                                          r.zT_high[i])])
        lines = run.split_summaries.get(s.name, [])
        out.append({"name": s.name, "notes": s.notes, "rows": rows, "lines": lines,
                    "figure": _figure(run.out, f"1-split/{s.name}/split.png",
                                      f"{s.name}: measured κ, electronic part κ_e = LσT and "
                                      "lattice part κ_L with 68 % bands; L(T); zT(T)")})
    return out


def _fit(run) -> dict | None:
    r = run.fit
    if r is None:
        return None
    params = []
    for p in r.parameters:
        lo, hi = p.low68, p.high68
        undetermined = not (math.isfinite(lo) and math.isfinite(hi)) or (lo > 0 and hi / lo >
                                                                          100.0)
        unit = "" if p.display == "1" else p.display
        err = p.shown(p.stderr) - p.shown(0.0) if p.display != p.unit else p.stderr
        params.append({"label": p.label, "value": _num(p.shown(p.value), 4, False),
                       "stderr": "–" if undetermined else _num(err, 2, False),
                       "interval": "undetermined" if undetermined else
                       f"{_num(p.shown(lo), 3, False)} … {_num(p.shown(hi), 3, False)}",
                       "unit": unit, "start": _num(p.shown(p.start), 4, False),
                       "bound": p.at_bound or ""})
    labels = [p.label for p in r.parameters]
    corr = [[{"text": _num(v, 2, False), "strong": bool(abs(v) > 0.9 and i != j)}
             for j, v in enumerate(row)] for i, row in enumerate(r.correlation)]
    stat = (f"χ²_red = {r.chi2_red:.3g} (weighted by the split's uncertainties)" if r.weighted
            else f"relative scatter {100 * r.scatter:.3g} % (no uncertainties: errors scaled "
                 "by the scatter)")
    note = ""
    if r.weighted and r.chi2_red is not None and r.chi2_red < 0.3:
        note = ("χ²_red is well below 1: the split's κ_L uncertainty is mostly a calibration and "
                "geometry error shared by all temperatures of a sample, which the fit treats as "
                "independent from point to point. The fitted values are fine; the standard "
                "errors, the intervals drawn from them and the warnings that compare fits are "
                "then on the generous side.")
    return {"params": params, "labels": labels, "corr": corr, "note": note,
            "stats": f"{stat}; n = {r.n_points} points, k = {r.n_free} free; AIC = "
                     f"{r.aic:.4g}, BIC = {r.bic:.4g}; {r.converged} of {r.starts} starts "
                     "reached the best minimum",
            "warnings": list(r.warnings),
            "figure": _figure(run.out, "2-fit/fit.png", "Data (split κ_L with error bars), fit, "
                              "and the fit with each mechanism switched off (dashed: the "
                              "mechanism whose removal raises κ_L most limits it); residuals "
                              "below")}


def _length(metres: float) -> str:
    nm = metres * 1e9
    return f"{nm:.3g} nm" if nm < 1e3 else f"{nm / 1e3:.3g} µm"


def _spectrum(run) -> dict | None:
    sp = run.spectrum
    if sp is None:
        return None
    lines = [f"At {t:.4g} K half the heat is carried by phonons with mean free path above "
             f"{_length(sp.mfp50[i])}, and 20 % above {_length(sp.mfp80[i])} "
             f"(κ_L = {sp.kappa_L[i]:.3g} W/(m K))." for i, t in enumerate(sp.temperature)]
    if sp.model.mechanisms.normal:
        lines.append("With normal processes the split over mean free path says little about "
                     "what grains of a given size would do; the scenarios compute that "
                     "directly.")
    return {"lines": lines, "sample": run.study.projection.sample,
            "figures": [f for f in (
                _figure(run.out, "3-spectrum/cumulative.png", "κ carried by phonons below a "
                        "frequency (left) and with mean free path below Λ (right; dashed: "
                        "Λ50)"),
                _figure(run.out, "3-spectrum/spectral.png", "Spectral κ_L per frequency",
                        narrow=True),
                _figure(run.out, "3-spectrum/rates.png", "Scattering rate of each mechanism"))
                if f is not None]}


def _scenarios(run) -> dict | None:
    if not run.answers:
        return None
    from kappa.workflows.study import ZT_ASSUMPTION

    rows = []
    for a in run.answers:
        rows.append({"scenario": a.scenario, "changes": a.changes, "T": f"{a.temperature:.5g}",
                     "fitted": _num(a.kappa_L_fitted),
                     "kappa": interval_text(a.kappa_L, a.kappa_L_low, a.kappa_L_high),
                     "change": change_text(a),
                     "trend": "down" if a.change < -1e-12 else ("up" if a.change > 1e-12
                                                                else ""),
                     "zT": "–" if not math.isfinite(a.zT) else
                     f"{_zt(a.zT_measured)} → {zt_text(a.zT, a.zT_low, a.zT_high)}"})
    missing = sorted({w.note for _, _, w in run.scenarios if w.note})
    notes = [f"{s.name}: no interval ({w.note})" for s, _, w in run.scenarios if w.note]
    held: dict[str, list[str]] = {}
    for s, _, w in run.scenarios:
        if w.held:
            held.setdefault(", ".join(w.held), []).append(s.name)
    for keys, names in held.items():
        notes.append(f"{', '.join(names)}: set the fitted {keys}, which is then held at the "
                     "scenario's value in every draw (the other fitted keys are drawn)")
    figures = [f for f in (
        _figure(run.out, "4-scenarios/changes.png", "Change of κ_L and projected zT at the "
                "answer temperature"),
        _figure(run.out, "4-scenarios/scenarios.png", "κ_L(T) of the fitted model and of every "
                "scenario with 68 % bands from the fit; points: the measured κ_L"),
        _figure(run.out, "4-scenarios/zT.png", "Measured zT and projected zT of every "
                "scenario")) if f is not None]
    has_zt = any(math.isfinite(a.zT) for a in run.answers)
    return {"rows": rows, "notes": notes, "figures": figures, "has_zt": has_zt,
            "missing": missing,
            "assumption": ZT_ASSUMPTION}


def _outputs(out: Path) -> list[str]:
    found = []
    for p in sorted(out.rglob("*")):
        rel = p.relative_to(out)
        if p.is_file() and not any(part.startswith(".") for part in rel.parts) and \
                rel.parts[0] != "inputs":
            found.append(rel.as_posix())
    return found


def render_report(run) -> str:
    """The HTML of the study report (one self-contained page).

    Parameters
    ----------
    run : kappa.io.study.StudyRun
        The study as far as it ran; the step folders in ``run.out`` provide the figures.
    """
    import jinja2

    from kappa.io.records import version

    source = files("kappa").joinpath("templates/report.html.j2").read_text(encoding="utf-8")
    env = jinja2.Environment(autoescape=True, undefined=jinja2.StrictUndefined,
                             trim_blocks=True, lstrip_blocks=True)
    template = env.from_string(source)
    study = run.study
    warnings = [(step, text) for step, texts in run.warnings.items() for text in texts]
    return template.render(
        title=study.title or f"Study {study.path.stem}",
        notes=study.notes,
        created=_dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M"),
        version=version(),
        reading=READING,
        cautions=CAUTIONS,
        inputs=_inputs(run),
        options=_options(run),
        splits=_splits(run),
        fit=_fit(run),
        spectrum=_spectrum(run),
        scenarios=_scenarios(run),
        warnings=warnings,
        outputs=sorted({*_outputs(run.out), "report.html", "run.json"}),
        sample=study.projection.sample,
        at=", ".join(f"{t:.4g} K" for t in run.at) if run.at is not None else "",
    )
