"""``kappa predict``: κ_L(T) of a config as a table, a figure and a run record."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = """Predict the lattice thermal conductivity κ_L(T) of a config.

Writes OUT/kappa_L.csv (T, κ_L, κ_L with each resistive mechanism switched off, the acoustic
and optical parts when material.atoms_per_cell > 1 (κ_L is their sum), per-branch parts,
Debye heat capacity), OUT/kappa_L.png and .svg, and OUT/run.json (resolved inputs,
derived values, version, citations), and prints a short table. With --compare also
OUT/compare.csv in long form: one row per value and temperature, columns KEY [unit], T [K],
kappa_L [W/(m K)].

Examples:

  kappa predict configs/silicon.yaml -o si-run

  kappa predict my.yaml --set scattering.boundary.grain_size=50nm -o small-grains

  kappa predict my.yaml --compare scattering.boundary.grain_size=1um,100nm,20nm -o grains

  kappa predict fit1/fitted.yaml --band --draws 400 --seed 0 -o fit1-band

  kappa predict my.yaml --style talk --format png,pdf -o slides

  kappa predict fit1/fitted.yaml --fit fit1/fit.json
      --compare scattering.boundary.grain_size=1um,100nm,20nm -o what-if

--band (for a fitted.yaml written by 'kappa fit') draws parameter sets from the fit's
covariance (fit.json beside the config) and adds the 16th/84th percentiles of κ_L as
kappa_L_low/kappa_L_high columns and a shaded band, with the fitted data (residuals.csv
beside the config) as points.

--fit FIT.json (the record written with the fitted.yaml) does the same and gives every
--compare curve its 68 % interval and the ratio to the fitted sample with its interval:
compare.csv then adds kappa_L_low, kappa_L_high, kappa_L_ratio, kappa_L_ratio_low,
kappa_L_ratio_high and pinned columns (bands in the figure). An answer whose interval
includes no change or spans more than a factor of two is "not pinned by the data": pinned = 0,
hatched in the figure, and a line on the terminal. The record must belong to the config
(its keys in the config, the config's values the fitted ones), else exit 2.
"""


def predict_command(
    config: Annotated[Path, typer.Argument(help="YAML config (see 'kappa new').",
                                           exists=True, dir_okay=False, readable=True)],
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a new "
                                             "folder beside the config).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder.")] = False,
    set_: Annotated[list[str] | None, typer.Option("--set", help="Override a config value: "
                                                   "KEY=VALUE (repeatable), e.g. "
                                                   "scattering.boundary.grain_size=50nm")] = None,
    compare_: Annotated[str | None, typer.Option("--compare", help="Overlay curves for several "
                                                 "values of one key: KEY=V1,V2,...")] = None,
    band: Annotated[bool, typer.Option("--band", help="68 % band from the fit covariance in "
                                       "fit.json beside a fitted.yaml.")] = False,
    fit: Annotated[Path | None, typer.Option("--fit", help="fit.json written by 'kappa fit' "
                                             "for this config: 68 % intervals of the curve "
                                             "and of every --compare answer.",
                                             exists=True, dir_okay=False)] = None,
    draws: Annotated[int, typer.Option("--draws", min=10, help="Parameter draws for --band "
                                       "and --fit.")] = 400,
    seed: Annotated[int, typer.Option("--seed", min=0, help="Seed of the --band and --fit "
                                      "draws.")] = 0,
    format_: Annotated[str | None, typer.Option("--format", help=common.FORMAT_HELP,
                                                show_default=False)] = None,
    style: Annotated[str, typer.Option("--style", help=common.STYLE_HELP)] = "paper",
) -> None:
    import numpy as np

    from kappa.cli.run import Run
    from kappa.cli.whatif import record as what_if_record
    from kappa.errors import ConfigError
    from kappa.io.config import derived_lines, load_config
    from kappa.io.grids import parse_key_values
    from kappa.io.records import model_summary
    from kappa.workflows.predict import compare, comparison_columns, predict

    tables, figures = common.parse_formats(format_)
    common.use_style(style)
    cfg = load_config(config, set_ or [])
    T = cfg.require_temperature()
    record_path = fit if fit is not None else (config.parent / "fit.json" if band else None)
    inputs = [config] + ([record_path] if record_path is not None else [])
    model = cfg.model
    cov = None
    if fit is not None:
        from kappa.cli.whatif import load_fit

        cov = load_fit(fit, model)
    run = Run("predict", out, force=force, inputs=inputs, beside=config)
    prediction = predict(model, T)
    overlays, compared, order = [], None, None
    if compare_:
        from kappa.presentation.style import value_text

        key, values, texts = parse_key_values(model, compare_, "--compare")
        parameter = model.parameter(key)
        curves = compare(model, key, values, T)
        order = np.argsort(values)
        overlays = [(f"{parameter.label} = {value_text(parameter, values[i])}", curves[i])
                    for i in order]
        compared = (key, parameter, values, curves)
    columns = prediction.columns()
    fit_band = answers = data = None
    if band or fit is not None:
        from kappa.io.fitfiles import read_fit_record
        from kappa.workflows.fitting import prediction_band

        if cov is None:
            cov = read_fit_record(config.parent / "fit.json")
        fit_band = prediction_band(model, cov, T, draws=draws, seed=seed)
        columns[2:2] = [("kappa_L_low [W/(m K)]", fit_band.low),
                        ("kappa_L_high [W/(m K)]", fit_band.high)]
        data = _fitted_data((fit if fit is not None else config).parent / "residuals.csv")
    comparison = None
    if compared is not None:
        comparison = comparison_columns(*compared)
        if fit is not None:
            from kappa.workflows.whatif import what_if

            try:
                answers = what_if(model, cov, {key: values}, T, draws=draws, seed=seed)
            except ConfigError as exc:
                raise exc.renamed({"draws": "--draws", "seed": "--seed"}.get(exc.key, exc.key)
                                  ) from None
            comparison += answers.columns()

    band_curves = None if fit_band is None else (fit_band.temperature, fit_band.low,
                                                 fit_band.high)
    derived = dict(derived_lines(model))
    written = run.table("kappa_L.csv", columns, tables)
    if compared is not None:
        written += run.table("compare.csv", comparison, tables)
    run.figure_job("kappa_L", "kappa.presentation.predict", "prediction_figure", prediction,
                   overlays, band=band_curves, data=data, answers=answers, order=order,
                   formats=figures)
    run.record(
        config=str(config),
        overrides=list(set_ or []),
        compare=compare_,
        what_if=None if answers is None else what_if_record(answers, fit, seed),
        band=None if fit_band is None else {
            "source": str(record_path), "draws": draws, "seed": seed,
            "accepted": fit_band.draws, "rejected": fit_band.rejected,
            "keys": list(fit_band.keys),
            "columns": "kappa_L_low/kappa_L_high: 16th/84th percentiles over the draws"},
        resolved_inputs=cfg.data,
        derived=derived,
        model_si=model_summary(model),
        citations=prediction.citations,
    )
    run.finish(report=False)
    for key, text in derived.items():
        common.echo_err(f"derived: {key} = {text}")
    if compared is not None:
        key, parameter, values, curves = compared
        from kappa.presentation.style import value_text

        headers = ["T [K]", *[value_text(parameter, values[i]) for i in np.argsort(values)]]
        rows = list(zip(T, *[curves[i].kappa_L for i in np.argsort(values)], strict=True))
        typer.echo(f"kappa_L [W/(m K)] for {parameter.label} =")
        common.print_table(headers, rows, source=f"{run.out}/{written[-1]}")
        if answers is not None:
            labels = [""] * len(overlays)  # in the order of the values given
            for position, i in enumerate(order):
                labels[i] = overlays[position][0]
            _print_answers(answers, labels)
    else:
        shown = [h for h, _ in columns if not h.startswith("C_V")][:7]
        hidden = [h for h, _ in columns if h not in shown]
        rows = list(zip(*[v for h, v in columns if h in shown], strict=True))
        common.print_table(shown, rows, source=f"{run.out}/{written[0]}", hidden_columns=hidden)
    typer.echo(f"wrote {run.out}/ ({', '.join(run.outputs)})")


def _print_answers(w, labels: list[str]) -> None:
    from kappa.cli.whatif import print_flags
    from kappa.presentation.sweep import pick

    typer.echo(f"\nWhat if (68 % intervals from the fit, {w.draws} parameter sets; ratio to "
               "the fitted sample):")
    rows = []
    for s, label in enumerate(labels):
        for t in pick(w.temperature.size, 4):
            rows.append([label, w.temperature[t], w.kappa_L[s, t],
                         f"{w.low[s, t]:.4g} .. {w.high[s, t]:.4g}", w.ratio[s, t],
                         f"{w.ratio_low[s, t]:.4g} .. {w.ratio_high[s, t]:.4g}",
                         "yes" if w.pinned[s, t] else "NO"])
    common.print_table(["scenario", "T [K]", "kappa_L", "68 %", "ratio", "ratio 68 %",
                        "pinned"], rows, max_rows=48)
    print_flags(w, labels)


def _fitted_data(path: Path):
    """(T, kappa_L, error or None) of the fit's data from residuals.csv, if it is there."""
    if not path.is_file():
        return None
    from kappa.errors import KappaError
    from kappa.io.tables import read_table

    try:
        t = read_table(path)
        err = t.get("kappa_L_err", "W/(m K)") if "kappa_L_err" in t else None
        return t.get("T", "K"), t.get("kappa_L", "W/(m K)"), err
    except KappaError:
        return None


def register(app: typer.Typer) -> None:
    app.command("predict", help=HELP)(common.handles_errors(predict_command))
