"""kappa: lattice thermal conductivity of solids.

Callaway/Debye predictions of the lattice thermal conductivity, the Wiedemann-Franz split of
measured data into lattice and electronic parts, fits of scattering parameters, and sweeps.
The functions ``fit``, ``sweep`` and ``spectrum`` live in the modules of the same names
(``from kappa.workflows.fit import fit``), so that the modules stay reachable as ``kappa.fit`` etc.
Results are model estimates; validate them by measurement before any device's thermal design.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

#: Where each public name lives. Nothing is imported until a name is first used, so that
#: ``kappa --version`` and ``kappa --help`` start fast and load neither numba nor scipy.
_LAZY: dict[str, str] = {
    "lattice_conductivity": "kappa.core.evaluator",
    "branch_conductivities": "kappa.core.evaluator",
    "heat_capacity": "kappa.core.heat_capacity",
    "Branch": "kappa.core.material",
    "Material": "kappa.core.material",
    "Boundary": "kappa.core.scattering",
    "Normal": "kappa.core.scattering",
    "PointDefect": "kappa.core.scattering",
    "Scattering": "kappa.core.scattering",
    "Umklapp": "kappa.core.scattering",
    "ConfigError": "kappa.errors",
    "DataError": "kappa.errors",
    "KappaError": "kappa.errors",
    "KappaWarning": "kappa.errors",
    "Config": "kappa.io.config",
    "config_from_dict": "kappa.io.config",
    "load_config": "kappa.io.config",
    "FitData": "kappa.workflows.fit",
    "FitResult": "kappa.workflows.fit",
    "fit_data": "kappa.workflows.fit",
    "fit_series": "kappa.workflows.fit",
    "prediction_band": "kappa.workflows.fit",
    "read_fit_data": "kappa.workflows.fit",
    "Measurements": "kappa.workflows.measurements",
    "measurements_from_arrays": "kappa.workflows.measurements",
    "read_measurements": "kappa.io.measurements",
    "Prediction": "kappa.workflows.predict",
    "compare": "kappa.workflows.predict",
    "predict": "kappa.workflows.predict",
    "Spectrum": "kappa.workflows.spectrum",
    "BipolarCheck": "kappa.workflows.split",
    "SplitResult": "kappa.workflows.split",
    "split": "kappa.workflows.split",
    "split_measurements": "kappa.workflows.split",
    "Axis": "kappa.workflows.sweep",
    "SweepResult": "kappa.workflows.sweep",
    "parse_vary": "kappa.workflows.sweep",
}

if TYPE_CHECKING:  # pragma: no cover - for type checkers and editors only
    from kappa.core.evaluator import branch_conductivities, lattice_conductivity
    from kappa.core.heat_capacity import heat_capacity
    from kappa.core.material import Branch, Material
    from kappa.core.scattering import Boundary, Normal, PointDefect, Scattering, Umklapp
    from kappa.errors import ConfigError, DataError, KappaError, KappaWarning
    from kappa.io.config import Config, config_from_dict, load_config
    from kappa.io.measurements import read_measurements
    from kappa.workflows.fit import (
        FitData,
        FitResult,
        fit_data,
        fit_series,
        prediction_band,
        read_fit_data,
    )
    from kappa.workflows.measurements import Measurements, measurements_from_arrays
    from kappa.workflows.predict import Prediction, compare, predict
    from kappa.workflows.spectrum import Spectrum
    from kappa.workflows.split import BipolarCheck, SplitResult, split, split_measurements
    from kappa.workflows.sweep import Axis, SweepResult, parse_vary


def __getattr__(name: str) -> Any:
    if name == "__version__":
        from kappa.io.records import version

        value: Any = version()
    elif name in _LAZY:
        value = getattr(importlib.import_module(_LAZY[name]), name)
    else:
        raise AttributeError(f"module 'kappa' has no attribute {name!r}")
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *_LAZY, "__version__"})


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
