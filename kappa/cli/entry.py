"""The console entry point: starts the figure worker before the command line loads.

:func:`run` forks the figure worker of a command that draws (:mod:`kappa.cli.figures`) before
typer and numpy are imported, so that matplotlib loads beside them, then runs
:func:`kappa.cli.main.run`. When the command is over (its files written and renamed into place,
its worker stopped), the process ends at once with the command's status: tearing down the
modules a command loaded takes about a tenth of a second and does nothing for the user.
"""

from __future__ import annotations

__all__ = ["run"]


def run() -> None:
    """``kappa ...``: start the figure worker where it helps, then the command line."""
    import os
    import sys

    from kappa.cli import figures

    figures.start(sys.argv[1:])
    from kappa.cli.main import run as main

    try:
        main()
        code = 0
    except SystemExit as exc:
        if exc.code is None or isinstance(exc.code, int):
            code = exc.code or 0
        else:  # a message: print it as sys.exit would
            print(exc.code, file=sys.stderr)
            code = 1
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a closed pipe: nothing more to say
            pass
    os._exit(code)
