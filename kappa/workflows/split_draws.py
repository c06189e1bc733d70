"""The Monte Carlo of the lattice/electronic split (see :mod:`kappa.workflows.split`).

:class:`Draws` holds the systematic draws (one relative error per quantity and draw, shared by
all temperatures) and makes the random ones per (quantity, row, draw) with the counter-based
generator :class:`~kappa.workflows.uncertainty.RowNormals`; :func:`intervals` streams the rows
in chunks of at most ``values`` (row, draw) numbers and returns the 68 % intervals of every
quantity; :func:`window_fits` the per-draw A/T + B fits of the bipolar check.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping

import numpy as np

from kappa.core.electronic import lorenz_kim, lorenz_spb
from kappa.workflows.measurements import Measurements
from kappa.workflows.uncertainty import QUANTITIES, Parts, RowNormals

__all__ = ["Draws", "chunks", "intervals", "window_fits", "INTERVAL"]


class Draws:
    """The Monte Carlo of the split, evaluated for any subset of rows.

    The systematic relative errors (one per quantity and draw, shared by all temperatures) are
    drawn once; the random ones come from :class:`~kappa.workflows.uncertainty.RowNormals` per
    (quantity, row, draw). :meth:`rows` returns the per-draw arrays (rows, draws) of the rows
    asked for, computed with exactly the same arithmetic for every row whichever subset it is
    in. The systematic-only and random-only kappa_L (the parts) use the Lorenz number
    linearised in S about each row's value, L (1 + g (f_S - 1)) with ``slope`` g = d ln L /
    d ln |S| (S enters kappa_L only through L, whose share of the uncertainty is small; the
    total is exact); without a ``slope`` the parts are exact too.
    """

    def __init__(self, m: Measurements, model: str | float, L: np.ndarray, lam: float,
                 parts: Mapping[str, Parts], draws: int, seed: int,
                 slope: np.ndarray | None = None) -> None:
        rng = np.random.default_rng(seed)
        z = rng.standard_normal((4, draws))
        self.sys = {q: (parts[q].systematic * z[i])[None, :] for i, q in enumerate(QUANTITIES)}
        self.rand = {q: parts[q].random for q in QUANTITIES}
        self.m, self.model, self.L, self.lam = m, model, L, lam
        self.draws, self.seed = draws, seed
        self.any_random = any(v > 0 for v in self.rand.values())
        self.any_systematic = any(p.systematic > 0 for p in parts.values())
        self.slope = slope
        self.normals = {q: RowNormals(seed, i, draws) for i, q in enumerate(QUANTITIES)}

    def _random(self, q: str, rows: np.ndarray) -> np.ndarray | float:
        """r_q e_q,i for the rows (rows, draws), or 0.0 when the random part is 0."""
        r = self.rand[q]
        if r == 0.0:
            return 0.0
        return r * self.normals[q](rows)

    def _lorenz(self, S_d: np.ndarray | None, idx, shape: tuple[int, int]) -> np.ndarray:
        if self.model == "spb":
            return lorenz_spb(S_d, self.lam)
        if self.model == "kim":
            return lorenz_kim(S_d)
        return np.broadcast_to(self.L[idx][:, None], shape)

    def _kappa_L(self, idx, f: Mapping[str, np.ndarray | float]) -> np.ndarray:
        """kappa_L per (row, draw) with the relative factors ``f`` (only kappa_L)."""
        m = self.m
        T = m.temperature[idx][:, None]
        kappa_d = m.kappa[idx][:, None] * f["kappa"]
        shape = np.broadcast_shapes(kappa_d.shape, (T.shape[0], self.draws))
        if self.slope is not None and self.model in ("spb", "kim"):
            L_d = self.L[idx][:, None] * (1.0 + self.slope[idx][:, None] * (f["S"] - 1.0))
        else:
            S_d = None if m.seebeck is None else np.abs(m.seebeck[idx])[:, None] * f["S"]
            L_d = self._lorenz(S_d, idx, shape)
        L_d = L_d * f["L"]
        return kappa_d - L_d * (m.electrical_conductivity[idx][:, None] * f["sigma"]) * T

    def rows(self, idx: slice | np.ndarray, *, zT: bool = True,
             parts: bool = False) -> dict[str, np.ndarray]:
        """Per-draw arrays of the rows ``idx``: L, kappa_e, kappa_L (and zT); with ``parts``
        also kappa_L with only the systematic (``kappa_L_sys``) or only the random
        (``kappa_L_rand``) parts drawn."""
        m = self.m
        rows = np.arange(m.temperature.size)[idx]
        rand = {q: self._random(q, rows) for q in QUANTITIES}
        f = {q: 1.0 + self.sys[q] + rand[q] if self.rand[q] > 0 else 1.0 + self.sys[q]
             for q in QUANTITIES}
        T = m.temperature[idx][:, None]
        kappa_d = m.kappa[idx][:, None] * f["kappa"]
        sigma_d = m.electrical_conductivity[idx][:, None] * f["sigma"]
        S_d = None if m.seebeck is None else np.abs(m.seebeck[idx])[:, None] * f["S"]
        L_d = self._lorenz(S_d, idx, kappa_d.shape) * f["L"]
        kappa_e_d = L_d * sigma_d * T
        out = {"L": L_d, "kappa_e": kappa_e_d, "kappa_L": kappa_d - kappa_e_d}
        if S_d is not None and zT:
            out["zT"] = S_d**2 * sigma_d * T / kappa_d
        if parts:
            out["kappa_L_sys"] = (self._kappa_L(idx, {q: 1.0 + self.sys[q] for q in QUANTITIES})
                                  if self.any_random else out["kappa_L"])
            out["kappa_L_rand"] = (self._kappa_L(idx, {q: 1.0 + rand[q] for q in QUANTITIES})
                                   if self.any_systematic else out["kappa_L"])
        return out


def chunks(n: int, draws: int, values: int) -> list[slice]:
    """Slices of at most ``values // draws`` rows (at least one)."""
    step = max(1, values // draws)
    return [slice(a, min(n, a + step)) for a in range(0, n, step)]


#: The systematic-only and random-only kappa_L, summarised by their standard deviation.
PARTS = ("kappa_L_sys", "kappa_L_rand")
#: Probability content of the reported interval (+-1 sigma of a Gaussian).
INTERVAL: float = math.erf(1.0 / math.sqrt(2.0))
_QS = [(1.0 - INTERVAL) / 2.0, (1.0 + INTERVAL) / 2.0]


def intervals(mc: Draws, n: int, draws: int, bipolar: tuple[np.ndarray, np.ndarray] | None,
              progress: Callable[[int], None] | None, values: int) -> dict[str, np.ndarray]:
    """68 % intervals (low, high) per row of every Monte Carlo quantity, chunk by chunk, and
    the standard deviations of the parts (``kappa_L_sys_sd``, ``kappa_L_rand_sd``).

    ``bipolar`` = (X, coef_d): the design matrix [1/T, 1] of all rows and the per-draw A/T + B
    coefficients (2, draws); then the half width of the interval of the excess is returned as
    ``mc``.
    """
    out: dict[str, np.ndarray] = {}
    for chunk in chunks(n, draws, values):
        d = mc.rows(chunk, parts=True)
        if bipolar is not None:
            X, coef_d = bipolar
            q_lo, q_hi = np.quantile(d["kappa_L"] - X[chunk] @ coef_d, _QS, axis=1)
            out.setdefault("mc", np.empty(n))[chunk] = 0.5 * (q_hi - q_lo)
        for key in PARTS:  # nearly linear in Gaussian numbers: the sd is the half width
            if key in d:
                out.setdefault(key + "_sd", np.empty(n))[chunk] = np.std(d.pop(key), axis=1)
        for key, arr in d.items():
            lo, hi = np.quantile(arr, _QS, axis=1)
            out.setdefault(key + "_lo", np.empty(n))[chunk] = lo
            out.setdefault(key + "_hi", np.empty(n))[chunk] = hi
        del d
        if progress is not None:
            progress(chunk.stop)
    return out


def window_fits(mc: Draws, X: np.ndarray, window: np.ndarray, draws: int,
                progress: Callable[[int], None] | None, values: int) -> np.ndarray:
    """A and B of kappa_L = A/T + B fitted on the window rows of every draw: (2, draws).

    One product pinv(X_w) @ kappa_L_draws when the window fits in one chunk; otherwise the
    same sum accumulated chunk by chunk (equal to rounding). ``progress(rows done)``.
    """
    rows = np.flatnonzero(window)
    pinv = np.linalg.pinv(X[window])  # (2, rows)
    if rows.size * draws <= values:
        return pinv @ mc.rows(rows, zT=False)["kappa_L"]
    coef = np.zeros((2, draws))
    for chunk in chunks(rows.size, draws, values):
        coef += pinv[:, chunk] @ mc.rows(rows[chunk], zT=False)["kappa_L"]
        if progress is not None:
            progress(chunk.stop)
    return coef
