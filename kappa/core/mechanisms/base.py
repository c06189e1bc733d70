"""The base of every scattering mechanism and the context its rate is evaluated in.

A mechanism is a frozen dataclass whose fields are its parameters (SI floats, or numpy arrays
for a batch of parameter sets), with class attributes that declare everything the rest of kappa
needs: the config key, a human title, the citation, whether it is resistive, and one
:class:`~kappa.core.parameters.Parameter` per field. Its rate τ⁻¹(ω, T) [1/s] is either

* a **polynomial** in ω with non-negative coefficients (:meth:`Mechanism.coefficients` returns
  ``{power: coefficient}``, powers 0-4) — the fast path of the kernels; or
* **any function** of ω and T (``polynomial = False``): :meth:`Mechanism.rate` is evaluated on
  the quadrature nodes, and :meth:`Mechanism.low_frequency` gives its polynomial limit as
  ω → 0 (used below the rule's lowest node and to check that κ_L converges).

On a branch with a dispersion (``dispersion: sine``) the class attribute ``velocity`` says how a
polynomial rate written for a Debye branch carries over (see :mod:`kappa.core.dispersion`):
``"sound"`` as written (the branch's sound velocity is a constant of the form) or ``"flux"``
(τ⁻¹ = v_g × density × cross-section(q): c_k ω^k → c_k ω^k g p^k, with g = v_g/v and
p = qv/ω). A rate that is not a polynomial uses :meth:`RateContext.group_velocity` and
:meth:`RateContext.wavevector`.

Nothing else in kappa special-cases a mechanism: the config loader, ``--set``, fits, sweeps,
spectra, ``kappa check`` and the figures read these declarations.
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import TYPE_CHECKING, ClassVar

import numpy as np

from kappa.core.parameters import Parameter
from kappa.errors import ConfigError

if TYPE_CHECKING:  # pragma: no cover
    from kappa.core.material import Branch, Derived, Material, MaterialSpec
    from kappa.core.scattering import Scattering

__all__ = ["Mechanism", "RateContext", "NPOW", "per_node", "VELOCITY_FORMS"]

NPOW = 5  #: polynomial rates have powers ω⁰ … ω⁴
VELOCITY_FORMS = ("sound", "flux")  #: how a rate carries over to a curved branch


@dataclass(frozen=True)
class RateContext:
    """Where a rate is evaluated: one branch of a material at some temperatures.

    Numeric fields of ``material``, ``branch``, the mechanisms and ``temperature`` broadcast to
    ``shape`` (in a batch: parameters of shape (c, 1), temperatures of shape (1, nT), ``shape``
    (c, nT)); rates are returned with that shape.
    ``scattering`` is the whole resolved model (the normal processes of the ratio form read the
    Umklapp rate from it).
    """

    material: Material
    branch: Branch
    temperature: np.ndarray
    scattering: Scattering
    shape: tuple[int, ...]

    def dispersion_factors(self, omega) -> tuple[np.ndarray, np.ndarray]:
        """(g, p) = (v_g/v, qv/ω) of the branch at angular frequencies ``omega`` [rad/s]
        (shape ``ctx.shape + (M,)``; the floats 1 and 1 on a Debye branch)."""
        omega = np.asarray(omega, dtype=float)
        if not self.branch.curved:
            return 1.0, 1.0
        from kappa.core.dispersion import sine_factors

        omega_zb = 2.0 * np.pi * per_node(self.branch.zone_boundary_frequency)
        return sine_factors(omega / omega_zb)

    def group_velocity(self, omega) -> np.ndarray:
        """v_g(ω) [m/s] of the branch (v on a Debye branch), shape of ``omega``."""
        g, _ = self.dispersion_factors(omega)
        return per_node(self.branch.sound_velocity) * g

    def wavevector(self, omega) -> np.ndarray:
        """q(ω) [1/m] of the branch (ω/v on a Debye branch), shape of ``omega``."""
        _, p = self.dispersion_factors(omega)
        return np.asarray(omega, dtype=float) * p / per_node(self.branch.sound_velocity)


class Mechanism:
    """Base of the scattering mechanisms (subclasses are frozen dataclasses).

    Class attributes
    ----------------
    key : str
        Config key under ``scattering:`` (``point_defect``).
    title : str
        Human name for tables and figures (``point defects``).
    citation : str
        The published form of the rate.
    resistive : bool
        False only for momentum-conserving (normal) processes.
    polynomial : bool
        True when :meth:`coefficients` gives the rate; False for :meth:`rate` on nodes (a
        subclass may make it a property of the instance, e.g. on one of its parameters).
    velocity : str
        How a polynomial rate carries over to a curved branch: ``"sound"`` or ``"flux"``
        (module notes).
    exclusive : tuple of tuple of str
        Groups of parameters that are alternatives (e.g. a volume fraction or a number
        density): at most one of each group may be non-zero.
    parameters : tuple of Parameter
        One declaration per field, in field order.
    """

    key: ClassVar[str]
    title: ClassVar[str]
    citation: ClassVar[str]
    resistive: ClassVar[bool] = True
    polynomial: ClassVar[bool] = True
    velocity: ClassVar[str] = "sound"
    exclusive: ClassVar[tuple[tuple[str, ...], ...]] = ()
    parameters: ClassVar[tuple[Parameter, ...]]

    def __post_init__(self) -> None:
        for p in self.parameters:
            value = getattr(self, p.name)
            if value is None:
                raise ConfigError(f"scattering.{self.key}.{p.name}",
                                  allowed=f"missing; {p.description} is required when "
                                  f"scattering.{self.key} is given")
            p.check(f"scattering.{self.key}.{p.name}", value)
        for group in self.exclusive:
            given = [np.asarray(getattr(self, name), dtype=float) != 0 for name in group]
            if np.any(np.sum(np.broadcast_arrays(*given), axis=0) > 1):
                names = [n for n, g in zip(group, given, strict=True) if np.any(g)]
                raise ConfigError(f"scattering.{self.key}.{names[-1]}", "given",
                                  "give only one of " + ", ".join(
                                      f"scattering.{self.key}.{n}" for n in group) +
                                  " (they are alternatives)")

    @classmethod
    def parameter(cls, name: str) -> Parameter:
        """The declaration of parameter ``name`` (ConfigError naming the key if unknown)."""
        for p in cls.parameters:
            if p.name == name:
                return p
        import difflib

        names = [p.name for p in cls.parameters]
        close = difflib.get_close_matches(name, names, n=1, cutoff=0.6)
        hint = f"did you mean '{close[0]}'? " if close else ""
        raise ConfigError(f"scattering.{cls.key}.{name}", allowed=f"unknown key; {hint}allowed "
                          "here: " + ", ".join(names))

    # --- behaviour that subclasses may override -------------------------------------------

    @property
    def active(self) -> bool:
        """False when the parameters switch the mechanism off (e.g. a scale of 0)."""
        return True

    def unused(self, name: str) -> str | None:
        """Why parameter ``name`` has no effect in this mechanism as configured (None if it has).

        A fit or sweep over such a parameter would report a number the model never sees.
        """
        return None

    def coefficients(self, ctx: RateContext) -> dict[int, np.ndarray]:
        """Polynomial rate: ``{k: c_k}`` with τ⁻¹ = Σ c_k ω^k, c_k [s^(k−1)] broadcast to
        ``ctx.shape``."""
        raise NotImplementedError(f"{type(self).__name__} has no polynomial rate")

    def rate(self, ctx: RateContext, omega: np.ndarray) -> np.ndarray:
        """τ⁻¹ [1/s] at angular frequencies ``omega`` [rad/s].

        ``omega`` has shape ``ctx.shape + (M,)``; the result has the same shape. The default
        evaluates the polynomial of :meth:`coefficients`, carried over to a curved branch as
        ``velocity`` says.
        """
        out = np.zeros(np.broadcast_shapes(ctx.shape + (1,), np.shape(omega)))
        form = self.velocity if ctx.branch.curved else "sound"
        if form != "sound":
            g, p = ctx.dispersion_factors(omega)
        for k, c in self.coefficients(ctx).items():
            term = np.asarray(c)[..., None] * omega**k
            if form == "flux":
                term = term * g * p**k
            out = out + term
        return out

    def low_frequency(self, ctx: RateContext) -> dict[int, np.ndarray]:
        """Polynomial limit of the rate as ω → 0 (``{k: c_k}``, as :meth:`coefficients`).

        Needed when ``polynomial`` is False: the kernel uses it below the lowest quadrature
        node (x < 10⁻¹⁰·min(x_D, 2)) and to check that κ_L converges at ω → 0.
        """
        return self.coefficients(ctx)

    def warnings(self, material: Material) -> list[str]:
        """Plain-words warnings about legal but physically dubious values (never raises)."""
        return []

    def resolve(self, material: Material, spec: MaterialSpec
                ) -> tuple[Mechanism, list[Derived]]:
        """The mechanism with any value derived from the material filled in (default: itself)."""
        return self, []

    def values(self) -> dict[str, object]:
        """Field name → value."""
        return {f.name: getattr(self, f.name) for f in fields(self)}  # type: ignore[arg-type]


def zeros_like(ctx: RateContext) -> np.ndarray:
    """An array of zeros of the context's broadcast shape."""
    return np.zeros(ctx.shape)


def per_node(value):
    """A value broadcasting to ``ctx.shape`` made to broadcast against ω of shape
    ``ctx.shape + (M,)`` (a trailing axis for arrays; floats as they are)."""
    return np.asarray(value)[..., None] if np.ndim(value) else value
