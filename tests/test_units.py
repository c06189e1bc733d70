"""Unit parsing at the edge: lab spellings, conversions, error messages."""

import pytest

from kappa.errors import ConfigError, DataError
from kappa.io.units import parse_quantity, unit_factor

# Conversion factors are SI definitions (common practice, no source).
CASES = [
    ("W/mK", "W/(m K)", 1.0), ("W/m-K", "W/(m K)", 1.0), ("W m-1 K-1", "W/(m K)", 1.0),
    ("mW/(cm K)", "W/(m K)", 0.1), ("S/cm", "S/m", 100.0), ("S cm^-1", "S/m", 100.0),
    ("mOhm cm", "ohm m", 1e-5), ("mΩ·cm", "ohm m", 1e-5), ("uOhm m", "ohm m", 1e-6),
    ("µV/K", "V/K", 1e-6), ("μV/K", "V/K", 1e-6), ("mm^2/s", "m^2/s", 1e-6),
    ("mm2/s", "m^2/s", 1e-6), ("cm²/s", "m^2/s", 1e-4), ("g/cm^3", "kg/m^3", 1000.0),
    ("g cm-3", "kg/m^3", 1000.0), ("J/(g K)", "J/(kg K)", 1000.0), ("J/gK", "J/(kg K)", 1000.0),
    ("angstrom**3", "m**3", 1e-30), ("km/s", "m/s", 1000.0), ("u", "kg", 1.66053906892e-27),
]


@pytest.mark.parametrize(("unit", "target", "factor"), CASES)
def test_lab_spellings(unit, target, factor):
    scale, offset = unit_factor(unit, target, "x")
    assert scale == pytest.approx(factor, rel=1e-9) and offset == 0.0


def test_celsius_offset():
    assert parse_quantity("26.85 degC", "K", "T") == pytest.approx(300.0)
    assert parse_quantity("26.85 °C", "K", "T") == pytest.approx(300.0)


def test_errors_name_key_value_and_kind():
    with pytest.raises(ConfigError, match=r"^g = 5 K: wrong dimension: needs a unit of length"):
        parse_quantity("5 K", "m", "g")
    with pytest.raises(DataError, match="thermal conductivity"):
        unit_factor("uV/K", "W/(m K)", "f.csv, column 'kappa [uV/K]'", error=DataError)
    with pytest.raises(ConfigError, match="unknown unit"):
        parse_quantity("5 blorp", "m", "g")
    with pytest.raises(ConfigError, match="NaN"):
        parse_quantity("nan m", "m", "g")
    with pytest.raises(ConfigError, match="number with a unit"):
        parse_quantity("fast", "m/s", "v")


# --- limits before pint: long expressions, towers of exponents ----------------------------------

@pytest.mark.parametrize("text", ["5 mm**2**2**2**2**2**2**2**2", "5 m^2^2", "1 m**100",
                                  "1 m^13", "1 m**(1/2)", "1 m99999", "1 m**",
                                  "1 " + "m*" * 60 + "m"])
def test_unit_bombs_fail_at_once(text):
    import time

    t0 = time.perf_counter()
    with pytest.raises(ConfigError) as info:
        parse_quantity(text, "m", "scattering.boundary.grain_size")
    assert time.perf_counter() - t0 < 0.5
    message = str(info.value)
    assert message.startswith(f"scattering.boundary.grain_size = {text}: ")
    assert "exponents in units" in message or "at most 100 characters" in message


@pytest.mark.parametrize(("text", "target", "si"), [
    ("20 angstrom**3", "m^3", 20e-30), ("3 1/m^3", "1/m^3", 3.0), ("2 W/(m K)", "W/(m K)", 2.0),
    ("4 mm^2/s", "m^2/s", 4e-6), ("1 cm^-3", "1/m^3", 1e6), ("1 m**(-3)", "1/m^3", 1.0),
])
def test_ordinary_exponents_still_work(text, target, si):
    assert parse_quantity(text, target, "x") == pytest.approx(si, rel=1e-12)


def test_overflow_on_conversion_names_the_key():
    with pytest.raises(ConfigError, match=r"^material.atomic_volume = 1e308 km\*\*3: too large"):
        parse_quantity("1e308 km**3", "m^3", "material.atomic_volume")
    with pytest.raises(DataError, match="^--window = 1e308 MK: too large"):
        parse_quantity("1e308 MK", "K", "--window", error=DataError)


def test_parse_window():
    from kappa.io.units import parse_window

    assert parse_window("100K:600K") == (100.0, 600.0)
    assert parse_window("300:450") == (300.0, 450.0)  # bare numbers are kelvin
    assert parse_window("26.85degC:") == (pytest.approx(300.0), float("inf"))
    assert parse_window(":450 K") == (float("-inf"), 450.0)
    assert parse_window(None) is None and parse_window("  ") is None
    for bad, fragment in [("300K-450K", "LOW:HIGH"), (":", "LOW:HIGH"), ("1:2:3", "LOW:HIGH"),
                          ("600:100", "lower temperature must be below"),
                          ("5 m:10 m", "wrong dimension")]:
        with pytest.raises(DataError, match=fragment):
            parse_window(bad, "--window", error=DataError)
