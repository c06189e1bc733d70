"""Electronic heat conduction: Lorenz numbers, Fermi-Dirac integrals, single parabolic band.

Pure functions over SI floats and numpy arrays (no I/O). Units: Seebeck coefficient S in V/K,
Lorenz number L in W Ohm K^-2, electrical conductivity sigma in S/m, temperature T in K,
thermal conductivity in W/(m K). The reduced Fermi level eta = E_F/(k_B T) is dimensionless.

Models of the Lorenz number
---------------------------
``degenerate``
    Sommerfeld value L0 = (pi^2/3)(k_B/e)^2 = 2.443e-8 W Ohm K^-2 (metals, heavily degenerate
    semiconductors).
``nondegenerate``
    (2 + lambda)(k_B/e)^2, the non-degenerate limit (eta -> -inf) of a single parabolic band with
    tau proportional to E^(lambda - 1/2): 2 (k_B/e)^2 = 1.485e-8 W Ohm K^-2 for acoustic phonons
    (lambda = 0), 4 (k_B/e)^2 = 2.970e-8 for ionized impurities (lambda = 2).
``spb``
    Single parabolic band (SPB) with a relaxation time tau proportional to E^(lambda - 1/2);
    the scattering exponent lambda is 0 for acoustic phonons (the default), 1 for polar optical
    phonons above the Debye temperature, 2 for ionized impurities. With the Fermi-Dirac integrals
    F_j(eta) = int_0^inf eps^j / (1 + exp(eps - eta)) d eps::

        S = (k_B/e) [ (2+lambda) F_{1+lambda} / ((1+lambda) F_lambda) - eta ]
        L = (k_B/e)^2 [ (1+lambda)(3+lambda) F_lambda F_{2+lambda} - (2+lambda)^2 F_{1+lambda}^2 ]
                      / [ (1+lambda)^2 F_lambda^2 ]

    eta is solved from the measured |S|; L follows.
``kim``
    The published approximation L = 1.5 + exp(-|S|/116), L in 1e-8 W Ohm K^-2 and S in uV/K
    (Kim, Gibbs, Tang, Wang & Snyder, APL Materials 3, 041506 (2015)); within 5 % of the SPB
    result for acoustic scattering as its authors state.
a number
    A user constant in W Ohm K^-2.

Each model is made for a regime: ``degenerate`` for metals and degenerate semiconductors
(|S| below about 100 uV/K, :data:`DEGENERATE_SEEBECK_LIMIT`), ``kim`` for acoustic-phonon
scattering (lambda = 0). :func:`lorenz_regime_warnings` says when a choice is used outside it.

The electronic thermal conductivity is kappa_e = L sigma T (Wiedemann-Franz law).
"""

from __future__ import annotations

import functools
import math

import numpy as np
from numpy.typing import ArrayLike

from kappa.core.constants import e, k_B
from kappa.core.fermi_dirac import fermi_dirac_integral
from kappa.errors import DataError

__all__ = [
    "K_B_OVER_E",
    "LORENZ_DEGENERATE",
    "LORENZ_NONDEGENERATE",
    "LORENZ_MODELS",
    "DEGENERATE_SEEBECK_LIMIT",
    "lorenz_nondegenerate",
    "lorenz_regime_warnings",
    "fermi_dirac_integral",
    "spb_seebeck",
    "spb_lorenz",
    "reduced_fermi_level",
    "lorenz_spb",
    "lorenz_kim",
    "lorenz_number",
    "electronic_thermal_conductivity",
    "figure_of_merit",
    "goldsmid_sharp_gap",
]

#: k_B/e [V/K] = 86.17333 uV/K (exact constants of the 2019 SI)
K_B_OVER_E: float = k_B / e
#: Sommerfeld value (pi^2/3)(k_B/e)^2 [W Ohm K^-2]
LORENZ_DEGENERATE: float = math.pi**2 / 3.0 * K_B_OVER_E**2
#: Non-degenerate single-band value for acoustic phonon scattering, 2 (k_B/e)^2 [W Ohm K^-2]
#: (other scattering exponents: :func:`lorenz_nondegenerate`)
LORENZ_NONDEGENERATE: float = 2.0 * K_B_OVER_E**2
#: The named Lorenz models (a number is also accepted where a model is asked for).
LORENZ_MODELS: tuple[str, ...] = ("spb", "degenerate", "nondegenerate", "kim")
#: |S| [V/K] above which the degenerate (Sommerfeld) Lorenz number is used outside its regime:
#: at 100 uV/K the single parabolic band (acoustic phonons) gives L about 25 % below it
#: (common practice, no single source).
DEGENERATE_SEEBECK_LIMIT: float = 100e-6

# --- single parabolic band -------------------------------------------------------------------


def _check_exponent(scattering_exponent: float) -> float:
    lam = float(scattering_exponent)
    if not (lam > -1.0 and math.isfinite(lam)):
        raise DataError("scattering_exponent", lam,
                        "must be > -1 (0 acoustic phonons, 1 polar optical, 2 ionized impurity)")
    return lam


def spb_seebeck(eta: ArrayLike, scattering_exponent: float = 0.0) -> np.ndarray:
    """Seebeck coefficient magnitude of a single parabolic band.

    S = (k_B/e) [ (2+lambda) F_{1+lambda}(eta) / ((1+lambda) F_lambda(eta)) - eta ].

    Parameters
    ----------
    eta : array_like
        Reduced Fermi level [1].
    scattering_exponent : float
        lambda in tau proportional to E^(lambda - 1/2); 0 for acoustic phonons.

    Returns
    -------
    numpy.ndarray
        |S| [V/K].
    """
    lam = _check_exponent(scattering_exponent)
    eta = np.asarray(eta, dtype=float)
    f0 = fermi_dirac_integral(lam, eta)
    f1 = fermi_dirac_integral(1.0 + lam, eta)
    return K_B_OVER_E * ((2.0 + lam) * f1 / ((1.0 + lam) * f0) - eta)


def spb_lorenz(eta: ArrayLike, scattering_exponent: float = 0.0) -> np.ndarray:
    """Lorenz number of a single parabolic band at reduced Fermi level ``eta``.

    L = (k_B/e)^2 [(1+lambda)(3+lambda) F_lambda F_{2+lambda} - (2+lambda)^2 F_{1+lambda}^2]
        / [(1+lambda)^2 F_lambda^2].

    Parameters
    ----------
    eta : array_like
        Reduced Fermi level [1].
    scattering_exponent : float
        lambda in tau proportional to E^(lambda - 1/2); 0 for acoustic phonons.

    Returns
    -------
    numpy.ndarray
        L [W Ohm K^-2]; tends to (pi^2/3)(k_B/e)^2 for eta -> inf and to
        (2+lambda)(k_B/e)^2 for eta -> -inf.
    """
    lam = _check_exponent(scattering_exponent)
    eta = np.asarray(eta, dtype=float)
    f0 = fermi_dirac_integral(lam, eta)
    f1 = fermi_dirac_integral(1.0 + lam, eta)
    f2 = fermi_dirac_integral(2.0 + lam, eta)
    r1 = f1 / f0
    r2 = f2 / f0
    return K_B_OVER_E**2 * ((3.0 + lam) / (1.0 + lam) * r2
                            - ((2.0 + lam) / (1.0 + lam)) ** 2 * r1**2)


def reduced_fermi_level(seebeck: ArrayLike, scattering_exponent: float = 0.0) -> np.ndarray:
    """Solve the single-parabolic-band relation S(eta) = |seebeck| for eta.

    Vectorised bisection on a bracket that is checked (and widened if needed) before the
    search; S(eta) decreases strictly with eta, so the root is unique.

    Parameters
    ----------
    seebeck : array_like
        Seebeck coefficient [V/K]; its magnitude is used. Must be finite and non-zero, and
        |S| below about 50 mV/K (eta above -500).
    scattering_exponent : float
        lambda in tau proportional to E^(lambda - 1/2); 0 for acoustic phonons.

    Returns
    -------
    numpy.ndarray
        eta [1], relative accuracy about 1e-12.
    """
    lam = _check_exponent(scattering_exponent)
    s = np.abs(np.asarray(seebeck, dtype=float)) / K_B_OVER_E
    if np.any(~np.isfinite(s)) or np.any(s <= 0):
        raise DataError("S", "zero or non-finite value", "|S| must be finite and > 0 to solve eta")
    flat = s.ravel()
    # Asymptotes: non-degenerate S ~ (2 + lam - eta), degenerate S ~ pi^2 (1 + lam) / (3 eta).
    lo = np.minimum(-10.0, 2.0 + lam - flat - 5.0)
    hi = np.maximum(10.0, 2.0 * math.pi**2 * (1.0 + lam) / (3.0 * flat))
    for _ in range(60):
        bad_lo = spb_seebeck(lo, lam) / K_B_OVER_E < flat
        bad_hi = spb_seebeck(hi, lam) / K_B_OVER_E > flat
        if not (bad_lo.any() or bad_hi.any()):
            break
        lo = np.where(bad_lo, lo * 2.0 - 10.0, lo)
        hi = np.where(bad_hi, hi * 2.0 + 10.0, hi)
    else:  # pragma: no cover - the asymptotes above always bracket
        raise DataError("S", "out of range", "no single-parabolic-band solution found")
    if np.any(lo < -700):
        raise DataError("S", f"{np.max(np.abs(seebeck)):.6g} V/K",
                        "|S| too large for a single-parabolic-band solution (below 50 mV/K)")
    # Illinois (modified regula falsi): keeps the bracket, converges superlinearly.
    f_lo = spb_seebeck(lo, lam) / K_B_OVER_E - flat
    f_hi = spb_seebeck(hi, lam) / K_B_OVER_E - flat
    side = np.zeros(flat.shape, dtype=int)
    todo = np.ones(flat.shape, dtype=bool)
    root = 0.5 * (lo + hi)
    for _ in range(200):
        i = np.flatnonzero(todo)
        if i.size == 0:
            break
        m = (lo[i] * f_hi[i] - hi[i] * f_lo[i]) / (f_hi[i] - f_lo[i])
        fm = spb_seebeck(m, lam) / K_B_OVER_E - flat[i]
        root[i] = m
        above = fm > 0.0
        lo[i] = np.where(above, m, lo[i])
        hi[i] = np.where(above, hi[i], m)
        f_lo[i] = np.where(above, fm, np.where(side[i] == -1, 0.5 * f_lo[i], f_lo[i]))
        f_hi[i] = np.where(above, np.where(side[i] == 1, 0.5 * f_hi[i], f_hi[i]), fm)
        side[i] = np.where(above, 1, -1)
        done = (np.abs(fm) <= 1e-14 * flat[i]) | (hi[i] - lo[i] <= 1e-14 * np.maximum(1.0, np.abs(m)))
        todo[i[done]] = False
    return root.reshape(s.shape)


@functools.lru_cache(maxsize=16)
def _spb_table(lam: float):
    """Cubic splines of L and asinh(eta) against ln|S| for one scattering exponent.

    Built once per exponent from an exact eta grid (no root finding): S(eta) is strictly
    monotone, so (ln S_i, L_i) is a valid interpolation grid. Covers about 0.1 uV/K to 2.5 mV/K;
    interpolation error below 1e-9 relative (checked in tests against the exact solve).
    """
    from scipy.interpolate import CubicSpline

    eta = np.concatenate([np.linspace(-25.0, 30.0, 1101)[:-1],
                          np.geomspace(30.0, 3000.0 * (1.0 + lam), 800)])
    s = spb_seebeck(eta, lam)
    L = spb_lorenz(eta, lam)
    x = np.log(s[::-1])
    return (CubicSpline(x, L[::-1]), CubicSpline(x, np.arcsinh(eta[::-1])),
            float(x[0]), float(x[-1]))


def lorenz_spb(seebeck: ArrayLike, scattering_exponent: float = 0.0, *,
               return_eta: bool = False):
    """Single-parabolic-band Lorenz number from the measured Seebeck coefficient.

    Uses a cached spline table of L(ln|S|) (built once per exponent from exact Fermi-Dirac
    integrals; interpolation error below 1e-9 relative); values outside the table fall back to
    the exact solve :func:`reduced_fermi_level`. S = 0 gives the degenerate limit.

    Parameters
    ----------
    seebeck : array_like
        Seebeck coefficient [V/K] (sign ignored). NaN gives NaN.
    scattering_exponent : float
        lambda in tau proportional to E^(lambda - 1/2); 0 for acoustic phonons.
    return_eta : bool
        Also return the reduced Fermi level.

    Returns
    -------
    numpy.ndarray or (numpy.ndarray, numpy.ndarray)
        L [W Ohm K^-2] (and eta [1]).
    """
    lam = _check_exponent(scattering_exponent)
    s = np.abs(np.asarray(seebeck, dtype=float))
    L = np.full(s.shape, np.nan)
    eta = np.full(s.shape, np.nan)
    spline_L, spline_eta, xmin, xmax = _spb_table(lam)
    zero = s == 0
    L[zero] = LORENZ_DEGENERATE
    eta[zero] = np.inf
    ok = np.isfinite(s) & ~zero
    x = np.full(s.shape, np.nan)
    x[ok] = np.log(s[ok])
    inside = ok & (x >= xmin) & (x <= xmax)
    L[inside] = spline_L(x[inside])
    if return_eta:
        eta[inside] = np.sinh(spline_eta(x[inside]))
    outside = ok & ~inside
    if np.any(outside):
        eo = reduced_fermi_level(s[outside], lam)
        L[outside] = spb_lorenz(eo, lam)
        eta[outside] = eo
    return (L, eta) if return_eta else L


def lorenz_kim(seebeck: ArrayLike) -> np.ndarray:
    """Lorenz number from the approximation of Kim et al. (APL Materials 3, 041506 (2015)).

    L = [1.5 + exp(-|S| / 116 uV/K)] x 1e-8 W Ohm K^-2.

    Parameters
    ----------
    seebeck : array_like
        Seebeck coefficient [V/K] (sign ignored).

    Returns
    -------
    numpy.ndarray
        L [W Ohm K^-2].
    """
    s = np.abs(np.asarray(seebeck, dtype=float))
    return (1.5 + np.exp(-s / 116e-6)) * 1e-8


def lorenz_nondegenerate(scattering_exponent: float = 0.0) -> float:
    """Non-degenerate limit of the single-parabolic-band Lorenz number, (2 + lambda)(k_B/e)^2.

    The limit of :func:`spb_lorenz` for eta -> -inf (Boltzmann statistics): with
    F_j(eta) -> Gamma(j + 1) e^eta the bracket becomes (1+lambda)(3+lambda)Gamma(1+lambda)
    Gamma(3+lambda) - (2+lambda)^2 Gamma(2+lambda)^2 over (1+lambda)^2 Gamma(1+lambda)^2,
    which is 2 + lambda.

    Parameters
    ----------
    scattering_exponent : float
        lambda in tau proportional to E^(lambda - 1/2): 0 acoustic phonons (2 (k_B/e)^2),
        1 polar optical (3 (k_B/e)^2), 2 ionized impurities (4 (k_B/e)^2).

    Returns
    -------
    float
        L [W Ohm K^-2].
    """
    lam = _check_exponent(scattering_exponent)
    return (2.0 + lam) * K_B_OVER_E**2


def lorenz_regime_warnings(model: str | float, seebeck: ArrayLike | None = None,
                           scattering_exponent: float = 0.0) -> list[str]:
    """Plain-words warnings when a Lorenz model is used outside the regime it was made for.

    * ``kim`` with a scattering exponent other than 0: the approximation of Kim et al. was
      fitted to the single parabolic band with acoustic-phonon scattering (lambda = 0) and does
      not follow lambda;
    * ``degenerate`` with |S| above :data:`DEGENERATE_SEEBECK_LIMIT`: the Sommerfeld value
      holds for metals and degenerate semiconductors; at larger |S| the carriers are not
      degenerate and L is smaller.

    Parameters
    ----------
    model : str or float
        The Lorenz model (see the module docstring) or a constant.
    seebeck : array_like, optional
        Seebeck coefficient [V/K] (sign ignored; NaN ignored).
    scattering_exponent : float
        lambda in tau proportional to E^(lambda - 1/2).

    Returns
    -------
    list of str
    """
    out: list[str] = []
    lam = float(scattering_exponent)
    if model == "kim" and lam != 0.0:
        out.append(f"the Lorenz model kim approximates the single parabolic band with "
                   f"acoustic-phonon scattering (lambda = 0) and ignores the scattering exponent "
                   f"lambda = {lam:g}; use spb to follow lambda")
    if model == "degenerate" and seebeck is not None:
        s = np.abs(np.asarray(seebeck, dtype=float))
        s = s[np.isfinite(s)]
        if s.size and float(s.max()) > DEGENERATE_SEEBECK_LIMIT:
            top = float(s.max())
            try:
                spb = (f", where the single parabolic band gives "
                       f"{float(lorenz_spb(top, lam)):.4g} W Ohm/K^2")
            except DataError:  # |S| beyond any band solution: the unit check reports it
                spb = ""
            out.append(f"the degenerate Lorenz number (pi^2/3)(k_B/e)^2 = "
                       f"{LORENZ_DEGENERATE:.4g} W Ohm/K^2 holds for metals and degenerate "
                       f"semiconductors (|S| below about {DEGENERATE_SEEBECK_LIMIT * 1e6:.0f} "
                       f"uV/K); |S| reaches {top * 1e6:.4g} uV/K here{spb}: kappa_e is "
                       "overstated and kappa_L understated; consider spb or kim")
    return out


def lorenz_number(model: str | float, seebeck: ArrayLike | None = None,
                  scattering_exponent: float = 0.0) -> np.ndarray:
    """Lorenz number for a named model or a constant.

    Parameters
    ----------
    model : {'spb', 'degenerate', 'nondegenerate', 'kim'} or float
        The model (see the module docstring), or a constant L [W Ohm K^-2].
    seebeck : array_like, optional
        Seebeck coefficient [V/K]; needed by ``spb`` and ``kim``, and sets the output shape.
    scattering_exponent : float
        lambda for ``spb`` and ``nondegenerate`` (0 acoustic phonons); ``kim``, ``degenerate``
        and constants do not depend on it.

    Returns
    -------
    numpy.ndarray
        L [W Ohm K^-2].
    """
    shape = () if seebeck is None else np.shape(seebeck)
    if isinstance(model, (int, float, np.floating)) and not isinstance(model, bool):
        value = float(model)
        if not (value > 0 and math.isfinite(value)):
            raise DataError("lorenz", value, "a constant Lorenz number must be > 0 W Ohm/K^2")
        return np.full(shape, value)
    if model == "degenerate":
        return np.full(shape, LORENZ_DEGENERATE)
    if model == "nondegenerate":
        return np.full(shape, lorenz_nondegenerate(scattering_exponent))
    if model in ("spb", "kim"):
        if seebeck is None:
            raise DataError("S", "missing", f"the Seebeck coefficient is needed for lorenz={model}")
        if model == "kim":
            return lorenz_kim(seebeck)
        return lorenz_spb(seebeck, scattering_exponent)
    raise DataError("lorenz", model, "spb, degenerate, nondegenerate, kim or a number in W Ohm/K^2")


def electronic_thermal_conductivity(lorenz: ArrayLike, sigma: ArrayLike,
                                    temperature: ArrayLike) -> np.ndarray:
    """Wiedemann-Franz law kappa_e = L sigma T.

    Parameters
    ----------
    lorenz : array_like
        Lorenz number [W Ohm K^-2].
    sigma : array_like
        Electrical conductivity [S/m].
    temperature : array_like
        Temperature [K].

    Returns
    -------
    numpy.ndarray
        kappa_e [W/(m K)].
    """
    return np.asarray(lorenz, float) * np.asarray(sigma, float) * np.asarray(temperature, float)


def figure_of_merit(seebeck: ArrayLike, sigma: ArrayLike, kappa: ArrayLike,
                    temperature: ArrayLike) -> np.ndarray:
    """Thermoelectric figure of merit zT = S^2 sigma T / kappa (kappa the total conductivity).

    Parameters
    ----------
    seebeck : array_like
        [V/K].
    sigma : array_like
        [S/m].
    kappa : array_like
        Total thermal conductivity [W/(m K)].
    temperature : array_like
        [K].

    Returns
    -------
    numpy.ndarray
        zT [1].
    """
    s = np.asarray(seebeck, float)
    return s**2 * np.asarray(sigma, float) * np.asarray(temperature, float) / np.asarray(kappa, float)


def goldsmid_sharp_gap(seebeck_max: float, temperature_at_max: float) -> float:
    """Goldsmid-Sharp band-gap estimate E_g = 2 e |S|_max T_max.

    Goldsmid & Sharp, J. Electron. Mater. 28, 869 (1999). A rough estimate: it assumes similar
    majority and minority weighted mobilities and non-degenerate carriers, and can be off by a
    factor of about two otherwise (Gibbs et al., Appl. Phys. Lett. 106, 022112 (2015)).

    Parameters
    ----------
    seebeck_max : float
        Maximum of |S| over temperature [V/K].
    temperature_at_max : float
        Temperature of that maximum [K].

    Returns
    -------
    float
        E_g [J] (divide by e for eV).
    """
    return 2.0 * e * abs(float(seebeck_max)) * float(temperature_at_max)
