"""A study: the parts of a study file, the configs of samples and scenarios, and what a study
produced.

``kappa study`` goes from measured samples to what smaller grains or more alloying would do.
The study file (read and checked by :func:`kappa.io.studyfile.read_study`) becomes a
:class:`Study` of samples, split options, fit options, scenarios and a projection; a running
study fills a :class:`StudyRun`; :func:`write_study_record` marks the study's folder as kappa's.
A scenario changes a fitted config exactly as ``--set`` does (:func:`scenario_config`).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from kappa.errors import ConfigError, KappaError
from kappa.io.config import Config, config_from_dict, set_value

__all__ = ["Study", "StudySample", "SplitOptions", "FitOptions", "Scenario", "Projection",
           "StudyRun", "sample_config", "scenario_config", "prefixed", "write_study_record",
           "json_safe"]


@dataclass(frozen=True)
class StudySample:
    """One measured sample: its files, notes, config changes and fit window."""

    name: str
    files: tuple[Path, ...]
    notes: str
    composition: str | None
    changes: dict[str, Any]
    window: tuple[float, float] | None
    window_text: str | None
    config: Config = field(repr=False)
    density: str | None = None  #: given once for the sample (as written, e.g. "3.08 g/cm^3")
    heat_capacity: str | None = None  #: given once for the sample (e.g. "0.25 J/(g K)")


@dataclass(frozen=True)
class SplitOptions:
    """Options of the lattice/electronic split (those of ``kappa split``)."""

    lorenz: str | float = "spb"
    scattering_exponent: float = 0.0
    uncertainty: dict[str, float | tuple[float, float]] = field(default_factory=dict)
    draws: int = 2000
    seed: int = 0
    window: tuple[float, float] | None = None
    window_text: str | None = None
    nan: str = "raise"
    composition: str | None = None
    extrapolate: str | None = None  #: extrapolation allowance as written (e.g. "5 K")


@dataclass(frozen=True)
class FitOptions:
    """Free keys, start values, bounds and solver settings of the fit (those of ``kappa fit``)."""

    shared: tuple[str, ...]
    per_sample: tuple[str, ...]
    start_values: dict[str, float]
    bounds: dict[str, tuple]
    window: tuple[float, float] | None
    window_text: str | None
    starts: int = 5
    seed: int = 0
    written: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Scenario:
    """A what-if: a name and config changes (key → value as written).

    ``group`` names the list of values a scenario came from (None for a scenario of its own);
    ``where`` is its study key (``study.scenarios.2``).
    """

    name: str
    changes: dict[str, Any]
    where: str
    group: str | None = None
    notes: str = ""

    @property
    def text(self) -> str:
        """The changes as ``key = value`` text."""
        return "; ".join(f"{k} = {v}" for k, v in self.changes.items())


@dataclass(frozen=True)
class Projection:
    """Where the scenarios are answered: the reference sample, the temperatures, the draws.

    ``at`` None means automatic (the temperature of the highest measured zT, or the highest
    measured temperature without a Seebeck coefficient); ``temperature`` None means the
    temperatures of the fitted config.
    """

    sample: str
    at: np.ndarray | None
    temperature: np.ndarray | None
    temperature_text: Any = None
    draws: int = 400
    seed: int = 0


@dataclass(frozen=True)
class Study:
    """A checked study file (paths resolved against its folder)."""

    path: Path
    title: str
    notes: str
    config_path: Path
    config: Config = field(repr=False)
    samples: tuple[StudySample, ...]
    split: SplitOptions
    fit: FitOptions
    scenarios: tuple[Scenario, ...]
    projection: Projection
    spectrum_at: np.ndarray
    data: dict = field(repr=False, default_factory=dict)

    @property
    def files(self) -> list[Path]:
        """Every input file: the study file, the config, the measurement files."""
        from kappa.io.labfiles import split_sheet

        out = [self.path, self.config_path]
        for s in self.samples:
            out += [f for f in (split_sheet(p)[0] for p in s.files) if f not in out]
        return out

    def sample(self, name: str) -> StudySample:
        return next(s for s in self.samples if s.name == name)


# --- configs of samples and scenarios ---------------------------------------------------------


def prefixed(exc: KappaError, prefix: str) -> ConfigError:
    """The error with ``prefix`` in front of its key (keeping value and allowed)."""
    key = f"{prefix}.{exc.key}" if exc.key else prefix
    if exc.has_value:
        return ConfigError(key, exc.value, exc.allowed)
    return ConfigError(key, allowed=exc.allowed)


def sample_config(base: Config, changes: Mapping[str, Any], where: str, source: str) -> Config:
    """``base`` with the config ``changes`` (key → value as written) applied and validated.

    Errors name ``where`` and the config key (``study.samples.0.set.scattering.boundary.x``).
    """
    if not changes:
        return base
    data = base.data
    for k, v in changes.items():
        if str(k).split(".")[0] == "temperature":
            raise ConfigError(f"{where}.{k}", v, "temperatures are not a what-if; set the "
                              "curves' temperatures with study.projection.temperature")
        try:
            base.model.parameter(str(k))
        except KappaError:
            pass  # a text key (material.composition) or a typo: set_value names it below
        else:
            try:  # a numeric key must apply to this model (not a branch of an averaged one)
                base.model.check_key(str(k))
            except KappaError as exc:
                raise ConfigError(f"{where}.{k}", v, exc.allowed) from None
        try:
            data = set_value(data, str(k), v)
        except KappaError as exc:
            raise prefixed(exc, where) from None
    try:
        return config_from_dict(data, source)
    except KappaError as exc:
        raise prefixed(exc, where) from None


def scenario_config(base: Config, scenario: Scenario) -> Config:
    """The config of ``scenario``: ``base`` (a fitted config) with the scenario's changes.

    The same path as ``kappa predict CONFIG --set KEY=VALUE``: the changes are written into
    the config data as given and the config is validated again.
    """
    return sample_config(base, scenario.changes, f"{scenario.where}.changes",
                         f"{base.source} ({scenario.name})")


@dataclass
class StudyRun:
    """What a study produced, in memory (for the report, the terminal and tests).

    Filled step by step by ``kappa study``: the measurements and split of every sample, the fit
    and each sample's fitted config, the covariance acting on the reference sample, the
    spectrum, the scenarios as ``(Scenario, Config, WhatIf)``, the projected zT per scenario,
    the answer table, and the status and warnings of every step.
    """

    study: Study
    out: Path
    measurements: dict[str, Any] = field(default_factory=dict)
    splits: dict[str, Any] = field(default_factory=dict)
    split_summaries: dict[str, list[str]] = field(default_factory=dict)
    fit: Any = None
    fit_samples: list = field(default_factory=list)
    fitted: dict[str, Config] = field(default_factory=dict)
    covariance: Any = None
    spectrum: Any = None
    spectrum_at: np.ndarray | None = None
    at: np.ndarray | None = None
    grid: np.ndarray | None = None
    reference: Any = None
    scenarios: list = field(default_factory=list)
    zT: dict[str, Any] = field(default_factory=dict)
    answers: list = field(default_factory=list)
    steps: dict[str, dict] = field(default_factory=dict)
    warnings: dict[str, list[str]] = field(default_factory=dict)


def write_study_record(out: str | Path, record: dict) -> None:
    """Write the study's ``run.json`` into ``out``, listing every file below it with its size.

    The list (``output_files``) is the mark that lets a later ``--force`` replace the folder
    (:mod:`kappa.io.outdir`); hidden folders (a step being written, a folder being replaced)
    are left out.
    """
    import os

    from kappa.io.outdir import FILES_KEY, MARK
    from kappa.io.records import write_json

    out = Path(out)
    files: dict[str, int] = {}
    for root, dirs, names in os.walk(out):
        dirs[:] = sorted(d for d in dirs if not d.startswith("."))
        for name in sorted(names):
            p = Path(root, name)
            rel = p.relative_to(out).as_posix()
            if rel != MARK and not name.startswith("."):
                files[rel] = p.lstat().st_size
    write_json(out / MARK, {**record, FILES_KEY: files})


def json_safe(obj: Any) -> Any:
    """YAML data as JSON data (dates and other scalars YAML makes become text)."""
    if isinstance(obj, dict):
        return {str(k): json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list):
        return [json_safe(v) for v in obj]
    if obj is None or isinstance(obj, (bool, int, float, str)):
        return obj
    return str(obj)
