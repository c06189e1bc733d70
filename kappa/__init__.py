"""kappa: lattice thermal conductivity of solids.

Callaway/Debye predictions of the lattice thermal conductivity, the Wiedemann-Franz split of
measured data into lattice and electronic parts, fits of scattering parameters, and sweeps.
Results are model estimates; validate them by measurement before any device's thermal design.
"""

from __future__ import annotations

from .errors import ConfigError, DataError, KappaError, KappaWarning
from .records import version as _version

__version__ = _version()

__all__ = [
    "__version__",
    "KappaError",
    "ConfigError",
    "DataError",
    "KappaWarning",
]
