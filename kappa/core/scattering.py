"""Phonon scattering mechanisms of the Callaway model.

Every rate is a sum of powers of the angular frequency with non-negative coefficients,

    τ⁻¹(ω, T) = Σ_{k=0..4} c_k(T) ω^k,

so a mechanism is one small class that returns its coefficients ``c_k`` for one branch at the
requested temperatures. The numba kernels receive these arrays, not callbacks. A mechanism
declares its parameters (name, SI unit, default, allowed range) once; the config loader,
``--set``, fits and sweeps all read that declaration. Adding a mechanism is one class here plus
one line in :data:`REGISTRY` (see DEVELOPERS.md).
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass, fields, replace
from typing import ClassVar

import numpy as np

from kappa.core.constants import hbar, k_B
from kappa.core.material import Branch, Material
from kappa.errors import ConfigError, warn

__all__ = [
    "Parameter",
    "Mechanism",
    "Umklapp",
    "Boundary",
    "PointDefect",
    "Normal",
    "Scattering",
    "REGISTRY",
    "NPOW",
    "umklapp_coefficient",
    "boundary_rate",
    "point_defect_coefficient",
    "normal_branch_coefficient",
]

NPOW = 5  #: rates are polynomials in ω of degree < NPOW


@dataclass(frozen=True)
class Parameter:
    """Declaration of one numeric (or choice) parameter of a mechanism.

    ``unit`` is the SI unit used inside kappa (``"1"`` for plain numbers); ``display`` the unit
    used when kappa writes the value back (e.g. ``"nm"``). ``low``/``high`` bound the allowed
    range; ``low_open``/``high_open`` make the bound exclusive. ``choices`` marks a text option.
    """

    name: str
    unit: str
    default: float | str | None
    description: str
    low: float = -math.inf
    high: float = math.inf
    low_open: bool = False
    high_open: bool = False
    display: str | None = None
    choices: tuple[str, ...] = ()

    @property
    def numeric(self) -> bool:
        return not self.choices

    @property
    def positive(self) -> bool:
        return self.low == 0.0 and self.low_open

    def allowed(self) -> str:
        """Plain-words description of the allowed values, for error messages."""
        if self.choices:
            return "allowed: " + ", ".join(self.choices)
        u = "" if self.unit == "1" else f" {self.display or self.unit}"
        lo = "" if self.low == -math.inf else (f"> {self.low:g}" if self.low_open else f">= {self.low:g}")
        hi = "" if self.high == math.inf else (f"< {self.high:g}" if self.high_open else f"<= {self.high:g}")
        if lo and hi:
            return f"must be {lo} and {hi}{u}".replace("and <", "and <")
        if lo or hi:
            return f"must be {lo or hi}{u}"
        return "must be a finite number"

    def check(self, key: str, value: float, shown: object = None) -> None:
        """Raise :class:`ConfigError` unless ``value`` (SI) is in the allowed range."""
        shown = value if shown is None else shown
        if self.choices:
            if value not in self.choices:
                raise ConfigError(key, shown, self.allowed())
            return
        ok = math.isfinite(value)
        ok = ok and (value > self.low if self.low_open else value >= self.low)
        ok = ok and (value < self.high if self.high_open else value <= self.high)
        if not ok:
            raise ConfigError(key, shown, self.allowed())


class Mechanism:
    """Base of the scattering mechanisms (subclasses are frozen dataclasses).

    Class attributes: ``key`` (the config key under ``scattering:``), ``title``, ``citation``,
    ``resistive`` (False for normal processes), ``parameters`` (tuple of :class:`Parameter`).
    """

    key: ClassVar[str]
    title: ClassVar[str]
    citation: ClassVar[str]
    resistive: ClassVar[bool] = True
    parameters: ClassVar[tuple[Parameter, ...]]

    def __post_init__(self) -> None:
        for p in self.parameters:
            p.check(f"scattering.{self.key}.{p.name}", getattr(self, p.name))

    def coefficients(self, material: Material, branch: Branch, T: np.ndarray,
                     scattering: Scattering) -> np.ndarray:
        """Rate coefficients c_k(T) of ω^k, shape ``(NPOW, len(T))``, in s^(k−1)."""
        raise NotImplementedError

    def check_physics(self, material: Material) -> None:
        """Warn (never raise) about legal but physically dubious values."""

    def values(self) -> dict[str, float | str]:
        return {f.name: getattr(self, f.name) for f in fields(self)}  # type: ignore[arg-type]


# --- pure rate formulas (numpy, broadcast over any argument) -----------------------------


def umklapp_coefficient(gruneisen, atomic_mass, sound_velocity, debye_temperature, T,
                        scale=1.0, exponent_divisor=3.0):
    """Coefficient B(T) of ω² in the Umklapp rate (Slack–Morelli form) [s].

    τ_U⁻¹ = s_U · ħγ²/(M̄ v² θ) · ω² T · exp(−θ/(b T)).
    Source: Morelli, Heremans & Slack, Phys. Rev. B 66, 195304 (2002); Slack & Galginaitis,
    Phys. Rev. 133, A253 (1964).
    """
    T = np.asarray(T, dtype=float)
    return (scale * hbar * gruneisen**2 / (atomic_mass * sound_velocity**2 * debye_temperature)
            * T * np.exp(-debye_temperature / (exponent_divisor * T)))


def boundary_rate(sound_velocity, grain_size, specularity=0.0):
    """Boundary (Casimir) rate τ_B⁻¹ = v(1−p)/((1+p)L) [1/s], independent of ω.

    Source: Casimir, Physica 5, 495 (1938); specularity factor after Ziman, Electrons and
    Phonons (1960).
    """
    return sound_velocity * (1.0 - specularity) / ((1.0 + specularity) * grain_size)


def point_defect_coefficient(atomic_volume, sound_velocity, mass_variance, strain_variance=0.0):
    """Coefficient A of ω⁴ in the point-defect rate (Klemens) [s³].

    τ_PD⁻¹ = V₀ (Γ_M + Γ_S) ω⁴ / (4π v³).
    Source: Klemens, Proc. Phys. Soc. A 68, 1113 (1955).
    """
    return atomic_volume * (mass_variance + strain_variance) / (4.0 * math.pi * sound_velocity**3)


def normal_branch_coefficient(gruneisen, atomic_mass, atomic_volume, sound_velocity, T,
                              polarization: str, scale=1.0):
    """Normal-process rate of one branch in the branch forms: ``(power of ω, coefficient)``.

    Longitudinal: k_B³γ²V₀ω²T³/(M̄ħ²v⁵) → (2, coefficient [s]); transverse:
    k_B⁴γ²V₀ωT⁴/(M̄ħ³v⁵) → (1, coefficient [1]); times ``scale``. In x = ħω/(k_B T) both read
    k_B⁵γ²V₀xⁿT⁵/(M̄ħ⁴v⁵). Source: Morelli, Heremans & Slack, Phys. Rev. B 66, 195304 (2002).
    """
    T = np.asarray(T, dtype=float)
    pre = scale * gruneisen**2 * atomic_volume / (atomic_mass * sound_velocity**5)
    if polarization == "longitudinal":
        return 2, pre * k_B**3 / hbar**2 * T**3
    if polarization == "transverse":
        return 1, pre * k_B**4 / hbar**3 * T**4
    raise ConfigError("scattering.normal.form", "branch",
                      "the branch forms need a per-branch material (material.branches); "
                      "use form: ratio for the averaged model")


def _zeros(T: np.ndarray) -> np.ndarray:
    return np.zeros((NPOW, np.size(T)))


# --- the mechanisms ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Umklapp(Mechanism):
    """Umklapp phonon–phonon scattering, Slack–Morelli form (ω² T e^(−θ/bT))."""

    scale: float = 1.0
    exponent_divisor: float = 3.0

    key: ClassVar[str] = "umklapp"
    title: ClassVar[str] = "Umklapp"
    citation: ClassVar[str] = (
        "Umklapp rate: D. T. Morelli, J. P. Heremans & G. A. Slack, Phys. Rev. B 66, 195304 "
        "(2002); G. A. Slack & S. Galginaitis, Phys. Rev. 133, A253 (1964)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("scale", "1", 1.0, "multiplier s_U of the rate; 0 switches Umklapp off", low=0.0),
        Parameter("exponent_divisor", "1", 3.0, "b in exp(−θ/(bT))", low=0.0, low_open=True),
    )

    def coefficients(self, material, branch, T, scattering):
        c = _zeros(T)
        if self.scale > 0:
            c[2] = umklapp_coefficient(branch.gruneisen, material.atomic_mass,
                                       branch.sound_velocity, branch.debye_temperature, T,
                                       self.scale, self.exponent_divisor)
        return c


@dataclass(frozen=True)
class Boundary(Mechanism):
    """Boundary (grain-size) scattering, frequency independent."""

    grain_size: float = 1e-3
    specularity: float = 0.0

    key: ClassVar[str] = "boundary"
    title: ClassVar[str] = "boundary"
    citation: ClassVar[str] = (
        "Boundary rate: H. B. G. Casimir, Physica 5, 495 (1938); specularity factor "
        "(1−p)/(1+p) after J. M. Ziman, Electrons and Phonons (Oxford, 1960)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("grain_size", "m", None, "boundary (grain) length L", low=0.0, low_open=True,
                  display="nm"),
        Parameter("specularity", "1", 0.0, "fraction p of specular reflections", low=0.0,
                  high=1.0, high_open=True),
    )

    def coefficients(self, material, branch, T, scattering):
        c = _zeros(T)
        c[0] = boundary_rate(branch.sound_velocity, self.grain_size, self.specularity)
        return c

    def check_physics(self, material):
        if self.grain_size < 1e-9:
            warn(f"scattering.boundary.grain_size = {self.grain_size * 1e9:.3g} nm is below 1 nm, "
                 "smaller than an interatomic spacing; the boundary model is not meaningful there")


@dataclass(frozen=True)
class PointDefect(Mechanism):
    """Point-defect (mass and strain disorder) Rayleigh scattering, Klemens form (ω⁴)."""

    mass_variance: float = 0.0
    strain_variance: float = 0.0

    key: ClassVar[str] = "point_defect"
    title: ClassVar[str] = "point defect"
    citation: ClassVar[str] = (
        "Point-defect rate: P. G. Klemens, Proc. Phys. Soc. A 68, 1113 (1955)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("mass_variance", "1", 0.0, "mass disorder Γ_M", low=0.0),
        Parameter("strain_variance", "1", 0.0, "strain disorder Γ_S", low=0.0),
    )

    def coefficients(self, material, branch, T, scattering):
        c = _zeros(T)
        c[4] = point_defect_coefficient(material.atomic_volume, branch.sound_velocity,
                                        self.mass_variance, self.strain_variance)
        return c

    def check_physics(self, material):
        if self.mass_variance + self.strain_variance > 1.0:
            warn(f"scattering.point_defect: Γ_M + Γ_S = "
                 f"{self.mass_variance + self.strain_variance:.3g} is above 1, far outside the "
                 "perturbative range of the Klemens formula")


@dataclass(frozen=True)
class Normal(Mechanism):
    """Normal (momentum-conserving) three-phonon processes, Callaway's non-resistive term.

    ``form: ratio`` — τ_N⁻¹ = β τ_U⁻¹ (β = ``ratio``; the Umklapp rate as configured).
    ``form: branch`` — the branch forms used by Morelli, Heremans & Slack (2002):
    longitudinal k_B³γ²V₀ω²T³/(M̄ħ²v⁵), transverse k_B⁴γ²V₀ωT⁴/(M̄ħ³v⁵), times ``scale``;
    needs a per-branch material. In the reduced frequency x = ħω/(k_B T) both read
    k_B⁵γ²V₀ xⁿ T⁵/(M̄ħ⁴v⁵) (n = 2 longitudinal, 1 transverse), the way the source writes them;
    with ω, the powers of k_B and ħ above are the ones that make each a rate in 1/s.
    """

    ratio: float = 0.0
    form: str = "ratio"
    scale: float = 1.0

    key: ClassVar[str] = "normal"
    title: ClassVar[str] = "normal"
    resistive: ClassVar[bool] = False
    citation: ClassVar[str] = (
        "Normal processes: J. Callaway, Phys. Rev. 113, 1046 (1959); branch forms after "
        "D. T. Morelli, J. P. Heremans & G. A. Slack, Phys. Rev. B 66, 195304 (2002)")
    parameters: ClassVar[tuple[Parameter, ...]] = (
        Parameter("ratio", "1", 0.0, "β = τ_N⁻¹/τ_U⁻¹ (form: ratio)", low=0.0),
        Parameter("form", "", "ratio", "ratio or branch", choices=("ratio", "branch")),
        Parameter("scale", "1", 1.0, "multiplier of the branch forms (form: branch)", low=0.0),
    )

    @property
    def active(self) -> bool:
        return (self.ratio > 0) if self.form == "ratio" else (self.scale > 0)

    def coefficients(self, material, branch, T, scattering):
        c = _zeros(T)
        if not self.active:
            return c
        if self.form == "ratio":
            u = scattering.get("umklapp")
            if u is not None:
                c = self.ratio * u.coefficients(material, branch, T, scattering)
            return c
        power, coefficient = normal_branch_coefficient(
            branch.gruneisen, material.atomic_mass, material.atomic_volume,
            branch.sound_velocity, T, branch.polarization, self.scale)
        c[power] = coefficient
        return c


#: All mechanisms by config key. Adding a mechanism: one class above + one line here.
REGISTRY: dict[str, type[Mechanism]] = {
    cls.key: cls for cls in (Umklapp, Boundary, PointDefect, Normal)
}


@dataclass(frozen=True)
class Scattering:
    """The set of mechanisms in a model (at most one of each kind)."""

    mechanisms: tuple[Mechanism, ...] = (Umklapp(),)

    def __post_init__(self) -> None:
        keys = [m.key for m in self.mechanisms]
        if len(set(keys)) != len(keys):
            raise ConfigError("scattering", ", ".join(keys), "each mechanism may appear once")

    def __iter__(self) -> Iterator[Mechanism]:
        return iter(self.mechanisms)

    def get(self, key: str) -> Mechanism | None:
        return next((m for m in self.mechanisms if m.key == key), None)

    @property
    def resistive(self) -> tuple[Mechanism, ...]:
        """Resistive mechanisms that are switched on."""
        out = []
        for m in self.mechanisms:
            if not m.resistive:
                continue
            if isinstance(m, Umklapp) and m.scale == 0:
                continue
            if isinstance(m, PointDefect) and m.mass_variance + m.strain_variance == 0:
                continue
            out.append(m)
        return tuple(out)

    @property
    def normal(self) -> Normal | None:
        n = self.get("normal")
        return n if isinstance(n, Normal) and n.active else None

    def without(self, key: str) -> Scattering:
        """A copy with mechanism ``key`` removed."""
        return Scattering(tuple(m for m in self.mechanisms if m.key != key))

    def with_mechanism(self, mechanism: Mechanism) -> Scattering:
        """A copy with ``mechanism`` added or replacing the one of its kind."""
        rest = tuple(m for m in self.mechanisms if m.key != mechanism.key)
        return Scattering((*rest, mechanism))

    def replace(self, key: str, **changes) -> Scattering:
        m = self.get(key)
        if m is None:
            raise ConfigError(f"scattering.{key}", allowed="not present in this model")
        return self.with_mechanism(replace(m, **changes))

    def citations(self) -> list[str]:
        return [m.citation for m in self.mechanisms if m in self.resistive or m is self.normal]
