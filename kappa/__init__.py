"""kappa: lattice thermal conductivity of solids.

Callaway/Debye predictions of the lattice thermal conductivity, the Wiedemann-Franz split of
measured data into lattice and electronic parts, fits of scattering parameters, sweeps and
phonon spectra. Everything inside is SI; configs and tables carry units at the edge.
Results are model estimates; validate them by measurement before any device's thermal design.

The names below are imported on first use (so that ``import kappa`` and the command line start
fast); ``from kappa import predict`` works as usual.
"""

from __future__ import annotations

import importlib

#: Public name → module that defines it.
_PUBLIC = {
    "Branch": "kappa.core.material",
    "BranchSpec": "kappa.core.material",
    "Material": "kappa.core.material",
    "MaterialSpec": "kappa.core.material",
    "Model": "kappa.core.model",
    "Scattering": "kappa.core.scattering",
    "REGISTRY": "kappa.core.mechanisms",
    "Umklapp": "kappa.core.mechanisms",
    "Boundary": "kappa.core.mechanisms",
    "PointDefect": "kappa.core.mechanisms",
    "Normal": "kappa.core.mechanisms",
    "Precipitate": "kappa.core.mechanisms",
    "Dislocation": "kappa.core.mechanisms",
    "FourPhonon": "kappa.core.mechanisms",
    "conductivity": "kappa.core.evaluator",
    "lattice_conductivity": "kappa.core.evaluator",
    "branch_conductivities": "kappa.core.evaluator",
    "heat_capacity": "kappa.core.heat_capacity",
    "Config": "kappa.io.config",
    "load_config": "kappa.io.config",
    "config_from_dict": "kappa.io.config",
    "predict": "kappa.workflows.predict",
    "compare": "kappa.workflows.predict",
    "Prediction": "kappa.workflows.predict",
    "sweep": "kappa.workflows.sweep",
    "SweepResult": "kappa.workflows.sweep",
    "spectrum": "kappa.workflows.spectrum",
    "Spectrum": "kappa.workflows.spectrum",
    "fit": "kappa.workflows.fitting",
    "fit_series": "kappa.workflows.fitting",
    "fit_data": "kappa.workflows.fitting",
    "FitData": "kappa.workflows.fitting",
    "FitResult": "kappa.workflows.fitting",
    "SeriesSample": "kappa.workflows.fitting",
    "prediction_band": "kappa.workflows.fitting",
    "Covariance": "kappa.workflows.fitting",
    "what_if": "kappa.workflows.whatif",
    "alloy_what_if": "kappa.workflows.whatif",
    "WhatIf": "kappa.workflows.whatif",
    "read_fit_record": "kappa.io.fitfiles",
    "read_fit_data": "kappa.io.fitfiles",
    "split": "kappa.workflows.split",
    "split_measurements": "kappa.workflows.split",
    "SplitResult": "kappa.workflows.split",
    "BipolarCheck": "kappa.workflows.split",
    "Measurements": "kappa.workflows.measurements",
    "measurements_from_arrays": "kappa.workflows.measurements",
    "read_measurements": "kappa.io.measurements",
    "KappaError": "kappa.errors",
    "ConfigError": "kappa.errors",
    "DataError": "kappa.errors",
    "KappaWarning": "kappa.errors",
}

__all__ = ["__version__", *_PUBLIC]


def __getattr__(name: str):
    if name == "__version__":
        from kappa.io.records import version

        return version()
    if name in _PUBLIC:
        value = getattr(importlib.import_module(_PUBLIC[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'kappa' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(__all__)
