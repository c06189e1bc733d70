"""The error and warning family of kappa.

Every error names the offending key (or file/column), the value and what is allowed, and
builds one message of the form ``key = value: what is allowed``. The command line catches
:class:`KappaError` once and exits with status 2.
"""

from __future__ import annotations

import warnings

__all__ = ["KappaError", "ConfigError", "DataError", "KappaWarning", "warn"]

_NO_VALUE = object()


class KappaError(Exception):
    """Base class of all errors kappa raises on bad input.

    Parameters
    ----------
    key : str
        Where the problem is: a dotted config key, a command-line option, or
        ``file.csv, column 'sigma [S/cm]'``.
    value : object, optional
        The offending value, shown as given. Omit when there is no single value.
    allowed : str
        What is allowed instead, in plain words.
    """

    def __init__(self, key: str, value: object = _NO_VALUE, allowed: str = "") -> None:
        self.key = key
        self.value = None if value is _NO_VALUE else value
        self.allowed = allowed
        self.has_value = value is not _NO_VALUE
        if value is _NO_VALUE:
            message = f"{key}: {allowed}" if allowed else key
        else:
            message = f"{key} = {_show(value)}: {allowed}" if allowed else f"{key} = {_show(value)}"
        super().__init__(message)


    def renamed(self, key: str) -> KappaError:
        """The same error naming ``key`` instead (e.g. a library argument as a CLI option)."""
        if self.has_value:
            return type(self)(key, self.value, self.allowed)
        return type(self)(key, allowed=self.allowed)


class ConfigError(KappaError, ValueError):
    """A config file, a ``--set`` override or a parameter object is invalid."""


class DataError(KappaError, ValueError):
    """A measurement table (CSV) or an array of data is invalid."""


class KappaWarning(UserWarning):
    """Legal but physically dubious input; the computation continues unchanged."""


def warn(message: str, stacklevel: int = 2) -> None:
    """Issue a :class:`KappaWarning` (never changes any value)."""
    warnings.warn(message, KappaWarning, stacklevel=stacklevel + 1)


def _show(value: object) -> str:
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, str):
        return repr(value) if (value == "" or value != value.strip()) else value
    return str(value)
