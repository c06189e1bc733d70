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
    from kappa.io.config import load_config, numeric_keys, resolved_value
    from kappa.io.units import registry

    cfg = load_config(config, set_ or [])
    ureg = registry()
    m = cfg.material
    typer.echo(f"{config}: valid")
    typer.echo(f"material: {m.name or '(no name)'}; "
               f"{'per-branch' if m.per_branch else 'averaged single-branch'} model")
    typer.echo("numeric keys (value as used, SI converted to the display unit):")
    for key, p in numeric_keys(cfg).items():
        try:
            v = resolved_value(cfg, key)
        except Exception:  # a key absent from this config (e.g. longitudinal_velocity)
            continue
        mech = key.split(".")[1] if key.startswith("scattering.") else None
        if mech and cfg.scattering.get(mech) is None:
            continue
        normal = cfg.scattering.get("normal")
        if normal is not None and key == ("scattering.normal.ratio" if normal.form == "branch"
                                          else "scattering.normal.scale"):
            continue  # the parameter of the other normal-process form
        unit = p.display or p.unit
        shown = ureg.Quantity(v, p.unit).to(unit).magnitude if unit != p.unit else v
        typer.echo(f"  {key} = {shown:.6g}{'' if unit == '1' else ' ' + unit}")
    active = [mech.key for mech in cfg.scattering.resistive]
    typer.echo("resistive scattering: " + (", ".join(active) or "none"))
    n = cfg.scattering.normal
    typer.echo("normal processes: " + (f"form {n.form}" if n else "off"))
    for key, text in cfg.derived.items():
        typer.echo(f"derived: {key} = {text}")
    if m.per_branch:
        typer.echo(f"derived: Debye mean of the branch velocities = {m.mean_velocity:.6g} m/s")
    from kappa.core.limits import cahill_minimum

    velocities = [b.sound_velocity for b in m.branches for _ in range(
        max(1, round(b.count)) if m.per_branch else 1)]
    if "longitudinal_velocity" in cfg.data.get("material", {}):
        velocities = [resolved_value(cfg, "material.longitudinal_velocity"),
                      resolved_value(cfg, "material.transverse_velocity")]
    kmin = cahill_minimum([300.0, 1e5], m.number_density, velocities)
    typer.echo(f"estimate: Cahill–Watson–Pohl minimum κ_min = {kmin[0]:.3g} W/(m K) at 300 K, "
               f"{kmin[1]:.3g} W/(m K) high-T limit (from the volume per atom and velocities)")
    if cfg.temperature is not None:
        T = cfg.temperature
        typer.echo(f"temperature: {T.size} points, {T.min():.6g} K to {T.max():.6g} K")
    else:
        typer.echo("temperature: (none; 'kappa predict' needs a temperature section)")


def register(app: typer.Typer) -> None:
    app.command("check", help=HELP)(common.handles_errors(check_command))
