"""Tables on the terminal: every command prints through :func:`print_table`.

Rules: no row is dropped without saying so — a long table shows its first and last rows around
one line ``… N rows …`` and names the file that holds them all; columns left out are named
too. Numbers get four significant figures in plain notation where that reads well
(``13171``, ``0.04512``, ``1.2e-07``); temperatures are shown as written (``373.15``, not
``373.1``). Plain text (no colour) when the output is not a terminal, so it can be pasted.
"""

from __future__ import annotations

import math
import sys
from collections.abc import Sequence
from typing import Any

__all__ = ["print_table", "format_number", "format_cell", "table_text"]

#: Significant figures of numbers in terminal tables.
DIGITS = 4
#: Significant figures of values shown "as written" (temperatures: 373.15 stays 373.15).
EXACT_DIGITS = 6



def load() -> None:
    """Import rich's table printing ahead (while a figure worker draws)."""
    import rich.box
    import rich.console
    import rich.table
    import rich.text  # noqa: F401

def format_number(value: float, digits: int = DIGITS) -> str:
    """``value`` with ``digits`` significant figures, plain notation from 1e-3 to 1e7."""
    if isinstance(value, (bool,)):
        return "1" if value else "0"
    v = float(value)
    if math.isnan(v):
        return "-"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    if v == 0:
        return "0"
    a = abs(v)
    if 1e-3 <= a < 1e7:
        decimals = max(0, digits - 1 - math.floor(math.log10(a)))
        text = f"{v:.{decimals}f}"
        if "." in text:  # 0.04500 → 0.045; keep at least the significant digits shown
            text = text.rstrip("0").rstrip(".")
        return text
    mantissa, exponent = f"{v:.{max(1, digits - 1)}e}".split("e")
    if "." in mantissa:
        mantissa = mantissa.rstrip("0").rstrip(".")
    return f"{mantissa}e{int(exponent)}"


def _as_written(value: float) -> str:
    """A value as the user wrote it: 373.15 stays 373.15, 1000.0 is 1000."""
    v = float(value)
    if math.isnan(v):
        return "-"
    text = f"{v:.{EXACT_DIGITS}g}"
    if "e" not in text:
        return text
    return format_number(v, 6)


def format_cell(value: Any, exact: bool = False) -> str:
    """A table cell: text as it is, numbers rounded (or as written with ``exact``)."""
    if value is None:
        return "-"
    if isinstance(value, str):
        return value
    if isinstance(value, bool):
        return "1" if value else "0"
    try:
        f = float(value)
    except (TypeError, ValueError):
        return str(value)
    if isinstance(value, int) or (hasattr(value, "dtype") and value.dtype.kind in "iu"):
        return str(int(value))
    return _as_written(f) if exact else format_number(f)


def _exact_column(header: str) -> bool:
    """Columns shown as written: temperatures (``T [K]``, ``T``)."""
    h = header.strip()
    return h == "T" or h.startswith(("T [", "T ("))


def _rows_shown(n: int, most: int) -> tuple[list[int], int]:
    """Indices shown (head and tail) and the number left out (in the middle)."""
    if n <= most + 2:  # hiding one or two rows helps nobody
        return list(range(n)), 0
    head = (most + 1) // 2
    tail = most - head
    return [*range(head), *range(n - tail, n)], n - most


def table_text(headers: Sequence[str], rows: Sequence[Sequence[Any]], *, max_rows: int = 12,
               source: str | None = None, hidden_columns: Sequence[str] = (),
               width: int | None = None, color: bool = False) -> str:
    """The table as text (what :func:`print_table` prints)."""
    import io

    buf = io.StringIO()
    _render(buf, headers, rows, max_rows, source, hidden_columns, width, color)
    return buf.getvalue()


def print_table(headers: Sequence[str], rows: Sequence[Sequence[Any]], *, max_rows: int = 12,
                source: str | None = None, hidden_columns: Sequence[str] = (),
                stream=None) -> None:
    """Print an aligned table; long tables show head and tail and say what was left out.

    Parameters
    ----------
    headers : sequence of str
    rows : sequence of sequences
        Cells: text, numbers (rounded to four significant figures; temperature columns as
        written), None (``-``).
    max_rows : int
        At most this many data rows are shown; the others are announced in one line.
    source : str, optional
        The file that holds every row, named when rows or columns are left out.
    hidden_columns : sequence of str
        Columns of that file not shown here (named in one line).
    stream : file, optional
        Default: standard output.
    """
    stream = stream or sys.stdout
    tty = bool(getattr(stream, "isatty", lambda: False)())
    _render(stream, headers, rows, max_rows, source, hidden_columns, None, tty)


def _render(stream, headers, rows, max_rows, source, hidden_columns, width, color) -> None:
    from rich import box
    from rich.console import Console
    from rich.table import Table
    from rich.text import Text

    rows = list(rows)
    shown, left_out = _rows_shown(len(rows), max_rows)
    exact = [_exact_column(h) for h in headers]
    table = Table(box=box.SIMPLE_HEAD, show_edge=False, pad_edge=False, header_style="bold",
                  highlight=False)
    for j, h in enumerate(headers):
        text = all(isinstance(rows[i][j], str) for i in shown) and bool(shown)
        table.add_column(Text(h), justify="left" if text else "right", no_wrap=True,
                         overflow="fold")
    head = (max_rows + 1) // 2 if left_out else len(shown)
    for k, i in enumerate(shown):
        if left_out and k == head:
            table.add_row(*["…"] * len(headers), style="dim")
        table.add_row(*[Text(format_cell(v, exact[j])) for j, v in enumerate(rows[i])])
    console = Console(file=stream, width=width or (None if color else 100_000),
                      force_terminal=color, no_color=not color, highlight=False,
                      soft_wrap=False)
    console.print(table)
    notes = []
    if left_out:
        first = shown[head - 1] + 2
        notes.append(f"… {left_out} more row{'s' if left_out != 1 else ''} (rows {first} to "
                     f"{first + left_out - 1} of {len(rows)}) …"
                     + (f"; all {len(rows)} rows in {source}" if source else ""))
    if hidden_columns:
        names = ", ".join(h.split(" [")[0] for h in hidden_columns)
        notes.append(f"more columns{' in ' + source if source else ''}: {names}")
    for note in notes:
        console.print(note, style="dim", markup=False)
