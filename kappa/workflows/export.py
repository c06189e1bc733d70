"""Results as tables: the columns every output shares, and export to pandas and xarray.

A result's :meth:`Tabular.columns` gives ``[(header, values)]`` with headers ``name [unit]``
(names hold letters, digits, ``_`` and ``.`` only; the unit is the display unit of the
quantity). The CSV and Parquet writers, the terminal tables and :meth:`Tabular.to_pandas` all
use these columns, so a table looks the same in every form.

pandas and xarray are optional (``pip install kappa[pandas]``, ``kappa[xarray]``); they are
imported only when an export is asked for.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from kappa.core.parameters import Parameter

__all__ = ["Tabular", "key_column", "key_columns", "require", "unit_of", "name_of"]


def require(module: str, extra: str):
    """Import an optional library, or raise ImportError saying how to install it."""
    import importlib

    try:
        return importlib.import_module(module)
    except ImportError:
        raise ImportError(f"this export needs {module}: pip install 'kappa[{extra}]' (or pip "
                          f"install {module})") from None


def name_of(header: str) -> str:
    """``"kappa_L [W/(m K)]"`` → ``"kappa_L"``."""
    return header.split(" [", 1)[0]


def unit_of(header: str) -> str:
    """``"kappa_L [W/(m K)]"`` → ``"W/(m K)"`` (``""`` without a unit)."""
    return header.split(" [", 1)[1][:-1] if " [" in header else ""


def key_column(key: str, parameter: Parameter, full: bool = False) -> str:
    """The column of a dotted key: ``grain_size [nm]`` (``full``: the whole dotted key)."""
    name = key if full else key.rsplit(".", 1)[-1]
    return f"{name} [{parameter.shown_unit}]"


def key_columns(keys: Sequence[str], parameters: Sequence[Parameter]) -> list[str]:
    """Columns of several keys; the full dotted key where two last parts clash."""
    leaves = [k.rsplit(".", 1)[-1] for k in keys]
    return [key_column(k, p, full=leaves.count(leaf) > 1)
            for k, p, leaf in zip(keys, parameters, leaves, strict=True)]


class Tabular:
    """Mixin of results that are tables: :meth:`columns`, :meth:`to_pandas`."""

    def columns(self) -> list[tuple[str, np.ndarray]]:  # pragma: no cover - overridden
        """``[(name [unit], values)]``, the columns of the result's main table."""
        raise NotImplementedError

    def to_pandas(self):
        """The result's main table as a ``pandas.DataFrame``.

        Column names are ``name [unit]`` as in the CSV files; ``DataFrame.attrs["units"]``
        maps each column to its unit. Needs pandas (``pip install 'kappa[pandas]'``).
        """
        return frame(self.columns())


def frame(columns: Sequence[tuple[str, object]]):
    """A ``pandas.DataFrame`` of ``[(header, values)]`` with ``attrs["units"]``."""
    pd = require("pandas", "pandas")
    data = {h: np.asarray(v) for h, v in columns}
    df = pd.DataFrame(data)
    df.attrs["units"] = {h: unit_of(h) for h, _ in columns}
    return df
