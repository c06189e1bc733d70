"""kappa: lattice thermal conductivity of solids.

Callaway/Debye predictions of the lattice thermal conductivity, the Wiedemann-Franz split of
measured data into lattice and electronic parts, fits of scattering parameters, and sweeps.
The functions ``fit``, ``sweep`` and ``spectrum`` live in the modules of the same names
(``from kappa.workflows.fit import fit``), so that the modules stay reachable as ``kappa.fit`` etc.
Results are model estimates; validate them by measurement before any device's thermal design.
"""

from __future__ import annotations

from kappa.core.evaluator import branch_conductivities, lattice_conductivity
from kappa.core.heat_capacity import heat_capacity
from kappa.core.material import Branch, Material
from kappa.core.scattering import Boundary, Normal, PointDefect, Scattering, Umklapp
from kappa.errors import ConfigError, DataError, KappaError, KappaWarning
from kappa.io.config import Config, config_from_dict, load_config
from kappa.io.records import version as _version
from kappa.workflows.fit import (
    FitData,
    FitResult,
    fit_data,
    fit_series,
    prediction_band,
    read_fit_data,
)
from kappa.workflows.measurements import Measurements, measurements_from_arrays, read_measurements
from kappa.workflows.predict import Prediction, compare, predict
from kappa.workflows.spectrum import Spectrum
from kappa.workflows.split import BipolarCheck, SplitResult, split, split_measurements
from kappa.workflows.sweep import Axis, SweepResult, parse_vary

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
