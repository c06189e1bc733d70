"""``kappa predict``: κ_L(T) of a config as a table, a figure and a run record."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = f"""Predict the lattice thermal conductivity κ_L(T) of a config.

Writes OUT/kappa_L.csv (T, κ_L, κ_L with each resistive mechanism switched off, the acoustic
and optical parts when material.atoms_per_cell > 1 (κ_L is their sum), per-branch parts,
Debye heat capacity), OUT/kappa_L.png and .svg, and OUT/run.json (resolved inputs,
derived values, version, citations), and prints a short table.

Examples:

  kappa predict configs/silicon.yaml -o si-run

  kappa predict my.yaml --set scattering.boundary.grain_size=50nm -o small-grains

  kappa predict my.yaml --compare scattering.boundary.grain_size=1um,100nm,20nm -o grains

  kappa predict fit1/fitted.yaml --band --draws 400 --seed 0 -o fit1-band

--band (for a fitted.yaml written by 'kappa fit') draws parameter sets from the fit's
covariance (fit.json beside the config) and adds the 16th/84th percentiles of κ_L as
kappa_L_low/kappa_L_high columns and a shaded band.

{common.CAUTION}
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
    draws: Annotated[int, typer.Option("--draws", min=10, help="Parameter draws for --band.")
                     ] = 400,
    seed: Annotated[int, typer.Option("--seed", min=0, help="Seed of the --band draws.")] = 0,
) -> None:
    from kappa.cli.run import Run
    from kappa.io.config import derived_lines, load_config
    from kappa.io.grids import parse_key_values
    from kappa.io.records import model_summary
    from kappa.workflows.predict import compare, predict

    cfg = load_config(config, set_ or [])
    T = cfg.require_temperature()
    inputs = [config, config.parent / "fit.json"] if band else [config]
    run = Run("predict", out, force=force, inputs=inputs, beside=config)
    model = cfg.model
    prediction = predict(model, T)
    overlays = []
    if compare_:
        key, values, texts = parse_key_values(model, compare_, "--compare")
        leaf = key.split(".")[-1]
        overlays = [(f"{leaf}={text}", p)
                    for text, p in zip(texts, compare(model, key, values, T), strict=True)]
    columns = [("T [K]", prediction.temperature), ("kappa_L [W/(m K)]", prediction.kappa_L)]
    fit_band = None
    if band:
        from kappa.io.fitfiles import read_fit_record
        from kappa.workflows.fitting import prediction_band

        fit_band = prediction_band(model, read_fit_record(config.parent / "fit.json"), T,
                                   draws=draws, seed=seed)
        columns += [("kappa_L_low [W/(m K)]", fit_band.low),
                    ("kappa_L_high [W/(m K)]", fit_band.high)]
    if overlays:
        columns += [(f"kappa_L({label}) [W/(m K)]", p.kappa_L) for label, p in overlays]
    for key, k in prediction.without.items():
        columns.append((f"kappa_L_without_{key} [W/(m K)]", k))
    if prediction.optical is not None:
        columns += [("kappa_L_acoustic [W/(m K)]", prediction.acoustic),
                    ("kappa_L_optical [W/(m K)]", prediction.optical)]
    if model.material.per_branch:
        for label, k in prediction.branches.items():
            columns.append((f"kappa_L_{label} [W/(m K)]", k))
    columns.append(("C_V [J/(mol K)]", prediction.molar_heat_capacity))

    from kappa.presentation.style import plot_prediction

    if fit_band is not None:  # the band is the point of the figure: leave out the other curves
        import dataclasses

        fig = plot_prediction(dataclasses.replace(prediction, without={}), overlays)
    else:
        fig = plot_prediction(prediction, overlays)
    if fit_band is not None:
        from kappa.presentation.fit import add_band

        add_band(fig.axes[0], fit_band.temperature, fit_band.low, fit_band.high)
    derived = dict(derived_lines(model))
    run.table("kappa_L.csv", columns)
    run.figure("kappa_L", fig)
    run.record(
        config=str(config),
        overrides=list(set_ or []),
        compare=compare_,
        band=None if fit_band is None else {
            "source": str(config.parent / "fit.json"), "draws": draws, "seed": seed,
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
    headers = [h for h, _ in columns if not h.startswith("C_V")][:6]
    rows = list(zip(*[v for h, v in columns if h in headers], strict=True))
    common.print_table(headers, rows)
    typer.echo(f"wrote {run.out}/ ({', '.join(run.outputs)})")


def register(app: typer.Typer) -> None:
    app.command("predict", help=HELP)(common.handles_errors(predict_command))
