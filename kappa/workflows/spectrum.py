"""Spectral decomposition of κ_L: per frequency, cumulative over frequency and over mean free path.

For each branch j at temperature T the Callaway conductivity is (DESIGN §2)

    κ_j = pre_j (I₁ + I₂²/I₃),   pre_j = (n_j/3) k_B/(2π² v_j) (k_B T/ħ)³.

**Which relaxation time.** With normal processes the split of κ over phonons is not unique, since
the I₂²/I₃ term is a collective (drift) contribution. kappa follows Callaway (Phys. Rev. 113,
1046 (1959)) and gives every phonon the effective relaxation time τ_eff = τ_c(1 + β/τ_N),
β = I₂/I₃, so that the spectral parts add up to κ_j exactly; without normal processes
τ_eff = τ_c = τ_R. The mean free path is Λ = v_j τ_eff. All of it comes from the evaluator's
:class:`~kappa.core.evaluator.BranchState`; this module only arranges it.

**Closure.** The cumulative over frequency at ν is pre_j (I₁(x) + β I₂(x)) with the integrals
from 0 to x = hν/(k_B T) computed by the same quadrature and kernel as ``kappa predict``, so its
last value (x = θ_j/T, cut at x = 40 as everywhere in kappa) is κ_L of ``predict``.

**Cumulative over mean free path**, all branches merged: K(Λ) = Σ_j pre_j ∫_{Λ_j(x) ≤ Λ}
τ_eff w dx. Λ_j(x) is sampled on a dense logarithmic grid, its extrema are refined, and between
them it is monotonic, so {x: Λ_j(x) ≤ Λ} is a union of intervals whose ends are found to
machine precision (regula falsi safeguarded by bisection, from the grid cell that holds them); each interval's share is a difference of the frequency
cumulative above. K is therefore exact to the kernel's accuracy at every Λ for any rate — a
polynomial or not — whether or not Λ(x) is monotonic (an extremum narrower than the grid
spacing, about 2 % in x, could be missed). Λ50 and Λ80 are the smallest Λ with K(Λ) ≥ 50 % and
80 % of κ_L: K is tabulated once on a grid of Λ that brackets them, then each bracket is cut
into eight parts plus the secant point per step (:func:`_sectioned`) down to 10⁻¹⁴ in ln Λ,
for all quantiles at once.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from kappa.core.checks import model_warnings, temperature_warnings
from kappa.core.constants import h, k_B
from kappa.core.evaluator import (
    CALLAWAY_CITATION,
    BranchState,
    branch_states,
    check_temperature,
)
from kappa.core.model import Model
from kappa.core.quadrature import EPS_LOW
from kappa.errors import ConfigError, warn
from kappa.workflows.export import Tabular, frame

__all__ = ["Spectrum", "spectrum", "SPECTRUM_POINTS", "MFP_POINTS", "MAX_TEMPERATURES"]

SPECTRUM_POINTS = 200  #: frequencies per branch and temperature in the spectral tables
MFP_POINTS = 200  #: mean free paths per temperature in the cumulative table
MAX_TEMPERATURES = 20  #: temperatures per spectrum
_CLOSURE = 1e-6  #: required agreement of the mean-free-path cumulative with κ_L
_GRID = 1200  #: samples of Λ(x) per branch (log-spaced)
_LAM_SLACK = 1e-13  #: Λ(x) within this relative distance of Λ counts as "≤ Λ" (constant Λ(x))
_FLAT = 1e-12  #: relative steps of Λ(x) below this are rounding, not a rise or fall
_BISECT = 120  #: most root-finding steps in ln x for an interval end (from one grid cell)
_ROOT_TOL = 4e-16  #: relative width in ln x at which an interval end counts as found
_LAM_GRID = 65  #: mean free paths on which K(Λ) is tabulated to bracket the quantiles
_SECTIONS = 8  #: a quantile's bracket shrinks at least this many times per step


@dataclass(frozen=True)
class _Branch:
    """Mean free paths of one branch at one temperature, in monotonic pieces."""

    state: BranchState
    beta: float
    kappa: float
    edges: np.ndarray  # x at the ends of monotonic pieces, increasing (edges[0] = 0)
    pieces: tuple  # per piece: (x grid, Λ on it), monotonic

    @classmethod
    def build(cls, state: BranchState) -> _Branch:
        kappa, beta = state.kappa()
        lo = state.x_top * EPS_LOW * 1e-8
        x = np.geomspace(lo, state.x_top, _GRID)
        lam = state.mean_free_path(x, beta)
        diff = np.diff(lam)
        # steps within rounding of a plateau count as flat, not as turns
        d = np.sign(np.where(np.abs(diff) <= _FLAT * np.abs(lam[1:]), 0.0, diff))
        turns, last, last_i = [], 0.0, 0
        for i in range(d.size):
            if d[i] == 0:
                continue
            if last != 0 and d[i] != last:
                turns.append((last_i, i, last > 0))
            last, last_i = d[i], i
        xs = [x[0]]
        for a, i, maximum in turns:  # refine each extremum by golden-section search in ln x
            xs.append(_extremum(state, beta, x[a], x[i + 1], maximum=maximum))
        xs.append(x[-1])
        pieces = []
        for a, b in zip(xs[:-1], xs[1:], strict=True):
            inner = x[(x > a) & (x < b)]
            px = np.concatenate([[a], inner, [b]])
            pieces.append((px, state.mean_free_path(px, beta)))
        edges = np.array([0.0, *xs[1:]])
        return cls(state, beta, kappa, edges, tuple(pieces))

    @property
    def span(self) -> tuple[float, float]:
        lams = np.concatenate([p[1] for p in self.pieces])
        lams = lams[lams > 0]  # v_g = 0 at a sine branch's zone boundary: Λ = 0, no heat
        return float(lams.min()), float(lams.max())

    def intervals(self, lams: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
        """Per piece, the (left, right) ends in x of {Λ(x) ≤ Λ} for every Λ of ``lams``
        (left == right where the piece holds no such phonon)."""
        out = []
        lam_c = lams * (1.0 + _LAM_SLACK)
        for k, (px, pl) in enumerate(self.pieces):
            a = 0.0 if k == 0 else px[0]  # below the grid Λ is taken as Λ(x_lo)
            b = px[-1]
            increasing = pl[-1] >= pl[0]
            if increasing:  # Λ ≤ lam on [a, root]
                root = self._roots(px, pl, lam_c)
                left, right = np.full(lams.shape, a), np.where(lam_c >= pl[-1], b, root)
                right = np.where(lam_c < pl[0], a, right)
            else:  # Λ ≤ lam on [root, b]
                root = self._roots(px[::-1], pl[::-1], lam_c)
                left, right = np.where(lam_c >= pl[0], a, root), np.full(lams.shape, b)
                left = np.where(lam_c < pl[-1], b, left)
            out.append((left, right))
        return out

    def _roots(self, px: np.ndarray, pl: np.ndarray, lam: np.ndarray) -> np.ndarray:
        """x where Λ(x) = lam on a piece where Λ increases along ``px`` (``px`` may run either
        way in x; vectorised).

        Each root is bracketed by the grid cell that holds it and found by a safeguarded
        regula falsi (Illinois) in ln x against ln Λ, with a bisection step every third step,
        until the bracket is a few units in the last place of ln x (machine precision). Values of lam outside the piece's range give an end of the piece (callers
        mask them).
        """
        i = np.clip(np.searchsorted(pl, lam), 1, pl.size - 1)
        lo, hi = np.log(px[i - 1]), np.log(px[i])  # Λ(lo) ≤ lam < Λ(hi)
        target = np.log(np.maximum(lam, 1e-300))

        def f(u: np.ndarray, which: np.ndarray) -> np.ndarray:
            lam_u = self.state.mean_free_path(np.exp(u), self.beta)
            return np.log(np.maximum(lam_u, 1e-300)) - target[which]

        with np.errstate(divide="ignore", invalid="ignore"):
            flo = np.log(np.maximum(pl[i - 1], 1e-300)) - target
            fhi = np.log(np.maximum(pl[i], 1e-300)) - target
        outside = ~((flo <= 0) & (fhi > 0))  # lam beyond the piece: an end (callers mask it)
        lo, hi = np.where(outside, hi, lo), hi
        lo, hi = _bracketed(f, lo, hi, flo, fhi, _ROOT_TOL, relative=True, ftol=1e-15)
        return np.exp(0.5 * (lo + hi))


def _bracketed(f, lo: np.ndarray, hi: np.ndarray, flo: np.ndarray, fhi: np.ndarray,
               tol: float, relative: bool = False, steps: int = _BISECT, ftol: float = 0.0
               ) -> tuple[np.ndarray, np.ndarray]:
    """Shrink brackets with f(lo) ≤ 0 < f(hi) (``lo`` may lie above ``hi``; vectorised).

    Safeguarded regula falsi (Illinois): the secant point, with the function value at an end
    kept twice in a row halved, and a bisection step every third step, so that the bracket
    always shrinks; each bracket stops when narrower than ``tol`` (times max(1, |lo|) with
    ``relative``), or closes on a point where |f| ≤ ``ftol`` (the root to rounding). ``f(u, which)`` evaluates at the points ``u`` of the brackets ``which``
    (a boolean mask). Returns the final (lo, hi): f(lo) ≤ 0 < f(hi) still holds.
    """
    lo, hi, flo, fhi = (np.array(a, dtype=float) for a in (lo, hi, flo, fhi))
    kept = np.zeros(lo.shape, dtype=np.int8)  # +1: hi kept last step, -1: lo kept
    for step in range(steps):
        scale = np.maximum(1.0, np.abs(lo)) if relative else 1.0
        active = np.abs(hi - lo) > tol * scale
        if not active.any():
            break
        a, b, fa, fb = lo[active], hi[active], flo[active], fhi[active]
        with np.errstate(divide="ignore", invalid="ignore"):
            secant = a - fa * (b - a) / (fb - fa)
        ok = np.isfinite(secant) & ((secant - a) * (secant - b) < 0) & (step % 3 != 2)
        u = np.where(ok, secant, 0.5 * (a + b))
        fu = f(u, active)
        below = fu <= 0
        k = kept[active]
        new_fb = np.where(below, np.where(k == 1, 0.5 * fb, fb), fu)
        new_fa = np.where(below, fu, np.where(k == -1, 0.5 * fa, fa))
        hit = np.abs(fu) <= ftol  # at the root to rounding: the bracket closes on u
        lo[active] = np.where(below | hit, u, a)
        hi[active] = np.where(below & ~hit, b, u)
        flo[active], fhi[active] = new_fa, new_fb
        kept[active] = np.where(below, 1, -1)
    return lo, hi


def _extremum(state: BranchState, beta: float, a: float, b: float, maximum: bool) -> float:
    """Position of the extremum of Λ(x) in [a, b] (golden-section search in ln x)."""
    sign = -1.0 if maximum else 1.0
    lo, hi = math.log(a), math.log(b)
    g = (math.sqrt(5.0) - 1.0) / 2.0
    c, d = hi - g * (hi - lo), lo + g * (hi - lo)

    def f(u: float) -> float:
        return sign * float(state.mean_free_path(np.array([math.exp(u)]), beta)[0])

    fc, fd = f(c), f(d)
    for _ in range(80):
        if fc < fd:
            hi, d, fd = d, c, fc
            c = hi - g * (hi - lo)
            fc = f(c)
        else:
            lo, c, fc = c, d, fd
            d = lo + g * (hi - lo)
            fd = f(d)
        if hi - lo < 1e-13:
            break
    return math.exp(0.5 * (lo + hi))


def _cumulative(branches: Sequence[_Branch], lams) -> np.ndarray:
    """K(Λ) [W/(m K)] for every Λ of ``lams`` (one kernel call per branch)."""
    lams = np.atleast_1d(np.asarray(lams, dtype=float))
    out = np.zeros(lams.size)
    for b in branches:
        parts = b.intervals(lams)
        ends = np.concatenate([np.concatenate([left, right]) for left, right in parts])
        inner = np.unique(ends[(ends > 0.0) & (ends < b.state.x_top)])
        # the cumulative at every distinct end: 0 at x = 0, κ_j at the top, the kernel between
        xs = np.concatenate([[0.0], inner, [b.state.x_top]])
        gs = np.concatenate([[0.0], b.state.cumulative(inner, b.beta) if inner.size else [],
                             [b.kappa]])

        def at(v: np.ndarray, xs=xs, gs=gs) -> np.ndarray:
            return np.where(v > 0, gs[np.clip(np.searchsorted(xs, v), 0, xs.size - 1)], 0.0)

        for left, right in parts:
            out += np.maximum(at(right) - at(left), 0.0)
    return out


def _sectioned(f, lo: np.ndarray, hi: np.ndarray, flo: np.ndarray, fhi: np.ndarray,
               tol: float, sections: int = _SECTIONS, steps: int = 200
               ) -> tuple[np.ndarray, np.ndarray]:
    """Shrink brackets lo < hi with f(lo) ≤ 0 < f(hi) of a non-decreasing f until narrower
    than ``tol`` (vectorised over brackets).

    Each step evaluates f at once at ``sections − 1`` equally spaced points of every bracket
    and at its secant point and two points beside it (± 10⁻³ of the width), and keeps the
    sub-bracket where f turns positive: the bracket shrinks at least ``sections``-fold per
    step whatever f looks like (steps of K(Λ) where many phonons share one mean free path),
    and by about a thousandfold where f is smooth. ``f(u, which)`` evaluates the points
    ``u`` (one row per bracket of the mask ``which``). Returns the final (lo, hi).
    """
    lo, hi, flo, fhi = (np.array(a, dtype=float) for a in (lo, hi, flo, fhi))
    inner = np.arange(1, sections) / sections
    for _ in range(steps):
        active = hi - lo > tol
        if not active.any():
            break
        a, b, fa, fb = lo[active], hi[active], flo[active], fhi[active]
        w = b - a
        with np.errstate(divide="ignore", invalid="ignore"):
            s = a - fa * w / (fb - fa)
        s = np.where(np.isfinite(s), s, 0.5 * (a + b))
        u = np.concatenate([a[:, None] + w[:, None] * inner,
                            s[:, None] + w[:, None] * np.array([-1e-3, 0.0, 1e-3])], axis=1)
        u = np.sort(np.clip(u, a[:, None], b[:, None]), axis=1)
        fu = f(u, active)
        above = fu > 0
        j = np.where(above.any(axis=1), above.argmax(axis=1), u.shape[1])  # first above
        rows = np.arange(u.shape[0])
        ends = np.concatenate([a[:, None], u, b[:, None]], axis=1)
        values = np.concatenate([fa[:, None], fu, fb[:, None]], axis=1)
        lo[active], flo[active] = ends[rows, j], values[rows, j]
        hi[active], fhi[active] = ends[rows, j + 1], values[rows, j + 1]
    return lo, hi


def _fractions_mfp(branches: Sequence[_Branch], fractions: Sequence[float]) -> np.ndarray:
    """Smallest Λ with K(Λ) ≥ fraction·κ_L, for each fraction (K is non-decreasing in Λ).

    K is tabulated once on :data:`_LAM_GRID` mean free paths spanning every phonon's; each
    fraction is bracketed by the grid and the bracket shrunk in ln Λ to 10⁻¹⁴
    (:func:`_sectioned`), all fractions at once (one cumulative per step).
    """
    fractions = np.asarray(fractions, dtype=float)
    total = sum(b.kappa for b in branches)
    target = fractions * total
    spans = [b.span for b in branches]
    lo0 = math.log(min(s[0] for s in spans)) - 1e-9
    hi0 = math.log(max(s[1] for s in spans)) + 1e-9
    grid = np.linspace(lo0, hi0, _LAM_GRID)
    K = _cumulative(branches, np.exp(grid))
    first = np.searchsorted(K, target, side="left")  # K[first] ≥ target > K[first - 1]
    done = first == 0
    first = np.clip(first, 1, grid.size - 1)

    def f(u: np.ndarray, which: np.ndarray) -> np.ndarray:
        k = _cumulative(branches, np.exp(u.ravel())).reshape(u.shape) - target[which][:, None]
        return np.where(k >= 0, np.maximum(k, 1e-300 * total), k)  # ≥ target counts as above

    lo, hi = _sectioned(f, grid[first - 1], grid[first], K[first - 1] - target,
                        np.maximum(K[first] - target, 1e-300 * total), 1e-14)
    return np.where(done, math.exp(lo0), np.exp(hi))


def _fraction_mfp(branches: Sequence[_Branch], fraction: float) -> float:
    """Smallest Λ with K(Λ) ≥ fraction·κ_L (see :func:`_fractions_mfp`)."""
    return float(_fractions_mfp(branches, [fraction])[0])


def _mfp_grid(branches: Sequence[_Branch], points: int,
              ends: tuple[float, float] | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Λ grid for tables and figures and K(Λ) on it; the last point is the largest Λ (K = κ_L).

    ``ends`` are the Λ where K reaches 10⁻⁴ and 1 − 10⁻⁴ of κ_L, if already known.
    """
    lo, hi = ends if ends is not None else _fractions_mfp(branches, [1e-4, 1.0 - 1e-4])
    grid = np.geomspace(lo, hi, points) if hi > lo * (1 + 1e-9) else np.array([lo])
    top = max(b.span[1] for b in branches)
    total = sum(b.kappa for b in branches)
    acc = _cumulative(branches, grid)
    if top > grid[-1] * (1 + 1e-12):
        grid = np.append(grid, top)
        acc = np.append(acc, total)
    else:
        acc[-1] = max(acc[-1], _cumulative(branches, [top])[0])
    return grid, acc


@dataclass(frozen=True)
class Spectrum(Tabular):
    """Spectral κ_L of a model at a few temperatures.

    Arrays indexed ``[t, j, k]`` run over temperature, branch and frequency point.

    Attributes
    ----------
    temperature : ndarray, shape (nT,)
        [K].
    branches : tuple of str
        Branch labels (``average``, or ``longitudinal``/``transverse``).
    frequency : ndarray, shape (nT, nB, N)
        Frequency ν = ω/2π [Hz], N equal steps up to the branch's cutoff min(θ_j/T, 40)·k_BT/h.
    spectral : ndarray, shape (nT, nB, N)
        κ per unit frequency (branch weight n_j/3 included) [W/(m K Hz)].
    cumulative : ndarray, shape (nT, nB, N)
        κ carried by the branch's phonons below ν [W/(m K)].
    mfp : ndarray, shape (nT, nB, N)
        Mean free path Λ = v_j τ_eff at ν [m].
    rates : dict[str, ndarray]
        Scattering rate of each active mechanism (key → shape (nT, nB, N)) [1/s].
    kappa_L : ndarray, shape (nT,)
        κ_L of the model (equal to ``kappa predict``) [W/(m K)].
    branch_kappa : ndarray, shape (nT, nB)
        Contribution of each branch [W/(m K)].
    beta : ndarray, shape (nT, nB)
        Callaway's β = I₂/I₃ [s] (0 without normal processes).
    mfp_nodes, mfp_cumulative : tuple of ndarray
        Per temperature: increasing mean free paths Λ [m] (log-spaced where K rises from 10⁻⁴
        to 1 − 10⁻⁴ of κ_L, then the largest Λ of any phonon) and K(Λ) [W/(m K)] on them; the
        last K is κ_L.
    mfp50, mfp80 : ndarray, shape (nT,)
        Λ below which 50 % / 80 % of κ_L is carried [m].
    model : Model
    citations : list of str
    """

    temperature: np.ndarray
    branches: tuple[str, ...]
    frequency: np.ndarray
    spectral: np.ndarray
    cumulative: np.ndarray
    mfp: np.ndarray
    rates: dict[str, np.ndarray]
    kappa_L: np.ndarray
    branch_kappa: np.ndarray
    beta: np.ndarray
    mfp_nodes: tuple[np.ndarray, ...]
    mfp_cumulative: tuple[np.ndarray, ...]
    mfp50: np.ndarray
    mfp80: np.ndarray
    model: Model = field(repr=False)
    citations: list[str] = field(default_factory=list)
    _mfp: tuple = field(default=(), repr=False)

    def mfp_fraction(self, fraction: float) -> np.ndarray:
        """Smallest Λ with K(Λ) ≥ ``fraction`` (0–1) of κ_L, per temperature [m]."""
        return np.array([_fraction_mfp(branches, fraction) for branches in self._mfp])

    def columns(self) -> list[tuple[str, np.ndarray]]:
        """Columns of ``spectrum.csv``: one row per temperature, branch and frequency."""
        nT, nB, N = self.frequency.shape
        Ts = np.broadcast_to(self.temperature[:, None, None], (nT, nB, N)).ravel()
        labels = np.broadcast_to(np.array(self.branches, dtype=object)[None, :, None],
                                 (nT, nB, N)).ravel()
        cols: list[tuple[str, np.ndarray]] = [
            ("T [K]", Ts), ("branch", labels),
            ("frequency [THz]", self.frequency.ravel() / 1e12),
            ("kappa_spectral [W/(m K THz)]", self.spectral.ravel() * 1e12),
            ("kappa_cumulative [W/(m K)]", self.cumulative.ravel()),
            ("mfp [nm]", self.mfp.ravel() * 1e9),
        ]
        for key, r in self.rates.items():
            cols.append((f"rate_{key} [1/s]", r.ravel()))
        return cols

    def mean_free_path_columns(self) -> list[tuple[str, np.ndarray]]:
        """Columns of ``kappa_by_mean_free_path.csv``: ``T [K]``, ``mfp [nm]`` and
        ``kappa_cumulative [W/(m K)]``, the κ_L carried by phonons with mean free path up to
        Λ (log-spaced between 10⁻⁴ and 1 − 10⁻⁴ of κ_L, then the largest Λ, where it is κ_L)."""
        Ts = [np.full(g.size, t) for t, g in zip(self.temperature, self.mfp_nodes, strict=True)]
        return [("T [K]", np.concatenate(Ts)), ("mfp [nm]", np.concatenate(self.mfp_nodes) * 1e9),
                ("kappa_cumulative [W/(m K)]", np.concatenate(self.mfp_cumulative))]

    def to_pandas(self, table: str = "spectrum"):
        """``table="spectrum"`` (per frequency, :meth:`columns`) or ``"mean_free_path"``
        (:meth:`mean_free_path_columns`) as a ``pandas.DataFrame`` (needs pandas)."""
        if table not in ("spectrum", "mean_free_path"):
            raise ConfigError("table", table, "spectrum or mean_free_path")
        return frame(self.columns() if table == "spectrum" else self.mean_free_path_columns())

    def mfp_cumulative_at(self, t: int, mfp) -> np.ndarray:
        """K(Λ) at temperature index ``t`` for mean free paths ``mfp`` [m] → [W/(m K)]."""
        return _cumulative(self._mfp[t], mfp)


def spectrum(model: Model, temperature, *, points: int = SPECTRUM_POINTS,
             mfp_points: int = MFP_POINTS) -> Spectrum:
    """Spectral and cumulative κ_L of ``model`` at each temperature.

    Parameters
    ----------
    model : Model
        The model (a single parameter set).
    temperature : array_like
        Temperatures [K] (at most :data:`MAX_TEMPERATURES`).
    points : int
        Frequencies per branch and temperature (equal steps up to the cutoff).
    mfp_points : int
        Mean free paths per temperature in ``mfp_nodes``.

    Returns
    -------
    Spectrum
        See the module notes for the relaxation time used (Callaway's τ_eff).
    """
    T = check_temperature(temperature)
    if T.size > MAX_TEMPERATURES:
        raise ConfigError("temperature", f"{T.size} temperatures",
                          f"at most {MAX_TEMPERATURES} temperatures per spectrum")
    if not (isinstance(points, int) and 2 <= points <= 100_000):
        raise ConfigError("points", points, "a whole number from 2 to 100000")
    for message in model_warnings(model) + temperature_warnings(model, T):
        warn(message, stacklevel=2)
    labels = model.material.branch_labels()
    nB, nT, N = len(labels), T.size, points
    keys = [m.key for m in model.mechanisms.active]
    freq, spec, cum, mfp = (np.empty((nT, nB, N)) for _ in range(4))
    rates = {key: np.empty((nT, nB, N)) for key in keys}
    branch_kappa, beta = np.empty((nT, nB)), np.zeros((nT, nB))
    nodes, accs, all_mfp, quantiles = [], [], [], []
    for t, temp in enumerate(T):
        built = [_Branch.build(state) for state in branch_states(model, temp)]
        for j, b in enumerate(built):
            s = b.state
            x = s.x_top * np.arange(1, N + 1) / N
            x[-1] = s.x_top
            beta[t, j] = b.beta
            branch_kappa[t, j] = b.kappa
            c = s.cumulative(x, b.beta)
            cum[t, j] = c
            freq[t, j] = x * k_B * temp / h
            spec[t, j] = s.spectral(x, b.beta) * h / (k_B * temp)
            mfp[t, j] = s.mean_free_path(x, b.beta)
            for key, r in s.mechanism_rates(x).items():
                rates[key][t, j] = r
        q = _fractions_mfp(built, [1e-4, 1.0 - 1e-4, 0.5, 0.8])
        grid, acc = _mfp_grid(built, mfp_points, (float(q[0]), float(q[1])))
        quantiles.append(q[2:])
        total = branch_kappa[t].sum()
        if not abs(acc[-1] - total) <= _CLOSURE * total:  # pragma: no cover - a bug guard
            raise RuntimeError(f"mean-free-path accumulation {acc[-1]:.9g} does not close on "
                               f"κ_L = {total:.9g} W/(m K) at {temp:g} K")
        nodes.append(grid)
        accs.append(acc)
        all_mfp.append(tuple(built))
    mfp50 = np.array([q[0] for q in quantiles])
    mfp80 = np.array([q[1] for q in quantiles])
    cites = [CALLAWAY_CITATION, *model.material.citations(), *model.mechanisms.citations()]
    return Spectrum(T, labels, freq, spec, cum, mfp, rates, branch_kappa.sum(axis=1),
                    branch_kappa, beta, tuple(nodes), tuple(accs), mfp50, mfp80, model, cites,
                    tuple(all_mfp))
