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
    """A table read from a file (values as written, units from the headers).

    ``rows`` holds the line (or spreadsheet row) number of each data row, ``comments`` the
    ``#`` comment lines as ``(line, text)``.
    """

    source: str
    columns: dict[str, Column]
    rows: np.ndarray | None = None
    comments: tuple[tuple[int, str], ...] = ()

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


def _split_parenthesis(text: str) -> tuple[str, str] | None:
    """``"kappa (W/(m K))"`` → ``("kappa", "W/(m K)")``: the last balanced group at the end."""
    if not text.endswith(")"):
        return None
    depth = 0
    for i in range(len(text) - 1, -1, -1):
        depth += {")": 1, "(": -1}.get(text[i], 0)
        if depth == 0:
            name = text[:i].strip()
            return (name, text[i + 1:-1].strip()) if name else None
    return None


def parse_header(text: str, source: str) -> tuple[str, str]:
    """Split ``"sigma [S/cm]"`` or ``"Temperature (°C)"`` into (name, unit).

    A header without a unit is an error (``[1]`` marks a plain number).
    """
    match = _HEADER.match(text)
    if match:
        return match.group(1), match.group(2)
    found = _split_parenthesis(text.strip())
    if found:
        return found
    raise DataError(f"{source}, header", text,
                    "every column header must be 'name [unit]' or 'name (unit)', e.g. 'T [K]', "
                    "'Temperature (°C)', 'sigma [S/cm]', 'S [uV/K]', 'zT [1]'")


def read_table(path: str | Path, *, separator: str | None = None, decimal: str | None = None,
               sheet: str | None = None) -> Table:
    """Read a table with one header row of ``name [unit]`` (or ``name (unit)``) columns.

    Text files may be comma-, semicolon- or tab-separated, with a decimal point or (with
    semicolons or tabs) a decimal comma, in UTF-8 or Latin-1 — all detected unless given
    (``separator``, ``decimal``: the characters). ``.xlsx`` spreadsheets are read too
    (``book.xlsx:Sheet2`` or ``sheet=`` for a sheet other than the first); see
    :mod:`kappa.io.labfiles`. Lines starting with ``#`` are comments (kept in
    :attr:`Table.comments`). Blank cells become NaN.

    Raises
    ------
    DataError
        Unreadable file, a header without a unit, a duplicated column, a non-numeric cell,
        a row with the wrong number of cells, or no data rows.
    """
    from kappa.io.labfiles import read_raw

    raw = read_raw(path, separator=separator, decimal=decimal, sheet=sheet)
    return _build(raw)


def _build(raw) -> Table:
    source = raw.source
    names: list[tuple[str, str]] = []
    for h in raw.header:
        name, unit = parse_header(h, source)
        if any(name == n for n, _ in names):
            raise DataError(f"{source}, header", h, "each column name may appear only once")
        names.append((name, unit))
    ncol = len(names)
    nrow = len(raw.rows)
    if nrow == 0:
        raise DataError(source, allowed="has a header but no data rows")
    data = np.full((nrow, ncol), np.nan)
    blank = np.zeros((nrow, ncol), dtype=bool)
    decimal = raw.decimal
    from kappa.io.labfiles import parse_number

    for i, row in enumerate(raw.rows):
        for j, cell in enumerate(row):
            if cell is None or cell == "":
                blank[i, j] = True
            elif isinstance(cell, str):
                try:
                    data[i, j] = parse_number(cell, decimal)
                except ValueError:
                    mark = "a decimal comma" if decimal == "," else "a decimal point"
                    raise DataError(f"{source}, line {raw.lines[i]}, column "
                                    f"'{raw.header[j]}'", cell,
                                    f"must be a number with {mark} (or blank)") from None
            else:
                data[i, j] = float(cell)
    columns = {
        n: Column(name=n, unit=u, values=data[:, j].copy(), header=raw.header[j],
                  blank=blank[:, j].copy())
        for j, (n, u) in enumerate(names)
    }
    return Table(source=source, columns=columns, rows=np.asarray(raw.lines),
                 comments=tuple(raw.comments))


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


def round_significant(values: np.ndarray, digits: int = 8) -> np.ndarray:
    """``values`` rounded to ``digits`` significant figures (so that they print short)."""
    x = np.asarray(values, dtype=float)
    with np.errstate(all="ignore"):
        a = np.abs(x)
        e = np.floor(np.log10(np.where((a > 0) & np.isfinite(a), a, 1.0)))
        scale = 10.0 ** (digits - 1 - e)
        r = np.round(x * scale) / scale
    return np.where(np.isfinite(r), r, x)


#: Tables with at least this many rows are written by pyarrow when it is installed.
ARROW_ROWS = 20_000


def arrow_array(values: np.ndarray, round_floats: bool = False):
    """A numeric numpy array as a pyarrow array, NaN as null (empty in CSV).

    Built from the buffers: ``pyarrow.array`` would import pandas to inspect a numpy array.
    """
    import pyarrow as pa

    a = np.asarray(values)
    if a.dtype.kind == "b":
        a = a.astype(np.int8)
    if a.dtype.kind == "f":
        a = round_significant(a) if round_floats else a.astype(np.float64)
    a = np.ascontiguousarray(a)
    types = {"f": pa.float64(), "i": pa.from_numpy_dtype(a.dtype),
             "u": pa.from_numpy_dtype(a.dtype)}
    if a.dtype.kind not in types:
        return pa.array(a.tolist())
    validity = None
    if a.dtype.kind == "f":
        nan = np.isnan(a)
        if nan.any():
            validity = pa.py_buffer(np.packbits(~nan, bitorder="little"))
    return pa.Array.from_buffers(types[a.dtype.kind], a.size, [validity, pa.py_buffer(a)])


def _csv_array(values: np.ndarray):
    """A column for pyarrow's CSV writer: numbers rounded to 8 digits; a column that repeats
    a few values (a sweep's axes) as a dictionary of their texts, so that each distinct value
    is formatted once (the file is the same)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    arr = arrow_array(values, round_floats=True)
    a = np.asarray(values)
    if arr.null_count or a.dtype.kind not in "fiu" or a.size < ARROW_ROWS:
        return arr
    sample = a[:: max(1, a.size // 1000)]
    if np.unique(sample).size * 4 > sample.size:  # mostly distinct values: as they are
        return arr
    coded = pc.dictionary_encode(arr)
    if len(coded.dictionary) * 4 >= len(arr):
        return arr
    return pa.DictionaryArray.from_arrays(coded.indices, pc.cast(coded.dictionary, pa.string()))


def _arrow_table(headers: list[str], cols: list):
    import pyarrow as pa

    return pa.Table.from_arrays([_csv_array(c) for c in cols], names=headers)


def _write_arrow(fh, headers: list[str], cols: list) -> bool:
    """Numeric columns through pyarrow's CSV writer (C++, threaded); False without pyarrow."""
    try:
        import pyarrow as pa
        import pyarrow.csv as pacsv
    except ImportError:
        return False
    buf = pa.BufferOutputStream()
    pacsv.write_csv(_arrow_table(headers, cols), buf,
                    pacsv.WriteOptions(include_header=False, quoting_style="none"))
    fh.write(",".join(headers) + "\n")
    fh.flush()
    fh.buffer.write(buf.getvalue().to_pybytes()) if hasattr(fh, "buffer") else fh.write(
        buf.getvalue().to_pybytes().decode("utf-8"))
    return True


def _write(fh, columns: Sequence[tuple[str, Iterable]], block: int = 10_000) -> None:
    cols, n = _check_lengths(columns)
    if _numeric(cols):
        headers = [h for h, _ in columns]
        if n >= ARROW_ROWS and _write_arrow(fh, headers, cols):
            return
        _write_numeric(fh, headers, cols, n)
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


def write_parquet(path: str | Path, columns: Sequence[tuple[str, Iterable]]) -> None:
    """Write ``[(header, values), ...]`` as a Parquet file (needs pyarrow).

    Column names are the ``name [unit]`` headers; each field's metadata holds its ``unit``.
    """
    pa = parquet_library()
    import pyarrow.parquet as pq

    cols, _ = _check_lengths(columns)
    fields, arrays = [], []
    for (h, _), c in zip(columns, cols, strict=True):
        arr = arrow_array(np.asarray(c))
        unit = h.split(" [", 1)[1][:-1] if " [" in h else ""
        fields.append(pa.field(h, arr.type, metadata={"unit": unit}))
        arrays.append(arr)
    pq.write_table(pa.Table.from_arrays(arrays, schema=pa.schema(fields)), str(path))


def parquet_library():
    """pyarrow, or a DataError saying how to install it (for ``--format parquet``)."""
    try:
        import pyarrow
    except ImportError:
        raise DataError("--format", "parquet", "needs pyarrow: pip install 'kappa[parquet]' "
                        "(or pip install pyarrow); or use --format csv") from None
    return pyarrow


def axis_columns(axes) -> list[str]:
    """``name [unit]`` per sweep axis; the full dotted key where two leaf names clash."""
    leaves = [a.name for a in axes]
    out = []
    for a in axes:
        name = a.name if leaves.count(a.name) == 1 else a.key
        out.append(f"{name} [{a.unit}]")
    return out
