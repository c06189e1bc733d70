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

The core owns each step once: the assembly of the mechanisms' rates per branch, the ω → x
scaling, the prefactor, the normal-process correction I₂²/I₃ and the convergence check
(:mod:`kappa.core.rates`); the choice of quadrature rule and the kernel dispatch
(:mod:`kappa.core.integrals`); this module puts them together. :func:`conductivity` evaluates
a model — or a batch of parameter sets, when its parameters are arrays — at many temperatures;
predictions, fits, sweeps and spectra all go through it (spectra through :func:`branch_states`,
:mod:`kappa.core.branch_state`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from kappa.core.branch_state import BranchState, branch_states
from kappa.core.constants import h, hbar, k_B
from kappa.core.integrals import integrals, integrals_curved, unique_pairs
from kappa.core.mechanisms import NPOW, RateContext
from kappa.core.model import Model, batch_map
from kappa.core.quadrature import X_CUT
from kappa.core.rates import (
    T_MAX,
    DivergenceError,
    assemble,
    branch_prefactor,
    check_temperature,
    normal_correction,
    omega_powers,
)
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
KAPPA_MAX = 1e5  #: κ_L above this [W/(m K)] is beyond any known solid (a warning)
_SAMPLES_POLY = 1 << 17  #: samples per kernel call, polynomial rates
_SAMPLES_NODES = 1 << 14  #: samples per kernel call when rates are evaluated on the nodes
_SAMPLES_CURVED = 1 << 14  #: samples per kernel call with a curved branch (rules are larger)


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
        pw = omega_powers(np.broadcast_to(wt * hbar / k_B, shape))
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
        Non-polynomial rate parts (see :func:`integrals`).
    rule_index : (ndarray, ndarray), optional
        Distinct upper limits and each sample's index among them, if known.
    x_zb : ndarray, shape (S,), optional
        ħω_zb/(k_BT) of sine branches (inf for Debye ones): the curved-branch integrals.

    Returns
    -------
    ndarray, shape (S,)
        Contribution of each sample to κ_L [W/(m K)].
    """
    pw = omega_powers(temperature)
    if x_zb is not None:
        res = np.asarray(res_omega, dtype=float)
        if res.ndim == 2:
            res = np.stack([res, np.zeros_like(res)], axis=1)
        out = integrals_curved(x_top, x_zb, res * pw[:, None, :], np.asarray(nrm_omega) * pw,
                                nodes, rule_index)
        return np.asarray(prefactor) * normal_correction(out[:, 0], out[:, 1], out[:, 2])
    out = integrals(x_top, np.asarray(res_omega) * pw, np.asarray(nrm_omega) * pw, nodes,
                     rule_index)
    return np.asarray(prefactor) * normal_correction(out[:, 0], out[:, 1], out[:, 2])


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
    pw = omega_powers(T_row)  # (1, nT, 5): ω^k → x^k
    res_x = np.zeros((nB, c, T.size, 2 if curved else 1, NPOW))
    nrm_x = np.zeros((nB, c, T.size, NPOW))
    tops = np.empty((nB, c, T.size))
    zbs = np.full((nB, c, T.size), np.inf)
    pres = np.empty((nB, c, T.size))
    parts, uniq, grids, offset, has_normal = [], [], [], 0, False
    for j, branch in enumerate(material.branches):
        ctx = RateContext(material, branch, T_row, mechanisms, shape)
        rates = assemble(ctx, exclude)
        for form, d in enumerate((rates.res_k, rates.res_flux_k)):
            for k, coefficient in d.items():
                res_x[j, ..., form, k] = coefficient * pw[..., k]
        for k, coefficient in rates.nrm_k.items():
            nrm_x[j, ..., k] = coefficient * pw[..., k]
        has_normal = has_normal or bool(rates.nrm_k or rates.nrm_other)
        tops[j] = branch.debye_temperature / T_row
        pres[j] = branch_prefactor(branch, T_row)
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
            u, g = unique_pairs(np.minimum(tops[j], X_CUT).ravel(), zbs[j].ravel())
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
        out = integrals_curved(tops.reshape(-1), zbs.reshape(-1), res_x.reshape(-1, 2, NPOW),
                                nrm_x.reshape(-1, NPOW), nodes, index)
    else:
        out = integrals(tops.reshape(-1), res_x.reshape(-1, NPOW), nrm_x.reshape(-1, NPOW),
                         nodes, index)
    ints = out[:, 0] if not has_normal else normal_correction(out[:, 0], out[:, 1], out[:, 2])
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


