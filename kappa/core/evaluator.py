"""The one evaluator of the Callaway/Debye lattice thermal conductivity.

For each branch j, temperature T and parameter set (DESIGN §2):

    κ_j = (n_j/3) · k_B/(2π² v_j) · (k_B T/ħ)³ · (I₁ + I₂²/I₃),

    I₁ = ∫ τ_c w dx,  I₂ = ∫ (τ_c/τ_N) w dx,  I₃ = ∫ (τ_c/(τ_N τ_R)) w dx,

over x = ħω/(k_B T) from 0 to x_D = θ_j/T, with w(x) = x⁴eˣ/(eˣ−1)², τ_R⁻¹ the sum of the
resistive rates, τ_N⁻¹ the normal-process rate and τ_c⁻¹ = τ_R⁻¹ + τ_N⁻¹. Without normal
processes I₂ = I₃ = 0.

On a branch with a dispersion (``dispersion: sine``) the weights of I₁, I₂, I₃ carry the
factors F₁, F₂, F₃ of :mod:`kappa.core.dispersion` (group velocity and density of states), the
rule integrates in φ near the zone boundary, and the resistive rates written with a velocity
carry over as each mechanism's ``velocity`` says (``flux``: × g p^k).

This module owns, once: the assembly of the mechanisms' rates per branch, the ω → x scaling,
the prefactor, the normal-process correction I₂²/I₃, the choice of quadrature rule, the kernel
dispatch and the convergence check. :func:`conductivity` evaluates a model — or a batch of
parameter sets, when its parameters are arrays — at many temperatures; predictions, fits,
sweeps and spectra all go through it (spectra through :func:`branch_states`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kappa.core import quadrature as _q
from kappa.core.constants import h, hbar, k_B
from kappa.core.dispersion import curved_rules, sine_factors
from kappa.core.mechanisms import NPOW, Mechanism, RateContext
from kappa.core.model import Model, batch_map
from kappa.core.quadrature import X_CUT, block_rule, rules
from kappa.core.scattering import Scattering
from kappa.errors import ConfigError

__all__ = [
    "CALLAWAY_CITATION",
    "conductivity",
    "conductivity_from_rates",
    "optical_part",
    "lattice_conductivity",
    "branch_conductivities",
    "check_temperature",
    "DivergenceError",
    "BranchState",
    "branch_states",
    "result_warnings",
    "T_MAX",
    "KAPPA_MAX",
]

CALLAWAY_CITATION = "Callaway model: J. Callaway, Phys. Rev. 113, 1046 (1959)"
T_MAX = 1e5  #: highest temperature accepted [K] (solids melt below about 4,000 K)
KAPPA_MAX = 1e5  #: κ_L above this [W/(m K)] is beyond any known solid (a warning)
_SAMPLES_POLY = 1 << 17  #: samples per kernel call, polynomial rates
_SAMPLES_NODES = 1 << 14  #: samples per kernel call when rates are evaluated on the nodes
_SAMPLES_CURVED = 1 << 14  #: samples per kernel call with a curved branch (rules are larger)
_SERIAL_BELOW = 20_000  #: fewer samples than this run in one thread (no thread-pool start-up)
_ARRAY_BELOW = 4_096  #: fewer samples than this are integrated with numpy (no compiled code to load)
_BLOCK = block_rule()
_FREE = (*_q.relative_log_rule(), *_q.linear_nodes())
_LOG_W = _q.phonon_weight(_q.X_SWITCH * _FREE[0])


class DivergenceError(ConfigError):
    """κ_L diverges: the resistive rate has no ω⁰–ω² term for some sample.

    ``index`` is the flat position in the batch of the first such parameter set and
    ``temperature`` its temperature [K], so that callers can name the values.
    """

    def __init__(self, what: str, index: int = 0, temperature: float = math.nan) -> None:
        self.index = index
        self.temperature = temperature
        super().__init__("scattering", what,
                         "κ_L diverges: the resistive rate has no ω⁰–ω² term at some "
                         "temperature (add boundary scattering or keep Umklapp on)")


def check_temperature(temperature, name: str = "temperature") -> np.ndarray:
    """Temperatures as a 1-D float array; ConfigError naming ``name`` unless 0 < T ≤ T_MAX."""
    T = np.atleast_1d(np.asarray(temperature, dtype=float)).ravel()
    bad = ~((T > 0) & (T <= T_MAX))
    if T.size == 0 or np.any(bad):
        shown = T.tolist() if T.size < 8 else f"{T.size} values"
        if T.size and np.any(bad):
            shown = f"{float(T[int(np.argmax(bad))]):.6g} K"
        raise ConfigError(name, shown, f"temperatures must be finite, > 0 K and at most "
                          f"{T_MAX:g} K")
    return T


@dataclass(frozen=True)
class _Rates:
    """Rates of one branch in a context: polynomial parts as {power of ω: coefficient}
    (each broadcasting to ``shape``), the non-polynomial mechanisms as lists."""

    shape: tuple[int, ...]
    res_k: dict[int, np.ndarray]
    nrm_k: dict[int, np.ndarray]
    res_other: tuple[Mechanism, ...]
    nrm_other: tuple[Mechanism, ...]
    res_low_k: dict[int, np.ndarray]  # ω → 0 limit of the non-polynomial parts
    nrm_low_k: dict[int, np.ndarray]
    res_flux_k: dict[int, np.ndarray]  # curved branch: × g p^k (v_g × cross-section(q))

    def dense(self, which: str) -> np.ndarray:
        """Coefficients as an array of shape ``shape + (5,)`` [s^(k−1)]."""
        out = np.zeros(self.shape + (NPOW,))
        for k, c in getattr(self, which + "_k").items():
            out[..., k] = c
        return out

    def low_order(self) -> np.ndarray:
        """Largest resistive ω⁰–ω² coefficient (polynomial and low-frequency parts), ``shape``."""
        low = np.zeros(self.shape)
        for d in (self.res_k, self.res_low_k, self.res_flux_k):
            for k, c in d.items():
                if k < 3:
                    low = np.maximum(low, c)
        return low


def _sum_into(target: dict, coefficients: dict) -> None:
    for k, c in coefficients.items():
        target[k] = c if k not in target else target[k] + c


def _assemble(ctx: RateContext, exclude: Sequence[str]) -> _Rates:
    """Sum the switched-on mechanisms' rates for one branch; ``exclude`` drops resistive ones.

    Normal processes are always taken from the full model (switching off a resistive mechanism
    does not switch off the normal processes tied to it). On a curved branch the polynomial
    resistive rates go by their ``velocity`` form (as written, or × g p^k).
    """
    res: dict = {}
    nrm: dict = {}
    res_low: dict = {}
    nrm_low: dict = {}
    flux: dict = {}
    by_form = {"sound": res, "flux": flux}
    res_other, nrm_other = [], []
    curved = ctx.branch.curved
    for m in ctx.scattering.active:
        if m.resistive and m.key in exclude:
            continue
        if m.polynomial:
            target = by_form[m.velocity if curved else "sound"] if m.resistive else nrm
            _sum_into(target, m.coefficients(ctx))
        else:
            _sum_into(res_low if m.resistive else nrm_low, m.low_frequency(ctx))
            (res_other if m.resistive else nrm_other).append(m)
    return _Rates(ctx.shape, res, nrm, tuple(res_other), tuple(nrm_other), res_low, nrm_low,
                  flux)


def _omega_powers(T: np.ndarray) -> np.ndarray:
    """(k_B T/ħ)^k for k = 0..4: coefficients of ω^k times these are coefficients of x^k."""
    wt = k_B * np.asarray(T, dtype=float) / hbar
    out = np.empty(np.shape(wt) + (NPOW,))
    out[..., 0] = 1.0
    for k in range(1, NPOW):
        out[..., k] = out[..., k - 1] * wt
    return out


def _prefactor(branch, T) -> np.ndarray:
    """(n_j/3) k_B/(2π² v_j) (k_B T/ħ)³ [W/(m K s)]; times (I₁ + I₂²/I₃) [s] it is κ_j."""
    return branch.count / 3.0 * k_B / (2.0 * math.pi**2 * branch.sound_velocity) * (
        k_B * T / hbar) ** 3


def _normal_correction(i1: np.ndarray, i2: np.ndarray, i3: np.ndarray) -> np.ndarray:
    """I₁ + I₂²/I₃ (just I₁ without normal processes)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        return i1 + np.where(i3 > 0, i2 * i2 / np.where(i3 > 0, i3, 1.0), 0.0)


def _check_low_order(rates: _Rates, what: str, shape: tuple[int, ...], T_row) -> None:
    low = rates.low_order()
    bad = ~(np.broadcast_to(low, shape) > 0)
    if np.any(bad):
        idx = np.unravel_index(int(np.argmax(bad)), shape)
        temp = float(np.broadcast_to(T_row, shape)[idx])
        raise DivergenceError(what, int(idx[0]) if len(shape) > 1 else 0, temp)


def _integrals(tops: np.ndarray, res_x: np.ndarray, nrm_x: np.ndarray, nodes=None,
               rule_index: tuple[np.ndarray, np.ndarray] | None = None) -> np.ndarray:
    """(I₁, I₂, I₃) from 0 to each upper limit, for flat samples; shape (S, 3) [s].

    ``res_x``, ``nrm_x`` (S, 5): polynomial rates in powers of x [1/s]. ``nodes``: None, or a
    function ``nodes(xx, grid) -> (res_nodes, nrm_nodes, res_low, nrm_low)`` giving the
    non-polynomial parts at the rule nodes ``xx[grid]`` (S, M) and their x → 0 limits (S, 5).
    ``rule_index``: the distinct upper limits and each sample's position among them, when the
    caller knows them (saves sorting). Samples sharing an upper limit share one quadrature rule;
    when nearly every sample has its own (and all rates are polynomials) the rules are built
    inside the kernel instead. A sample with no x⁰–x² resistive term gets I₁ = inf.
    """
    tops = np.minimum(np.asarray(tops, dtype=float).ravel(), X_CUT)
    S = tops.size
    res_x = np.ascontiguousarray(np.broadcast_to(res_x, (S, NPOW)))
    nrm_x = np.ascontiguousarray(np.broadcast_to(nrm_x, (S, NPOW)))
    bt, bq = _BLOCK
    out = np.empty((S, 3))
    if rule_index is None:
        uniq, grid = np.unique(tops, return_inverse=True)
    else:
        uniq, grid = np.minimum(rule_index[0], X_CUT), rule_index[1]
    grid = np.ascontiguousarray(grid, dtype=np.int64).ravel()
    if S < _ARRAY_BELOW:  # numpy: no compiled code to load for a small job
        from kappa.core import array_kernels

        xx, wq, count, x_s = rules(uniq)
        if nodes is None:
            return array_kernels.integrals_shared_rules(xx, wq, count, x_s, grid, res_x, nrm_x,
                                                        bt, bq)
        rn, nn, rl, nl = nodes(xx, grid)
        return array_kernels.integrals_nodes_rules(xx, wq, count, x_s, grid, res_x, nrm_x,
                                                   np.asarray(rn), np.asarray(nn),
                                                   np.asarray(rl), np.asarray(nl), bt, bq)
    from kappa.core.kernels import (
        callaway_integrals,
        callaway_integrals_free,
        callaway_integrals_free_serial,
        callaway_integrals_nodes,
        callaway_integrals_serial,
    )

    small = S < _SERIAL_BELOW
    if nodes is None and uniq.size > 64 and uniq.size > S // 4:
        log_t, log_q, lin_t, lin_q = _FREE
        kernel = callaway_integrals_free_serial if small else callaway_integrals_free
        kernel(tops, res_x, nrm_x, log_t, log_q, _LOG_W, lin_t, lin_q, _q.X_SWITCH, _q.EPS_LOW,
               _q.LIN_WIDTH, bt, bq, out)
        return out
    xx, wq, count, x_s = rules(uniq)
    if nodes is None:
        kernel = callaway_integrals_serial if small else callaway_integrals
        kernel(xx, wq, count, x_s, grid, res_x, nrm_x, bt, bq, out)
    else:
        rn, nn, rl, nl = nodes(xx, grid)
        callaway_integrals_nodes(xx, wq, count, x_s, grid, res_x, nrm_x,
                                 np.ascontiguousarray(rn), np.ascontiguousarray(nn),
                                 np.ascontiguousarray(rl), np.ascontiguousarray(nl), bt, bq, out)
    return out


def _integrals_curved(tops: np.ndarray, zbs: np.ndarray, res_x: np.ndarray, nrm_x: np.ndarray,
                      nodes=None, rule_index=None) -> np.ndarray:
    """(I₁, I₂, I₃) with the weights of curved branches; shape (S, 3) [s].

    ``tops``, ``zbs`` (S,): upper limits θ/T and x_zb = ħω_zb/(k_BT) (inf: a Debye branch).
    ``res_x`` (S, 2, 5): resistive coefficients of x^k as written and × g p^k;
    ``nrm_x`` (S, 5). ``nodes`` and ``rule_index`` as in :func:`_integrals` (the distinct
    (top, x_zb) pairs as an (n, 2) array and each sample's row).
    """
    tops = np.asarray(tops, dtype=float).ravel()
    S = tops.size
    zbs = np.broadcast_to(np.asarray(zbs, dtype=float), (S,)).ravel()
    res_x = np.ascontiguousarray(np.broadcast_to(res_x, (S, 2, NPOW)))
    nrm_x = np.ascontiguousarray(np.broadcast_to(nrm_x, (S, NPOW)))
    if rule_index is None:
        pairs, grid = _unique_pairs(tops, zbs)
    else:
        pairs, grid = rule_index
    grid = np.ascontiguousarray(grid, dtype=np.int64).ravel()
    xx, wq, gp, count, x_s = curved_rules(pairs[:, 0], pairs[:, 1])
    res_low = res_x.sum(axis=1)
    nrm_low = nrm_x
    if nodes is None:
        rn = nn = np.zeros((1, 1))
        has = False
    else:
        rn, nn, rl, nl = nodes(xx, grid)
        res_low = res_low + rl
        nrm_low = nrm_low + nl
        has = True
    bt, bq = _BLOCK
    if S < _ARRAY_BELOW:  # numpy: no compiled code to load for a small job
        from kappa.core.array_kernels import integrals_curved_rules

        return integrals_curved_rules(xx, wq, gp, count, x_s, grid, res_x, nrm_x,
                                      np.asarray(rn), np.asarray(nn), np.asarray(res_low),
                                      np.asarray(nrm_low), has, bt, bq)
    from kappa.core.kernels import callaway_integrals_curved

    out = np.empty((S, 3))
    callaway_integrals_curved(xx, wq, gp, count, x_s, grid, res_x, nrm_x,
                              np.ascontiguousarray(rn), np.ascontiguousarray(nn),
                              np.ascontiguousarray(res_low), np.ascontiguousarray(nrm_low), has,
                              bt, bq, out)
    return out


def _unique_pairs(tops: np.ndarray, zbs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Distinct (top, x_zb) rows, shape (n, 2), and each sample's row (one 1-D sort: the pairs
    as complex numbers, which sort by real part, then imaginary part)."""
    key = np.empty(np.size(tops), dtype=complex)
    key.real = np.ravel(tops)
    key.imag = np.ravel(zbs)  # inf for Debye branches (kept: no inf·1j arithmetic)
    u, g = np.unique(key, return_inverse=True)
    return np.stack([u.real, u.imag], axis=1), g.ravel()


def _node_rates(branch_parts: list, xx: np.ndarray, grid: np.ndarray):
    """Non-polynomial rates on the rule nodes for every sample, in sample order."""
    res_nodes, nrm_nodes, res_low, nrm_low = [], [], [], []
    start = 0
    for ctx, rates, shape, wt in branch_parts:
        n = math.prod(shape)
        g = grid[start:start + n].reshape(shape)
        start += n
        omega = xx[g] * np.broadcast_to(wt, shape)[..., None]  # shape + (M,)
        r = np.zeros(omega.shape)
        nn = np.zeros(omega.shape)
        for m in rates.res_other:
            r += m.rate(ctx, omega)
        for m in rates.nrm_other:
            nn += m.rate(ctx, omega)
        res_nodes.append(r.reshape(n, -1))
        nrm_nodes.append(nn.reshape(n, -1))
        pw = _omega_powers(np.broadcast_to(wt * hbar / k_B, shape))
        res_low.append((rates.dense("res_low") * pw).reshape(n, NPOW))
        nrm_low.append((rates.dense("nrm_low") * pw).reshape(n, NPOW))
    return (np.concatenate(res_nodes), np.concatenate(nrm_nodes), np.concatenate(res_low),
            np.concatenate(nrm_low))


def conductivity_from_rates(x_top, prefactor, res_omega, nrm_omega, temperature,
                            nodes=None, rule_index=None, x_zb=None) -> np.ndarray:
    """κ for flat arrays of samples (one branch at one temperature each): the workhorse.

    Parameters
    ----------
    x_top : ndarray, shape (S,)
        Upper limits θ_j/T [1].
    prefactor : ndarray, shape (S,)
        (n_j/3) k_B/(2π² v_j) (k_B T/ħ)³ [W/(m K s)].
    res_omega, nrm_omega : ndarray, shape (S, 5)
        Resistive and normal rate coefficients of ω^k [s^(k−1)]. With ``x_zb`` the resistive
        ones may have shape (S, 2, 5): as written and × g p^k (see
        :mod:`kappa.core.dispersion`).
    temperature : ndarray, shape (S,)
        Temperature of each sample [K].
    nodes : callable, optional
        Non-polynomial rate parts (see :func:`_integrals`).
    rule_index : (ndarray, ndarray), optional
        Distinct upper limits and each sample's index among them, if known.
    x_zb : ndarray, shape (S,), optional
        ħω_zb/(k_BT) of sine branches (inf for Debye ones): the curved-branch integrals.

    Returns
    -------
    ndarray, shape (S,)
        Contribution of each sample to κ_L [W/(m K)].
    """
    pw = _omega_powers(temperature)
    if x_zb is not None:
        res = np.asarray(res_omega, dtype=float)
        if res.ndim == 2:
            res = np.stack([res, np.zeros_like(res)], axis=1)
        out = _integrals_curved(x_top, x_zb, res * pw[:, None, :], np.asarray(nrm_omega) * pw,
                                nodes, rule_index)
        return np.asarray(prefactor) * _normal_correction(out[:, 0], out[:, 1], out[:, 2])
    out = _integrals(x_top, np.asarray(res_omega) * pw, np.asarray(nrm_omega) * pw, nodes,
                     rule_index)
    return np.asarray(prefactor) * _normal_correction(out[:, 0], out[:, 1], out[:, 2])


def _chunk(material, mechanisms: Scattering, T: np.ndarray, exclude: Sequence[str],
           what: str, c: int) -> np.ndarray:
    """κ per branch for one chunk of parameter sets: (nB, c, nT) [W/(m K)].

    Array-valued parameters have shape (c, 1); temperatures enter as (1, nT). The rates of
    all branches go into one flat kernel call (samples ordered branch, parameter set, T); with
    a curved branch, the kernel of curved branches takes them all (a Debye branch is one with
    x_zb = inf there).
    """
    T_row = T[None, :]
    shape = (c, T.size)
    n = c * T.size
    nB = len(material.branches)
    curved = any(b.curved for b in material.branches)
    pw = _omega_powers(T_row)  # (1, nT, 5): ω^k → x^k
    res_x = np.zeros((nB, c, T.size, 2 if curved else 1, NPOW))
    nrm_x = np.zeros((nB, c, T.size, NPOW))
    tops = np.empty((nB, c, T.size))
    zbs = np.full((nB, c, T.size), np.inf)
    pres = np.empty((nB, c, T.size))
    parts, uniq, grids, offset, has_normal = [], [], [], 0, False
    for j, branch in enumerate(material.branches):
        ctx = RateContext(material, branch, T_row, mechanisms, shape)
        rates = _assemble(ctx, exclude)
        for form, d in enumerate((rates.res_k, rates.res_flux_k)):
            for k, coefficient in d.items():
                res_x[j, ..., form, k] = coefficient * pw[..., k]
        for k, coefficient in rates.nrm_k.items():
            nrm_x[j, ..., k] = coefficient * pw[..., k]
        has_normal = has_normal or bool(rates.nrm_k or rates.nrm_other)
        tops[j] = branch.debye_temperature / T_row
        pres[j] = _prefactor(branch, T_row)
        if branch.curved:
            zbs[j] = h * np.asarray(branch.zone_boundary_frequency) / (k_B * T_row)
        scalar = np.ndim(branch.debye_temperature) == 0 and (
            not branch.curved or np.ndim(branch.zone_boundary_frequency) == 0)
        if scalar:  # one θ (and ν_zb): the distinct limits are θ/T
            u = np.minimum(branch.debye_temperature / T, X_CUT)
            if curved:
                u = np.stack([u, zbs[j, 0]], axis=1)
            g = np.broadcast_to(np.arange(T.size), shape).ravel()
        elif curved:
            u, g = _unique_pairs(np.minimum(tops[j], X_CUT).ravel(), zbs[j].ravel())
        else:
            u, g = np.unique(np.minimum(tops[j], X_CUT), return_inverse=True)
            g = g.ravel()
        uniq.append(u)
        grids.append(g + offset)
        offset += len(u)
        parts.append((ctx, rates, shape, k_B * T_row / hbar))
    nodes = None
    if any(rates.res_other or rates.nrm_other for _, rates, _, _ in parts):
        def nodes(xx, grid):
            return _node_rates(parts, xx, grid)
    index = (np.concatenate(uniq), np.concatenate(grids))
    if curved:
        out = _integrals_curved(tops.reshape(-1), zbs.reshape(-1), res_x.reshape(-1, 2, NPOW),
                                nrm_x.reshape(-1, NPOW), nodes, index)
    else:
        out = _integrals(tops.reshape(-1), res_x.reshape(-1, NPOW), nrm_x.reshape(-1, NPOW),
                         nodes, index)
    ints = out[:, 0] if not has_normal else _normal_correction(out[:, 0], out[:, 1], out[:, 2])
    k = pres * ints.reshape(nB, *shape)
    if not np.all(np.isfinite(k)):
        for j, (_, rates, _, _) in enumerate(parts):
            bad = ~np.isfinite(k[j])
            if np.any(bad):
                low = rates.low_order()
                diverges = bad & ~(np.broadcast_to(low, shape) > 0)
                if np.any(diverges):
                    i, t = np.unravel_index(int(np.argmax(diverges)), shape)
                    raise DivergenceError(what, int(i), float(T[t]))
    assert n == k[0].size
    return k


def conductivity(model: Model, temperature, *, exclude: Sequence[str] = (),
                 by_branch: bool = False) -> np.ndarray:
    """κ_L [W/(m K)] of a model, or of a batch of parameter sets, at every temperature.

    The sum of the acoustic branches' Callaway integrals plus, for ``atoms_per_cell`` > 1, the
    optical part (:func:`optical_part`).

    Parameters
    ----------
    model : Model
        A model; numeric parameters may be numpy arrays (a batch, see
        :meth:`~kappa.core.model.Model.with_values`), all broadcasting to
        ``model.batch_shape``.
    temperature : array_like
        Temperatures [K], 0 < T ≤ :data:`T_MAX`.
    exclude : sequence of str
        Keys of resistive mechanisms to switch off (normal processes stay as in the full model).
    by_branch : bool
        Return each branch's contribution (n_j/3)κ_j instead of the sum; the optical part of
        a cell with several atoms (:func:`optical_part`) is then not included.

    Returns
    -------
    ndarray
        Shape ``batch_shape + (nT,)``, or ``(n_branches,) + batch_shape + (nT,)`` with
        ``by_branch``.

    Raises
    ------
    ConfigError
        Bad temperatures; :class:`DivergenceError` where a rate has no ω⁰–ω² term; a
        non-finite κ_L (parameters beyond what the numbers can hold).
    """
    T = check_temperature(temperature)
    batch = model.batch_shape
    P = math.prod(batch)
    nB = len(model.material.branches)
    what = ("with " + ", ".join(exclude) + " off") if exclude else "with the configured mechanisms"

    def flat(a: np.ndarray) -> np.ndarray:
        return np.broadcast_to(a, batch).reshape(P)

    material = batch_map(model.material, flat)
    mechanisms = batch_map(model.mechanisms, flat)
    nodes = any(not m.polynomial for m in mechanisms.active)
    per_call = _SAMPLES_NODES if nodes else _SAMPLES_POLY
    if any(b.curved for b in material.branches):
        per_call = min(per_call, _SAMPLES_CURVED)
    c_max = max(1, min(P, per_call // max(1, nB * T.size)))
    out = np.empty((nB, P, T.size))
    for a0 in range(0, P, c_max):
        a1 = min(P, a0 + c_max)

        def rows(a: np.ndarray, _a0: int = a0, _a1: int = a1) -> np.ndarray:
            return a[_a0:_a1, None]

        try:
            out[:, a0:a1] = _chunk(batch_map(material, rows), batch_map(mechanisms, rows), T,
                                   exclude, what, a1 - a0)
        except DivergenceError as exc:
            exc.index += a0
            raise
    if not np.all(np.isfinite(out)):
        bad = np.unravel_index(int(np.argmax(~np.isfinite(out))), out.shape)
        raise ConfigError("model", f"κ_L = {out[bad]} at {T[bad[2]]:.6g} K",
                          "the parameters give no finite conductivity; check their values and "
                          "units (the allowed ranges are in 'kappa check')")
    out = out.reshape((nB, *batch, T.size))
    if by_branch:
        return out
    total = out.sum(axis=0)
    if model.material.has_optical:
        total = total + optical_part(model)[..., None]
    return total


def optical_part(model: Model) -> np.ndarray:
    """κ of the optical modes of a cell with n > 1 atoms [W/(m K)], shape ``batch_shape``.

    :func:`kappa.core.limits.optical_conductivity` with the volume per atom, the arithmetic
    mean of the three acoustic velocities ((v_L + 2v_T)/3 where the model gives them, else the
    branch velocities) and ``atoms_per_cell`` (zero for n = 1).
    :func:`conductivity` adds it to the acoustic branches' Callaway integrals: κ_L is always
    the total.
    """
    from kappa.core.limits import acoustic_velocities, optical_conductivity

    m = model.material
    mean_v = sum(np.asarray(v, dtype=float) for v in acoustic_velocities(model)) / 3.0
    value = optical_conductivity(m.number_density, mean_v, m.atoms_per_cell)
    return np.broadcast_to(value, model.batch_shape).astype(float)


def result_warnings(kappa_L: np.ndarray, temperature: np.ndarray) -> list[str]:
    """Warnings about a computed κ_L that leaves the physical: zero, or above any solid."""
    out = []
    k = np.asarray(kappa_L)
    if np.any(k <= 0):
        out.append("κ_L comes out zero at some temperatures: a scattering rate is so large that "
                   "no heat is carried; check the scattering parameters and their units")
    if np.any(k > KAPPA_MAX):
        out.append(f"κ_L reaches {float(np.max(k)):.3g} W/(m K), above any known solid "
                   f"(diamond peaks near 1e4 W/(m K)); check the parameters (is boundary "
                   "scattering missing at low temperature?)")
    return out


# --- the older entry points, kept for notebooks ---------------------------------------------


def branch_conductivities(material, scattering: Scattering, T,
                          exclude: tuple[str, ...] = ()) -> np.ndarray:
    """κ contribution of each branch, (n_j/3)κ_j, shape ``(n_branches, n_T)`` [W/(m K)].

    Parameters
    ----------
    material : Material
    scattering : Scattering
    T : array_like
        Temperatures [K], all > 0.
    exclude : tuple of str
        Keys of resistive mechanisms to switch off.
    """
    return conductivity(Model.from_material(material, scattering), T, exclude=exclude,
                        by_branch=True)


def lattice_conductivity(material, scattering: Scattering, T,
                         exclude: tuple[str, ...] = ()) -> np.ndarray:
    """Lattice thermal conductivity κ_L(T) [W/(m K)] of the Callaway/Debye model.

    Parameters
    ----------
    material : Material
        Branches, mean atomic mass [kg], volume per atom [m³].
    scattering : Scattering
        Resistive mechanisms and (optionally) normal processes.
    T : array_like
        Temperatures [K].
    exclude : tuple of str
        Keys of resistive mechanisms to switch off (e.g. ``("boundary",)``).

    Examples
    --------
    >>> from kappa.core.material import Material
    >>> from kappa.core.mechanisms import Boundary
    >>> from kappa.core.scattering import Scattering
    >>> m = Material.averaged(28.0855 * 1.66054e-27, 2.002e-29, 645.0, 6084.0, 0.56)
    >>> k = lattice_conductivity(m, Scattering((Boundary(1e-3),)), [2.0])
    >>> round(float(k[0]), 2)  # boundary only: (2π²/15) k_B⁴T³L/(ħ³v²) = 8.81 W/(m K)
    8.81
    """
    return conductivity(Model.from_material(material, scattering), T, exclude=exclude)


# --- one branch at one temperature, for spectra ----------------------------------------------


@dataclass(frozen=True)
class BranchState:
    """One branch of a (single) model at one temperature: its rates as functions of x.

    Attributes
    ----------
    label : str
        Branch label.
    temperature : float
        [K].
    x_top : float
        Upper limit min(θ_j/T, 40) [1].
    prefactor : float
        (n_j/3) k_B/(2π² v_j)(k_B T/ħ)³ [W/(m K s)].
    velocity : float
        Sound velocity v_j [m/s].
    x_zb : float
        ħω_zb/(k_BT) of a sine branch [1]; inf for a Debye branch.
    """

    label: str
    temperature: float
    x_top: float
    prefactor: float
    velocity: float
    _ctx: RateContext
    _rates: _Rates
    _res_x: np.ndarray
    _nrm_x: np.ndarray
    x_zb: float = math.inf
    _shaped_x: np.ndarray | None = None  # (1, 5): the × g p^k part on a curved branch

    @property
    def wt(self) -> float:
        """k_B T/ħ [rad/s]: ω = x·wt."""
        return k_B * self.temperature / hbar

    @property
    def curved(self) -> bool:
        """True for a branch with a dispersion."""
        return math.isfinite(self.x_zb)

    def factors(self, x) -> tuple[np.ndarray, np.ndarray]:
        """(g, p) = (v_g/v, qv/ω) at reduced frequencies x (1 and 1 on a Debye branch)."""
        x = np.asarray(x, dtype=float)
        if not self.curved:
            return np.ones(x.shape), np.ones(x.shape)
        return sine_factors(x / self.x_zb)

    def _nonpoly(self, mechanisms, x) -> np.ndarray:
        omega = np.asarray(x, dtype=float)[None, :] * self.wt
        out = np.zeros(np.shape(x))
        for m in mechanisms:
            out = out + np.asarray(m.rate(self._ctx, omega)).reshape(np.shape(x))
        return out

    def resistive(self, x) -> np.ndarray:
        """τ_R⁻¹ at reduced frequencies x [1/s]."""
        x = np.asarray(x, dtype=float)
        out = _poly(self._res_x, x) + self._nonpoly(self._rates.res_other, x)
        if self._shaped_x is not None:
            g, p = self.factors(x)
            out = out + g * _poly(self._shaped_x[0], x * p)
        return out

    def normal(self, x) -> np.ndarray:
        """τ_N⁻¹ at reduced frequencies x [1/s]."""
        x = np.asarray(x, dtype=float)
        return _poly(self._nrm_x, x) + self._nonpoly(self._rates.nrm_other, x)

    def mechanism_rates(self, x) -> dict[str, np.ndarray]:
        """Rate of each switched-on mechanism at x [1/s], by key."""
        x = np.atleast_1d(np.asarray(x, dtype=float))
        omega = x[None, :] * self.wt
        return {m.key: np.asarray(m.rate(self._ctx, omega)).reshape(x.shape) *
                np.ones(x.shape) for m in self._ctx.scattering.active}

    def integrals(self, tops) -> np.ndarray:
        """(I₁, I₂, I₃) from 0 to each of ``tops`` [1], shape (N, 3) [s]."""
        tops = np.atleast_1d(np.asarray(tops, dtype=float))
        n = tops.size
        nodes = None
        if self._rates.res_other or self._rates.nrm_other:
            def nodes(xx, grid):
                x = xx[grid]
                rn = self._nonpoly(self._rates.res_other, x)
                nn = self._nonpoly(self._rates.nrm_other, x)
                pw = _omega_powers(self.temperature)
                rl = np.broadcast_to(self._rates.dense("res_low")[0] * pw, (n, NPOW))
                nl = np.broadcast_to(self._rates.dense("nrm_low")[0] * pw, (n, NPOW))
                return rn, nn, rl, nl
        if self.curved:
            res = np.concatenate([self._res_x[None, :], self._shaped_x], axis=0)
            return _integrals_curved(tops, np.full(n, self.x_zb), res[None], self._nrm_x[None, :],
                                     nodes)
        return _integrals(tops, self._res_x[None, :], self._nrm_x[None, :], nodes)

    def kappa(self) -> tuple[float, float]:
        """(κ_j [W/(m K)], Callaway's β = I₂/I₃ [s]; 0 without normal processes)."""
        i1, i2, i3 = self.integrals([self.x_top])[0]
        beta = i2 / i3 if i3 > 0 else 0.0
        return float(self.prefactor * _normal_correction(i1, i2, i3)), float(beta)

    def relaxation_time(self, x, beta: float) -> np.ndarray:
        """Callaway's effective relaxation time τ_eff = τ_c(1 + β (p/g)/τ_N) at x [s].

        With β = I₂/I₃ the spectral parts pre·∫F₁τ_eff w dx add up to κ_j exactly (the
        normal-process correction I₂²/I₃ shared out over the phonons); on a Debye branch
        p = g = 1, and τ_eff = τ_c = τ_R without normal processes. On a sine branch τ_eff
        grows without bound at the zone boundary (v_g → 0) while v_g τ_eff stays finite.
        """
        rr, rn = self.resistive(x), self.normal(x)
        if not self.curved:
            return (1.0 + beta * rn) / (rr + rn)
        g, p = self.factors(x)
        with np.errstate(divide="ignore"):
            return (1.0 + beta * rn * p / g) / (rr + rn)

    def mean_free_path(self, x, beta: float) -> np.ndarray:
        """Λ = v_g τ_eff at x [m] (v_g = v on a Debye branch)."""
        rr, rn = self.resistive(x), self.normal(x)
        if not self.curved:
            return self.velocity * (1.0 + beta * rn) / (rr + rn)
        g, p = self.factors(x)
        return self.velocity * (g + beta * rn * p) / (rr + rn)

    def spectral(self, x, beta: float) -> np.ndarray:
        """κ per unit reduced frequency, pre·w(x)·(F₁τ_c + βF₂τ_c/τ_N) [W/(m K)]."""
        x = np.asarray(x, dtype=float)
        rr, rn = self.resistive(x), self.normal(x)
        if not self.curved:
            return self.prefactor * _q.phonon_weight(x) * (1.0 + beta * rn) / (rr + rn)
        g, p = self.factors(x)
        return self.prefactor * _q.phonon_weight(x) * p * p * (g + beta * rn * p) / (rr + rn)

    def cumulative(self, x, beta: float) -> np.ndarray:
        """κ carried by the branch's phonons below x: pre·(I₁(x) + β I₂(x)) [W/(m K)]."""
        ints = self.integrals(x)
        return self.prefactor * (ints[:, 0] + beta * ints[:, 1])


def _poly(c: np.ndarray, x: np.ndarray) -> np.ndarray:
    return c[0] + x * (c[1] + x * (c[2] + x * (c[3] + x * c[4])))


def branch_states(model: Model, temperature: float) -> list[BranchState]:
    """Every branch of a single (non-batch) model at one temperature.

    Raises :class:`DivergenceError` when a rate has no ω⁰–ω² term.
    """
    T = float(check_temperature([temperature])[0])
    if model.batch_shape:
        raise ConfigError("model", "a batch of parameter sets", "a spectrum needs one model")
    out = []
    labels = model.material.branch_labels()
    T_arr = np.array([T])
    for label, branch in zip(labels, model.material.branches, strict=True):
        ctx = RateContext(model.material, branch, T_arr, model.mechanisms, (1,))
        rates = _assemble(ctx, ())
        _check_low_order(rates, "with the configured mechanisms", (1,), T_arr)
        pw = _omega_powers(T)
        res_x = rates.dense("res")[0] * pw
        nrm_x = rates.dense("nrm")[0] * pw
        x_zb, shaped = math.inf, None
        if branch.curved:
            x_zb = float(h * branch.zone_boundary_frequency / (k_B * T))
            shaped = np.array([rates.dense("res_flux")[0] * pw])
        out.append(BranchState(label, T, float(min(branch.debye_temperature / T, X_CUT)),
                               float(_prefactor(branch, T)), float(branch.sound_velocity),
                               ctx, rates, res_x, nrm_x, x_zb, shaped))
    return out
