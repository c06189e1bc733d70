"""Fixed-order quadrature rules over the reduced phonon frequency x = ħω/(k_B T).

The Callaway integrands are (rational function of x) × w(x), w(x) = x⁴eˣ/(eˣ−1)². Scattering
rates are sums of powers of ω with non-negative coefficients, so their crossovers can sit at any
scale of x, from 10⁻⁶ (a weak boundary term under strong Umklapp) to tens. The rule therefore
uses Gauss–Legendre panels of equal width in ln x from ``x_s = x_m·EPS_LOW`` to ``x_m =
min(x_top, X_SWITCH)`` (every scale gets the same resolution), then panels of fixed width in x up
to ``x_top = min(x_D, X_CUT)``. Above ``X_CUT`` the phonon weight w(x) < 10⁻⁹ of its peak and the
integrand is dropped (relative error below 10⁻¹⁰ because every rate grows with ω).

The piece [0, x_s] is left to the kernel: usually negligible, it can dominate when no ω⁰ term
is present (no boundary scattering) and the crossover between the ω² and ω⁴ terms lies below
x_s. The kernel then integrates it in blocks of :data:`BLOCK_DECADES` decades with the relative
rule :func:`block_rule` (where w(x) = x²(1 − x²/12) to double precision) until the rest is
negligible.

The rule depends only on x_top, so one rule is shared by all parameter sets with the same Debye
temperature and temperature. Accuracy (≤ 10⁻⁶ relative to adaptive quadrature from 1 K to 3θ,
boundary-, point-defect- and Umklapp-dominated cases) is checked in ``tests/test_kernels.py``.
"""

from __future__ import annotations

import numpy as np

__all__ = ["X_CUT", "rule", "rules", "lower_end", "block_rule", "phonon_weight", "MAX_NODES",
           "relative_log_rule", "linear_nodes", "X_SWITCH", "EPS_LOW", "LIN_WIDTH"]

X_CUT = 40.0  #: upper cut of the x integral (w(40)·40 < 1e-9 of ∫w)
X_SWITCH = 2.0  #: change from log-spaced to linear panels
EPS_LOW = 1e-10 #: the log panels start at x_s = x_m·EPS_LOW
LOG_PANELS = 20  #: panels in ln x over [x_s, x_m]  (width ≈ 1.15 in ln x)
LOG_NODES = 7  #: Gauss–Legendre nodes per log panel
LIN_WIDTH = 4.0  #: maximum width of a linear panel in x
LIN_NODES = 8  #: Gauss–Legendre nodes per linear panel
BLOCK_DECADES = 8.0  #: decades of x per block of the small-x rule
BLOCK_PANELS = 12  #: log panels per block

_MAX_LIN = int(np.ceil((X_CUT - X_SWITCH) / LIN_WIDTH))
MAX_NODES = LOG_PANELS * LOG_NODES + _MAX_LIN * LIN_NODES

_GL = {n: np.polynomial.legendre.leggauss(n) for n in (LOG_NODES, LIN_NODES)}


def phonon_weight(x: np.ndarray) -> np.ndarray:
    """w(x) = x⁴eˣ/(eˣ−1)², evaluated stably (x ≥ 0; w(0) = 0).

    Parameters
    ----------
    x : array_like
        Reduced frequency ħω/(k_B T) [1].
    """
    x = np.asarray(x, dtype=float)
    em = np.exp(-x)
    with np.errstate(invalid="ignore", divide="ignore"):
        # x⁴eˣ/(eˣ−1)² = x² · (x/(1−e⁻ˣ))² · e⁻ˣ ; use expm1 for small x
        s = x / -np.expm1(-x)
        out = x * x * s * s * em
    return np.where(x > 0, out, 0.0)


def _panel(a: float, b: float, n: int) -> tuple[np.ndarray, np.ndarray]:
    t, q = _GL[n]
    half = 0.5 * (b - a)
    return a + half * (t + 1.0), half * q


def rule(x_top: float) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights for ∫ f(x) dx over [x_s, x_top] (x_top is cut at :data:`X_CUT`).

    Parameters
    ----------
    x_top : float
        Upper limit, usually x_D = θ/T [1]; must be > 0.

    Returns
    -------
    x, q : ndarray
        Nodes and weights; ∫ f ≈ Σ q_i f(x_i).
    """
    if not x_top > 0:
        raise ValueError("x_top must be > 0")
    x_top = min(float(x_top), X_CUT)
    x_m = min(x_top, X_SWITCH)
    lo = x_m * EPS_LOW
    edges = np.linspace(np.log(lo), np.log(x_m), LOG_PANELS + 1)
    u, qu = _panels(edges, LOG_NODES)  # all panels at once (same arithmetic as _panel)
    x = np.exp(u)
    xs, qs = [x], [qu * x]  # dx = x du
    if x_top > x_m:
        n_lin = int(np.ceil((x_top - x_m) / LIN_WIDTH - 1e-12))
        lin = np.linspace(x_m, x_top, n_lin + 1)
        x, q = _panels(lin, LIN_NODES)
        xs.append(x)
        qs.append(q)
    return np.concatenate(xs), np.concatenate(qs)


def _panels(edges: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """:func:`_panel` for every pair of consecutive ``edges``, flattened in order."""
    t, q = _GL[n]
    a, b = edges[:-1, None], edges[1:, None]
    half = 0.5 * (b - a)
    return (a + half * (t + 1.0)).ravel(), (half * q).ravel()


def lower_end(x_top: float) -> float:
    """x_s, the lower end of :func:`rule` for this upper limit."""
    return min(float(x_top), X_CUT, X_SWITCH) * EPS_LOW


def block_rule() -> tuple[np.ndarray, np.ndarray]:
    """Relative nodes t and weights q for ∫ over [10^(−BLOCK_DECADES)·s, s]: x = s·t, dx = s·q."""
    edges = np.linspace(-BLOCK_DECADES * np.log(10.0), 0.0, BLOCK_PANELS + 1)
    ts, qs = [], []
    for a, b in zip(edges[:-1], edges[1:], strict=True):
        u, qu = _panel(a, b, LOG_NODES)
        t = np.exp(u)
        ts.append(t)
        qs.append(qu * t)
    return np.concatenate(ts), np.concatenate(qs)


_CACHE: dict[float, tuple[np.ndarray, np.ndarray]] = {}
_CACHE_SIZE = 20_000


def _weighted_rule(top: float) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and q·w(x) for one upper limit, memoised (fits and sweeps reuse temperatures)."""
    hit = _CACHE.get(top)
    if hit is None:
        x, q = rule(top)
        hit = (x, q * phonon_weight(x))
        if len(_CACHE) >= _CACHE_SIZE:
            _CACHE.clear()
        _CACHE[top] = hit
    return hit


def relative_log_rule() -> tuple[np.ndarray, np.ndarray]:
    """Log-panel nodes t and weights q relative to x_m: x = x_m·t, dx = x_m·q."""
    x, q = rule(1.0)  # x_top = 1 → x_m = 1, log panels only
    return x, q


def linear_nodes() -> tuple[np.ndarray, np.ndarray]:
    """Gauss–Legendre nodes and weights on [−1, 1] used by the linear panels."""
    return _GL[LIN_NODES]


def rules(x_top: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Rules for many upper limits, padded to :data:`MAX_NODES`.

    Returns
    -------
    x : ndarray, shape (n, MAX_NODES)
        Nodes (padding: 1.0).
    wq : ndarray, shape (n, MAX_NODES)
        Quadrature weight times phonon weight, q_i·w(x_i) (padding: 0.0).
    count : ndarray of int64, shape (n,)
        Number of used nodes in each row.
    x_s : ndarray, shape (n,)
        Lower end of each rule (the kernel handles [0, x_s]).
    """
    x_top = np.asarray(x_top, dtype=float).ravel()
    n = x_top.size
    xx = np.ones((n, MAX_NODES))
    wq = np.zeros((n, MAX_NODES))
    count = np.zeros(n, dtype=np.int64)
    x_s = np.array([lower_end(t) for t in x_top])
    tops = np.minimum(x_top, X_CUT)
    missing = [t for t in np.unique(tops) if float(t) not in _CACHE]
    if len(missing) > 8:  # many new upper limits (spectra): build them together
        _build_many(np.array(missing, dtype=float))
    for i, top in enumerate(tops):
        x, w = _weighted_rule(float(top))
        xx[i, : x.size] = x
        wq[i, : x.size] = w
        count[i] = x.size
    return xx, wq, count, x_s


def _build_many(tops: np.ndarray) -> None:
    """:func:`rule` and the phonon weight for many upper limits at once, into the memo.

    The arithmetic is that of :func:`rule`, element by element (the same nodes to the last
    bit); tops are grouped by their number of linear panels.
    """
    if len(_CACHE) + tops.size >= _CACHE_SIZE:
        _CACHE.clear()
    x_m = np.minimum(tops, X_SWITCH)
    lo = x_m * EPS_LOW
    edges = np.linspace(np.log(lo), np.log(x_m), LOG_PANELS + 1)  # (P + 1, n)
    t, q = _GL[LOG_NODES]
    a, b = edges[:-1][:, :, None], edges[1:][:, :, None]  # (P, n, 1)
    half = 0.5 * (b - a)
    u = (a + half * (t + 1.0)).transpose(1, 0, 2).reshape(tops.size, -1)
    qu = (half * q).transpose(1, 0, 2).reshape(tops.size, -1)
    x_log = np.exp(u)
    q_log = qu * x_log
    n_lin = np.where(tops > x_m, np.ceil((tops - x_m) / LIN_WIDTH - 1e-12), 0).astype(int)
    for n in np.unique(n_lin):
        sel = np.flatnonzero(n_lin == n)
        if n == 0:
            xs, qs = x_log[sel], q_log[sel]
        else:
            lin = np.linspace(x_m[sel], tops[sel], n + 1)  # (n + 1, k)
            tl, ql = _GL[LIN_NODES]
            la, lb = lin[:-1][:, :, None], lin[1:][:, :, None]
            lhalf = 0.5 * (lb - la)
            xl = (la + lhalf * (tl + 1.0)).transpose(1, 0, 2).reshape(sel.size, -1)
            qlin = (lhalf * ql).transpose(1, 0, 2).reshape(sel.size, -1)
            xs = np.concatenate([x_log[sel], xl], axis=1)
            qs = np.concatenate([q_log[sel], qlin], axis=1)
        w = qs * phonon_weight(xs)
        for k, i in enumerate(sel):
            _CACHE[float(tops[i])] = (xs[k], w[k])
