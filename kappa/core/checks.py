"""Plausibility checks: legal values that no real solid shows, and temperatures the model is
not meant for. Each function returns plain-words warnings (one line each); the workflows issue
them once. Nothing is ever changed."""

from __future__ import annotations

import numpy as np

from kappa.core.material import BRANCH_PARAMETERS, MATERIAL_PARAMETERS
from kappa.core.model import Model
from kappa.core.parameters import Parameter

__all__ = ["model_warnings", "temperature_warnings"]


def temperature_warnings(model: Model, temperature) -> list[str]:
    """Temperatures the model is not meant for.

    T above 3θ (the largest branch θ: the Debye/Callaway model is a low- to mid-temperature
    model; common practice, no source) — for a cell of n > 1 atoms the θ of all modes,
    θ_a·n^(1/3), since the model already treats the acoustic branches up to θ_a and the optical
    modes apart; without boundary scattering, T below θ/30 (the acoustic θ, which sets the
    Umklapp freeze-out), where κ_L grows without bound as Umklapp freezes out.
    """
    T = np.atleast_1d(np.asarray(temperature, dtype=float))
    if T.size == 0:
        return []
    out = []
    theta = float(model.material.max_debye_temperature)
    top, name = theta, "3θ"
    if model.material.has_optical:
        top = theta * float(np.max(model.material.atoms_per_cell)) ** (1.0 / 3.0)
        name = "3θ_D (θ of all modes, θ_a·n^(1/3))"
    if T.max() > 3.0 * top:
        out.append(f"temperatures up to {T.max():.4g} K exceed {name} ({3 * top:.4g} K); the "
                   "Debye/Callaway model is not meant for that range")
    if model.mechanisms.get("boundary") is None and T.min() < theta / 30:
        out.append("no boundary scattering: below about θ/30 "
                   f"({theta / 30:.3g} K) κ_L grows without bound as Umklapp freezes out; add "
                   "scattering.boundary with the grain or sample size")
    return out


def model_warnings(model: Model) -> list[str]:
    """Plain-words warnings about legal but unusual values (outside what real solids show).

    Each numeric value of the material is compared with its declared ``typical`` range, the
    mechanisms add their own checks, and a transverse velocity above the longitudinal one is
    flagged. One line per finding; nothing is changed.
    """
    out: list[str] = []
    s, m = model.spec, model.material
    for name, p in MATERIAL_PARAMETERS.items():
        value = getattr(s, name)
        if value is None and name in ("atomic_mass", "atomic_volume"):
            value = getattr(m, name)
        if value is not None and p.unusual(value):
            out.append(_unusual(f"material.{name}", p, value))
    for i, b in enumerate(s.branches or ()):
        for name in ("debye_temperature", "sound_velocity", "gruneisen",
                     "zone_boundary_frequency"):
            value = getattr(b, name)
            p = BRANCH_PARAMETERS[name]
            if value is not None and p.unusual(value):
                out.append(_unusual(f"material.branches.{i}.{name}", p, value))
    vl, vt = _velocities(model)
    if vl is not None and np.any(np.asarray(vt) > vl):
        out.append("the transverse sound velocity is above the longitudinal one; in an "
                   "isotropic solid v_T < (√3/2)·v_L")
    for mech in model.mechanisms:
        for p in mech.parameters:
            value = getattr(mech, p.name)
            if p.numeric and mech.unused(p.name) is None and p.unusual(value):
                out.append(_unusual(f"scattering.{mech.key}.{p.name}", p, value))
        out += mech.warnings(m)
    return out


def _velocities(model: Model):
    s = model.spec
    if s.longitudinal_velocity is not None:
        return s.longitudinal_velocity, s.transverse_velocity
    if s.branches is not None:
        longs = [b.sound_velocity for b in s.branches if b.polarization == "longitudinal"]
        trans = [b.sound_velocity for b in s.branches if b.polarization == "transverse"]
        if longs and trans:
            return longs[0], np.max(np.array(trans, dtype=float), axis=0)
    return None, None


def _unusual(key: str, p: Parameter, value) -> str:
    lo, hi = p.typical  # type: ignore[misc]
    v = np.asarray(value, dtype=float)
    worst = float(v.min() if np.any(v < lo) else v.max())
    return (f"{key} = {p.format(worst)} is outside {p.format(lo)} to {p.format(hi)} "
            f"({p.basis}); check the value and its unit")
