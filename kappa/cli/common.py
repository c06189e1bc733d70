"""Shared pieces of the command line: error handling, warnings, progress, terminal tables.

One error family, end to end: every failure of a command ends with exit status 2 and one
``error: ...`` line on stderr. A :class:`~kappa.errors.KappaError` (bad input) names the key,
the value and what is allowed; anything else that escapes a command (an overflow, a file that
cannot be written, a numba error, ...) is caught by the safety net of :func:`handles_errors`,
which names the command and the exception and suggests ``--debug`` (which shows the full
traceback instead). Each :class:`~kappa.errors.KappaWarning` is printed once as
``warning: ...`` and recorded for ``run.json`` (:func:`kappa.io.records.collect_warnings`).
"""

from __future__ import annotations

import functools
import os
import sys
import time
from collections.abc import Callable, Sequence
from typing import Any, TypeVar

import typer

from kappa.errors import KappaError, KappaWarning

F = TypeVar("F", bound=Callable[..., Any])

CAUTION = (
    "Results are model estimates. Before they feed any device's thermal design, validate them "
    "by measurement and defer to the applicable codes and licensed engineering practice."
)

_state: dict[str, Any] = {"debug": False, "depth": 0}
_printed: set[str] = set()  # warnings printed during the current command

#: Unexpected exceptions the safety net explains in plain words (others by their name).
_PLAIN = {
    MemoryError: "ran out of memory (try a smaller input or fewer draws/points)",
    RecursionError: "an input is nested too deeply",
    OverflowError: "a number grew too large",
    ZeroDivisionError: "a division by zero",
    FloatingPointError: "a floating-point error",
    UnicodeDecodeError: "a file is not UTF-8 text",
}


def set_debug(flag: bool) -> None:
    _state["debug"] = flag


def debug() -> bool:
    return _state["debug"]


def echo_err(message: str) -> None:
    typer.echo(message, err=True)


def _one_line(text: str, limit: int = 300) -> str:
    text = " ".join(str(text).split())
    return text if len(text) <= limit else text[: limit - 3] + "..."


def unexpected_message(command: str, exc: BaseException) -> str:
    """The one line for an exception that is not a :class:`KappaError`."""
    command = f"kappa {command}" if command else "kappa"
    if isinstance(exc, OSError) and not isinstance(exc, UnicodeError):
        what = exc.strerror or type(exc).__name__
        where = f" {exc.filename}" if exc.filename else ""
        other = f" -> {exc.filename2}" if getattr(exc, "filename2", None) else ""
        return _one_line(f"{command}: cannot read or write{where}{other}: {what} "
                         f"({type(exc).__name__}); rerun with --debug for the traceback")
    plain = next((text for cls, text in _PLAIN.items() if isinstance(exc, cls)), None)
    detail = f"{type(exc).__name__}: {exc}" if str(exc) else type(exc).__name__
    lead = f"{plain} ({detail})" if plain else f"unexpected {detail}"
    return _one_line(f"{command} stopped: {lead}; rerun with --debug for the full "
                     "traceback")


def _passes_through(exc: BaseException) -> bool:
    """Exceptions of the command-line library itself (exit, abort, usage errors)."""
    return isinstance(exc, (typer.Exit, typer.Abort)) or type(exc).__module__.startswith(
        ("click", "typer"))


def handles_errors(func: F | None = None, *, command: str | None = None) -> Any:
    """Run a command: every failure -> one ``error:`` line and exit status 2; warnings -> stderr.

    ``command`` names the command in messages (default: the function name without a
    ``_command`` suffix). With ``--debug`` errors propagate with their traceback.
    """
    if func is None:
        return functools.partial(handles_errors, command=command)
    name = command or func.__name__.strip("_").removesuffix("_command")

    @functools.wraps(func)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        if not _state["depth"]:
            _printed.clear()  # a new command: its warnings are printed again
        _state["depth"] += 1
        from kappa.io.records import collect_warnings

        with collect_warnings() as caught:
            try:
                return func(*args, **kwargs)
            except KappaError as exc:
                _flush_warnings(caught)
                if debug():
                    raise
                echo_err(f"error: {_one_line(str(exc), 2000)}")
                raise typer.Exit(2) from None
            except Exception as exc:
                if _passes_through(exc):
                    raise
                _flush_warnings(caught)
                if debug():
                    raise
                echo_err(f"error: {unexpected_message(name, exc)}")
                raise typer.Exit(2) from None
            finally:
                _flush_warnings(caught)
                _state["depth"] -= 1
                if not _state["depth"] and "kappa.cli.figures" in sys.modules:
                    sys.modules["kappa.cli.figures"].stop()  # however the command ended

    return wrapper


def show_warning(text: str) -> None:
    """Print a KappaWarning as ``warning: ...`` on stderr, once per command."""
    if text not in _printed:
        _printed.add(text)
        echo_err(f"warning: {_one_line(text, 2000)}")


def _flush_warnings(caught: list) -> None:
    for w in caught:
        if issubclass(w.category, KappaWarning):
            show_warning(str(w.message))
        elif debug():
            echo_err(f"warning: {w.message}")
    caught.clear()


#: What ``--format`` accepts: table formats and figure formats.
TABLE_FORMATS = ("csv", "parquet")
FIGURE_FORMATS = ("png", "svg", "pdf")
FORMAT_HELP = ("Files to write, comma-separated: tables csv or parquet, figures png, svg, pdf "
               "(default csv,png,svg; a kind not named keeps its default).")
STYLE_HELP = "Figure style: paper (print) or talk (larger text and lines for slides)."


def parse_formats(text: str | None, tables: Sequence[str] = ("csv",)
                  ) -> tuple[list[str], list[str]]:
    """``--format csv,pdf`` → (table formats, figure formats); each kind keeps its default
    (csv; png and svg) when none of its formats is named. ``tables`` lists what the command
    can write (``parquet`` only where offered)."""
    from kappa.errors import ConfigError

    if text is None or not text.strip():
        return ["csv"], ["png", "svg"]
    items = [t.strip().lower().lstrip(".") for t in text.split(",") if t.strip()]
    allowed = [*tables, *FIGURE_FORMATS]
    for item in items:
        if item not in allowed:
            raise ConfigError("--format", item, f"a comma list of {', '.join(allowed)}")
    table = [t for t in dict.fromkeys(items) if t in TABLE_FORMATS] or ["csv"]
    figure = [t for t in dict.fromkeys(items) if t in FIGURE_FORMATS] or ["png", "svg"]
    if "parquet" in table:
        from kappa.io.tables import parquet_library

        parquet_library()
    return table, figure


def use_style(name: str) -> None:
    """Apply the figure style ``paper`` or ``talk`` for this command."""
    from kappa.errors import ConfigError

    if name not in ("paper", "talk"):
        raise ConfigError("--style", name, "paper or talk")
    from kappa.presentation.style import use

    use(name)


def quiet_matplotlib_config() -> None:
    """Give matplotlib a writable configuration folder before it is imported.

    Without one (a home folder that cannot be written) matplotlib prints two lines of its own
    on every run; kappa then uses a folder in its cache, or a temporary one.
    """
    if os.environ.get("MPLCONFIGDIR") or "matplotlib" in sys.modules:
        return
    from kappa.core.cache import cache_root, writable_folder

    base = os.environ.get("XDG_CONFIG_HOME") or os.path.join(os.path.expanduser("~"), ".config")
    if writable_folder(os.path.join(base, "matplotlib")):
        return
    root, _ = cache_root()
    folder = os.path.join(root, "matplotlib") if root else ""
    if not writable_folder(folder):
        import atexit
        import shutil
        import tempfile

        folder = tempfile.mkdtemp(prefix="kappa-matplotlib-")
        atexit.register(shutil.rmtree, folder, ignore_errors=True)
    os.environ["MPLCONFIGDIR"] = folder


class Bar:
    """A simple progress bar on stderr, drawn only on a terminal and only after one second.

    Call it as ``bar(done, total)``; it is a no-op when stderr is not a terminal.
    """

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
        sys.stderr.write(f"\r{self.label} [{'#' * fill}{'.' * (width - fill)}] "
                         f"{100 * frac:5.1f} % {elapsed:6.1f} s")
        if done >= total:
            sys.stderr.write("\n")
        sys.stderr.flush()


def print_table(headers: Sequence[str], rows: Sequence[Sequence[Any]], *, max_rows: int = 12,
                source: str | None = None, hidden_columns: Sequence[str] = (),
                stream=None) -> None:
    """Print a table on the terminal: the one way every command prints tables.

    Long tables show their first and last rows and one line ``… N more rows …``, and name
    ``source`` (the file that holds them all); see :func:`kappa.presentation.terminal.
    print_table`.
    """
    from kappa.presentation.terminal import print_table as _print

    _print(headers, rows, max_rows=max_rows, source=source, hidden_columns=hidden_columns,
           stream=stream)
