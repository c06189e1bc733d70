"""Test configuration: property tests draw the same examples on every run (no chance)."""

from hypothesis import settings

settings.register_profile("kappa", derandomize=True, deadline=None, print_blob=True)
settings.load_profile("kappa")
