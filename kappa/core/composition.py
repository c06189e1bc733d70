"""Chemical formulas: parsing, mean molar mass per atom, Dulong-Petit heat capacity.

Pure functions, SI units (molar masses in kg/mol, heat capacity in J/(kg K)).

Formulas are written as element symbols with optional (decimal) amounts and parentheses:
``PbTe``, ``Bi2Te2.7Se0.3``, ``Mg2Si0.4Sn0.6``, ``(Bi0.25Sb0.75)2Te3``, ``Mg2(Si0.3Sn0.7)0.98Sb0.02``.
Square brackets name one crystallographic site (sublattice) explicitly, with site fractions
that add up to 1 and the number of such sites per formula unit after the bracket:
``[Zr0.5Hf0.5][Ni][Sn]``, ``[Bi0.25Sb0.75]2Te3``. ``Va`` is a vacancy (it has no mass and is
not counted as an atom): ``[Mg0.99Va0.01]2Si``. How sites are inferred where no brackets are
written is described in :mod:`kappa.core.disorder`.

Atomic weights: the IUPAC/CIAAW standard atomic weights as distributed by the maintained
``periodictable`` package (for elements whose standard weight is an interval, the
conventional value). Elements without a standard atomic weight (Tc, Pm, Po, At, Rn, Fr, Ra,
Ac and everything beyond U) are not accepted.
"""

from __future__ import annotations

import functools
import re
from dataclasses import dataclass

from kappa.core.constants import R
from kappa.errors import DataError

__all__ = [
    "VACANCY",
    "Node",
    "parse_tree",
    "parse_formula",
    "standard_atomic_weight",
    "mean_molar_mass",
    "dulong_petit_heat_capacity",
]

VACANCY = "Va"  #: the symbol of a vacancy in formulas
_NO_STANDARD_WEIGHT = ("Tc", "Pm", "Po", "At", "Rn", "Fr", "Ra", "Ac")
_TOKEN = re.compile(r"([A-Z][a-z]?)|([(\[])|([)\]])|(\d+\.?\d*|\.\d+)|(\s+)")
_EXAMPLES = "e.g. PbTe, Bi2Te2.7Se0.3, Mg2Si0.4Sn0.6, (Bi0.25Sb0.75)2Te3, [Zr0.5Hf0.5]NiSn"


@functools.lru_cache(maxsize=1)
def _elements() -> dict:
    """Symbol → periodictable element, for the elements with a standard atomic weight."""
    import periodictable

    return {el.symbol: el for el in periodictable.elements
            if 1 <= el.number <= 92 and el.symbol not in _NO_STANDARD_WEIGHT}


def standard_atomic_weight(symbol: str) -> float:
    """Standard atomic weight of an element [g/mol = u] (IUPAC, via ``periodictable``).

    Raises
    ------
    DataError
        Unknown symbol or an element without a standard atomic weight.
    """
    el = _elements().get(symbol)
    if el is None:
        _unknown(symbol, "symbol", symbol)
    return float(el.mass)


def _unknown(symbol: str, key: str, formula: str):
    if symbol in _NO_STANDARD_WEIGHT:
        raise DataError(key, formula, f"{symbol} has no standard atomic weight; not supported")
    import periodictable

    known = {el.symbol for el in periodictable.elements if el.number >= 1}
    if symbol in known:
        raise DataError(key, formula, f"{symbol} has no standard atomic weight; not supported")
    raise DataError(key, formula, f"unknown element symbol '{symbol}' ({_EXAMPLES})")


@dataclass(frozen=True)
class Node:
    """One item of a parsed formula.

    ``kind`` is ``"element"`` (``symbol`` set; ``Va`` for a vacancy), ``"group"`` (parentheses)
    or ``"site"`` (square brackets); ``children`` the items inside a group or site; ``amount``
    the number written after the item (1 if none); ``position`` where it starts in the text
    (0-based).
    """

    kind: str
    amount: float = 1.0
    symbol: str = ""
    children: tuple[Node, ...] = ()
    position: int = 0


def _where(text: str, pos: int) -> str:
    return f"stops at character {pos + 1} ('{text[pos:pos + 12]}')"


def parse_tree(formula: str, key: str = "composition") -> tuple[Node, ...]:
    """Parse a formula into its items (elements, parenthesized groups, bracketed sites).

    Raises
    ------
    DataError
        Naming ``key``, the formula and where reading stopped: unknown element, bad syntax,
        unbalanced or nested brackets, zero amounts, a vacancy outside a site.
    """
    text = str(formula).strip()
    if not text:
        raise DataError(key, formula, f"a chemical formula is needed, {_EXAMPLES}")
    stack: list[tuple[str, int, list[Node]]] = [("", 0, [])]  # (opening, position, items)
    pos = 0
    elements = _elements()
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if not m:
            raise DataError(key, formula, f"cannot read it: {_where(text, pos)}; write element "
                            f"symbols with amounts, {_EXAMPLES}")
        symbol, opening, closing, number, space = m.groups()
        start, pos = pos, m.end()
        items = stack[-1][2]
        if space:
            continue
        if symbol:
            if symbol != VACANCY and symbol not in elements:
                try:
                    _unknown(symbol, key, formula)
                except DataError as exc:
                    raise DataError(key, formula, f"{exc.allowed}; {_where(text, start)}") \
                        from None
            items.append(Node("element", symbol=symbol, position=start))
        elif opening:
            if opening == "[" and any(o == "[" for o, _, _ in stack):
                raise DataError(key, formula, f"sites cannot be nested; {_where(text, start)}")
            if opening == "(" and any(o == "[" for o, _, _ in stack):
                raise DataError(key, formula, "write a site's species without parentheses, "
                                f"e.g. [Zr0.5Hf0.5]; {_where(text, start)}")
            stack.append((opening, start, []))
        elif closing:
            want = {")": "(", "]": "["}[closing]
            if len(stack) == 1 or stack[-1][0] != want:
                raise DataError(key, formula, f"unbalanced '{closing}'; {_where(text, start)}")
            op, at, inner = stack.pop()
            if not inner:
                raise DataError(key, formula, f"empty brackets; {_where(text, at)}")
            stack[-1][2].append(Node("group" if op == "(" else "site", children=tuple(inner),
                                     position=at))
        else:
            amount = float(number)
            if not items or items[-1].amount != 1.0 or _has_amount(text, items[-1], start):
                raise DataError(key, formula, "an amount must follow an element or a bracket; "
                                f"{_where(text, start)}")
            if amount <= 0:
                raise DataError(key, formula, f"amounts must be > 0; {_where(text, start)}")
            last = items[-1]
            items[-1] = Node(last.kind, amount, last.symbol, last.children, last.position)
    if len(stack) != 1:
        op, at, _ = stack[-1]
        raise DataError(key, formula, f"unbalanced '{op}' (opened at character {at + 1})")
    items = stack[0][2]
    if not items:
        raise DataError(key, formula, f"no elements found, {_EXAMPLES}")
    _check_vacancies(items, key, formula, inside_site=False)
    return tuple(items)


def _has_amount(text: str, node: Node, number_start: int) -> bool:
    """True when ``node`` already has an amount written (``Si2 3`` or ``Si2.0 3``)."""
    before = text[:number_start].rstrip()
    return bool(before) and (before[-1].isdigit() or before[-1] == ".")


def _check_vacancies(items, key: str, formula: str, inside_site: bool) -> None:
    for n in items:
        if n.kind == "element" and n.symbol == VACANCY and not inside_site:
            raise DataError(key, formula, "a vacancy 'Va' belongs inside a bracketed site, e.g. "
                            f"[Mg0.99Va0.01]2Si; {_where(str(formula).strip(), n.position)}")
        if n.kind != "element":
            _check_vacancies(n.children, key, formula, inside_site or n.kind == "site")


def _flatten(items, scale: float, out: dict[str, float], vacancies: bool) -> None:
    for n in items:
        if n.kind == "element":
            if n.symbol == VACANCY and not vacancies:
                continue
            out[n.symbol] = out.get(n.symbol, 0.0) + scale * n.amount
        else:
            _flatten(n.children, scale * n.amount, out, vacancies)


def parse_formula(formula: str, key: str = "composition") -> dict[str, float]:
    """Parse a chemical formula into amounts per element (in order of first appearance).

    Parameters
    ----------
    formula : str
        E.g. ``"Bi2Te2.7Se0.3"``; amounts may be decimals; parentheses may nest; square
        brackets mark a site (see the module docstring); vacancies ``Va`` are left out.
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
    out: dict[str, float] = {}
    _flatten(parse_tree(formula, key), 1.0, out, vacancies=False)
    if not out:
        raise DataError(key, formula, f"no atoms, only vacancies; {_EXAMPLES}")
    return out


def mean_molar_mass(formula: str | dict[str, float], key: str = "composition") -> float:
    """Mean molar mass per mole of atoms, M = sum n_i M_i / sum n_i (vacancies not counted).

    Parameters
    ----------
    formula : str or dict
        A formula (see :func:`parse_formula`) or its parsed amounts.

    Returns
    -------
    float
        Mean molar mass [kg/mol] (numerically equal to the mean atomic mass in u / 1000), from
        the standard atomic weights.
    """
    amounts = parse_formula(formula, key) if isinstance(formula, str) else dict(formula)
    total = sum(amounts.values())
    return sum(n * standard_atomic_weight(el) for el, n in amounts.items()) / total * 1e-3


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
