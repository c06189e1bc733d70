"""The console entry point: starts the figure worker before the command line loads.

:func:`run` forks the figure worker of a command that draws (:mod:`kappa.cli.figures`) before
typer and numpy are imported, so that matplotlib loads beside them, then runs
:func:`kappa.cli.main.run`.
"""

from __future__ import annotations

__all__ = ["run"]


def run() -> None:
    """``kappa ...``: start the figure worker where it helps, then the command line."""
    import sys

    from kappa.cli import figures

    figures.start(sys.argv[1:])
    from kappa.cli.main import run as main

    main()
