"""Material parameters of the Debye/Callaway model: what the user gives and what the model uses.

A material is one or more acoustic branches. The single averaged-branch Debye model is one
branch of ``count`` 3 (polarization ``"average"``); the per-branch model is one longitudinal
branch (count 1) and one transverse entry of count 2 (two degenerate transverse branches), each
with its own Debye temperature, sound velocity and Grüneisen parameter. Everything is SI.

:class:`MaterialSpec` holds the values as given (some optional: the Debye temperature may come
from the sound velocity, the mean mass from a composition, the volume per atom from a density);
:func:`resolve_material` is the one function that derives the rest and returns the
:class:`Material` the model uses, with a record of every derived value. Numeric fields may be
numpy arrays (a batch of parameter sets); every formula here broadcasts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.core.constants import h, hbar, k_B, u
from kappa.core.dispersion import DISPERSIONS, SINE_CITATION, zone_boundary_from_velocity
from kappa.core.parameters import Parameter
from kappa.errors import ConfigError

__all__ = [
    "Branch",
    "BranchSpec",
    "Derived",
    "Material",
    "MaterialSpec",
    "MATERIAL_PARAMETERS",
    "BRANCH_PARAMETERS",
    "ALLOY_PARAMETERS",
    "DERIVED_UNITS",
    "AlloySpec",
    "POLARIZATIONS",
    "acoustic_debye_temperature",
    "DISPERSIONS",
    "debye_temperature_from_velocity",
    "mean_sound_velocity",
    "resolve_material",
]

POLARIZATIONS = ("longitudinal", "transverse", "average")

_SOLIDS = "common practice, no source: the range of ordinary crystalline solids"


def debye_temperature_from_velocity(sound_velocity, atomic_volume):
    """Debye temperature θ = (ħ/k_B)(6π²n)^(1/3) v with n = 1/V₀ atoms per volume.

    Parameters
    ----------
    sound_velocity : float or ndarray
        Sound velocity v [m/s].
    atomic_volume : float or ndarray
        Volume per atom V₀ [m³].

    Returns
    -------
    float or ndarray
        θ [K]. Source: Anderson, J. Phys. Chem. Solids 24, 909 (1963).
    """
    return hbar / k_B * np.cbrt(6.0 * math.pi**2 / np.asarray(atomic_volume)) * sound_velocity


def mean_sound_velocity(longitudinal, transverse):
    """Debye mean velocity v_m = [(1/v_L³ + 2/v_T³)/3]^(−1/3) [m/s].

    Parameters
    ----------
    longitudinal, transverse : float or ndarray
        Longitudinal and transverse sound velocities [m/s].
    """
    vl = np.asarray(longitudinal, dtype=float)
    vt = np.asarray(transverse, dtype=float)
    return ((1.0 / vl**3 + 2.0 / vt**3) / 3.0) ** (-1.0 / 3.0)


def _p(name, unit, description, *, low=0.0, high=math.inf, low_open=True, **kw) -> Parameter:
    return Parameter(name, unit, description, low=low, high=high, low_open=low_open, **kw)


#: Numeric material keys (``material.NAME``). Allowed ranges keep the numbers computable;
#: ``typical`` ranges (warnings) are those of ordinary solids.
MATERIAL_PARAMETERS: dict[str, Parameter] = {p.name: p for p in (
    _p("atomic_mass", "kg", "mean mass per atom M̄", display="u", scale=u, bare="u",
       low=0.1 * u, high=1e4 * u, low_open=False, typical=(1.0 * u, 300.0 * u),
       basis="atomic masses of the elements: 1 u (H) to about 300 u", title="mean atomic mass"),
    _p("atomic_volume", "m**3", "volume per atom V₀", display="angstrom**3", scale=1e-30,
       low=1e-32, high=1e-21, low_open=False, typical=(1e-30, 1e-27),
       basis="volumes per atom of solids: about 5 (diamond) to 120 (Cs) angstrom**3; "
       "1-1000 angstrom**3 allowed without a warning", title="volume per atom"),
    _p("density", "kg/m**3", "mass density ρ (with the mean atomic mass: gives atomic_volume)",
       display="g/cm**3", scale=1e3, low=1.0, high=1e6, low_open=False, typical=(100.0, 3e4),
       basis="densities of solids: about 0.5 (Li) to 22.6 (Os) g/cm**3"),
    _p("debye_temperature", "K", "Debye temperature θ", low=0.1, high=1e6, low_open=False,
       typical=(10.0, 2500.0), basis="Debye temperatures of solids: tens of K (soft, heavy "
       "compounds) to about 2,200 K (diamond)"),
    _p("sound_velocity", "m/s", "mean sound velocity v", low=1.0, high=1e6,
       low_open=False, typical=(300.0, 2e4),
       basis="sound velocities of solids: a few hundred m/s to about 18 km/s (diamond)"),
    _p("longitudinal_velocity", "m/s", "longitudinal sound velocity v_L", low=1.0, high=1e6,
       low_open=False, typical=(300.0, 2e4),
       basis="sound velocities of solids: a few hundred m/s to about 18 km/s (diamond)"),
    _p("transverse_velocity", "m/s", "transverse sound velocity v_T", low=1.0, high=1e6,
       low_open=False, typical=(200.0, 1.5e4),
       basis="sound velocities of solids: a few hundred m/s to about 13 km/s (diamond)"),
    _p("gruneisen", "1", "Grüneisen parameter γ", high=100.0, typical=(0.2, 5.0),
       basis="Grüneisen parameters of solids: mostly 0.5-3 (γ < 0.2 or > 5 are exceptional)",
       title="Grüneisen parameter"),
    _p("atoms_per_cell", "1", "atoms per primitive cell n (acoustic θ_a = θ·n^(-1/3) and an "
       "optical part)", low=1.0, high=1e4, low_open=False, typical=(1.0, 200.0),
       basis="primitive cells of crystals: 1 (Cu) to a few hundred atoms (clathrates, "
       "complex Zintl phases)", title="atoms per primitive cell"),
)}

#: Numeric keys of the alloy section (``material.alloy.NAME``).
ALLOY_PARAMETERS: dict[str, Parameter] = {
    "fraction": _p("fraction", "1", "alloy fraction x: composition (1 − x)·first + x·second "
                   "end member", low=0.0, high=1.0, low_open=False, title="alloy fraction x",
                   linear=True, start=0.5),
}

#: Values kappa derives that are not keys of a config (for records and terminals).
DERIVED_UNITS: dict[str, str] = {
    "acoustic_debye_temperature": "K",
    "optical_conductivity": "W/(m*K)",
}

#: Numeric keys of one branch (``material.branches.I.NAME``).
BRANCH_PARAMETERS: dict[str, Parameter] = {
    "count": _p("count", "1", "number of branches of this polarization", high=3.0),
    "debye_temperature": MATERIAL_PARAMETERS["debye_temperature"],
    "sound_velocity": MATERIAL_PARAMETERS["sound_velocity"],
    "gruneisen": MATERIAL_PARAMETERS["gruneisen"],
    "zone_boundary_frequency": _p(
        "zone_boundary_frequency", "Hz", "zone-boundary frequency ν_zb of a sine branch "
        "(ω_zb = 2πν_zb)", display="THz", scale=1e12, low=1e6, high=1e16, low_open=False,
        typical=(0.1e12, 45e12), basis="phonon frequencies of solids: up to about 40 THz "
        "(diamond)", title="zone-boundary frequency"),
}


@dataclass(frozen=True)
class Derived:
    """A value kappa derived from others (reported, never silent).

    ``value`` is SI (a float, or an array for a batch); ``unit`` the unit it is shown in,
    ``how`` a plain-words account of where it came from.
    """

    key: str
    value: object
    unit: str
    how: str


@dataclass(frozen=True)
class Branch:
    """One acoustic branch (or the averaged Debye branch), as the model uses it.

    Parameters
    ----------
    debye_temperature : float or ndarray
        Debye temperature of the branch θ_j [K]; sets the cutoff x_D = θ_j/T.
    sound_velocity : float or ndarray
        Sound velocity v_j [m/s].
    gruneisen : float or ndarray
        Grüneisen parameter γ_j [1].
    count : float
        Number of branches this entry stands for (3 averaged, 1 longitudinal, 2 transverse).
    polarization : str
        ``"average"``, ``"longitudinal"`` or ``"transverse"``.
    dispersion : str
        ``"debye"`` (ω = vq up to k_Bθ/ħ) or ``"sine"`` (ω = ω_zb sin(πq/(2q_zb)) with
        dω/dq = v at q → 0, up to k_Bθ/ħ ≤ ω_zb); see :mod:`kappa.core.dispersion`.
    zone_boundary_frequency : float or ndarray or None
        ν_zb = ω_zb/2π [Hz] of a sine branch (None for a Debye branch).
    """

    debye_temperature: float
    sound_velocity: float
    gruneisen: float
    count: float = 3.0
    polarization: str = "average"
    dispersion: str = "debye"
    zone_boundary_frequency: float | None = None

    def __post_init__(self) -> None:
        self.validate("branch")

    def validate(self, prefix: str) -> None:
        for name in ("debye_temperature", "sound_velocity", "gruneisen", "count"):
            BRANCH_PARAMETERS[name].check(f"{prefix}.{name}", getattr(self, name))
        if self.polarization not in POLARIZATIONS:
            raise ConfigError(f"{prefix}.polarization", self.polarization,
                              "allowed: " + ", ".join(POLARIZATIONS))
        _check_dispersion(prefix, self.dispersion, self.debye_temperature,
                          self.zone_boundary_frequency)

    @property
    def curved(self) -> bool:
        """True unless the branch is Debye-linear."""
        return self.dispersion != "debye"


@dataclass(frozen=True)
class Material:
    """A solid described by its acoustic branches, mean atomic mass and volume per atom.

    Parameters
    ----------
    atomic_mass : float or ndarray
        Mean mass per atom M̄ [kg].
    atomic_volume : float or ndarray
        Volume per atom V₀ [m³].
    branches : tuple of Branch
        One averaged branch (count 3), or per-branch entries whose counts add up to 3.
    name : str
        Free text.
    atoms_per_cell : float
        Atoms per primitive cell n: the branches are then the acoustic branches (their Debye
        temperatures are acoustic θ_a = θ·n^(−1/3) where derived) and the optical modes add
        :func:`kappa.core.limits.optical_conductivity` to κ_L. 1 for a monatomic cell.
    """

    atomic_mass: float
    atomic_volume: float
    branches: tuple[Branch, ...]
    name: str = ""
    atoms_per_cell: float = 1.0

    def __post_init__(self) -> None:
        MATERIAL_PARAMETERS["atoms_per_cell"].check("material.atoms_per_cell",
                                                    self.atoms_per_cell)
        MATERIAL_PARAMETERS["atomic_mass"].check("material.atomic_mass", self.atomic_mass)
        MATERIAL_PARAMETERS["atomic_volume"].check("material.atomic_volume", self.atomic_volume)
        if not isinstance(self.branches, tuple) or not self.branches:
            raise ConfigError("material.branches", self.branches, "needs at least one branch")
        for i, b in enumerate(self.branches):
            b.validate(f"material.branches.{i}" if self.per_branch else "material")
        total = sum(b.count for b in self.branches)
        if abs(total - 3.0) > 1e-9:
            raise ConfigError("material.branches", f"counts adding up to {total:g}",
                              "the branch counts must add up to 3 (1 longitudinal + 2 transverse)")

    @classmethod
    def averaged(cls, atomic_mass: float, atomic_volume: float, debye_temperature: float,
                 sound_velocity: float, gruneisen: float, name: str = "") -> Material:
        """The single averaged-branch Debye model (one branch standing for three)."""
        return cls(atomic_mass, atomic_volume,
                   (Branch(debye_temperature, sound_velocity, gruneisen, 3.0, "average"),), name)

    @property
    def per_branch(self) -> bool:
        """True unless the material is one averaged branch."""
        return not (len(self.branches) == 1 and self.branches[0].polarization == "average")

    @property
    def number_density(self):
        """Atoms per volume n = 1/V₀ [1/m³]."""
        return 1.0 / self.atomic_volume

    @property
    def mean_velocity(self):
        """Debye mean of the branch velocities, Σ(n_j/3)/v_j³ = 1/v_m³ [m/s]."""
        s = sum(b.count / 3.0 / b.sound_velocity**3 for b in self.branches)
        return s ** (-1.0 / 3.0)

    @property
    def max_debye_temperature(self):
        """The largest branch Debye temperature [K] (the one the model's range refers to)."""
        return np.max(np.array([np.max(b.debye_temperature) for b in self.branches]))

    @property
    def has_optical(self) -> bool:
        """True when the cell has more than one atom (an optical part is added to κ_L)."""
        return bool(np.any(np.asarray(self.atoms_per_cell) > 1.0))

    def citations(self) -> list[str]:
        """Citations of the branch models beyond Debye's (the sine dispersion, if used)."""
        return [SINE_CITATION] if any(b.curved for b in self.branches) else []

    def branch_labels(self) -> tuple[str, ...]:
        """``("average",)`` or ``("longitudinal", "transverse", ...)`` (numbered if repeated)."""
        if not self.per_branch:
            return ("average",)
        labels, seen = [], {}
        for b in self.branches:
            seen[b.polarization] = seen.get(b.polarization, 0) + 1
            n = seen[b.polarization]
            labels.append(b.polarization if n == 1 else f"{b.polarization}{n}")
        return tuple(labels)


# --- as given ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class BranchSpec:
    """One branch as given: ``debye_temperature`` may be None (derived from the velocity, or
    from ``zone_boundary_frequency`` on a sine branch)."""

    polarization: str
    sound_velocity: float
    gruneisen: float
    count: float | None = None
    debye_temperature: float | None = None
    dispersion: str = "debye"
    zone_boundary_frequency: float | None = None


@dataclass(frozen=True)
class AlloySpec:
    """An alloy between two end-member compositions: (1 − x)·first + x·second, site by site.

    ``end_members`` are two formulas with the same sites in the same order (``Mg2Si``,
    ``Mg2Sn``); ``fraction`` is x in [0, 1] (a float, or an array for a batch).
    """

    end_members: tuple[str, str]
    fraction: float

    def sites(self, key: str = "material.alloy"):
        """The alloy's sites (fractions are arrays for an array of x)."""
        from kappa.core.disorder import interpolate_sites, parse_sites

        a, b = (parse_sites(f, f"{key}.end_members.{i}") for i, f in
                enumerate(self.end_members))
        return interpolate_sites(a, b, self.fraction, f"{key}.end_members")

    def formula(self) -> str:
        """The composition at this fraction as a bracketed formula (a scalar fraction)."""
        from kappa.core.disorder import format_sites

        if np.ndim(self.fraction):
            return f"({self.end_members[0]})(1-x)({self.end_members[1]})x, x varied"
        return format_sites(self.sites())


@dataclass(frozen=True)
class MaterialSpec:
    """The material as given (SI values; None = not given).

    Either the averaged-branch keys (``sound_velocity`` or ``longitudinal_velocity`` +
    ``transverse_velocity``, ``gruneisen``, optional ``debye_temperature``) or ``branches``;
    ``atomic_mass``, ``composition`` or ``alloy``; ``atomic_volume`` or ``density``;
    optionally ``atoms_per_cell``.
    """

    name: str = ""
    composition: str | None = None
    atomic_mass: float | None = None
    atomic_volume: float | None = None
    density: float | None = None
    debye_temperature: float | None = None
    sound_velocity: float | None = None
    longitudinal_velocity: float | None = None
    transverse_velocity: float | None = None
    gruneisen: float | None = None
    branches: tuple[BranchSpec, ...] | None = None
    atoms_per_cell: float | None = None
    alloy: AlloySpec | None = None

    @property
    def per_branch(self) -> bool:
        return self.branches is not None


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


def acoustic_debye_temperature(debye_temperature, atoms_per_cell):
    """Acoustic Debye temperature θ_a = θ_D n^(−1/3) [K] for n atoms per primitive cell.

    The acoustic branches end at the zone boundary of the primitive cell, whose wave vector is
    n^(−1/3) of the Debye wave vector of all 3n modes. Source: G. A. Slack, Solid State Phys.
    34, 1 (1979); Toberer, Zevalkink & Snyder, J. Mater. Chem. 21, 15843 (2011).
    """
    return np.asarray(debye_temperature, dtype=float) * np.asarray(atoms_per_cell,
                                                                   dtype=float) ** (-1.0 / 3.0)


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
    _check_dispersion(key, b.dispersion, theta, nu)
    return theta, nu


def _check_dispersion(prefix: str, dispersion: str, theta, nu) -> None:
    """A sine branch needs k_Bθ ≤ hν_zb: it cannot rise above its zone-boundary frequency."""
    if dispersion not in DISPERSIONS:
        raise ConfigError(f"{prefix}.dispersion", dispersion,
                          "allowed: " + ", ".join(DISPERSIONS))
    if dispersion == "debye":
        if nu is not None:
            raise ConfigError(f"{prefix}.zone_boundary_frequency", "given",
                              "only a sine branch has one (dispersion: sine)")
        return
    if nu is None:
        raise ConfigError(f"{prefix}.zone_boundary_frequency", allowed="missing; a sine "
                          "branch needs its zone-boundary frequency")
    BRANCH_PARAMETERS["zone_boundary_frequency"].check(f"{prefix}.zone_boundary_frequency", nu)
    nu_a, theta_a = np.broadcast_arrays(np.asarray(nu, dtype=float),
                                        np.asarray(theta, dtype=float))
    top = k_B * theta_a / h
    bad = ~(nu_a >= top * (1.0 - 1e-9))
    if np.any(bad):
        i = int(np.argmax(bad.ravel()))
        nu_bad, top_bad = float(nu_a.ravel()[i]), float(top.ravel()[i])
        theta_bad = float(theta_a.ravel()[i])
        raise ConfigError(f"{prefix}.zone_boundary_frequency", f"{nu_bad / 1e12:.6g} THz",
                          f"must be at least k_Bθ/h = {top_bad / 1e12:.6g} THz, the top of the "
                          f"branch set by {prefix}.debye_temperature = {theta_bad:.6g} K (a "
                          "sine branch cannot rise above its zone-boundary frequency); raise "
                          "it, or give only one of the two")
