"""Measured transport data: reading, validating and merging onto one temperature grid.

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

The thermal conductivity is either ``kappa`` or the flash trio ``D``, ``rho``, ``cp``
(kappa = D rho cp); ``cp`` may be replaced by Dulong-Petit from a chemical formula. The
electrical conductivity is ``sigma`` or ``resistivity`` (one of them). Other columns are ignored.

Rules for merging (one or more files):

* Each quantity comes from exactly one file; every file has a ``T`` column.
* A **blank cell** means "not measured at this temperature": each quantity lives on the
  temperatures where its cells are filled.
* The **common grid** is the temperatures of the thermal data (``kappa``, or ``D`` for the
  flash trio). Every other quantity is interpolated linearly in T onto it, never
  extrapolated: grid rows outside another quantity's measured range are dropped and reported.
  A density given at a single temperature is used at all temperatures (reported).
* A cell written ``nan`` marks an invalid measurement. NaN policy ``raise`` (default): an error
  naming file, row and column. ``omit``: that row of that file is dropped and reported. A blank
  or NaN temperature is treated the same way.
* Temperatures must be > 0 K and strictly increasing in each file; kappa, D, rho, cp and
  resistivity must be > 0, sigma >= 0; at least 3 rows must remain on the common grid.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.composition import dulong_petit_heat_capacity, mean_molar_mass
from kappa.errors import DataError, warn
from kappa.io.tables import Table, read_table

__all__ = ["Measurements", "QUANTITIES", "read_measurements", "measurements_from_arrays",
           "NAN_POLICIES"]

NAN_POLICIES = ("raise", "omit")


@dataclass(frozen=True)
class _Quantity:
    name: str
    si: str  # SI unit the values are converted to
    what: str
    examples: str
    positive: str  # ">0", ">=0" or ""


#: The accepted measurement columns, in the order they are documented.
QUANTITIES: dict[str, _Quantity] = {
    q.name: q
    for q in (
        _Quantity("T", "K", "temperature", "K, degC", ">0"),
        _Quantity("kappa", "W/(m K)", "total thermal conductivity", "W/(m K), mW/(cm K)", ">0"),
        _Quantity("D", "m^2/s", "thermal diffusivity", "mm^2/s, cm^2/s", ">0"),
        _Quantity("rho", "kg/m^3", "density", "g/cm^3, kg/m^3", ">0"),
        _Quantity("cp", "J/(kg K)", "specific heat capacity", "J/(g K), J/(kg K)", ">0"),
        _Quantity("sigma", "S/m", "electrical conductivity", "S/cm, S/m", ">=0"),
        _Quantity("resistivity", "ohm m", "electrical resistivity", "mOhm cm, uOhm m", ">0"),
        _Quantity("S", "V/K", "Seebeck coefficient", "uV/K, V/K", ""),
    )
}

_ACCEPTED = ("T [K], kappa [W/(m K)] or D [mm^2/s] + rho [g/cm^3] + cp [J/(g K)], "
             "sigma [S/cm] or resistivity [mOhm cm], S [uV/K]")


@dataclass(frozen=True)
class Measurements:
    """Measured properties on one temperature grid, in SI units.

    Attributes
    ----------
    T : numpy.ndarray
        Temperature [K], strictly increasing.
    kappa : numpy.ndarray
        Total thermal conductivity [W/(m K)] (measured, or D rho cp).
    sigma : numpy.ndarray
        Electrical conductivity [S/m] (measured, or 1/resistivity).
    seebeck : numpy.ndarray or None
        Seebeck coefficient [V/K] (with its sign), None if not given.
    diffusivity, density, heat_capacity : numpy.ndarray or None
        Flash data [m^2/s], [kg/m^3], [J/(kg K)] when kappa was computed from them.
    heat_capacity_source : str
        Where c_p came from (a column, Dulong-Petit from a formula, or unused).
    sources : dict
        Quantity name -> where it was read (``file, column 'header'``).
    dropped : tuple of str
        Rows dropped (NaN under ``omit``, or outside another quantity's range), one line each.
    notes : tuple of str
        Other things done that the user should know (interpolation, constant density).
    """

    T: np.ndarray
    kappa: np.ndarray
    sigma: np.ndarray
    seebeck: np.ndarray | None = None
    diffusivity: np.ndarray | None = None
    density: np.ndarray | None = None
    heat_capacity: np.ndarray | None = None
    heat_capacity_source: str = "not used (kappa given)"
    composition: str | None = None
    sources: dict[str, str] = field(default_factory=dict)
    dropped: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()


@dataclass
class _Series:
    """One quantity's measured points (SI), with where they came from."""

    name: str
    T: np.ndarray
    values: np.ndarray
    where: str  # "file, column 'header'"
    source: str  # file name


@dataclass
class _Col:
    values: np.ndarray  # SI
    blank: np.ndarray  # cell was empty ("not measured here")
    where: str  # "file, column 'header'"
    raw: np.ndarray  # as written, for messages


@dataclass
class _Source:
    label: str
    T: _Col
    rows: np.ndarray  # row number shown in messages
    columns: dict[str, _Col]
    row_word: str = "row"

    def at(self, col: _Col, i: int) -> str:
        return f"{col.where}, {self.row_word} {self.rows[i]}"

    def take(self, keep: np.ndarray) -> _Source:
        def sub(c: _Col) -> _Col:
            return _Col(c.values[keep], c.blank[keep], c.where, c.raw[keep])

        return _Source(self.label, sub(self.T), self.rows[keep],
                       {k: sub(c) for k, c in self.columns.items()}, self.row_word)


def _fmt_T(t: float) -> str:
    return f"{t:.6g} K"


def _convert(table: Table, name: str) -> _Col:
    q = QUANTITIES[name]
    col = table.columns[name]
    where = f"{table.source}, column '{col.header}'"
    try:
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
    return _Col(values, blank, where, col.values)


def _read(path: str | Path) -> Table:
    try:
        return read_table(path)
    except DataError as exc:
        if str(exc.allowed).startswith("every column header"):
            raise DataError(exc.key, exc.value,
                            f"every column header must be 'name [unit]'; accepted: {_ACCEPTED}"
                            ) from None
        raise


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


def _canonical(table: Table) -> Table:
    """Rename accepted alternative column names to the canonical ones.

    A column named ``rho`` whose unit is a resistivity (e.g. ``rho [mOhm cm]``) is read as the
    electrical resistivity; with a density unit it is the density.
    """
    from dataclasses import replace

    from kappa.io.units import registry

    lookup = {alias: name for name, aliases in ALIASES.items() for alias in aliases}
    renamed: dict[str, object] = {}
    for col in table.columns.values():
        name = lookup.get(col.name, col.name)
        if col.name == "rho":
            try:
                dim = registry().parse_units(col.unit.replace("µ", "u").replace("μ", "u"))
                if dim.dimensionality == registry().parse_units("ohm m").dimensionality:
                    name = "resistivity"
            except Exception:  # an unknown unit is reported when the column is converted
                pass
        if name in renamed:
            raise DataError(f"{table.source}, column '{col.header}'", col.name,
                            f"gives the same quantity as column '{renamed[name].header}'; "
                            "keep one of them")
        renamed[name] = replace(col, name=name)
    return Table(source=table.source, columns=renamed)


def _source_from_table(table: Table) -> _Source:
    table = _canonical(table)
    if "T" not in table:
        have = ", ".join(c.header for c in table.columns.values())
        raise DataError(table.source, "no column 'T [...]'",
                        f"every file needs a temperature column, e.g. 'T [K]' or 'T [degC]'; "
                        f"the file has: {have}")
    T = _convert(table, "T")
    columns = {name: _convert(table, name) for name in QUANTITIES if name != "T" and name in table}
    return _Source(label=table.source, T=T, rows=np.arange(2, len(T.values) + 2), columns=columns)


def _apply_nan_policy(src: _Source, nan: str, dropped: list[str]) -> _Source:
    """Drop (omit) or reject (raise) rows with NaN cells (not blank cells) or a missing T."""
    for col in (src.T, *src.columns.values()):
        inf = np.isinf(col.values)
        if inf.any():
            i = int(np.flatnonzero(inf)[0])
            raise DataError(src.at(col, i), col.raw[i], "must be finite")
    bad = np.isnan(src.T.values)
    reason = ["missing temperature" if b else "" for b in bad]
    for col in src.columns.values():
        isnan = np.isnan(col.values) & ~col.blank
        for i in np.flatnonzero(isnan & ~bad):
            reason[i] = f"NaN in column {col.where.split(', column ')[-1]}"
        bad = bad | isnan
    if not bad.any():
        return src
    if nan == "raise":
        i = int(np.flatnonzero(bad)[0])
        raise DataError(f"{src.label}, {src.row_word} {src.rows[i]}", reason[i],
                        "NaN is not allowed with --nan raise; use --nan omit to drop such rows, "
                        "or leave the cell blank if the property was not measured there")
    for i in np.flatnonzero(bad):
        t = src.T.values[i]
        at = "" if np.isnan(t) else f" (T = {_fmt_T(t)})"
        dropped.append(f"{src.label}, {src.row_word} {src.rows[i]}{at}: {reason[i]} "
                       "(--nan omit)")
    return src.take(~bad)


def _check_source(src: _Source) -> None:
    T = src.T.values
    if T.size == 0:
        raise DataError(src.label, "no rows", "needs at least 3 rows with data")
    nonpos = np.flatnonzero(T <= 0)
    if nonpos.size:
        i = int(nonpos[0])
        raise DataError(src.at(src.T, i), src.T.raw[i], "temperatures must be > 0 K")
    d = np.diff(T)
    if np.any(d <= 0):
        i = int(np.flatnonzero(d <= 0)[0]) + 1
        kind = "duplicates" if d[i - 1] == 0 else "is not above"
        raise DataError(src.at(src.T, i), src.T.raw[i],
                        f"{kind} the temperature of {src.row_word} {src.rows[i - 1]}; "
                        "temperatures must be strictly increasing, without duplicates")
    for name, col in src.columns.items():
        rule = QUANTITIES[name].positive
        if not rule:
            continue
        bad = (col.values < 0) if rule == ">=0" else (col.values <= 0)
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            words = ">= 0" if rule == ">=0" else "> 0"
            raise DataError(src.at(col, i), col.raw[i],
                            f"the {QUANTITIES[name].what} must be {words}")


def _series(sources: Sequence[_Source]) -> dict[str, _Series]:
    found: dict[str, _Series] = {}
    for src in sources:
        for name, col in src.columns.items():
            if name in found:
                raise DataError(col.where, name,
                                f"already given in {found[name].where}; give each quantity once")
            ok = ~np.isnan(col.values)
            found[name] = _Series(name, src.T.values[ok], col.values[ok], col.where, src.label)
    return found


def _merge(sources: Sequence[_Source], composition: str | None,
           dropped: list[str]) -> Measurements:
    labels = ", ".join(s.label for s in sources)
    found = _series(sources)
    notes: list[str] = []
    # --- which thermal and electrical inputs -------------------------------------------------
    flash = [n for n in ("D", "rho", "cp") if n in found]
    if "kappa" in found and flash:
        raise DataError(found["kappa"].where, "kappa and " + ", ".join(flash),
                        "give either the total 'kappa' or the flash trio 'D', 'rho', 'cp', "
                        "not both (remove or rename the columns not to be used)")
    if "kappa" not in found:
        missing = [n for n in ("D", "rho", "cp") if n not in found
                   and not (n == "cp" and composition)]
        if missing:
            raise DataError(labels, "no thermal conductivity",
                            "needs a column 'kappa [W/(m K)]', or 'D [mm^2/s]', "
                            "'rho [g/cm^3]' and 'cp [J/(g K)]' (cp may come from "
                            f"--composition); missing: {', '.join(missing)}")
    if "sigma" in found and "resistivity" in found:
        raise DataError(found["resistivity"].where, "sigma and resistivity",
                        "give one of 'sigma' or 'resistivity', not both")
    if "sigma" not in found and "resistivity" not in found:
        raise DataError(labels, "no electrical conductivity",
                        "needs a column 'sigma [S/cm]' or 'resistivity [mOhm cm]'")
    base = found["kappa"] if "kappa" in found else found["D"]
    grid = base.T
    keep = np.ones(grid.size, dtype=bool)
    # --- heat capacity -------------------------------------------------------------------------
    cp_source = "not used (kappa given)"
    cp_dp = None
    if "kappa" in found:
        if composition:
            warn(f"--composition {composition} not used: the data give kappa directly")
    else:
        if composition:
            cp_dp = dulong_petit_heat_capacity(composition, "--composition")
            cp_source = (f"Dulong-Petit 3R/M from {composition} (M = "
                         f"{mean_molar_mass(composition, '--composition') * 1e3:.5g} g/mol per "
                         f"atom): {cp_dp / 1e3:.5g} J/(g K)")
            if "cp" in found:
                warn(f"column {found['cp'].where} ignored: Dulong-Petit from --composition "
                     "is used as asked")
                del found["cp"]
        else:
            cp_source = f"measured ({found['cp'].where})"
    # --- interpolate onto the grid, never extrapolate -------------------------------------------
    values: dict[str, np.ndarray] = {}
    for name, s in found.items():
        if s is base:
            values[name] = s.values.copy()
            continue
        if s.T.size == 0:
            raise DataError(s.where, "no values", "the column is empty")
        if s.T.size == 1:
            if name == "rho":
                values[name] = np.full(grid.size, s.values[0])
                notes.append(f"density from {s.where} given at one temperature; used at all "
                             "temperatures")
                continue
            raise DataError(s.where, "one value",
                            "needs values at 2 or more temperatures to interpolate")
        tol = 1e-9 * np.maximum(grid, 1.0)
        inside = (grid >= s.T[0] - tol) & (grid <= s.T[-1] + tol)
        for i in np.flatnonzero(keep & ~inside):
            dropped.append(f"T = {_fmt_T(grid[i])}: outside the measured range of {name} "
                           f"({_fmt_T(s.T[0])} to {_fmt_T(s.T[-1])}, {s.source}); "
                           "not extrapolated")
        keep &= inside
        values[name] = np.interp(grid, s.T, s.values)
        same = s.T.size == grid.size and np.allclose(s.T, grid, rtol=1e-12, atol=0)
        if not same:
            notes.append(f"{name} from {s.where} interpolated linearly onto the temperatures "
                         f"of {base.where}")
    n = int(keep.sum())
    if n < 3:
        raise DataError(labels, f"{n} rows with all quantities",
                        "needs at least 3 rows where every quantity is measured or can be "
                        "interpolated (no extrapolation)")
    T = grid[keep]
    v = {k: a[keep] for k, a in values.items()}
    if "kappa" in v:
        kappa = v["kappa"]
        D = rho = cp = None
    else:
        D, rho = v["D"], v["rho"]
        cp = np.full(T.size, cp_dp) if cp_dp is not None else v["cp"]
        kappa = D * rho * cp
    sigma = v["sigma"] if "sigma" in v else 1.0 / v["resistivity"]
    seebeck = v.get("S")
    if seebeck is not None and np.any(seebeck > 0) and np.any(seebeck < 0):
        warn("the Seebeck coefficient changes sign within the data: mixed or bipolar "
             "conduction; single-band Lorenz numbers do not apply near the sign change")
    return Measurements(
        T=T, kappa=kappa, sigma=sigma, seebeck=seebeck, diffusivity=D, density=rho,
        heat_capacity=cp, heat_capacity_source=cp_source, composition=composition,
        sources={k: s.where for k, s in found.items()}, dropped=tuple(dropped),
        notes=tuple(notes),
    )


def _check_nan_policy(nan: str) -> None:
    if nan not in NAN_POLICIES:
        raise DataError("--nan", nan, "raise or omit")


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
    _check_nan_policy(nan)
    if isinstance(paths, (str, Path)):
        paths = [paths]
    if composition:
        mean_molar_mass(composition, "--composition")  # validate before reading
    tables = [_read(p) for p in paths]
    seen: dict[str, str] = {}
    for p, t in zip(paths, tables, strict=True):
        if t.source in seen:
            raise DataError(str(p), t.source, f"the same file name is given twice ({seen[t.source]})")
        seen[t.source] = str(p)
    dropped: list[str] = []
    sources = []
    for t in tables:
        src = _apply_nan_policy(_source_from_table(t), nan, dropped)
        _check_source(src)
        sources.append(src)
    return _merge(sources, composition, dropped)


def measurements_from_arrays(T: ArrayLike, *, sigma: ArrayLike | None = None,
                             resistivity: ArrayLike | None = None,
                             seebeck: ArrayLike | None = None, kappa: ArrayLike | None = None,
                             diffusivity: ArrayLike | None = None,
                             density: ArrayLike | None = None,
                             heat_capacity: ArrayLike | None = None,
                             composition: str | None = None,
                             nan: str = "raise") -> Measurements:
    """Validate measurements given as SI arrays on one temperature grid (no files).

    Parameters
    ----------
    T : array_like
        Temperature [K], strictly increasing.
    sigma, resistivity : array_like
        Electrical conductivity [S/m] or resistivity [Ohm m] (one of them).
    seebeck : array_like, optional
        Seebeck coefficient [V/K].
    kappa : array_like, optional
        Total thermal conductivity [W/(m K)]; or give ``diffusivity`` [m^2/s], ``density``
        [kg/m^3] and ``heat_capacity`` [J/(kg K)] (or ``composition`` for Dulong-Petit).
    nan : {'raise', 'omit'}
        NaN policy; under ``omit`` rows with a NaN are dropped and listed.

    Returns
    -------
    Measurements
    """
    _check_nan_policy(nan)
    T = np.asarray(T, dtype=float).ravel()
    given = {"kappa": kappa, "D": diffusivity, "rho": density, "cp": heat_capacity,
             "sigma": sigma, "resistivity": resistivity, "S": seebeck}
    columns = {}
    for name, arr in given.items():
        if arr is None:
            continue
        a = np.asarray(arr, dtype=float).ravel()
        if a.size == 1 and name == "rho":
            a = np.full(T.size, float(a[0]))
        if a.size != T.size:
            raise DataError(name, f"{a.size} values", f"needs one value per temperature ({T.size})")
        columns[name] = _Col(a, np.zeros(T.size, dtype=bool), f"arrays, {name}", a)
    src = _Source(label="arrays", T=_Col(T, np.zeros(T.size, dtype=bool), "arrays, T", T),
                  rows=np.arange(T.size), columns=columns, row_word="index")
    dropped: list[str] = []
    src = _apply_nan_policy(src, nan, dropped)
    _check_source(src)
    return _merge([src], composition, dropped)
