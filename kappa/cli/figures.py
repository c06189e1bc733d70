"""Figures drawn beside the computation: a worker process that loads matplotlib ahead.

Loading matplotlib takes about as long as a prediction, and drawing and saving a figure about
as long again; neither needs the other's results until the end. On Linux with two free cores,
the console entry point (:func:`kappa.cli.entry.run`) starts a :class:`FigureWorker` for a
command that draws (:data:`FIGURE_MODULES`) before it parses the command line: a forked
child imports matplotlib and the command's figure modules and draws one small figure (fonts and
the mathtext parser are then loaded) while the parent parses, reads the config and computes.
The command describes its figures as jobs (:meth:`kappa.cli.run.Run.figure_job`: a module, a
function and picklable arguments); :meth:`~kappa.cli.run.Run.finish` sends them to the
worker, writes the tables meanwhile, and waits for it before the hidden output folder is
renamed into place, so a run is still written whole or not at all. The worker draws the
figures and saves the files, about half of them in a forked helper (:class:`Saver`).

Everywhere else — one free core, another system, ``KAPPA_FIGURE_PROCESSES=1``, or a caller
that has loaded matplotlib already (the tests, which run commands in-process) — the jobs are
drawn in the command's own process, and :class:`Saver` still saves half of the files in a
forked helper where it can. The files are the same either way: a figure with an automatic
layout saves all its formats in one process, in the order given (the layout is computed for
the first format and kept).

Errors in the worker or the helper come back to the parent as the exception itself (when it
pickles; else a :class:`FigureError` naming it); the command then ends with the same one
``error:`` line as when drawing in-process, and nothing is written. The parent ends its children (SIGKILL, then ``waitpid``) when
the command ends in any way; a child whose parent dies is killed by the system (Linux
``PR_SET_PDEATHSIG``) or, waiting for jobs, reads the end of its pipe and leaves.
"""

from __future__ import annotations

import os
import pickle
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

__all__ = ["FIGURE_MODULES", "FigureError", "FigureWorker", "Saver", "draw", "parallel_figures",
           "start", "stop", "worker"]

#: Commands whose figures a worker draws, with the figure modules it loads ahead.
FIGURE_MODULES: dict[str, tuple[str, ...]] = {
    "predict": ("kappa.presentation.predict",),
    "sweep": ("kappa.presentation.sweep",),
    "spectrum": ("kappa.presentation.sweep",),
}

#: A figure job: (module, function, args, kwargs, stem, formats); stem relative to the folder.
Job = tuple[str, str, tuple, dict, str, tuple[str, ...]]


class FigureError(RuntimeError):
    """Drawing or saving a figure failed in another process (the message names the cause)."""


def parallel_figures() -> bool:
    """True where figures may be drawn and saved in other processes (Linux, two cores)."""
    if os.environ.get("KAPPA_FIGURE_PROCESSES") == "1" or not sys.platform.startswith("linux"):
        return False
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else 1
    return cores >= 2


_state: dict[str, FigureWorker] = {}


def start(argv: Sequence[str]) -> FigureWorker | None:
    """Start the worker for the command named in ``argv`` where it helps: a command that
    draws, two free cores on Linux, and matplotlib not loaded yet (an in-process caller such
    as the tests has nothing to gain). Called by :func:`kappa.cli.entry.run` first thing."""
    if "worker" in _state:
        return _state["worker"]
    command = next((a for a in argv if not a.startswith("-")), None)  # the command's name
    if (command not in FIGURE_MODULES or "--help" in argv or "matplotlib" in sys.modules
            or not parallel_figures()):
        return None
    _state["worker"] = FigureWorker(FIGURE_MODULES[command])
    return _state["worker"]


def worker() -> FigureWorker | None:
    """The worker started for this command, or None."""
    return _state.get("worker")


def stop() -> None:
    """End the worker, if any (it takes one batch of jobs; ended however the command ends)."""
    w = _state.pop("worker", None)
    if w is not None:
        w.stop()


# --- the two ends of a pipe -----------------------------------------------------------------


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        view = view[os.write(fd, view):]


def _read_all(fd: int) -> bytes:
    chunks = []
    while chunk := os.read(fd, 1 << 20):
        chunks.append(chunk)
    return b"".join(chunks)


def _failure(exc: BaseException) -> bytes:
    """The report of a failed child: the exception itself when it pickles, and its text."""
    text = f"{type(exc).__name__}: {exc}"[:2000]
    try:
        data = pickle.dumps(exc)
        pickle.loads(data)
    except Exception:  # noqa: BLE001 - the text alone then
        data = None
    return b"E" + pickle.dumps((text, data))


def _raise_failure(message: bytes, what: str) -> None:
    """Raise what a child reported (nothing for ``ok``)."""
    if message == b"ok":
        return
    if message.startswith(b"E"):
        try:
            text, data = pickle.loads(message[1:])
        except Exception:  # noqa: BLE001 - a damaged report
            text, data = message[1:200].decode(errors="replace"), None
        exc = pickle.loads(data) if data is not None else None
        if isinstance(exc, Exception):  # as if drawn here: the same one-line message
            raise exc
        raise FigureError(f"{what} failed: {text}")
    raise FigureError(f"{what} failed: the process ended without a report")


def _die_with_parent() -> None:
    """Linux: be killed when the parent process ends (no orphan keeps drawing)."""
    try:
        import ctypes
        import signal

        ctypes.CDLL(None, use_errno=True).prctl(1, int(signal.SIGKILL))  # PR_SET_PDEATHSIG
    except Exception:  # noqa: BLE001 - only a safeguard
        pass


def _end(pid: int) -> None:
    """Kill and reap a child (no zombie is left)."""
    import signal

    try:
        os.kill(pid, signal.SIGKILL)
    except OSError:
        pass
    try:
        os.waitpid(pid, 0)
    except OSError:
        pass


# --- the worker -----------------------------------------------------------------------------


class FigureWorker:
    """A forked child that loads matplotlib ahead, then draws and saves the jobs it is sent.

    Parameters
    ----------
    modules : sequence of str
        Figure modules the child imports ahead (``kappa.presentation.predict``).
    """

    def __init__(self, modules: Sequence[str]) -> None:
        self.pid = 0
        self.jobs_fd = self.result_fd = -1
        self._sender = None
        self._send_error: BaseException | None = None
        jobs_r, jobs_w = os.pipe()
        result_r, result_w = os.pipe()
        sys.stdout.flush()
        sys.stderr.flush()
        pid = os.fork()
        if pid == 0:  # pragma: no cover - the child, which leaves by os._exit
            os.close(jobs_w)
            os.close(result_r)
            _child(jobs_r, result_w, list(modules))
        os.close(jobs_r)
        os.close(result_w)
        self.pid, self.jobs_fd, self.result_fd = pid, jobs_w, result_r

    @property
    def ready(self) -> bool:
        """True while the child waits for its jobs (it takes one batch)."""
        return self.pid != 0 and self.jobs_fd >= 0

    def send(self, style: str, folder: Path, jobs: list[Job]) -> None:
        """Send the jobs (files in ``folder``, figures in ``style``); the pipe is written by a
        thread, so that the command goes on while the child is still loading."""
        import threading

        data = pickle.dumps((style, str(folder), jobs), protocol=pickle.HIGHEST_PROTOCOL)
        fd, self.jobs_fd = self.jobs_fd, -1

        def write() -> None:
            try:
                _write_all(fd, data)
            except BaseException as exc:  # noqa: BLE001 - reported by wait()
                self._send_error = exc
            finally:
                os.close(fd)

        self._sender = threading.Thread(target=write, name="kappa-figure-jobs", daemon=True)
        self._sender.start()

    def wait(self) -> None:
        """Wait until every file is saved; the child's error is raised here."""
        message = _read_all(self.result_fd)
        os.close(self.result_fd)
        self.result_fd = -1
        if self._sender is not None:
            self._sender.join()
        os.waitpid(self.pid, 0)
        self.pid = 0
        _raise_failure(message, "drawing the figures")
        if self._send_error is not None:
            raise self._send_error

    def stop(self) -> None:
        """End the child if it is still there (the command ended without it, or failed)."""
        for fd in (self.jobs_fd, self.result_fd):
            if fd >= 0:
                try:
                    os.close(fd)
                except OSError:
                    pass
        self.jobs_fd = self.result_fd = -1
        if self.pid:
            _end(self.pid)
            self.pid = 0
        if self._sender is not None:
            self._sender.join(timeout=5)
            self._sender = None


def _child(jobs_fd: int, result_fd: int, modules: list[str]) -> None:  # pragma: no cover
    """The worker: load matplotlib, wait for the jobs, draw, save, report, leave."""
    import signal

    code = 0
    try:
        signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent handles Ctrl-C and ends us
        _die_with_parent()
        import importlib

        from kappa.presentation import style

        style.load()
        for name in modules:
            importlib.import_module(name)
        import select

        if not select.select([jobs_fd], [], [], 0)[0]:  # the jobs are not there yet
            style.warm_up()
        data = _read_all(jobs_fd)
        if data:  # nothing: the command ended without figures
            style, folder, jobs = pickle.loads(data)
            saver = Saver(draw(jobs, Path(folder), style))
            try:
                saver.save_own()
                saver.wait()
            finally:
                saver.stop()
            _write_all(result_fd, b"ok")
    except BaseException as exc:  # noqa: BLE001 - reported to the parent
        code = 1
        try:
            _write_all(result_fd, _failure(exc))
        except BaseException:  # noqa: BLE001 - the parent is gone
            pass
    finally:
        os._exit(code)


def draw(jobs: Sequence[Job], folder: Path, style: str | None = None
         ) -> list[tuple[Any, Path, str]]:
    """Make the figures of ``jobs`` (in ``style``, default the current one); returns one
    ``(figure, stem path, format)`` per file."""
    import importlib

    from kappa.presentation import style as figure_style

    if style is not None:
        figure_style.use(style)
    files = []
    for module, function, args, kwargs, stem, formats in jobs:
        fig = getattr(importlib.import_module(module), function)(*args, **kwargs)
        files.extend((fig, folder / stem, fmt) for fmt in formats)
    return files


# --- saving in two processes ----------------------------------------------------------------


class Saver:
    """Figure files saved in two processes when two cores are free (Linux, fork).

    matplotlib draws in one thread, so a second core helps only from a second process: a
    forked helper saves some of the files (it shares the figures as they are in memory) and
    leaves; this process saves the others (:meth:`save_own`) and waits for it (:meth:`wait`).
    Make the Saver before starting other threads. A PNG counts as twice an SVG or PDF; the
    files of a figure with an automatic layout stay together and in order, so that each file
    is the same as when everything is saved in one process.
    """

    def __init__(self, files: list[tuple[Any, Path, str]]) -> None:
        self.pid = 0
        self.read_fd = -1
        self.own = list(files)
        if len(files) < 2 or not parallel_figures():
            return
        groups: dict[int, list] = {}
        units = []
        for item in files:
            fig = item[0]
            if fig.get_layout_engine() is not None:
                if id(fig) not in groups:
                    groups[id(fig)] = []
                    units.append(groups[id(fig)])
                groups[id(fig)].append(item)
            else:
                units.append([item])
        if len(units) < 2:
            return
        cost = [sum(2.0 if fmt == "png" else 1.0 for _, _, fmt in unit) for unit in units]
        mine, theirs, a, b = [], [], 0.0, 0.0
        for i in sorted(range(len(units)), key=lambda i: -cost[i]):
            if a <= b:
                mine.extend(units[i])
                a += cost[i]
            else:
                theirs.extend(units[i])
                b += cost[i]
        read_fd, write_fd = os.pipe()
        sys.stdout.flush()
        sys.stderr.flush()
        pid = os.fork()
        if pid == 0:  # pragma: no cover - the helper, which leaves by os._exit
            os.close(read_fd)
            code = 0
            try:
                _die_with_parent()
                _save(theirs)
                _write_all(write_fd, b"ok")
            except BaseException as exc:  # noqa: BLE001 - reported to the parent
                code = 1
                try:
                    _write_all(write_fd, _failure(exc))
                except BaseException:  # noqa: BLE001
                    pass
            finally:
                os._exit(code)
        os.close(write_fd)
        self.pid, self.read_fd, self.own = pid, read_fd, mine

    def save_own(self) -> None:
        _save(self.own)

    def wait(self) -> None:
        if not self.pid:
            return
        message = _read_all(self.read_fd)
        os.close(self.read_fd)
        self.read_fd = -1
        os.waitpid(self.pid, 0)
        self.pid = 0
        _raise_failure(message, "saving a figure")

    def stop(self) -> None:
        """On an error or interrupt: end the helper (it writes only into the hidden folder)."""
        if self.pid:
            _end(self.pid)
            self.pid = 0
        if self.read_fd >= 0:
            try:
                os.close(self.read_fd)
            except OSError:
                pass
            self.read_fd = -1


def _save(files: list[tuple[Any, Path, str]]) -> None:
    from kappa.presentation.style import save

    for fig, stem, fmt in files:
        save(fig, stem, (fmt,))
