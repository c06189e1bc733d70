"""Shared pieces of the command line: error handling, warnings, terminal tables."""

from __future__ import annotations

import functools
import sys
import time
import warnings
from collections.abc import Callable, Sequence
from typing import Any, TypeVar

import typer

from kappa.errors import KappaError, KappaWarning

F = TypeVar("F", bound=Callable[..., Any])

CAUTION = (
    "Results are model estimates. Before they feed any device's thermal design, validate them "
    "by measurement and defer to the applicable codes and licensed engineering practice."
)

_state = {"debug": False}


def set_debug(flag: bool) -> None:
    _state["debug"] = flag


def debug() -> bool:
    return _state["debug"]


def echo_err(message: str) -> None:
    typer.echo(message, err=True)


def handles_errors(func: F) -> F:
    """Run a command: KappaError -> one line on stderr and exit status 2; warnings -> stderr.

    With ``--debug`` the error propagates with its traceback.
    """

    @functools.wraps(func)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", KappaWarning)
            try:
                return func(*args, **kwargs)
            except KappaError as exc:
                _flush_warnings(caught)
                caught.clear()
                if debug():
                    raise
                echo_err(f"error: {exc}")
                raise typer.Exit(2) from None
            finally:
                _flush_warnings(caught)

    return wrapper  # type: ignore[return-value]


def _flush_warnings(caught: list) -> None:
    seen: set[str] = set()
    for w in caught:
        if issubclass(w.category, KappaWarning):
            text = str(w.message)
            if text not in seen:
                seen.add(text)
                echo_err(f"warning: {text}")
        elif debug():
            echo_err(f"warning: {w.message}")
    caught.clear()


def print_table(headers: Sequence[str], rows: Sequence[Sequence[Any]], *, max_rows: int = 12,
                stream=None) -> None:
    """Print a small aligned table; long tables are thinned to about ``max_rows`` rows."""
    stream = stream or sys.stdout
    rows = list(rows)
    if len(rows) > max_rows:
        step = (len(rows) - 1) / (max_rows - 1)
        rows = [rows[round(i * step)] for i in range(max_rows)]
    cells = [[_cell(v) for v in row] for row in rows]
    widths = [max(len(h), *(len(r[i]) for r in cells)) if cells else len(h)
              for i, h in enumerate(headers)]
    line = "  ".join(h.rjust(w) for h, w in zip(headers, widths, strict=True))
    print(line, file=stream)
    print("  ".join("-" * w for w in widths), file=stream)
    for r in cells:
        print("  ".join(c.rjust(w) for c, w in zip(r, widths, strict=True)), file=stream)


def _cell(v: Any) -> str:
    if isinstance(v, str):
        return v
    try:
        f = float(v)
    except (TypeError, ValueError):
        return str(v)
    if f != f:
        return "-"
    return f"{f:.4g}"


class ProgressBar:
    """A simple progress bar on stderr, drawn only on a terminal and only after one second."""

    def __init__(self, label: str = "") -> None:
        self.label = label
        self.start = time.perf_counter()
        self.shown = False
        self.tty = sys.stderr.isatty()

    def __call__(self, done: int, total: int) -> None:
        if not self.tty or total <= 0:
            return
        elapsed = time.perf_counter() - self.start
        if elapsed < 1.0 and not self.shown:
            return
        self.shown = True
        frac = done / total
        width = 30
        fill = int(round(frac * width))
        sys.stderr.write(f"\r{self.label} [{'#' * fill}{'.' * (width - fill)}] {100 * frac:5.1f} % "
                         f"{elapsed:6.1f} s")
        if done >= total:
            sys.stderr.write("\n")
        sys.stderr.flush()
