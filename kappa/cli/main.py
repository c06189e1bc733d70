"""The ``kappa`` application: composes one module per command."""

from __future__ import annotations

from typing import Annotated

import typer

from . import common

HELP = (
    "Lattice thermal conductivity of solids: Callaway/Debye predictions, lattice/electronic "
    "split of measured data, fits and parameter sweeps, and whole studies from measured "
    "samples to a report ('kappa study'; try 'kappa demo -o demo-report').\n\n"
    + common.CAUTION
)

#: Command modules in ``kappa/cli/``; each defines ``register(app)``.
COMMANDS: list[str] = ["new", "check", "predict", "split", "fit", "sweep", "spectrum",
                       "disorder", "material", "alloy", "study", "demo"]

#: One line per command for the top-level help (the modules are imported only when needed).
SUMMARY = {
    "new": "Write a commented starter config to edit.",
    "check": "Validate a config and print the resolved values, derived quantities and keys.",
    "predict": "Predict the lattice thermal conductivity κ_L(T) of a config.",
    "split": "Split measured thermal conductivity into lattice and electronic parts.",
    "fit": "Fit free parameters of a config to measured lattice conductivity κ_L(T).",
    "sweep": "Sweep one or more config keys over a grid and compute κ_L at every point.",
    "spectrum": "Split κ_L over phonon frequency and mean free path at given temperatures.",
    "disorder": "Mean atomic mass and point-defect disorder Γ of a composition.",
    "material": "A material from its sound velocities, density and composition.",
    "alloy": "κ_L across the alloy series (1-x)·A + x·B of two end-member configs.",
    "study": "A whole study from measured samples to a report (split, fit, what-if, zT).",
    "demo": "Run the bundled demo study (an invented lab's sample series) into a report.",
}


def _print_version(flag: bool) -> None:
    if flag:
        from kappa.io.records import version as _version

        typer.echo(f"kappa {_version()}")
        raise typer.Exit(0)


def _main(
    debug: Annotated[bool, typer.Option("--debug", help="Show full tracebacks on errors.")] = False,
    version: Annotated[bool, typer.Option("--version", help="Print the version and exit.",
                                          callback=_print_version, is_eager=True)] = False,
) -> None:
    common.set_debug(debug)


def build_app(commands: list[str] | None = None) -> typer.Typer:
    """The ``kappa`` application with the given commands loaded (default: all).

    The other commands are listed (name and one line) but their modules are not imported, so
    that ``kappa --help`` and ``kappa --version`` start fast; naming a command loads it.
    """
    import importlib

    application = typer.Typer(name="kappa", help=HELP, no_args_is_help=True,
                              pretty_exceptions_enable=False, add_completion=False,
                              rich_markup_mode=None)
    application.callback()(_main)
    loaded = COMMANDS if commands is None else commands
    for name in COMMANDS:
        if name in loaded:
            importlib.import_module(f"kappa.cli.{name}").register(application)
        else:
            application.command(name, help=SUMMARY[name], add_help_option=False,
                                context_settings={"ignore_unknown_options": True,
                                                  "allow_extra_args": True})(_not_loaded)
    return application


def _not_loaded() -> None:  # pragma: no cover - run() loads every command it is asked for
    raise RuntimeError("command not loaded")


def __getattr__(name: str):
    if name == "app":  # the full application (tests, python -m kappa): every command loaded
        application = build_app()
        globals()["app"] = application
        return application
    raise AttributeError(name)


def _requested(argv: list[str]) -> list[str]:
    """The command named on the command line (the first argument that is one), if any."""
    return [a for a in argv if a in COMMANDS][:1]


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
    from kappa.cli import figures  # the worker, if kappa.cli.entry started one

    try:
        application = build_app(_requested(sys.argv[1:]))
        code = application(standalone_mode=False)  # Ctrl-C: typer returns 130
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
    finally:
        figures.stop()
    if code == 130:
        common.echo_err("aborted")
    sys.exit(code if isinstance(code, int) else 0)
