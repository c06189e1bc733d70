"""``kappa sweep``: κ_L on a grid of parameter values × temperatures."""

from __future__ import annotations

import time
from pathlib import Path
from typing import Annotated

import numpy as np
import typer

from . import common

HELP = """Sweep one or more config keys over a grid and compute κ_L at every point.

Each --vary is KEY=START:STOP:N (N evenly spaced values, both ends included), KEY=START:STOP:N:log
(geometric spacing) or KEY=V1,V2,... (a list). Values take units (10nm, 2km/s); a bare number is
read in the key's default unit, as in the config. Any numeric key of the config works
('kappa check CONFIG' lists them). Temperatures come from --at, else from the config.

Writes OUT/sweep.csv (one row per grid point and temperature: one column per key in its display
unit, T [K], kappa_L [W/(m K)], kappa_L_ratio [1] = κ_L / κ_L of the config as written at the
same T), OUT/sweep.png and .svg (one key: κ_L against the key, a line per temperature; two or
more keys: contour maps over the first two keys, a panel per temperature, other keys at their
first value), and OUT/run.json; prints a summary.

Examples:

  kappa sweep my.yaml --vary scattering.boundary.grain_size=10nm:10um:41:log --at 300K,600K -o grains

  kappa sweep my.yaml --vary scattering.boundary.grain_size=10nm:10um:61:log
      --vary scattering.point_defect.mass_variance=0:0.05:51 --at 300K -o map

  kappa sweep my.yaml --vary material.gruneisen=1.0,1.5,2.0 -o gamma

With --fit FIT.json (the record 'kappa fit' wrote with the fitted.yaml being swept) every point
gets a 68 % interval from the fit's covariance: sweep.csv adds kappa_L_low, kappa_L_high,
kappa_L_ratio_low, kappa_L_ratio_high (the ratio to the fitted sample, per draw) and pinned
(0 where the interval of the change includes no change or spans more than a factor of two:
the data do not pin that answer); the figure shows bands (one key) or hatches unpinned
regions (maps). --draws parameter sets (default 200) per grid point:

  kappa sweep fit1/fitted.yaml --fit fit1/fit.json
      --vary scattering.boundary.grain_size=10nm:10um:31:log --at 300K -o grains-what-if

Sweeps above 10^8 points need --yes.
"""


def sweep_command(
    config: Annotated[Path, typer.Argument(help="YAML config (see 'kappa new').",
                                           exists=True, dir_okay=False, readable=True)],
    vary: Annotated[list[str] | None, typer.Option(
        "--vary", help="KEY=START:STOP:N[:log] or KEY=V1,V2,... (repeatable, one per key).")] = None,
    at: Annotated[list[str] | None, typer.Option(
        "--at", help="Temperatures, e.g. 300K,600K (repeatable); default: the config's "
        "temperature section.")] = None,
    set_: Annotated[list[str] | None, typer.Option(
        "--set", help="Override a config value first: KEY=VALUE (repeatable).")] = None,
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a new "
                                             "folder beside the config).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder.")] = False,
    yes: Annotated[bool, typer.Option("--yes", help="Allow sweeps above 10^8 points.")] = False,
    fit: Annotated[Path | None, typer.Option("--fit", help="fit.json written by 'kappa fit' "
                                             "for this config: 68 % intervals at every point.",
                                             exists=True, dir_okay=False)] = None,
    draws: Annotated[int, typer.Option("--draws", help="Parameter sets drawn for --fit "
                                       "(50 to 100,000).")] = 200,
    seed: Annotated[int, typer.Option("--seed", min=0, help="Seed of the --fit draws.")] = 0,
    format_: Annotated[str | None, typer.Option("--format", help=common.FORMAT_HELP.replace(
        "csv or parquet", "csv or parquet (pyarrow)"), show_default=False)] = None,
    style: Annotated[str, typer.Option("--style", help=common.STYLE_HELP)] = "paper",
) -> None:
    from kappa.cli.run import Run
    from kappa.errors import ConfigError
    from kappa.io.config import derived_lines, load_config
    from kappa.io.grids import parse_temperatures, parse_vary
    from kappa.io.records import model_summary
    from kappa.workflows.sweep import MAX_POINTS, check_axes, grid_points, sweep

    tables, figures = common.parse_formats(format_, tables=("csv", "parquet"))
    common.use_style(style)
    cfg = load_config(config, set_ or [])
    model = cfg.model
    if not vary:
        raise ConfigError("--vary", allowed="missing; give at least one KEY=START:STOP:N[:log], "
                          "e.g. --vary scattering.boundary.grain_size=10nm:10um:31:log")
    axes = [parse_vary(model, item) for item in vary]
    seen = set()
    for a in axes:
        if a.key in seen:
            raise ConfigError(f"--vary {a.key}", allowed="each key may be varied only once")
        seen.add(a.key)
    if at:
        T = parse_temperatures(at)
    elif cfg.temperature is not None:
        T = cfg.temperature
    else:
        raise ConfigError("--at", allowed="missing: give temperatures with --at (e.g. --at "
                          "300K,600K) or a temperature section in the config")
    points = grid_points(axes, T.size)
    if points > MAX_POINTS and not yes:
        raise ConfigError("--vary", f"{points:,} κ_L points",
                          f"that is more than {MAX_POINTS:,}; add --yes to run it anyway "
                          "(the table needs about 50 bytes per point)")
    try:
        axes = list(check_axes(model, axes))
    except ConfigError as exc:
        raise exc.renamed(f"--vary {exc.key}" if exc.key in seen else exc.key) from None
    cov = None
    if fit is not None:
        from kappa.cli.whatif import load_fit

        cov = load_fit(fit, model)
        if points * draws > MAX_POINTS and not yes:
            raise ConfigError("--draws", draws, f"{points:,} points × {draws} draws is more "
                              f"than {MAX_POINTS:,} κ_L values; give fewer draws or points, "
                              "or --yes")
    run = Run("sweep", out, force=force, inputs=[config, *([fit] if fit else [])])

    t0 = time.perf_counter()
    result = sweep(model, axes, T, progress=common.Bar("sweep"), allow_large=yes)
    elapsed = time.perf_counter() - t0

    fitted = _fitted(fit if fit is not None else config.parent / "fit.json", axes)
    names = result.column_names
    answers = None
    if cov is not None:
        from kappa.workflows.whatif import what_if

        grids = np.meshgrid(*[a.values for a in axes], indexing="ij")
        try:
            answers = what_if(model, cov, {a.key: g.ravel() for a, g in
                                           zip(axes, grids, strict=True)}, T, draws=draws,
                              seed=seed, progress=common.Bar("intervals"))
        except ConfigError as exc:
            raise exc.renamed({"draws": "--draws", "seed": "--seed"}.get(exc.key, exc.key)
                              ) from None
    derived = dict(derived_lines(model))
    run.record(
        config=str(config),
        overrides=list(set_ or []),
        vary=list(vary or []),
        axes=[{"key": a.key, "column": n, "unit": a.unit, "spacing": "log" if a.log else
               ("list" if ":" not in a.spec else "linear"), "values": a.shown}
              for a, n in zip(axes, names, strict=True)],
        points=points,
        **{"temperatures [K]": T, "reference kappa_L [W/(m K)]": result.reference,
           "time [s]": round(elapsed, 3)},
        resolved_inputs=cfg.data,
        derived=derived,
        model_si=model_summary(model),
        citations=result.citations,
    )
    if answers is not None:
        from kappa.cli.whatif import record as what_if_record

        run.record(what_if=what_if_record(answers, fit, seed))
    columns = result.columns()
    if answers is not None:
        columns += answers.columns(ratio=False)  # the sweep has its own kappa_L_ratio
    written = run.table("sweep.csv", columns, tables)
    run.figure_job("sweep", "kappa.presentation.sweep", "sweep_figure", result, fitted,
                   answers, formats=figures)
    run.finish(report=False)
    for key, text in derived.items():
        common.echo_err(f"derived: {key} = {text}")
    _summary(result, names, elapsed, f"{run.out}/{written[0]}")
    if answers is not None:
        _answers(result, answers, names)
    typer.echo(f"wrote {run.out}/ ({', '.join(run.outputs)})")


def _answers(result, w, names: list[str]) -> None:
    from kappa.cli.whatif import print_flags
    from kappa.presentation.sweep import pick

    axes = result.axes
    typer.echo(f"\n68 % intervals from the fit ({w.draws} parameter sets); ratio to the fitted "
               "sample:")
    grids = np.meshgrid(*[a.shown for a in axes], indexing="ij")
    labels = [", ".join(f"{n.split(' [')[0]}={g.ravel()[i]:.4g}"
                        + ("" if a.unit in ("1", "") else f" {a.unit}")
                        for n, a, g in zip(names, axes, grids, strict=True))
              for i in range(w.size)]
    rows = []
    for i in pick(w.size, 12):
        for t in pick(w.temperature.size, 3):
            rows.append([labels[i], w.temperature[t],
                         f"{w.kappa_L[i, t]:.4g} ({w.low[i, t]:.4g} .. {w.high[i, t]:.4g})",
                         f"{w.ratio[i, t]:.4g} ({w.ratio_low[i, t]:.4g} .. "
                         f"{w.ratio_high[i, t]:.4g})", "yes" if w.pinned[i, t] else "NO"])
    common.print_table(["point", "T [K]", "kappa_L (68 %)", "ratio (68 %)", "pinned"], rows,
                       max_rows=36)
    print_flags(w, labels, most=6)


def _fitted(path: Path, axes) -> dict | None:
    """Fitted values and 68 % intervals [SI] of swept keys, from a fit record (``--fit``, or
    a fit.json beside a fitted.yaml written by 'kappa fit'); None without one."""
    import math

    from kappa.errors import KappaError
    from kappa.io.fitfiles import read_fit_record

    if not path.is_file():
        return None
    try:
        record = read_fit_record(path)
    except KappaError:
        return None
    out = {}
    for i, key in enumerate(record.keys):
        if key not in {a.key for a in axes}:
            continue
        v, sd = record.values[i], math.sqrt(max(float(record.matrix[i, i]), 0.0))
        if not math.isfinite(sd):
            continue
        out[key] = ((v, v * math.exp(-sd), v * math.exp(sd)) if record.spaces[i] == "log"
                    else (v, v - sd, v + sd))
    return out or None


def _summary(result, names: list[str], elapsed: float, source: str) -> None:
    from kappa.presentation.style import number_text
    from kappa.presentation.sweep import pick

    k, T, axes = result.kappa_L, result.temperature, result.axes
    n_sets = k.size // T.size
    rate = f" ({k.size / elapsed:.3g} points/s)" if elapsed > 0 else ""
    typer.echo(f"{n_sets} parameter sets x {T.size} temperatures = {k.size} points in "
               f"{elapsed:.2f} s{rate}")
    rows = []
    for t in range(T.size):
        kt = k[..., t]
        lo, hi = np.unravel_index(np.argmin(kt), kt.shape), np.unravel_index(np.argmax(kt), kt.shape)
        where = [", ".join(f"{n.split(' [')[0]} {number_text(float(a.shown[i]), 4)}"
                           + ("" if a.unit in ("1", "") else f" {a.unit}")
                           for n, a, i in zip(names, axes, ix, strict=True)) for ix in (lo, hi)]
        rows.append([T[t], kt[lo], where[0], kt[hi], where[1], result.reference[t]])
    common.print_table(["T [K]", "min kappa_L", "at", "max kappa_L", "at", "config kappa_L"],
                       rows, source=source)
    if len(axes) == 1:
        headers = [names[0]] + [f"kappa_L at {T[t]:.6g} K" for t in range(T.size)]
        table = [[axes[0].shown[i]] + [k[i, t] for t in range(T.size)]
                 for i in range(axes[0].values.size)]
        typer.echo("")
        common.print_table(headers[:9], [r[:9] for r in table], source=source,
                           hidden_columns=headers[9:])
    elif len(axes) == 2:
        rows_i, cols_i = pick(axes[0].values.size, 10), pick(axes[1].values.size, 6)
        for t in pick(T.size, 3):
            typer.echo(f"\nkappa_L [W/(m K)] at T = {T[t]:.6g} K (rows: {names[0]}, "
                       f"columns: {names[1]})")
            headers = [names[0].split(" [")[0]] + [f"{axes[1].shown[j]:.4g}" for j in cols_i]
            table = [[axes[0].shown[i]] + [k[i, j, t] for j in cols_i] for i in rows_i]
            common.print_table(headers, table)
            if len(rows_i) < axes[0].values.size or len(cols_i) < axes[1].values.size:
                typer.echo(f"{len(rows_i)} of {axes[0].values.size} rows and {len(cols_i)} of "
                           f"{axes[1].values.size} columns of the grid shown, evenly spread; "
                           f"every point in {source}")
        if T.size > 3:
            typer.echo(f"{min(3, T.size)} of {T.size} temperatures shown; all in {source}")


def register(app: typer.Typer) -> None:
    app.command("sweep", help=HELP)(common.handles_errors(sweep_command))
