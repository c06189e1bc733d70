"""Material parameters of the Debye/Callaway model: what the user gives and what the model uses.

A material is one or more acoustic branches. The single averaged-branch Debye model is one
branch of ``count`` 3 (polarization ``"average"``); the per-branch model is one longitudinal
branch (count 1) and one transverse entry of count 2 (two degenerate transverse branches), each
with its own Debye temperature, sound velocity and Grüneisen parameter. Everything is SI.

:class:`MaterialSpec` holds the values as given (some optional: the Debye temperature may come
from the sound velocity, the mean mass from a composition, the volume per atom from a density);
:func:`kappa.core.resolve.resolve_material` is the one function that derives the rest and returns the
:class:`Material` the model uses, with a record of every derived value. Numeric fields may be
numpy arrays (a batch of parameter sets); every formula here broadcasts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.core.constants import h, hbar, k_B, u
from kappa.core.dispersion import DISPERSIONS, SINE_CITATION
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
    "check_dispersion",
    "DISPERSIONS",
    "debye_temperature_from_velocity",
    "mean_sound_velocity",
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
        check_dispersion(prefix, self.dispersion, self.debye_temperature,
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


def acoustic_debye_temperature(debye_temperature, atoms_per_cell):
    """Acoustic Debye temperature θ_a = θ_D n^(−1/3) [K] for n atoms per primitive cell.

    The acoustic branches end at the zone boundary of the primitive cell, whose wave vector is
    n^(−1/3) of the Debye wave vector of all 3n modes. Source: G. A. Slack, Solid State Phys.
    34, 1 (1979); Toberer, Zevalkink & Snyder, J. Mater. Chem. 21, 15843 (2011).
    """
    return np.asarray(debye_temperature, dtype=float) * np.asarray(atoms_per_cell,
                                                                   dtype=float) ** (-1.0 / 3.0)


def check_dispersion(prefix: str, dispersion: str, theta, nu) -> None:
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
