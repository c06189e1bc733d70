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

A few spelled-out names are accepted too (:data:`ALIASES`); a column ``rho`` with a
resistivity unit (``rho [mOhm cm]``) is the electrical resistivity. Other columns are
ignored. The rules of the merge (blank cells, interpolation, NaN policy, plausibility) are
those of :mod:`kappa.workflows.measurements`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path

import numpy as np

from kappa.errors import DataError, KappaError
from kappa.io.tables import Table, read_table
from kappa.io.units import parse_unit
from kappa.workflows.measurements import (
    QUANTITIES,
    MeasuredColumn,
    MeasuredFile,
    Measurements,
    merge_files,
)

__all__ = ["read_measurements", "ALIASES"]

_ACCEPTED = ("T [K], kappa [W/(m K)] or D [mm^2/s] + rho [g/cm^3] + cp [J/(g K)], "
             "sigma [S/cm] or resistivity [mOhm cm], S [uV/K]")

#: Other column names accepted for each quantity (exact spelling; the unit decides for 'rho').
ALIASES: dict[str, tuple[str, ...]] = {
    "T": ("temperature", "Temperature", "temp"),
    "kappa": ("kappa_total", "kappa_tot", "thermal_conductivity", "k_total"),
    "D": ("diffusivity", "thermal_diffusivity", "alpha_D"),
    "rho": ("density", "Density"),
    "cp": ("Cp", "c_p", "C_p", "specific_heat", "heat_capacity"),
    "sigma": ("sigma_e", "electrical_conductivity", "el_conductivity"),
    "resistivity": ("rho_e", "electrical_resistivity", "Resistivity"),
    "S": ("seebeck", "Seebeck", "seebeck_coefficient", "Seebeck_coefficient"),
}


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


def _read(path: str | Path) -> Table:
    try:
        return read_table(path)
    except DataError as exc:
        if str(exc.allowed).startswith("every column header"):
            raise DataError(exc.key, exc.value,
                            f"every column header must be 'name [unit]'; accepted: {_ACCEPTED}"
                            ) from None
        raise


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
    lookup = {alias: name for name, aliases in ALIASES.items() for alias in aliases}
    renamed: dict[str, object] = {}
    for col in table.columns.values():
        name = lookup.get(col.name, col.name)
        if col.name == "rho" and _is_resistivity(col.unit, f"{table.source}, '{col.header}'"):
            name = "resistivity"
        if name in renamed:
            raise DataError(f"{table.source}, column '{col.header}'", col.name,
                            f"gives the same quantity as column '{renamed[name].header}'; "
                            "keep one of them")
        renamed[name] = replace(col, name=name)
    return Table(source=table.source, columns=renamed)


def _measured_file(table: Table) -> MeasuredFile:
    table = _canonical(table)
    if "T" not in table:
        have = ", ".join(c.header for c in table.columns.values())
        raise DataError(table.source, "no column 'T [...]'",
                        f"every file needs a temperature column, e.g. 'T [K]' or 'T [degC]'; "
                        f"the file has: {have}")
    T = _convert(table, "T")
    columns = {name: _convert(table, name) for name in QUANTITIES if name != "T" and name in table}
    return MeasuredFile(label=table.source, T=T, rows=np.arange(2, len(T.values) + 2),
                        columns=columns)


def read_measurements(paths: str | Path | Sequence[str | Path], *, nan: str = "raise",
                      composition: str | None = None) -> Measurements:
    """Read one or more measurement CSV files and merge them onto one temperature grid.

    Parameters
    ----------
    paths : path or sequence of paths
        CSV files with ``name [unit]`` headers (see the module docstring for the columns).
    nan : {'raise', 'omit'}
        What to do with NaN cells (blank cells are "not measured here", not NaN).
    composition : str, optional
        Chemical formula; when given, c_p is Dulong-Petit 3R/M for the flash trio.

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
    if isinstance(paths, (str, Path)):
        paths = [paths]
    if composition:
        from kappa.core.composition import mean_molar_mass

        mean_molar_mass(composition, "--composition")  # validate before reading
    tables = [_read(p) for p in paths]
    seen: dict[str, str] = {}
    for p, t in zip(paths, tables, strict=True):
        if t.source in seen:
            raise DataError(str(p), t.source, f"the same file name is given twice ({seen[t.source]})")
        seen[t.source] = str(p)
    return merge_files([_measured_file(t) for t in tables], nan=nan, composition=composition)
