"""Chemical formulas: parsing, mean molar mass per atom, Dulong-Petit heat capacity.

Pure functions, SI units (molar masses in kg/mol, heat capacity in J/(kg K)).

Formulas are written as element symbols with optional (decimal) amounts and parentheses:
``PbTe``, ``Bi2Te2.7Se0.3``, ``Mg2Si0.4Sn0.6``, ``(Bi0.25Sb0.75)2Te3``, ``Mg2(Si0.3Sn0.7)0.98Sb0.02``.

Standard atomic weights: IUPAC/CIAAW standard atomic weights (Prohaska et al., "Standard atomic
weights of the elements 2021", Pure Appl. Chem. 94, 573 (2022)); for elements whose standard
weight is an interval the IUPAC conventional (abridged) value is used. The values were entered
from that table by hand; revisions between table editions are below 1e-4 relative, far below
what a Dulong-Petit estimate can resolve. Elements without a standard atomic weight (Tc, Pm,
Po, At, Rn, Fr, Ra, Ac) are not accepted.
"""

from __future__ import annotations

import re

from kappa.core.constants import R
from kappa.errors import DataError

__all__ = ["ATOMIC_WEIGHTS", "parse_formula", "mean_molar_mass", "dulong_petit_heat_capacity"]

#: Standard atomic weights [g/mol] (IUPAC 2021; conventional values for interval elements).
ATOMIC_WEIGHTS: dict[str, float] = {
    "H": 1.008, "He": 4.002602, "Li": 6.94, "Be": 9.0121831, "B": 10.81, "C": 12.011,
    "N": 14.007, "O": 15.999, "F": 18.998403162, "Ne": 20.1797, "Na": 22.98976928,
    "Mg": 24.305, "Al": 26.9815384, "Si": 28.085, "P": 30.973761998, "S": 32.06, "Cl": 35.45,
    "Ar": 39.95, "K": 39.0983, "Ca": 40.078, "Sc": 44.955907, "Ti": 47.867, "V": 50.9415,
    "Cr": 51.9961, "Mn": 54.938043, "Fe": 55.845, "Co": 58.933194, "Ni": 58.6934,
    "Cu": 63.546, "Zn": 65.38, "Ga": 69.723, "Ge": 72.630, "As": 74.921595, "Se": 78.971,
    "Br": 79.904, "Kr": 83.798, "Rb": 85.4678, "Sr": 87.62, "Y": 88.905838, "Zr": 91.224,
    "Nb": 92.90637, "Mo": 95.95, "Ru": 101.07, "Rh": 102.90549, "Pd": 106.42,
    "Ag": 107.8682, "Cd": 112.414, "In": 114.818, "Sn": 118.710, "Sb": 121.760,
    "Te": 127.60, "I": 126.90447, "Xe": 131.293, "Cs": 132.90545196, "Ba": 137.327,
    "La": 138.90547, "Ce": 140.116, "Pr": 140.90766, "Nd": 144.242, "Sm": 150.36,
    "Eu": 151.964, "Gd": 157.25, "Tb": 158.925354, "Dy": 162.500, "Ho": 164.930329,
    "Er": 167.259, "Tm": 168.934219, "Yb": 173.045, "Lu": 174.9668, "Hf": 178.486,
    "Ta": 180.94788, "W": 183.84, "Re": 186.207, "Os": 190.23, "Ir": 192.217,
    "Pt": 195.084, "Au": 196.966570, "Hg": 200.592, "Tl": 204.38, "Pb": 207.2,
    "Bi": 208.98040, "Th": 232.0377, "Pa": 231.03588, "U": 238.02891,
}

_NO_STANDARD_WEIGHT = ("Tc", "Pm", "Po", "At", "Rn", "Fr", "Ra", "Ac")
_TOKEN = re.compile(r"([A-Z][a-z]?)|(\()|(\))|(\d+\.?\d*|\.\d+)|(\s+)")
_EXAMPLES = "e.g. PbTe, Bi2Te2.7Se0.3, Mg2Si0.4Sn0.6, (Bi0.25Sb0.75)2Te3"


def parse_formula(formula: str, key: str = "composition") -> dict[str, float]:
    """Parse a chemical formula into amounts per element (in order of first appearance).

    Parameters
    ----------
    formula : str
        E.g. ``"Bi2Te2.7Se0.3"``; amounts may be decimals; parentheses may nest.
    key : str
        Name used in error messages (e.g. ``--composition``).

    Returns
    -------
    dict
        Element symbol -> amount (atoms per formula unit) [1].

    Raises
    ------
    DataError
        Unknown element, bad syntax, unbalanced parentheses, zero or empty amounts.
    """
    text = str(formula).strip()
    if not text:
        raise DataError(key, formula, f"a chemical formula is needed, {_EXAMPLES}")
    stack: list[dict[str, float]] = [{}]
    last: dict[str, float] | str | None = None  # the element or group an amount applies to
    pos = 0
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if not m:
            raise DataError(key, formula,
                            f"cannot read '{text[pos:]}'; write element symbols with amounts, "
                            f"{_EXAMPLES}")
        symbol, opening, closing, number, space = m.groups()
        pos = m.end()
        if space:
            continue
        if symbol:
            if symbol in _NO_STANDARD_WEIGHT:
                raise DataError(key, formula,
                                f"{symbol} has no standard atomic weight; not supported")
            if symbol not in ATOMIC_WEIGHTS:
                raise DataError(key, formula, f"unknown element symbol '{symbol}' ({_EXAMPLES})")
            stack[-1][symbol] = stack[-1].get(symbol, 0.0) + 1.0
            last = symbol
        elif opening:
            stack.append({})
            last = None
        elif closing:
            if len(stack) == 1:
                raise DataError(key, formula, "unbalanced ')'")
            group = stack.pop()
            if not group:
                raise DataError(key, formula, "empty parentheses")
            for el, n in group.items():
                stack[-1][el] = stack[-1].get(el, 0.0) + n
            last = group
        elif number is not None:
            amount = float(number)
            if last is None:
                raise DataError(key, formula, "an amount must follow an element or ')'")
            if amount <= 0:
                raise DataError(key, formula, "amounts must be > 0")
            if isinstance(last, str):
                stack[-1][last] += amount - 1.0
            else:
                for el, n in last.items():
                    stack[-1][el] += n * (amount - 1.0)
            last = None
    if len(stack) != 1:
        raise DataError(key, formula, "unbalanced '('")
    if not stack[0]:
        raise DataError(key, formula, f"no elements found, {_EXAMPLES}")
    return dict(stack[0])


def mean_molar_mass(formula: str | dict[str, float], key: str = "composition") -> float:
    """Mean molar mass per mole of atoms, M = sum n_i M_i / sum n_i.

    Parameters
    ----------
    formula : str or dict
        A formula (see :func:`parse_formula`) or its parsed amounts.

    Returns
    -------
    float
        Mean molar mass [kg/mol] (numerically equal to the mean atomic mass in u / 1000).
    """
    amounts = parse_formula(formula, key) if isinstance(formula, str) else dict(formula)
    total = sum(amounts.values())
    return sum(n * ATOMIC_WEIGHTS[el] for el, n in amounts.items()) / total * 1e-3


def dulong_petit_heat_capacity(formula: str | dict[str, float], key: str = "composition") -> float:
    """Dulong-Petit specific heat capacity c_p = 3R / M (per mole of atoms).

    3R = 24.943 J/(mol K). A high-temperature classical limit: it overestimates c_p well below
    the Debye temperature and underestimates it in strongly anharmonic solids at high
    temperature (Agne et al., Mater. Today Phys. 6, 83 (2018)).

    Parameters
    ----------
    formula : str or dict
        Chemical formula or parsed amounts.

    Returns
    -------
    float
        c_p [J/(kg K)].
    """
    return 3.0 * R / mean_molar_mass(formula, key)
