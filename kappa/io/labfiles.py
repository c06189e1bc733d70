"""Reading lab files as they come: text tables in any common dialect, and spreadsheets.

Text files (``.csv``, ``.txt``, ``.tsv``, ``.dat``, anything not a spreadsheet):

* **Encoding**: UTF-8 with or without byte-order mark, UTF-16 with byte-order mark, else
  Windows-1252 / Latin-1 (the one-byte ``°`` and ``µ`` of lab PCs). NUL bytes in a file without
  a UTF-16 mark mean "not a text file".
* **Separator**: comma, semicolon or tab, detected from the header row (the first line that is
  neither blank nor a ``#`` comment) and checked on the data rows; ``separator=`` overrides.
* **Decimal mark**: a point, or a comma in semicolon- and tab-separated files (``3,14``),
  detected from the cells; a column that mixes both is an error naming it; ``decimal=``
  overrides.

Spreadsheets (``.xlsx``, ``.xlsm``): the first sheet, or a named one (``data.xlsx:Sheet2`` or
``sheet=``), through openpyxl. Numeric cells are taken as they are; text cells are read as
numbers like the cells of a text file.

Both give :class:`RawTable`: the header cells, the data cells as text (or numbers) with their
line/row numbers, and the ``#`` comment lines (which may hold per-file constants, see
:func:`kappa.io.measurements.read_measurements`).
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass, field
from pathlib import Path

from kappa.errors import DataError

__all__ = ["RawTable", "read_raw", "split_sheet", "SEPARATORS", "DECIMALS", "SPREADSHEETS",
           "parse_separator", "parse_decimal", "parse_number"]

#: Separators a text table may use (name → character).
SEPARATORS = {",": ",", "comma": ",", ";": ";", "semicolon": ";", "tab": "\t", "\t": "\t",
              "\\t": "\t"}
#: Decimal marks (name → character).
DECIMALS = {".": ".", "point": ".", "dot": ".", ",": ",", "comma": ","}
#: File suffixes read as spreadsheets.
SPREADSHEETS = (".xlsx", ".xlsm")
MAX_BYTES = 200 * 1024 * 1024  #: larger text tables are refused (a lab file holds kB to MB)


@dataclass
class RawTable:
    """A table as found in a file, before units and names are understood.

    Attributes
    ----------
    source : str
        The name used in messages (``flash.csv`` or ``run.xlsx, sheet 'Sheet2'``).
    header : list of str
    header_line : int
    rows : list of list
        Data cells (str, float or None for an empty cell), one list per row.
    lines : list of int
        The line (spreadsheet row) number of each data row.
    comments : list of (int, str)
        ``#`` comment lines with their numbers, ``#`` removed.
    decimal : str
        The decimal mark of text cells (``.`` or ``,``).
    """

    source: str
    header: list[str]
    header_line: int
    rows: list[list]
    lines: list[int]
    comments: list[tuple[int, str]] = field(default_factory=list)
    decimal: str = "."


def parse_separator(text: str | None, option: str = "separator") -> str | None:
    """``comma``/``,``, ``semicolon``/``;``, ``tab`` → the character (None: detect)."""
    if text is None or text == "" or text == "auto":
        return None
    if text in SEPARATORS:
        return SEPARATORS[text]
    raise DataError(option, text, "comma (,), semicolon (;), tab or auto")


def parse_decimal(text: str | None, option: str = "decimal") -> str | None:
    """``point``/``.``, ``comma``/``,`` → the character (None: detect)."""
    if text is None or text == "" or text == "auto":
        return None
    if text in DECIMALS:
        return DECIMALS[text]
    raise DataError(option, text, "point (.), comma (,) or auto")


def split_sheet(path: str | Path) -> tuple[Path, str | None]:
    """``book.xlsx:Sheet2`` → (``book.xlsx``, ``Sheet2``); other paths unchanged."""
    text = str(path)
    p = Path(text)
    if p.exists():
        return p, None
    for suffix in SPREADSHEETS:
        mark = suffix + ":"
        i = text.lower().rfind(mark)
        if i > 0:
            return Path(text[: i + len(suffix)]), text[i + len(mark):] or None
    return p, None


def read_raw(path: str | Path, *, separator: str | None = None, decimal: str | None = None,
             sheet: str | None = None) -> RawTable:
    """Read a text table or a spreadsheet into a :class:`RawTable`.

    Raises
    ------
    DataError
        A file that cannot be read, is not a text file or spreadsheet, has no header, whose
        separator cannot be detected, or whose rows have the wrong number of cells.
    """
    path, named = split_sheet(path)
    sheet = sheet or named
    if path.suffix.lower() in SPREADSHEETS:
        return _read_sheet(path, sheet)
    if sheet:
        raise DataError(str(path), f"sheet '{sheet}'", "only spreadsheets (.xlsx) have sheets")
    if separator is not None and separator == decimal:
        raise DataError("decimal", decimal, "the decimal mark must differ from the separator")
    text = _decode(path)
    return _parse_text(text, path.name, separator, decimal)


# --- text -----------------------------------------------------------------------------------


def _decode(path: Path) -> str:
    try:
        size = path.stat().st_size
        if size > MAX_BYTES:
            raise DataError(str(path), f"{size:,} bytes", f"at most {MAX_BYTES:,} bytes")
        data = path.read_bytes()
    except OSError as exc:
        raise DataError(str(path), allowed=f"cannot read the file ({exc.strerror})") from None
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError:
            raise DataError(str(path), allowed="not a readable UTF-16 text file") from None
    if b"\x00" in data[:65536]:
        raise DataError(str(path), allowed="not a text file (a table as CSV/TXT with "
                        "comma, semicolon or tab separators, or an .xlsx spreadsheet)")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252")
    except UnicodeDecodeError:
        return data.decode("latin-1")


_COMMA_NUMBER = re.compile(r"^[-+]?\d*,\d+(?:[eE][-+]?\d+)?$|^[-+]?\d+,(?:[eE][-+]?\d+)?$")
_POINT_NUMBER = re.compile(r"^[-+]?\d*\.\d*(?:[eE][-+]?\d+)?$")


def _detect_separator(header: str, samples: list[str], source: str, line: int) -> str:
    for sep in ("\t", ";", ","):  # tab and semicolon first: a comma may be a decimal mark
        if sep not in header:
            continue
        n = _cells(header, sep)
        if n > 1 and all(_cells(s, sep) in (n, n + 1) for s in samples):
            return sep
    raise DataError(f"{source}, line {line}", _short(header),
                    "cannot tell the separator: the header and the data rows must have the same "
                    "number of cells separated by commas, semicolons or tabs (or give "
                    "--separator)")


def _cells(line: str, sep: str) -> int:
    return len(next(csv.reader([line], delimiter=sep)))


def _short(text: str, limit: int = 60) -> str:
    text = text.strip()
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _parse_text(text: str, source: str, separator: str | None,
                decimal: str | None) -> RawTable:
    comments: list[tuple[int, str]] = []
    content: list[tuple[int, str]] = []
    for n, line in enumerate(text.splitlines(), start=1):
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            comments.append((n, stripped[1:].strip()))
            continue
        content.append((n, line))
    if not content:
        raise DataError(source, allowed="the file is empty; needs a header row and data rows")
    header_line, header_text = content[0]
    if separator is None:
        samples = [t for _, t in content[1:21]]
        separator = _detect_separator(header_text, samples, source, header_line)
    rows_text = [t for _, t in content]
    try:  # line by line: a stray quote must not join lines into one row
        parsed = [next(csv.reader([t], delimiter=separator), []) for t in rows_text]
    except csv.Error as exc:
        raise DataError(source, allowed=f"not a readable table ({exc})") from None
    header = [h.strip() for h in parsed[0]]
    while header and header[-1] == "" and all(len(r) >= len(header) and not r[len(header) - 1]
                                               .strip() for r in parsed[1:]):
        header.pop()  # a trailing separator on every line (spreadsheet exports)
        parsed = [r[: len(header)] if len(r) > len(header) else r for r in parsed]
    ncol = len(header)
    rows, lines = [], []
    for (n, t), row in zip(content[1:], parsed[1:], strict=True):
        if len(row) == ncol + 1 and not row[-1].strip():
            row = row[:-1]
        if len(row) != ncol:
            raise DataError(f"{source}, line {n}", _short(t),
                            f"has {len(row)} cells; the header has {ncol} (separator "
                            f"{_name(separator)})")
        rows.append([c.strip() for c in row])
        lines.append(n)
    if decimal is None:
        decimal = _detect_decimal(header, rows, lines, source, separator)
    elif decimal == "," and separator == ",":
        raise DataError("decimal", ",", "a comma decimal mark needs a semicolon or tab "
                        "separator")
    return RawTable(source, header, header_line, rows, lines, comments, decimal)


def _name(sep: str) -> str:
    return {",": "comma", ";": "semicolon", "\t": "tab"}[sep]


def _detect_decimal(header: list[str], rows: list[list], lines: list[int], source: str,
                    separator: str) -> str:
    if separator == ",":
        return "."
    comma_at: dict[int, int] = {}
    point_at: dict[int, int] = {}
    for row, n in zip(rows, lines, strict=True):
        for j, cell in enumerate(row):
            if "," in cell and j not in comma_at and _COMMA_NUMBER.match(cell):
                comma_at[j] = n
            elif "." in cell and j not in point_at and _POINT_NUMBER.match(cell):
                point_at[j] = n
    for j in sorted(set(comma_at) & set(point_at)):
        raise DataError(f"{source}, column '{header[j]}'", "mixed decimal marks",
                        f"line {point_at[j]} uses a decimal point and line {comma_at[j]} a "
                        "decimal comma; use one style in a file (or give --decimal)")
    if comma_at and point_at:
        jc, jp = min(comma_at), min(point_at)
        raise DataError(source, "mixed decimal marks",
                        f"column '{header[jc]}' uses a decimal comma (line {comma_at[jc]}) and "
                        f"column '{header[jp]}' a decimal point (line {point_at[jp]}); use one "
                        "style in a file (or give --decimal)")
    return "," if comma_at else "."


def parse_number(cell: str, decimal: str) -> float:
    """A text cell as a number with the given decimal mark (ValueError if it is none)."""
    if decimal == ",":
        if "." in cell:
            raise ValueError(cell)
        cell = cell.replace(",", ".")
    elif "," in cell:
        raise ValueError(cell)
    return float(cell)


# --- spreadsheets ---------------------------------------------------------------------------


def _read_sheet(path: Path, sheet: str | None) -> RawTable:
    try:
        import openpyxl
    except ImportError:  # pragma: no cover - openpyxl is a dependency
        raise DataError(str(path), allowed="reading .xlsx needs openpyxl: pip install "
                        "openpyxl") from None
    import warnings
    import zipfile

    try:
        with warnings.catch_warnings():  # openpyxl warns about styles it does not know
            warnings.simplefilter("ignore")
            book = openpyxl.load_workbook(path, read_only=True, data_only=True)
    except FileNotFoundError:
        raise DataError(str(path), allowed="no such file") from None
    except (OSError, zipfile.BadZipFile, KeyError, ValueError) as exc:
        raise DataError(str(path), allowed=f"not a readable .xlsx spreadsheet ({exc})") from None
    try:
        names = book.sheetnames
        if sheet is None:
            ws = book[names[0]]
            sheet = names[0]
        elif sheet in names:
            ws = book[sheet]
        else:
            raise DataError(f"{path.name}", f"sheet '{sheet}'",
                            f"no such sheet; the file has: {', '.join(names)}")
        source = path.name if len(names) == 1 else f"{path.name}, sheet '{sheet}'"
        values = [list(r) for r in ws.iter_rows(values_only=True)]
    finally:
        book.close()
    comments: list[tuple[int, str]] = []
    content: list[tuple[int, list]] = []
    for n, row in enumerate(values, start=1):
        cells = [None if (c is None or (isinstance(c, str) and not c.strip())) else c
                 for c in row]
        if all(c is None for c in cells):
            continue
        first = next(c for c in cells if c is not None)
        if isinstance(first, str) and first.strip().startswith("#"):
            comments.append((n, " ".join(str(c) for c in cells if c is not None)
                             .strip()[1:].strip()))
            continue
        content.append((n, cells))
    if not content:
        raise DataError(source, allowed="the sheet is empty; needs a header row and data rows")
    header_line, header_cells = content[0]
    while header_cells and header_cells[-1] is None:
        header_cells = header_cells[:-1]
    header = ["" if c is None else str(c).strip() for c in header_cells]
    ncol = len(header)
    rows, lines = [], []
    for n, cells in content[1:]:
        extra = [c for c in cells[ncol:] if c is not None]
        if extra:
            raise DataError(f"{source}, row {n}", _short(str(extra[0])),
                            f"a cell right of the last header column ({ncol} columns)")
        cells = (cells + [None] * ncol)[:ncol]
        rows.append([c if isinstance(c, (int, float)) and not isinstance(c, bool)
                     else (None if c is None else str(c).strip()) for c in cells])
        lines.append(n)
    text_cells = [[c for c in r if isinstance(c, str)] for r in rows]
    decimal = "."
    if any("," in c and _COMMA_NUMBER.match(c) for r in text_cells for c in r):
        decimal = _detect_decimal(header, [[c if isinstance(c, str) else "" for c in r]
                                           for r in rows], lines, source, ";")
    return RawTable(source, header, header_line, rows, lines, comments, decimal)
