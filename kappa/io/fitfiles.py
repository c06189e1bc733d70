"""Files of fits: measured κ_L tables, series files, free-key options, fit records, fitted configs.

The fit itself (:mod:`kappa.workflows.fitting`) works on models and SI arrays; this module turns
what users write — CSV tables, a series YAML, ``--free KEY=START`` and ``KEY=LOW:HIGH`` — into
those, and writes the results back as a config (``fitted.yaml``) and a record of the covariance
(``fit.json``).
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from kappa.core.model import Model
from kappa.errors import ConfigError, DataError, KappaError, warn
from kappa.io.config import Config, config_from_dict, load_config, set_value, write_values
from kappa.io.series import Note, load_series_file, notes_for_keys, parse_notes
from kappa.io.units import parse_quantity, parse_window
from kappa.workflows.fitting import Covariance, FitData, FitResult, SeriesSample, fit_data
from kappa.workflows.fitting.data import ERROR_MODES

__all__ = [
    "FIT_ALIASES",
    "read_fit_data",
    "parse_free",
    "key_list",
    "Series",
    "read_series",
    "fit_record",
    "read_fit_record",
    "fitted_config_data",
]

#: Other names accepted for the columns of fit data (exact spelling).
FIT_ALIASES = {
    "T": ("temperature", "Temperature", "temp"),
    "kappa_L": ("kappa_lattice", "kappaL", "k_L", "kappa_lat"),
    "kappa_L_err": ("kappa_L_sigma", "kappa_L_unc", "kappa_L_error", "dkappa_L",
                    "kappa_L_uncertainty"),
    "kappa_L_err_systematic": ("kappa_L_err_sys", "kappa_L_sys"),
    "kappa_L_err_random": ("kappa_L_err_rand", "kappa_L_rand"),
}


def _fit_columns(table):
    """Rename accepted alternative column names (``kappa_lattice``, ...) to the canonical ones."""
    from kappa.io.tables import Table

    lookup = {a: name for name, aliases in FIT_ALIASES.items() for a in aliases}
    cols: dict = {}
    for col in table.columns.values():
        name = lookup.get(col.name, col.name)
        if name in cols:
            raise DataError(f"{table.source}, column '{col.header}'", col.name,
                            f"gives the same quantity as column '{cols[name].header}'; keep one")
        cols[name] = replace(col, name=name)
    return Table(source=table.source, columns=cols)


def read_fit_data(path: str | Path, *, window: tuple[float, float] | None = None,
                  nan: str = "raise", name: str | None = None, errors: str = "auto") -> FitData:
    """Read a CSV with ``T [K]`` and ``kappa_L [W/(m K)]`` (units converted) for a fit.

    ``errors`` (:data:`~kappa.workflows.fitting.data.ERROR_MODES`) chooses the uncertainty
    columns: ``separate`` uses ``kappa_L_err_random`` as point-to-point noise and
    ``kappa_L_err_systematic`` as the width of one shared scale of the sample (the columns
    ``kappa split`` writes); ``random`` the random column only; ``total`` ``kappa_L_err`` or,
    failing that, half the width of ``kappa_L_low``..``kappa_L_high`` (the 68 % band), taken
    as independent from point to point (``random`` falls back to the same columns when there is
    no random column: the one uncertainty is then taken as point-to-point); ``none`` no
    uncertainties. ``auto`` (default):
    ``separate`` when both parts are there, else ``total`` with a warning, else ``none``.
    """
    from kappa.io.tables import read_table

    if errors not in ERROR_MODES:
        raise DataError("errors", errors, ", ".join(ERROR_MODES))
    table = _fit_columns(read_table(path))
    src = table.source
    if "T" not in table:
        raise DataError(src, "no column 'T [...]'", "the fit needs a temperature column, "
                        "e.g. 'T [K]'")
    if "kappa_L" not in table:
        hint = (" (this file has total 'kappa'; run 'kappa split' first to get the lattice part)"
                if "kappa" in table else "")
        raise DataError(src, "no column 'kappa_L [...]'",
                        "the fit needs the lattice conductivity, e.g. 'kappa_L [W/(m K)]'" + hint)
    T = table.get("T", "K")
    k = table.get("kappa_L", "W/(m K)")
    unit = "W/(m K)"
    has_parts = "kappa_L_err_systematic" in table and "kappa_L_err_random" in table
    has_total = "kappa_L_err" in table or ("kappa_L_low" in table and "kappa_L_high" in table)
    mode = errors
    if errors == "auto":
        mode = "separate" if has_parts else ("total" if has_total else "none")
        if mode == "total":
            warn(f"{src}: only a total uncertainty is given; the fit takes it as independent "
                 "from point to point, but calibration and geometry errors are shared by all "
                 "temperatures: then chi2_red comes out small and the parameter errors are "
                 "misleading. 'kappa split' writes the systematic and random parts "
                 "(kappa_L_err_systematic, kappa_L_err_random); --errors total accepts the "
                 "total as independent")
    sigma = systematic = None
    how = ""
    if mode == "random" and "kappa_L_err_random" not in table and has_total:
        mode = "total"  # the one uncertainty given is taken as the random part
        how_note = " (taken as the random part, --errors random)"
    else:
        how_note = ""
    if mode in ("separate", "random"):
        need = ("kappa_L_err_systematic", "kappa_L_err_random") if mode == "separate" else (
            "kappa_L_err_random",)
        missing = [c for c in need if c not in table]
        if missing:
            raise DataError(f"{src}", f"no column '{missing[0]} [...]'",
                            f"--errors {mode} needs the column(s) {', '.join(need)} (written "
                            "by 'kappa split'); or choose --errors total or none")
        sigma, how = table.get("kappa_L_err_random", unit), "kappa_L_err_random"
        if mode == "separate":
            systematic = table.get("kappa_L_err_systematic", unit)
            how += " (point to point) + kappa_L_err_systematic (shared scale)"
    elif mode == "total":
        if "kappa_L_err" in table:
            sigma, how = table.get("kappa_L_err", unit), "kappa_L_err"
        elif "kappa_L_low" in table and "kappa_L_high" in table:
            lo, hi = table.get("kappa_L_low", unit), table.get("kappa_L_high", unit)
            if np.any(hi < lo):
                raise DataError(f"{src}, column 'kappa_L_high'", "below kappa_L_low",
                                "kappa_L_high must be >= kappa_L_low in every row")
            sigma, how = 0.5 * (hi - lo), "kappa_L_low/kappa_L_high (half width)"
        else:
            raise DataError(src, "no column 'kappa_L_err [...]'", "--errors total needs "
                            "kappa_L_err (or kappa_L_low and kappa_L_high); or choose "
                            "--errors none")
    data = fit_data(T, k, sigma, systematic=systematic, window=window,
                    name=name or Path(path).stem, source=src,
                    uncertainty_source=how + how_note, nan=nan)
    if how_note:
        mode = "random"
    return replace(data, errors=mode if data.errors != "none" else "none")


def _parse_bounds(model: Model, key: str, text: str, option: str) -> tuple:
    p = model.parameter(key)
    where = f"{option} {key}"
    if text.count(":") != 1:
        raise ConfigError(where, text, "must be LOW:HIGH with units, e.g. 10nm:1mm (one side "
                          "may be empty)")
    a, b = (s.strip() for s in text.split(":"))
    bare = p.bare or p.unit
    lo = parse_quantity(a, p.unit, where, bare=bare) if a else None
    hi = parse_quantity(b, p.unit, where, bare=bare) if b else None
    return lo, hi


def parse_free(model: Model, items: Sequence[str], bounds: Sequence[str] | Mapping[str, str] = (),
               option: str = "--free") -> tuple[list[str], dict[str, float], dict[str, tuple]]:
    """``KEY``, ``KEY=START`` or ``KEY=LOW:HIGH`` items (and ``KEY=LOW:HIGH`` bounds) →
    (keys, start values [SI], bounds [SI, None = open])."""
    keys: list[str] = []
    starts: dict[str, float] = {}
    out_bounds: dict[str, tuple] = {}
    for item in items:
        key, sep, text = str(item).partition("=")
        key, text = key.strip(), text.strip()
        if not key or (sep and not text):
            raise ConfigError(option, item, "must be KEY, KEY=START or KEY=LOW:HIGH, e.g. "
                              "scattering.boundary.grain_size=1um")
        model.parameter(key)
        if key in keys:
            raise ConfigError(option, key, "each key may be freed once")
        keys.append(key)
        if text and ":" in text:
            out_bounds[key] = _parse_bounds(model, key, text, option)
        elif text:
            p = model.parameter(key)
            value = parse_quantity(text, p.unit, f"{option} {key}", bare=p.bare or p.unit)
            p.check(f"{option} {key}", value, shown=text)
            starts[key] = value
    pairs = bounds.items() if isinstance(bounds, Mapping) else [
        _split_bounds(b) for b in bounds]
    for key, text in pairs:
        key = str(key)
        if key in out_bounds:
            raise ConfigError(f"--bounds {key}", text, "bounds given twice (here and in "
                              f"{option}); give them once")
        out_bounds[key] = _parse_bounds(model, key, str(text), "--bounds")
    return keys, starts, out_bounds


def _split_bounds(item: str) -> tuple[str, str]:
    key, sep, text = str(item).partition("=")
    if not sep or not key.strip() or not text.strip():
        raise ConfigError("--bounds", item, "must be KEY=LOW:HIGH, e.g. "
                          "scattering.boundary.grain_size=10nm:1mm")
    return key.strip(), text.strip()


# --- series files -----------------------------------------------------------------------------


@dataclass(frozen=True)
class Series:
    """A loaded series file: what :func:`~kappa.workflows.fitting.fit_series` needs, and the
    configs, files and per-sample notes it came from."""

    samples: tuple[SeriesSample, ...]
    shared: tuple[str, ...]
    per_sample: tuple[str, ...]
    start_values: dict[str, float]
    bounds: dict[str, tuple]
    configs: dict[str, Config]
    files: tuple[Path, ...]
    notes: dict[str, dict[str, Note]] = field(default_factory=dict)


def key_list(value: Any, key: str) -> list[str]:
    """A list of dotted keys (one key may be written alone); ConfigError naming ``key``."""
    if value is None:
        return []
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        raise ConfigError(key, value, "must be a list of dotted keys, e.g. [material.gruneisen]")
    return list(value)


def read_series(path: str | Path, *, nan: str = "raise",
                extra_bounds: Sequence[str] = (), errors: str = "auto") -> Series:
    """Read and validate a series file for a fit; load its configs and data.

    The file format is shared with ``kappa split --series`` (:mod:`kappa.io.series`); a fit
    needs, per sample, ``data`` (T and kappa_L) and a config (``config`` at the top or per
    sample). Relative paths are relative to the series file's folder. Layout::

        config: base.yaml
        shared: [material.gruneisen, scattering.umklapp.scale]
        per_sample: [scattering.boundary.grain_size]
        bounds: {scattering.boundary.grain_size: "10 nm:1 mm"}   # optional
        window: 100K:700K                                        # optional, for every sample
        samples:
          - {name: A, data: a.csv, set: {scattering.boundary.grain_size: 2 um},
             notes: {grain_size: 1.8 um}}
          - {name: B, data: b.csv, window: 100K:500K, config: other.yaml}

    ``errors`` chooses which uncertainty columns the fit uses (see :func:`read_fit_data`).
    """
    sf = load_series_file(path)
    path, base, data = sf.path, sf.folder, sf.data
    shared = key_list(data.get("shared"), "series.shared")
    per = key_list(data.get("per_sample"), "series.per_sample")
    bounds = data.get("bounds") or {}
    if not isinstance(bounds, dict):
        raise ConfigError("series.bounds", bounds, "must be a mapping KEY: 'LOW:HIGH'")
    window = data.get("window")
    default_cfg = data.get("config")
    loaded: dict[str, Config] = {}
    configs: dict[str, Config] = {}
    samples, files = [], [path]
    keys = [str(k).partition("=")[0].strip() for k in (*shared, *per)]
    started = [str(k).partition("=")[0].strip() for k in per if "=" in str(k)]
    for entry in sf.entries:
        key, item, name = entry.key, entry.item, entry.name
        if "data" not in item:
            raise ConfigError(f"{key}.data", allowed="missing; the CSV file with T and kappa_L "
                              "(e.g. the split.csv of 'kappa split')")
        cfg_name = item.get("config", default_cfg)
        if cfg_name is None:
            raise ConfigError("series.config", allowed="missing; the base config of the series "
                              "(or a config per sample)")
        cfg_path = base / str(cfg_name)
        if not cfg_path.is_file():
            where = f"{key}.config" if "config" in item else "series.config"
            raise ConfigError(where, str(cfg_name), f"file not found (looked for {cfg_path})")
        if str(cfg_path) not in loaded:
            loaded[str(cfg_path)] = load_config(cfg_path)
            files.append(cfg_path)
        cfg = loaded[str(cfg_path)]
        sets = item.get("set") or {}
        if not isinstance(sets, dict):
            raise ConfigError(f"{key}.set", sets, "must be a mapping KEY: VALUE")
        if sets:
            d = cfg.data
            for k, v in sets.items():
                k = str(k)
                if k in keys and k not in per:
                    raise ConfigError(f"{key}.set.{k}", v, "is a shared free key; it cannot "
                                      "be set per sample")
                if k in started:
                    raise ConfigError(f"{key}.set.{k}", v, "has a start value in "
                                      "series.per_sample already; give it in one place")
                d = set_value(d, k, v)
            cfg = config_from_dict(d, f"{cfg_path} ({name})")
        win = item.get("window", window)
        data_path = base / str(item["data"])
        if not data_path.is_file():
            raise ConfigError(f"{key}.data", str(item["data"]),
                              f"file not found (looked for {data_path})")
        files.append(data_path)
        where = f"{key}.window" if "window" in item else "series.window"
        try:
            parsed_window = None if win is None else parse_window(str(win), where)
        except KappaError as exc:
            raise ConfigError.renamed(exc, where) from None
        fdata = read_fit_data(data_path, window=parsed_window, nan=nan, name=name,
                              errors=errors)
        samples.append(SeriesSample(name, cfg.model, fdata))
        configs[name] = cfg
    model = samples[0].model
    shared_keys, starts, parsed = parse_free(model, shared, {}, "series.shared")
    per_keys, per_starts, per_bounds = parse_free(model, per, {}, "series.per_sample")
    starts.update(per_starts)
    parsed.update(per_bounds)
    for k, v in bounds.items():
        if str(k) in parsed:
            raise ConfigError(f"series.bounds.{k}", v, "bounds given twice; give them once")
        parsed[str(k)] = _parse_bounds(model, str(k), str(v), "series.bounds")
    for item in extra_bounds:
        k, text = _split_bounds(item)
        parsed[k] = _parse_bounds(model, k, text, "--bounds")
    # notes named like a per-sample key must have its dimension
    units = notes_for_keys(per_keys, model)
    notes = {e.name: parse_notes(e.item.get("notes"), f"{e.key}.notes", units)
             for e in sf.entries}
    return Series(tuple(samples), tuple(shared_keys), tuple(per_keys), starts, parsed,
                  configs, tuple(files), notes)


# --- fit records and fitted configs --------------------------------------------------------------


def fit_record(result: FitResult, sample: str | None = None) -> dict:
    """The ``fit.json`` content for one sample: free keys, values, covariance.

    Only the parameters that act on ``sample`` (shared ones and its own) are kept, with the
    matching block of the covariance (transformed space).
    """
    idx = [i for i, p in enumerate(result.parameters) if p.sample in (None, sample)]
    scale = next((f for f in result.scales if f.sample == (sample or result.samples[0].name)),
                 None)
    return {
        "kind": "kappa fit covariance",
        "sample": sample,
        "weighted": result.weighted,
        "errors": result.errors,
        "shared_scale": None if scale is None else {
            "systematic_width": scale.width, "z": scale.z, "z_stderr": scale.z_stderr,
            "factor": scale.factor, "low68": scale.low68, "high68": scale.high68,
            "note": "the data's fitted calibration scale (a nuisance parameter); the "
                    "covariance below is the parameters' block of the joint covariance, so "
                    "draws from it include what the shared error does to them"},
        "n_points": result.n_points,
        "dof": result.dof,
        "parameters": [{"key": result.parameters[i].key, "space": result.spaces[i],
                        "value": result.parameters[i].value, "unit": result.parameters[i].unit,
                        "stderr": result.parameters[i].stderr,
                        "at_bound": result.parameters[i].at_bound} for i in idx],
        "covariance": [[float(result.covariance[i, j]) for j in idx] for i in idx],
        "covariance_space": "u = ln(value) for space 'log', u = value [SI] for 'linear'",
    }


def read_fit_record(path: str | Path, option: str = "--band") -> Covariance:
    """Read and check a ``fit.json`` written by ``kappa fit``."""
    path = Path(path)
    if not path.is_file():
        raise ConfigError(option, str(path), "needs the fit.json that 'kappa fit' writes "
                          "beside fitted.yaml; keep the two files together")
    try:
        record = json.loads(path.read_text(encoding="utf-8"))
        params = record["parameters"]
        cov = np.array(record["covariance"], dtype=float)
        keys = tuple(str(p["key"]) for p in params)
        spaces = tuple(str(p["space"]) for p in params)
        values = tuple(float(p["value"]) for p in params)
        bounds = tuple(str(p.get("at_bound") or "") for p in params)
    except (ValueError, KeyError, TypeError, AttributeError, RecursionError):
        raise ConfigError(str(path), allowed="not a fit record written by 'kappa fit'") from None
    if cov.shape != (len(keys), len(keys)) or any(s not in ("log", "linear") for s in spaces):
        raise ConfigError(str(path), allowed="not a fit record written by 'kappa fit' "
                          "(covariance does not match the parameters)")
    return Covariance(keys, spaces, values, cov, bounds)


def fitted_config_data(config: Config, model: Model, result: FitResult,
                       sample: str | None, temperature: np.ndarray) -> dict:
    """Plain config data of a fitted sample: fitted values written with their display units.

    A ``temperature`` section spanning the data (100 points) is added when the config has none,
    so the file runs in ``kappa predict`` as it is.
    """
    values = {p.key: p.value for p in result.parameters if p.sample in (None, sample)}
    data = write_values(config.data, model, values)
    if data.get("temperature") is None:
        data = set_value(data, "temperature", {"start": f"{temperature.min():g} K",
                                               "stop": f"{temperature.max():g} K",
                                               "points": 100})
    return data
