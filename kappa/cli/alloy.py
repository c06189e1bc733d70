"""``kappa alloy``: κ_L across an alloy series between two end-member configs."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import numpy as np
import typer

from . import common

HELP = """κ_L across the alloy series (1-x)·A + x·B of two end-member configs.

Virtual crystal: mean mass linear in x; lattice constant linear (Vegard's law, δ = V0^(1/3));
elastic moduli ρv² linear, velocities from them and the interpolated density; Grüneisen
parameters and numeric scattering parameters linear; Debye temperatures from the velocities
(or linear where an end member gives them). Disorder: with material.composition in both
end members, the site-weighted Γ of the alloy composition (natural isotopes included) and a
strain term from the end members' size mismatch with ε (--strain-parameter); otherwise one
site of mean atoms (Abeles 1963).

Writes OUT/alloy.csv (fraction [1], T [K], kappa_L [W/(m K)] with mass and strain disorder,
kappa_L_mass_only [W/(m K)], Γ_M, Γ_S and the interpolated values), OUT/alloy.png and .svg
(κ_L against x, a line per temperature) and OUT/run.json.

With --fit FIT.json (the record 'kappa fit' wrote for the FIRST end member, a fitted.yaml)
the fitted end member's parameters are drawn from the fit's covariance; every draw becomes
its own alloy series, so alloy.csv adds kappa_L_low, kappa_L_high (68 %), kappa_L_ratio
(κ_L over the fitted end member's κ_L), kappa_L_ratio_low, kappa_L_ratio_high and pinned
(0 where the data do not pin the answer), and the figure shows bands.

Examples:

  kappa alloy si.yaml ge.yaml --fraction 0:1:21 --at 300K -o sige

  kappa alloy fit1/fitted.yaml other.yaml --fit fit1/fit.json --fraction 0:0.3:7 --at 300K

  kappa alloy mg2si.yaml mg2sn.yaml --fraction 0,0.2,0.4,0.6 --at 300K,600K
      --strain-parameter 60 -o mgsisn
"""


def parse_fractions(text: str) -> np.ndarray:
    """``START:STOP:N`` (N evenly spaced values, ends included) or ``X1,X2,...`` → array."""
    from kappa.errors import ConfigError

    allowed = ("START:STOP:N (e.g. 0:1:21) or a list X1,X2,... with fractions between 0 "
               "and 1")
    t = text.strip()
    try:
        if ":" in t:
            parts = t.split(":")
            if len(parts) != 3:
                raise ValueError
            a, b, n = float(parts[0]), float(parts[1]), int(parts[2])
            if n < 2 or n > 100_000:
                raise ConfigError("--fraction", text, "N must be a whole number from 2 to "
                                  "100000")
            x = np.linspace(a, b, n)
        else:
            x = np.array([float(p) for p in t.split(",") if p.strip()])
    except ValueError:
        raise ConfigError("--fraction", text, allowed) from None
    if x.size == 0 or np.any(~((x >= 0) & (x <= 1))):
        raise ConfigError("--fraction", text, allowed)
    return x


def alloy_command(
    first: Annotated[Path, typer.Argument(help="Config of the end member at x = 0.",
                                          exists=True, dir_okay=False, readable=True)],
    second: Annotated[Path, typer.Argument(help="Config of the end member at x = 1.",
                                           exists=True, dir_okay=False, readable=True)],
    fraction: Annotated[str, typer.Option("--fraction", help="Alloy fractions: START:STOP:N "
                                          "or X1,X2,...")] = "0:1:21",
    at: Annotated[list[str] | None, typer.Option(
        "--at", help="Temperatures, e.g. 300K,600K (repeatable); default: the first config's "
        "temperature section.")] = None,
    strain_parameter: Annotated[float, typer.Option(
        "--strain-parameter", help="Strain parameter ε (Abeles 1963: 39 for Si-Ge; a fit "
        "parameter).")] = 39.0,
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a new "
                                             "folder beside the first config).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder.")
                     ] = False,
    fit: Annotated[Path | None, typer.Option("--fit", help="fit.json written by 'kappa fit' "
                                             "for the first end member: 68 % intervals.",
                                             exists=True, dir_okay=False)] = None,
    draws: Annotated[int, typer.Option("--draws", help="Parameter sets drawn for --fit "
                                       "(50 to 100,000).")] = 200,
    seed: Annotated[int, typer.Option("--seed", min=0, help="Seed of the --fit draws.")] = 0,
    format_: Annotated[str | None, typer.Option("--format", help=common.FORMAT_HELP,
                                                show_default=False)] = None,
    style: Annotated[str, typer.Option("--style", help=common.STYLE_HELP)] = "paper",
) -> None:
    from kappa.cli.whatif import record as what_if_record
    from kappa.core.disorder import STRAIN_PARAMETER_SOURCE
    from kappa.errors import ConfigError, KappaError
    from kappa.io.config import load_config
    from kappa.io.grids import parse_temperatures
    from kappa.io.outdir import check_out, default_out, output_folder
    from kappa.io.records import model_summary, run_record, write_json
    from kappa.io.tables import write_parquet, write_table
    from kappa.workflows.alloy import alloy_series

    tables, figures = common.parse_formats(format_, tables=("csv", "parquet"))
    common.use_style(style)
    x = parse_fractions(fraction)
    if not (strain_parameter >= 0 and np.isfinite(strain_parameter)):
        raise ConfigError("--strain-parameter", strain_parameter, "must be a number >= 0")
    configs = []
    for path in (first, second):
        try:
            configs.append(load_config(path))
        except KappaError as exc:
            raise exc.renamed(f"{path.name}: {exc.key}") from None
    if at:
        T = parse_temperatures(at)
    elif configs[0].temperature is not None:
        T = configs[0].temperature
    else:
        raise ConfigError("--at", allowed="missing: give temperatures with --at (e.g. --at "
                          f"300K,600K) or a temperature section in {first.name}")
    cov = None
    if fit is not None:
        from kappa.cli.whatif import load_fit

        cov = load_fit(fit, configs[0].model)
    inputs = [first, second, *([fit] if fit is not None else [])]
    out = out or default_out(first, "alloy")
    check_out(out, force=force, inputs=inputs)
    names = (first.name, second.name)
    series = alloy_series(configs[0].model, configs[1].model, x, T,
                          strain_parameter=strain_parameter, names=names)
    answers = None
    if cov is not None:
        from kappa.workflows.whatif import alloy_what_if

        try:
            answers = alloy_what_if(configs[0].model, cov, configs[1].model, x, T,
                                    strain_parameter=strain_parameter, names=names,
                                    draws=draws, seed=seed)
        except ConfigError as exc:
            raise exc.renamed({"draws": "--draws", "seed": "--seed"}.get(exc.key, exc.key)
                              ) from None
    m = series.models
    nx, nT = x.size, T.size
    columns = [("fraction [1]", np.repeat(x, nT)), ("T [K]", np.tile(T, nx)),
               ("kappa_L [W/(m K)]", series.kappa_L.ravel()),
               ("kappa_L_mass_only [W/(m K)]", series.kappa_L_mass_only.ravel()),
               ("mass_variance [1]", np.repeat(m.mass_variance, nT)),
               ("strain_variance [1]", np.repeat(m.strain_variance, nT))]
    if answers is not None:
        columns += answers.columns()
    for key, values in m.values.items():
        if key.startswith("scattering.point_defect"):
            continue
        p = m.model.parameter(key)
        columns.append((f"{key.split('.', 1)[1]} [{p.shown_unit}]",
                        np.repeat(p.shown(np.asarray(values)), nT)))

    from kappa.presentation.alloy import plot_alloy
    from kappa.presentation.style import save

    fig = plot_alloy(series, (first.stem, second.stem))
    if answers is not None:
        from kappa.presentation.whatif import add_alloy_bands

        add_alloy_bands(fig, answers)
    record = run_record(
        "alloy",
        end_members=[str(first), str(second)],
        fraction=fraction,
        fractions=x,
        **{"temperatures [K]": T},
        strain_parameter=strain_parameter,
        strain_parameter_default=STRAIN_PARAMETER_SOURCE,
        disorder=m.disorder,
        notes=list(m.notes),
        rules={"atomic_mass": "linear in x", "atomic_volume": "Vegard: V0^(1/3) linear in x",
               "velocities": "elastic modulus rho v^2 linear in x, rho = M/V0",
               "debye_temperature": "from velocities and V0 (linear where given)",
               "gruneisen and scattering parameters": "linear in x"},
        resolved_inputs={"first": configs[0].data, "second": configs[1].data},
        end_member_models=[model_summary(c.model) for c in configs],
        what_if=None if answers is None else what_if_record(answers, fit, seed),
        outputs=[*(f"alloy.{t}" for t in tables), *(f"alloy.{f}" for f in figures), "run.json"],
        citations=series.citations,
    )
    with output_folder(out, force=force, inputs=inputs) as tmp:
        for t in tables:
            (write_parquet if t == "parquet" else write_table)(tmp / f"alloy.{t}", columns)
        save(fig, tmp / "alloy", figures)
        write_json(tmp / "run.json", record)

    typer.echo(f"disorder: {m.disorder}")
    for note in m.notes:
        typer.echo(f"note: {note}")
    rows = [[x[i], T[t], series.kappa_L[i, t], series.kappa_L_mass_only[i, t],
             m.mass_variance[i], m.strain_variance[i]] for i in range(nx) for t in range(nT)]
    headers = ["x", "T [K]", "kappa_L [W/(m K)]", "mass only", "Γ_M", "Γ_S"]
    if answers is not None:
        w = answers
        for row, (i, t) in zip(rows, [(i, t) for i in range(nx) for t in range(nT)],
                               strict=True):
            row += [f"{w.low[i, t]:.4g} .. {w.high[i, t]:.4g}",
                    f"{w.ratio[i, t]:.4g} ({w.ratio_low[i, t]:.4g} .. {w.ratio_high[i, t]:.4g})",
                    "yes" if w.pinned[i, t] else "NO"]
        headers += ["68 %", f"ratio to {first.stem} (68 %)", "pinned"]
    common.print_table(headers, rows, max_rows=24, source=f"{out}/alloy.{tables[0]}")
    if answers is not None:
        from kappa.cli.whatif import print_flags

        print_flags(answers, [f"x={v:.4g}" for v in x])
    names_written = [*(f"alloy.{t}" for t in tables), *(f"alloy.{f}" for f in figures)]
    typer.echo(f"wrote {out}/{', '.join(names_written)}, run.json")


def register(app: typer.Typer) -> None:
    app.command("alloy", help=HELP)(common.handles_errors(alloy_command))
