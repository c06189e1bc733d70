"""Virtual-crystal interpolation between two end members, with the alloy's disorder.

Pure functions over models and SI arrays. :func:`alloy_models` returns one model that is a
batch over the alloy fraction x (every value an array over x) — the evaluator computes κ_L of
every x in one pass. The rules, one per quantity:

* mean atomic mass M̄(x) = (1 − x) M̄_A + x M̄_B (linear: the composition is);
* volume per atom: Vegard's law for the lattice constant, δ(x) = (1 − x) δ_A + x δ_B with
  δ = V₀^(1/3), V₀ = δ³ (L. Vegard, Z. Phys. 5, 17 (1921));
* sound velocities (each branch, or v_L and v_T): the elastic modulus ρv² is linear in x and
  the density follows, ρ(x) = M̄(x)/V₀(x), v(x) = [((1 − x)ρ_A v_A² + x ρ_B v_B²)/ρ(x)]^(1/2)
  (virtual-crystal practice, no single source);
* Debye temperatures: derived from v(x) and V₀(x) where both end members derive them from
  their velocities; otherwise linear in x;
* Grüneisen parameters, atoms per cell and every numeric scattering parameter (Umklapp scale,
  grain size, ...): linear in x;
* disorder: the end members' own point-defect sections are replaced by the alloy's Γ(x). With
  ``material.composition`` in both end members, Γ_M(x) is the site-weighted Γ of the
  composition (1 − x)·A + x·B site by site, natural isotopes included
  (:mod:`kappa.core.disorder`), and Γ_S(x) the strain term of every site that differs, with the
  size mismatch of the end members' δ (:func:`kappa.core.disorder.alloy_strain_variance`).
  Without compositions the alloy is one site of mean atoms (Abeles, Phys. Rev. 131, 1906
  (1963)): Γ_M = (1 − x)Γ_M,A + xΓ_M,B + x(1 − x)((M̄_A − M̄_B)/M̄)², Γ_S = (1 − x)Γ_S,A +
  xΓ_S,B + ε x(1 − x)((δ_A − δ_B)/δ)²; this understates Γ_M of a compound alloyed on one
  sublattice.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kappa.core.disorder import (
    DEFAULT_STRAIN_PARAMETER,
    alloy_strain_variance,
    interpolate_sites,
    parse_sites,
    site_disorder,
)
from kappa.core.material import MaterialSpec
from kappa.core.mechanisms import PointDefect
from kappa.core.model import Model
from kappa.core.scattering import Scattering
from kappa.errors import ConfigError, KappaError

__all__ = ["AlloyModels", "alloy_models", "check_fractions", "ALLOY_CITATIONS"]

ALLOY_CITATIONS = (
    "Alloy disorder: B. Abeles, Phys. Rev. 131, 1906 (1963); site-weighted Γ: R. Gurunathan "
    "et al., Phys. Rev. Applied 13, 034011 (2020)",
    "Vegard's law: L. Vegard, Z. Phys. 5, 17 (1921)",
)


@dataclass(frozen=True)
class AlloyModels:
    """The alloy as two batches over x: with mass + strain disorder, and with mass only.

    ``values`` holds the interpolated values by key (SI arrays over x); ``disorder`` says how
    Γ was obtained; ``notes`` plain-words remarks for the record.
    """

    fraction: np.ndarray
    model: Model
    mass_only: Model
    values: dict[str, np.ndarray]
    mass_variance: np.ndarray
    strain_variance: np.ndarray
    disorder: str
    notes: tuple[str, ...]


def check_fractions(fraction, key: str = "fraction") -> np.ndarray:
    """Alloy fractions as a 1-D array in [0, 1] (ConfigError naming ``key`` otherwise)."""
    x = np.atleast_1d(np.asarray(fraction, dtype=float)).ravel()
    bad = ~((x >= 0) & (x <= 1))
    if x.size == 0 or np.any(bad):
        shown = float(x[int(np.argmax(bad))]) if x.size else "none"
        raise ConfigError(key, shown, "fractions must be between 0 and 1")
    return x


def _lin(a, b, x):
    return (1.0 - x) * a + x * b


def _layout(m: Model) -> str:
    s = m.spec
    if s.branches is not None:
        return "branches:" + ",".join(f"{b.polarization}/{m.material.branches[i].count:g}"
                                      for i, b in enumerate(s.branches))
    return "averaged"


def alloy_models(model_a: Model, model_b: Model, fraction, *,
                 strain_parameter: float = DEFAULT_STRAIN_PARAMETER,
                 names: tuple[str, str] = ("A", "B")) -> AlloyModels:
    """Batch models of the alloy (1 − x)·A + x·B at every x (rules in the module docstring).

    Raises
    ------
    ConfigError
        End members that cannot be interpolated (different branch layouts, atoms per cell,
        mechanisms or choices), compositions with different sites, fractions outside [0, 1].
    """
    x = check_fractions(fraction)
    if model_a.batch_shape or model_b.batch_shape:
        raise ConfigError("end members", allowed="give two single models, not batches")
    if not (strain_parameter >= 0 and np.isfinite(strain_parameter)):
        raise ConfigError("strain_parameter", strain_parameter, "must be a number >= 0")
    la, lb = _layout(model_a), _layout(model_b)
    if la != lb:
        raise ConfigError(f"{names[1]}: material", lb, f"the end members have different branch "
                          f"layouts ({names[0]}: {la}); give both the averaged keys or both "
                          "the same branches")
    ma, mb = model_a.material, model_b.material
    if ma.atoms_per_cell != mb.atoms_per_cell:
        raise ConfigError(f"{names[1]}: material.atoms_per_cell", mb.atoms_per_cell,
                          f"must equal the other end member's ({ma.atoms_per_cell:g})")
    sa, sb = model_a.spec, model_b.spec
    notes: list[str] = []
    values: dict[str, np.ndarray] = {}
    mass = _lin(ma.atomic_mass, mb.atomic_mass, x)
    delta = _lin(np.cbrt(ma.atomic_volume), np.cbrt(mb.atomic_volume), x)
    volume = delta**3
    rho_a, rho_b = ma.atomic_mass / ma.atomic_volume, mb.atomic_mass / mb.atomic_volume
    rho = mass / volume
    values["material.atomic_mass"] = mass
    values["material.atomic_volume"] = volume

    def velocity(va, vb):
        return np.sqrt(_lin(rho_a * va**2, rho_b * vb**2, x) / rho)

    theta_given = []
    if sa.branches is not None:
        for i in range(len(sa.branches)):
            ba, bb = ma.branches[i], mb.branches[i]
            values[f"material.branches.{i}.sound_velocity"] = velocity(ba.sound_velocity,
                                                                       bb.sound_velocity)
            values[f"material.branches.{i}.gruneisen"] = _lin(ba.gruneisen, bb.gruneisen, x)
            given = (sa.branches[i].debye_temperature, sb.branches[i].debye_temperature)
            theta_given.append(any(g is not None for g in given))
            if theta_given[-1]:
                key = f"material.branches.{i}.debye_temperature"
                values[key] = _lin(model_a.value(key), model_b.value(key), x)
    else:
        if sa.longitudinal_velocity is not None and sb.longitudinal_velocity is not None:
            for k in ("longitudinal_velocity", "transverse_velocity"):
                values[f"material.{k}"] = velocity(getattr(sa, k), getattr(sb, k))
        else:
            values["material.sound_velocity"] = velocity(ma.branches[0].sound_velocity,
                                                         mb.branches[0].sound_velocity)
        values["material.gruneisen"] = _lin(ma.branches[0].gruneisen, mb.branches[0].gruneisen,
                                            x)
        if sa.debye_temperature is not None or sb.debye_temperature is not None:
            theta_given.append(True)
            key = "material.debye_temperature"
            values[key] = _lin(model_a.value(key), model_b.value(key), x)
    if any(theta_given):
        notes.append("Debye temperatures given in an end member: interpolated linearly in x")
    spec = MaterialSpec(
        name=f"{ma.name or names[0]} - {mb.name or names[1]} alloy",
        atomic_mass=float(ma.atomic_mass), atomic_volume=float(ma.atomic_volume),
        atoms_per_cell=sa.atoms_per_cell if sa.atoms_per_cell is not None else
        sb.atoms_per_cell,
        **_velocity_spec(model_a))
    scattering = _scattering(model_a, model_b, x, values, names)
    base = Model(spec, scattering)
    gm, gs, how = _disorder(model_a, model_b, x, delta, strain_parameter, names, notes)
    values["scattering.point_defect.mass_variance"] = gm
    values["scattering.point_defect.strain_variance"] = gs
    model = base.with_values(values)
    mass_only = model.with_values({"scattering.point_defect.strain_variance": np.zeros_like(x)})
    return AlloyModels(x, model, mass_only, values, gm, gs, how, tuple(notes))


def _velocity_spec(model: Model) -> dict:
    s, m = model.spec, model.material
    if s.branches is not None:
        return {"branches": s.branches}
    out: dict = {"gruneisen": m.branches[0].gruneisen}
    if s.debye_temperature is not None:
        out["debye_temperature"] = model.value("material.debye_temperature")
    if s.longitudinal_velocity is not None:
        out["longitudinal_velocity"] = s.longitudinal_velocity
        out["transverse_velocity"] = s.transverse_velocity
    else:
        out["sound_velocity"] = m.branches[0].sound_velocity
    return out


def _scattering(model_a: Model, model_b: Model, x, values: dict, names) -> Scattering:
    """A's mechanisms with every numeric parameter linear in x; point defects given."""
    keys_a = {m.key for m in model_a.mechanisms if m.key != "point_defect"}
    keys_b = {m.key for m in model_b.mechanisms if m.key != "point_defect"}
    if keys_a != keys_b:
        only = sorted(keys_a ^ keys_b)[0]
        where = names[0] if only in keys_a else names[1]
        raise ConfigError(f"{where}: scattering.{only}", allowed="the end members need the same "
                          "scattering mechanisms (only point_defect may differ)")
    mechs = []
    for ma in model_a.mechanisms:
        if ma.key == "point_defect":
            continue
        mb = model_b.mechanisms.get(ma.key)
        for p in type(ma).parameters:
            va, vb = getattr(ma, p.name), getattr(mb, p.name)
            if not p.numeric:
                if va != vb:
                    raise ConfigError(f"{names[1]}: scattering.{ma.key}.{p.name}", vb,
                                      f"must equal the other end member's ({va})")
                continue
            if va != vb:
                values[f"scattering.{ma.key}.{p.name}"] = _lin(va, vb, x)
        mechs.append(ma)
    mechs.append(PointDefect())
    return Scattering(tuple(mechs))


def _gamma(model: Model, name: str) -> float:
    m = model.mechanisms.get("point_defect")
    return 0.0 if m is None else float(getattr(m, name))


def _disorder(model_a: Model, model_b: Model, x, delta, eps, names, notes):
    sa, sb = model_a.spec, model_b.spec
    da, db = np.cbrt(model_a.material.atomic_volume), np.cbrt(model_b.material.atomic_volume)
    if sa.composition is not None and sb.composition is not None:
        try:
            sites_a = parse_sites(sa.composition, f"{names[0]}: material.composition")
            sites_b = parse_sites(sb.composition, f"{names[1]}: material.composition")
            mixed = interpolate_sites(sites_a, sites_b, x, "material.composition")
            gm = site_disorder(mixed, strain_parameter=0.0, key="material.composition").\
                mass_variance
            gs = alloy_strain_variance(sites_a, sites_b, x, da, db, eps, "material.composition")
        except KappaError as exc:
            raise ConfigError(exc.key, exc.value, exc.allowed) from None
        if model_a.mechanisms.get("point_defect") or model_b.mechanisms.get("point_defect"):
            notes.append("the end members' point_defect sections are replaced by the alloy's "
                         "Γ(x) from the compositions (natural isotopes included)")
        how = ("site-weighted Γ of the composition (1-x)·A + x·B (isotopes + alloy); strain "
               f"from the end members' V0^(1/3), ε = {eps:g}")
        return np.broadcast_to(gm, x.shape).astype(float), gs, how
    ga_m, gb_m = _gamma(model_a, "mass_variance"), _gamma(model_b, "mass_variance")
    ga_s, gb_s = _gamma(model_a, "strain_variance"), _gamma(model_b, "strain_variance")
    ma, mb = model_a.material.atomic_mass, model_b.material.atomic_mass
    mbar = _lin(ma, mb, x)
    gm = _lin(ga_m, gb_m, x) + x * (1 - x) * ((ma - mb) / mbar) ** 2
    gs = _lin(ga_s, gb_s, x) + eps * x * (1 - x) * ((da - db) / delta) ** 2
    notes.append("no material.composition in both end members: the alloy is treated as one "
                 "site of mean atoms (Abeles 1963), which understates Γ_M of a compound "
                 "alloyed on one sublattice; give the compositions for the site-weighted Γ")
    how = (f"one site of mean atoms: end-member Γ linear in x + x(1-x)(ΔM/M)^2 and "
           f"ε x(1-x)(Δδ/δ)^2 with ε = {eps:g}")
    return gm, gs, how
