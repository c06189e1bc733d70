"""From the material values as given to the material the model uses: one function.

:func:`resolve_material` derives what the user did not give — the mean mass from a composition
or an alloy, the volume per atom from a density, the Debye mean velocity from v_L and v_T, each
Debye temperature not given from its velocity, the acoustic Debye temperature of a cell with
several atoms, a sine branch's zone-boundary frequency — checks every value against its
declaration, and returns the :class:`~kappa.core.material.Material` with a record
(:class:`~kappa.core.material.Derived`) of every derived value.
"""

from __future__ import annotations

import numpy as np

from kappa.core.constants import h, k_B
from kappa.core.dispersion import DISPERSIONS, zone_boundary_from_velocity
from kappa.core.material import (
    ALLOY_PARAMETERS,
    BRANCH_PARAMETERS,
    MATERIAL_PARAMETERS,
    AlloySpec,
    Branch,
    BranchSpec,
    Derived,
    Material,
    MaterialSpec,
    acoustic_debye_temperature,
    check_dispersion,
    debye_temperature_from_velocity,
    mean_sound_velocity,
)
from kappa.errors import ConfigError

__all__ = ["resolve_material"]


def _either(spec: MaterialSpec, a: str, b: str) -> None:
    if getattr(spec, a) is not None and getattr(spec, b) is not None:
        raise ConfigError(f"material.{b}", "given", f"give either material.{a} or "
                          f"material.{b}, not both")


def resolve_material(spec: MaterialSpec) -> tuple[Material, list[Derived]]:
    """Derive what was not given and build the :class:`Material` (the one place that does).

    Derived values: mean atomic mass from ``composition`` or ``alloy`` (standard atomic
    weights); volume
    per atom V₀ = M̄/ρ from ``density``; the Debye mean velocity from v_L and v_T; each Debye
    temperature not given from its velocity and V₀; with ``atoms_per_cell`` n the acoustic
    Debye temperature θ_a = θ n^(−1/3) of the averaged branch (given or derived) and of each
    branch whose θ is derived (a branch θ given explicitly is taken as that branch's own,
    acoustic, value). Works elementwise on arrays.

    Raises
    ------
    ConfigError
        Missing or conflicting keys, values out of range.
    """
    derived: list[Derived] = []
    _either(spec, "atomic_mass", "composition")
    _either(spec, "atomic_volume", "density")
    if spec.alloy is not None:
        for other in ("atomic_mass", "composition"):
            if getattr(spec, other) is not None:
                raise ConfigError(f"material.{other}", "given", "give either material.alloy "
                                  f"or material.{other}, not both (the alloy sets the "
                                  "composition)")
    for name in ("atomic_mass", "atomic_volume", "density", "debye_temperature",
                 "sound_velocity", "longitudinal_velocity", "transverse_velocity", "gruneisen",
                 "atoms_per_cell"):
        value = getattr(spec, name)
        if value is not None:
            MATERIAL_PARAMETERS[name].check(f"material.{name}", value)
    cells = 1.0 if spec.atoms_per_cell is None else spec.atoms_per_cell
    if spec.atomic_mass is not None:
        mass = spec.atomic_mass
    elif spec.alloy is not None:
        mass = _alloy_mass(spec.alloy, derived)
    elif spec.composition is not None:
        from kappa.core.composition import mean_molar_mass
        from kappa.core.constants import N_A
        from kappa.errors import KappaError

        try:
            mass = mean_molar_mass(spec.composition, "material.composition") / N_A
        except KappaError as exc:
            raise ConfigError(exc.key, exc.value, exc.allowed) from None
        derived.append(Derived("material.atomic_mass", mass, "u",
                               f"mean mass per atom of {spec.composition}, standard atomic "
                               "weights"))
    else:
        raise ConfigError("material.atomic_mass", allowed="missing; the mean mass per atom is "
                          "required (e.g. '28.0855 u'), or give material.composition")
    if spec.atomic_volume is not None:
        volume = spec.atomic_volume
    elif spec.density is not None:
        volume = mass / spec.density
        MATERIAL_PARAMETERS["atomic_volume"].check("material.atomic_volume (from density)",
                                                   volume)
        derived.append(Derived("material.atomic_volume", volume, "angstrom**3",
                               "mean atomic mass / density"))
    else:
        raise ConfigError("material.atomic_volume", allowed="missing; the volume per atom is "
                          "required (e.g. '20.02 angstrom**3'), or give material.density")
    if spec.branches is not None:
        clash = [k for k in ("debye_temperature", "sound_velocity", "gruneisen",
                             "longitudinal_velocity", "transverse_velocity")
                 if getattr(spec, k) is not None]
        if clash:
            raise ConfigError(f"material.{clash[0]}", "given",
                              "give either the averaged-branch keys (debye_temperature, "
                              "sound_velocity, gruneisen) or material.branches, not both")
        branches = tuple(_branch(b, i, volume, derived, cells)
                         for i, b in enumerate(spec.branches))
        return Material(mass, volume, branches, spec.name, cells), derived
    if spec.gruneisen is None:
        raise ConfigError("material.gruneisen", allowed="missing; the Grüneisen parameter is "
                          "required (or give material.branches)")
    has_lt = spec.longitudinal_velocity is not None or spec.transverse_velocity is not None
    if spec.sound_velocity is not None and has_lt:
        raise ConfigError("material.sound_velocity", "given", "give either sound_velocity or "
                          "longitudinal_velocity + transverse_velocity, not both")
    if spec.sound_velocity is not None:
        v = spec.sound_velocity
    elif has_lt:
        for k in ("longitudinal_velocity", "transverse_velocity"):
            if getattr(spec, k) is None:
                raise ConfigError(f"material.{k}", allowed="missing; give both "
                                  "longitudinal_velocity and transverse_velocity")
        v = mean_sound_velocity(spec.longitudinal_velocity, spec.transverse_velocity)
        v = float(v) if np.ndim(v) == 0 else v
        derived.append(Derived("material.sound_velocity", v, "m/s",
                               "Debye mean of longitudinal and transverse velocities"))
    else:
        raise ConfigError("material.sound_velocity", allowed="missing; give sound_velocity (or "
                          "longitudinal_velocity + transverse_velocity, or branches)")
    if spec.debye_temperature is not None:
        theta = spec.debye_temperature
    else:
        theta = _float(debye_temperature_from_velocity(v, volume))
        derived.append(Derived("material.debye_temperature", theta, "K",
                               "from sound velocity and volume per atom"))
    if spec.atoms_per_cell is not None and np.any(np.asarray(cells) != 1.0):
        theta = _float(acoustic_debye_temperature(theta, cells))
        derived.append(Derived("material.acoustic_debye_temperature", theta, "K",
                               "θ_a = θ·n^(-1/3) with n = material.atoms_per_cell; the Callaway "
                               "integral and the Umklapp rate use it"))
    branch = Branch(theta, v, spec.gruneisen, 3.0, "average")
    return Material(mass, volume, (branch,), spec.name, cells), derived


def _alloy_mass(alloy: AlloySpec, derived: list[Derived]):
    """Mean mass per atom of an alloy section [kg], recorded with its composition."""
    from kappa.core.constants import N_A
    from kappa.core.disorder import site_disorder
    from kappa.errors import KappaError

    key = "material.alloy"
    if not (isinstance(alloy.end_members, tuple) and len(alloy.end_members) == 2):
        raise ConfigError(f"{key}.end_members", alloy.end_members,
                          "must be two formulas, e.g. [Mg2Si, Mg2Sn]")
    ALLOY_PARAMETERS["fraction"].check(f"{key}.fraction", alloy.fraction)
    try:
        sites = alloy.sites(key)
        d = site_disorder(sites, strain_parameter=0.0, with_isotopes=False, key=key)
    except KappaError as exc:
        raise ConfigError(exc.key, exc.value, exc.allowed) from None
    mass = _float(np.asarray(d.atomic_mass) * 1e-3 / N_A)
    derived.append(Derived("material.composition", alloy.formula(), "",
                           f"alloy of {alloy.end_members[0]} and {alloy.end_members[1]} at "
                           "material.alloy.fraction, site by site"))
    derived.append(Derived("material.atomic_mass", mass, "u",
                           "mean mass per atom of the alloy, standard atomic weights"))
    return mass


def _float(x):
    return float(x) if np.ndim(x) == 0 else x


def _branch(b: BranchSpec, i: int, volume, derived: list[Derived], cells=1.0) -> Branch:
    key = f"material.branches.{i}"
    if b.polarization not in ("longitudinal", "transverse"):
        raise ConfigError(f"{key}.polarization", b.polarization,
                          "allowed: longitudinal, transverse")
    count = b.count if b.count is not None else (1.0 if b.polarization == "longitudinal"
                                                 else 2.0)
    if b.dispersion not in DISPERSIONS:
        raise ConfigError(f"{key}.dispersion", b.dispersion, "allowed: " + ", ".join(DISPERSIONS))
    if b.dispersion != "debye":
        theta, nu = _sine_branch(b, key, volume, derived)
        for name, value in (("sound_velocity", b.sound_velocity), ("gruneisen", b.gruneisen),
                            ("count", count)):
            BRANCH_PARAMETERS[name].check(f"{key}.{name}", value)
        return Branch(theta, b.sound_velocity, b.gruneisen, count, b.polarization, b.dispersion,
                      nu)
    if b.zone_boundary_frequency is not None:
        raise ConfigError(f"{key}.zone_boundary_frequency", "given",
                          f"only a sine branch has one; add '{key}.dispersion: sine' or remove "
                          "the key")
    if b.debye_temperature is not None:
        theta = b.debye_temperature
    else:
        BRANCH_PARAMETERS["sound_velocity"].check(f"{key}.sound_velocity", b.sound_velocity)
        theta = _float(debye_temperature_from_velocity(b.sound_velocity, volume))
        how = "from the branch's sound velocity and volume per atom"
        if np.any(np.asarray(cells) != 1.0):
            theta = _float(acoustic_debye_temperature(theta, cells))
            how += ", acoustic: times n^(-1/3), n = material.atoms_per_cell"
        derived.append(Derived(f"{key}.debye_temperature", theta, "K", how))
    for name, value in (("sound_velocity", b.sound_velocity), ("gruneisen", b.gruneisen),
                        ("count", count), ("debye_temperature", theta)):
        BRANCH_PARAMETERS[name].check(f"{key}.{name}", value)
    return Branch(theta, b.sound_velocity, b.gruneisen, count, b.polarization)


def _sine_branch(b: BranchSpec, key: str, volume, derived: list[Derived]):
    """θ and ν_zb of a sine branch: each from the other when only one is given (the branch
    ends at its zone boundary, k_Bθ = hν_zb), both from the velocity when neither is (zone
    boundary at the Debye wavevector (6π²/V₀)^(1/3), ω_zb = 2vq_D/π)."""
    theta, nu = b.debye_temperature, b.zone_boundary_frequency
    if nu is not None:
        BRANCH_PARAMETERS["zone_boundary_frequency"].check(f"{key}.zone_boundary_frequency", nu)
    if theta is not None:
        BRANCH_PARAMETERS["debye_temperature"].check(f"{key}.debye_temperature", theta)
    if theta is None and nu is None:
        BRANCH_PARAMETERS["sound_velocity"].check(f"{key}.sound_velocity", b.sound_velocity)
        nu = _float(zone_boundary_from_velocity(b.sound_velocity, volume))
        derived.append(Derived(f"{key}.zone_boundary_frequency", nu, "THz",
                               "zone boundary of the sine at the Debye wavevector "
                               "(6π²/V₀)^(1/3): ω_zb = 2vq_D/π"))
    if nu is None:
        nu = _float(k_B * np.asarray(theta) / h)
        derived.append(Derived(f"{key}.zone_boundary_frequency", nu, "THz",
                               "k_Bθ/h: the sine branch ends at its zone boundary"))
    if theta is None:
        theta = _float(h * np.asarray(nu) / k_B)
        derived.append(Derived(f"{key}.debye_temperature", theta, "K",
                               "hν_zb/k_B: the sine branch ends at its zone boundary"))
    check_dispersion(key, b.dispersion, theta, nu)
    return theta, nu
