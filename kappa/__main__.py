"""``python -m kappa`` runs the command line."""

from .cli.main import run

run()
