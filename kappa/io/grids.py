"""Text forms of grids and values, as written on the command line, into SI arrays.

``KEY=START:STOP:N[:log]`` or ``KEY=V1,V2,...`` (sweeps), ``300K,600K`` (temperatures),
``KEY=VALUE`` with units. The unit of every key comes from its declaration in the model.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from kappa.core.model import Model
from kappa.errors import ConfigError
from kappa.io.units import parse_quantity
from kappa.workflows.sweep import Axis

__all__ = ["parse_vary", "parse_temperatures", "parse_key_value", "parse_key_values"]

MAX_AXIS = 10**7  #: values of one axis


def _number(model: Model, key: str, text: str, where: str) -> float:
    p = model.parameter(key)
    value = parse_quantity(text.strip(), p.unit, where, bare=p.bare or p.unit)
    p.check(where, value, shown=text.strip())
    return value


def parse_vary(model: Model, item: str, option: str = "--vary") -> Axis:
    """Parse ``KEY=START:STOP:N[:log]`` or ``KEY=V1,V2,...`` into an :class:`Axis`.

    Values carry units (``10nm``, ``2 km/s``); a bare number is read in the key's default unit
    (as in a config: SI, except ``atomic_mass`` in u). Ranges include both ends; ``log``
    spaces the points geometrically (both ends must be > 0).

    Raises
    ------
    ConfigError
        Unknown or non-numeric key, a temperature key, N < 2 (or above :data:`MAX_AXIS`), bad
        numbers or units, a value outside the key's allowed range, repeated list values.
    """
    if "=" not in item:
        raise ConfigError(option, item, "must be KEY=START:STOP:N[:log] or KEY=V1,V2,..., e.g. "
                          "scattering.boundary.grain_size=10nm:10um:31:log")
    key, _, spec = item.partition("=")
    key, spec = key.strip(), spec.strip()
    if not key or not spec:
        raise ConfigError(option, item, "must be KEY=START:STOP:N[:log] or KEY=V1,V2,...")
    if key.split(".")[0] == "temperature":
        raise ConfigError(f"{option} {key}", allowed="temperatures are not swept as a "
                          "parameter; give them with --at (e.g. --at 300K,600K)")
    where = f"{option} {key}"
    p = model.parameter(key)
    if ":" in spec:
        parts = spec.split(":")
        if len(parts) not in (3, 4):
            raise ConfigError(where, spec, "a range is START:STOP:N or START:STOP:N:log")
        spacing = parts[3].strip().lower() if len(parts) == 4 else "lin"
        if spacing not in ("lin", "log"):
            raise ConfigError(where, spec, f"spacing '{parts[3].strip()}' unknown; allowed: "
                              "lin, log")
        try:
            n = int(parts[2].strip())
        except ValueError:
            raise ConfigError(where, parts[2].strip(), "N must be a whole number >= 2") from None
        if not 2 <= n <= MAX_AXIS:
            raise ConfigError(where, parts[2].strip(), f"N must be a whole number from 2 to "
                              f"{MAX_AXIS:,}")
        start, stop = _number(model, key, parts[0], where), _number(model, key, parts[1], where)
        if start == stop:
            raise ConfigError(where, spec, "START and STOP must differ")
        if spacing == "log":
            if not (start > 0 and stop > 0):
                bad = parts[0] if start <= 0 else parts[1]
                raise ConfigError(where, bad.strip(), "a log range needs both ends > 0")
            values = np.geomspace(start, stop, n)
        else:
            values = np.linspace(start, stop, n)
        values[0], values[-1] = start, stop
        return Axis(key, values, p, spacing == "log", spec)
    texts = spec.split(",")
    if any(not t.strip() for t in texts):
        raise ConfigError(where, spec, "a list is V1,V2,... without empty entries")
    if len(texts) > MAX_AXIS:
        raise ConfigError(where, f"{len(texts)} values", f"at most {MAX_AXIS:,} values")
    values = np.array([_number(model, key, t, where) for t in texts])
    if np.unique(values).size != values.size:
        raise ConfigError(where, spec, "list values must not repeat")
    return Axis(key, values, p, False, spec)


def parse_temperatures(items: Sequence[str], option: str = "--at") -> np.ndarray:
    """Temperatures from ``["300K,600K", "900 K"]`` (comma-separated and/or repeated) [K]."""
    from kappa.core.evaluator import check_temperature

    texts = [t.strip() for item in items for t in str(item).split(",")]
    if not texts or any(not t for t in texts):
        raise ConfigError(option, ",".join(map(str, items)) if items else "",
                          "give one or more temperatures > 0 K, e.g. --at 300K,600K")
    if len(texts) > 100_000:
        raise ConfigError(option, f"{len(texts)} values", "at most 100000 temperatures")
    T = np.array([parse_quantity(t, "K", option) for t in texts])
    bad = ~(T > 0)
    if np.any(bad):
        raise ConfigError(option, texts[int(np.argmax(bad))], "temperatures must be > 0 K")
    return check_temperature(T, option)


def parse_key_value(model: Model, item: str, option: str) -> tuple[str, float]:
    """``KEY=VALUE`` (value with a unit) → (key, SI value)."""
    key, sep, text = item.partition("=")
    key, text = key.strip(), text.strip()
    if not sep or not key or not text:
        raise ConfigError(option, item, "must be KEY=VALUE, e.g. "
                          "scattering.boundary.grain_size=1um")
    return key, _number(model, key, text, f"{option} {key}")


def parse_key_values(model: Model, item: str, option: str, most: int = 12
                     ) -> tuple[str, list[float], list[str]]:
    """``KEY=V1,V2,...`` → (key, SI values, the values as written)."""
    key, sep, rest = item.partition("=")
    key = key.strip()
    texts = [v.strip() for v in rest.split(",") if v.strip()]
    if not sep or not key or not texts:
        raise ConfigError(option, item, "must be KEY=V1,V2,..., e.g. "
                          "scattering.boundary.grain_size=1um,100nm,20nm")
    if len(texts) > most:
        raise ConfigError(f"{option} {key}", f"{len(texts)} values", f"at most {most} values")
    model.check_key(key)
    return key, [_number(model, key, t, f"{option} {key}") for t in texts], texts
