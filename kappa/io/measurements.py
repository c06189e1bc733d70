"""Reading measurement CSV files: column names, units, and the merge onto one grid.

Accepted columns (header ``name [unit]``; the unit is converted, any unit of the right
dimension works):

==============  ===========================  ===========================================
name            quantity                     example units
==============  ===========================  ===========================================
``T``           temperature                  ``K``, ``degC``
``kappa``       total thermal conductivity   ``W/(m K)``, ``mW/(cm K)``
``D``           thermal diffusivity          ``mm^2/s``, ``cm^2/s``
``rho``         density (not resistivity)    ``g/cm^3``, ``kg/m^3``
``cp``          specific heat capacity       ``J/(g K)``, ``J/(kg K)``
``sigma``       electrical conductivity      ``S/cm``, ``S/m``
``resistivity`` electrical resistivity       ``mOhm cm``, ``uOhm m``
``S``           Seebeck coefficient          ``uV/K``, ``V/K``
==============  ===========================  ===========================================

Headers may also be written ``name (unit)`` (``Temperature (°C)``, ``kappa (W/mK)``); names
are matched without regard to case, spaces or hyphens, and a few spelled-out names are accepted
too (:data:`ALIASES`: ``Temperature``, ``Thermal conductivity``, ``Seebeck coefficient``,
...). A column ``rho`` with a resistivity unit (``rho [mOhm cm]``) is the electrical
resistivity. Other columns are ignored. Files may be comma-, semicolon- or tab-separated, with
decimal points or commas, in UTF-8 or Latin-1, or ``.xlsx`` spreadsheets
(:mod:`kappa.io.labfiles`).

**Values given once.** A comment line ``# rho = 3.08 g/cm^3`` (or ``# density: 3.08 g/cm3``,
``# cp = 0.25 J/(g K)``) gives the density or the specific heat of the whole file, as lab
sample sheets do; other comment lines are free text. The same values may be given for a run
(``constants=``, the command's ``--density`` and ``--heat-capacity``).

The rules of the merge (blank cells, interpolation, the extrapolation allowance, NaN policy,
plausibility) are those of :mod:`kappa.workflows.measurements`.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path

import numpy as np

from kappa.errors import DataError, KappaError
from kappa.io.labfiles import parse_decimal, parse_separator
from kappa.io.tables import Table, read_table
from kappa.io.units import parse_quantity, parse_temperature_difference, parse_unit
from kappa.workflows.measurements import (
    CONSTANTS,
    QUANTITIES,
    Constant,
    MeasuredColumn,
    MeasuredFile,
    Measurements,
    check_extrapolation,
    merge_files,
)

__all__ = ["read_measurements", "ALIASES", "canonical_name", "file_constants",
           "parse_constants"]

_ACCEPTED = ("T [K], kappa [W/(m K)] or D [mm^2/s] + rho [g/cm^3] + cp [J/(g K)], "
             "sigma [S/cm] or resistivity [mOhm cm], S [uV/K]")

#: Other column names accepted for each quantity. Matched after lower-casing and turning spaces,
#: hyphens and dots into underscores (``Temp.`` is ``temp``); the unit decides for 'rho'.
ALIASES: dict[str, tuple[str, ...]] = {
    "T": ("temperature", "temp", "t"),
    "kappa": ("kappa_total", "kappa_tot", "thermal_conductivity", "k_total", "total_kappa",
              "total_thermal_conductivity", "κ", "κ_total", "lambda", "λ", "k"),
    "D": ("diffusivity", "thermal_diffusivity", "alpha_d", "d"),
    "rho": ("density", "ρ"),
    "cp": ("c_p", "specific_heat", "heat_capacity", "specific_heat_capacity"),
    "sigma": ("sigma_e", "electrical_conductivity", "el_conductivity", "σ", "conductivity"),
    "resistivity": ("rho_e", "electrical_resistivity", "ρ_e"),
    "S": ("seebeck", "seebeck_coefficient", "thermopower", "s"),
}

_LOOKUP = {alias: name for name, aliases in ALIASES.items() for alias in aliases}
_LOOKUP.update({name.lower(): name for name in ALIASES if len(name) > 1})


def canonical_name(name: str) -> str:
    """The quantity a column name stands for (``Temperature`` → ``T``), else the name."""
    if name in ALIASES:
        return name
    key = "_".join(name.strip().lower().replace("-", " ").replace(".", " ").split())
    return _LOOKUP.get(key, _LOOKUP.get(name, name))


def _convert(table: Table, name: str) -> MeasuredColumn:
    q = QUANTITIES[name]
    col = table.columns[name]
    where = f"{table.source}, column '{col.header}'"
    try:
        with np.errstate(over="ignore", invalid="ignore"):  # overflow is reported by the checks
            values = table.get(name, q.si)
    except DataError as exc:
        if "wrong dimension" not in str(exc.allowed):
            raise
        hint = ""
        if name == "rho":
            hint = ("; 'rho' with a density unit is the density, with a resistivity unit "
                    "(e.g. mOhm cm) the electrical resistivity")
        raise DataError(where, col.unit,
                        f"wrong dimension for the {q.what}: use e.g. {q.examples}{hint}") from None
    blank = col.blank if col.blank is not None else np.zeros(len(values), dtype=bool)
    return MeasuredColumn(values, blank, where, col.values)


def _read(path: str | Path, separator: str | None, decimal: str | None,
          sheet: str | None = None) -> Table:
    from kappa.io.labfiles import SPREADSHEETS, split_sheet

    file, named = split_sheet(path)
    sheet = sheet if (sheet and not named and file.suffix.lower() in SPREADSHEETS) else None
    try:
        return read_table(path, separator=separator, decimal=decimal, sheet=sheet)
    except DataError as exc:
        if str(exc.allowed).startswith("every column header"):
            raise DataError(exc.key, exc.value,
                            "every column header must be 'name [unit]' or 'name (unit)'; "
                            f"accepted: {_ACCEPTED}") from None
        raise


_NOTE = re.compile(r"^\s*([^\s=:]+(?:\s+[^\s=:]+)*)\s*[=:]\s*(\S.*?)\s*$")


#: Notes in one comment line are separated by ';', or by ',' before a name (not a decimal comma).
_NOTE_SPLIT = re.compile(r";|,(?=\s*[^\W\d])")


def file_constants(table: Table) -> list[Constant]:
    """Density or specific heat written once in a comment line: ``# rho = 3.08 g/cm^3``.

    One line may hold several notes (``# sample HH-7; density = 7,9 g/cm^3, mass = 1.2 g``).
    Notes naming other things, or without a number, are free text and ignored.
    """
    found: list[Constant] = []
    pieces = [(line, piece) for line, text in table.comments
              for piece in map(str.strip, _NOTE_SPLIT.split(text))]
    for line, text in pieces:
        m = _NOTE.match(text)
        if not m:
            continue
        name = canonical_name(m.group(1))
        if name not in CONSTANTS:
            continue
        value = m.group(2)
        if not _NUMBER_START.match(value):
            continue  # free text such as "density: measured by Archimedes"
        value = _DECIMAL_COMMA.sub(r"\1.\2", value, count=1)  # 3,08 g/cm^3 (a lab's note)
        where = f"{table.source}, line {line} '{_short(text)}'"
        q = QUANTITIES[name]
        si = parse_quantity(value, q.si, where, error=DataError)
        found.append(Constant(name, si, where))
    return found


_NUMBER_START = re.compile(r"^[-+]?(?:\d|\.\d)")
_DECIMAL_COMMA = re.compile(r"^([-+]?\d+),(\d+)")


def _short(text: str, limit: int = 60) -> str:
    return text if len(text) <= limit else text[: limit - 3] + "..."


def parse_constants(density: str | None = None, heat_capacity: str | None = None
                    ) -> list[Constant]:
    """``--density 3.08g/cm^3`` and ``--heat-capacity 0.25J/(g K)`` as constants (SI)."""
    out = []
    for name, text, option, bare in (("rho", density, "--density", "g/cm^3"),
                                     ("cp", heat_capacity, "--heat-capacity", "J/(g K)")):
        if text is None:
            continue
        q = QUANTITIES[name]
        value = parse_quantity(text, q.si, option, bare=bare, error=DataError)
        if not value > 0:
            raise DataError(option, text, f"the {q.what} must be > 0")
        out.append(Constant(name, value, option))
    return out


def _is_resistivity(unit: str, where: str) -> bool:
    try:
        dim = parse_unit(unit, where, error=DataError).dimensionality
        return dim == parse_unit("ohm m", "ohm m").dimensionality
    except KappaError:  # an unknown or refused unit is reported when the column is converted
        return False


def _canonical(table: Table) -> Table:
    """Rename accepted alternative column names to the canonical ones.

    A column named ``rho`` whose unit is a resistivity (e.g. ``rho [mOhm cm]``) is read as the
    electrical resistivity; with a density unit it is the density.
    """
    renamed: dict[str, object] = {}
    for col in table.columns.values():
        name = canonical_name(col.name)
        if name == "rho" and _is_resistivity(col.unit, f"{table.source}, '{col.header}'"):
            name = "resistivity"
        if name in renamed:
            raise DataError(f"{table.source}, column '{col.header}'", col.name,
                            f"gives the same quantity as column '{renamed[name].header}'; "
                            "keep one of them")
        renamed[name] = replace(col, name=name)
    return replace(table, columns=renamed)


def _measured_file(table: Table) -> MeasuredFile:
    table = _canonical(table)
    if "T" not in table:
        have = ", ".join(c.header for c in table.columns.values())
        raise DataError(table.source, "no column 'T [...]'",
                        f"every file needs a temperature column, e.g. 'T [K]' or 'T [degC]'; "
                        f"the file has: {have}")
    T = _convert(table, "T")
    columns = {name: _convert(table, name) for name in QUANTITIES if name != "T" and name in table}
    rows = table.rows if table.rows is not None else np.arange(2, len(T.values) + 2)
    return MeasuredFile(label=table.source, T=T, rows=rows, columns=columns)


def read_measurements(paths: str | Path | Sequence[str | Path], *, nan: str = "raise",
                      composition: str | None = None, separator: str | None = None,
                      decimal: str | None = None, extrapolate: float | str = 0.0,
                      constants: Sequence[Constant] = (), sheet: str | None = None
                      ) -> Measurements:
    """Read one or more measurement files and merge them onto one temperature grid.

    Parameters
    ----------
    paths : path or sequence of paths
        Tables with ``name [unit]`` headers (see the module docstring for the columns): text
        files or ``.xlsx`` spreadsheets (``book.xlsx:Sheet2`` for another sheet).
    nan : {'raise', 'omit'}
        What to do with NaN cells (blank cells are "not measured here", not NaN).
    composition : str, optional
        Chemical formula; when given, c_p is Dulong-Petit 3R/M for the flash trio.
    separator, decimal : str, optional
        Separator (``,``, ``;``, ``tab``) and decimal mark (``.``, ``,``) of text files;
        detected when not given.
    extrapolate : float or str
        How far a quantity may be extrapolated beyond its measured range [K] (a number, or a
        temperature difference such as ``"5K"``); default 0, never.
    constants : sequence of Constant
        Density or heat capacity given once for the run (:func:`parse_constants`).
    sheet : str, optional
        The sheet read from spreadsheets named without one (default: their first sheet).

    Returns
    -------
    Measurements

    Raises
    ------
    DataError
        Any bad input, naming file, row or column and what is allowed.
    """
    if nan not in ("raise", "omit"):
        raise DataError("--nan", nan, "raise or omit")
    sep, dec = parse_separator(separator, "separator"), parse_decimal(decimal, "decimal")
    if sep is not None and sep == dec:
        raise DataError("decimal", decimal, "the decimal mark must differ from the separator")
    written = extrapolate
    if isinstance(extrapolate, str):
        extrapolate = parse_temperature_difference(extrapolate, "extrapolate", error=DataError)
    try:
        extrapolate = check_extrapolation(extrapolate)
    except DataError as exc:
        raise DataError("extrapolate", written, exc.allowed) from None
    if isinstance(paths, (str, Path)):
        paths = [paths]
    if composition:
        from kappa.core.composition import mean_molar_mass

        mean_molar_mass(composition, "--composition")  # validate before reading
    tables = [_read(p, sep, dec, sheet) for p in paths]
    seen: dict[str, str] = {}
    for p, t in zip(paths, tables, strict=True):
        if t.source in seen:
            raise DataError(str(p), t.source, f"the same file name is given twice ({seen[t.source]})")
        seen[t.source] = str(p)
    notes = [c for t in tables for c in file_constants(t)]
    return merge_files([_measured_file(t) for t in tables], nan=nan, composition=composition,
                       constants=[*notes, *constants], extrapolate=extrapolate)
