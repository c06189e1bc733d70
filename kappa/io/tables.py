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
from collections.abc import Iterable, Iterator, Sequence
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


_BLOCK = 65_536  # rows parsed into one numpy block while reading


def _data_lines(fh) -> Iterator[str]:
    for line in fh:
        if line.strip() and not line.lstrip().startswith("#"):
            yield line


def read_table(path: str | Path) -> Table:
    """Read a comma-separated table with one header row of ``name [unit]`` columns.

    Lines starting with ``#`` are comments. Blank cells become NaN. The file is read row by
    row into numpy blocks, so memory stays close to that of the final arrays.

    Raises
    ------
    DataError
        Unreadable file, a header without a unit, a duplicated column, a non-numeric cell,
        a row with the wrong number of cells, or no data rows.
    """
    path = Path(path)
    source = path.name
    try:
        with open(path, encoding="utf-8-sig", newline="") as fh:
            return _read_rows(csv.reader(_data_lines(fh)), source)
    except OSError as exc:
        raise DataError(str(path), allowed=f"cannot read the file ({exc.strerror})") from None
    except UnicodeDecodeError:
        raise DataError(str(path), allowed="not a text (UTF-8) CSV file") from None
    except csv.Error as exc:
        raise DataError(str(path), allowed=f"not a readable CSV file ({exc})") from None


def _read_rows(reader, source: str) -> Table:
    header = next(reader, None)
    if header is None:
        raise DataError(source, allowed="the file is empty; needs a header row and data rows")
    headers = [h.strip() for h in header]
    names: list[tuple[str, str]] = []
    for h in headers:
        name, unit = parse_header(h, source)
        if any(name == n for n, _ in names):
            raise DataError(f"{source}, header", h, "each column name may appear only once")
        names.append((name, unit))
    ncol = len(headers)
    blocks: list[np.ndarray] = []
    blanks: list[np.ndarray] = []
    data = np.full((_BLOCK, ncol), np.nan)
    blank = np.zeros(data.shape, dtype=bool)
    k = 0
    for i, row in enumerate(reader):
        if len(row) != ncol:
            raise DataError(f"{source}, row {i + 2}", ",".join(row),
                            f"has {len(row)} cells; the header has {ncol}")
        for j, cell in enumerate(row):
            cell = cell.strip()
            if cell == "":
                blank[k, j] = True
                continue
            try:
                data[k, j] = float(cell)
            except ValueError:
                raise DataError(f"{source}, row {i + 2}, column '{headers[j]}'", cell,
                                "must be a number (or blank)") from None
        k += 1
        if k == _BLOCK:
            blocks.append(data)
            blanks.append(blank)
            data = np.full((_BLOCK, ncol), np.nan)
            blank = np.zeros(data.shape, dtype=bool)
            k = 0
    blocks.append(data[:k])
    blanks.append(blank[:k])
    data = np.concatenate(blocks) if len(blocks) > 1 else blocks[0]
    blank = np.concatenate(blanks) if len(blanks) > 1 else blanks[0]
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


def _check_lengths(columns: Sequence[tuple[str, Iterable]]) -> tuple[list, int]:
    cols = [v if hasattr(v, "__len__") and hasattr(v, "__getitem__") else list(v)
            for _, v in columns]
    n = len(cols[0]) if cols else 0
    if any(len(c) != n for c in cols):
        raise ValueError("all columns must have the same length")
    return cols, n


def _numeric(cols: list) -> bool:
    return all(isinstance(c, np.ndarray) and c.dtype.kind in "fiub" for c in cols)


def _write_numeric(fh, headers: list[str], cols: list, n: int, block: int = 200_000) -> None:
    """Numeric columns, fast: ``%.8g`` (whole numbers and flags as integers), NaN blank."""
    fmt = ",".join("%d" if c.dtype.kind in "iub" else "%.8g" for c in cols)
    fh.write(",".join(headers) + "\n")
    for a in range(0, n, block):
        b = min(n, a + block)
        rows = zip(*[c[a:b].astype(int if c.dtype.kind == "b" else c.dtype).tolist()
                     for c in cols], strict=True)
        text = "\n".join(fmt % row for row in rows)
        if "nan" in text:
            text = "\n".join(",".join("" if c == "nan" else c for c in line.split(","))
                              for line in text.split("\n"))
        fh.write(text + "\n")


def _write(fh, columns: Sequence[tuple[str, Iterable]], block: int = 10_000) -> None:
    cols, n = _check_lengths(columns)
    if _numeric(cols):
        _write_numeric(fh, [h for h, _ in columns], cols, n)
        return
    writer = csv.writer(fh, lineterminator="\n")
    writer.writerow([h for h, _ in columns])
    for a in range(0, n, block):
        b = min(n, a + block)
        cells = [[_fmt(v) for v in (c[a:b].tolist() if isinstance(c, np.ndarray) else c[a:b])]
                 for c in cols]
        writer.writerows(zip(*cells, strict=True))


def format_table(columns: Sequence[tuple[str, Iterable]]) -> str:
    """Return CSV text for ``[(header, values), ...]`` (headers already ``name [unit]``)."""
    buf = io.StringIO()
    _write(buf, columns)
    return buf.getvalue()


def write_table(path: str | Path, columns: Sequence[tuple[str, Iterable]]) -> None:
    """Write ``[(header, values), ...]`` as a CSV file, block by block (little memory)."""
    with open(path, "w", encoding="utf-8", newline="") as fh:
        _write(fh, columns)


def axis_columns(axes) -> list[str]:
    """``name [unit]`` per sweep axis; the full dotted key where two leaf names clash."""
    leaves = [a.name for a in axes]
    out = []
    for a in axes:
        name = a.name if leaves.count(a.name) == 1 else a.key
        out.append(f"{name} [{a.unit}]")
    return out
