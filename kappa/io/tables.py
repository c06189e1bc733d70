"""CSV tables with units in the headers: ``T [K],kappa [W/(m K)],sigma [S/cm]``.

Reading converts nothing by itself: :meth:`Table.get` converts a column to the unit the caller
asks for, so ``S/m`` and ``S/cm`` both work. Blank cells are read as NaN (properties measured on
different temperature grids); what to do with NaN is the caller's explicit policy.
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from kappa.errors import DataError
from kappa.io.units import unit_factor

__all__ = ["Column", "Table", "read_table", "parse_header", "format_table", "write_table",
           "axis_columns"]

_HEADER = re.compile(r"^\s*([^\[\]]+?)\s*\[\s*([^\[\]]*?)\s*\]\s*$")


@dataclass(frozen=True)
class Column:
    """One column as read: its name, the unit written in its header, and its values.

    ``blank`` marks the cells that were empty (as opposed to cells written ``nan``); both are
    NaN in ``values``. It is None for columns not made by :func:`read_table`.
    """

    name: str
    unit: str
    values: np.ndarray
    header: str
    blank: np.ndarray | None = None


@dataclass(frozen=True)
class Table:
    """A table read from a CSV file (values as written, units from the headers)."""

    source: str
    columns: dict[str, Column]

    def __contains__(self, name: str) -> bool:
        return name in self.columns

    def __len__(self) -> int:
        return 0 if not self.columns else len(next(iter(self.columns.values())).values)

    def find(self, *names: str) -> str | None:
        """Return the first of ``names`` present in the table (or None)."""
        return next((n for n in names if n in self.columns), None)

    def get(self, name: str, unit: str) -> np.ndarray:
        """Return column ``name`` converted to ``unit`` (a new array).

        Raises
        ------
        DataError
            If the column is missing or its unit has the wrong dimension.
        """
        if name not in self.columns:
            have = ", ".join(c.header for c in self.columns.values())
            raise DataError(f"{self.source}", f"no column '{name} [...]'",
                            f"needed; the file has: {have}")
        col = self.columns[name]
        scale, offset = unit_factor(col.unit, unit, f"{self.source}, column '{col.header}'",
                                    error=DataError)
        return col.values * scale + offset


def parse_header(text: str, source: str) -> tuple[str, str]:
    """Split ``"sigma [S/cm]"`` into ``("sigma", "S/cm")``; a header without a unit is an error."""
    match = _HEADER.match(text)
    if not match:
        raise DataError(f"{source}, header", text,
                        "every column header must be 'name [unit]', e.g. 'T [K]', "
                        "'sigma [S/cm]', 'S [uV/K]', 'zT [1]'")
    return match.group(1), match.group(2)


def read_table(path: str | Path) -> Table:
    """Read a comma-separated table with one header row of ``name [unit]`` columns.

    Lines starting with ``#`` are comments. Blank cells become NaN.

    Raises
    ------
    DataError
        Unreadable file, a header without a unit, a duplicated column, a non-numeric cell,
        a row with the wrong number of cells, or no data rows.
    """
    path = Path(path)
    source = path.name
    try:
        text = path.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise DataError(str(path), allowed=f"cannot read the file ({exc.strerror})") from None
    except UnicodeDecodeError:
        raise DataError(str(path), allowed="not a text (UTF-8) CSV file") from None
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise DataError(source, allowed="the file is empty; needs a header row and data rows")
    rows = list(csv.reader(io.StringIO("\n".join(lines))))
    headers = [h.strip() for h in rows[0]]
    names: list[tuple[str, str]] = []
    for h in headers:
        name, unit = parse_header(h, source)
        if any(name == n for n, _ in names):
            raise DataError(f"{source}, header", h, "each column name may appear only once")
        names.append((name, unit))
    data = np.full((len(rows) - 1, len(headers)), np.nan)
    blank = np.zeros(data.shape, dtype=bool)
    for i, row in enumerate(rows[1:]):
        if len(row) != len(headers):
            raise DataError(f"{source}, row {i + 2}", ",".join(row),
                            f"has {len(row)} cells; the header has {len(headers)}")
        for j, cell in enumerate(row):
            cell = cell.strip()
            if cell == "":
                blank[i, j] = True
                continue
            try:
                data[i, j] = float(cell)
            except ValueError:
                raise DataError(f"{source}, row {i + 2}, column '{headers[j]}'", cell,
                                "must be a number (or blank)") from None
    if data.shape[0] == 0:
        raise DataError(source, allowed="has a header but no data rows")
    columns = {
        n: Column(name=n, unit=u, values=data[:, j].copy(), header=headers[j],
                  blank=blank[:, j].copy())
        for j, (n, u) in enumerate(names)
    }
    return Table(source=source, columns=columns)


def _fmt(value: float) -> str:
    if isinstance(value, str):
        return value
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "1" if value else "0"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    return f"{float(value):.8g}"


def format_table(columns: Sequence[tuple[str, Iterable]]) -> str:
    """Return CSV text for ``[(header, values), ...]`` (headers already ``name [unit]``)."""
    headers = [h for h, _ in columns]
    cols = [list(v) for _, v in columns]
    n = len(cols[0]) if cols else 0
    if any(len(c) != n for c in cols):
        raise ValueError("all columns must have the same length")
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(headers)
    for i in range(n):
        writer.writerow([_fmt(c[i]) for c in cols])
    return buf.getvalue()


def write_table(path: str | Path, columns: Sequence[tuple[str, Iterable]]) -> None:
    """Write ``[(header, values), ...]`` as a CSV file."""
    Path(path).write_text(format_table(columns), encoding="utf-8")


def axis_columns(axes) -> list[str]:
    """``name [unit]`` per sweep axis; the full dotted key where two leaf names clash."""
    leaves = [a.name for a in axes]
    out = []
    for a in axes:
        name = a.name if leaves.count(a.name) == 1 else a.key
        out.append(f"{name} [{a.unit}]")
    return out
