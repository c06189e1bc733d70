"""Spectral decomposition of κ_L: per frequency, cumulative over frequency and over mean free path.

For each branch j at temperature T the Callaway conductivity is (DESIGN §2)

    κ_j = pre_j (I₁ + I₂²/I₃),   pre_j = (n_j/3) k_B/(2π² v_j) (k_B T/ħ)³.

**Which relaxation time.** With normal processes the split of κ over phonons is not unique, since
the I₂²/I₃ term is a collective (drift) contribution. kappa follows Callaway (Phys. Rev. 113,
1046 (1959)) and gives every phonon the effective relaxation time

    τ_eff(x) = τ_c(x) (1 + β/τ_N(x)),   β = I₂/I₃  [s],

so that pre_j ∫ τ_eff w dx = pre_j (I₁ + β I₂) = κ_j exactly. Without normal processes
τ_eff = τ_c = τ_R. The mean free path is Λ = v_j τ_eff and the spectral conductivity per unit
frequency ν = ω/2π is

    κ_ν = pre_j w(x) τ_eff(x) · h/(k_B T),   x = hν/(k_B T).

**Closure.** The cumulative over frequency at ν is pre_j (I₁(x) + β I₂(x)) with the integrals
from 0 to x = hν/(k_B T) computed by the same quadrature and kernel as ``kappa predict``, so its
last value (x = θ_j/T, cut at x = 40 as everywhere in kappa) is κ_L of ``predict``. The
cumulative over mean free path merges the branches: it sums pre_j q_i w(x_i) τ_eff(x_i) over the
nodes x_i of a finer fixed rule (Gauss–Legendre panels, 10× the panels of the kernel's rule,
plus the kernel's small-x blocks) ordered by Λ; its total is checked against κ_L to 10⁻⁶.
Λ50 and Λ80 are the mean free paths below which 50 % and 80 % of κ_L is carried
(interpolated in ln Λ between nodes).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from .conductivity import check_convergence, rate_tables
from .config import Config
from .constants import h, hbar, k_B
from .errors import ConfigError
from .kernels import callaway_integrals
from .quadrature import EPS_LOW, X_CUT, X_SWITCH, block_rule, phonon_weight, rules
from .scattering import NPOW

__all__ = ["Spectrum", "spectrum", "spectrum_table", "mfp_table", "SPECTRUM_POINTS"]

SPECTRUM_POINTS = 200  #: frequencies per branch and temperature in the spectral tables
_LOG_PANELS = 200  #: fine rule: panels in ln x over [x_s, min(x_top, 2)]
_LIN_WIDTH = 0.25  #: fine rule: width of the linear panels in x
_NODES = 8  #: Gauss–Legendre nodes per panel of the fine rule
_CLOSURE = 1e-6  #: required agreement of the mean-free-path cumulative with κ_L
_GL = np.polynomial.legendre.leggauss(_NODES)
_BLOCK = block_rule()
_CALLAWAY = "Callaway model: J. Callaway, Phys. Rev. 113, 1046 (1959)"


@dataclass(frozen=True)
class Spectrum:
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
    mfp_nodes : tuple of ndarray
        Per temperature: mean free paths of the fine-rule nodes of all branches, sorted [m].
    mfp_cumulative : tuple of ndarray
        Per temperature: κ carried by phonons with Λ up to ``mfp_nodes`` [W/(m K)].
    mfp50, mfp80 : ndarray, shape (nT,)
        Λ below which 50 % / 80 % of κ_L is carried [m].
    config : Config
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
    config: Config = field(repr=False)
    citations: list[str] = field(default_factory=list)

    def mfp_fraction(self, fraction: float) -> np.ndarray:
        """Λ below which ``fraction`` (0–1) of κ_L is carried, per temperature [m]."""
        return np.array([_crossing(lam, cum, fraction)
                         for lam, cum in zip(self.mfp_nodes, self.mfp_cumulative, strict=True)])


def _labels(config: Config) -> tuple[str, ...]:
    if not config.material.per_branch:
        return ("average",)
    out, seen = [], {}
    for b in config.material.branches:
        seen[b.polarization] = seen.get(b.polarization, 0) + 1
        n = seen[b.polarization]
        out.append(b.polarization if n == 1 else f"{b.polarization}{n}")
    return tuple(out)


def _poly(c: np.ndarray, x: np.ndarray) -> np.ndarray:
    return c[0] + x * (c[1] + x * (c[2] + x * (c[3] + x * c[4])))


def _fine_rule(x_top: float) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights over [x_s, min(x_top, X_CUT)], x_s as in the kernel's rule."""
    top = min(float(x_top), X_CUT)
    x_m = min(top, X_SWITCH)
    t, q = _GL
    edges = np.linspace(math.log(x_m * EPS_LOW), math.log(x_m), _LOG_PANELS + 1)
    half = 0.5 * np.diff(edges)[:, None]
    u = edges[:-1, None] + half * (t + 1.0)
    xs, qs = [np.exp(u).ravel()], [(half * q * np.exp(u)).ravel()]
    if top > x_m:
        n = int(math.ceil((top - x_m) / _LIN_WIDTH - 1e-12))
        lin = np.linspace(x_m, top, n + 1)
        half = 0.5 * np.diff(lin)[:, None]
        xs.append((lin[:-1, None] + half * (t + 1.0)).ravel())
        qs.append((half * q).ravel())
    return np.concatenate(xs), np.concatenate(qs)


def _small_x_nodes(r: np.ndarray, n: np.ndarray, x_s: float, sums: np.ndarray
                   ) -> tuple[np.ndarray, np.ndarray]:
    """Nodes/weights (weight includes w(x)) below x_s, in blocks as the kernel takes them."""
    bt, bq = _BLOCK
    xs, ws = [], []
    lo = x_s
    sums = sums.copy()
    for _ in range(38):
        w_lo = lo * lo * (1.0 - lo * lo / 12.0)
        rr, rn = _poly(r, lo), _poly(n, lo)
        tc = w_lo / (rr + rn)
        f = np.array([tc, tc * rn, tc * rn * rr])
        if np.all(lo * f <= 1e-10 * sums):
            break
        x = lo * bt
        wq = lo * bq * x * x * (1.0 - x * x / 12.0)
        rr, rn = _poly(r, x), _poly(n, x)
        tc = wq / (rr + rn)
        sums += [tc.sum(), (tc * rn).sum(), (tc * rn * rr).sum()]
        xs.append(x)
        ws.append(wq)
        lo *= 1e-8
    if not xs:
        return np.zeros(0), np.zeros(0)
    return np.concatenate(xs), np.concatenate(ws)


def _kernel(tops: np.ndarray, r: np.ndarray, n: np.ndarray) -> np.ndarray:
    """(I₁, I₂, I₃) from 0 to each of ``tops`` for one rate pair (x powers) — the predict kernel."""
    tops = np.minimum(tops, X_CUT)
    uniq, grid = np.unique(tops, return_inverse=True)
    xx, wq, count, x_s = rules(uniq)
    S = tops.size
    res = np.ascontiguousarray(np.broadcast_to(r, (S, NPOW)))
    nrm = np.ascontiguousarray(np.broadcast_to(n, (S, NPOW)))
    out = np.empty((S, 3))
    bt, bq = _BLOCK
    callaway_integrals(xx, wq, count, x_s, grid.astype(np.int64).ravel(), res, nrm, bt, bq, out)
    return out


def spectrum(config: Config, temperature: Sequence[float] | np.ndarray, *,
             points: int = SPECTRUM_POINTS) -> Spectrum:
    """Spectral and cumulative κ_L of ``config`` at each temperature.

    Parameters
    ----------
    config : Config
        The model.
    temperature : array_like
        Temperatures [K], > 0.
    points : int
        Frequencies per branch and temperature (equal steps up to the cutoff).

    Returns
    -------
    Spectrum
        See the module notes for the relaxation time used (Callaway's τ_eff).
    """
    T = np.atleast_1d(np.asarray(temperature, dtype=float))
    if T.size == 0 or np.any(~(T > 0)) or not np.all(np.isfinite(T)):
        raise ConfigError("--at", T.tolist() if T.size < 8 else "array",
                          "temperatures must be finite and > 0 K")
    m, s = config.material, config.scattering
    tables = rate_tables(m, s, T)
    check_convergence(tables.resistive, "with the configured mechanisms")
    nB, nT, N = len(m.branches), T.size, int(points)
    mechs = [*s.resistive, *([s.normal] if s.normal is not None else [])]
    freq = np.empty((nT, nB, N))
    spec = np.empty((nT, nB, N))
    cum = np.empty((nT, nB, N))
    mfp = np.empty((nT, nB, N))
    rates = {mech.key: np.empty((nT, nB, N)) for mech in mechs}
    branch_kappa = np.empty((nT, nB))
    beta = np.zeros((nT, nB))
    nodes_lam: list[np.ndarray] = []
    nodes_cum: list[np.ndarray] = []
    for t, temp in enumerate(T):
        scale = (k_B * temp / hbar) ** np.arange(NPOW)  # ω^k → x^k
        lam_all, dk_all = [], []
        for j, b in enumerate(m.branches):
            r = tables.resistive[j, t] * scale
            n = tables.normal[j, t] * scale
            pre = b.count / 3.0 * k_B / (2.0 * math.pi**2 * b.sound_velocity) * (
                k_B * temp / hbar) ** 3
            top = min(b.debye_temperature / temp, X_CUT)
            x = top * np.arange(1, N + 1) / N
            x[-1] = top
            ints = _kernel(x, r, n)
            i1, i2, i3 = ints[:, 0], ints[:, 1], ints[:, 2]
            bj = i2[-1] / i3[-1] if i3[-1] > 0 else 0.0
            beta[t, j] = bj
            cum[t, j] = pre * (i1 + bj * i2)
            branch_kappa[t, j] = cum[t, j, -1]
            rr, rn = _poly(r, x), _poly(n, x)
            tau = (1.0 + bj * rn) / (rr + rn)
            freq[t, j] = x * k_B * temp / h
            spec[t, j] = pre * phonon_weight(x) * tau * h / (k_B * temp)
            mfp[t, j] = b.sound_velocity * tau
            omega = 2.0 * math.pi * freq[t, j]
            for mech in mechs:
                c = mech.coefficients(m, b, np.array([temp]), s)[:, 0]
                rates[mech.key][t, j] = _poly(c, omega)
            # fine-rule nodes for the mean-free-path accumulation
            xf, qf = _fine_rule(top)
            wf = qf * phonon_weight(xf)
            rr, rn = _poly(r, xf), _poly(n, xf)
            tc = wf / (rr + rn)
            sums = np.array([tc.sum(), (tc * rn).sum(), (tc * rn * rr).sum()])
            xb, wb = _small_x_nodes(r, n, xf[0] if xf.size else top, sums)
            xa, wa = np.concatenate([xb, xf]), np.concatenate([wb, wf])
            rr, rn = _poly(r, xa), _poly(n, xa)
            tau_a = (1.0 + bj * rn) / (rr + rn)
            lam_all.append(b.sound_velocity * tau_a)
            dk_all.append(pre * wa * tau_a)
        lam = np.concatenate(lam_all)
        dk = np.concatenate(dk_all)
        order = np.argsort(lam, kind="stable")
        lam, acc = lam[order], np.cumsum(dk[order])
        total = branch_kappa[t].sum()
        if not abs(acc[-1] - total) <= _CLOSURE * total:  # pragma: no cover - a bug guard
            raise RuntimeError(f"mean-free-path accumulation {acc[-1]:.9g} does not close on "
                               f"κ_L = {total:.9g} W/(m K) at {temp:g} K")
        nodes_lam.append(lam)
        nodes_cum.append(acc)
    kappa = branch_kappa.sum(axis=1)
    mfp50 = np.array([_crossing(la, ac, 0.5) for la, ac in zip(nodes_lam, nodes_cum, strict=True)])
    mfp80 = np.array([_crossing(la, ac, 0.8) for la, ac in zip(nodes_lam, nodes_cum, strict=True)])
    cites = [_CALLAWAY, *s.citations()]
    return Spectrum(T, _labels(config), freq, spec, cum, mfp, rates, kappa, branch_kappa, beta,
                    tuple(nodes_lam), tuple(nodes_cum), mfp50, mfp80, config, cites)


def _crossing(lam: np.ndarray, acc: np.ndarray, fraction: float) -> float:
    """Λ where the accumulation reaches ``fraction`` of its total (linear in ln Λ)."""
    target = fraction * acc[-1]
    i = int(np.searchsorted(acc, target, side="left"))
    i = min(i, acc.size - 1)
    if i == 0:
        return float(lam[0])
    a0, a1 = acc[i - 1], acc[i]
    u = 0.0 if a1 == a0 else (target - a0) / (a1 - a0)
    return float(math.exp(math.log(lam[i - 1]) + u * (math.log(lam[i]) - math.log(lam[i - 1]))))


def mfp_table(result: Spectrum, points: int = 200) -> list[tuple[str, np.ndarray]]:
    """Long-form columns ``T [K]``, ``mfp [nm]``, ``kappa_cumulative [W/(m K)]``.

    Per temperature: ``points`` mean free paths log-spaced between those where the
    accumulation reaches 10⁻⁴ and 1 − 10⁻⁴ of κ_L, then the largest node's Λ (where the
    accumulation equals κ_L). Values are the accumulation up to each Λ (nodes with Λ ≤ it).
    """
    Ts, lams, accs = [], [], []
    for temp, lam, acc in zip(result.temperature, result.mfp_nodes, result.mfp_cumulative,
                              strict=True):
        lo, hi = _crossing(lam, acc, 1e-4), _crossing(lam, acc, 1.0 - 1e-4)
        grid = np.geomspace(lo, hi, points) if hi > lo * (1 + 1e-9) else np.array([lo])
        grid = np.append(grid[grid < lam[-1]], lam[-1])
        idx = np.searchsorted(lam, grid, side="right") - 1
        vals = np.where(idx >= 0, acc[np.maximum(idx, 0)], 0.0)
        Ts.append(np.full(grid.size, temp))
        lams.append(grid)
        accs.append(vals)
    return [("T [K]", np.concatenate(Ts)), ("mfp [nm]", np.concatenate(lams) * 1e9),
            ("kappa_cumulative [W/(m K)]", np.concatenate(accs))]


def spectrum_table(result: Spectrum) -> list[tuple[str, list]]:
    """Long-form columns of ``spectrum.csv`` (one row per temperature, branch and frequency)."""
    nT, nB, N = result.frequency.shape
    Ts = np.broadcast_to(result.temperature[:, None, None], (nT, nB, N)).ravel()
    labels = np.broadcast_to(np.array(result.branches, dtype=object)[None, :, None],
                             (nT, nB, N)).ravel()
    cols: list[tuple[str, list]] = [
        ("T [K]", Ts), ("branch", labels),
        ("frequency [THz]", result.frequency.ravel() / 1e12),
        ("kappa_spectral [W/(m K THz)]", result.spectral.ravel() * 1e12),
        ("kappa_cumulative [W/(m K)]", result.cumulative.ravel()),
        ("mfp [nm]", result.mfp.ravel() * 1e9),
    ]
    for key, r in result.rates.items():
        cols.append((f"rate_{key} [1/s]", r.ravel()))
    return cols
