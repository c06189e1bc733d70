"""Model configs: YAML with units, validation, dotted-path overrides.

A config has three sections (see ``kappa new`` for a commented starter and DEVELOPERS.md for the
reference of every key)::

    material:     name, atomic_mass, atomic_volume, and either debye_temperature /
                  sound_velocity (or longitudinal_velocity + transverse_velocity) / gruneisen,
                  or branches: [{polarization, count, debye_temperature, sound_velocity,
                  gruneisen}, ...]
    scattering:   umklapp / boundary / point_defect / normal (parameters declared by each
                  mechanism in kappa.scattering)
    temperature:  {start, stop, points, spacing: linear|log} or {values: [...]}

Values are numbers with units in a string (``645 K``, ``6.08 km/s``, ``200 nm``); a bare number
is read in the key's default unit (SI, except ``atomic_mass`` in u). Nothing is derived behind
the user's back: every derived value is listed in :attr:`Config.derived`.
"""

from __future__ import annotations

import copy
import difflib
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import yaml

from kappa.core.material import (
    POLARIZATIONS,
    Branch,
    Material,
    debye_temperature_from_velocity,
    mean_sound_velocity,
)
from kappa.core.scattering import REGISTRY, Parameter, Scattering, Umklapp
from kappa.errors import ConfigError, KappaError, warn
from kappa.io.units import format_quantity, parse_quantity

__all__ = [
    "Config",
    "load_config",
    "config_from_dict",
    "parse_override",
    "apply_overrides",
    "get_value",
    "set_value",
    "parameter_for",
    "numeric_keys",
    "config_to_yaml",
    "check_temperatures",
    "unused_key",
]


def _q(name, unit, description, *, display=None, positive=True, bare=None, default=None):
    p = Parameter(name, unit, default, description, low=0.0 if positive else -math.inf,
                  low_open=positive, display=display)
    return p, (bare or unit)


#: Numeric material keys: (Parameter, unit a bare number is read in).
MATERIAL_KEYS: dict[str, tuple[Parameter, str]] = {
    "atomic_mass": _q("atomic_mass", "kg", "mean mass per atom M̄", display="u", bare="u"),
    "atomic_volume": _q("atomic_volume", "m**3", "volume per atom V₀", display="angstrom**3"),
    "debye_temperature": _q("debye_temperature", "K", "Debye temperature θ"),
    "sound_velocity": _q("sound_velocity", "m/s", "mean sound velocity v"),
    "longitudinal_velocity": _q("longitudinal_velocity", "m/s", "longitudinal velocity v_L"),
    "transverse_velocity": _q("transverse_velocity", "m/s", "transverse velocity v_T"),
    "gruneisen": _q("gruneisen", "1", "Grüneisen parameter γ"),
    "density": _q("density", "kg/m**3", "mass density ρ (with composition or atomic_mass: "
                  "gives atomic_volume)", display="g/cm**3"),
}
BRANCH_KEYS: dict[str, tuple[Parameter, str]] = {
    "count": _q("count", "1", "number of branches of this polarization"),
    "debye_temperature": MATERIAL_KEYS["debye_temperature"],
    "sound_velocity": MATERIAL_KEYS["sound_velocity"],
    "gruneisen": MATERIAL_KEYS["gruneisen"],
}
TEMPERATURE_KEYS: dict[str, tuple[Parameter, str]] = {
    "start": _q("start", "K", "lowest temperature"),
    "stop": _q("stop", "K", "highest temperature"),
}
TOP_KEYS = ("material", "scattering", "temperature", "notes")
_BRANCH_ALL = ("polarization", *BRANCH_KEYS)
_MATERIAL_ALL = ("name", "composition", *MATERIAL_KEYS, "branches")
_TEMPERATURE_ALL = ("start", "stop", "points", "spacing", "values")


@dataclass(frozen=True)
class Config:
    """A validated config: the model objects plus what they were made from.

    Attributes
    ----------
    material : Material
    scattering : Scattering
    temperature : ndarray or None
        Temperatures of the ``temperature`` section [K] (None if the section is absent).
    data : dict
        The config as plain data (after overrides), values as written.
    source : str
        File the config came from (or ``"<dict>"``).
    derived : dict
        Derived quantities, ``{dotted key: "value unit (how)"}``.
    """

    material: Material
    scattering: Scattering
    temperature: np.ndarray | None
    data: dict = field(repr=False)
    source: str = "<dict>"
    derived: dict = field(default_factory=dict)

    def with_values(self, values: Mapping[str, float]) -> Config:
        """A new config with numeric keys set to SI values (``{"material.gruneisen": 1.2}``)."""
        data = self.data
        for key, value in values.items():
            p = parameter_for(key)
            data = set_value(data, key, format_quantity(float(value), p.unit, 17))
        return config_from_dict(data, self.source, check_physics=False)

    def value(self, key: str) -> float:
        """The resolved SI value of a numeric key (derived values included)."""
        return resolved_value(self, key)

    def require_temperature(self) -> np.ndarray:
        if self.temperature is None:
            raise ConfigError("temperature", allowed="missing; add e.g. 'temperature: {start: "
                              "10 K, stop: 800 K, points: 80}' to the config")
        return self.temperature


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
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise ConfigError(str(path), allowed="config file not found") from None
    except OSError as exc:
        raise ConfigError(str(path), allowed=f"cannot read the config ({exc.strerror})") from None
    try:
        data = yaml.safe_load(text)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1}, column {mark.column + 1}" if mark else ""
        problem = getattr(exc, "problem", None) or "syntax error"
        raise ConfigError(str(path), allowed=f"not valid YAML{where}: {problem}") from None
    if data is None:
        data = {}
    if not isinstance(data, dict):
        raise ConfigError(str(path), allowed="a config must be a mapping with the sections "
                          "material, scattering, temperature")
    data = apply_overrides(data, overrides)
    return config_from_dict(data, str(path))


def parse_override(item: str) -> tuple[str, Any]:
    """Split ``"scattering.boundary.grain_size=50nm"`` into key and (YAML-parsed) value."""
    if "=" not in item:
        raise ConfigError("--set", item, "must be KEY=VALUE, e.g. "
                          "scattering.boundary.grain_size=50nm")
    key, _, text = item.partition("=")
    key = key.strip()
    if not key:
        raise ConfigError("--set", item, "must be KEY=VALUE with a dotted key")
    try:
        value = yaml.safe_load(text) if text.strip() else None
    except yaml.YAMLError:
        value = text.strip()
    if value is None:
        raise ConfigError(f"--set {key}", text, "needs a value")
    return key, value


_RANGE_KEYS = ("start", "stop", "points", "spacing")


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


def _split(key: str) -> list[str]:
    parts = key.split(".")
    if any(not p for p in parts):
        raise ConfigError(key, allowed="not a valid dotted key (e.g. material.gruneisen)")
    return parts


def get_value(data: Mapping, key: str) -> Any:
    """Value at a dotted key of plain config data (KeyError-free: raises ConfigError)."""
    node: Any = data
    for part in _split(key):
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
    parts = _split(key)
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
    elif parts[0] == "scattering" and len(parts) > 1:
        _known(parts[1], tuple(REGISTRY), "scattering." + parts[1])
        if len(parts) > 2:
            _known(parts[2], tuple(p.name for p in REGISTRY[parts[1]].parameters), key)
    elif parts[0] == "temperature" and len(parts) > 1:
        _known(parts[1], _TEMPERATURE_ALL, key)


def _known(name: str, allowed: Sequence[str], key: str) -> None:
    if name in allowed:
        return
    close = difflib.get_close_matches(name, allowed, n=1, cutoff=0.6)
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


def _number(spec: tuple[Parameter, str], value: Any, key: str) -> float:
    p, bare = spec
    si = parse_quantity(value, p.unit, key, bare=bare)
    p.check(key, si, shown=value)
    return si


# --- validation -------------------------------------------------------------------------------


def config_from_dict(data: Mapping, source: str = "<dict>", *, check_physics: bool = True
                     ) -> Config:
    """Validate plain config data and build the model objects.

    Parameters
    ----------
    data : mapping
        As read from YAML (values as numbers or ``"number unit"`` strings).
    source : str
        Shown in the record.
    check_physics : bool
        Issue warnings for dubious-but-legal values (off inside fits and sweeps).

    Raises
    ------
    ConfigError
        Missing or unknown key, wrong unit or dimension, value out of range, conflicting keys.
    """
    data = copy.deepcopy(dict(data))
    for k in data:
        _known(str(k), TOP_KEYS, str(k))
    derived: dict[str, str] = {}
    material = _material(_mapping(data.get("material"), "material"), derived)
    scattering = _scattering(_mapping(data.get("scattering"), "scattering"), material)
    temps = None
    if data.get("temperature") is not None:
        temps = _temperature(data["temperature"])
    config = Config(material, scattering, temps, data, source, derived)
    if check_physics:
        _check_physics(config)
    return config


def _material(sec: dict, derived: dict) -> Material:
    for k in sec:
        _known(k, _MATERIAL_ALL, f"material.{k}")
    mass, volume = _mass_and_volume(sec, derived)
    name = str(sec.get("name", "") or "")
    if "branches" in sec and sec["branches"] is not None:
        clash = [k for k in ("debye_temperature", "sound_velocity", "gruneisen",
                             "longitudinal_velocity", "transverse_velocity") if k in sec]
        if clash:
            raise ConfigError(f"material.{clash[0]}", sec[clash[0]],
                              "give either the averaged-branch keys (debye_temperature, "
                              "sound_velocity, gruneisen) or material.branches, not both")
        branches = _branches(sec["branches"], volume, derived)
        return Material(mass, volume, branches, name)
    if "gruneisen" not in sec:
        raise ConfigError("material.gruneisen", allowed="missing; the Grüneisen parameter is "
                          "required (or give material.branches)")
    gamma = _number(MATERIAL_KEYS["gruneisen"], sec["gruneisen"], "material.gruneisen")
    has_v = "sound_velocity" in sec
    has_lt = "longitudinal_velocity" in sec or "transverse_velocity" in sec
    if has_v and has_lt:
        raise ConfigError("material.sound_velocity", sec["sound_velocity"],
                          "give either sound_velocity or longitudinal_velocity + "
                          "transverse_velocity, not both")
    if has_v:
        v = _number(MATERIAL_KEYS["sound_velocity"], sec["sound_velocity"],
                    "material.sound_velocity")
    elif has_lt:
        for k in ("longitudinal_velocity", "transverse_velocity"):
            if k not in sec:
                raise ConfigError(f"material.{k}", allowed="missing; give both "
                                  "longitudinal_velocity and transverse_velocity")
        vl = _number(MATERIAL_KEYS["longitudinal_velocity"], sec["longitudinal_velocity"],
                     "material.longitudinal_velocity")
        vt = _number(MATERIAL_KEYS["transverse_velocity"], sec["transverse_velocity"],
                     "material.transverse_velocity")
        v = float(mean_sound_velocity(vl, vt))
        derived["material.sound_velocity"] = (f"{v:.6g} m/s (Debye mean of longitudinal and "
                                              "transverse velocities)")
    else:
        raise ConfigError("material.sound_velocity", allowed="missing; give sound_velocity (or "
                          "longitudinal_velocity + transverse_velocity, or branches)")
    if "debye_temperature" in sec:
        theta = _number(MATERIAL_KEYS["debye_temperature"], sec["debye_temperature"],
                        "material.debye_temperature")
    else:
        theta = float(debye_temperature_from_velocity(v, volume))
        derived["material.debye_temperature"] = (f"{theta:.6g} K (from sound velocity and "
                                                 "volume per atom)")
    return Material.averaged(mass, volume, theta, v, gamma, name)


def _mass_and_volume(sec: dict, derived: dict) -> tuple[float, float]:
    """Mean mass per atom [kg] and volume per atom [m³], given or derived (and reported).

    ``composition`` (a formula) gives the mean atomic mass from standard atomic weights;
    ``density`` with the mean atomic mass gives the volume per atom, V₀ = M̄/ρ.
    """
    from kappa.core.composition import mean_molar_mass
    from kappa.core.constants import N_A, u

    for a, b in (("atomic_mass", "composition"), ("atomic_volume", "density")):
        if a in sec and b in sec:
            raise ConfigError(f"material.{b}", sec[b], f"give either material.{a} or "
                              f"material.{b}, not both")
    if "atomic_mass" in sec:
        mass = _number(MATERIAL_KEYS["atomic_mass"], sec["atomic_mass"], "material.atomic_mass")
    elif "composition" in sec:
        formula = sec["composition"]
        if not isinstance(formula, str) or not formula.strip():
            raise ConfigError("material.composition", formula,
                              "must be a chemical formula, e.g. Mg2Si0.4Sn0.6")
        try:
            mass = mean_molar_mass(formula.strip(), "material.composition") / N_A
        except KappaError as exc:
            raise ConfigError(exc.key, exc.value, exc.allowed) from None
        derived["material.atomic_mass"] = (f"{mass / u:.6g} u (mean mass per atom of "
                                           f"{formula.strip()}, IUPAC standard atomic weights)")
    else:
        raise ConfigError("material.atomic_mass", allowed="missing; the mean mass per atom is "
                          f"required (e.g. {_EXAMPLE['atomic_mass']}), or give "
                          "material.composition")
    if "atomic_volume" in sec:
        volume = _number(MATERIAL_KEYS["atomic_volume"], sec["atomic_volume"],
                         "material.atomic_volume")
    elif "density" in sec:
        rho = _number(MATERIAL_KEYS["density"], sec["density"], "material.density")
        volume = mass / rho
        derived["material.atomic_volume"] = (f"{volume / 1e-30:.6g} angstrom**3 (mean atomic "
                                             "mass / density)")
    else:
        raise ConfigError("material.atomic_volume", allowed="missing; the volume per atom is "
                          f"required (e.g. {_EXAMPLE['atomic_volume']}), or give "
                          "material.density")
    return mass, volume


def _branches(value: Any, volume: float, derived: dict) -> tuple[Branch, ...]:
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
        v = _number(BRANCH_KEYS["sound_velocity"], sec["sound_velocity"], f"{key}.sound_velocity")
        g = _number(BRANCH_KEYS["gruneisen"], sec["gruneisen"], f"{key}.gruneisen")
        count = (_number(BRANCH_KEYS["count"], sec["count"], f"{key}.count") if "count" in sec
                 else (1.0 if pol == "longitudinal" else 2.0))
        if "debye_temperature" in sec:
            theta = _number(BRANCH_KEYS["debye_temperature"], sec["debye_temperature"],
                            f"{key}.debye_temperature")
        else:
            theta = float(debye_temperature_from_velocity(v, volume))
            derived[f"{key}.debye_temperature"] = (f"{theta:.6g} K (from the branch's sound "
                                                   "velocity and volume per atom)")
        out.append(Branch(theta, v, g, count, pol))
    assert all(b.polarization in POLARIZATIONS for b in out)
    return tuple(out)


def _scattering(sec: dict, material: Material) -> Scattering:
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
        kwargs: dict[str, Any] = {}
        for k in part:
            _known(k, names, f"scattering.{key}.{k}")
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
                kwargs[p.name] = _number((p, p.unit), part[p.name], pkey)
        mechanisms.append(cls(**kwargs))
    scattering = Scattering(tuple(mechanisms))
    _check_normal_form(sec.get("normal"), scattering)
    normal = scattering.normal
    if normal is not None and normal.form == "branch" and not material.per_branch:
        raise ConfigError("scattering.normal.form", "branch",
                          "the branch forms need material.branches; use form: ratio for the "
                          "averaged model")
    return scattering


def _check_normal_form(written: Any, scattering: Scattering) -> None:
    """A normal-process parameter that the chosen form does not use is an error, not ignored."""
    n = scattering.get("normal")
    if n is None or not isinstance(written, dict):
        return
    if n.form == "branch" and n.ratio != 0.0:
        raise ConfigError("scattering.normal.ratio", written.get("ratio"),
                          "is used only with form: ratio (this config has form: branch; "
                          "its strength is scattering.normal.scale)")
    if n.form == "ratio" and n.scale != 1.0:
        raise ConfigError("scattering.normal.scale", written.get("scale"),
                          "is used only with form: branch (this config has form: ratio; "
                          "its strength is scattering.normal.ratio)")


def _temperature(value: Any) -> np.ndarray:
    sec = _mapping(value, "temperature")
    for k in sec:
        _known(k, _TEMPERATURE_ALL, f"temperature.{k}")
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
        T = np.array([_number(TEMPERATURE_KEYS["start"], v, f"temperature.values.{i}")
                      for i, v in enumerate(vals)])
        if np.any(np.diff(T) <= 0):
            raise ConfigError("temperature.values", vals, "must be strictly increasing")
        return T
    for k in ("start", "stop", "points"):
        if k not in sec:
            raise ConfigError(f"temperature.{k}", allowed="missing; give start, stop and points "
                              "(or values: [...])")
    start = _number(TEMPERATURE_KEYS["start"], sec["start"], "temperature.start")
    stop = _number(TEMPERATURE_KEYS["stop"], sec["stop"], "temperature.stop")
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


def _check_physics(config: Config) -> None:
    m = config.material
    for mech in config.scattering:
        mech.check_physics(m)
    vol_A3 = m.atomic_volume / 1e-30
    if not 1.0 <= vol_A3 <= 1000.0:
        warn(f"material.atomic_volume = {vol_A3:.4g} angstrom**3 per atom is outside 1–1000 "
             "angstrom**3; was a unit left out? (a bare number is read in m**3)")
    mass_u = m.atomic_mass / 1.66053906660e-27
    if not 1.0 <= mass_u <= 300.0:
        warn(f"material.atomic_mass = {mass_u:.4g} u per atom is outside 1–300 u")


def check_temperatures(config: Config, temperature) -> None:
    """Warn about temperatures the model is not meant for (called where they are used).

    T above 3θ (the largest branch θ); without boundary scattering, T below θ/30 where κ_L
    grows without bound as Umklapp freezes out.
    """
    T = np.atleast_1d(np.asarray(temperature, dtype=float))
    if T.size == 0:
        return
    theta = max(b.debye_temperature for b in config.material.branches)
    if T.max() > 3.0 * theta:
        warn(f"temperatures up to {T.max():.4g} K exceed 3θ ({3 * theta:.4g} K); the "
             "Debye/Callaway model is not meant for that range")
    if config.scattering.get("boundary") is None and T.min() < theta / 30:
        warn("no boundary scattering: below about θ/30 "
             f"({theta / 30:.3g} K) κ_L grows without bound as Umklapp freezes out; add "
             "scattering.boundary with the grain or sample size")


_EXAMPLE = {"atomic_mass": "'28.0855 u'", "atomic_volume": "'20.02 angstrom**3'"}


# --- keys for fits and sweeps ----------------------------------------------------------------


def parameter_for(key: str) -> Parameter:
    """The declaration of a numeric dotted key (unit, range), or ConfigError."""
    parts = _split(key)
    _check_path(parts, key)
    if parts[0] == "material" and len(parts) == 2 and parts[1] in MATERIAL_KEYS:
        return MATERIAL_KEYS[parts[1]][0]
    if (parts[0] == "material" and len(parts) == 4 and parts[1] == "branches"
            and parts[3] in BRANCH_KEYS):
        return BRANCH_KEYS[parts[3]][0]
    if parts[0] == "scattering" and len(parts) == 3:
        p = next(p for p in REGISTRY[parts[1]].parameters if p.name == parts[2])
        if p.numeric:
            return p
    if parts[0] == "temperature" and len(parts) == 2 and parts[1] in TEMPERATURE_KEYS:
        return TEMPERATURE_KEYS[parts[1]][0]
    raise ConfigError(key, allowed="not a numeric parameter (see kappa check for the numeric "
                      "keys of a config)")


def unused_key(config: Config, key: str) -> str | None:
    """Why a numeric key has no effect in this config (None if it has one).

    A fit or sweep over such a key would report a parameter the model never sees.
    """
    parts = key.split(".")
    if parts[0] != "scattering" or len(parts) != 3:
        return None
    mech = config.scattering.get(parts[1])
    if parts[1] == "normal" and mech is not None:
        if mech.form == "branch" and parts[2] == "ratio":
            return ("scattering.normal.ratio is used only with form: ratio (this config has "
                    "form: branch; its strength is scattering.normal.scale)")
        if mech.form == "ratio" and parts[2] == "scale":
            return ("scattering.normal.scale is used only with form: branch (this config has "
                    "form: ratio; its strength is scattering.normal.ratio)")
    if parts[1] == "umklapp" and parts[2] == "exponent_divisor" and mech is not None \
            and mech.scale == 0:
        return "Umklapp is switched off (scattering.umklapp.scale = 0)"
    return None


def numeric_keys(config: Config) -> dict[str, Parameter]:
    """Every numeric key a fit or sweep can vary in this config (dotted path → Parameter)."""
    keys: dict[str, Parameter] = {}
    m = config.material
    sec = config.data.get("material", {})
    keys["material.atomic_mass"] = MATERIAL_KEYS["atomic_mass"][0]
    keys["material.atomic_volume"] = MATERIAL_KEYS["atomic_volume"][0]
    if "density" in sec:  # the volume is derived from it; vary the density instead
        keys.pop("material.atomic_volume")
        keys["material.density"] = MATERIAL_KEYS["density"][0]
    if "composition" in sec:  # the mass is derived from the formula
        keys.pop("material.atomic_mass")
    if m.per_branch:
        for i in range(len(m.branches)):
            for k in ("debye_temperature", "sound_velocity", "gruneisen"):
                keys[f"material.branches.{i}.{k}"] = BRANCH_KEYS[k][0]
    else:
        for k in ("debye_temperature", "sound_velocity", "gruneisen"):
            keys[f"material.{k}"] = MATERIAL_KEYS[k][0]
        if "longitudinal_velocity" in sec:
            keys.pop("material.sound_velocity")
            for k in ("longitudinal_velocity", "transverse_velocity"):
                keys[f"material.{k}"] = MATERIAL_KEYS[k][0]
    for key, cls in REGISTRY.items():
        for p in cls.parameters:
            if p.numeric:
                keys[f"scattering.{key}.{p.name}"] = p
    return keys


def resolved_value(config: Config, key: str) -> float:
    """SI value of a numeric key as the model uses it (defaults and derived values included)."""
    parts = _split(key)
    m = config.material
    if parts[0] == "material":
        if parts[1] in ("atomic_mass", "atomic_volume"):
            return float(getattr(m, parts[1]))
        if parts[1] == "branches":
            return float(getattr(m.branches[_index(key, parts[2], list(m.branches))], parts[3]))
        if parts[1] in ("debye_temperature", "sound_velocity", "gruneisen") and not m.per_branch:
            return float(getattr(m.branches[0], parts[1]))
        if parts[1] in ("longitudinal_velocity", "transverse_velocity", "density"):
            p = MATERIAL_KEYS[parts[1]]
            return _number(p, get_value(config.data, key), key)
    if parts[0] == "scattering" and len(parts) == 3:
        mech = config.scattering.get(parts[1])
        if mech is None:
            p = parameter_for(key)
            return float(p.default) if isinstance(p.default, (int, float)) else math.nan
        return float(getattr(mech, parts[2]))
    raise ConfigError(key, allowed="not a numeric parameter of this config")


def config_to_yaml(config: Config, header: str = "") -> str:
    """The config as YAML text, every value written with its unit (re-loadable)."""
    from kappa.io.records import dump_yaml

    return dump_yaml(config.data, header)
