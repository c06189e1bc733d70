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

__all__ = ["registry", "parse_quantity", "parse_unit", "unit_factor", "format_quantity",
           "parse_window", "parse_temperature_difference", "MAX_UNIT_LENGTH", "MAX_EXPONENT"]

#: Longest unit expression handed to pint [characters] (``W/(m K)`` has 7).
MAX_UNIT_LENGTH = 100
#: Largest magnitude of an exponent in a unit expression (``cm^-3``, ``angstrom**3``).
MAX_EXPONENT = 12

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?inf|nan)\s*(.*?)\s*$",
                     re.IGNORECASE)


@functools.lru_cache(maxsize=1)
def registry():
    """Return the shared pint unit registry (built on first use, then cached)."""
    import os

    import pint

    from kappa.core.cache import cache_root, writable_folder

    root, _ = cache_root()
    folder = os.path.join(root, "pint") if root else ""
    # the parsed definitions are cached only to start faster; without a writable folder, none
    ureg = pint.UnitRegistry(cache_folder=folder if writable_folder(folder) else None)
    # Spellings common in lab files that pint does not know by default.
    ureg.define("Ohm = ohm")
    return ureg


_COMPACT = [  # compact lab spellings → explicit products (W/mK is not "watt per millikelvin")
    (re.compile(r"/\s*m\s*[-·.]?\s*K\b"), "/(m K)"),
    (re.compile(r"/\s*g\s*[-·.]?\s*K\b"), "/(g K)"),
    (re.compile(r"/\s*kg\s*[-·.]?\s*K\b"), "/(kg K)"),
    (re.compile(r"/\s*mol\s*[-·.]?\s*K\b"), "/(mol K)"),
]
_DEGREES = re.compile(r"°\s*([CF])\b")  # °C, ° C → degC (°F → degF)
_EXPONENT = re.compile(r"(?<=[A-Za-zΩ)])(-?\d+)\b")  # m-1, cm-3, mm2 → m^-1, cm^-3, mm^2


def normalize_unit(text: str) -> str:
    """Rewrite common lab spellings into ones pint parses (``W/mK``, ``m-1``, ``mm2``, ``µ``)."""
    t = text.strip().replace("µ", "u").replace("μ", "u").replace("·", " ").replace("⋅", " ")
    t = _DEGREES.sub(lambda m: "deg" + m.group(1), t.replace("℃", "degC").replace("℉", "degF"))
    t = t.replace("²", "^2").replace("³", "^3").replace("⁻¹", "^-1")
    for pattern, repl in _COMPACT:
        t = pattern.sub(repl, t)
    return _EXPONENT.sub(r"^\1", t)


_POWER = re.compile(r"\*\*|\^")
_EXPONENT_VALUE = re.compile(r"\s*(\()?\s*([-+]?\d+(?:\.\d*)?)\s*(\))?")


def _problem(text: str) -> str | None:
    """Why a unit expression is refused before it reaches pint (None: it may be parsed).

    pint evaluates ``m**2**2**2**2**2`` as a tower of powers (a number with more digits than
    memory holds), so exponents are limited to plain numbers of at most MAX_EXPONENT, written
    once, and the expression to MAX_UNIT_LENGTH characters.
    """
    if len(text) > MAX_UNIT_LENGTH:
        return f"a unit expression of at most {MAX_UNIT_LENGTH} characters"
    normal = normalize_unit(text)
    for m in _POWER.finditer(normal):
        e = _EXPONENT_VALUE.match(normal, m.end())
        rest = normal[e.end():] if e else ""
        if (e is None or bool(e.group(1)) != bool(e.group(3)) or abs(float(e.group(2))) > MAX_EXPONENT
                or _POWER.match(rest.lstrip())):
            return (f"exponents in units must be single numbers between -{MAX_EXPONENT} and "
                    f"{MAX_EXPONENT} (e.g. 'angstrom**3', '1/m^3', 'cm^-3')")
    return None


@functools.lru_cache(maxsize=512)
def _unit(text: str):
    ureg = registry()
    return ureg.parse_units(normalize_unit(text))


def parse_unit(text: str, key: str, *, error: type[KappaError] = ConfigError):
    """Parse a unit expression such as ``"W/(m K)"`` and return the pint unit.

    Raises ``error`` naming ``key`` when the unit is unknown or refused (too long, or an
    exponent that is not a plain number of at most MAX_EXPONENT).
    """
    problem = _problem(text)
    if problem:
        raise error(key, text, problem)
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
    problem = _problem(unit)
    if problem:
        raise error(key, shown, problem)
    result = _factor(unit.strip() or "dimensionless", target.strip() or "dimensionless")
    if result == "unknown":
        raise error(key, shown, "unknown unit (write e.g. 'K', 'nm', 'km/s', 'W/(m K)')")
    if isinstance(result, str):
        raise error(key, shown, f"wrong dimension: needs a unit of {result}")
    return result


#: Version of the stored conversion factors (raise it when the unit definitions change).
_STORE_VERSION = 1
_store: dict = {}


def _store_path() -> str:
    import os

    from kappa.core.cache import cache_root

    root, _ = cache_root()
    return os.path.join(root, "units", f"factors-{_STORE_VERSION}.json") if root else ""


def _load_store() -> dict:
    """Conversion factors found on earlier runs (unit, target → scale, offset), so that a run
    whose units are all known does not load the units library at all (it takes 0.2 s)."""
    if "factors" not in _store:
        import json

        factors: dict = {}
        path = _store_path()
        try:
            with open(path, encoding="utf-8") as fh:
                data = json.load(fh)
            if data.get("pint") == _pint_version():
                factors = {k: tuple(v) for k, v in data["factors"].items()
                           if isinstance(v, list) and len(v) == 2}
        except (OSError, ValueError, KeyError, TypeError, AttributeError):
            factors = {}
        _store["factors"] = factors
    return _store["factors"]


def _pint_version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("pint")
    except PackageNotFoundError:  # pragma: no cover - pint is a dependency
        return ""


def _remember(key: str, value: tuple[float, float]) -> None:
    """Add a factor to the store on disk (atomically; nothing happens if it cannot be
    written)."""
    import json
    import os
    import tempfile

    factors = _load_store()
    factors[key] = value
    path = _store_path()
    if not path:
        return
    try:
        os.makedirs(os.path.dirname(path), exist_ok=True)
        fd, tmp = tempfile.mkstemp(dir=os.path.dirname(path), suffix=".partial")
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            json.dump({"pint": _pint_version(), "factors": factors}, fh)
        os.replace(tmp, path)
    except (OSError, ValueError):
        pass


def _factor(unit: str, target: str):
    key = f"{unit}\x1f{target}"
    hit = _load_store().get(key)
    if hit is not None:
        return hit
    result = _factor_pint(unit, target)
    if isinstance(result, tuple) and len(_load_store()) < 10_000:
        _remember(key, result)
    return result


@functools.lru_cache(maxsize=1024)
def _factor_pint(unit: str, target: str):
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
    result = number * scale + offset
    if not math.isfinite(result):
        raise error(key, value, f"too large: it overflows when converted to {target}")
    return result


def parse_window(text: str | None, option: str = "--window", *,
                 error: type[KappaError] = ConfigError) -> tuple[float, float] | None:
    """Parse a temperature window ``LOW:HIGH`` into kelvin.

    Bare numbers are kelvin; any temperature unit works (``300K``, ``25degC``). Either side
    may be empty and then means open (``300K:`` is T >= 300 K, ``:600K`` is T <= 600 K).

    Parameters
    ----------
    text : str or None
        The window as written; None or blank means "no window".
    option : str
        The option or key named in error messages (``--window``).
    error : type
        The error class to raise (``ConfigError`` or ``DataError``).

    Returns
    -------
    (float, float) or None
        (low, high) [K], with ``-inf``/``inf`` for an open side; None without a window.

    Examples
    --------
    >>> parse_window("100K:600K")
    (100.0, 600.0)
    >>> parse_window("300:")
    (300.0, inf)
    """
    if text is None or not str(text).strip():
        return None
    text = str(text)
    allowed = ("LOW:HIGH with temperatures, e.g. 100K:600K or 300:450 (kelvin); one side may "
               "be empty")
    if text.count(":") != 1:
        raise error(option, text, allowed)
    lo_t, hi_t = (part.strip() for part in text.split(":"))
    if not lo_t and not hi_t:
        raise error(option, text, allowed)
    try:
        lo = parse_quantity(lo_t, "K", option, error=error) if lo_t else -math.inf
        hi = parse_quantity(hi_t, "K", option, error=error) if hi_t else math.inf
    except KappaError as exc:
        raise error(option, text, f"{exc.allowed}; write {allowed}") from None
    if not lo < hi:
        raise error(option, text, "the lower temperature must be below the upper one, "
                    "e.g. 300K:450K")
    return lo, hi


def parse_temperature_difference(value: object, key: str, *,
                                 error: type[KappaError] = ConfigError) -> float:
    """A temperature difference in kelvin: ``5K``, ``5 degC`` (a difference, not 278 K), ``5``.

    Raises ``error`` naming ``key`` for a value without the dimension of a temperature.
    """
    text = str(value).strip()
    match = _NUMBER.match(text)
    if not match or math.isnan(float(match.group(1))):
        raise error(key, value, "a temperature difference, e.g. 5K")
    number, unit = float(match.group(1)), match.group(2).strip()
    if normalize_unit(unit) in ("degC", "delta_degC", "C"):
        return number
    if normalize_unit(unit) in ("degF", "delta_degF"):
        return number * 5.0 / 9.0
    scale, offset = unit_factor(unit or "K", "K", key, error=error, shown=value)
    return number * scale


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
