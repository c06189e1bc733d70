"""``kappa new``: write a commented starter config."""

from __future__ import annotations

from importlib.resources import files
from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = """Write a commented starter config to edit.

Examples:

  kappa new my-material.yaml

  kappa check my-material.yaml && kappa predict my-material.yaml -o run1
"""


def new_command(
    path: Annotated[Path, typer.Argument(help="Where to write the config.")] = Path("kappa.yaml"),
    force: Annotated[bool, typer.Option("--force", help="Replace an existing file.")] = False,
) -> None:
    from kappa.errors import KappaError

    if path.exists() and not force:
        raise KappaError(str(path), allowed="already exists; choose another name or add --force")
    if path.exists() and path.is_dir():
        raise KappaError(str(path), allowed="is a folder; give a file name")
    text = files("kappa").joinpath("templates/starter.yaml").read_text(encoding="utf-8")
    path.write_text(text, encoding="utf-8")
    typer.echo(f"wrote {path}; edit it, then: kappa check {path}")


def register(app: typer.Typer) -> None:
    app.command("new", help=HELP)(common.handles_errors(new_command))
