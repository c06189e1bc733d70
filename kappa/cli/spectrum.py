"""``kappa spectrum``: spectral and cumulative κ_L, mean-free-path accumulation, rates."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = """Split κ_L over phonon frequency and mean free path at given temperatures.

Writes OUT/spectrum.csv (per temperature, branch and frequency ν = ω/2π: spectral κ
[W/(m K THz)], κ carried below ν, mean free path, and the rate of every active scattering
mechanism), OUT/kappa_by_mean_free_path.csv (κ_L carried by phonons with mean free path up to
Λ, all branches merged; its last value is κ_L), figures spectral.png, cumulative.png,
rates.png (and .svg), and OUT/run.json; prints the mean free paths below which 50 % and 80 %
of the heat is carried (Λ50, Λ80).

With normal processes each phonon gets Callaway's effective relaxation time
τ_eff = τ_c(1 + β/τ_N), β = I₂/I₃, so that the parts add up to κ_L; mean free path Λ = v·τ_eff.

Examples:

  kappa spectrum my.yaml --at 300K -o spec300

  kappa spectrum my.yaml --at 300K,600K --set scattering.boundary.grain_size=100nm -o spec
"""


def spectrum_command(
    config: Annotated[Path, typer.Argument(help="YAML config (see 'kappa new').",
                                           exists=True, dir_okay=False, readable=True)],
    at: Annotated[list[str] | None, typer.Option(
        "--at", help="Temperature(s), e.g. 300K or 300K,600K (repeatable).")] = None,
    set_: Annotated[list[str] | None, typer.Option(
        "--set", help="Override a config value: KEY=VALUE (repeatable).")] = None,
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a new "
                                             "folder beside the config).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder.")] = False,
    format_: Annotated[str | None, typer.Option("--format", help=common.FORMAT_HELP,
                                                show_default=False)] = None,
    style: Annotated[str, typer.Option("--style", help=common.STYLE_HELP)] = "paper",
) -> None:
    from kappa.cli.run import Run
    from kappa.errors import ConfigError
    from kappa.io.config import derived_lines, load_config
    from kappa.io.grids import parse_temperatures
    from kappa.io.records import model_summary
    from kappa.workflows.spectrum import MAX_TEMPERATURES, spectrum

    tables, figures = common.parse_formats(format_)
    common.use_style(style)
    cfg = load_config(config, set_ or [])
    model = cfg.model
    if not at:
        raise ConfigError("--at", allowed="missing; give the temperature(s), e.g. --at 300K")
    T = parse_temperatures(at)
    if T.size > MAX_TEMPERATURES:
        raise ConfigError("--at", f"{T.size} temperatures",
                          f"at most {MAX_TEMPERATURES} temperatures")
    run = Run("spectrum", out, force=force, inputs=[config])
    sp = spectrum(model, T)


    run.table("spectrum.csv", sp.columns(), tables)
    written = run.table(MFP_TABLE, sp.mean_free_path_columns(), tables)
    for name, function in (("spectral", "plot_spectral"), ("cumulative", "plot_cumulative"),
                           ("rates", "plot_rates")):
        run.figure_job(name, "kappa.presentation.sweep", function, sp, formats=figures)
    derived = dict(derived_lines(model))
    has_normal = bool(model.mechanisms.normal)
    run.record(
        config=str(config),
        overrides=list(set_ or []),
        **{"temperatures [K]": T, "kappa_L [W/(m K)]": sp.kappa_L,
           "branch kappa_L [W/(m K)]": dict(zip(sp.branches, sp.branch_kappa.T, strict=True)),
           "mfp50 [nm]": sp.mfp50 * 1e9, "mfp80 [nm]": sp.mfp80 * 1e9,
           "callaway_beta [s]": dict(zip(sp.branches, sp.beta.T, strict=True))},
        relaxation_time=("Callaway effective time tau_eff = tau_c (1 + beta/tau_N), "
                         "beta = I2/I3; equal to tau_c without normal processes"),
        note=NORMAL_NOTE if has_normal else None,
        frequency="nu = omega/(2 pi)",
        resolved_inputs=cfg.data,
        derived=derived,
        model_si=model_summary(model),
        citations=sp.citations,
    )
    run.finish(report=False)

    for key, text in derived.items():
        common.echo_err(f"derived: {key} = {text}")
    rows = [[T[t], sp.kappa_L[t], *sp.branch_kappa[t], sp.mfp50[t] * 1e9, sp.mfp80[t] * 1e9]
            for t in range(T.size)]
    headers = ["T [K]", "kappa_L [W/(m K)]"]
    if len(sp.branches) > 1:
        headers += [f"{b} [W/(m K)]" for b in sp.branches]
    else:
        rows = [r[:2] + r[3:] for r in rows]
    common.print_table([*headers, "mfp50 [nm]", "mfp80 [nm]"], rows, max_rows=20,
                       source=f"{run.out}/{written[0]}")
    for t in range(T.size):
        typer.echo(f"half the heat at {T[t]:.4g} K is carried by phonons with mean free path "
                   f"above {_length(sp.mfp50[t])}, and 20 % by phonons with mean free path above "
                   f"{_length(sp.mfp80[t])}")
    if has_normal:
        common.echo_err(NORMAL_NOTE)
    typer.echo(f"wrote {run.out}/ ({', '.join(run.outputs)})")


#: The table of κ_L carried by phonons with mean free path up to Λ.
MFP_TABLE = "kappa_by_mean_free_path.csv"


def mfp_table(result) -> list[tuple[str, object]]:
    """Columns of :data:`MFP_TABLE` (see :meth:`kappa.workflows.spectrum.Spectrum.
    mean_free_path_columns`)."""
    return result.mean_free_path_columns()


def spectrum_table(result) -> list[tuple[str, object]]:
    """Columns of ``spectrum.csv`` (see :meth:`kappa.workflows.spectrum.Spectrum.columns`)."""
    return result.columns()


NORMAL_NOTE = (
    "note: with normal processes each phonon is given Callaway's effective relaxation time "
    "τ_c(1 + β/τ_N), which makes the mean free paths of N-dominated phonons nearly equal; the "
    "split over mean free path then says little about what grains of a given size would do. "
    "For that, use kappa predict --compare scattering.boundary.grain_size=... or kappa sweep.")


def _length(metres: float) -> str:
    nm = metres * 1e9
    return f"{nm:.0f} nm" if 100 <= nm < 1e7 else f"{nm:.3g} nm"


def register(app: typer.Typer) -> None:
    app.command("spectrum", help=HELP)(common.handles_errors(spectrum_command))
