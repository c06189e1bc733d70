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

The per-row random numbers come from :class:`RowNormals` (fixed blocks of rows, each with its
own seeded generator): the number of (seed, quantity, row, draw) is the same whichever rows are
computed together, so the chunked Monte Carlo gives the same result for every chunk size and
the bipolar window sees the same draws as the table. :func:`linear_budget` gives the linear error propagation of every input and
part (what the run record reports as "which input contributed what").
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from kappa.errors import DataError, warn

__all__ = ["Parts", "QUANTITIES", "DEFAULT_SYSTEMATIC", "DEFAULT_RANDOM", "ALIASES",
           "MAX_RELATIVE", "ROW_BLOCK", "RowNormals", "resolve_uncertainty", "row_normals",
           "linear_budget"]

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


# --- per-row standard normals, addressable by row ----------------------------------------------
#
# The rows are cut into fixed blocks of ROW_BLOCK rows; block b of stream q gets its own numpy
# generator seeded with (seed, q, b), which draws the block's (ROW_BLOCK, draws) normals in
# one call. A row's numbers therefore depend only on (seed, stream, row, draws), not on which
# other rows are asked for at the same time; the last blocks made are kept for the next call
# (chunks and the bipolar window ask for neighbouring rows).

#: Rows per block of random numbers.
ROW_BLOCK = 256


class RowNormals:
    """Standard normal numbers for every (row, draw) of one stream, addressable by row."""

    def __init__(self, seed: int, stream: int, draws: int, keep: int = 4) -> None:
        self.seed, self.stream, self.draws, self.keep = int(seed), int(stream), int(draws), keep
        self._blocks: dict[int, np.ndarray] = {}

    def _block(self, b: int) -> np.ndarray:
        block = self._blocks.get(b)
        if block is None:
            rng = np.random.default_rng([self.seed, 0x5EED, self.stream, b])
            block = rng.standard_normal((ROW_BLOCK, self.draws), dtype=np.float32)
            if len(self._blocks) >= self.keep:
                self._blocks.pop(next(iter(self._blocks)))
            self._blocks[b] = block
        return block

    def __call__(self, rows) -> np.ndarray:
        """The numbers of ``rows`` (array of row indices >= 0): shape (len(rows), draws)."""
        rows = np.asarray(rows, dtype=np.int64).ravel()
        out = np.empty((rows.size, self.draws))
        blocks = rows // ROW_BLOCK
        for b in np.unique(blocks):
            pick = blocks == b
            out[pick] = self._block(int(b))[rows[pick] - b * ROW_BLOCK]
        return out


def row_normals(seed: int, stream: int, rows, draws: int) -> np.ndarray:
    """Standard normal numbers for every (row, draw): shape (len(rows), draws).

    The number of (``seed``, ``stream``, row, draw) is fixed for a given ``draws``: the same
    rows give the same numbers whichever other rows are asked for at the same time
    (:class:`RowNormals` keeps recent blocks between calls).
    """
    return RowNormals(seed, stream, draws)(rows)


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
