"""The ``kappa`` command line (typer). One module per command; ``main`` composes them."""
