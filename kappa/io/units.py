"""The one gateway to the units library (pint).

Everything inside kappa is SI floats; units are converted here, once, at the edge. Values are
written ``"<number> <unit>"`` (``"6.08 km/s"``, ``"200 nm"``, ``"20.02 angstrom**3"``); a bare
number means the unit documented for that key.
"""

from __future__ import annotations

import functools
import math
import re

from kappa.errors import ConfigError, KappaError

__all__ = ["registry", "parse_quantity", "parse_unit", "unit_factor", "format_quantity"]

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?inf|nan)\s*(.*?)\s*$",
                     re.IGNORECASE)


@functools.lru_cache(maxsize=1)
def registry():
    """Return the shared pint unit registry (built on first use, then cached)."""
    import pint

    ureg = pint.UnitRegistry(cache_folder=":auto:")
    # Spellings common in lab files that pint does not know by default.
    ureg.define("Ohm = ohm")
    return ureg


_COMPACT = [  # compact lab spellings → explicit products (W/mK is not "watt per millikelvin")
    (re.compile(r"/\s*m\s*[-·.]?\s*K\b"), "/(m K)"),
    (re.compile(r"/\s*g\s*[-·.]?\s*K\b"), "/(g K)"),
    (re.compile(r"/\s*kg\s*[-·.]?\s*K\b"), "/(kg K)"),
    (re.compile(r"/\s*mol\s*[-·.]?\s*K\b"), "/(mol K)"),
]
_EXPONENT = re.compile(r"(?<=[A-Za-zΩ)])(-?\d+)\b")  # m-1, cm-3, mm2 → m^-1, cm^-3, mm^2


def normalize_unit(text: str) -> str:
    """Rewrite common lab spellings into ones pint parses (``W/mK``, ``m-1``, ``mm2``, ``µ``)."""
    t = text.strip().replace("µ", "u").replace("μ", "u").replace("·", " ").replace("⋅", " ")
    t = t.replace("²", "^2").replace("³", "^3").replace("⁻¹", "^-1")
    for pattern, repl in _COMPACT:
        t = pattern.sub(repl, t)
    return _EXPONENT.sub(r"^\1", t)


@functools.lru_cache(maxsize=512)
def _unit(text: str):
    ureg = registry()
    return ureg.parse_units(normalize_unit(text))


def parse_unit(text: str, key: str, *, error: type[KappaError] = ConfigError):
    """Parse a unit expression such as ``"W/(m K)"`` and return the pint unit.

    Raises ``error`` naming ``key`` when the unit is unknown.
    """
    try:
        return _unit(text.strip() or "dimensionless")
    except Exception:  # pint raises several unrelated exception types for bad input
        raise error(key, text, "unknown unit (write e.g. 'K', 'nm', 'km/s', 'W/(m K)')") from None


def unit_factor(unit: str, target: str, key: str, *, error: type[KappaError] = ConfigError,
                shown: object = None):
    """Return ``(scale, offset)`` so that ``value_in_target = value * scale + offset``.

    ``offset`` is non-zero only for temperatures given in degrees Celsius or Fahrenheit.
    ``shown`` is the value quoted in an error message (default: the unit).
    """
    shown = unit if shown is None else shown
    result = _factor(unit.strip() or "dimensionless", target.strip() or "dimensionless")
    if result == "unknown":
        raise error(key, shown, "unknown unit (write e.g. 'K', 'nm', 'km/s', 'W/(m K)')")
    if isinstance(result, str):
        raise error(key, shown, f"wrong dimension: needs a unit of {result}")
    return result


@functools.lru_cache(maxsize=1024)
def _factor(unit: str, target: str):
    ureg = registry()
    try:
        src = _unit(unit)
    except Exception:  # pint raises several unrelated exception types for bad input
        return "unknown"
    dst = _unit(target)
    if src.dimensionality != dst.dimensionality:
        return _describe(dst)
    q0 = ureg.Quantity(0.0, src).to(dst).magnitude
    q1 = ureg.Quantity(1.0, src).to(dst).magnitude
    return q1 - q0, q0


def parse_quantity(value: object, target: str, key: str, *, bare: str | None = None,
                   error: type[KappaError] = ConfigError) -> float:
    """Convert ``value`` (a number, or a string ``"<number> <unit>"``) to a float in ``target``.

    Parameters
    ----------
    value : float or str
        The value as written by the user.
    target : str
        The unit the result is expressed in (kappa uses SI internally).
    key : str
        The name used in error messages.
    bare : str, optional
        The unit a bare number is read in; defaults to ``target``.
    error : type
        The error class to raise (``ConfigError`` for configs, ``DataError`` for tables).
    """
    if isinstance(value, bool) or value is None:
        raise error(key, value, f"must be a number with a unit, e.g. '1.0 {target}'")
    if isinstance(value, (int, float)):
        number, unit = float(value), (bare or target)
    elif isinstance(value, str):
        match = _NUMBER.match(value)
        if not match:
            raise error(key, value, f"must be a number with a unit, e.g. '1.0 {target}'")
        number = float(match.group(1))
        unit = match.group(2) or (bare or target)
    else:
        raise error(key, value, f"must be a number with a unit, e.g. '1.0 {target}'")
    if math.isnan(number):
        raise error(key, value, "must be a number, not NaN")
    if math.isinf(number):
        raise error(key, value, "must be finite")
    scale, offset = unit_factor(unit, target, key, error=error, shown=value)
    return number * scale + offset


def format_quantity(value: float, unit: str, digits: int = 12) -> str:
    """Format an SI-converted value for a YAML file or a table: ``"1.5e-07 m"``."""
    return f"{value:.{digits}g} {unit}" if unit not in ("", "1") else f"{value:.{digits}g}"


_KINDS = [
    ("K", "temperature (e.g. K)"),
    ("m", "length (e.g. nm, um, m)"),
    ("m/s", "speed (e.g. m/s, km/s)"),
    ("kg", "mass (e.g. u, kg)"),
    ("m^3", "volume (e.g. angstrom**3, nm**3)"),
    ("dimensionless", "a plain number"),
    ("W/(m K)", "thermal conductivity (e.g. W/(m K))"),
    ("S/m", "electrical conductivity (e.g. S/cm, S/m)"),
    ("ohm m", "electrical resistivity (e.g. mOhm cm, uOhm m)"),
    ("V/K", "Seebeck coefficient (e.g. uV/K)"),
    ("m^2/s", "diffusivity (e.g. mm^2/s)"),
    ("kg/m^3", "density (e.g. g/cm^3)"),
    ("J/(kg K)", "specific heat (e.g. J/(g K))"),
    ("W ohm/K^2", "Lorenz number (e.g. W Ohm/K^2)"),
    ("1/m^3", "number density (e.g. 1/m^3)"),
]


def _describe(unit) -> str:
    for text, words in _KINDS:
        if _unit(text).dimensionality == unit.dimensionality:
            return words
    return f"the dimension of {unit:~}"


def convert(value, unit: str, target: str):
    """``value`` in ``unit`` expressed in ``target`` (float or array)."""
    if unit == target:
        return value
    scale, offset = unit_factor(unit, target, "unit")
    return value * scale + offset


def parse_window(text: str | None, option: str = "--window") -> tuple[float, float] | None:
    """``"100K:600K"`` → (100.0, 600.0) [K]; either side may be empty (open); bare numbers are
    kelvin and ``degC`` works. None or blank → None."""
    import math as _math

    if text is None or not str(text).strip():
        return None
    text = str(text)
    allowed = "must be LOW:HIGH with temperatures, e.g. 100K:600K (one side may be empty)"
    if text.count(":") != 1:
        raise ConfigError(option, text, allowed)
    lo_t, hi_t = (s.strip() for s in text.split(":"))
    lo = parse_quantity(lo_t, "K", option) if lo_t else -_math.inf
    hi = parse_quantity(hi_t, "K", option) if hi_t else _math.inf
    if not lo < hi:
        raise ConfigError(option, text, "the lower temperature must be below the upper one")
    return lo, hi
