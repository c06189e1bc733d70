"""The scattering rates of one branch, summed over the switched-on mechanisms.

For the evaluator (:mod:`kappa.core.evaluator`) and the branch states of spectra
(:mod:`kappa.core.branch_state`): the assembly of the mechanisms' rates per branch (polynomial
parts as coefficients of ω^k, the others as mechanisms evaluated at the quadrature nodes), the
ω → x scaling, the prefactor, the normal-process correction I₂²/I₃, the check that κ_L
converges, and the accepted temperatures.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kappa.core.constants import hbar, k_B
from kappa.core.mechanisms import NPOW, Mechanism, RateContext
from kappa.errors import ConfigError

__all__ = ["T_MAX", "DivergenceError", "check_temperature", "Rates", "assemble",
           "omega_powers", "branch_prefactor", "normal_correction", "check_low_order"]

T_MAX = 1e5  #: highest temperature accepted [K] (solids melt below about 4,000 K)


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
class Rates:
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


def assemble(ctx: RateContext, exclude: Sequence[str]) -> Rates:
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
    return Rates(ctx.shape, res, nrm, tuple(res_other), tuple(nrm_other), res_low, nrm_low,
                  flux)


def omega_powers(T: np.ndarray) -> np.ndarray:
    """(k_B T/ħ)^k for k = 0..4: coefficients of ω^k times these are coefficients of x^k."""
    wt = k_B * np.asarray(T, dtype=float) / hbar
    out = np.empty(np.shape(wt) + (NPOW,))
    out[..., 0] = 1.0
    for k in range(1, NPOW):
        out[..., k] = out[..., k - 1] * wt
    return out


def branch_prefactor(branch, T) -> np.ndarray:
    """(n_j/3) k_B/(2π² v_j) (k_B T/ħ)³ [W/(m K s)]; times (I₁ + I₂²/I₃) [s] it is κ_j."""
    return branch.count / 3.0 * k_B / (2.0 * math.pi**2 * branch.sound_velocity) * (
        k_B * T / hbar) ** 3


def normal_correction(i1: np.ndarray, i2: np.ndarray, i3: np.ndarray) -> np.ndarray:
    """I₁ + I₂²/I₃ (just I₁ without normal processes)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        return i1 + np.where(i3 > 0, i2 * i2 / np.where(i3 > 0, i3, 1.0), 0.0)


def check_low_order(rates: Rates, what: str, shape: tuple[int, ...], T_row) -> None:
    low = rates.low_order()
    bad = ~(np.broadcast_to(low, shape) > 0)
    if np.any(bad):
        idx = np.unravel_index(int(np.argmax(bad)), shape)
        temp = float(np.broadcast_to(T_row, shape)[idx])
        raise DivergenceError(what, int(idx[0]) if len(shape) > 1 else 0, temp)
