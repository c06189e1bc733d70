"""The ``kappa`` application: composes one module per command."""

from __future__ import annotations

from typing import Annotated

import typer

from . import common

app = typer.Typer(
    name="kappa",
    help=(
        "Lattice thermal conductivity of solids: Callaway/Debye predictions, lattice/electronic "
        "split of measured data, fits and parameter sweeps, and whole studies from measured "
        "samples to a report ('kappa study'; try 'kappa demo -o demo-report').\n\n"
        + common.CAUTION
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
                       "disorder", "material", "alloy", "study", "demo"]

_register()


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    """Warnings issued outside a command (e.g. while modules load): one line each."""
    from kappa.errors import KappaWarning

    if issubclass(category, KappaWarning):
        common.show_warning(str(message))
    elif common.debug():
        common.echo_err(f"warning: {message}")


def run() -> None:
    """Console-script entry point.

    Every failure ends in one ``error: ...`` line on stderr and exit status 2: usage errors (a
    missing argument, a file that does not exist, an option out of range), bad input
    (:class:`~kappa.errors.KappaError`) and, as a safety net, anything unexpected (named with
    the command, with a hint to ``--debug``). Ctrl-C and SIGTERM end with "aborted" and status
    130 or 143; an output folder being written is removed.
    """
    import signal
    import sys
    import warnings

    from kappa.io.outdir import Interrupted

    warnings.showwarning = _show_warning
    common.quiet_matplotlib_config()
    try:
        code = app(standalone_mode=False)  # Ctrl-C: typer returns 130
    except Interrupted as exc:  # SIGTERM or SIGHUP while an output folder was written
        common.echo_err(f"aborted ({signal.Signals(exc.signum).name})")
        sys.exit(128 + exc.signum)
    except KeyboardInterrupt:
        code = 130
    except Exception as exc:
        if common.debug():
            raise
        name = type(exc).__name__
        if name == "Abort":
            common.echo_err("aborted")
            sys.exit(1)
        if not hasattr(exc, "format_message"):  # not a usage error: the safety net
            command = next((a for a in sys.argv[1:] if a in COMMANDS), "")
            common.echo_err(f"error: {common.unexpected_message(command, exc)}")
            sys.exit(2)
        if name == "NoArgsIsHelpError" or not hasattr(exc, "exit_code"):
            exc.show()  # type: ignore[attr-defined]
            sys.exit(getattr(exc, "exit_code", 2))
        common.echo_err(f"error: {exc.format_message()}")
        sys.exit(exc.exit_code if exc.exit_code else 2)
    if code == 130:
        common.echo_err("aborted")
    sys.exit(code if isinstance(code, int) else 0)
