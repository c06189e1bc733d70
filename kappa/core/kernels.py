"""numba kernels for the Callaway integrals.

For every sample s (one branch at one temperature for one parameter set) the kernel evaluates,
with the fixed rule of :mod:`kappa.core.quadrature` for that sample's upper limit,

    I₁ = ∫ τ_c w dx,   I₂ = ∫ (τ_c/τ_N) w dx,   I₃ = ∫ (τ_c/(τ_N τ_R)) w dx,

τ_R⁻¹ = Σ_k r_k x^k, τ_N⁻¹ = Σ_k n_k x^k, τ_c⁻¹ = τ_R⁻¹ + τ_N⁻¹ (coefficients already in powers of
the reduced frequency x, rates in 1/s). The piece [0, x_s] below the rule is added by
``_small_x``. A sample whose resistive rate has no x⁰–x² term (I₁ diverges at x → 0) gets
I₁ = inf, which the evaluator reports. Users never call these; see :mod:`kappa.core.evaluator`.
"""

from __future__ import annotations

import numpy as np

from kappa.core.jit import jit, prange

__all__ = ["callaway_integrals", "callaway_integrals_serial", "callaway_integrals_free",
           "callaway_integrals_free_serial", "callaway_integrals_nodes",
           "callaway_integrals_curved"]

# fastmath flags: reassociation lets the sums vectorise; no 'nnan'/'ninf' so that a NaN from bad
# input would still show. Compiled once per machine, then loaded from the user's cache folder
# (core/jit.py decides where).
# error_model="numpy": a division by zero gives inf/NaN (which the evaluator reports as an error
# naming the input) instead of raising inside the compiled code.
_FAST = {"reassoc", "contract", "arcp", "nsz"}
_NP = "numpy"

_TAIL_TOL = 1e-10  # stop the small-x blocks when x·f(x) at the block's end is below this × total
_MAX_BLOCKS = 38  # 38 blocks of 8 decades reach below the smallest double


@jit(fastmath=_FAST, error_model=_NP)
def _poly(c, x):  # pragma: no cover - compiled
    return c[0] + x * (c[1] + x * (c[2] + x * (c[3] + x * c[4])))


@jit(fastmath=_FAST, error_model=_NP)
def _terms(r, n, x, w):  # pragma: no cover - compiled
    rr = _poly(r, x)
    rn = _poly(n, x)
    tc = w / (rr + rn)
    return tc, tc * rn, tc * rn * rr


@jit(error_model=_NP)
def _small_terms(r, n, x):  # pragma: no cover - compiled
    """The three integrands τ_c w, τ_c w/τ_N, τ_c w/(τ_N τ_R) with w = x²(1 − x²/12), written so
    that nothing under- or overflows as x → 0: τ_c w = (1 − x²/12)/(R/x²), where
    R/x² = c₀/x² + c₁/x + c₂ + c₃x + c₄x² is the total rate over x²."""
    rr = _poly(r, x)
    rn = _poly(n, x)
    inv = 1.0 / x
    s = (r[2] + n[2]) + x * ((r[3] + n[3]) + x * (r[4] + n[4]))
    c1 = r[1] + n[1]
    if c1 > 0.0:
        s += c1 * inv
    c0 = r[0] + n[0]
    if c0 > 0.0:
        s += c0 * inv * inv
    tc = (1.0 - x * x / 12.0) / s
    return tc, tc * rn, tc * rn * rr


@jit(error_model=_NP)
def _small_x(r, n, xs, bt, bq, i1, i2, i3):  # pragma: no cover - compiled
    """Add ∫₀^{x_s} to (i1, i2, i3); w(x) = x²(1 − x²/12) holds to double precision there."""
    lo = xs
    for _ in range(_MAX_BLOCKS):
        f1, f2, f3 = _small_terms(r, n, lo)
        if (lo * f1 <= _TAIL_TOL * i1 and lo * f2 <= _TAIL_TOL * i2
                and lo * f3 <= _TAIL_TOL * i3):
            break
        for i in range(bt.shape[0]):
            x = lo * bt[i]
            a, b, c = _small_terms(r, n, x)
            q = lo * bq[i]
            i1 += a * q
            i2 += b * q
            i3 += c * q
        lo = lo * 1e-8
    return i1, i2, i3


@jit(fastmath=_FAST, error_model=_NP, inline="always")
def _shared_rule_sample(x, wq, count, x_s, grid, res, nrm, bt, bq, out, s):  # pragma: no cover
    """Integrals of sample s with the shared rule ``grid[s]`` (see :func:`callaway_integrals`)."""
    g = grid[s]
    r = res[s]
    nn = nrm[s]
    r0, r1, r2, r3, r4 = r[0], r[1], r[2], r[3], r[4]
    if not (r0 > 0.0 or r1 > 0.0 or r2 > 0.0):  # no ω⁰–ω² term: I₁ diverges at x → 0
        out[s, 0] = np.inf
        out[s, 1] = np.nan
        out[s, 2] = np.nan
        return
    n0, n1, n2, n3, n4 = nn[0], nn[1], nn[2], nn[3], nn[4]
    i1 = 0.0
    i2 = 0.0
    i3 = 0.0
    m = count[g]
    if n0 == 0.0 and n1 == 0.0 and n2 == 0.0 and n3 == 0.0 and n4 == 0.0:
        for i in range(m):
            xi = x[g, i]
            i1 += wq[g, i] / (r0 + xi * (r1 + xi * (r2 + xi * (r3 + xi * r4))))
    else:
        for i in range(m):
            xi = x[g, i]
            rr = r0 + xi * (r1 + xi * (r2 + xi * (r3 + xi * r4)))
            rn = n0 + xi * (n1 + xi * (n2 + xi * (n3 + xi * n4)))
            tc = wq[g, i] / (rr + rn)
            i1 += tc
            i2 += tc * rn
            i3 += tc * rn * rr
    i1, i2, i3 = _small_x(r, nn, x_s[g], bt, bq, i1, i2, i3)
    out[s, 0] = i1
    out[s, 1] = i2
    out[s, 2] = i3


@jit(parallel=True, fastmath=_FAST, error_model=_NP)
def callaway_integrals(x, wq, count, x_s, grid, res, nrm, bt, bq, out):  # pragma: no cover
    """Fill ``out[s] = (I₁, I₂, I₃)`` for every sample s (in parallel).

    x, wq : (G, M) nodes and weight×phonon weight of G rules; count : (G,) used nodes;
    x_s : (G,) lower ends of the rules; grid : (S,) rule index per sample;
    res, nrm : (S, 5) coefficients; bt, bq : relative small-x block rule; out : (S, 3).
    """
    for s in prange(grid.shape[0]):
        _shared_rule_sample(x, wq, count, x_s, grid, res, nrm, bt, bq, out, s)


@jit(fastmath=_FAST, error_model=_NP)
def callaway_integrals_serial(x, wq, count, x_s, grid, res, nrm, bt, bq, out):  # pragma: no cover
    """:func:`callaway_integrals` in one thread: for small problems, where starting the thread
    pool (and loading the parallel code) costs more than it saves."""
    for s in range(grid.shape[0]):
        _shared_rule_sample(x, wq, count, x_s, grid, res, nrm, bt, bq, out, s)


@jit(fastmath=_FAST, error_model=_NP)
def _weight(x):  # pragma: no cover - compiled
    """x⁴eˣ/(eˣ−1)² = x⁴e⁻ˣ/(1−e⁻ˣ)² (x > 0); a series below x = 0.05 (error < 3e-16)."""
    if x < 0.05:
        x2 = x * x
        return x2 * (1.0 + x2 * (-1.0 / 12.0 + x2 * (1.0 / 240.0 - x2 / 6048.0)))
    em = np.exp(-x)
    d = -np.expm1(-x)
    return x * x * x * x * em / (d * d)


@jit(fastmath=_FAST, error_model=_NP, inline="always")
def _own_rule_sample(x_top, res, nrm, log_t, log_q, log_w, lin_t, lin_q, x_switch, eps_low,
                     lin_width, bt, bq, out, s):  # pragma: no cover - compiled
    """Integrals of sample s with a rule built for its own upper limit."""
    r = res[s]
    nn = nrm[s]
    if not (r[0] > 0.0 or r[1] > 0.0 or r[2] > 0.0):  # I₁ diverges at x → 0
        out[s, 0] = np.inf
        out[s, 1] = np.nan
        out[s, 2] = np.nan
        return
    top = x_top[s]
    x_m = min(top, x_switch)
    i1 = 0.0
    i2 = 0.0
    i3 = 0.0
    shared = x_m == x_switch
    for i in range(log_t.shape[0]):
        xi = x_m * log_t[i]
        wq = x_m * log_q[i] * (log_w[i] if shared else _weight(xi))
        a1, a2, a3 = _terms(r, nn, xi, wq)
        i1 += a1
        i2 += a2
        i3 += a3
    if top > x_m:
        n_lin = int(np.ceil((top - x_m) / lin_width - 1e-12))
        h = (top - x_m) / n_lin
        for p in range(n_lin):
            a = x_m + p * h
            for i in range(lin_t.shape[0]):
                xi = a + 0.5 * h * (lin_t[i] + 1.0)
                wq = 0.5 * h * lin_q[i] * _weight(xi)
                a1, a2, a3 = _terms(r, nn, xi, wq)
                i1 += a1
                i2 += a2
                i3 += a3
    i1, i2, i3 = _small_x(r, nn, x_m * eps_low, bt, bq, i1, i2, i3)
    out[s, 0] = i1
    out[s, 1] = i2
    out[s, 2] = i3


@jit(parallel=True, fastmath=_FAST, error_model=_NP)
def callaway_integrals_free(x_top, res, nrm, log_t, log_q, log_w, lin_t, lin_q, x_switch,
                            eps_low, lin_width, bt, bq, out):  # pragma: no cover - compiled
    """As :func:`callaway_integrals`, but builds each sample's rule on the fly.

    Used when nearly every sample has its own upper limit (no rule to share). The rule is the
    one of :func:`kappa.core.quadrature.rule`: ``log_t, log_q`` are the log-panel nodes and weights
    relative to x_m (x = x_m·t, dx = x_m·q), ``log_w`` the phonon weight at x_switch·t (the
    common case x_m = x_switch), ``lin_t, lin_q`` Gauss–Legendre nodes and weights on [−1, 1]
    for the linear panels.
    """
    for s in prange(x_top.shape[0]):
        _own_rule_sample(x_top, res, nrm, log_t, log_q, log_w, lin_t, lin_q, x_switch, eps_low,
                         lin_width, bt, bq, out, s)


@jit(fastmath=_FAST, error_model=_NP)
def callaway_integrals_free_serial(x_top, res, nrm, log_t, log_q, log_w, lin_t, lin_q,
                                   x_switch, eps_low, lin_width, bt, bq,
                                   out):  # pragma: no cover - compiled
    """:func:`callaway_integrals_free` in one thread (small problems)."""
    for s in range(x_top.shape[0]):
        _own_rule_sample(x_top, res, nrm, log_t, log_q, log_w, lin_t, lin_q, x_switch, eps_low,
                         lin_width, bt, bq, out, s)


@jit(parallel=True, fastmath=_FAST, error_model=_NP)
def callaway_integrals_nodes(x, wq, count, x_s, grid, res, nrm, res_nodes, nrm_nodes, res_low,
                             nrm_low, bt, bq, out):  # pragma: no cover - compiled
    """As :func:`callaway_integrals`, with rates that are not polynomials in x.

    ``res_nodes``, ``nrm_nodes`` (S, M): the non-polynomial part of each sample's rates [1/s]
    at the nodes of its rule (added to the polynomials ``res``, ``nrm``); ``res_low``,
    ``nrm_low`` (S, 5): that part's polynomial limit as x → 0, used below the rule.
    """
    n_samples = grid.shape[0]
    for s in prange(n_samples):
        g = grid[s]
        r = res[s]
        nn = nrm[s]
        r_low = r + res_low[s]
        n_low = nn + nrm_low[s]
        if not (r_low[0] > 0.0 or r_low[1] > 0.0 or r_low[2] > 0.0):  # diverges at x → 0
            out[s, 0] = np.inf
            out[s, 1] = np.nan
            out[s, 2] = np.nan
            continue
        i1 = 0.0
        i2 = 0.0
        i3 = 0.0
        for i in range(count[g]):
            xi = x[g, i]
            rr = _poly(r, xi) + res_nodes[s, i]
            rn = _poly(nn, xi) + nrm_nodes[s, i]
            tc = wq[g, i] / (rr + rn)
            i1 += tc
            i2 += tc * rn
            i3 += tc * rn * rr
        i1, i2, i3 = _small_x(r_low, n_low, x_s[g], bt, bq, i1, i2, i3)
        out[s, 0] = i1
        out[s, 1] = i2
        out[s, 2] = i3


@jit(fastmath=_FAST, error_model=_NP)
def _shaped(c, x, g, p):  # pragma: no cover - compiled
    """Σ_k c_k x^k g p^k: a polynomial rate carried over to a curved branch as v_g × σ(q)."""
    xp = x * p
    return g * (c[0] + xp * (c[1] + xp * (c[2] + xp * (c[3] + xp * c[4]))))


@jit(parallel=True, fastmath=_FAST, error_model=_NP)
def callaway_integrals_curved(x, wq, gp, count, x_s, grid, res, nrm, res_nodes, nrm_nodes,
                              res_low, nrm_low, has_nodes, bt, bq, out):  # pragma: no cover
    """As :func:`callaway_integrals_nodes`, for branches with a dispersion.

    x : (G, M) nodes; wq : (G, 3, M) weights of I₁, I₂, I₃ (quadrature weight × w(x) × F₁,
    F₂, F₃ of :mod:`kappa.core.dispersion`); gp : (G, 2, M) g = v_g/v and p = qv/ω at the
    nodes; res : (S, 2, 5) resistive coefficients of x^k used as written and as v_g × σ(q)
    (× g p^k); nrm : (S, 5); res_nodes, nrm_nodes : (S, M) non-polynomial parts (read only when
    ``has_nodes``); res_low, nrm_low : (S, 5) the total rates' polynomial limit as x → 0, used
    below the rule (where g = p = 1).
    """
    n_samples = grid.shape[0]
    for s in prange(n_samples):
        gi = grid[s]
        r = res[s]
        nn = nrm[s]
        r_low = res_low[s]
        n_low = nrm_low[s]
        if not (r_low[0] > 0.0 or r_low[1] > 0.0 or r_low[2] > 0.0):  # diverges at x → 0
            out[s, 0] = np.inf
            out[s, 1] = np.nan
            out[s, 2] = np.nan
            continue
        flux = (r[1, 0] != 0.0 or r[1, 1] != 0.0 or r[1, 2] != 0.0 or r[1, 3] != 0.0
                or r[1, 4] != 0.0)
        i1 = 0.0
        i2 = 0.0
        i3 = 0.0
        for i in range(count[gi]):
            xi = x[gi, i]
            rr = _poly(r[0], xi)
            if flux:
                rr += _shaped(r[1], xi, gp[gi, 0, i], gp[gi, 1, i])
            rn = _poly(nn, xi)
            if has_nodes:
                rr += res_nodes[s, i]
                rn += nrm_nodes[s, i]
            tc = 1.0 / (rr + rn)
            i1 += wq[gi, 0, i] * tc
            i2 += wq[gi, 1, i] * tc * rn
            i3 += wq[gi, 2, i] * tc * rn * rr
        i1, i2, i3 = _small_x(r_low, n_low, x_s[gi], bt, bq, i1, i2, i3)
        out[s, 0] = i1
        out[s, 1] = i2
        out[s, 2] = i3
