"""Study files: one YAML file that names a whole study, read and checked before anything runs.

A study goes from measured samples to what smaller grains or more alloying would do (``kappa
study``). The file names the measurement files of one sample or a series, the material config,
the options of the lattice/electronic split, the keys to fit, and the what-if scenarios::

    title: Grain-size series of the FH demo silicide
    config: fh-silicide.yaml                  # the material config (paths relative to this file)
    samples:
      - name: FH-21
        files: [FH-21_flash.csv, FH-21_electrical.csv]
        notes: hot-pressed, 2 h at 700 °C
        set: {scattering.boundary.grain_size: 3 um}    # optional: config changes (fit starts)
        window: 300K:700K                              # optional: this sample's fit window
        composition: Mg2Si0.4Sn0.6                     # optional: Dulong-Petit c_p
        density: 3.08 g/cm^3                           # optional: given once (flash data)
      - name: FH-22
        files: [FH-22.xlsx:flash, FH-22_electrical.txt]  # a spreadsheet's sheet by name
    split: {lorenz: spb, uncertainty: {kappa: 0.08+0.02}, draws: 2000, seed: 0,
            extrapolate: 5 K}
    fit:
      shared: [material.gruneisen]
      per_sample: [scattering.boundary.grain_size]
      bounds: {scattering.boundary.grain_size: "10 nm:100 um"}
      window: 300K:650K
    scenarios:
      - {name: grains 100 nm, changes: {scattering.boundary.grain_size: 100 nm}}
      - {name: grains, key: scattering.boundary.grain_size, values: [1 um, 300 nm, 100 nm]}
    projection: {sample: FH-21, at: [600 K], draws: 400, seed: 0}
    spectrum: {at: [300 K, 600 K]}

Everything is checked here, before the first step runs: every file exists, the config loads,
every fitted and changed key exists in the model and every value parses. Errors name the study
key (``study.scenarios.2.changes.scattering.boundary.grain_sise: unknown key; did you mean
'grain_size'? ...``); errors inside the config name the config file and its key.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from kappa.core.evaluator import T_MAX
from kappa.errors import ConfigError, KappaError
from kappa.io.config import Config, config_from_dict, load_config, set_value
from kappa.io.fitfiles import key_list, parse_free
from kappa.io.study import (
    FitOptions,
    Projection,
    Scenario,
    SplitOptions,
    Study,
    StudySample,
    prefixed,
    sample_config,
)
from kappa.io.units import parse_quantity, parse_window

__all__ = ["read_study", "STUDY_KEYS", "MAX_SCENARIOS", "MAX_VALUES", "MAX_AT"]

#: Keys of a study file (``notes`` and ``title`` are free text).
STUDY_KEYS = ("title", "notes", "config", "samples", "split", "fit", "scenarios", "projection",
              "spectrum")
_SAMPLE_KEYS = ("name", "files", "notes", "composition", "set", "window", "density",
                "heat_capacity")
_SPLIT_KEYS = ("lorenz", "scattering_exponent", "uncertainty", "draws", "seed", "window", "nan",
               "composition", "extrapolate")
_FIT_KEYS = ("shared", "per_sample", "bounds", "window", "starts", "seed")
_SCENARIO_KEYS = ("name", "changes", "key", "values", "notes")
_PROJECTION_KEYS = ("sample", "at", "temperature", "draws", "seed")
_SPECTRUM_KEYS = ("at",)
_UNCERTAINTY_KEYS = ("kappa", "sigma", "resistivity", "S", "L")
_LORENZ = ("spb", "degenerate", "nondegenerate", "kim")
_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._+-]*$")

#: Most scenarios of one study (after lists of values are expanded).
MAX_SCENARIOS = 24
#: Most values in one scenario list of values.
MAX_VALUES = 12
#: Most temperatures of the answer table and of the spectrum.
MAX_AT = 6


# --- small readers ---------------------------------------------------------------------------


def _mapping(value: Any, key: str, allowed: Sequence[str]) -> dict:
    if value is None:
        return {}
    if not isinstance(value, dict):
        raise ConfigError(key, value, "must be a mapping of " + ", ".join(allowed))
    for k in value:
        if str(k) not in allowed:
            close = difflib.get_close_matches(str(k), allowed, n=1, cutoff=0.6)
            hint = f"did you mean '{close[0]}'? " if close else ""
            raise ConfigError(f"{key}.{k}", allowed=f"unknown key; {hint}allowed here: "
                              + ", ".join(allowed))
    return value


def _text(value: Any, key: str) -> str:
    if value is None:
        return ""
    if isinstance(value, (dict, list)):
        raise ConfigError(key, value, "must be text")
    return str(value)


def _whole(value: Any, key: str, low: int, high: int, what: str) -> int:
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, bool) or not isinstance(value, int) or not low <= value <= high:
        raise ConfigError(key, value, f"must be a whole number from {low:,} to {high:,} ({what})")
    return value


def _file(base: Path, value: Any, key: str) -> Path:
    if not isinstance(value, str) or not value.strip():
        raise ConfigError(key, value, "must be a file name (relative to the study file)")
    from kappa.io.labfiles import split_sheet

    path = base / value.strip()
    if not split_sheet(path)[0].is_file():  # book.xlsx:Sheet names a sheet of book.xlsx
        raise ConfigError(key, value, f"file not found (looked for {split_sheet(path)[0]})")
    return path


def _constant(value: Any, key: str, name: str) -> str | None:
    """A density or specific heat given once for a sample, checked; kept as written."""
    if value is None:
        return None
    from kappa.io.measurements import parse_constants

    try:
        parse_constants(**{name: str(value)})
    except KappaError as exc:
        raise ConfigError(key, value, exc.allowed) from None
    return str(value)


def _window(value: Any, key: str) -> tuple[tuple[float, float] | None, str | None]:
    if value is None:
        return None, None
    try:
        return parse_window(str(value), key), str(value)
    except KappaError as exc:
        raise ConfigError(key, value, exc.allowed) from None


def _temperatures(value: Any, key: str) -> np.ndarray:
    items = value if isinstance(value, list) else [value]
    if not items or len(items) > MAX_AT:
        raise ConfigError(key, value, f"1 to {MAX_AT} temperatures, e.g. [300 K, 600 K]")
    T = []
    for i, v in enumerate(items):
        where = f"{key}.{i}" if isinstance(value, list) else key
        t = parse_quantity(v, "K", where)
        if not 0 < t <= T_MAX:
            raise ConfigError(where, v, f"a temperature above 0 K and at most {T_MAX:g} K, "
                              "e.g. 600 K")
        T.append(t)
    T = np.array(sorted(set(T)))
    return T


# --- sections --------------------------------------------------------------------------------


def _samples(items: Any, base: Path, config: Config, split_composition: str | None
             ) -> list[StudySample]:
    if not isinstance(items, list) or not items:
        raise ConfigError("study.samples", items, "must be a non-empty list of samples "
                          "{name, files, notes, set, window, composition}")
    out: list[StudySample] = []
    for i, item in enumerate(items):
        key = f"study.samples.{i}"
        sec = _mapping(item, key, _SAMPLE_KEYS)
        if not sec:
            raise ConfigError(key, item, "must be a mapping {name, files, ...}")
        name = sec.get("name")
        if not isinstance(name, str) or not _NAME.match(name):
            raise ConfigError(f"{key}.name", name, "a name of letters, digits, '.', '_', '+', "
                              "'-' (it names output folders)")
        if any(s.name.lower() == name.lower() for s in out):
            raise ConfigError(f"{key}.name", name, "sample names must be unique (ignoring "
                              "upper/lower case: they name output folders)")
        files = sec.get("files")
        if files is None:
            raise ConfigError(f"{key}.files", allowed="missing; the measurement CSV file(s) of "
                              "this sample, e.g. [flash.csv, electrical.csv]")
        if isinstance(files, str):
            paths = [_file(base, files, f"{key}.files")]
        elif isinstance(files, list) and files:
            paths = [_file(base, f, f"{key}.files.{j}") for j, f in enumerate(files)]
        else:
            raise ConfigError(f"{key}.files", files, "must be a file name or a non-empty list "
                              "of file names")
        if len({p.name for p in paths}) != len(paths):
            raise ConfigError(f"{key}.files", files, "the same file name is given twice")
        composition = sec.get("composition", split_composition)
        if composition is not None:
            from kappa.core.composition import mean_molar_mass

            where = f"{key}.composition" if "composition" in sec else "study.split.composition"
            if not isinstance(composition, str):
                raise ConfigError(where, composition, "must be a chemical formula")
            try:
                mean_molar_mass(composition, where)
            except KappaError as exc:
                raise ConfigError(where, composition, exc.allowed) from None
        changes = sec.get("set") or {}
        if not isinstance(changes, dict):
            raise ConfigError(f"{key}.set", changes, "must be a mapping KEY: VALUE")
        changes = {str(k): v for k, v in changes.items()}
        cfg = sample_config(config, changes, f"{key}.set", f"{config.source} ({name})")
        window, window_text = _window(sec.get("window"), f"{key}.window")
        out.append(StudySample(name, tuple(paths), _text(sec.get("notes"), f"{key}.notes"),
                               composition, changes, window, window_text, cfg,
                               _constant(sec.get("density"), f"{key}.density", "density"),
                               _constant(sec.get("heat_capacity"), f"{key}.heat_capacity",
                                         "heat_capacity")))
    return out


def _split(value: Any) -> SplitOptions:
    sec = _mapping(value, "study.split", _SPLIT_KEYS)
    lorenz: str | float = "spb"
    if "lorenz" in sec:
        raw = sec["lorenz"]
        if isinstance(raw, str) and raw.strip() in _LORENZ:
            lorenz = raw.strip()
        else:
            allowed = f"{', '.join(_LORENZ)} or a number in W Ohm/K^2 (e.g. 2.0e-8)"
            try:
                lorenz = parse_quantity(raw, "W*ohm/K^2", "study.split.lorenz")
            except KappaError:
                raise ConfigError("study.split.lorenz", raw, allowed) from None
            if not 0 < lorenz < 1e-6:
                raise ConfigError("study.split.lorenz", raw, allowed + "; values near 2e-8 "
                                  "are usual")
    lam = sec.get("scattering_exponent", 0.0)
    if isinstance(lam, bool) or not isinstance(lam, (int, float)) or not -0.9 <= lam <= 4:
        raise ConfigError("study.split.scattering_exponent", lam, "a number from -0.9 to 4 "
                          "(0 acoustic phonons, 1 polar optical, 2 ionized impurities)")
    unc = _mapping(sec.get("uncertainty"), "study.split.uncertainty", _UNCERTAINTY_KEYS)
    uncertainty: dict[str, float | tuple[float, float]] = {}
    for k, v in unc.items():
        where = f"study.split.uncertainty.{k}"
        parts = re.split(r"(?<![eE])\+", v) if isinstance(v, str) else [v]
        if len(parts) > 2:
            raise ConfigError(where, v, "SYSTEMATIC or SYSTEMATIC+RANDOM, e.g. 0.08+0.02")
        values = [_relative(part, where) for part in parts]
        name = "sigma" if k == "resistivity" else str(k)
        uncertainty[name] = values[0] if len(values) == 1 else (values[0], values[1])
    draws = _whole(sec.get("draws", 2000), "study.split.draws", 100, 100_000,
                   "Monte Carlo draws")
    seed = _whole(sec.get("seed", 0), "study.split.seed", 0, 2**32 - 1, "random seed")
    window, window_text = _window(sec.get("window"), "study.split.window")
    nan = sec.get("nan", "raise")
    if nan not in ("raise", "omit"):
        raise ConfigError("study.split.nan", nan, "raise or omit")
    composition = sec.get("composition")
    extrapolate = sec.get("extrapolate")
    if extrapolate is not None:
        from kappa.io.units import parse_temperature_difference
        from kappa.workflows.measurements import check_extrapolation

        try:
            check_extrapolation(parse_temperature_difference(str(extrapolate),
                                                             "study.split.extrapolate"))
        except KappaError as exc:
            raise ConfigError("study.split.extrapolate", extrapolate, exc.allowed) from None
        extrapolate = str(extrapolate)
    return SplitOptions(lorenz, float(lam), uncertainty, draws, seed, window, window_text, nan,
                        composition, extrapolate)


def _relative(v: Any, where: str) -> float:
    """A relative uncertainty: 0.08 or 8%, from 0 to 0.5."""
    if isinstance(v, str):
        text = v.strip()
        try:
            v = float(text[:-1]) / 100.0 if text.endswith("%") else float(text)
        except ValueError:
            raise ConfigError(where, text, "a relative uncertainty, e.g. 0.08 or 8% (or "
                              "SYSTEMATIC+RANDOM, e.g. 0.08+0.02)") from None
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v <= 0.5:
        raise ConfigError(where, v, "a relative uncertainty between 0 and 0.5 (e.g. 0.08 "
                          "for 8 %; SYSTEMATIC+RANDOM for both parts, e.g. 0.08+0.02)")
    return float(v)


def _fit(value: Any, samples: Sequence[StudySample]) -> FitOptions:
    if value is None:
        raise ConfigError("study.fit", allowed="missing; name the keys to fit, e.g. "
                          "fit: {shared: [material.gruneisen], per_sample: "
                          "[scattering.boundary.grain_size]}")
    sec = _mapping(value, "study.fit", _FIT_KEYS)
    shared = key_list(sec.get("shared"), "study.fit.shared")
    per = key_list(sec.get("per_sample"), "study.fit.per_sample")
    if not shared and not per:
        raise ConfigError("study.fit", allowed="name at least one key to fit under shared or "
                          "per_sample ('kappa check CONFIG' lists the keys)")
    model = samples[0].config.model
    keys, starts, bounds = [], {}, {}
    for name, items in (("shared", shared), ("per_sample", per)):
        for i, item in enumerate(items):
            where = f"study.fit.{name}.{i}"
            try:
                k, s, b = parse_free(model, [item], {}, where)
            except KappaError as exc:
                raise ConfigError(where, item, exc.allowed) from None
            if k[0] in keys:
                raise ConfigError(where, item, "each key may be fitted once (shared or per "
                                  "sample)")
            keys += k
            starts.update(s)
            bounds.update(b)
    raw_bounds = sec.get("bounds") or {}
    if not isinstance(raw_bounds, dict):
        raise ConfigError("study.fit.bounds", raw_bounds, "must be a mapping KEY: 'LOW:HIGH'")
    for k, v in raw_bounds.items():
        where = f"study.fit.bounds.{k}"
        if str(k) not in keys:
            raise ConfigError(where, v, "bounds are only for fitted keys (shared or per_sample)")
        if str(k) in bounds:
            raise ConfigError(where, v, "bounds given twice (here and in the key list); give "
                              "them once")
        try:
            _, _, b = parse_free(model, [f"{k}={v}"], {}, where)
        except KappaError as exc:
            raise ConfigError(where, v, exc.allowed) from None
        if str(k) not in b:
            raise ConfigError(where, v, "must be LOW:HIGH with units, e.g. 10nm:100um (one "
                              "side may be empty)")
        bounds.update(b)
    shared_keys = [str(s).partition("=")[0].strip() for s in shared]
    for i, s in enumerate(samples):
        for k, v in s.changes.items():
            if k in shared_keys:
                raise ConfigError(f"study.samples.{i}.set.{k}", v, "is a shared fitted key; "
                                  "it cannot be set per sample")
            if k in starts:
                raise ConfigError(f"study.samples.{i}.set.{k}", v, "has a start value in "
                                  "study.fit already; give it in one place")
    window, window_text = _window(sec.get("window"), "study.fit.window")
    starts_n = _whole(sec.get("starts", 5), "study.fit.starts", 1, 50, "number of starts")
    seed = _whole(sec.get("seed", 0), "study.fit.seed", 0, 2**32 - 1, "random seed")
    per_keys = [str(s).partition("=")[0].strip() for s in per]
    written = {"shared": shared, "per_sample": per, "bounds": dict(raw_bounds),
               "window": window_text, "starts": starts_n, "seed": seed}
    return FitOptions(tuple(shared_keys), tuple(per_keys), starts, bounds, window, window_text,
                      starts_n, seed, written)


def _scenarios(items: Any, reference: Config) -> list[Scenario]:
    if not isinstance(items, list) or not items:
        raise ConfigError("study.scenarios", items if items is not None else "(missing)",
                          "must be a non-empty list of what-ifs, e.g. [{name: grains 100 nm, "
                          "changes: {scattering.boundary.grain_size: 100 nm}}]")
    out: list[Scenario] = []
    for i, item in enumerate(items):
        key = f"study.scenarios.{i}"
        sec = _mapping(item, key, _SCENARIO_KEYS)
        name = sec.get("name")
        if not isinstance(name, str) or not name.strip() or len(name) > 80:
            raise ConfigError(f"{key}.name", name, "a short name (1 to 80 characters), e.g. "
                              "'grains 100 nm'")
        name = " ".join(name.split())
        notes = _text(sec.get("notes"), f"{key}.notes")
        has_changes, has_list = "changes" in sec, ("key" in sec or "values" in sec)
        if has_changes == has_list:
            raise ConfigError(key, name, "give either changes: {KEY: VALUE, ...} or key: KEY "
                              "with values: [V1, V2, ...]")
        if has_changes:
            changes = sec["changes"]
            if not isinstance(changes, dict) or not changes:
                raise ConfigError(f"{key}.changes", changes, "must be a non-empty mapping "
                                  "KEY: VALUE, e.g. {scattering.boundary.grain_size: 100 nm}")
            made = [Scenario(name, {str(k): v for k, v in changes.items()}, key, None, notes)]
        else:
            k, values = sec.get("key"), sec.get("values")
            if not isinstance(k, str) or not k.strip():
                raise ConfigError(f"{key}.key", k, "the dotted key whose values are listed, "
                                  "e.g. scattering.boundary.grain_size")
            if not isinstance(values, list) or not values or len(values) > MAX_VALUES:
                raise ConfigError(f"{key}.values", values, f"a list of 1 to {MAX_VALUES} "
                                  "values, e.g. [1 um, 300 nm, 100 nm]")
            made = []
            for j, v in enumerate(values):
                if isinstance(v, (dict, list)) or v is None:
                    raise ConfigError(f"{key}.values.{j}", v, "a value, e.g. 100 nm")
                made.append(Scenario(f"{name} {v}", {k.strip(): v}, key, name, notes))
        for j, s in enumerate(made):
            if any(o.name == s.name for o in out):
                raise ConfigError(f"{key}.name", s.name, "scenario names must be unique")
            _check_scenario(reference, s, key, j)
            out.append(s)
    if len(out) > MAX_SCENARIOS:
        raise ConfigError("study.scenarios", f"{len(out)} scenarios",
                          f"at most {MAX_SCENARIOS} (lists of values count one each)")
    return out


def _check_scenario(reference: Config, s: Scenario, key: str, j: int) -> None:
    """Apply the scenario to the reference sample's config; errors name the study key."""
    if s.group is None:
        sample_config(reference, s.changes, f"{key}.changes", reference.source)
        return
    (k, v), = s.changes.items()
    try:
        _applies(reference, k)
        set_value(reference.data, k, v)
    except KappaError as exc:
        raise ConfigError(f"{key}.key", k, exc.allowed) from None
    try:
        sample_config(reference, s.changes, "", reference.source)
    except KappaError as exc:
        raise ConfigError(f"{key}.values.{j}", v, exc.allowed) from None


def _applies(cfg: Config, k: str) -> None:
    """A numeric key must apply to the model as configured (text keys such as
    material.composition are checked by the config itself)."""
    try:
        cfg.model.parameter(k)
    except KappaError:
        return
    cfg.model.check_key(k)


def _projection(value: Any, samples: Sequence[StudySample]) -> Projection:
    sec = _mapping(value, "study.projection", _PROJECTION_KEYS)
    names = [s.name for s in samples]
    sample = sec.get("sample", names[0])
    if sample not in names:
        close = difflib.get_close_matches(str(sample), names, n=1, cutoff=0.6)
        hint = f"did you mean '{close[0]}'? " if close else ""
        raise ConfigError("study.projection.sample", sample, f"{hint}the name of a sample: "
                          + ", ".join(names))
    at = None
    if sec.get("at") is not None:
        at = _temperatures(sec["at"], "study.projection.at")
    temperature = None
    if sec.get("temperature") is not None:
        cfg = samples[names.index(sample)].config
        try:
            temperature = config_from_dict(set_value(cfg.data, "temperature",
                                                     sec["temperature"]), cfg.source).temperature
        except KappaError as exc:
            raise prefixed(exc, "study.projection") from None
        if temperature is not None and temperature.size > 2000:
            raise ConfigError("study.projection.temperature", f"{temperature.size} points",
                              "at most 2000 temperatures for the curves")
    draws = _whole(sec.get("draws", 400), "study.projection.draws", 10, 100_000,
                   "parameter sets drawn from the fit's covariance")
    seed = _whole(sec.get("seed", 0), "study.projection.seed", 0, 2**32 - 1, "random seed")
    return Projection(str(sample), at, temperature, sec.get("temperature"), draws, seed)


# --- the study file --------------------------------------------------------------------------


def read_study(path: str | Path) -> Study:
    """Read and check a study file (see the module docstring for its layout).

    Raises
    ------
    ConfigError
        Naming the study key (``study.samples.1.files.0``, ``study.scenarios.2.changes.KEY``),
        the value and what is allowed; errors inside the material config name the config file
        and the config key.
    """
    from kappa.io.yamlfile import load_yaml

    path = Path(path)
    data = load_yaml(path, what="study file")
    if not isinstance(data, dict):
        raise ConfigError("study", data if data is not None else "(empty)",
                          "a study file is a mapping with config, samples, fit and scenarios")
    _mapping(data, "study", STUDY_KEYS)
    base = path.parent
    if "config" not in data:
        raise ConfigError("study.config", allowed="missing; the material config (YAML) the "
                          "model starts from, e.g. config: my-material.yaml")
    config_path = _file(base, data["config"], "study.config")
    try:
        config = load_config(config_path)
    except KappaError as exc:
        raise ConfigError(f"study.config ({config_path.name}): {exc.key}",
                          *((exc.value,) if exc.has_value else ()), allowed=exc.allowed
                          ) from None
    split = _split(data.get("split"))
    samples = _samples(data.get("samples"), base, config, split.composition)
    fit = _fit(data.get("fit"), samples)
    projection = _projection(data.get("projection"), samples)
    reference = next(s for s in samples if s.name == projection.sample).config
    scenarios = _scenarios(data.get("scenarios"), reference)
    spec = _mapping(data.get("spectrum"), "study.spectrum", _SPECTRUM_KEYS)
    spectrum_at = (_temperatures(spec["at"], "study.spectrum.at") if spec.get("at") is not None
                   else np.array([]))
    return Study(path, _text(data.get("title"), "study.title"),
                 _text(data.get("notes"), "study.notes"), config_path, config, tuple(samples),
                 split, fit, tuple(scenarios), projection, spectrum_at, data)
