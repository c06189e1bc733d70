"""``kappa check``: validate a config and print the resolved and derived values."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = """Validate a config and print the resolved values, derived quantities and numeric keys.

Examples:

  kappa check configs/silicon.yaml

  kappa check my.yaml --set scattering.boundary.grain_size=50nm
"""


def check_command(
    config: Annotated[Path, typer.Argument(help="YAML config.", exists=True, dir_okay=False)],
    set_: Annotated[list[str] | None, typer.Option("--set", help="Override KEY=VALUE "
                                                   "(repeatable).")] = None,
) -> None:
    from kappa.core.checks import model_warnings
    from kappa.core.limits import MINIMUM_MODEL, minimum_of_model
    from kappa.io.config import derived_lines, load_config

    cfg = load_config(config, set_ or [])
    model = cfg.model
    m = model.material
    typer.echo(f"{config}: valid")
    typer.echo(f"material: {m.name or '(no name)'}; "
               f"{'per-branch' if m.per_branch else 'averaged single-branch'} model")
    typer.echo("numeric keys (value as used, in the display unit):")
    for key, p in model.keys().items():
        parts = key.split(".")
        if parts[0] == "scattering" and model.scattering.get(parts[1]) is None:
            continue
        if model.unused(key):
            continue  # e.g. the parameter of the other normal-process form
        typer.echo(f"  {key} = {p.format(model.value(key), 6)}")
    active = [mech.title for mech in model.mechanisms.resistive]
    typer.echo("resistive scattering: " + (", ".join(active) or "none"))
    normal = [mech for mech in model.mechanisms.normal]
    typer.echo("normal processes: " + (", ".join(f"form {getattr(n, 'form', n.key)}"
                                                 for n in normal) or "off"))
    if any(getattr(n, "form", "") == "ratio" for n in normal):
        typer.echo("note: the ratio form ties the normal-process rate to the Umklapp rate, "
                   "factor e^(−θ/bT) included, so normal processes freeze out at low "
                   "temperature with Umklapp")
    for key, text in derived_lines(model):
        typer.echo(f"derived: {key} = {text}")
    if m.per_branch:
        typer.echo(f"derived: Debye mean of the branch velocities = {m.mean_velocity:.6g} m/s")
    kmin = minimum_of_model([300.0, 1e5], model)
    typer.echo(f"estimate: {MINIMUM_MODEL} minimum κ_min = {kmin[0]:.3g} W/(m K) at 300 K, "
               f"{kmin[1]:.3g} W/(m K) high-T limit (from the volume per atom and velocities)")
    if m.has_optical:
        from kappa.core.evaluator import optical_part

        typer.echo(f"estimate: optical modes add {float(optical_part(model)):.3g} W/(m K) to "
                   f"κ_L (n = {m.atoms_per_cell:g} atoms per cell; Toberer, Zevalkink & "
                   "Snyder 2011)")
    if cfg.temperature is not None:
        T = cfg.temperature
        typer.echo(f"temperature: {T.size} points, {T.min():.6g} K to {T.max():.6g} K")
    else:
        typer.echo("temperature: (none; 'kappa predict' needs a temperature section)")
    for message in model_warnings(model):
        common.echo_err(f"warning: {message}")


def register(app: typer.Typer) -> None:
    app.command("check", help=HELP)(common.handles_errors(check_command))
