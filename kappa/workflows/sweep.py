"""Parameter sweeps: κ_L on a grid of parameter values × temperatures, vectorised.

A sweep varies one or more numeric config keys over a grid (``KEY=START:STOP:N[:log]`` or
``KEY=V1,V2,...``, values with units) and evaluates κ_L at every grid point and temperature.
Every value equals :func:`kappa.conductivity.lattice_conductivity` of the config with those
values set (``Config.with_values``); the sweep only computes it faster:

* The rate coefficients of all (parameter set × branch × temperature) samples are built with
  numpy from the same pure rate formulas the mechanisms use (:data:`VECTORISED`), in chunks of
  parameter sets, so memory grows with the output only.
* The quadrature rule depends only on the upper limit x_D = θ/T. The distinct upper limits are
  known from the grid (distinct Debye temperatures × temperatures, a small set), so the rule of
  each sample is found by indexing, not by sorting millions of floats.
* The numba kernel :func:`kappa.kernels.callaway_integrals` does the integrals in parallel.

Keys whose change alters a derived quantity of the config (e.g. ``material.sound_velocity`` when
the Debye temperature is derived from it, or ``material.longitudinal_velocity``) and configs
holding a mechanism without a vectorised form are handled by building one config per distinct
value of those keys (``Config.with_values``), still vectorising over the other keys. Such keys are
listed in :attr:`SweepResult.config_level`.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from types import SimpleNamespace

import numpy as np

from kappa.core.constants import hbar, k_B
from kappa.core.evaluator import lattice_conductivity
from kappa.core.kernels import callaway_integrals
from kappa.core.quadrature import X_CUT, block_rule, rules
from kappa.core.scattering import (
    NPOW,
    Boundary,
    Normal,
    Parameter,
    PointDefect,
    Umklapp,
    boundary_rate,
    normal_branch_coefficient,
    point_defect_coefficient,
    umklapp_coefficient,
)
from kappa.errors import ConfigError, KappaError, warn
from kappa.io.config import (
    BRANCH_KEYS,
    MATERIAL_KEYS,
    Config,
    check_temperatures,
    numeric_keys,
    parameter_for,
    unused_key,
)
from kappa.io.units import parse_quantity, unit_factor

__all__ = [
    "Axis",
    "SweepResult",
    "parse_vary",
    "parse_temperatures",
    "sweep",
    "grid_points",
    "check_axes",
    "column_names",
    "MAX_POINTS",
    "VECTORISED",
]

MAX_POINTS = 10**8  #: sweeps above this many κ_L points need an explicit confirmation
_CHUNK_SAMPLES = 1 << 17  #: samples (parameter set × branch × T) per kernel call
_CALLAWAY = "Callaway model: J. Callaway, Phys. Rev. 113, 1046 (1959)"


# --- grid specification ------------------------------------------------------------------------


@dataclass(frozen=True)
class Axis:
    """One varied key of a sweep.

    Attributes
    ----------
    key : str
        Dotted config key, e.g. ``scattering.boundary.grain_size``.
    values : ndarray
        Grid values in the key's SI unit (``parameter.unit``).
    parameter : Parameter
        The key's declaration (SI unit, allowed range, display unit).
    spec : str
        The grid as written (``10nm:10um:31:log``).
    log : bool
        True for a log-spaced range.
    """

    key: str
    values: np.ndarray
    parameter: Parameter
    spec: str = ""
    log: bool = False

    @property
    def unit(self) -> str:
        """The unit values are shown in (the key's display unit; ``1`` for plain numbers)."""
        return self.parameter.display or self.parameter.unit

    @property
    def shown(self) -> np.ndarray:
        """The values in :attr:`unit`."""
        scale, offset = unit_factor(self.parameter.unit, self.unit, self.key)
        return self.values * scale + offset

    @property
    def name(self) -> str:
        return self.key.rsplit(".", 1)[-1]

    @classmethod
    def of(cls, key: str, values) -> Axis:
        """An axis from plain SI values (for notebooks): ``Axis.of("scattering.boundary.grain_size",
        np.geomspace(10e-9, 10e-6, 31))``. Values are checked against the key's allowed range."""
        p = parameter_for(key)
        arr = np.atleast_1d(np.asarray(values, dtype=float)).ravel()
        if arr.size < 1:
            raise ConfigError(key, "no values", "give at least one value")
        for v in arr:
            p.check(key, float(v))
        return cls(key, arr, p, spec=f"{arr.size} values")


def _bare_unit(key: str, p: Parameter) -> str:
    parts = key.split(".")
    if parts[0] == "material":
        table = BRANCH_KEYS if parts[1] == "branches" else MATERIAL_KEYS
        if p.name in table:
            return table[p.name][1]
    return p.unit


def parse_vary(item: str) -> Axis:
    """Parse ``KEY=START:STOP:N[:log]`` or ``KEY=V1,V2,...`` into an :class:`Axis`.

    Values carry units (``10nm``, ``2 km/s``); a bare number is read in the key's default unit
    (as in the config: SI, except ``atomic_mass`` in u). Ranges include both ends; ``log``
    spaces the points geometrically (both ends must be > 0).

    Raises
    ------
    ConfigError
        Unknown or non-numeric key, a temperature key, N < 2, bad numbers or units, a value
        outside the key's allowed range, repeated list values.
    """
    opt = "--vary"
    if "=" not in item:
        raise ConfigError(opt, item, "must be KEY=START:STOP:N[:log] or KEY=V1,V2,..., e.g. "
                          "scattering.boundary.grain_size=10nm:10um:31:log")
    key, _, spec = item.partition("=")
    key, spec = key.strip(), spec.strip()
    if not key or not spec:
        raise ConfigError(opt, item, "must be KEY=START:STOP:N[:log] or KEY=V1,V2,...")
    if key.split(".")[0] == "temperature":
        raise ConfigError(f"{opt} {key}", allowed="temperatures are not swept as a parameter; "
                          "give them with --at (e.g. --at 300K,600K)")
    p = parameter_for(key)
    bare = _bare_unit(key, p)
    where = f"{opt} {key}"

    def number(text: str) -> float:
        value = parse_quantity(text.strip(), p.unit, where, bare=bare)
        p.check(where, value, shown=text.strip())
        return value

    if ":" in spec:
        parts = spec.split(":")
        if len(parts) not in (3, 4):
            raise ConfigError(where, spec, "a range is START:STOP:N or START:STOP:N:log")
        spacing = parts[3].strip().lower() if len(parts) == 4 else "lin"
        if spacing not in ("lin", "log"):
            raise ConfigError(where, spec, f"spacing '{parts[3].strip()}' unknown; allowed: lin, log")
        try:
            n = int(parts[2].strip())
        except ValueError:
            raise ConfigError(where, parts[2].strip(), "N must be a whole number >= 2") from None
        if n < 2:
            raise ConfigError(where, parts[2].strip(), "N must be a whole number >= 2")
        start, stop = number(parts[0]), number(parts[1])
        if start == stop:
            raise ConfigError(where, spec, "START and STOP must differ")
        if spacing == "log":
            if not (start > 0 and stop > 0):
                bad = parts[0] if start <= 0 else parts[1]
                raise ConfigError(where, bad.strip(), "a log range needs both ends > 0")
            values = np.geomspace(start, stop, n)
        else:
            values = np.linspace(start, stop, n)
        values[0], values[-1] = start, stop
        return Axis(key, values, p, spec, spacing == "log")
    texts = [t for t in spec.split(",")]
    if any(not t.strip() for t in texts):
        raise ConfigError(where, spec, "a list is V1,V2,... without empty entries")
    values = np.array([number(t) for t in texts])
    if np.unique(values).size != values.size:
        raise ConfigError(where, spec, "list values must not repeat")
    return Axis(key, values, p, spec, False)


def parse_temperatures(items: Sequence[str], option: str = "--at") -> np.ndarray:
    """Temperatures from ``["300K,600K", "900 K"]`` (comma-separated and/or repeated) [K]."""
    texts = [t.strip() for item in items for t in str(item).split(",")]
    if not texts or any(not t for t in texts):
        raise ConfigError(option, ",".join(map(str, items)) if items else "",
                          "give one or more temperatures > 0 K, e.g. --at 300K,600K")
    T = np.array([parse_quantity(t, "K", option) for t in texts])
    bad = ~(T > 0)
    if np.any(bad):
        raise ConfigError(option, texts[int(np.argmax(bad))], "temperatures must be > 0 K")
    return T


def check_axes(axes: Sequence[Axis]) -> tuple[Axis, ...]:
    """Raise unless there is at least one axis and no key is repeated; return them as a tuple."""
    axes = tuple(axes)
    if not axes:
        raise ConfigError("--vary", allowed="missing; give at least one KEY=START:STOP:N[:log], "
                          "e.g. --vary scattering.boundary.grain_size=10nm:10um:31:log")
    seen: set[str] = set()
    for a in axes:
        if a.key in seen:
            raise ConfigError(f"--vary {a.key}", allowed="each key may be varied only once")
        seen.add(a.key)
    return axes


def grid_points(axes: Sequence[Axis], n_temperatures: int) -> int:
    """Number of κ_L points of a sweep (parameter sets × temperatures)."""
    return math.prod(a.values.size for a in axes) * n_temperatures


# --- result --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SweepResult:
    """κ_L on a grid.

    Attributes
    ----------
    axes : tuple of Axis
        The varied keys, in the order given.
    temperature : ndarray, shape (nT,)
        [K].
    kappa_L : ndarray, shape (N_1, ..., N_d, nT)
        Lattice thermal conductivity at every grid point and temperature [W/(m K)].
    reference : ndarray, shape (nT,)
        κ_L of the config as written (without the sweep's values) [W/(m K)]; NaN where that
        model diverges.
    config : Config
        The config the sweep started from.
    config_level : tuple of str
        Keys evaluated by building a config per value (see the module notes).
    citations : list of str
    """

    axes: tuple[Axis, ...]
    temperature: np.ndarray
    kappa_L: np.ndarray
    reference: np.ndarray
    config: Config = field(repr=False)
    config_level: tuple[str, ...] = ()
    citations: list[str] = field(default_factory=list)

    @property
    def ratio(self) -> np.ndarray:
        """κ_L relative to the config's own κ_L at the same temperature [1]."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return self.kappa_L / self.reference

    @property
    def points(self) -> int:
        return int(self.kappa_L.size)

    def long_form(self) -> list[tuple[str, np.ndarray]]:
        """Columns of the long-form table: one per key (display unit), T, κ_L, κ_L ratio.

        Rows run over the grid in C order (last key fastest), temperature fastest of all.
        """
        headers = column_names(self.axes)
        shape = self.kappa_L.shape
        cols: list[tuple[str, np.ndarray]] = []
        for d, (axis, header) in enumerate(zip(self.axes, headers, strict=True)):
            shp = [1] * len(shape)
            shp[d] = axis.values.size
            cols.append((header, np.broadcast_to(axis.shown.reshape(shp), shape).ravel()))
        cols.append(("T [K]", np.broadcast_to(self.temperature, shape).ravel()))
        cols.append(("kappa_L [W/(m K)]", self.kappa_L.ravel()))
        cols.append(("kappa_L_ratio [1]", self.ratio.ravel()))
        return cols


def column_names(axes: Sequence[Axis]) -> list[str]:
    """``name [unit]`` per axis; the full dotted key where two leaf names clash."""
    leaves = [a.name for a in axes]
    out = []
    for a in axes:
        name = a.name if leaves.count(a.name) == 1 else a.key
        out.append(f"{name} [{a.unit}]")
    return out


# --- where a key lives in the model objects -----------------------------------------------------


def _locate(config: Config, key: str) -> tuple | None:
    """("material", attr) | ("branch", j, attr) | ("mechanism", mech, attr) | None."""
    parts = key.split(".")
    if parts[0] == "material":
        if parts[1] in ("atomic_mass", "atomic_volume") and len(parts) == 2:
            return ("material", parts[1])
        if parts[1] == "branches" and len(parts) == 4:
            return ("branch", int(parts[2]), parts[3])
        if (len(parts) == 2 and parts[1] in ("debye_temperature", "sound_velocity", "gruneisen")
                and not config.material.per_branch):
            return ("branch", 0, parts[1])
        return None
    if parts[0] == "scattering" and len(parts) == 3:
        return ("mechanism", parts[1], parts[2])
    return None


def _replaced(config: Config, where: tuple, value: float):
    """(Material, Scattering) of ``config`` with one field replaced (no derived updates)."""
    m, s = config.material, config.scattering
    if where[0] == "material":
        return replace(m, **{where[1]: value}), s
    if where[0] == "branch":
        branches = list(m.branches)
        branches[where[1]] = replace(branches[where[1]], **{where[2]: value})
        return replace(m, branches=tuple(branches)), s
    mech = s.get(where[1])
    if mech is None:
        return None
    return m, s.replace(where[1], **{where[2]: value})


# --- vectorised rate coefficients -----------------------------------------------------------------
#
# Each entry takes namespaces whose attributes are floats or arrays that broadcast against T
# (shape (c, 1) for parameter sets × (1, nT) temperatures) and returns {power of ω: coefficient}.
# They call the same pure formulas as the mechanisms' ``coefficients``; the identity with
# ``lattice_conductivity`` is checked for every key in tests/test_sweep.py.


def _v_umklapp(m, mat, br, T, ctx):
    return {2: umklapp_coefficient(br.gruneisen, mat.atomic_mass, br.sound_velocity,
                                   br.debye_temperature, T, m.scale, m.exponent_divisor)}


def _v_boundary(m, mat, br, T, ctx):
    return {0: boundary_rate(br.sound_velocity, m.grain_size, m.specularity)}


def _v_point_defect(m, mat, br, T, ctx):
    return {4: point_defect_coefficient(mat.atomic_volume, br.sound_velocity, m.mass_variance,
                                        m.strain_variance)}


def _v_normal(m, mat, br, T, ctx):
    if m.form == "ratio":
        u = ctx.get("umklapp")
        if u is None:
            return {}
        return {k: m.ratio * c for k, c in _v_umklapp(u, mat, br, T, ctx).items()}
    power, coefficient = normal_branch_coefficient(br.gruneisen, mat.atomic_mass,
                                                   mat.atomic_volume, br.sound_velocity, T,
                                                   br.polarization, m.scale)
    return {power: coefficient}


#: Vectorised coefficient functions by mechanism class. A mechanism missing here still works in
#: sweeps (one config per parameter set, slower); add an entry to make it fast.
VECTORISED: dict[type, Callable] = {
    Umklapp: _v_umklapp,
    Boundary: _v_boundary,
    PointDefect: _v_point_defect,
    Normal: _v_normal,
}


# --- the sweep --------------------------------------------------------------------------------------


def sweep(config: Config, axes: Sequence[Axis], temperature=None, *,
          progress: Callable[[int, int], None] | None = None) -> SweepResult:
    """κ_L of ``config`` on the grid of ``axes`` at every temperature.

    Parameters
    ----------
    config : Config
        The starting model; keys not varied keep their config values.
    axes : sequence of Axis
        From :func:`parse_vary`; each key at most once.
    temperature : array_like, optional
        Temperatures [K]; default the config's ``temperature`` section.
    progress : callable, optional
        Called as ``progress(done, total)`` with counts of parameter sets.

    Returns
    -------
    SweepResult
        ``kappa_L[i_1, ..., i_d, t]`` equals ``lattice_conductivity`` of
        ``config.with_values({key_1: v_1[i_1], ...})`` at ``T[t]``.

    Raises
    ------
    ConfigError
        Repeated key, a key that does not apply to this config (e.g. a branch key of an
        averaged model), values that the config rejects, missing temperatures, or a grid point
        where κ_L diverges (no ω⁰–ω² scattering term).
    """
    if isinstance(axes, Mapping):  # {key: SI values}, the notebook form
        axes = [a if isinstance(a, Axis) else Axis.of(k, a) for k, a in axes.items()]
    axes = check_axes(axes)
    if temperature is None:
        if config.temperature is None:
            raise ConfigError("--at", allowed="missing: give temperatures with --at (e.g. "
                              "--at 300K,600K) or a temperature section in the config")
        T = np.asarray(config.temperature, dtype=float)
    else:
        T = np.atleast_1d(np.asarray(temperature, dtype=float))
        if T.size == 0 or np.any(~(T > 0)) or not np.all(np.isfinite(T)):
            raise ConfigError("--at", T.tolist() if T.size < 8 else "array",
                              "temperatures must be finite and > 0 K")
    check_temperatures(config, T)
    plan = _plan(config, axes, T)
    shape = tuple(a.values.size for a in axes)
    outer, inner = plan["outer"], plan["inner"]
    n_inner = math.prod(axes[d].values.size for d in inner)
    n_outer = len(plan["bases"])
    total = n_inner * n_outer
    block = np.empty((n_outer, n_inner, T.size))
    for o, base in enumerate(plan["bases"]):
        def report(k: int, _o: int = o) -> None:
            if progress is not None:
                progress(_o * n_inner + k, total)
        _evaluate(base, [axes[d] for d in inner], T, block[o], report)
    # (outer..., inner..., T) -> axes in the order given
    full = block.reshape(*[axes[d].values.size for d in outer],
                         *[axes[d].values.size for d in inner], T.size)
    order = list(outer) + list(inner)
    perm = [order.index(d) for d in range(len(axes))] + [len(axes)]
    if perm == sorted(perm):
        kappa = full.reshape(*shape, T.size)
    else:
        kappa = np.ascontiguousarray(np.transpose(full, perm)).reshape(*shape, T.size)
    if progress is not None:
        progress(total, total)
    try:
        reference = lattice_conductivity(config.material, config.scattering, T)
    except KappaError:
        reference = np.full(T.shape, np.nan)
    cites = [_CALLAWAY, *plan["citations"]]
    return SweepResult(axes, T, kappa, reference, config,
                       tuple(axes[d].key for d in outer), cites)


def _plan(config: Config, axes: tuple[Axis, ...], T: np.ndarray) -> dict:
    """Validate the keys against the config; split them into vectorised and config-level."""
    applicable = numeric_keys(config)
    for a in axes:
        if a.key not in applicable:
            model = "per-branch (material.branches)" if config.material.per_branch else "averaged"
            raise ConfigError(f"--vary {a.key}", allowed=f"does not apply to this {model} model; "
                              "'kappa check CONFIG' lists the keys it has")
        reason = unused_key(config, a.key)
        if reason:
            raise ConfigError(f"--vary {a.key}", allowed=f"has no effect in this config: {reason}")
    first = {a.key: float(a.values[0]) for a in axes}
    base = config.with_values(first)  # raises for keys that do not apply to this config
    for a in axes:  # the ends of every range must give a valid config; warn about dubious ends
        for v in (a.values[0], a.values[-1]):
            cfg = base.with_values({a.key: float(v)})
            _physics_warnings(cfg, a.key)
    fast_mechanisms = all(type(m) in VECTORISED for m in base.scattering)
    outer, inner = [], []
    for d, a in enumerate(axes):
        where = _locate(base, a.key)
        simple = fast_mechanisms and where is not None
        if simple:
            for v in (a.values[-1], a.values[a.values.size // 2]):
                alt = base.with_values({a.key: float(v)})
                exp = _replaced(base, where, float(v))
                if exp is None or not _same(alt, *exp):
                    simple = False
                    break
        (inner if simple else outer).append(d)
    bases = []
    for combo in itertools.product(*[axes[d].values for d in outer]):
        values = dict(first)
        values.update({axes[d].key: float(v) for d, v in zip(outer, combo, strict=True)})
        bases.append(config.with_values(values) if outer else base)
    theta = max(b.debye_temperature for cfg in bases[:1] for b in cfg.material.branches)
    if T.max() > 3.0 * theta:
        warn(f"temperatures up to {T.max():.4g} K exceed 3θ ({3 * theta:.4g} K); the "
             "Debye/Callaway model is not meant for that range", stacklevel=3)
    cites = base.scattering.citations()
    return {"outer": outer, "inner": inner, "bases": bases, "citations": cites}


def _same(cfg: Config, material, scattering) -> bool:
    return (cfg.material == material
            and {x.key: x for x in cfg.scattering} == {x.key: x for x in scattering})


def _physics_warnings(cfg: Config, key: str) -> None:
    for mech in cfg.scattering:
        if key.startswith(f"scattering.{mech.key}."):
            mech.check_physics(cfg.material)


def _coefficients(mech, ctx, mat_ns, br_ns, T_row, base: Config, j: int) -> dict:
    """{power: coefficient} of one mechanism for one branch (vectorised when possible)."""
    fn = VECTORISED.get(type(mech))
    if fn is not None:
        return fn(ctx[mech.key], mat_ns, br_ns, T_row, ctx)
    # no vectorised form: only reached with scalar fields (see _plan), so call the mechanism
    c = mech.coefficients(base.material, base.material.branches[j], T_row[0], base.scattering)
    return {k: c[k][None, :] for k in range(NPOW) if np.any(c[k] != 0)}


class _Field:
    """A model quantity: a float, or the values of one inner axis (picked per parameter set)."""

    __slots__ = ("value", "axis")

    def __init__(self, value, axis: int | None = None) -> None:
        self.value = value
        self.axis = axis


def _evaluate(base: Config, axes: list[Axis], T: np.ndarray, out: np.ndarray,
              report: Callable[[int], None]) -> None:
    """Fill ``out`` (P, nT) with κ_L for the grid of ``axes`` (all vectorisable) around ``base``."""
    m, s = base.material, base.scattering
    nB, nT = len(m.branches), T.size
    shape = tuple(a.values.size for a in axes)
    P = math.prod(shape)
    mat = {"atomic_mass": _Field(m.atomic_mass), "atomic_volume": _Field(m.atomic_volume)}
    branches = [{"debye_temperature": _Field(b.debye_temperature),
                 "sound_velocity": _Field(b.sound_velocity),
                 "gruneisen": _Field(b.gruneisen), "count": _Field(b.count)}
                for b in m.branches]
    mechs = {mech.key: {k: _Field(v) for k, v in mech.values().items()} for mech in s}
    for d, a in enumerate(axes):
        where = _locate(base, a.key)
        target = (mat if where[0] == "material" else branches[where[1]] if where[0] == "branch"
                  else mechs[where[1]])
        target[where[-1]] = _Field(a.values, d)
    resistive = [mech for mech in s.mechanisms if mech.resistive]
    normal = s.get("normal")
    has_normal = isinstance(normal, Normal) and (normal.active or
                                                 mechs["normal"]["ratio"].axis is not None or
                                                 mechs["normal"]["scale"].axis is not None)

    # rules: one per distinct upper limit θ_j/T (distinct θ values × temperatures)
    theta_vals = []
    for br in branches:
        f = br["debye_temperature"]
        vals = np.atleast_1d(np.asarray(f.value, dtype=float))
        theta_vals.append(vals)
    tops = [np.minimum(np.array([[th / t for t in T] for th in vals]), X_CUT)
            for vals in theta_vals]
    uniq, inverse = np.unique(np.concatenate([t.ravel() for t in tops]), return_inverse=True)
    maps, start = [], 0
    for t in tops:
        maps.append(inverse[start:start + t.size].reshape(t.shape).astype(np.int64))
        start += t.size
    xx, wq, count, x_s = rules(uniq)
    bt, bq = _BLOCK
    xpow = (k_B * T / hbar)[:, None] ** np.arange(NPOW)  # (nT, 5): ω^k → x^k
    cube = (k_B * T / hbar) ** 3

    c_max = max(1, min(P, _CHUNK_SAMPLES // (nB * nT)))
    res_buf = np.zeros((c_max, nB, nT, NPOW))
    nrm_buf = np.zeros((c_max, nB, nT, NPOW))
    grid_buf = np.empty((c_max, nB, nT), dtype=np.int64)
    pre_buf = np.empty((c_max, nB, nT))
    res_out = np.empty((c_max * nB * nT, 3))
    T_row = T[None, :]

    for a0 in range(0, P, c_max):
        a1 = min(P, a0 + c_max)
        c = a1 - a0
        idx = np.unravel_index(np.arange(a0, a1), shape) if axes else ()

        def pick(f: _Field, _idx=idx):
            return f.value if f.axis is None else f.value[_idx[f.axis]][:, None]

        mat_ns = SimpleNamespace(**{k: pick(f) for k, f in mat.items()})
        ctx = {key: SimpleNamespace(**{k: pick(f) for k, f in fields_.items()})
               for key, fields_ in mechs.items()}
        for j, br in enumerate(branches):
            br_ns = SimpleNamespace(**{k: pick(f) for k, f in br.items()})
            br_ns.polarization = m.branches[j].polarization
            totals: dict[int, object] = {}
            for mech in resistive:
                for k, coef in _coefficients(mech, ctx, mat_ns, br_ns, T_row, base, j).items():
                    totals[k] = coef if k not in totals else totals[k] + coef
            for k, coef in totals.items():
                np.multiply(coef, xpow[:, k], out=res_buf[:c, j, :, k])
            low = sum((totals[k] for k in (0, 1, 2) if k in totals), 0.0)
            if not np.all(np.broadcast_to(low, (c, nT)) > 0):
                _diverges(axes, shape, T, a0, np.broadcast_to(low, (c, nT)))
            if has_normal:
                for k, coef in _coefficients(normal, ctx, mat_ns, br_ns, T_row, base,
                                             j).items():
                    np.multiply(coef, xpow[:, k], out=nrm_buf[:c, j, :, k])
            f = br["debye_temperature"]
            grid_buf[:c, j, :] = maps[j] if f.axis is None else maps[j][idx[f.axis]]
            pre_buf[:c, j, :] = (br_ns.count / 3.0 * k_B
                                 / (2.0 * math.pi**2 * br_ns.sound_velocity) * cube)
        res = res_buf[:c]
        n = c * nB * nT
        outv = res_out[:n]
        callaway_integrals(xx, wq, count, x_s, grid_buf[:c].reshape(n),
                           res.reshape(n, NPOW), nrm_buf[:c].reshape(n, NPOW), bt, bq, outv)
        i1 = outv[:, 0].reshape(c, nB, nT)
        if has_normal:
            i2 = outv[:, 1].reshape(c, nB, nT)
            i3 = outv[:, 2].reshape(c, nB, nT)
            with np.errstate(invalid="ignore", divide="ignore"):
                corr = np.where(i3 > 0, i2 * i2 / np.where(i3 > 0, i3, 1.0), 0.0)
            k = pre_buf[:c] * (i1 + corr)
            out[a0:a1] = k.sum(axis=1) if nB > 1 else k[:, 0, :]
        elif nB > 1:
            out[a0:a1] = (pre_buf[:c] * i1).sum(axis=1)
        else:
            np.multiply(pre_buf[:c, 0, :], i1[:, 0, :], out=out[a0:a1])
        report(a1)


def _diverges(axes: list[Axis], shape: tuple, T: np.ndarray, a0: int, low: np.ndarray) -> None:
    bad = np.unravel_index(int(np.argmin(low > 0)), low.shape)
    point = ", ".join(f"{a.key}={a.values[i]:.6g}" for a, i in
                      zip(axes, np.unravel_index(a0 + bad[0], shape), strict=True))
    raise ConfigError("scattering", f"at {point or 'the config values'}, T = {T[bad[1]]:.6g} K",
                      "κ_L diverges: the resistive rate has no ω⁰–ω² term (add boundary "
                      "scattering or keep Umklapp on)")


_BLOCK = block_rule()
