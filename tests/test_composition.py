"""Formula parsing, mean molar mass, Dulong-Petit heat capacity."""

import pytest
import scipy.constants as sc

from kappa.core.composition import (
    dulong_petit_heat_capacity,
    mean_molar_mass,
    parse_formula,
    standard_atomic_weight,
)
from kappa.errors import DataError


@pytest.mark.parametrize("formula, expected", [
    ("PbTe", {"Pb": 1, "Te": 1}),
    ("Bi2Te2.7Se0.3", {"Bi": 2, "Te": 2.7, "Se": 0.3}),
    ("Mg2Si0.4Sn0.6", {"Mg": 2, "Si": 0.4, "Sn": 0.6}),
    ("(Bi0.25Sb0.75)2Te3", {"Bi": 0.5, "Sb": 1.5, "Te": 3}),
    ("Mg2(Si0.3Sn0.7)0.98Sb0.02", {"Mg": 2, "Si": 0.294, "Sn": 0.686, "Sb": 0.02}),
    ("Cu2Se", {"Cu": 2, "Se": 1}),
    ("SnSe SnSe", {"Sn": 2, "Se": 2}),
    ("[Zr0.5Hf0.5][Ni][Sn]", {"Zr": 0.5, "Hf": 0.5, "Ni": 1, "Sn": 1}),
    ("[Mg0.99Va0.01]2Si", {"Mg": 1.98, "Si": 1}),
    ("[Bi0.25Sb0.75]2Te3", {"Bi": 0.5, "Sb": 1.5, "Te": 3}),
])
def test_parse_formula(formula, expected):
    got = parse_formula(formula)
    assert set(got) == set(expected)
    for el, n in expected.items():
        assert got[el] == pytest.approx(n, rel=1e-12)


@pytest.mark.parametrize("formula, message", [
    ("Xx2Te", "unknown element symbol 'Xx'"),
    ("TcO2", "Tc has no standard atomic weight"),
    ("(BiTe", "unbalanced '('"),
    ("BiTe)2", "unbalanced ')'"),
    ("2Bi", "an amount must follow"),
    ("Bi0Te", "amounts must be > 0"),
    ("", "a chemical formula is needed"),
    ("bi2te3", "cannot read"),
    ("Si0.5Ge0.5x", "stops at character 11 ('x')"),
    ("[Si[Ge]]", "sites cannot be nested"),
    ("[Si0.5Ge0.5", "unbalanced '['"),
    ("Si]", "unbalanced ']'"),
    ("SiVa0.1", "a vacancy 'Va' belongs inside a bracketed site"),
    ("[Va]", "no atoms, only vacancies"),
])
def test_parse_formula_errors(formula, message):
    with pytest.raises(DataError) as info:
        parse_formula(formula, "--composition")
    assert message in str(info.value)
    assert str(info.value).startswith("--composition = ")


def test_standard_atomic_weights():
    # spot values, source: IUPAC standard atomic weights (abridged), from memory
    assert standard_atomic_weight("Si") == pytest.approx(28.085, abs=0.001)
    assert standard_atomic_weight("Te") == pytest.approx(127.60, abs=0.01)
    assert standard_atomic_weight("Bi") == pytest.approx(208.980, abs=0.001)
    assert standard_atomic_weight("U") == pytest.approx(238.029, abs=0.001)
    weights = [standard_atomic_weight(s) for s in ("H", "C", "Fe", "Sn", "Pb", "U")]
    assert weights == sorted(weights)
    with pytest.raises(DataError, match="no standard atomic weight"):
        standard_atomic_weight("Np")


def test_mean_molar_mass_hand_worked():
    # hand-worked with IUPAC weights: Mg2Si0.4Sn0.6 = (2*24.305 + 0.4*28.085 + 0.6*118.710)/3
    # = 43.690 g/mol per atom
    assert mean_molar_mass("Mg2Si0.4Sn0.6") * 1e3 == pytest.approx(43.690, abs=1e-3)


def test_dulong_petit_of_a_compound():
    # source: 3R = 24.943 J/(mol K) per mole of atoms (tests/reference_values.py, Dulong-Petit);
    # PbTe, IUPAC weights Pb 207.2, Te 127.60: M = 167.40 g/mol per atom
    # -> cp = 24.943 / 167.40 = 0.14900 J/(g K) (hand arithmetic)
    assert dulong_petit_heat_capacity("PbTe") / 1e3 == pytest.approx(0.14900, rel=2e-4)
    # Bi2Te3: M = (2*208.9804 + 3*127.60)/5 = 160.152 g/mol -> 0.15575 J/(g K) (hand arithmetic)
    assert dulong_petit_heat_capacity("Bi2Te3") / 1e3 == pytest.approx(0.15575, rel=2e-4)


def test_dulong_petit_uses_exact_R():
    # source: scipy.constants R (exact in the 2019 SI)
    assert dulong_petit_heat_capacity({"Si": 1}) == pytest.approx(3 * sc.R / 28.085e-3, rel=1e-12)
