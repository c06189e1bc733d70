"""Split a measured total thermal conductivity into electronic and lattice parts.

kappa_e = L sigma T (Wiedemann-Franz), kappa_L = kappa - kappa_e (the bipolar part, if any, is
inside kappa_L), zT = S^2 sigma T / kappa. The workflow composes :mod:`kappa.electronic`,
:mod:`kappa.limits` and :mod:`kappa.measurements` and returns a :class:`SplitResult`; it reads
and writes no files.

Uncertainty model (Monte Carlo, seeded)
---------------------------------------
Each measured quantity q in (kappa, sigma, S) gets one Gaussian relative error per draw,
q -> q (1 + u_q z_q), applied to *all* temperatures of the sample: the dominant errors of
transport measurements (sample geometry, thermocouple and heat-loss calibration, contact
placement) are systematic over a temperature run, not independent from row to row. An optional
``L`` entry adds a relative error on the Lorenz number (model uncertainty; default 0). The
defaults are the average uncertainties of an interlaboratory round robin, Alleno et al.,
Rev. Sci. Instrum. 86, 011301 (2015): S 6 %, resistivity 8 %, kappa 11 %. The table reports the
value computed from the nominal inputs and the central 68.27 % interval (the +-1 standard
deviation band of a Gaussian) of the draws; ``kappa_L_err`` is half that interval's width.
Because the errors are systematic, the marginal interval at each temperature is what a
per-row model would give as well, but quantities that compare temperatures (the bipolar excess)
see correlated errors, as they should.

Bipolar check
-------------
kappa_L = A/T + B is fitted (least squares in 1/T) on a low-temperature window: given, or
chosen automatically as the rows up to one third of the temperature range, ending no later than
the minimum of kappa_L, and at least 3 rows. Above the window the excess kappa_L - (A/T + B)
is compared with its uncertainty (the Monte Carlo spread of the excess combined with the
prediction error of the fit from its residual scatter). The onset of bipolar conduction is the
lowest temperature above the window from which every row exceeds the extrapolation by more than
that uncertainty; the excess there estimates the bipolar part. The Goldsmid-Sharp gap
E_g = 2 e |S|_max T_max is reported with its caveat.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.electronic import (
    LORENZ_DEGENERATE,
    LORENZ_MODELS,
    figure_of_merit,
    goldsmid_sharp_gap,
    lorenz_kim,
    lorenz_number,
    lorenz_spb,
)
from kappa.core.limits import cahill_minimum
from kappa.errors import DataError, warn
from kappa.workflows.measurements import Measurements, measurements_from_arrays

__all__ = ["split", "split_measurements", "SplitResult", "BipolarCheck",
           "DEFAULT_UNCERTAINTY", "UNCERTAINTY_KEYS", "INTERVAL"]

#: Default relative uncertainties (Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015)).
DEFAULT_UNCERTAINTY: dict[str, float] = {"kappa": 0.11, "sigma": 0.08, "S": 0.06, "L": 0.0}
#: Accepted keys of the uncertainty mapping (``resistivity`` is an alias of ``sigma``).
UNCERTAINTY_KEYS: tuple[str, ...] = ("kappa", "sigma", "resistivity", "S", "L")
#: Probability content of the reported interval (+-1 sigma of a Gaussian).
INTERVAL: float = math.erf(1.0 / math.sqrt(2.0))

CITATIONS = {
    "wf": "Wiedemann-Franz law kappa_e = L sigma T",
    "spb": "single parabolic band, tau ~ E^(lambda-1/2), Fermi-Dirac integrals (standard)",
    "kim": "Kim, Gibbs, Tang, Wang & Snyder, APL Materials 3, 041506 (2015)",
    "alleno": "Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015) (default uncertainties)",
    "gs": "Goldsmid & Sharp, J. Electron. Mater. 28, 869 (1999) (band-gap estimate)",
    "cahill": "Cahill, Watson & Pohl, Phys. Rev. B 46, 6131 (1992) (minimum kappa)",
}


@dataclass(frozen=True)
class BipolarCheck:
    """Result of the A/T + B extrapolation test for bipolar conduction.

    Attributes
    ----------
    fit_window : (float, float)
        Temperature window of the fit [K] (first and last row used).
    window_auto : bool
        True if the window was chosen automatically.
    coefficients : (float, float)
        A [W/m] and B [W/(m K)] of kappa_L = A/T + B.
    kappa_L_fit : numpy.ndarray
        A/T + B at every temperature [W/(m K)].
    excess : numpy.ndarray
        kappa_L - (A/T + B) [W/(m K)]; above the onset, the estimated bipolar part.
    excess_err : numpy.ndarray
        1-sigma uncertainty of the excess [W/(m K)].
    onset : float or None
        Onset temperature of the rise above the extrapolation [K], None if not found.
    bipolar : numpy.ndarray
        Bool per row: at or above the onset.
    seebeck_max, temperature_at_seebeck_max : float or None
        max |S| [V/K] and its temperature [K] (None without S).
    gap : float or None
        Goldsmid-Sharp E_g = 2 e |S|_max T_max [J] (None without an S maximum).
    gap_note : str
        How to read the gap estimate.
    """

    fit_window: tuple[float, float]
    window_auto: bool
    coefficients: tuple[float, float]
    kappa_L_fit: np.ndarray
    excess: np.ndarray
    excess_err: np.ndarray
    onset: float | None
    bipolar: np.ndarray
    seebeck_max: float | None = None
    temperature_at_seebeck_max: float | None = None
    gap: float | None = None
    gap_note: str = ""


@dataclass(frozen=True)
class SplitResult:
    """Lattice/electronic split of measured data (all arrays per temperature, SI units).

    Attributes
    ----------
    T : numpy.ndarray
        Temperature [K].
    kappa, sigma : numpy.ndarray
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
        Half the width of the 68 % interval of kappa_L [W/(m K)] (for weighting fits).
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
        Relative uncertainties used (keys kappa, sigma, S, L).
    draws, seed : int
        Monte Carlo draws and seed.
    citations : tuple of str
    notes : tuple of str
    """

    T: np.ndarray
    kappa: np.ndarray
    sigma: np.ndarray
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
    draws: int
    seed: int
    citations: tuple[str, ...] = ()
    notes: tuple[str, ...] = field(default_factory=tuple)


def _resolve_uncertainty(uncertainty: Mapping[str, float] | None) -> dict[str, float]:
    out = dict(DEFAULT_UNCERTAINTY)
    for key, value in (uncertainty or {}).items():
        if key not in UNCERTAINTY_KEYS:
            raise DataError("uncertainty", key, f"keys allowed: {', '.join(UNCERTAINTY_KEYS)}")
        v = float(value)
        if not (0.0 <= v <= 0.5):
            raise DataError(f"uncertainty {key}", value,
                            "a relative uncertainty between 0 and 0.5 (e.g. 0.08 for 8 %)")
        out["sigma" if key == "resistivity" else key] = v
    if max(out.values()) > 0.25:
        warn("relative uncertainties above 25 % make Gaussian draws near zero or negative "
             "likely; the intervals are then only indicative")
    return out


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


def _auto_window(T: np.ndarray, kappa_L: np.ndarray) -> np.ndarray:
    n = T.size
    last = int(np.flatnonzero(T <= T[0] + (T[-1] - T[0]) / 3.0)[-1])
    last = min(last, int(np.argmin(kappa_L)))
    last = max(last, 2)
    idx = np.zeros(n, dtype=bool)
    idx[: last + 1] = True
    return idx


def _bipolar(T: np.ndarray, kappa_L: np.ndarray, kappa_L_draws: np.ndarray,
             seebeck: np.ndarray | None, fit_window: tuple[float, float] | None
             ) -> BipolarCheck:
    if fit_window is None:
        window = _auto_window(T, kappa_L)
    else:
        lo, hi = float(fit_window[0]), float(fit_window[1])
        if not lo < hi:
            raise DataError("fit_window", f"{lo:g} K:{hi:g} K", "the lower end must be below "
                            "the upper end, e.g. 300K:450K")
        tol = 1e-9 * hi
        window = (T >= lo - tol) & (T <= hi + tol)
        if window.sum() < 3:
            raise DataError("fit_window", f"{lo:g} K:{hi:g} K",
                            f"contains {int(window.sum())} rows of the data; needs at least 3 "
                            f"(data span {T[0]:g} K to {T[-1]:g} K)")
    X = np.column_stack([1.0 / T, np.ones_like(T)])
    Xw = X[window]
    coef, *_ = np.linalg.lstsq(Xw, kappa_L[window], rcond=None)
    fit = X @ coef
    excess = kappa_L - fit
    k = int(window.sum())
    resid = excess[window]
    s2 = float(resid @ resid) / (k - 2) if k > 2 else 0.0
    cov = np.linalg.inv(Xw.T @ Xw)
    pred = np.sqrt(s2 * (1.0 + np.einsum("ij,jk,ik->i", X, cov, X)))
    # Monte Carlo: the same fit on every draw (correlated errors largely cancel in the excess)
    coef_d = np.linalg.pinv(Xw) @ kappa_L_draws[:, window].T  # (2, draws)
    excess_d = kappa_L_draws - (X @ coef_d).T
    q_lo, q_hi = np.quantile(excess_d, [(1 - INTERVAL) / 2, (1 + INTERVAL) / 2], axis=0)
    mc = 0.5 * (q_hi - q_lo)
    err = np.sqrt(mc**2 + pred**2)
    above_window = T > T[window][-1]
    exceeds = (excess > err) & above_window
    onset = None
    bip = np.zeros(T.size, dtype=bool)
    cand = np.flatnonzero(above_window)
    for i in cand:
        if np.all(exceeds[i:]):
            onset = float(T[i])
            bip[i:] = True
            break
    s_max = t_max = gap = None
    note = "no Seebeck data"
    if seebeck is not None:
        a = np.abs(seebeck)
        i = int(np.argmax(a))
        s_max, t_max = float(a[i]), float(T[i])
        if i == T.size - 1:
            gap = goldsmid_sharp_gap(s_max, t_max)
            note = ("|S| still rises at the highest temperature: the gap is at least this "
                    "large (a lower bound)")
        elif i == 0:
            note = "|S| falls from the lowest temperature on: no maximum, no gap estimate"
        else:
            gap = goldsmid_sharp_gap(s_max, t_max)
            note = ("rough estimate: assumes similar majority and minority weighted mobilities "
                    "and non-degenerate carriers; can be off by about 2x otherwise")
    return BipolarCheck(
        fit_window=(float(T[window][0]), float(T[window][-1])),
        window_auto=fit_window is None, coefficients=(float(coef[0]), float(coef[1])),
        kappa_L_fit=fit, excess=excess, excess_err=err, onset=onset, bipolar=bip,
        seebeck_max=s_max, temperature_at_seebeck_max=t_max, gap=gap, gap_note=note,
    )


def split_measurements(measurements: Measurements, *, lorenz: str | float = "spb",
                       scattering_exponent: float = 0.0,
                       uncertainty: Mapping[str, float] | None = None, draws: int = 2000,
                       seed: int = 0, fit_window: tuple[float, float] | None = None,
                       number_density: float | None = None,
                       sound_velocities: Sequence[float] | None = None) -> SplitResult:
    """Split validated :class:`~kappa.measurements.Measurements` (see :func:`split`)."""
    m = measurements
    model = _lorenz_name(lorenz)
    if m.seebeck is None and model in ("spb", "kim"):
        raise DataError("S", "missing", f"a Seebeck column 'S [uV/K]' is needed for lorenz "
                        f"{model}; or choose degenerate, nondegenerate or a number")
    u = _resolve_uncertainty(uncertainty)
    draws = int(draws)
    if draws < 100:
        raise DataError("draws", draws, "at least 100 Monte Carlo draws")
    if (number_density is None) != (sound_velocities is None):
        raise DataError("number_density/sound_velocities", "only one given",
                        "give both for the Cahill minimum, or neither")
    T, kappa, sigma, S = m.T, m.kappa, m.sigma, m.seebeck
    lam = float(scattering_exponent)
    notes: list[str] = []
    cites = [CITATIONS["wf"], CITATIONS["alleno"]]

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
    rng = np.random.default_rng(seed)
    z = rng.standard_normal((4, draws))
    f_k, f_s, f_S, f_L = ((1.0 + u[key] * z[i])[:, None]
                          for i, key in enumerate(("kappa", "sigma", "S", "L")))
    kappa_d = kappa[None, :] * f_k
    sigma_d = sigma[None, :] * f_s
    S_d = None if S is None else np.abs(S)[None, :] * f_S
    if model == "spb":
        L_d = lorenz_spb(S_d, lam)
    elif model == "kim":
        L_d = lorenz_kim(S_d)
    else:
        L_d = np.broadcast_to(L, kappa_d.shape)
    L_d = L_d * f_L
    kappa_e_d = L_d * sigma_d * T[None, :]
    kappa_L_d = kappa_d - kappa_e_d
    qs = [(1.0 - INTERVAL) / 2.0, (1.0 + INTERVAL) / 2.0]
    L_lo, L_hi = np.quantile(L_d, qs, axis=0)
    ke_lo, ke_hi = np.quantile(kappa_e_d, qs, axis=0)
    kl_lo, kl_hi = np.quantile(kappa_L_d, qs, axis=0)
    zt_lo = zt_hi = None
    if S is not None:
        zT_d = S_d**2 * sigma_d * T[None, :] / kappa_d
        zt_lo, zt_hi = np.quantile(zT_d, qs, axis=0)

    # --- flags -----------------------------------------------------------------------------
    nonpositive = kappa_L <= 0
    if nonpositive.any():
        temps = ", ".join(f"{t:g} K" for t in T[nonpositive])
        warn(f"kappa_L <= 0 at {temps}: the Lorenz number or the data are inconsistent there")
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
            temps = ", ".join(f"{t:g} K" for t in T[below])
            warn(f"kappa_L below the Cahill minimum at {temps}: check the Lorenz number, "
                 "the data, or the minimum's inputs")

    # --- bipolar check ------------------------------------------------------------------------
    bip = None
    if T.size >= 5 or fit_window is not None:
        bip = _bipolar(T, kappa_L, kappa_L_d, S, fit_window)
        if S is not None:
            cites.append(CITATIONS["gs"])
    else:
        notes.append("fewer than 5 rows: bipolar check skipped")

    return SplitResult(
        T=T, kappa=kappa, sigma=sigma, seebeck=S,
        lorenz_model=model if isinstance(model, str) else "constant",
        scattering_exponent=lam, lorenz=L, lorenz_low=L_lo, lorenz_high=L_hi,
        kappa_e=kappa_e, kappa_e_low=ke_lo, kappa_e_high=ke_hi,
        kappa_L=kappa_L, kappa_L_low=kl_lo, kappa_L_high=kl_hi,
        kappa_L_err=0.5 * (kl_hi - kl_lo),
        zT=zT, zT_low=zt_lo, zT_high=zt_hi,
        kappa_L_degenerate=kappa_L_deg, kappa_L_kim=kappa_L_kim, eta=eta,
        kappa_min=kappa_min, nonpositive=nonpositive, below_minimum=below, bipolar=bip,
        uncertainty=u, draws=draws, seed=int(seed), citations=tuple(cites),
        notes=tuple(notes),
    )


def split(T: ArrayLike, kappa: ArrayLike, sigma: ArrayLike, seebeck: ArrayLike | None = None,
          *, lorenz: str | float = "spb", scattering_exponent: float = 0.0,
          uncertainty: Mapping[str, float] | None = None, draws: int = 2000, seed: int = 0,
          fit_window: tuple[float, float] | None = None, number_density: float | None = None,
          sound_velocities: Sequence[float] | None = None) -> SplitResult:
    """Split total thermal conductivity into electronic and lattice parts (arrays, SI units).

    Parameters
    ----------
    T : array_like
        Temperature [K], strictly increasing, at least 3 values.
    kappa : array_like
        Total thermal conductivity [W/(m K)], > 0.
    sigma : array_like
        Electrical conductivity [S/m], >= 0.
    seebeck : array_like, optional
        Seebeck coefficient [V/K] (sign kept for zT, magnitude for L); needed by ``spb`` and
        ``kim``.
    lorenz : {'spb', 'degenerate', 'nondegenerate', 'kim'} or float
        Lorenz model, or a constant [W Ohm K^-2].
    scattering_exponent : float
        lambda of tau ~ E^(lambda-1/2) for ``spb``: 0 acoustic phonons (default), 1 polar
        optical, 2 ionized impurities.
    uncertainty : mapping, optional
        Relative 1-sigma uncertainties, keys ``kappa``, ``sigma`` (or ``resistivity``), ``S``,
        ``L``; missing keys take :data:`DEFAULT_UNCERTAINTY`.
    draws : int
        Monte Carlo draws (>= 100).
    seed : int
        Seed of the random generator (results are reproducible).
    fit_window : (float, float), optional
        Temperatures [K] bounding the A/T + B fit of the bipolar check; automatic if None.
    number_density : float, optional
        Atoms per volume [1/m^3] for the Cahill minimum.
    sound_velocities : sequence of float, optional
        Acoustic velocities [m/s] for the Cahill minimum (1 to 3 values).

    Returns
    -------
    SplitResult

    Examples
    --------
    >>> import numpy as np
    >>> from kappa.workflows.split import split
    >>> T = np.array([300.0, 400.0, 500.0])
    >>> r = split(T, kappa=[1.6, 1.5, 1.5], sigma=[8e4, 6e4, 5e4], seebeck=[180e-6, 200e-6,
    ...           210e-6], draws=500)
    >>> bool(np.all(r.kappa_L < r.kappa))
    True
    """
    m = measurements_from_arrays(T, kappa=kappa, sigma=sigma, seebeck=seebeck)
    return split_measurements(m, lorenz=lorenz, scattering_exponent=scattering_exponent,
                              uncertainty=uncertainty, draws=draws, seed=seed,
                              fit_window=fit_window, number_density=number_density,
                              sound_velocities=sound_velocities)
