"""The ``kappa`` application: composes one module per command."""

from __future__ import annotations

from typing import Annotated

import typer

from . import common

app = typer.Typer(
    name="kappa",
    help=(
        "Lattice thermal conductivity of solids: Callaway/Debye predictions, lattice/electronic "
        "split of measured data, fits and parameter sweeps.\n\n" + common.CAUTION
    ),
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    add_completion=False,
    rich_markup_mode=None,
)


def _print_version(flag: bool) -> None:
    if flag:
        from ..records import version as _version

        typer.echo(f"kappa {_version()}")
        raise typer.Exit(0)


@app.callback()
def _main(
    debug: Annotated[bool, typer.Option("--debug", help="Show full tracebacks on errors.")] = False,
    version: Annotated[bool, typer.Option("--version", help="Print the version and exit.",
                                          callback=_print_version, is_eager=True)] = False,
) -> None:
    common.set_debug(debug)


def _register() -> None:
    """Add every command module's command to ``app`` (one line per command)."""
    import importlib

    for name in COMMANDS:
        module = importlib.import_module(f"kappa.cli.{name}")
        module.register(app)


#: Command modules in ``kappa/cli/``; each defines ``register(app)``.
COMMANDS: list[str] = ["new", "check", "predict", "split", "fit", "sweep", "spectrum"]

_register()


def run() -> None:
    """Console-script entry point."""
    app()
