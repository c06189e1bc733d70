"""Split a measured total thermal conductivity into electronic and lattice parts.

kappa_e = L sigma T (Wiedemann-Franz), kappa_L = kappa - kappa_e (the bipolar part, if any, is
inside kappa_L), zT = S^2 sigma T / kappa. The workflow composes :mod:`kappa.core.electronic`,
:mod:`kappa.core.limits`, :mod:`kappa.workflows.measurements` and
:mod:`kappa.workflows.bipolar` and returns a :class:`SplitResult`; it reads
and writes no files.

Uncertainty model (Monte Carlo, seeded)
---------------------------------------
Each input q in (kappa, sigma, S, L) has a systematic and a random relative 1-sigma part
(:mod:`kappa.workflows.uncertainty`): q -> q (1 + u_q z_q + r_q e_q,i), with one Gaussian z_q
per draw applied to *all* temperatures of the sample (sample geometry, thermocouple and
heat-loss calibration, contact placement are shared by a temperature run) and one e_q,i per row
and draw (the repeatability of one reading). Defaults: the round-robin averages of Alleno et
al., Rev. Sci. Instrum. 86, 011301 (2015) as systematic parts (S 6 %, resistivity 8 %,
kappa 11 %) and small random parts (kappa 2 %, sigma and S 1 %; common practice). The Lorenz
number's model error ``L`` is 0 by default. The table reports the value computed from the
nominal inputs and the central 68.27 % interval (the +-1 standard deviation band of a
Gaussian) of the draws; ``kappa_L_err`` is half that interval's width, and
``kappa_L_err_systematic`` / ``kappa_L_err_random`` are the standard deviations of the same
Monte Carlo with only the systematic or only the random parts drawn (the same numbers; L
linearised in S about each row, so these parts are linear in Gaussian numbers and their
standard deviation is the half width of their 68 % interval). A fit uses them apart: the random
part as point-to-point noise, the systematic part as one shared scale of the sample. :func:`~kappa.workflows.uncertainty.linear_budget` gives each input's share
(``SplitResult.budget``).

Memory and time: the systematic draws (4 x draws numbers) are made once, in the same order as
always; the random numbers come per (quantity, row, draw) from seeded blocks of rows; the
rows are processed in chunks of at most :data:`CHUNK_VALUES` (row, draw) values, so memory does
not grow with rows x draws and the result does not depend on the chunk size. The bipolar check
first computes its per-draw fit from the window rows, then streams the rows like the rest.
Draws are limited to :data:`DRAW_RANGE`; the scattering exponent to :data:`EXPONENT_RANGE`.

The bipolar check (A/T + B extrapolation, Goldsmid-Sharp gap) is in
:mod:`kappa.workflows.bipolar`.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.electronic import (
    LORENZ_DEGENERATE,
    LORENZ_MODELS,
    figure_of_merit,
    lorenz_kim,
    lorenz_number,
    lorenz_regime_warnings,
    lorenz_spb,
)
from kappa.core.limits import cahill_minimum
from kappa.errors import DataError, warn
from kappa.workflows.bipolar import BipolarCheck, bipolar_check, window_rows
from kappa.workflows.measurements import Measurements, measurements_from_arrays
from kappa.workflows.split_draws import INTERVAL, Draws, intervals, window_fits
from kappa.workflows.uncertainty import (
    DEFAULT_RANDOM,
    DEFAULT_SYSTEMATIC,
    linear_budget,
    resolve_uncertainty,
)

__all__ = ["split", "split_measurements", "SplitResult", "BipolarCheck",
           "DEFAULT_UNCERTAINTY", "DEFAULT_RANDOM", "UNCERTAINTY_KEYS", "INTERVAL",
           "DRAW_RANGE", "EXPONENT_RANGE", "CHUNK_VALUES"]

#: Default systematic relative uncertainties (Alleno et al., Rev. Sci. Instrum. 86, 011301
#: (2015)); the random parts are :data:`DEFAULT_RANDOM`.
DEFAULT_UNCERTAINTY: dict[str, float] = DEFAULT_SYSTEMATIC
#: Accepted keys of the uncertainty mapping (``resistivity`` and ``electrical_conductivity``
#: are aliases of ``sigma``, the electrical conductivity as in the CSV column names).
UNCERTAINTY_KEYS: tuple[str, ...] = ("kappa", "sigma", "resistivity", "S", "L")
#: Allowed number of Monte Carlo draws (fewer gives noisy bands; more only costs time).
DRAW_RANGE: tuple[int, int] = (100, 100_000)
#: Allowed scattering exponent lambda of the single-parabolic-band Lorenz number
#: (tau ~ E^(lambda - 1/2)): the tables of Fermi-Dirac integrals are accurate there
#: (0 acoustic phonons, 1 polar optical, 2 ionized impurities).
EXPONENT_RANGE: tuple[float, float] = (-0.9, 4.0)
#: Most (row, draw) values the Monte Carlo holds at once per array.
CHUNK_VALUES: int = 1_000_000

CITATIONS = {
    "wf": "Wiedemann-Franz law kappa_e = L sigma T",
    "spb": "single parabolic band, tau ~ E^(lambda-1/2), Fermi-Dirac integrals (standard)",
    "kim": "Kim, Gibbs, Tang, Wang & Snyder, APL Materials 3, 041506 (2015)",
    "alleno": "Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015) (default uncertainties)",
    "gs": "Goldsmid & Sharp, J. Electron. Mater. 28, 869 (1999) (band-gap estimate)",
    "cahill": "Cahill, Watson & Pohl, Phys. Rev. B 46, 6131 (1992) (minimum kappa)",
}


@dataclass(frozen=True)
class SplitResult:
    """Lattice/electronic split of measured data (all arrays per temperature, SI units).

    Attributes
    ----------
    temperature : numpy.ndarray
        Temperature [K].
    kappa, electrical_conductivity : numpy.ndarray
        Total thermal conductivity [W/(m K)] and electrical conductivity [S/m] (nominal).
    seebeck : numpy.ndarray or None
        Seebeck coefficient [V/K].
    lorenz_model : str
        ``spb``, ``degenerate``, ``nondegenerate``, ``kim`` or ``constant``.
    scattering_exponent : float
        lambda of tau ~ E^(lambda-1/2) (used by ``spb``).
    lorenz, lorenz_low, lorenz_high : numpy.ndarray
        L [W Ohm K^-2]: nominal value and the 68 % Monte Carlo interval.
    kappa_e, kappa_e_low, kappa_e_high : numpy.ndarray
        Electronic part L sigma T [W/(m K)].
    kappa_L, kappa_L_low, kappa_L_high : numpy.ndarray
        Lattice part kappa - kappa_e (bipolar included) [W/(m K)].
    kappa_L_err : numpy.ndarray
        Half the width of the 68 % interval of kappa_L [W/(m K)], both parts drawn.
    kappa_L_err_systematic, kappa_L_err_random : numpy.ndarray
        The standard deviation of kappa_L with only the systematic (shared by all
        temperatures) or only the random (point to point) parts drawn [W/(m K)]; a fit uses
        them apart.
    zT, zT_low, zT_high : numpy.ndarray or None
        Figure of merit [1] (None without S).
    kappa_L_degenerate, kappa_L_kim : numpy.ndarray or None
        kappa_L with the Sommerfeld and the Kim et al. Lorenz numbers (the spread of the
        Lorenz choice); ``kappa_L_kim`` is None without S.
    eta : numpy.ndarray or None
        Reduced Fermi level of the ``spb`` solution [1].
    kappa_min : numpy.ndarray or None
        Cahill-Watson-Pohl minimum [W/(m K)] when a number density and sound velocities were
        given.
    nonpositive : numpy.ndarray
        Bool per row: kappa_L <= 0.
    below_minimum : numpy.ndarray or None
        Bool per row: kappa_L < kappa_min.
    bipolar : BipolarCheck or None
        The bipolar check (None with fewer than 5 rows).
    uncertainty : dict
        Systematic relative uncertainties used (keys kappa, sigma, S, L).
    uncertainty_random : dict
        Random relative uncertainties used (same keys).
    budget : dict
        Linear propagation of each input and part to kappa_L:
        ``{quantity: {"systematic": array, "random": array}}`` [W/(m K)] per row.
    draws, seed : int
        Monte Carlo draws and seed.
    citations : tuple of str
    notes : tuple of str
    """

    temperature: np.ndarray
    kappa: np.ndarray
    electrical_conductivity: np.ndarray
    seebeck: np.ndarray | None
    lorenz_model: str
    scattering_exponent: float
    lorenz: np.ndarray
    lorenz_low: np.ndarray
    lorenz_high: np.ndarray
    kappa_e: np.ndarray
    kappa_e_low: np.ndarray
    kappa_e_high: np.ndarray
    kappa_L: np.ndarray
    kappa_L_low: np.ndarray
    kappa_L_high: np.ndarray
    kappa_L_err: np.ndarray
    kappa_L_err_systematic: np.ndarray
    kappa_L_err_random: np.ndarray
    zT: np.ndarray | None
    zT_low: np.ndarray | None
    zT_high: np.ndarray | None
    kappa_L_degenerate: np.ndarray
    kappa_L_kim: np.ndarray | None
    eta: np.ndarray | None
    kappa_min: np.ndarray | None
    nonpositive: np.ndarray
    below_minimum: np.ndarray | None
    bipolar: BipolarCheck | None
    uncertainty: dict[str, float]
    uncertainty_random: dict[str, float]
    budget: dict[str, dict[str, np.ndarray]]
    draws: int
    seed: int
    citations: tuple[str, ...] = ()
    notes: tuple[str, ...] = field(default_factory=tuple)


def _lorenz_name(lorenz: str | float) -> str | float:
    if isinstance(lorenz, str):
        if lorenz not in LORENZ_MODELS:
            raise DataError("lorenz", lorenz,
                            "spb, degenerate, nondegenerate, kim or a number in W Ohm/K^2")
        return lorenz
    value = float(lorenz)
    if not (0.0 < value < 1e-6):
        raise DataError("lorenz", value, "a constant Lorenz number in W Ohm/K^2, e.g. 2.0e-8")
    return value


def _whole(value: object) -> int | None:
    """``value`` as an int if it is a whole number (2000, 2000.0, numpy integers), else None."""
    if isinstance(value, bool):
        return None
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)) and float(value).is_integer():
        return int(value)
    return None


def _check_run(draws: object, seed: object, scattering_exponent: object) -> tuple[int, int, float]:
    """Validate the Monte Carlo settings and the scattering exponent."""
    low, high = DRAW_RANGE
    n = _whole(draws)
    if n is None or not low <= n <= high:
        raise DataError("draws", draws, f"a whole number of Monte Carlo draws from {low:,} to "
                        f"{high:,}")
    s = _whole(seed)
    if s is None or s < 0:
        raise DataError("seed", seed, "a whole number >= 0 (the same seed gives the same draws)")
    try:
        lam = float(scattering_exponent)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        lam = math.nan
    lo, hi = EXPONENT_RANGE
    if not (lo <= lam <= hi):
        raise DataError("scattering_exponent", scattering_exponent,
                        f"from {lo:g} to {hi:g} (lambda in tau ~ E^(lambda-1/2): 0 acoustic "
                        "phonons, 1 polar optical, 2 ionized impurities)")
    return n, s, lam


def _dlnL_dlnS(model: str | float, S: np.ndarray | None, lam: float, n: int) -> np.ndarray:
    """d ln L / d ln |S| per row (central difference; 0 for models that ignore S)."""
    if S is None or model not in ("spb", "kim"):
        return np.zeros(n)
    s = np.abs(S)
    h = 1e-4
    f = (lambda x: lorenz_spb(x, lam)) if model == "spb" else lorenz_kim
    with np.errstate(divide="ignore", invalid="ignore"):
        d = (np.log(f(s * (1 + h))) - np.log(f(s * (1 - h)))) / (math.log1p(h) - math.log1p(-h))
    return np.where(np.isfinite(d), d, 0.0)


def _temperatures(T: np.ndarray, shown: int = 8) -> str:
    """``300 K, 325 K, ...`` with at most ``shown`` values, then how many more."""
    text = ", ".join(f"{t:g} K" for t in T[:shown])
    return text + (f" and {T.size - shown} more" if T.size > shown else "")


def split_measurements(measurements: Measurements, *, lorenz: str | float = "spb",
                       scattering_exponent: float = 0.0,
                       uncertainty: Mapping[str, float] | None = None, draws: int = 2000,
                       seed: int = 0, fit_window: tuple[float, float] | None = None,
                       number_density: float | None = None,
                       sound_velocities: Sequence[float] | None = None,
                       progress: Callable[[int, int], None] | None = None) -> SplitResult:
    """Split validated :class:`~kappa.workflows.measurements.Measurements` (see :func:`split`).

    ``progress(done, total)``, if given, is called after each chunk of rows of the Monte
    Carlo (``total`` = the number of rows, plus the rows of the bipolar check's window when
    that window needs more than one chunk).
    """
    m = measurements
    model = _lorenz_name(lorenz)
    if m.seebeck is None and model in ("spb", "kim"):
        raise DataError("S", "missing", f"a Seebeck column 'S [uV/K]' is needed for lorenz "
                        f"{model}; or choose degenerate, nondegenerate or a number")
    parts = resolve_uncertainty(uncertainty)
    draws, seed, lam = _check_run(draws, seed, scattering_exponent)
    if (number_density is None) != (sound_velocities is None):
        raise DataError("number_density/sound_velocities", "only one given",
                        "give both for the Cahill minimum, or neither")
    T, kappa, sigma, S = m.temperature, m.kappa, m.electrical_conductivity, m.seebeck
    n = T.size
    notes: list[str] = []
    cites = [CITATIONS["wf"], CITATIONS["alleno"]]

    for message in lorenz_regime_warnings(model, S, lam):
        warn(message)

    # --- nominal values ----------------------------------------------------------------------
    eta = None
    if model == "spb":
        L, eta = lorenz_spb(S, lam, return_eta=True)
        cites.append(CITATIONS["spb"])
    else:
        L = lorenz_number(model, S if S is not None else T, lam)
    kappa_e = L * sigma * T
    kappa_L = kappa - kappa_e
    kappa_L_deg = kappa - LORENZ_DEGENERATE * sigma * T
    kappa_L_kim = None
    if S is not None:
        kappa_L_kim = kappa - lorenz_kim(S) * sigma * T
        cites.append(CITATIONS["kim"])
    zT = figure_of_merit(S, sigma, kappa, T) if S is not None else None

    # --- Monte Carlo (one relative error per quantity and draw, all temperatures) -------------
    slope = _dlnL_dlnS(model, S, lam, n)
    mc = Draws(m, model, L, lam, parts, draws, seed, slope)
    check = n >= 5 or fit_window is not None
    bipolar_draws = None
    # progress in rows: the window rows of the bipolar check (when they need chunks), then all
    ahead = 0
    if check:
        window = window_rows(T, kappa_L, fit_window)
        if int(window.sum()) * draws > CHUNK_VALUES:
            ahead = int(window.sum())
    total = ahead + n

    def report(offset: int) -> Callable[[int], None] | None:
        if progress is None:
            return None
        return lambda done: progress(offset + done, total)

    if check:
        X = np.column_stack([1.0 / T, np.ones_like(T)])
        coef, *_ = np.linalg.lstsq(X[window], kappa_L[window], rcond=None)
        # the same fit on every draw (correlated errors largely cancel in the excess)
        bipolar_draws = (X, window_fits(mc, X, window, draws, report(0), CHUNK_VALUES))
    q = intervals(mc, n, draws, bipolar_draws, report(ahead), CHUNK_VALUES)

    # --- flags -----------------------------------------------------------------------------
    nonpositive = kappa_L <= 0
    if nonpositive.any():
        warn(f"kappa_L <= 0 at {_temperatures(T[nonpositive])}: the Lorenz number or the data "
             "are inconsistent there")
    kappa_min = below = None
    if number_density is not None:
        try:
            kappa_min = cahill_minimum(T, float(number_density), list(sound_velocities))
        except ValueError as exc:
            raise DataError("number_density/sound_velocities",
                            f"{number_density}, {list(sound_velocities)}", str(exc)) from None
        below = kappa_L < kappa_min
        cites.append(CITATIONS["cahill"])
        if below.any():
            warn(f"kappa_L below the Cahill minimum at {_temperatures(T[below])}: check the "
                 "Lorenz number, the data, or the minimum's inputs")

    # --- bipolar check ------------------------------------------------------------------------
    bip = None
    if check:
        bip = bipolar_check(T, kappa_L, window, coef, q["mc"], S, fit_window is None)
        if S is not None:
            cites.append(CITATIONS["gs"])
    else:
        notes.append("fewer than 5 rows: bipolar check skipped")

    kl_lo, kl_hi = q["kappa_L_lo"], q["kappa_L_hi"]
    budget = linear_budget(kappa, kappa_e, slope, parts)
    return SplitResult(
        temperature=T, kappa=kappa, electrical_conductivity=sigma, seebeck=S,
        lorenz_model=model if isinstance(model, str) else "constant",
        scattering_exponent=lam, lorenz=L, lorenz_low=q["L_lo"], lorenz_high=q["L_hi"],
        kappa_e=kappa_e, kappa_e_low=q["kappa_e_lo"], kappa_e_high=q["kappa_e_hi"],
        kappa_L=kappa_L, kappa_L_low=kl_lo, kappa_L_high=kl_hi,
        kappa_L_err=0.5 * (kl_hi - kl_lo),
        kappa_L_err_systematic=q["kappa_L_sys_sd"], kappa_L_err_random=q["kappa_L_rand_sd"],
        zT=zT, zT_low=q.get("zT_lo"), zT_high=q.get("zT_hi"),
        kappa_L_degenerate=kappa_L_deg, kappa_L_kim=kappa_L_kim, eta=eta,
        kappa_min=kappa_min, nonpositive=nonpositive, below_minimum=below, bipolar=bip,
        uncertainty={k: p.systematic for k, p in parts.items()},
        uncertainty_random={k: p.random for k, p in parts.items()}, budget=budget,
        draws=draws, seed=seed, citations=tuple(cites),
        notes=tuple(notes),
    )


def split(temperature: ArrayLike, kappa: ArrayLike, electrical_conductivity: ArrayLike,
          seebeck: ArrayLike | None = None, *, lorenz: str | float = "spb",
          scattering_exponent: float = 0.0, uncertainty: Mapping[str, float] | None = None,
          draws: int = 2000, seed: int = 0, fit_window: tuple[float, float] | None = None,
          number_density: float | None = None, sound_velocities: Sequence[float] | None = None,
          progress: Callable[[int, int], None] | None = None) -> SplitResult:
    """Split total thermal conductivity into electronic and lattice parts (arrays, SI units).

    Parameters
    ----------
    temperature : array_like
        Temperature [K], strictly increasing, at least 3 values.
    kappa : array_like
        Total thermal conductivity [W/(m K)], > 0.
    electrical_conductivity : array_like
        Electrical conductivity [S/m], >= 0.
    seebeck : array_like, optional
        Seebeck coefficient [V/K] (sign kept for zT, magnitude for L); needed by ``spb`` and
        ``kim``.
    lorenz : {'spb', 'degenerate', 'nondegenerate', 'kim'} or float
        Lorenz model, or a constant [W Ohm K^-2].
    scattering_exponent : float
        lambda of tau ~ E^(lambda-1/2) for ``spb`` and ``nondegenerate`` ((2 + lambda)
        (k_B/e)^2), within :data:`EXPONENT_RANGE`: 0 acoustic phonons (default), 1 polar
        optical, 2 ionized impurities.
    uncertainty : mapping, optional
        Relative 1-sigma uncertainties, keys ``kappa``, ``sigma`` (or ``resistivity``,
        ``electrical_conductivity``), ``S``, ``L``; each value a number (the systematic part,
        shared by all temperatures; the random part keeps its default), a pair
        ``(systematic, random)`` or :class:`~kappa.workflows.uncertainty.Parts`. Missing keys
        take :data:`DEFAULT_UNCERTAINTY` (systematic) and :data:`DEFAULT_RANDOM` (random).
    draws : int
        Monte Carlo draws, within :data:`DRAW_RANGE` (100 to 100,000).
    seed : int
        Seed of the random generator, >= 0 (results are reproducible).
    fit_window : (float, float), optional
        Temperatures [K] bounding the A/T + B fit of the bipolar check (``-inf``/``inf`` for
        an open side); automatic if None.
    number_density : float, optional
        Atoms per volume [1/m^3] for the Cahill minimum.
    sound_velocities : sequence of float, optional
        Acoustic velocities [m/s] for the Cahill minimum (1 to 3 values).
    progress : callable, optional
        ``progress(done, total)`` after each chunk of rows of the Monte Carlo (in rows; see
        :func:`split_measurements`).

    Returns
    -------
    SplitResult

    Examples
    --------
    >>> import numpy as np
    >>> from kappa.workflows.split import split
    >>> T = np.array([300.0, 400.0, 500.0])
    >>> r = split(T, kappa=[1.6, 1.5, 1.5], electrical_conductivity=[8e4, 6e4, 5e4],
    ...           seebeck=[180e-6, 200e-6, 210e-6], draws=500)
    >>> bool(np.all(r.kappa_L < r.kappa))
    True
    """
    m = measurements_from_arrays(temperature, kappa=kappa,
                                 electrical_conductivity=electrical_conductivity,
                                 seebeck=seebeck)
    return split_measurements(m, lorenz=lorenz, scattering_exponent=scattering_exponent,
                              uncertainty=uncertainty, draws=draws, seed=seed,
                              fit_window=fit_window, number_density=number_density,
                              sound_velocities=sound_velocities, progress=progress)
