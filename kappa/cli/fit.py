"""``kappa fit``: fit model parameters to measured κ_L(T) (one sample or a series)."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = """Fit free parameters of a config to measured lattice conductivity κ_L(T).

DATA is a CSV with 'T [K]' and 'kappa_L [W/(m K)]' (any units of the right dimension), e.g. the
split.csv of 'kappa split'. Uncertainties (--errors): with 'kappa_L_err_random' and
'kappa_L_err_systematic' (written by 'kappa split') the random part weights the points and the
systematic part, shared by all temperatures, becomes one scale per sample fitted as a nuisance
parameter with a Gaussian prior of that width (separate; the default when both are there); the
parameter errors then include the shared calibration error. 'random' uses the random part
only; 'total' takes 'kappa_L_err' (or 'kappa_L_low'/'kappa_L_high' as a 68 % band) as
independent per point (the default, with a warning, when only it is there); 'none' fits
relative residuals and scales the errors by the residual scatter.

Free keys are dotted config keys (see 'kappa check'); KEY=START also sets the start value
(needed for a mechanism that is not in the config); KEY=LOW:HIGH sets bounds, e.g.
--free scattering.boundary.grain_size=10nm:100um (the same as --bounds KEY=LOW:HIGH). Log-space fit for positive quantities;
several seeded starts; standard errors, correlations, AIC/BIC, and warnings for parameters at
bounds, strongly correlated pairs, parameters the data do not need, mechanisms the fit drove to
an effective zero, chi2_red far from 1 (either way), and high-temperature upturns (bipolar
conduction).

Writes OUT/fitted.yaml (the config with fitted values; runs in 'kappa predict'), OUT/fit.json
(fitted keys and covariance, read by 'kappa predict fitted.yaml --band'), OUT/parameters.csv,
OUT/correlation.csv, OUT/residuals.csv, OUT/fit.png/.svg and OUT/run.json (and OUT/scales.csv
with the fitted shared scales). A series writes the combined tables and figure,
OUT/notes.png/.svg (each per-sample fitted value against the sample's own notes, with the 1:1
line where they are the same quantity) when the series file gives notes, and
OUT/samples/NAME/ with each sample's fitted.yaml, fit.json and residuals.csv.

\b
Examples:
  kappa fit configs/silicon.yaml si.csv --free material.branches.0.gruneisen \\
      --free material.branches.1.gruneisen -o si-fit
  kappa fit my.yaml split.csv --free material.gruneisen \\
      --free scattering.boundary.grain_size=1um --bounds scattering.boundary.grain_size=10nm:1mm \\
      --window 100K:600K -o fit1
  kappa fit --series series.yaml -o series-fit
  kappa fit my.yaml old.csv --free material.gruneisen --errors total -o fit2
  kappa predict fit1/fitted.yaml --band -o fit1-band
  kappa predict fit1/fitted.yaml --fit fit1/fit.json \
      --compare scattering.boundary.grain_size=1um,100nm -o what-if
"""


def fit_command(
    config: Annotated[Path | None, typer.Argument(help="YAML config (the model to fit).",
                                                  exists=True, dir_okay=False)] = None,
    data: Annotated[Path | None, typer.Argument(help="CSV with 'T [K]' and 'kappa_L [W/(m K)]'.",
                                                exists=True, dir_okay=False)] = None,
    free: Annotated[list[str] | None, typer.Option("--free", help="Key to fit: KEY, "
                                                   "KEY=START or KEY=LOW:HIGH (bounds, with "
                                                   "units; repeatable).")] = None,
    bounds: Annotated[list[str] | None, typer.Option("--bounds", help="KEY=LOW:HIGH with "
                                                     "units (repeatable).")] = None,
    window: Annotated[str | None, typer.Option("--window", help="Fit only LOW:HIGH, e.g. "
                                               "100K:600K (one side may be empty).")] = None,
    series: Annotated[Path | None, typer.Option("--series", help="Series YAML: several samples "
                                                "with shared and per-sample keys.", exists=True,
                                                dir_okay=False)] = None,
    starts: Annotated[int, typer.Option("--starts", min=1, max=50,
                                        help="Number of starts.")] = 5,
    seed: Annotated[int, typer.Option("--seed", min=0, help="Seed of the start draws.")] = 0,
    nan: Annotated[str, typer.Option("--nan", help="NaN rows in the data: raise or omit.")
                   ] = "raise",
    errors: Annotated[str, typer.Option("--errors", help="Uncertainties used: auto, separate "
                                        "(random part per point + systematic part as one "
                                        "shared scale per sample), random, total or none.")
                      ] = "auto",
    set_: Annotated[list[str] | None, typer.Option("--set", help="Override a config value "
                                                   "KEY=VALUE before fitting (repeatable).")
                    ] = None,
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a new "
                                             "folder beside the data).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder.")
                     ] = False,
) -> None:
    from kappa.errors import ConfigError
    from kappa.io.fitfiles import parse_free, read_fit_data, read_series
    from kappa.io.outdir import check_out, default_out
    from kappa.io.units import parse_window
    from kappa.workflows.fitting import fit_series
    from kappa.workflows.fitting.data import ERROR_MODES

    if nan not in ("raise", "omit"):
        raise ConfigError("--nan", nan, "raise or omit")
    if errors not in ERROR_MODES:
        raise ConfigError("--errors", errors, ", ".join(ERROR_MODES))
    if series is not None:
        if config is not None or data is not None or free or window or set_:
            raise ConfigError("--series", str(series), "give either a series file, or CONFIG "
                              "DATA with --free (and --window, --set); not both")
        loaded = read_series(series, nan=nan, extra_bounds=bounds or [], errors=errors)
        samples, shared, per = loaded.samples, loaded.shared, loaded.per_sample
        starts_, bounds_ = loaded.start_values, loaded.bounds
        configs = loaded.configs
        inputs = list(loaded.files)
        out = out or default_out(series, "fit")
        meta = {"series": str(series), "shared": list(shared), "per_sample": list(per),
                "bounds": {k: list(v) for k, v in bounds_.items()}, "errors": errors,
                "notes": {name: {k: {"text": n.text, "value": n.value, "unit": n.unit}
                                 for k, n in notes.items()}
                          for name, notes in loaded.notes.items()}}
        series_notes = loaded.notes
    else:
        if config is None or data is None:
            raise ConfigError("CONFIG DATA", allowed="give a config and a data file (or "
                              "--series FILE)")
        if not free:
            raise ConfigError("--free", allowed="name at least one key to fit, e.g. --free "
                              "material.gruneisen (see 'kappa check CONFIG' for the keys)")
        from kappa.io.config import load_config
        from kappa.workflows.fitting import SeriesSample

        cfg = load_config(config, set_ or [])
        shared, starts_, bounds_ = parse_free(cfg.model, free, bounds or [])
        per = []
        fdata = read_fit_data(data, window=parse_window(window, "--window"), nan=nan,
                              errors=errors)
        series_notes = {}
        samples = [SeriesSample(fdata.name, cfg.model, fdata)]
        configs = {fdata.name: cfg}
        inputs = [config, data]
        out = out or default_out(data, "fit")
        meta = {"config": str(config), "data": str(data), "overrides": list(set_ or []),
                "free": list(free), "bounds": {k: list(v) for k, v in bounds_.items()},
                "window": window, "errors": errors}
    check_out(out, force=force, inputs=inputs)
    try:
        result = fit_series(samples, shared, per, start_values=starts_, bounds=bounds_,
                            starts=starts, seed=seed, progress=common.Bar("fit"))
    except ConfigError as exc:
        raise exc.renamed(_flag(exc.key)) from None
    from kappa.presentation.fit import fit_curves

    write_fit(result, fit_curves(result), out, force, inputs, meta, series is not None, configs,
           series_notes)
    _report(result, out, series is not None, bool(series_notes and _has_note_pairs(
        result, series_notes)))


def _flag(key: str) -> str:
    """Library argument names in an error → the command's options."""
    for arg, flag in (("bounds[", "--bounds "), ("start_values[", "--free "),
                      ("starts", "--starts"), ("seed", "--seed"), ("window", "--window"),
                      ("free", "--free"), ("per_sample", "series.per_sample"),
                      ("shared", "series.shared")):
        if arg.endswith("[") and key.startswith(arg):
            return flag + key[len(arg):].rstrip("]")
        if key == arg:
            return flag
    return key


def _param_rows(result, with_sample: bool):
    rows = []
    for p in result.parameters:
        row = {"parameter": p.key}
        if with_sample:
            row["sample"] = p.sample or "shared"
        row.update({
            "value": p.shown(p.value), "stderr": _shown_err(p), "low68": p.shown(p.low68),
            "high68": p.shown(p.high68), "start": p.shown(p.start),
            "unit": "" if p.display == "1" else p.display, "space": p.space,
            "at_bound": p.at_bound,
        })
        rows.append(row)
    return rows


def _shown_err(p) -> float:
    if p.display == p.unit:
        return p.stderr
    return p.shown(p.stderr) - p.shown(0.0)


def _residual_columns(s, weighted: bool):
    cols = [("T [K]", s.data.temperature), ("kappa_L [W/(m K)]", s.data.kappa_L)]
    if s.data.uncertainty is not None:
        cols.append(("kappa_L_err [W/(m K)]", s.data.uncertainty))
    if s.data.systematic is not None:
        cols.append(("kappa_L_err_systematic [W/(m K)]", s.data.systematic))
    if s.scale_factor is not None:
        cols.append(("scale_factor [1]", s.scale_factor))
    cols += [("kappa_L_fit [W/(m K)]", s.kappa_L_fit),
             ("residual [W/(m K)]", s.residual),
             ("relative_residual [1]", s.data.kappa_L / s.kappa_L_fit - 1.0)]
    if weighted:
        cols.append(("normalized_residual [1]", s.normalized))
    return cols


def _scale_rows(result) -> list[dict]:
    return [{"sample": f.sample, "systematic_width": f.width, "z": f.z, "z_stderr": f.z_stderr,
             "factor": f.factor, "low68": f.low68, "high68": f.high68} for f in result.scales]


def _stats(result) -> dict:
    return {
        "n_points": result.n_points, "n_free": result.n_free, "dof": result.dof,
        "errors": result.errors,
        "weighting": result.weighting,
        "shared_scales": _scale_rows(result),
        "chi2" if result.weighted else "rss_log": result.chi2,
        "chi2_red": result.chi2_red,
        "rms_relative_residual" if not result.weighted else "rms_normalized_residual":
            result.scatter,
        "aic": result.aic, "bic": result.bic,
        "aic_bic_formulas": ("AIC = chi2 + 2k, BIC = chi2 + k ln n" if result.weighted else
                             "AIC = n ln(RSS/n) + 2k, BIC = n ln(RSS/n) + k ln n"),
        "starts": result.starts, "starts_at_best_minimum": result.converged,
        "model_evaluations": result.nfev,
        "delta_bic_when_held_at_start": result.delta_bic,
    }


def _header(result, extra: str, sample: str | None) -> str:
    from kappa.io.records import version

    fitted = ", ".join(f"{p.key} = {p.shown(p.value):.6g}"
                       f"{'' if p.display == '1' else ' ' + p.display} ± "
                       f"{_shown_err(p):.2g}" for p in result.parameters
                       if p.sample in (None, sample))
    stat = (f"chi2_red = {result.chi2_red:.4g}" if result.weighted
            else f"relative residual scatter √(RSS/(n−k)) = {100 * result.scatter:.3g} %")
    return (f"Fitted by kappa fit {version()} ({extra}).\n"
            f"Fitted: {fitted}.\n"
            f"Joint fit: n = {result.n_points} points, k = {result.n_free} free; {stat}; "
            f"AIC = {result.aic:.5g}; BIC = {result.bic:.5g}.\n"
            "The fit's covariance is in fit.json beside this file ('kappa predict --band' "
            "reads it).\nComments of the original config are not carried over.")


def _has_note_pairs(result, notes) -> bool:
    from kappa.presentation.fit import note_pairs

    return bool(note_pairs(result, notes))


def write_fit(result, curves, out, force, inputs, meta, is_series: bool, configs,
              notes=None) -> None:
    """Write a fit's folder (``fitted.yaml``, ``fit.json``, tables, figures, ``run.json``)
    whole or not at all; shared by ``kappa fit`` and the fit step of ``kappa study``."""
    from kappa.io.fitfiles import fit_record, fitted_config_data
    from kappa.io.outdir import output_folder
    from kappa.io.records import dump_yaml, run_record, write_json
    from kappa.io.tables import write_table
    from kappa.presentation.fit import plot_fit
    from kappa.presentation.style import save

    rows = _param_rows(result, is_series)
    labels = [p.label for p in result.parameters]
    fig = plot_fit(result, curves)
    dropped = [line for s in result.samples for line in s.data.dropped]
    outputs = ["fitted.yaml", "fit.json", "parameters.csv", "correlation.csv", "residuals.csv",
               "fit.png", "fit.svg", "run.json"]
    if is_series:
        outputs = ["parameters.csv", "correlation.csv", "fit.png", "fit.svg", "run.json",
                   "samples/NAME/fitted.yaml", "samples/NAME/fit.json",
                   "samples/NAME/residuals.csv"]
    notes_fig = None
    if notes and _has_note_pairs(result, notes):
        from kappa.presentation.fit import plot_notes

        notes_fig = plot_notes(result, notes)
        outputs += ["notes.png", "notes.svg"]
    if result.scales:
        outputs.append("scales.csv")
    record = run_record(
        "fit", **meta,
        weighting=result.weighting,
        uncertainty_columns={s.name: s.data.uncertainty_source for s in result.samples},
        windows={s.name: s.data.window for s in result.samples},
        dropped=dropped,
        statistics=_stats(result),
        parameters=rows,
        correlation={"parameters": labels, "matrix": result.correlation},
        warnings=list(result.warnings),
        outputs=outputs,
        citations=result.citations,
    )
    with output_folder(out, force=force, inputs=inputs) as tmp:
        cols = [(name, [r[name] for r in rows]) for name in rows[0]]
        write_table(tmp / "parameters.csv", cols)
        write_table(tmp / "correlation.csv",
                    [("parameter", labels)] + [(lab, result.correlation[:, j])
                                               for j, lab in enumerate(labels)])
        save(fig, tmp / "fit")
        if notes_fig is not None:
            save(notes_fig, tmp / "notes")
        if result.scales:
            scale_rows = _scale_rows(result)
            write_table(tmp / "scales.csv", [(f"{name} [1]" if name != "sample" else name,
                                              [r[name] for r in scale_rows])
                                             for name in scale_rows[0]])
        write_json(tmp / "run.json", record)
        for s in result.samples:
            folder = tmp / "samples" / s.name if is_series else tmp
            folder.mkdir(parents=True, exist_ok=True)
            cfg = configs[s.name]
            extra = f"config {cfg.source}, data {s.data.source}"
            sample = s.name if is_series else None
            data = fitted_config_data(cfg, s.model, result, sample, s.data.temperature)
            (folder / "fitted.yaml").write_text(
                dump_yaml(data, _header(result, extra, sample)), encoding="utf-8")
            write_json(folder / "fit.json", fit_record(result, s.name if is_series else None))
            write_table(folder / "residuals.csv", _residual_columns(s, result.weighted))


def _report(result, out, is_series: bool, notes_figure: bool = False) -> None:
    for s in result.samples:
        for line in s.data.dropped:
            common.echo_err(f"note: {line}")
    headers = ["parameter", "value", "stderr", "68 % interval", "unit", "bound"]
    rows = []
    for p in result.parameters:
        lo, hi = p.low68, p.high68
        undetermined = not (math.isfinite(lo) and math.isfinite(hi)) or (
            lo > 0 and hi / lo > 100.0) or not math.isfinite(_shown_err(p))
        interval = ("undetermined" if undetermined
                    else f"{p.shown(lo):.4g} .. {p.shown(hi):.4g}")
        err = "-" if undetermined else f"{_shown_err(p):.2g}"
        rows.append([p.label, f"{p.shown(p.value):.5g}", err, interval,
                     "" if p.display == "1" else p.display, p.at_bound or "-"])
    common.print_table(headers, rows, max_rows=100)
    for f in result.scales:
        typer.echo(f"{f.sample}: shared scale of the data (systematic part, "
                   f"{100 * f.width:.3g} % 1-sigma) fitted at {f.factor:.4g} "
                   f"(68 %: {f.low68:.4g} .. {f.high68:.4g}); the parameter errors include it")
    if result.weighted:
        what = {"separate": "random part per point, systematic part as a shared scale",
                "random": "random part per point only",
                }.get(result.errors, "uncertainties taken as independent per point")
        typer.echo(f"weighted ({what}): chi2_red = "
                   f"{result.chi2_red:.4g} (n = {result.n_points}, k = {result.n_free})")
    else:
        typer.echo(f"no uncertainties given: errors scaled by the residual scatter "
                   f"(relative scatter √(RSS/(n−k)) = {100 * result.scatter:.3g} %, "
                   f"n = {result.n_points}, "
                   f"k = {result.n_free})")
    typer.echo(f"AIC = {result.aic:.5g}, BIC = {result.bic:.5g}; {result.converged} of "
               f"{result.starts} starts reached the best minimum")
    if is_series:
        extra = (", notes.png, notes.svg" if notes_figure else "") + (
            ", scales.csv" if result.scales else "")
        typer.echo(f"wrote {out}/ (parameters.csv, correlation.csv, fit.png, fit.svg{extra}, "
                   "run.json; samples/NAME/ with fitted.yaml, fit.json, residuals.csv)")
    else:
        extra = ", scales.csv" if result.scales else ""
        typer.echo(f"wrote {out}/ (fitted.yaml, fit.json, parameters.csv, correlation.csv, "
                   f"residuals.csv, fit.png, fit.svg{extra}, run.json)")


def register(app: typer.Typer) -> None:
    app.command("fit", help=HELP)(common.handles_errors(fit_command))
