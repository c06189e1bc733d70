"""Measurement uncertainties of the lattice/electronic split: systematic and random parts.

Every measured quantity q (``kappa``, ``sigma``, ``S``) and the Lorenz number ``L`` carries two
relative 1-sigma uncertainties:

* the **systematic** part u_q, shared by all temperatures of a sample: sample geometry,
  thermocouple and heat-loss calibration, contact placement. It moves the whole curve up or
  down together;
* the **random** part r_q, independent from row to row: the repeatability of one reading.

The Monte Carlo of :func:`kappa.workflows.split.split` draws q -> q (1 + u_q z_q + r_q e_q,i):
one z_q per draw for all rows, one e_q,i per row and draw. The defaults are
:data:`DEFAULT_SYSTEMATIC` (the average uncertainties of interlaboratory round robins, Alleno et
al., Rev. Sci. Instrum. 86, 011301 (2015), which are dominated by calibration and geometry, so
they are taken as systematic) and :data:`DEFAULT_RANDOM` (the point-to-point repeatability of
one instrument: common practice, no single source).

The per-row random numbers come from :func:`row_normals`, a counter-based generator: the number
of (seed, quantity, row, draw) is the same whichever rows are computed together, so the chunked
Monte Carlo gives the same result for every chunk size and the bipolar window sees the same
draws as the table. :func:`linear_budget` gives the linear error propagation of every input and
part (what the run record reports as "which input contributed what").
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from kappa.errors import DataError, warn

__all__ = ["Parts", "QUANTITIES", "DEFAULT_SYSTEMATIC", "DEFAULT_RANDOM", "ALIASES",
           "MAX_RELATIVE", "resolve_uncertainty", "row_normals", "linear_budget"]

#: The uncertain inputs, in the order of the Monte Carlo's systematic draws.
QUANTITIES: tuple[str, ...] = ("kappa", "sigma", "S", "L")
#: Systematic parts: round-robin averages, Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015)
#: (S 6 %, resistivity 8 %, kappa 11 %); the Lorenz number's model error is 0 by default.
DEFAULT_SYSTEMATIC: dict[str, float] = {"kappa": 0.11, "sigma": 0.08, "S": 0.06, "L": 0.0}
#: Random (point-to-point) parts: repeatability of one instrument from reading to reading,
#: about 2 % for flash diffusivity and 1 % for four-probe resistivity and Seebeck
#: (common practice, no single source).
DEFAULT_RANDOM: dict[str, float] = {"kappa": 0.02, "sigma": 0.01, "S": 0.01, "L": 0.0}
#: Other names of ``sigma`` (the electrical conductivity; its relative error is the
#: resistivity's).
ALIASES: dict[str, str] = {"resistivity": "sigma", "electrical_conductivity": "sigma"}
#: Largest relative part accepted (Gaussian draws near zero beyond).
MAX_RELATIVE: float = 0.5


@dataclass(frozen=True)
class Parts:
    """The systematic and random relative 1-sigma uncertainty of one quantity [1]."""

    systematic: float
    random: float

    @property
    def total(self) -> float:
        """Both parts together, sqrt(u^2 + r^2) [1]."""
        return math.hypot(self.systematic, self.random)


def _part(key: str, which: str, value: object) -> float:
    try:
        v = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        v = math.nan
    if not (0.0 <= v <= MAX_RELATIVE):
        raise DataError(f"uncertainty[{key}].{which}", value,
                        f"a relative uncertainty from 0 to {MAX_RELATIVE:g} (e.g. 0.08 for 8 %)")
    return v


def resolve_uncertainty(uncertainty: Mapping[str, object] | None = None) -> dict[str, Parts]:
    """The parts of every quantity: the defaults, updated with what ``uncertainty`` gives.

    Parameters
    ----------
    uncertainty : mapping, optional
        Quantity (``kappa``, ``sigma`` (or ``resistivity``, ``electrical_conductivity``),
        ``S``, ``L``) -> a number (the systematic part; the random part keeps its default),
        a pair ``(systematic, random)`` or :class:`Parts`. Relative 1-sigma values from 0 to
        :data:`MAX_RELATIVE`.

    Returns
    -------
    dict
        Quantity -> :class:`Parts`, for every quantity of :data:`QUANTITIES`.

    Raises
    ------
    DataError
        An unknown key; a part that is negative, not a number or above the limit (the key
        names the quantity and the part, e.g. ``uncertainty[kappa].random``).
    """
    out = {q: Parts(DEFAULT_SYSTEMATIC[q], DEFAULT_RANDOM[q]) for q in QUANTITIES}
    for key, value in (uncertainty or {}).items():
        name = ALIASES.get(key, key)
        if name not in QUANTITIES:
            raise DataError("uncertainty", key, "keys allowed: kappa, sigma (or resistivity), "
                            "S, L")
        if isinstance(value, Parts):
            sys_, rand = value.systematic, value.random
        elif isinstance(value, (tuple, list)):
            if len(value) != 2:
                raise DataError(f"uncertainty[{key}]", value, "a number (systematic part) or a "
                                "pair (systematic, random)")
            sys_, rand = value
        else:
            sys_, rand = value, out[name].random
        out[name] = Parts(_part(key, "systematic", sys_), _part(key, "random", rand))
    if max(p.total for p in out.values()) > 0.25:
        warn("relative uncertainties above 25 % make Gaussian draws near zero or negative "
             "likely; the intervals are then only indicative")
    return out


# --- counter-based standard normals ----------------------------------------------------------
#
# SplitMix64 (Steele, Lea & Flood, OOPSLA 2014): the output for counter c of the stream with
# key k is mix(k + c * golden); every (row, draw) has its own counter, so a number does not
# depend on which other rows are computed with it. Uniforms (h >> 11 + 1/2) / 2^53 lie in
# (0, 1) and become normals through the inverse normal distribution function.

_GOLDEN = np.uint64(0x9E3779B97F4A7C15)
_M1 = np.uint64(0xBF58476D1CE4E5B9)
_M2 = np.uint64(0x94D049BB133111EB)
_ROW_SHIFT = np.uint64(32)


def _mix(z: np.ndarray) -> np.ndarray:
    z = (z ^ (z >> np.uint64(30))) * _M1
    z = (z ^ (z >> np.uint64(27))) * _M2
    return z ^ (z >> np.uint64(31))


def row_normals(seed: int, stream: int, rows: np.ndarray, draws: int) -> np.ndarray:
    """Standard normal numbers for every (row, draw): shape (len(rows), draws).

    The number of (``seed``, ``stream``, row, draw) is fixed: the same rows give the same
    numbers whichever other rows are asked for at the same time.

    Parameters
    ----------
    seed : int
        Seed (>= 0).
    stream : int
        Independent stream (one per quantity).
    rows : array_like of int
        Row indices (>= 0, below 2^31).
    draws : int
        Number of draws (below 2^32).
    """
    key = np.random.SeedSequence([int(seed), 0x5EED, int(stream)]).generate_state(
        1, dtype=np.uint64)[0]
    r = np.asarray(rows, dtype=np.uint64).reshape(-1, 1)
    d = np.arange(int(draws), dtype=np.uint64).reshape(1, -1)
    with np.errstate(over="ignore"):
        counter = (r << _ROW_SHIFT) | d
        h = _mix(key + (counter + np.uint64(1)) * _GOLDEN)
    u = ((h >> np.uint64(11)).astype(np.float64) + 0.5) * 2.0**-53
    from scipy.special import ndtri  # imported here: keeps `import kappa` fast

    return ndtri(u)


def linear_budget(kappa: np.ndarray, kappa_e: np.ndarray, dlnL_dlnS: np.ndarray,
                  parts: Mapping[str, Parts]) -> dict[str, dict[str, np.ndarray]]:
    """Linear propagation of every input's parts to kappa_L = kappa - L(S) sigma T.

    Parameters
    ----------
    kappa, kappa_e : numpy.ndarray
        Total and electronic thermal conductivity per row [W/(m K)].
    dlnL_dlnS : numpy.ndarray
        Logarithmic derivative of the Lorenz number with respect to |S| per row [1] (0 for
        models that do not depend on S).
    parts : mapping
        Quantity -> :class:`Parts` (from :func:`resolve_uncertainty`).

    Returns
    -------
    dict
        ``{quantity: {"systematic": array, "random": array}}``: the 1-sigma contribution of
        that input and part to kappa_L per row [W/(m K)] (sensitivities kappa, kappa_e,
        kappa_e |dlnL/dlnS| and kappa_e for kappa, sigma, S and L).
    """
    sens = {"kappa": np.abs(kappa), "sigma": np.abs(kappa_e),
            "S": np.abs(kappa_e * dlnL_dlnS), "L": np.abs(kappa_e)}
    return {q: {"systematic": sens[q] * parts[q].systematic, "random": sens[q] * parts[q].random}
            for q in QUANTITIES}
