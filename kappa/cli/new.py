"""``kappa new``: write a commented starter config."""

from __future__ import annotations

import contextlib
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
    import os
    import tempfile

    from kappa.errors import KappaError

    if path.is_dir():
        raise KappaError(str(path), allowed="is a folder; give a file name, e.g. "
                         f"{path / 'my-material.yaml'}")
    if path.exists() and not force:
        raise KappaError(str(path), allowed="already exists; choose another name or add --force")
    parent = path.parent
    if parent.exists() and not parent.is_dir():
        raise KappaError(str(path), allowed=f"{parent} is a file, not a folder; choose another "
                         "path")
    if not parent.exists():
        raise KappaError(str(path), allowed=f"the folder {parent} does not exist; create it "
                         "first or choose another path")
    text = files("kappa").joinpath("templates/starter.yaml").read_text(encoding="utf-8")
    try:  # a temporary file renamed into place: an existing file is replaced whole or not at all
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".partial", dir=parent)
    except OSError as exc:
        raise KappaError(str(path), allowed=f"cannot write in {parent} "
                         f"({exc.strerror or exc})") from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
    typer.echo(f"wrote {path}; edit it, then: kappa check {path}")


def register(app: typer.Typer) -> None:
    app.command("new", help=HELP)(common.handles_errors(new_command, command="new"))
