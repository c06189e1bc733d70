"""``python -m kappa`` runs the command line."""

from kappa.cli.entry import run

if __name__ == "__main__":
    run()
