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
last value (x = θ_j/T, cut at x = 40 as everywhere in kappa) is κ_L of ``predict``.

**Cumulative over mean free path**, all branches merged: K(Λ) = Σ_j pre_j ∫_{Λ_j(x) ≤ Λ}
τ_eff w dx. Λ_j(x) ≤ Λ is a polynomial inequality in x,
v_j(1 + β τ_N⁻¹(x)) − Λ (τ_R⁻¹(x) + τ_N⁻¹(x)) ≤ 0 (degree ≤ 4), so the set of phonons with mean
free path up to Λ is a union of intervals between the real roots of that polynomial; each
interval's share is a difference of the frequency cumulative above, computed by the kernel. K
is therefore exact to the kernel's accuracy at every Λ, whether or not Λ(x) is monotonic. Λ50
and Λ80 are the smallest Λ with K(Λ) ≥ 50 % and 80 % of κ_L (bisection in ln Λ).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from kappa.core.constants import h, hbar, k_B
from kappa.core.evaluator import check_convergence, integrals, rate_tables
from kappa.core.quadrature import EPS_LOW, X_CUT, block_rule, phonon_weight
from kappa.core.scattering import NPOW
from kappa.errors import ConfigError
from kappa.io.config import Config, check_temperatures

__all__ = ["Spectrum", "spectrum", "spectrum_table", "mfp_table", "SPECTRUM_POINTS"]

SPECTRUM_POINTS = 200  #: frequencies per branch and temperature in the spectral tables
_CLOSURE = 1e-6  #: required agreement of the mean-free-path cumulative with κ_L
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
        Per temperature: increasing mean free paths Λ (log-spaced where K rises from 10⁻⁴ to
        1 − 10⁻⁴ of κ_L, then the largest Λ of any phonon) [m].
    mfp_cumulative : tuple of ndarray
        Per temperature: K(Λ), κ carried by phonons with mean free path up to ``mfp_nodes``
        [W/(m K)]; the last value is κ_L.
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
    mfp_models: tuple = field(default=(), repr=False)

    def mfp_fraction(self, fraction: float) -> np.ndarray:
        """Smallest Λ with K(Λ) ≥ ``fraction`` (0–1) of κ_L, per temperature [m]."""
        return np.array([_fraction_mfp(models, fraction) for models in self.mfp_models])

    def mfp_cumulative_at(self, t: int, mfp) -> np.ndarray:
        """K(Λ) at temperature index ``t`` for mean free paths ``mfp`` [m] → [W/(m K)]."""
        return _cumulative(self.mfp_models[t], np.atleast_1d(np.asarray(mfp, dtype=float)))


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


def _kernel(tops: np.ndarray, r: np.ndarray, n: np.ndarray) -> np.ndarray:
    """(I₁, I₂, I₃) from 0 to each of ``tops`` for one rate pair (x powers) — the predict kernel."""
    return integrals(np.asarray(tops, dtype=float), r[None, :], n[None, :])


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
    check_temperatures(config, T)
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
    mfp_models: list[tuple] = []
    for t, temp in enumerate(T):
        scale = (k_B * temp / hbar) ** np.arange(NPOW)  # ω^k → x^k
        models = []
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
            models.append(_BranchMFP(r.copy(), n.copy(), float(bj), float(pre), float(top),
                                     float(b.sound_velocity), float(branch_kappa[t, j])))
        models_t = tuple(models)
        mfp_models.append(models_t)
        grid, acc = _mfp_grid(models_t)
        total = branch_kappa[t].sum()
        if not abs(acc[-1] - total) <= _CLOSURE * total:  # pragma: no cover - a bug guard
            raise RuntimeError(f"mean-free-path accumulation {acc[-1]:.9g} does not close on "
                               f"κ_L = {total:.9g} W/(m K) at {temp:g} K")
        nodes_lam.append(grid)
        nodes_cum.append(acc)
    kappa = branch_kappa.sum(axis=1)
    mfp50 = np.array([_fraction_mfp(mm, 0.5) for mm in mfp_models])
    mfp80 = np.array([_fraction_mfp(mm, 0.8) for mm in mfp_models])
    cites = [_CALLAWAY, *s.citations()]
    return Spectrum(T, _labels(config), freq, spec, cum, mfp, rates, kappa, branch_kappa, beta,
                    tuple(nodes_lam), tuple(nodes_cum), mfp50, mfp80, config, cites,
                    tuple(mfp_models))


@dataclass(frozen=True)
class _BranchMFP:
    """One branch at one temperature: rates in powers of x [1/s], β [s], prefactor, cutoff."""

    r: np.ndarray
    n: np.ndarray
    beta: float
    pre: float
    top: float
    v: float
    kappa: float

    def mfp(self, x: np.ndarray) -> np.ndarray:
        rr, rn = _poly(self.r, x), _poly(self.n, x)
        return self.v * (1.0 + self.beta * rn) / (rr + rn)

    def span(self) -> tuple[float, float]:
        """Smallest and largest Λ over the phonons that carry heat (x from x_s·10⁻⁸ to top)."""
        x = np.geomspace(self.top * EPS_LOW * 1e-8, self.top, 4001)
        lam = self.mfp(x)
        return float(lam.min()), float(lam.max())


_LAM_SLACK = 1e-13  # Λ(x) within this relative distance of Λ counts as "≤ Λ" (constant Λ(x))


def _intervals(b: _BranchMFP, lam: float) -> list[tuple[float, float]]:
    """Intervals of (0, top) where Λ(x) ≤ Λ: between the real roots of a polynomial in x."""
    lam_c = lam * (1.0 + _LAM_SLACK)
    c = b.v * b.beta * b.n - lam_c * (b.r + b.n)
    c[0] += b.v
    scale = b.top ** np.arange(NPOW)  # x = top·y keeps the roots near [0, 1]
    cy = c * scale
    nz = np.flatnonzero(cy != 0.0)
    roots: list[float] = []
    if nz.size and nz[-1] >= 1:
        deg = int(nz[-1])
        for z in np.roots(cy[deg::-1]):
            if abs(z.imag) <= 1e-6 * abs(z) and 0.0 < z.real < 1.0:
                roots.append(_polish(cy[: deg + 1], float(z.real)) * b.top)
    pts = [0.0, *sorted(x for x in roots if 0.0 < x < b.top), b.top]
    out = []
    for lo, hi in zip(pts[:-1], pts[1:], strict=True):
        if hi <= lo:
            continue
        mid = 0.5 * (lo + hi) if lo > 0 else hi * 1e-3 if hi > 0 else hi
        if _poly(c, np.array(mid)) <= 0.0:
            if out and out[-1][1] == lo:
                out[-1] = (out[-1][0], hi)
            else:
                out.append((lo, hi))
    return out


def _polish(cy: np.ndarray, y: float) -> float:
    """A few Newton steps on the polynomial with coefficients ``cy`` (ascending) from y."""
    d = cy[1:] * np.arange(1, cy.size)
    for _ in range(4):
        p = np.polynomial.polynomial.polyval(y, cy)
        dp = np.polynomial.polynomial.polyval(y, d)
        if dp == 0.0:
            break
        step = p / dp
        if not math.isfinite(step) or abs(step) > 0.5 * max(y, 1e-300):
            break
        y -= step
    return y


def _cumulative(models: Sequence[_BranchMFP], lams: np.ndarray) -> np.ndarray:
    """K(Λ) [W/(m K)] for every Λ in ``lams`` (one kernel call per branch)."""
    out = np.zeros(lams.size)
    for b in models:
        per = [_intervals(b, float(lam)) for lam in lams]
        ends = sorted({x for iv in per for pair in iv for x in pair if 0.0 < x < b.top})
        G = {0.0: 0.0, b.top: b.kappa}
        if ends:
            ints = _kernel(np.array(ends), b.r, b.n)
            for x, (i1, i2, _) in zip(ends, ints, strict=True):
                G[x] = b.pre * (i1 + b.beta * i2)
        for k, iv in enumerate(per):
            out[k] += sum(G[hi] - G[lo] for lo, hi in iv)
    return out


def _fraction_mfp(models: Sequence[_BranchMFP], fraction: float) -> float:
    """Smallest Λ with K(Λ) ≥ fraction·κ_L: bisection in ln Λ (K is a non-decreasing step or
    continuous function of Λ)."""
    total = sum(b.kappa for b in models)
    target = fraction * total
    spans = [b.span() for b in models]
    lo = math.log(min(s[0] for s in spans)) - 1e-9
    hi = math.log(max(s[1] for s in spans)) + 1e-9
    if _cumulative(models, np.array([math.exp(lo)]))[0] >= target:
        return math.exp(lo)
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if _cumulative(models, np.array([math.exp(mid)]))[0] >= target:
            hi = mid
        else:
            lo = mid
        if hi - lo < 1e-14:
            break
    return math.exp(hi)


def _mfp_grid(models: Sequence[_BranchMFP], points: int = 200
              ) -> tuple[np.ndarray, np.ndarray]:
    """Λ grid for tables and figures and K(Λ) on it; the last point is the largest Λ (K = κ_L)."""
    lo, hi = _fraction_mfp(models, 1e-4), _fraction_mfp(models, 1.0 - 1e-4)
    grid = np.geomspace(lo, hi, points) if hi > lo * (1 + 1e-9) else np.array([lo])
    top = max(b.span()[1] for b in models)
    total = sum(b.kappa for b in models)
    acc = _cumulative(models, grid)
    if top > grid[-1] * (1 + 1e-12):
        grid = np.append(grid, top)
        acc = np.append(acc, total)
    else:
        acc[-1] = max(acc[-1], _cumulative(models, np.array([top]))[0])
    return grid, acc


def mfp_table(result: Spectrum, points: int = 200) -> list[tuple[str, np.ndarray]]:
    """Long-form columns ``T [K]``, ``mfp [nm]``, ``kappa_cumulative [W/(m K)]``.

    Per temperature: ``points`` mean free paths log-spaced between those where K(Λ) reaches
    10⁻⁴ and 1 − 10⁻⁴ of κ_L, then the largest Λ of any phonon (where K equals κ_L); values are
    K(Λ), exact to the kernel's accuracy (see the module notes).
    """
    Ts, lams, accs = [], [], []
    for temp, models in zip(result.temperature, result.mfp_models, strict=True):
        grid, acc = (_mfp_grid(models, points) if points != 200 else
                     (result.mfp_nodes[len(Ts)], result.mfp_cumulative[len(Ts)]))
        Ts.append(np.full(grid.size, temp))
        lams.append(grid)
        accs.append(acc)
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
