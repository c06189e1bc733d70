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
        from kappa.io.records import version as _version

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
COMMANDS: list[str] = ["new", "check", "predict", "split", "fit", "sweep", "spectrum",
                       "disorder", "material", "alloy"]

_register()


def run() -> None:
    """Console-script entry point.

    Usage errors (a missing argument, a file that does not exist, an option out of range) are
    printed as one ``error: ...`` line with exit status 2, like every other bad input.
    """
    import sys

    try:
        code = app(standalone_mode=False)
    except Exception as exc:  # click-style exceptions (typer vendors click in recent versions)
        name = type(exc).__name__
        if not hasattr(exc, "format_message") or common.debug():
            raise
        if name == "NoArgsIsHelpError" or not hasattr(exc, "exit_code"):
            exc.show()  # type: ignore[attr-defined]
            sys.exit(getattr(exc, "exit_code", 2))
        if name == "Abort":
            common.echo_err("aborted")
            sys.exit(1)
        common.echo_err(f"error: {exc.format_message()}")
        sys.exit(exc.exit_code if exc.exit_code else 2)
    except KeyboardInterrupt:
        common.echo_err("aborted")
        sys.exit(130)
    sys.exit(code if isinstance(code, int) else 0)
