"""``kappa split``: measured kappa, sigma, S -> lattice and electronic parts, zT."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import numpy as np
import typer

from kappa.cli import common
from kappa.cli.split_options import Options, parse_options
from kappa.errors import DataError
from kappa.io.measurements import read_measurements
from kappa.io.outdir import check_out, default_out, output_folder
from kappa.io.records import run_record, write_json
from kappa.io.tables import write_table
from kappa.workflows.measurements import Measurements
from kappa.workflows.split import (
    DEFAULT_RANDOM,
    DEFAULT_UNCERTAINTY,
    INTERVAL,
    SplitResult,
    split_measurements,
)

HELP = """Split measured thermal conductivity into lattice and electronic parts.

kappa_e = L sigma T (Wiedemann-Franz), kappa_L = kappa - kappa_e (bipolar part included),
zT = S^2 sigma T / kappa, with 68 % Monte Carlo bands from relative measurement uncertainties,
a bipolar check (A/T + B fit and extrapolation) and the Goldsmid-Sharp gap estimate.

DATA files are tables with 'name [unit]' or 'name (unit)' headers: T, kappa (or the flash trio
D, rho, cp), sigma or resistivity, S; comma-, semicolon- or tab-separated text (decimal commas
detected) or .xlsx (BOOK.xlsx:SHEET for another sheet). A note '# rho = 3.08 g/cm^3' gives a
value for the whole file. Several files (e.g. flash and electrical data) are merged onto the
temperatures of the thermal data by linear interpolation; --extrapolate 5K allows a small
extrapolation, reported per row.

Uncertainties have a systematic part (one relative error per quantity shared by all
temperatures: calibration, geometry) and a random part (independent per row); split.csv gives
kappa_L_err (both) and kappa_L_err_systematic / kappa_L_err_random, which 'kappa fit' uses apart.

Writes OUT/split.csv, OUT/split.png, OUT/split.svg and OUT/run.json. With --series: OUT/series.csv
(all samples, with their notes), OUT/samples.csv, OUT/series.png/.svg (kappa, kappa_L, kappa_e
and zT of all samples on shared axes), OUT/series.yaml (the series file for 'kappa fit --series',
data pointing at OUT/samples/NAME/split.csv) and OUT/samples/NAME/ with each sample's split.

\b
Examples:
  kappa split sample.csv -o sample-split
  kappa split flash.csv electrical.csv --composition Mg2Si0.4Sn0.6 -o out
  kappa split data.csv --lorenz kim --uncertainty kappa=0.08+0.02,sigma=0.05,S=0.05+0.01
  kappa split data.csv --lorenz spb --scattering-exponent 2 --window 300K:450K
  kappa split --series samples.yaml -o series-split
  kappa split data.csv --lorenz 2.0e-8 --nan omit --draws 5000 --seed 7
  kappa split flash.xlsx:HH-4 electrical.txt --density 3.08g/cm^3 --extrapolate 5K

Limits: --draws 100 to 100,000; --seed >= 0; --scattering-exponent -0.9 to 4.
"""


def register(app: typer.Typer) -> None:
    app.command("split", help=HELP)(split_command)


#: Library argument names -> the options of this command (for error messages).
_OPTIONS = {"fit_window": "--window", "draws": "--draws", "seed": "--seed",
            "scattering_exponent": "--scattering-exponent", "uncertainty": "--uncertainty"}


# --- option parsing (all before anything is written) ------------------------------------------


# --- output -------------------------------------------------------------------------------------


def table_columns(r: SplitResult, m: Measurements) -> list[tuple[str, object]]:
    """The columns of ``split.csv`` (the first four are fixed; readers may rely on them).

    ``kappa_L_err`` is half the 68 % interval with all uncertainties drawn;
    ``kappa_L_err_systematic`` and ``kappa_L_err_random`` the same with only the part shared
    by all temperatures, or only the point-to-point part (``kappa fit`` uses them apart).
    """
    cols: list[tuple[str, object]] = [
        ("T [K]", r.temperature),
        ("L [W Ohm/K^2]", r.lorenz),
        ("kappa_e [W/(m K)]", r.kappa_e),
        ("kappa_L [W/(m K)]", r.kappa_L),
        ("kappa_L_err [W/(m K)]", r.kappa_L_err),
        ("kappa_L_err_systematic [W/(m K)]", r.kappa_L_err_systematic),
        ("kappa_L_err_random [W/(m K)]", r.kappa_L_err_random),
        ("kappa_L_low [W/(m K)]", r.kappa_L_low),
        ("kappa_L_high [W/(m K)]", r.kappa_L_high),
        ("kappa_e_low [W/(m K)]", r.kappa_e_low),
        ("kappa_e_high [W/(m K)]", r.kappa_e_high),
        ("L_low [W Ohm/K^2]", r.lorenz_low),
        ("L_high [W Ohm/K^2]", r.lorenz_high),
        ("kappa_L_degenerate [W/(m K)]", r.kappa_L_degenerate),
    ]
    if r.kappa_L_kim is not None:
        cols.append(("kappa_L_kim [W/(m K)]", r.kappa_L_kim))
    if r.zT is not None:
        cols += [("zT [1]", r.zT), ("zT_low [1]", r.zT_low), ("zT_high [1]", r.zT_high)]
    if r.eta is not None:
        cols.append(("eta [1]", r.eta))
    cols += [("kappa [W/(m K)]", r.kappa), ("sigma [S/m]", r.electrical_conductivity)]
    if r.seebeck is not None:
        cols.append(("S [uV/K]", r.seebeck * 1e6))
    if m.heat_capacity is not None:
        cols.append(("cp [J/(g K)]", m.heat_capacity / 1e3))
    if r.bipolar is not None:
        cols += [("kappa_L_fit [W/(m K)]", r.bipolar.kappa_L_fit),
                 ("kappa_excess [W/(m K)]", r.bipolar.excess),
                 ("kappa_excess_err [W/(m K)]", r.bipolar.excess_err),
                 ("bipolar [1]", r.bipolar.bipolar.astype(int))]
    if r.kappa_min is not None:
        cols += [("kappa_min [W/(m K)]", r.kappa_min),
                 ("below_min [1]", r.below_minimum.astype(int))]
    cols.append(("kappa_L_nonpositive [1]", r.nonpositive.astype(int)))
    return cols


def summary_lines(r: SplitResult, m: Measurements) -> list[str]:
    """Plain-text summary printed after the table and stored in run.json."""
    lines = []
    model = r.lorenz_model
    if model == "spb":
        model += f" (scattering exponent lambda = {r.scattering_exponent:g})"
    elif model == "nondegenerate":
        model += (f" ((2 + lambda)(k_B/e)^2 = {float(r.lorenz[0]):.4g} W Ohm/K^2, lambda = "
                  f"{r.scattering_exponent:g})")
    elif model == "constant":
        model = f"constant {float(r.lorenz[0]):.4g} W Ohm/K^2"
    extra = "degenerate and kim" if r.kappa_L_kim is not None else "degenerate"
    lines.append(f"Lorenz model: {model}; split.csv also has kappa_L with L {extra}")
    if m.heat_capacity is not None:
        lines.append(f"Heat capacity: {m.heat_capacity_source}")
    u, ur = r.uncertainty, r.uncertainty_random
    lines.append("Uncertainty (relative, 1 sigma, systematic (shared by all temperatures) + "
                 "random (point to point)): "
                 + ", ".join(f"{k} {100 * u[k]:g} % + {100 * ur[k]:g} %"
                             for k in ("kappa", "sigma", "S", "L"))
                 + f"; {r.draws} draws, seed {r.seed}; bands are {100 * INTERVAL:.2f} % intervals")
    rel_sys = np.median(r.kappa_L_err_systematic / np.abs(r.kappa_L))
    rel_rand = np.median(r.kappa_L_err_random / np.abs(r.kappa_L))
    shares = sorted(((float(np.median(v / np.abs(r.kappa_L))), f"{k} {part}")
                     for k, parts in r.budget.items() for part, v in parts.items()),
                    reverse=True)
    top = ", ".join(f"{name} {100 * v:.2g} %" for v, name in shares[:3] if v > 0)
    lines.append(f"kappa_L uncertainty (median over rows, relative): systematic "
                 f"{100 * rel_sys:.2g} %, random {100 * rel_rand:.2g} %"
                 + (f"; largest inputs: {top}" if top else ""))
    for d in m.dropped:
        lines.append(f"Dropped: {d}")
    for note in (*m.notes, *r.notes):
        lines.append(f"Note: {note}")
    b = r.bipolar
    if b is not None:
        how = "automatic" if b.window_auto else "--window"
        text = (f"Bipolar check: kappa_L = A/T + B fitted on {b.fit_window[0]:g}-"
                f"{b.fit_window[1]:g} K ({how}); ")
        if b.onset is None:
            text += "no rise above the extrapolation beyond its uncertainty"
        else:
            text += (f"kappa_L rises above it from {b.onset:g} K on (bipolar onset); excess "
                     f"{b.excess[-1]:.3g} +- {b.excess_err[-1]:.2g} W/(m K) at "
                     f"{r.temperature[-1]:g} K")
        lines.append(text)
        if b.seebeck_max is not None:
            if b.gap is None:
                lines.append(f"Goldsmid-Sharp gap: not estimated ({b.gap_note})")
            else:
                lines.append(f"Goldsmid-Sharp gap: 2e|S|max Tmax = {b.gap / 1.602176634e-19:.3g} "
                             f"eV (|S|max = {b.seebeck_max * 1e6:.4g} uV/K at "
                             f"{b.temperature_at_seebeck_max:g} K); {b.gap_note}")
    if r.nonpositive.any():
        lines.append("Flag: kappa_L <= 0 at " + _temperatures(r.temperature[r.nonpositive]))
    if r.below_minimum is not None and r.below_minimum.any():
        lines.append("Flag: kappa_L below the Cahill minimum at "
                     + _temperatures(r.temperature[r.below_minimum]))
    return lines


def _temperatures(T: np.ndarray, shown: int = 8) -> str:
    text = ", ".join(f"{t:g} K" for t in T[:shown])
    return text + (f" and {T.size - shown} more" if T.size > shown else "")


def _flags(r: SplitResult, i: int) -> str:
    f = []
    if r.bipolar is not None and r.bipolar.bipolar[i]:
        f.append("bipolar")
    if r.nonpositive[i]:
        f.append("<=0")
    if r.below_minimum is not None and r.below_minimum[i]:
        f.append("<min")
    return ",".join(f)


def split_command(
    data: Annotated[list[Path] | None, typer.Argument(
        help="Measurement files (CSV/TXT with comma, semicolon or tab separators, or .xlsx; "
        "BOOK.xlsx:SHEET for another sheet); columns T, kappa or D+rho+cp, sigma or "
        "resistivity, S.", show_default=False, metavar="DATA...")] = None,
    series: Annotated[Path | None, typer.Option(
        "--series", help="A series file: several samples' measurement files and notes (the "
        "format of 'kappa fit --series'); writes one table and overlay figures for all.",
        exists=True, dir_okay=False, show_default=False)] = None,
    out: Annotated[Path | None, typer.Option(
        "-o", "--out", help="Output folder (default: beside the first file, with a time stamp).",
        show_default=False)] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder.")
                     ] = False,
    lorenz: Annotated[str, typer.Option(
        "--lorenz", help="Lorenz model: spb, degenerate, nondegenerate, kim, or a number in "
        "W Ohm/K^2 (e.g. 2.0e-8).")] = "spb",
    scattering_exponent: Annotated[float, typer.Option(
        "--scattering-exponent", help="lambda in tau ~ E^(lambda-1/2) for --lorenz spb and "
        "nondegenerate ((2+lambda)(k_B/e)^2), -0.9 to 4: 0 acoustic phonons, 1 polar optical, "
        "2 ionized impurities.")] = 0.0,
    composition: Annotated[str | None, typer.Option(
        "--composition", help="Chemical formula (e.g. Bi2Te2.7Se0.3); cp = Dulong-Petit "
        "3R/M for flash data.", show_default=False)] = None,
    uncertainty: Annotated[str | None, typer.Option(
        "--uncertainty", help="Relative 1-sigma uncertainties KEY=SYSTEMATIC[+RANDOM], e.g. "
        "kappa=0.08+0.02,sigma=5%,S=0.05+0.01 (keys kappa, sigma|resistivity, S, L); systematic "
        "= shared by all temperatures, random = point to point (a lone value sets the "
        "systematic part). Defaults: kappa=0.11+0.02,sigma=0.08+0.01,S=0.06+0.01,L=0+0.",
        show_default=False)] = None,
    window: Annotated[str | None, typer.Option(
        "--window", help="Window LOW:HIGH of the A/T + B fit of the bipolar check, e.g. "
        "300K:450K (bare numbers in K; one side may be empty; default: automatic).",
        show_default=False)] = None,
    fit_window: Annotated[str | None, typer.Option(
        "--fit-window", hidden=True, help="Old name of --window.")] = None,
    nan: Annotated[str, typer.Option(
        "--nan", help="NaN cells: raise (error) or omit (drop the row and list it).")] = "raise",
    draws: Annotated[int, typer.Option("--draws", help="Monte Carlo draws (100 to 100,000).")
                     ] = 2000,
    seed: Annotated[int, typer.Option("--seed", help="Random seed of the Monte Carlo (>= 0).")
                    ] = 0,
    number_density: Annotated[str | None, typer.Option(
        "--number-density", help="Atoms per volume for the Cahill minimum, e.g. '4.99e28 1/m^3'"
        " (needs --sound-velocity).", show_default=False)] = None,
    sound_velocity: Annotated[list[str] | None, typer.Option(
        "--sound-velocity", help="Acoustic velocity for the Cahill minimum, repeat 1-3 times "
        "(v_L, v_T, v_T), e.g. '8.95 km/s'.", show_default=False)] = None,
    config: Annotated[Path | None, typer.Option(
        "--config", help="A kappa config of the material: its volume per atom and branch "
        "velocities give the Cahill minimum (--number-density/--sound-velocity take priority).",
        exists=True, dir_okay=False, show_default=False)] = None,
    separator: Annotated[str | None, typer.Option(
        "--separator", help="Separator of text files: comma, semicolon or tab (default: "
        "detected).", show_default=False)] = None,
    decimal: Annotated[str | None, typer.Option(
        "--decimal", help="Decimal mark of text files: point or comma (default: detected).",
        show_default=False)] = None,
    sheet: Annotated[str | None, typer.Option(
        "--sheet", help="Sheet of .xlsx files named without one (default: the first sheet; "
        "BOOK.xlsx:SHEET names one per file).", show_default=False)] = None,
    extrapolate: Annotated[str | None, typer.Option(
        "--extrapolate", help="Allow a quantity to be extrapolated linearly this far beyond "
        "its measured range, e.g. 5K (each such row is reported; default: never).",
        show_default=False)] = None,
    density: Annotated[str | None, typer.Option(
        "--density", help="Sample density for the flash trio, if no file gives it, e.g. "
        "3.08g/cm^3 (bare number: g/cm^3).", show_default=False)] = None,
    heat_capacity: Annotated[str | None, typer.Option(
        "--heat-capacity", help="Specific heat for the flash trio, if no file gives it, e.g. "
        "0.25J/(g K) (bare number: J/(g K)).", show_default=False)] = None,
    format_: Annotated[str | None, typer.Option(
        "--format", help="Figure files to write, comma-separated: png, svg, pdf (default "
        "png,svg).", show_default=False)] = None,
    style: Annotated[str, typer.Option("--style", help=common.STYLE_HELP)] = "paper",
) -> None:
    if fit_window is not None:
        if window is not None:
            _usage_error("--window", f"{window} and --fit-window {fit_window}",
                         "give --window once (--fit-window is its old name)")
        window = fit_window
    if (series is None) == (not data):
        _usage_error("DATA.csv.../--series", "both" if series is not None else "neither",
                     "give measurement files, or --series FILE (not both)")
    if series is not None and composition is not None:
        _usage_error("--composition", composition, "with --series give each sample's "
                     "composition in the series file (samples.N.composition)")
    if config is not None:
        number_density, sound_velocity = _cahill_from_config(config, number_density,
                                                             sound_velocity)
    reading = {"separator": separator, "decimal": decimal, "sheet": sheet,
               "extrapolate": extrapolate or 0.0,
               "density": density, "heat_capacity": heat_capacity}
    if series is not None:
        from kappa.cli.split_series import run_series

        run_series(series, out, force, lorenz, scattering_exponent, uncertainty, window, nan,
                   draws, seed, number_density, sound_velocity, config, reading,
                   format_=format_, style=style)
        return
    _run(data, out, force, lorenz, scattering_exponent, composition, uncertainty, window,
         nan, draws, seed, number_density, sound_velocity, config, reading, format_, style)


@common.handles_errors(command="split")
def _usage_error(key: str, value: str, allowed: str) -> None:
    raise DataError(key, value, allowed)


@common.handles_errors(command="split")
def _cahill_from_config(config: Path, number_density: str | None,
                        sound_velocity: list[str] | None) -> tuple[str, list[str]]:
    """Number density and velocities (as option strings) from a config, unless given."""
    from kappa.io.config import load_config

    m = load_config(config).material
    if number_density is None:
        number_density = f"{1.0 / m.atomic_volume!r} 1/m^3"
    if not sound_velocity:
        sound_velocity = []
        for b in m.branches:
            sound_velocity += [f"{b.sound_velocity!r} m/s"] * (1 if not m.per_branch
                                                                else max(1, round(b.count)))
    return number_density, sound_velocity


def check_seebeck(m: Measurements, model: str | float, where: str) -> None:
    if m.seebeck is None and model in ("spb", "kim"):
        raise DataError(where, "no column 'S [...]'",
                        f"a Seebeck column (e.g. 'S [uV/K]') is needed for --lorenz {model}; "
                        "or choose --lorenz degenerate, nondegenerate or a number")


def compute(m: Measurements, opts: Options, label: str = "split") -> SplitResult:
    """The split of one sample's measurements with the command's options."""
    try:
        return split_measurements(m, lorenz=opts.lorenz,
                                  scattering_exponent=opts.scattering_exponent,
                                  uncertainty=opts.uncertainty, draws=opts.draws,
                                  seed=opts.seed, fit_window=opts.window,
                                  number_density=opts.number_density,
                                  sound_velocities=opts.velocities,
                                  progress=common.Bar(label))
    except DataError as exc:
        if exc.key not in _OPTIONS:
            raise
        raise DataError(_OPTIONS[exc.key], exc.value, exc.allowed) from None


def uncertainty_record(r: SplitResult) -> dict:
    """The uncertainties used and each input's share of the kappa_L uncertainty (run.json)."""
    rel = np.abs(r.kappa_L)
    budget = {}
    for q, parts in r.budget.items():
        budget[q] = {part: {"median_percent_of_kappa_L": 100 * float(np.median(v / rel)),
                            "max_percent_of_kappa_L": 100 * float(np.max(v / rel))}
                     for part, v in parts.items()}
    return {
        "systematic": r.uncertainty, "random": r.uncertainty_random,
        "defaults": {"systematic": DEFAULT_UNCERTAINTY, "random": DEFAULT_RANDOM},
        "meaning": "relative 1-sigma; systematic: one draw per quantity shared by all "
                   "temperatures (calibration, geometry); random: independent per row",
        "kappa_L_err_parts_median_percent": {
            "systematic": 100 * float(np.median(r.kappa_L_err_systematic / rel)),
            "random": 100 * float(np.median(r.kappa_L_err_random / rel)),
            "total": 100 * float(np.median(r.kappa_L_err / rel))},
        "budget_linear_propagation": budget,
    }


@common.handles_errors(command="split")
def _run(data, out, force, lorenz, scattering_exponent, composition, uncertainty, window_text,
         nan, draws, seed, number_density, sound_velocity, config, reading=None, format_=None,
         style="paper") -> None:
    # 1. validate every option and the data before anything is written
    opts = parse_options(lorenz, scattering_exponent, uncertainty, window_text, nan, draws,
                         seed, number_density, sound_velocity)
    from kappa.io.labfiles import split_sheet

    files = list(dict.fromkeys(split_sheet(p)[0] for p in data))  # book.xlsx:Sheet → book.xlsx
    inputs = [*files, *([config] if config is not None else [])]
    out = Path(out) if out is not None else default_out(files[0], "split")
    check_out(out, force=force, inputs=inputs)
    _, figures = common.parse_formats(format_, tables=("csv",))
    common.use_style(style)
    m = read_data(data, nan, composition, reading)
    check_seebeck(m, opts.lorenz, ", ".join(p.name for p in data))
    r = compute(m, opts)
    lines = summary_lines(r, m)
    from kappa.presentation.split import plot_split

    fig = plot_split(r, title=", ".join(p.name for p in data))
    record = run_record(
        "split",
        inputs=inputs,
        options={"files": [str(p) for p in data], **opts.record(), "composition": composition,
                 "config": None if config is None else str(config),
                 "uncertainty": r.uncertainty, "uncertainty_random": r.uncertainty_random,
                 "uncertainty_defaults": DEFAULT_UNCERTAINTY,
                 "reading": {k: v for k, v in (reading or {}).items() if v}},
        uncertainty=uncertainty_record(r),
        measurements={"sources": m.sources, "heat_capacity": m.heat_capacity_source,
                      "dropped_rows": list(m.dropped), "notes": list(m.notes),
                      "rows": int(r.temperature.size)},
        derived=derived_record(r),
        summary=lines,
        citations=list(r.citations),
        caution=common.CAUTION,
    )
    # 2. write everything into a temporary folder, renamed to OUT only when complete
    with output_folder(out, force=force, inputs=inputs) as tmp:
        write_table(tmp / "split.csv", table_columns(r, m))
        from kappa.presentation.style import save

        save(fig, tmp / "split", figures)
        write_json(tmp / "run.json", record)
    # 3. terminal report
    print_report(r, lines, source=f"{out}/split.csv")
    typer.echo(f"wrote {out}/ (split.csv, {', '.join(f'split.{f}' for f in figures)}, run.json)")


def print_report(r: SplitResult, lines: list[str], source: str | None = None) -> None:
    headers = ["T [K]", "L [1e-8 W Ohm/K^2]", "kappa", "kappa_e", "kappa_L",
               "kappa_L 68%", "zT", "flags"]
    rows = []
    for i in range(r.temperature.size):  # print_table shows head and tail and says so
        t = r.temperature[i]
        rows.append([t, r.lorenz[i] * 1e8, r.kappa[i], r.kappa_e[i], r.kappa_L[i],
                     f"{r.kappa_L_low[i]:.3g}..{r.kappa_L_high[i]:.3g}",
                     np.nan if r.zT is None else r.zT[i], _flags(r, i)])
    typer.echo("conductivities in W/(m K)")
    common.print_table(headers, rows, source=source)
    for line in lines:
        typer.echo(line)


def read_data(data, nan: str, composition: str | None, reading: dict | None) -> Measurements:
    """Read the measurement files with the reading options (errors name the options)."""
    from kappa.io.measurements import parse_constants

    reading = dict(reading or {})
    constants = parse_constants(reading.pop("density", None), reading.pop("heat_capacity", None))
    try:
        return read_measurements(data, nan=nan, composition=composition, constants=constants,
                                 **reading)
    except DataError as exc:
        if exc.key in ("separator", "decimal", "extrapolate"):
            raise exc.renamed(f"--{exc.key}") from None
        raise


def derived_record(r: SplitResult) -> dict:
    d: dict = {"lorenz_model": r.lorenz_model}
    b = r.bipolar
    if b is not None:
        d["bipolar"] = {
            "fit_window [K]": list(b.fit_window), "window_auto": b.window_auto,
            "A [W/m]": b.coefficients[0], "B [W/(m K)]": b.coefficients[1],
            "onset [K]": b.onset,
            "seebeck_max [V/K]": b.seebeck_max,
            "temperature_at_seebeck_max [K]": b.temperature_at_seebeck_max,
            "goldsmid_sharp_gap [eV]": None if b.gap is None else b.gap / 1.602176634e-19,
            "gap_note": b.gap_note,
        }
    return d
