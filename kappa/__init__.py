"""kappa: lattice thermal conductivity of solids.

Callaway/Debye predictions of the lattice thermal conductivity, the Wiedemann-Franz split of
measured data into lattice and electronic parts, fits of scattering parameters, and sweeps.
The functions ``fit``, ``sweep`` and ``spectrum`` live in the modules of the same names
(``from kappa.fit import fit``), so that the modules stay reachable as ``kappa.fit`` etc.
Results are model estimates; validate them by measurement before any device's thermal design.
"""

from __future__ import annotations

from .conductivity import branch_conductivities, lattice_conductivity
from .config import Config, config_from_dict, load_config
from .errors import ConfigError, DataError, KappaError, KappaWarning
from .fit import FitData, FitResult, fit_data, fit_series, prediction_band, read_fit_data
from .heat_capacity import heat_capacity
from .material import Branch, Material
from .measurements import Measurements, measurements_from_arrays, read_measurements
from .predict import Prediction, compare, predict
from .records import version as _version
from .scattering import Boundary, Normal, PointDefect, Scattering, Umklapp
from .spectrum import Spectrum
from .split import BipolarCheck, SplitResult, split, split_measurements
from .sweep import Axis, SweepResult, parse_vary

__version__ = _version()

__all__ = [
    "__version__",
    "Branch",
    "Material",
    "Scattering",
    "Umklapp",
    "Boundary",
    "PointDefect",
    "Normal",
    "lattice_conductivity",
    "branch_conductivities",
    "heat_capacity",
    "Config",
    "load_config",
    "config_from_dict",
    "predict",
    "compare",
    "Prediction",
    "FitData",
    "FitResult",
    "fit_data",
    "read_fit_data",
    "fit_series",
    "prediction_band",
    "Axis",
    "SweepResult",
    "parse_vary",
    "Spectrum",
    "KappaError",
    "ConfigError",
    "DataError",
    "KappaWarning",
    "split",
    "split_measurements",
    "SplitResult",
    "BipolarCheck",
    "Measurements",
    "read_measurements",
    "measurements_from_arrays",
]
