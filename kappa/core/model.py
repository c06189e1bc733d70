"""The model: a material and its scattering, in SI, with one grammar for its numeric keys.

A :class:`Model` is frozen. It holds the material as given (:class:`MaterialSpec`) and the
scattering mechanisms, and resolves them once into the :class:`Material` and mechanisms the
evaluator uses, with every derived value recorded in :attr:`Model.derived`.

Dotted keys address every numeric value, the same in configs, ``--set``, fits, sweeps and
error messages:

* ``material.NAME`` — e.g. ``material.gruneisen``, ``material.density``;
* ``material.branches.I.NAME`` — a branch of a per-branch material;
* ``material.alloy.fraction`` — the fraction x of an alloy section;
* ``scattering.MECHANISM.NAME`` — e.g. ``scattering.boundary.grain_size``.

:meth:`Model.with_values` sets keys to SI floats or numpy arrays (a batch of parameter sets:
the evaluator then computes κ_L for every set at once) and re-derives what depends on them
(θ from a velocity, V₀ from a density) through the one function
:func:`~kappa.core.resolve.resolve_material`.
"""

from __future__ import annotations

import difflib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, fields, is_dataclass, replace

import numpy as np

from kappa.core.material import (
    ALLOY_PARAMETERS,
    BRANCH_PARAMETERS,
    MATERIAL_PARAMETERS,
    Derived,
    Material,
    MaterialSpec,
)
from kappa.core.mechanisms import REGISTRY
from kappa.core.parameters import Parameter
from kappa.core.resolve import resolve_material
from kappa.core.scattering import Scattering
from kappa.errors import ConfigError

__all__ = ["Model", "split_key", "batch_map"]

_AVERAGED = ("debye_temperature", "sound_velocity", "longitudinal_velocity",
             "transverse_velocity", "gruneisen")


def split_key(key: str) -> list[str]:
    """``"a.b.c"`` → ``["a", "b", "c"]``; ConfigError for an empty part."""
    parts = str(key).split(".")
    if any(not p for p in parts):
        raise ConfigError(key, allowed="not a valid dotted key (e.g. material.gruneisen)")
    return parts


def _suggest(name: str, allowed: Sequence[str], key: str) -> ConfigError:
    close = difflib.get_close_matches(name, allowed, n=1, cutoff=0.6)
    hint = f"did you mean '{close[0]}'? " if close else ""
    return ConfigError(key, allowed=f"unknown key; {hint}allowed here: " + ", ".join(allowed))


@dataclass(frozen=True)
class Model:
    """A material (as given) and its scattering mechanisms; resolved when built.

    Parameters
    ----------
    spec : MaterialSpec
        The material as given.
    scattering : Scattering
        The mechanisms as given.

    Attributes
    ----------
    material : Material
        The resolved material (derived values filled in).
    mechanisms : Scattering
        The resolved mechanisms (values derived from the material filled in).
    derived : tuple of Derived
        Every value kappa derived, with how.
    """

    spec: MaterialSpec
    scattering: Scattering = field(default_factory=Scattering)
    material: Material = field(init=False, repr=False, compare=False)
    mechanisms: Scattering = field(init=False, repr=False, compare=False)
    derived: tuple[Derived, ...] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        material, derived = resolve_material(self.spec)
        resolved = []
        for m in self.scattering:
            r, d = m.resolve(material, self.spec)
            resolved.append(r)
            derived += d
        mechanisms = Scattering(tuple(resolved))
        for m in mechanisms.normal:
            if getattr(m, "form", None) == "branch" and not material.per_branch:
                raise ConfigError("scattering.normal.form", "branch",
                                  "the branch forms need material.branches; use form: ratio "
                                  "for the averaged model")
        object.__setattr__(self, "material", material)
        object.__setattr__(self, "mechanisms", mechanisms)
        object.__setattr__(self, "derived", tuple(derived))

    @classmethod
    def from_material(cls, material: Material, scattering: Scattering | None = None) -> Model:
        """A model from an already resolved :class:`Material` (nothing derived)."""
        if material.per_branch:
            from kappa.core.material import BranchSpec

            branches = tuple(BranchSpec(b.polarization, b.sound_velocity, b.gruneisen, b.count,
                                        b.debye_temperature, b.dispersion,
                                        b.zone_boundary_frequency) for b in material.branches)
            spec = MaterialSpec(material.name, atomic_mass=material.atomic_mass,
                                atomic_volume=material.atomic_volume, branches=branches)
        else:
            b = material.branches[0]
            spec = MaterialSpec(material.name, atomic_mass=material.atomic_mass,
                                atomic_volume=material.atomic_volume,
                                debye_temperature=b.debye_temperature,
                                sound_velocity=b.sound_velocity, gruneisen=b.gruneisen)
        if material.has_optical:  # the material's θ are acoustic already
            n = material.atoms_per_cell
            if spec.debye_temperature is not None:
                spec = replace(spec, debye_temperature=spec.debye_temperature * n ** (1 / 3))
            spec = replace(spec, atoms_per_cell=n)
        return cls(spec, scattering if scattering is not None else Scattering())

    # --- the key grammar ---------------------------------------------------------------------

    def parameter(self, key: str) -> Parameter:
        """The declaration of a numeric key (unit, range, display unit, title).

        Raises
        ------
        ConfigError
            Unknown key (with a suggestion), or a key that is not numeric.
        """
        parts = split_key(key)
        head = parts[0]
        if head == "material" and len(parts) == 2:
            if parts[1] in MATERIAL_PARAMETERS:
                return MATERIAL_PARAMETERS[parts[1]]
            raise _suggest(parts[1], [*MATERIAL_PARAMETERS, "name", "composition", "branches",
                                      "alloy"],
                           key) if parts[1] not in ("name", "composition", "branches",
                                                    "alloy") else \
                ConfigError(key, allowed="not a numeric key")
        if head == "material" and len(parts) == 3 and parts[1] == "alloy":
            if parts[2] in ALLOY_PARAMETERS:
                return ALLOY_PARAMETERS[parts[2]]
            if parts[2] == "end_members":
                raise ConfigError(key, allowed="not a numeric key")
            raise _suggest(parts[2], [*ALLOY_PARAMETERS, "end_members"], key)
        if head == "material" and len(parts) == 4 and parts[1] == "branches":
            if parts[3] in BRANCH_PARAMETERS:
                return BRANCH_PARAMETERS[parts[3]]
            if parts[3] in ("polarization", "dispersion"):
                raise ConfigError(key, allowed="not a numeric key")
            raise _suggest(parts[3], [*BRANCH_PARAMETERS, "polarization", "dispersion"], key)
        if head == "scattering" and len(parts) == 3:
            if parts[1] not in REGISTRY:
                raise _suggest(parts[1], list(REGISTRY), ".".join(parts[:2]))
            p = REGISTRY[parts[1]].parameter(parts[2])
            if p.numeric:
                return p
        if head not in ("material", "scattering"):
            raise _suggest(head, ["material", "scattering"], key)
        raise ConfigError(key, allowed="not a numeric key (see 'kappa check CONFIG' for the "
                          "numeric keys of a config)")

    def keys(self) -> dict[str, Parameter]:
        """Every numeric key that can be set, fitted or swept in this model → declaration."""
        out: dict[str, Parameter] = {}
        s = self.spec
        if s.composition is None and s.alloy is None:
            out["material.atomic_mass"] = MATERIAL_PARAMETERS["atomic_mass"]
        if s.alloy is not None:
            out["material.alloy.fraction"] = ALLOY_PARAMETERS["fraction"]
        if s.atoms_per_cell is not None:
            out["material.atoms_per_cell"] = MATERIAL_PARAMETERS["atoms_per_cell"]
        if s.density is not None:
            out["material.density"] = MATERIAL_PARAMETERS["density"]
        else:
            out["material.atomic_volume"] = MATERIAL_PARAMETERS["atomic_volume"]
        if s.branches is not None:
            for i, b in enumerate(s.branches):
                for k in ("debye_temperature", "sound_velocity", "gruneisen"):
                    out[f"material.branches.{i}.{k}"] = BRANCH_PARAMETERS[k]
                if b.dispersion != "debye":
                    out[f"material.branches.{i}.zone_boundary_frequency"] = \
                        BRANCH_PARAMETERS["zone_boundary_frequency"]
        else:
            out["material.debye_temperature"] = MATERIAL_PARAMETERS["debye_temperature"]
            if s.longitudinal_velocity is not None:
                for k in ("longitudinal_velocity", "transverse_velocity"):
                    out[f"material.{k}"] = MATERIAL_PARAMETERS[k]
            else:
                out["material.sound_velocity"] = MATERIAL_PARAMETERS["sound_velocity"]
            out["material.gruneisen"] = MATERIAL_PARAMETERS["gruneisen"]
        for key, cls in REGISTRY.items():
            for p in cls.parameters:
                if p.numeric:
                    out[f"scattering.{key}.{p.name}"] = p
        return out

    def check_key(self, key: str) -> Parameter:
        """The declaration of ``key`` if it applies to this model (ConfigError otherwise)."""
        p = self.parameter(key)
        if key not in self.keys():
            raise ConfigError(key, allowed=self._why_not(key))
        return p

    def _why_not(self, key: str) -> str:
        parts = split_key(key)
        s = self.spec
        if parts[1] == "atomic_mass" and s.alloy is not None:
            return ("derived from material.alloy in this model; vary material.alloy.fraction "
                    "instead")
        if parts[1] == "atomic_mass" and s.composition is not None:
            return ("derived from material.composition in this model; change the composition "
                    "instead")
        if parts[1] == "alloy":
            return "this model has no material.alloy section"
        if parts[1] == "atoms_per_cell":
            return ("this model does not give material.atoms_per_cell (add it to the config to "
                    "vary it)")
        if parts[1] == "atomic_volume" and s.density is not None:
            return "derived from material.density in this model; use material.density instead"
        if parts[1] == "density":
            return "this model gives material.atomic_volume, not a density"
        if parts[1] == "branches":
            if s.branches is None:
                return "this is an averaged-branch model (no material.branches)"
            if parts[-1] == "zone_boundary_frequency" and parts[2].isdigit() \
                    and int(parts[2]) < len(s.branches):
                return (f"only a sine branch has a zone-boundary frequency (add "
                        f"material.branches.{parts[2]}.dispersion: sine)")
            return (f"there is no branch {parts[2]}; this model has branches 0 to "
                    f"{len(s.branches) - 1}")
        if parts[1] in _AVERAGED and s.branches is not None:
            return ("does not apply to this per-branch model (use material.branches.I."
                    f"{parts[1]})")
        if parts[1] in ("longitudinal_velocity", "transverse_velocity"):
            return "this model gives material.sound_velocity, not v_L and v_T"
        if parts[1] == "sound_velocity":
            return ("this model gives longitudinal_velocity and transverse_velocity; vary "
                    "those")
        return "does not apply to this model ('kappa check CONFIG' lists the keys it has)"

    def unused(self, key: str) -> str | None:
        """Why a numeric key has no effect in this model (None if it has one)."""
        parts = split_key(key)
        if parts[0] == "scattering" and len(parts) == 3:
            mech = self.mechanisms.get(parts[1])  # resolved: knows what the material gives
            if mech is not None:
                return mech.unused(parts[2])
        return None

    def value(self, key: str):
        """The SI value of a numeric key as the model uses it (derived values included).

        For a key of an absent mechanism this is the parameter's default (NaN if it has none).
        """
        parts = split_key(key)
        self.parameter(key)
        m = self.material
        if parts[0] == "material":
            if parts[1] == "branches":
                i = self._branch_index(key, parts[2])
                if parts[3] == "count":
                    return m.branches[i].count
                return getattr(m.branches[i], parts[3])
            if parts[1] == "alloy":
                if self.spec.alloy is None:
                    raise ConfigError(key, allowed=self._why_not(key))
                return self.spec.alloy.fraction
            if parts[1] in ("atomic_mass", "atomic_volume"):
                return getattr(m, parts[1])
            if parts[1] == "atoms_per_cell":
                return m.atoms_per_cell
            if parts[1] == "debye_temperature" and not m.per_branch and m.has_optical:
                # the key is the Debye temperature of all modes; the branch holds θ_a
                if self.spec.debye_temperature is not None:
                    return self.spec.debye_temperature
                return m.branches[0].debye_temperature * m.atoms_per_cell ** (1.0 / 3.0)
            if parts[1] in ("debye_temperature", "sound_velocity", "gruneisen") \
                    and not m.per_branch:
                return getattr(m.branches[0], parts[1])
            v = getattr(self.spec, parts[1])
            if v is None:
                raise ConfigError(key, allowed=self._why_not(key))
            return v
        mech = self.mechanisms.get(parts[1])  # resolved: values derived from the material
        if mech is None:
            d = REGISTRY[parts[1]].parameter(parts[2]).default
            return float(d) if isinstance(d, (int, float)) else float("nan")
        return getattr(mech, parts[2])

    def _branch_index(self, key: str, part: str) -> int:
        n = len(self.spec.branches or ())
        try:
            i = int(part)
        except ValueError:
            raise ConfigError(key, part, "a list position must be a number 0, 1, ...") from None
        if not 0 <= i < n:
            raise ConfigError(key, allowed=self._why_not(key))
        return i

    def with_values(self, values: Mapping[str, object]) -> Model:
        """A new model with numeric keys set to SI values (floats or arrays of a batch).

        Keys of an absent mechanism add it with its defaults. Derived values are recomputed;
        the new values are validated (ConfigError naming the key).

        Examples
        --------
        >>> from kappa.core.material import MaterialSpec
        >>> m = Model(MaterialSpec(atomic_mass=4.66e-26, atomic_volume=2.0e-29,
        ...                        sound_velocity=6000.0, gruneisen=1.0))
        >>> round(float(m.material.branches[0].debye_temperature))  # derived from v and V₀
        658
        >>> faster = m.with_values({"material.sound_velocity": 7000.0})
        >>> round(float(faster.material.branches[0].debye_temperature))
        768
        """
        spec, scattering = self.spec, self.scattering
        material_changes: dict[str, object] = {}
        branch_changes: dict[int, dict[str, object]] = {}
        mech_changes: dict[str, dict[str, object]] = {}
        for key, value in values.items():
            p = self.check_key(key)
            value = _as_value(value)
            p.check(key, value)
            parts = split_key(key)
            if parts[0] == "material" and parts[1] == "branches":
                branch_changes.setdefault(self._branch_index(key, parts[2]), {})[parts[3]] = value
            elif parts[0] == "material" and parts[1] == "alloy":
                material_changes["alloy"] = replace(spec.alloy, **{parts[2]: value})
            elif parts[0] == "material":
                material_changes[parts[1]] = value
            else:
                mech_changes.setdefault(parts[1], {})[parts[2]] = value
        if branch_changes:
            branches = list(spec.branches)
            for i, changes in branch_changes.items():
                branches[i] = replace(branches[i], **changes)
            material_changes["branches"] = tuple(branches)
        if material_changes:
            spec = replace(spec, **material_changes)
        for mkey, changes in mech_changes.items():
            current = scattering.get(mkey)
            mech = REGISTRY[mkey](**changes) if current is None else replace(current, **changes)
            scattering = scattering.with_mechanism(mech)
        return Model(spec, scattering)

    def without(self, key: str) -> Model:
        """The model with mechanism ``key`` removed."""
        return Model(self.spec, self.scattering.without(key))

    @property
    def batch_shape(self) -> tuple[int, ...]:
        """Broadcast shape of the array-valued parameters (``()`` for a single model)."""
        shapes: list[tuple[int, ...]] = []
        batch_map(self.material, lambda a: shapes.append(a.shape) or a)
        batch_map(self.mechanisms, lambda a: shapes.append(a.shape) or a)
        return np.broadcast_shapes(*shapes) if shapes else ()


def _as_value(value):
    if isinstance(value, np.ndarray):
        return value.astype(float) if value.ndim else float(value)
    if isinstance(value, (list, tuple)):
        return np.asarray(value, dtype=float)
    return float(value)


def batch_map(obj, fn):
    """Apply ``fn`` to every ndarray field of a (nested) frozen dataclass; return the copy.

    Used to flatten or slice a batch of parameter sets; fields that are floats stay as they are.
    """
    if isinstance(obj, np.ndarray):
        return fn(obj)
    if isinstance(obj, tuple):
        return tuple(batch_map(o, fn) for o in obj)
    if is_dataclass(obj) and not isinstance(obj, type):
        changes = {}
        for f in fields(obj):
            if not f.init:
                continue
            v = getattr(obj, f.name)
            if isinstance(v, (np.ndarray, tuple)) or (is_dataclass(v) and not isinstance(v, type)):
                new = batch_map(v, fn)
                if new is not v:
                    changes[f.name] = new
        if not changes:
            return obj
        new_obj = object.__new__(type(obj))
        for f in fields(obj):
            object.__setattr__(new_obj, f.name, changes.get(f.name, getattr(obj, f.name)))
        return new_obj
    return obj
