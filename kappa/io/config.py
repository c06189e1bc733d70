"""Model configs: YAML with units → (model, temperatures, provenance).

A config has three sections (``kappa new`` writes a commented starter; DEVELOPERS.md lists
every key)::

    material:     name, composition (or alloy: {end_members, fraction}) or atomic_mass,
                  atomic_volume or density, optionally atoms_per_cell, and either
                  debye_temperature / sound_velocity (or longitudinal_velocity +
                  transverse_velocity) / gruneisen, or branches: [{polarization, count,
                  debye_temperature, sound_velocity, gruneisen, dispersion: debye|sine,
                  zone_boundary_frequency}, ...]
    scattering:   one section per mechanism of the registry (kappa.core.mechanisms)
    temperature:  {start, stop, points, spacing: linear|log} or {values: [...]}

Values are numbers with units in a string (``645 K``, ``6.08 km/s``, ``200 nm``); a bare
number is read in the key's default unit (SI, except ``atomic_mass`` in u). The units of every
numeric key come from its one declaration in the core (:class:`~kappa.core.parameters.
Parameter`). Nothing is derived behind the user's back: every derived value is in
``Config.model.derived``.
"""

from __future__ import annotations

import copy
import difflib
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from kappa.core.evaluator import T_MAX
from kappa.core.material import (
    ALLOY_PARAMETERS,
    BRANCH_PARAMETERS,
    DERIVED_UNITS,
    DISPERSIONS,
    MATERIAL_PARAMETERS,
    AlloySpec,
    BranchSpec,
    MaterialSpec,
)
from kappa.core.mechanisms import REGISTRY, Umklapp
from kappa.core.model import Model, split_key
from kappa.core.parameters import Parameter
from kappa.core.scattering import Scattering
from kappa.errors import ConfigError
from kappa.io.units import format_quantity, parse_quantity

__all__ = [
    "Config",
    "load_config",
    "config_from_dict",
    "parse_override",
    "apply_overrides",
    "get_value",
    "set_value",
    "parse_value",
    "write_values",
    "derived_lines",
    "config_to_yaml",
    "TEMPERATURE_PARAMETER",
]

TOP_KEYS = ("material", "scattering", "temperature", "notes")
_TEXT_MATERIAL = ("name", "composition", "branches", "alloy")
_MATERIAL_ALL = ("name", "composition", *MATERIAL_PARAMETERS, "branches", "alloy")
_ALLOY_ALL = ("end_members", *ALLOY_PARAMETERS)
_BRANCH_ALL = ("polarization", "dispersion", *BRANCH_PARAMETERS)
_TEMPERATURE_ALL = ("start", "stop", "points", "spacing", "values")
_RANGE_KEYS = ("start", "stop", "points", "spacing")

#: Declaration of a temperature value in a config.
TEMPERATURE_PARAMETER = Parameter("temperature", "K", "temperature", low=0.0, high=T_MAX,
                                  low_open=True)


@dataclass(frozen=True)
class Config:
    """A validated config: the model, the temperatures, and what they were made from.

    Attributes
    ----------
    model : Model
        Material and scattering in SI (derived values in ``model.derived``).
    temperature : ndarray or None
        Temperatures of the ``temperature`` section [K] (None if the section is absent).
    data : dict
        The config as plain data (after overrides), values as written.
    source : str
        File the config came from (or ``"<dict>"``).
    """

    model: Model
    temperature: np.ndarray | None
    data: dict = field(repr=False)
    source: str = "<dict>"

    @property
    def material(self):
        """The resolved material of the model."""
        return self.model.material

    @property
    def derived(self) -> dict[str, str]:
        """Derived values as ``{key: "value unit (how)"}`` (for records and terminals)."""
        return dict(derived_lines(self.model))

    def require_temperature(self) -> np.ndarray:
        """The temperatures, or a ConfigError saying the section is missing."""
        if self.temperature is None:
            raise ConfigError("temperature", allowed="missing; add e.g. 'temperature: {start: "
                              "10 K, stop: 800 K, points: 80}' to the config")
        return self.temperature


def derived_lines(model: Model) -> list[tuple[str, str]]:
    """``[(key, "value unit (how)"), ...]`` for every derived value of a single model."""
    from kappa.io.units import convert

    out = []
    for d in model.derived:
        if isinstance(d.value, str):
            out.append((d.key, f"{d.value} ({d.how})"))
            continue
        if np.ndim(d.value):
            out.append((d.key, f"varied ({d.how})"))
            continue
        value = convert(float(d.value), _si_unit(d.key), d.unit)
        out.append((d.key, f"{value:.6g} {d.unit} ({d.how})".replace(" 1 (", " (")))
    return out


def _si_unit(key: str) -> str:
    parts = key.split(".")
    name = parts[-1]
    if parts[0] == "material":
        table = BRANCH_PARAMETERS if len(parts) == 4 else MATERIAL_PARAMETERS
        if name in table:
            return table[name].unit
        if name in DERIVED_UNITS:
            return DERIVED_UNITS[name]
    if parts[0] == "scattering" and len(parts) == 3 and parts[1] in REGISTRY:
        return REGISTRY[parts[1]].parameter(name).unit
    return "1"


# --- reading ----------------------------------------------------------------------------------


def load_config(path: str | Path, overrides: Sequence[str] = ()) -> Config:
    """Read, override and validate a YAML config file.

    Parameters
    ----------
    path : str or Path
        The YAML file.
    overrides : sequence of str
        ``"dotted.key=value"`` items applied before validation (as ``--set``).
    """
    from kappa.io.yamlfile import load_yaml

    path = Path(path)
    data = load_yaml(path, what="config")
    if data is None:
        data = {}
    if not isinstance(data, dict):
        raise ConfigError(str(path), allowed="a config must be a mapping with the sections "
                          "material, scattering, temperature")
    data = apply_overrides(data, overrides)
    return config_from_dict(data, str(path))


def parse_override(item: str) -> tuple[str, Any]:
    """Split ``"scattering.boundary.grain_size=50nm"`` into key and (YAML-parsed) value."""
    from kappa.io.yamlfile import load_yaml_text

    if "=" not in item:
        raise ConfigError("--set", item, "must be KEY=VALUE, e.g. "
                          "scattering.boundary.grain_size=50nm")
    key, _, text = item.partition("=")
    key = key.strip()
    if not key:
        raise ConfigError("--set", item, "must be KEY=VALUE with a dotted key")
    try:
        value = load_yaml_text(text, source=f"--set {key}") if text.strip() else None
    except ConfigError:
        value = text.strip()
    if value is None:
        raise ConfigError(f"--set {key}", text, "needs a value")
    return key, value


def apply_overrides(data: dict, overrides: Iterable[str]) -> dict:
    """Return a copy of ``data`` with every ``KEY=VALUE`` override applied.

    Setting ``temperature.values`` replaces a start/stop/points range, and setting one of
    ``temperature.start``/``stop``/``points``/``spacing`` replaces a ``values`` list.
    """
    for item in overrides:
        key, value = parse_override(item)
        temp = data.get("temperature")
        if isinstance(temp, dict) and key.startswith("temperature."):
            leaf = key.split(".")[1]
            if leaf == "values":
                data = set_value(data, "temperature",
                                 {k: v for k, v in temp.items() if k not in _RANGE_KEYS})
            elif leaf in _RANGE_KEYS and "values" in temp:
                data = set_value(data, "temperature",
                                 {k: v for k, v in temp.items() if k != "values"})
        data = set_value(data, key, value)
    return data


def get_value(data: Mapping, key: str) -> Any:
    """Value at a dotted key of plain config data (raises ConfigError, never KeyError)."""
    node: Any = data
    for part in split_key(key):
        if isinstance(node, list):
            node = node[_index(key, part, node)]
        elif isinstance(node, Mapping) and part in node:
            node = node[part]
        else:
            raise ConfigError(key, allowed="not present in this config")
    return node


def set_value(data: Mapping, key: str, value: Any) -> dict:
    """A deep copy of ``data`` with the dotted ``key`` set (missing sections are created)."""
    out = copy.deepcopy(dict(data))
    parts = split_key(key)
    _check_path(parts, key)
    node: Any = out
    for i, part in enumerate(parts[:-1]):
        if isinstance(node, list):
            node = node[_index(key, part, node)]
            continue
        nxt = node.get(part)
        if nxt is None:
            nxt = [] if part == "branches" else {}
            node[part] = nxt
        elif not isinstance(nxt, (dict, list)):
            raise ConfigError(".".join(parts[: i + 1]), nxt, "is a value, not a section")
        node = nxt
    last = parts[-1]
    if isinstance(node, list):
        node[_index(key, last, node)] = value
    else:
        node[last] = value
    return out


def _index(key: str, part: str, seq: list) -> int:
    try:
        i = int(part)
    except ValueError:
        raise ConfigError(key, part, "a list position must be a number 0, 1, ...") from None
    if not 0 <= i < len(seq):
        raise ConfigError(key, allowed=f"there is no list position {i}; this list has "
                          f"positions 0 to {len(seq) - 1}")
    return i


def _check_path(parts: list[str], key: str) -> None:
    """Reject unknown keys early, with a suggestion."""
    _known(parts[0], TOP_KEYS, parts[0])
    if parts[0] == "material" and len(parts) > 1:
        _known(parts[1], _MATERIAL_ALL, "material." + parts[1])
        if parts[1] == "branches" and len(parts) > 3:
            _known(parts[3], _BRANCH_ALL, key)
        if parts[1] == "alloy" and len(parts) > 2:
            _known(parts[2], _ALLOY_ALL, key)
    elif parts[0] == "scattering" and len(parts) > 1:
        _known(parts[1], tuple(REGISTRY), "scattering." + parts[1])
        if len(parts) > 2:
            _known(parts[2], tuple(p.name for p in REGISTRY[parts[1]].parameters), key)
    elif parts[0] == "temperature" and len(parts) > 1:
        _known(parts[1], _TEMPERATURE_ALL, key)


def _known(name: str, allowed: Sequence[str], key: str) -> None:
    if name in allowed:
        return
    close = difflib.get_close_matches(str(name), allowed, n=1, cutoff=0.6)
    hint = f"did you mean '{close[0]}'? " if close else ""
    raise ConfigError(key, allowed=f"unknown key; {hint}allowed here: " + ", ".join(allowed))


def _mapping(value: Any, key: str) -> dict:
    if value is None:
        return {}
    if not isinstance(value, dict):
        raise ConfigError(key, value, "must be a section (a mapping of keys to values)")
    for k in value:
        if not isinstance(k, str):
            raise ConfigError(f"{key}.{k}", allowed="keys must be names")
    return value


def parse_value(p: Parameter, value: Any, key: str) -> float:
    """A value as written (number or ``"number unit"``) → SI float, range-checked."""
    bare = p.bare or p.unit
    si = parse_quantity(value, p.unit, key, bare=bare)
    try:
        p.check(key, si, shown=value)
    except ConfigError as exc:
        if isinstance(value, (int, float)) and bare not in ("1", ""):
            raise ConfigError(key, value, f"{exc.allowed} (a bare number is read in {bare}; "
                              "was a unit left out?)") from None
        raise
    return si


# --- validation -------------------------------------------------------------------------------


def config_from_dict(data: Mapping, source: str = "<dict>") -> Config:
    """Validate plain config data and build the model.

    Parameters
    ----------
    data : mapping
        As read from YAML (values as numbers or ``"number unit"`` strings).
    source : str
        Shown in the record.

    Raises
    ------
    ConfigError
        Missing or unknown key, wrong unit or dimension, value out of range, conflicting keys.
    """
    data = copy.deepcopy(dict(data))
    for k in data:
        _known(str(k), TOP_KEYS, str(k))
    spec = _material(_mapping(data.get("material"), "material"))
    scattering = _scattering(_mapping(data.get("scattering"), "scattering"))
    model = Model(spec, scattering)
    temps = None
    if data.get("temperature") is not None:
        temps = _temperature(data["temperature"])
    return Config(model, temps, data, source)


def _material(sec: dict) -> MaterialSpec:
    for k in sec:
        _known(k, _MATERIAL_ALL, f"material.{k}")
    values: dict[str, Any] = {}
    for name, p in MATERIAL_PARAMETERS.items():
        if name in sec:
            values[name] = parse_value(p, sec[name], f"material.{name}")
    name = sec.get("name", "")
    composition = sec.get("composition")
    if composition is not None and (not isinstance(composition, str) or not composition.strip()):
        raise ConfigError("material.composition", composition,
                          "must be a chemical formula, e.g. Mg2Si0.4Sn0.6")
    branches = None
    if sec.get("branches") is not None:
        clash = [k for k in ("debye_temperature", "sound_velocity", "gruneisen",
                             "longitudinal_velocity", "transverse_velocity") if k in sec]
        if clash:
            raise ConfigError(f"material.{clash[0]}", sec[clash[0]],
                              "give either the averaged-branch keys (debye_temperature, "
                              "sound_velocity, gruneisen) or material.branches, not both")
        branches = _branches(sec["branches"])
    alloy = _alloy(sec["alloy"]) if sec.get("alloy") is not None else None
    return MaterialSpec(name=str(name or ""),
                        composition=composition.strip() if composition else None,
                        branches=branches, alloy=alloy, **values)


def _alloy(value: Any) -> AlloySpec:
    sec = _mapping(value, "material.alloy")
    for k in sec:
        _known(k, _ALLOY_ALL, f"material.alloy.{k}")
    ends = sec.get("end_members")
    if not (isinstance(ends, list) and len(ends) == 2
            and all(isinstance(e, str) and e.strip() for e in ends)):
        raise ConfigError("material.alloy.end_members", ends if ends is not None else
                          "(missing)", "must be two formulas, e.g. [Mg2Si, Mg2Sn]")
    if "fraction" not in sec:
        raise ConfigError("material.alloy.fraction", allowed="missing; the alloy fraction x "
                          "(0 = first end member, 1 = second) is required")
    x = parse_value(ALLOY_PARAMETERS["fraction"], sec["fraction"], "material.alloy.fraction")
    return AlloySpec((ends[0].strip(), ends[1].strip()), x)


def _branches(value: Any) -> tuple[BranchSpec, ...]:
    if not isinstance(value, list) or not value:
        raise ConfigError("material.branches", value, "must be a list of branches, e.g. "
                          "[{polarization: longitudinal, ...}, {polarization: transverse, ...}]")
    out = []
    for i, item in enumerate(value):
        key = f"material.branches.{i}"
        sec = _mapping(item, key)
        for k in sec:
            _known(k, _BRANCH_ALL, f"{key}.{k}")
        pol = sec.get("polarization")
        if pol not in ("longitudinal", "transverse"):
            raise ConfigError(f"{key}.polarization", pol if pol is not None else "(missing)",
                              "allowed: longitudinal, transverse")
        for k in ("sound_velocity", "gruneisen"):
            if k not in sec:
                raise ConfigError(f"{key}.{k}", allowed="missing; each branch needs "
                                  "sound_velocity and gruneisen (debye_temperature optional)")
        numbers = {name: parse_value(p, sec[name], f"{key}.{name}")
                   for name, p in BRANCH_PARAMETERS.items() if name in sec}
        dispersion = sec.get("dispersion", "debye")
        if dispersion not in DISPERSIONS:
            raise ConfigError(f"{key}.dispersion", dispersion,
                              "allowed: " + ", ".join(DISPERSIONS))
        out.append(BranchSpec(pol, dispersion=dispersion, **numbers))
    return tuple(out)


def _scattering(sec: dict) -> Scattering:
    for k in sec:
        _known(k, tuple(REGISTRY), f"scattering.{k}")
    mechanisms = []
    if "umklapp" not in sec:
        mechanisms.append(Umklapp())
    for key, cls in REGISTRY.items():
        if key not in sec:
            continue
        if sec[key] is False:  # "boundary: false" / "umklapp: false" switch a term off
            if key == "umklapp":
                mechanisms = [m for m in mechanisms if m.key != "umklapp"]
            continue
        part = _mapping(sec[key], f"scattering.{key}")
        names = tuple(p.name for p in cls.parameters)
        for k in part:
            _known(k, names, f"scattering.{key}.{k}")
        kwargs: dict[str, Any] = {}
        for p in cls.parameters:
            pkey = f"scattering.{key}.{p.name}"
            if p.name not in part:
                if p.default is None:
                    raise ConfigError(pkey, allowed=f"missing; {p.description} is required "
                                      f"when scattering.{key} is given")
                continue
            if p.choices:
                p.check(pkey, part[p.name])
                kwargs[p.name] = part[p.name]
            else:
                kwargs[p.name] = parse_value(p, part[p.name], pkey)
        mech = cls(**kwargs)
        for name in kwargs:  # a parameter that the mechanism as configured does not use
            if not cls.parameter(name).numeric:
                continue
            reason = mech.unused(name)
            default = cls.parameter(name).default
            if reason and kwargs[name] != default:
                raise ConfigError(f"scattering.{key}.{name}", part[name], reason)
        mechanisms.append(mech)
    return Scattering(tuple(mechanisms))


def _temperature(value: Any) -> np.ndarray:
    sec = _mapping(value, "temperature")
    for k in sec:
        _known(k, _TEMPERATURE_ALL, f"temperature.{k}")
    p = TEMPERATURE_PARAMETER
    if "values" in sec:
        extra = [k for k in sec if k != "values"]
        if extra:
            raise ConfigError(f"temperature.{extra[0]}", sec[extra[0]],
                              "give either temperature.values or start/stop/points, not both")
        vals = sec["values"]
        if isinstance(vals, (str, int, float)) and not isinstance(vals, bool):
            vals = [vals]  # a single temperature
        if not isinstance(vals, list) or not vals:
            raise ConfigError("temperature.values", vals, "must be a non-empty list, e.g. "
                              "[300 K, 600 K]")
        if len(vals) > 100_000:
            raise ConfigError("temperature.values", f"{len(vals)} values", "at most 100000")
        T = np.array([parse_value(p, v, f"temperature.values.{i}") for i, v in enumerate(vals)])
        if np.any(np.diff(T) <= 0):
            raise ConfigError("temperature.values", vals, "must be strictly increasing")
        return T
    for k in ("start", "stop", "points"):
        if k not in sec:
            raise ConfigError(f"temperature.{k}", allowed="missing; give start, stop and points "
                              "(or values: [...])")
    start = parse_value(p, sec["start"], "temperature.start")
    stop = parse_value(p, sec["stop"], "temperature.stop")
    points = sec["points"]
    if isinstance(points, float) and points.is_integer():
        points = int(points)
    if isinstance(points, bool) or not isinstance(points, int) or points < 2:
        raise ConfigError("temperature.points", points, "must be a whole number >= 2")
    if points > 100_000:
        raise ConfigError("temperature.points", points, "must be at most 100000")
    if not stop > start:
        raise ConfigError("temperature.stop", sec["stop"],
                          f"must be above temperature.start ({sec['start']})")
    spacing = sec.get("spacing", "linear")
    if spacing not in ("linear", "log"):
        raise ConfigError("temperature.spacing", spacing, "allowed: linear, log")
    if spacing == "log":
        return np.geomspace(start, stop, points)
    return np.linspace(start, stop, points)


# --- writing ------------------------------------------------------------------------------------


def write_values(data: Mapping, model: Model, values: Mapping[str, float],
                 digits: int = 12) -> dict:
    """Plain config data with numeric keys set to SI ``values``, written in display units."""
    out = dict(data)
    for key, value in values.items():
        p = model.parameter(key)
        shown = float(f"{p.shown(float(value)):.{digits}g}")
        out = set_value(out, key, shown if p.shown_unit in ("1", "") else
                        format_quantity(shown, p.shown_unit, digits))
    return out


def config_to_yaml(config: Config, header: str = "") -> str:
    """The config as YAML text, every value written with its unit (re-loadable)."""
    from kappa.io.records import dump_yaml

    return dump_yaml(config.data, header)
