"""Declarations of numeric model parameters: one per parameter, read by everything.

A :class:`Parameter` says what a value is (name, description, SI unit, the unit it is shown
in), which values are allowed (an error outside), which values a real solid has (a warning
outside, with the basis of the range) and where a fit may start. The model, the config loader,
``--set``, fits, sweeps, ``kappa check`` and the error messages all read the same declaration.
Values are SI floats or numpy arrays (a batch of parameter sets).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from kappa.errors import ConfigError

__all__ = ["Parameter", "check_array"]


@dataclass(frozen=True)
class Parameter:
    """Declaration of one numeric (or choice) parameter.

    Parameters
    ----------
    name : str
        Field name, also the last part of the dotted key (``grain_size``).
    unit : str
        SI unit inside kappa (``"1"`` for plain numbers, ``""`` for a text choice).
    description : str
        Plain words, with the symbol (``"boundary (grain) length L"``).
    default : float, str or None
        Value taken when the key is absent; None when the key is required.
    low, high : float
        Allowed range (an error outside); ``low_open``/``high_open`` make the ends exclusive.
    display : str, optional
        Unit used when kappa shows or writes the value (``"nm"``); default ``unit``.
    scale : float
        The SI value of one ``display`` unit (1e-9 for nm); a test checks it against the units
        library, which the core does not use.
    bare : str, optional
        Unit a bare number in a config is read in; default ``unit`` (``u`` for masses).
    choices : tuple of str
        Allowed texts of a choice parameter.
    title : str, optional
        Human name for figures and tables (``"grain size"``); default from ``name``.
    typical : (float, float), optional
        Range real solids show [SI]; values outside get a warning naming ``basis``.
    basis : str
        Where ``typical`` comes from.
    start : float, optional
        A sensible start for a fit when the parameter's mechanism is absent from the model.
    linear : bool
        Fit the value itself rather than its logarithm (for bounded fractions such as a
        specularity); other non-negative parameters are fitted in log space.
    """

    name: str
    unit: str
    description: str
    default: float | str | None = None
    low: float = -math.inf
    high: float = math.inf
    low_open: bool = False
    high_open: bool = False
    display: str | None = None
    scale: float = 1.0
    bare: str | None = None
    choices: tuple[str, ...] = ()
    title: str | None = None
    typical: tuple[float, float] | None = None
    basis: str = ""
    start: float | None = None
    linear: bool = False

    @property
    def numeric(self) -> bool:
        """True for numbers, False for text choices."""
        return not self.choices

    @property
    def shown_unit(self) -> str:
        """The unit values are shown and written in."""
        return self.display or self.unit

    def shown(self, value):
        """``value`` [SI] in the display unit."""
        return np.asarray(value, dtype=float) / self.scale if np.ndim(value) else \
            float(value) / self.scale

    def format(self, value, digits: int = 4) -> str:
        """``value`` [SI] as text in the display unit, e.g. ``"50 nm"``."""
        unit = self.shown_unit
        text = f"{self.shown(value):.{digits}g}"
        return text if unit in ("1", "") else f"{text} {unit}"

    @property
    def label(self) -> str:
        """Human name, e.g. ``"grain size"``."""
        return self.title or self.name.replace("_", " ")

    @property
    def log_space(self) -> bool:
        """True when a fit should work in ln(value): non-negative and not declared linear."""
        return self.low >= 0.0 and not self.linear

    def allowed(self) -> str:
        """Plain-words description of the allowed values (in the display unit), for messages."""
        if self.choices:
            return "allowed: " + ", ".join(self.choices)
        unit = self.shown_unit
        u = "" if unit in ("1", "") else f" {unit}"

        def num(v: float) -> str:
            return f"{self.shown(v):g}"

        lo = "" if self.low == -math.inf else (f"> {num(self.low)}" if self.low_open
                                                else f">= {num(self.low)}")
        hi = "" if self.high == math.inf else (f"< {num(self.high)}" if self.high_open
                                               else f"<= {num(self.high)}")
        if lo and hi:
            return f"must be {lo} and {hi}{u}"
        if lo or hi:
            return f"must be {lo or hi}{u}"
        return "must be a finite number"

    def contains(self, value) -> np.ndarray | bool:
        """Whether ``value`` (float or array, SI) lies in the allowed range (elementwise)."""
        v = np.asarray(value, dtype=float)
        ok = np.isfinite(v)
        ok &= (v > self.low) if self.low_open else (v >= self.low)
        ok &= (v < self.high) if self.high_open else (v <= self.high)
        return ok if v.ndim else bool(ok)

    def check(self, key: str, value, shown: object = None) -> None:
        """Raise :class:`ConfigError` unless ``value`` (SI, float or array) is allowed.

        ``shown`` is the value quoted in the message (as the user wrote it); for an array the
        first offending element is quoted.
        """
        if self.choices:
            if value not in self.choices:
                raise ConfigError(key, value if shown is None else shown, self.allowed())
            return
        ok = self.contains(value)
        if np.all(ok):
            return
        if np.ndim(value):
            bad = np.asarray(value, dtype=float).ravel()[int(np.argmin(np.ravel(ok)))]
            raise ConfigError(key, float(bad), self.allowed())
        raise ConfigError(key, value if shown is None else shown, self.allowed())

    def unusual(self, value) -> bool:
        """True when any of ``value`` lies outside the range real solids show."""
        if self.typical is None:
            return False
        v = np.asarray(value, dtype=float)
        return bool(np.any((v < self.typical[0]) | (v > self.typical[1])))


def check_array(key: str, value, allowed: str, ok) -> None:
    """Raise ConfigError naming ``key`` and the first value where ``ok`` is False."""
    ok = np.asarray(ok)
    if np.all(ok):
        return
    v = np.broadcast_to(np.asarray(value, dtype=float), ok.shape).ravel()
    raise ConfigError(key, float(v[int(np.argmin(ok.ravel()))]), allowed)
