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
