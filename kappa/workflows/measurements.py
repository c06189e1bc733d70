"""Measured transport data: validating and merging onto one temperature grid (no I/O).

The quantities (canonical names, SI units; see :data:`QUANTITIES`): ``T`` temperature,
``kappa`` total thermal conductivity, ``D`` thermal diffusivity, ``rho`` density, ``cp``
specific heat capacity, ``sigma`` electrical conductivity, ``resistivity`` electrical
resistivity, ``S`` Seebeck coefficient. Files are read, their column names and units
understood, by :mod:`kappa.io.measurements`; this module receives :class:`MeasuredFile`
objects (or arrays) in SI units.

The thermal conductivity is either ``kappa`` or the flash trio ``D``, ``rho``, ``cp``
(kappa = D rho cp); ``cp`` may be replaced by Dulong-Petit from a chemical formula. The
electrical conductivity is ``sigma`` or ``resistivity`` (one of them).

Rules for merging (one or more files):

* Each quantity comes from exactly one file; every file has a ``T`` column.
* A **blank cell** means "not measured at this temperature": each quantity lives on the
  temperatures where its cells are filled.
* The **common grid** is the temperatures of the thermal data (``kappa``, or ``D`` for the
  flash trio). Every other quantity is interpolated linearly in T onto it. It is not
  extrapolated unless an allowance is given (``extrapolate`` [K], ``--extrapolate 5K``): grid
  rows up to that far outside another quantity's measured range are kept with a linear
  extrapolation from the two nearest measured points, each reported; rows farther out are
  dropped and reported. A density given at a single temperature is used at all temperatures
  (reported), and so is a constant (:class:`Constant`: density or heat capacity given once, in
  a file's note or as an option).
* A cell written ``nan`` marks an invalid measurement. NaN policy ``raise`` (default): an error
  naming file, row and column. ``omit``: that row of that file is dropped and reported. A blank
  or NaN temperature is treated the same way.
* Temperatures must be > 0 K and strictly increasing in each file; kappa, D, rho, cp and
  resistivity must be > 0, sigma >= 0; at least 3 rows must remain on the common grid.

Plausibility (see :data:`PLAUSIBLE`): a value that no solid shows prints one warning per
quantity (most often a unit mix-up, e.g. a Seebeck column in V/K labelled uV/K); a value that
cannot be physical at all (|S| above 1 V/K, or a number that is not finite after the unit
conversion) is an error naming file, row and column.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.composition import dulong_petit_heat_capacity, mean_molar_mass
from kappa.errors import DataError, warn

__all__ = ["Measurements", "MeasuredColumn", "MeasuredFile", "Constant", "QUANTITIES",
           "CONSTANTS", "MAX_EXTRAPOLATION", "merge_files", "check_extrapolation",
           "measurements_from_arrays", "NAN_POLICIES", "PLAUSIBLE", "SEEBECK_IMPOSSIBLE"]

NAN_POLICIES = ("raise", "omit")

#: What solids show, in SI units: (low, high, what lies beyond). Outside, kappa warns (one line
#: per quantity) and continues. Basis (common practice, values from memory): the largest
#: Seebeck coefficients of semiconductors near room temperature are below about 1-2 mV/K
#: (larger values occur only at cryogenic temperatures, e.g. phonon drag); silver, the best
#: conductor at room temperature, has sigma = 6.3e7 S/m, and a sample below 1e-6 S/m is an
#: insulator for which the split means nothing; diamond conducts heat best at room temperature
#: with about 2,000 W/(m K), and dense solids stay above about 0.01 W/(m K) (aerogels reach
#: about 0.015); few measurements go above 3,000 K.
PLAUSIBLE: dict[str, tuple[float, float, str]] = {
    "S": (0.0, 2.0e-3, "more than any solid shows at measurement temperatures"),
    "sigma": (1.0e-6, 1.0e8, "outside what solids show (silver: 6.3e7 S/m; below 1e-6 S/m "
              "an insulator)"),
    "kappa": (0.01, 3000.0, "outside what solids show (diamond: about 2,000 W/(m K); dense "
              "solids above 0.01)"),
    "T": (0.0, 3000.0, "above what transport measurements reach"),
}
#: |S| above this [V/K] cannot be physical: an error (1 V/K, common practice, no source).
SEEBECK_IMPOSSIBLE = 1.0


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


@dataclass(frozen=True)
class Measurements:
    """Measured properties on one temperature grid, in SI units.

    Attributes
    ----------
    temperature : numpy.ndarray
        Temperature [K], strictly increasing.
    kappa : numpy.ndarray
        Total thermal conductivity [W/(m K)] (measured, or D rho cp).
    electrical_conductivity : numpy.ndarray
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

    temperature: np.ndarray
    kappa: np.ndarray
    electrical_conductivity: np.ndarray
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
    constant: bool = False


#: Quantities that may be given once for a whole file or run (a sample-sheet value).
CONSTANTS = ("rho", "cp")
#: Largest extrapolation allowance [K]: beyond a few kelvin a measured curve may bend.
MAX_EXTRAPOLATION = 50.0


@dataclass(frozen=True)
class Constant:
    """A quantity given once (density or heat capacity), used at every temperature.

    Attributes
    ----------
    name : str
        ``rho`` or ``cp`` (see :data:`CONSTANTS`).
    value : float
        In the SI unit of the quantity.
    where : str
        Where it was given (``flash.csv, line 2 'rho = 3.08 g/cm^3'`` or ``--density``).
    """

    name: str
    value: float
    where: str


@dataclass
class MeasuredColumn:
    """One measured column in SI units, as read (before any check).

    Attributes
    ----------
    values : numpy.ndarray
        Values in the SI unit of the quantity (NaN for blank and ``nan`` cells).
    blank : numpy.ndarray
        Bool per row: the cell was empty ("not measured here"), not written ``nan``.
    where : str
        ``file, column 'header'`` for messages.
    raw : numpy.ndarray
        The values as written (before unit conversion), for messages.
    """

    values: np.ndarray
    blank: np.ndarray
    where: str
    raw: np.ndarray


@dataclass
class MeasuredFile:
    """One file's measured columns (canonical quantity names, see :data:`QUANTITIES`).

    Attributes
    ----------
    label : str
        The file name, for messages.
    T : MeasuredColumn
        The temperature column [K].
    rows : numpy.ndarray
        Row number (or array index) of each value, for messages.
    columns : dict
        Quantity name -> column, for the other quantities found.
    row_word : str
        ``row`` (files) or ``index`` (arrays).
    """

    label: str
    T: MeasuredColumn
    rows: np.ndarray
    columns: dict[str, MeasuredColumn]
    row_word: str = "row"

    def at(self, col: MeasuredColumn, i: int) -> str:
        return f"{col.where}, {self.row_word} {self.rows[i]}"

    def take(self, keep: np.ndarray) -> MeasuredFile:
        def sub(c: MeasuredColumn) -> MeasuredColumn:
            return MeasuredColumn(c.values[keep], c.blank[keep], c.where, c.raw[keep])

        return MeasuredFile(self.label, sub(self.T), self.rows[keep],
                       {k: sub(c) for k, c in self.columns.items()}, self.row_word)


def _fmt_T(t: float) -> str:
    return f"{t:.6g} K"


def _apply_nan_policy(src: MeasuredFile, nan: str, dropped: list[str]) -> MeasuredFile:
    """Drop (omit) or reject (raise) rows with NaN cells (not blank cells) or a missing T."""
    for col in (src.T, *src.columns.values()):
        inf = np.isinf(col.values)
        if inf.any():
            i = int(np.flatnonzero(inf)[0])
            raw = float(col.raw[i])
            raise DataError(src.at(col, i), col.raw[i], "must be finite" if np.isinf(raw) else
                            "too large: not a finite number after conversion to SI units")
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


def _check_source(src: MeasuredFile) -> None:
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
    seebeck = src.columns.get("S")
    if seebeck is not None:
        bad = np.abs(seebeck.values) > SEEBECK_IMPOSSIBLE
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise DataError(src.at(seebeck, i), seebeck.raw[i],
                            f"|S| = {abs(seebeck.values[i]):.3g} V/K cannot be physical (solids "
                            "stay below a few mV/K); is the unit in the header right?")
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


def _series(sources: Sequence[MeasuredFile],
            constants: Sequence[Constant] = ()) -> dict[str, _Series]:
    found: dict[str, _Series] = {}
    for src in sources:
        for name, col in src.columns.items():
            if name in found:
                raise DataError(col.where, name,
                                f"already given in {found[name].where}; give each quantity once")
            ok = ~np.isnan(col.values)
            found[name] = _Series(name, src.T.values[ok], col.values[ok], col.where, src.label)
    for c in constants:
        if c.name not in CONSTANTS:
            raise DataError(c.where, c.name, f"only {', '.join(CONSTANTS)} may be given once")
        if c.name in found:
            raise DataError(c.where, c.name,
                            f"already given in {found[c.name].where}; give each quantity once")
        q = QUANTITIES[c.name]
        if not (np.isfinite(c.value) and c.value > 0):
            raise DataError(c.where, c.value, f"the {q.what} must be a finite number > 0")
        found[c.name] = _Series(c.name, np.empty(0), np.array([c.value]), c.where, c.where,
                                constant=True)
    return found


def _extrapolated(grid: np.ndarray, s: _Series, outside: np.ndarray) -> np.ndarray:
    """Linear extrapolation of ``s`` at the grid rows ``outside`` its range (end segments)."""
    lo = grid < s.T[0]
    out = np.interp(grid, s.T, s.values)
    slope_lo = (s.values[1] - s.values[0]) / (s.T[1] - s.T[0])
    slope_hi = (s.values[-1] - s.values[-2]) / (s.T[-1] - s.T[-2])
    out = np.where(outside & lo, s.values[0] + slope_lo * (grid - s.T[0]), out)
    return np.where(outside & ~lo, s.values[-1] + slope_hi * (grid - s.T[-1]), out)


def _merge(sources: Sequence[MeasuredFile], composition: str | None,
           dropped: list[str], constants: Sequence[Constant] = (),
           extrapolate: float = 0.0) -> Measurements:
    labels = ", ".join(s.label for s in sources)
    found = _series(sources, constants)
    notes: list[str] = []
    # --- which thermal and electrical inputs -------------------------------------------------
    if "kappa" in found:
        for n in [n for n in CONSTANTS if n in found and found[n].constant]:
            notes.append(f"{QUANTITIES[n].what} from {found[n].where} not used: the data give "
                         "kappa directly")
            del found[n]
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
    # --- interpolate onto the grid (extrapolate only within the allowance) ---------------------
    values: dict[str, np.ndarray] = {}
    for name, s in found.items():
        if s is base:
            values[name] = s.values.copy()
            continue
        if s.constant:
            values[name] = np.full(grid.size, s.values[0])
            notes.append(f"{QUANTITIES[name].what} from {s.where} used at all temperatures")
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
        near = (grid >= s.T[0] - extrapolate - tol) & (grid <= s.T[-1] + extrapolate + tol)
        allowance = (f"beyond the allowance of {extrapolate:g} K" if extrapolate > 0 else
                     "not extrapolated (allow a few kelvin with --extrapolate, e.g. 5K)")
        for i in np.flatnonzero(keep & ~near):
            dropped.append(f"T = {_fmt_T(grid[i])}: outside the measured range of {name} "
                           f"({_fmt_T(s.T[0])} to {_fmt_T(s.T[-1])}, {s.source}); {allowance}")
        outside = near & ~inside
        for i in np.flatnonzero(keep & outside):
            end = s.T[0] if grid[i] < s.T[0] else s.T[-1]
            notes.append(f"T = {_fmt_T(grid[i])}: {name} extrapolated linearly from "
                         f"{_fmt_T(end)} ({abs(grid[i] - end):.3g} K outside the measured "
                         f"range of {s.source}; allowance {extrapolate:g} K)")
        keep &= near
        values[name] = (_extrapolated(grid, s, outside) if outside.any()
                        else np.interp(grid, s.T, s.values))
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
    where = {k: s.where for k, s in found.items()}
    thermal = where.get("kappa") or ("D rho cp from " + ", ".join(
        where[k] for k in ("D", "rho", "cp") if k in where))
    electrical = where.get("sigma") or ("1/resistivity from " + where.get("resistivity", ""))
    _plausibility("T", T, base.where, "K", 1.0)
    _plausibility("kappa", kappa, thermal, "W/(m K)", 1.0)
    _plausibility("sigma", sigma, electrical, "S/m", 1.0)
    if seebeck is not None:
        _plausibility("S", np.abs(seebeck), where["S"], "uV/K", 1e6)
    return Measurements(
        temperature=T, kappa=kappa, electrical_conductivity=sigma, seebeck=seebeck,
        diffusivity=D, density=rho,
        heat_capacity=cp, heat_capacity_source=cp_source, composition=composition,
        sources={k: s.where for k, s in found.items()}, dropped=tuple(dropped),
        notes=tuple(notes),
    )


def _plausibility(name: str, values: np.ndarray, where: str, unit: str, scale: float) -> None:
    """One warning if ``values`` leave what solids show (see PLAUSIBLE)."""
    low, high, words = PLAUSIBLE[name]
    above, below = values > high, values < low
    if not (above.any() or below.any()):
        return
    extreme = float(np.max(values)) if above.any() else float(np.min(values))
    limit = high if above.any() else low
    side = "above" if above.any() else "below"
    what = QUANTITIES[name].what
    hint = "; is the unit right?" if name != "T" else ""
    if name == "S" and above.any() and extreme > 100 * high:
        hint = "; is the unit right (a column in V/K labelled uV/K gives values 1e6 times too large)?"
    warn(f"{where}: the {what} reaches {extreme * scale:.4g} {unit}, {side} "
         f"{limit * scale:,.6g} {unit}: {words}{hint}")


def _check_nan_policy(nan: str) -> None:
    if nan not in NAN_POLICIES:
        raise DataError("--nan", nan, "raise or omit")


def check_extrapolation(extrapolate: float) -> float:
    """The extrapolation allowance [K], checked: 0 to :data:`MAX_EXTRAPOLATION`."""
    value = float(extrapolate)
    if not (0.0 <= value <= MAX_EXTRAPOLATION):
        raise DataError("extrapolate", extrapolate,
                        f"a temperature difference from 0 to {MAX_EXTRAPOLATION:g} K (a small "
                        "allowance, e.g. 5 K)")
    return value


def merge_files(files: Sequence[MeasuredFile], *, nan: str = "raise",
                composition: str | None = None, constants: Sequence[Constant] = (),
                extrapolate: float = 0.0) -> Measurements:
    """Validate measured files (already in SI units) and merge them onto one grid.

    Applies the NaN policy, checks every file (temperatures, signs, impossible values) and
    merges as described in the module docstring. Files are read by
    :func:`kappa.io.measurements.read_measurements`; arrays go through
    :func:`measurements_from_arrays`.

    Parameters
    ----------
    constants : sequence of Constant
        Density or heat capacity given once (used at every temperature).
    extrapolate : float
        How far [K] a quantity may be extrapolated linearly beyond its measured range onto
        the temperatures of the thermal data (default 0: never); each such row is reported.
    """
    _check_nan_policy(nan)
    extrapolate = check_extrapolation(extrapolate)
    if composition:
        mean_molar_mass(composition, "--composition")  # validate before anything else
    dropped: list[str] = []
    checked = []
    for f in files:
        f = _apply_nan_policy(f, nan, dropped)
        _check_source(f)
        checked.append(f)
    return _merge(checked, composition, dropped, constants, extrapolate)


#: Argument names of :func:`measurements_from_arrays` for the quantities (for messages).
_ARRAY_NAMES = {"kappa": "kappa", "D": "diffusivity", "rho": "density", "cp": "heat_capacity",
                "sigma": "electrical_conductivity", "resistivity": "resistivity",
                "S": "seebeck"}


def measurements_from_arrays(temperature: ArrayLike, *,
                             electrical_conductivity: ArrayLike | None = None,
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
    temperature : array_like
        Temperature [K], strictly increasing.
    electrical_conductivity, resistivity : array_like
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
    T = np.asarray(temperature, dtype=float).ravel()
    given = {"kappa": kappa, "D": diffusivity, "rho": density, "cp": heat_capacity,
             "sigma": electrical_conductivity, "resistivity": resistivity, "S": seebeck}
    columns = {}
    for name, arr in given.items():
        if arr is None:
            continue
        a = np.asarray(arr, dtype=float).ravel()
        if a.size == 1 and name == "rho":
            a = np.full(T.size, float(a[0]))
        if a.size != T.size:
            raise DataError(_ARRAY_NAMES[name], f"{a.size} values",
                            f"needs one value per temperature ({T.size})")
        columns[name] = MeasuredColumn(a, np.zeros(T.size, dtype=bool), f"arrays, {_ARRAY_NAMES[name]}", a)
    src = MeasuredFile(label="arrays",
                  T=MeasuredColumn(T, np.zeros(T.size, dtype=bool), "arrays, temperature", T),
                  rows=np.arange(T.size), columns=columns, row_word="index")
    dropped: list[str] = []
    src = _apply_nan_policy(src, nan, dropped)
    _check_source(src)
    return _merge([src], composition, dropped)
