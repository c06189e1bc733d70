"""One branch of a model at one temperature, its rates as functions of x: for spectra.

:func:`branch_states` gives every branch of a single model at one temperature; a
:class:`BranchState` evaluates its rates, relaxation time, mean free path, spectral κ and the
cumulative κ below any reduced frequency, with the same rates, rules and kernels as
:func:`kappa.core.evaluator.conductivity` (``kappa()`` equals its κ_j).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.core import quadrature as _q
from kappa.core.constants import h, hbar, k_B
from kappa.core.dispersion import sine_factors
from kappa.core.integrals import integrals, integrals_curved
from kappa.core.mechanisms import NPOW, RateContext
from kappa.core.model import Model
from kappa.core.quadrature import X_CUT
from kappa.core.rates import (
    Rates,
    assemble,
    branch_prefactor,
    check_low_order,
    check_temperature,
    normal_correction,
    omega_powers,
)
from kappa.errors import ConfigError

__all__ = ["BranchState", "branch_states"]


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
    _rates: Rates
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
                pw = omega_powers(self.temperature)
                rl = np.broadcast_to(self._rates.dense("res_low")[0] * pw, (n, NPOW))
                nl = np.broadcast_to(self._rates.dense("nrm_low")[0] * pw, (n, NPOW))
                return rn, nn, rl, nl
        if self.curved:
            res = np.concatenate([self._res_x[None, :], self._shaped_x], axis=0)
            return integrals_curved(tops, np.full(n, self.x_zb), res[None], self._nrm_x[None, :],
                                     nodes)
        return integrals(tops, self._res_x[None, :], self._nrm_x[None, :], nodes)

    def kappa(self) -> tuple[float, float]:
        """(κ_j [W/(m K)], Callaway's β = I₂/I₃ [s]; 0 without normal processes)."""
        i1, i2, i3 = self.integrals([self.x_top])[0]
        beta = i2 / i3 if i3 > 0 else 0.0
        return float(self.prefactor * normal_correction(i1, i2, i3)), float(beta)

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
        rates = assemble(ctx, ())
        check_low_order(rates, "with the configured mechanisms", (1,), T_arr)
        pw = omega_powers(T)
        res_x = rates.dense("res")[0] * pw
        nrm_x = rates.dense("nrm")[0] * pw
        x_zb, shaped = math.inf, None
        if branch.curved:
            x_zb = float(h * branch.zone_boundary_frequency / (k_B * T))
            shaped = np.array([rates.dense("res_flux")[0] * pw])
        out.append(BranchState(label, T, float(min(branch.debye_temperature / T, X_CUT)),
                               float(branch_prefactor(branch, T)), float(branch.sound_velocity),
                               ctx, rates, res_x, nrm_x, x_zb, shaped))
    return out
