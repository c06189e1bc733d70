"""Output folders that are written whole or not at all, and never replace a user's files.

A command writes into a hidden sibling folder (``.NAME.partial-XXXX``); only when everything is
written is it renamed to the requested name. If the run fails or is interrupted (Ctrl-C,
``SIGTERM``, ``SIGHUP``), the hidden folder is removed and nothing changes; a signal that
arrives while the finished folder is being moved into place waits until it is there.

Every folder kappa writes carries a mark: its run record :data:`MARK` (``run.json``) says
``"program": "kappa"`` and lists under ``output_files`` every other file kappa wrote there,
with its size (added when the folder is completed; a command that writes no run record gets a
minimal one). An existing folder is replaced only

* with ``force``, and
* when it carries the mark and holds nothing but the files listed in it, unchanged in size.

Any other folder is refused with one line naming what it holds that kappa did not write, so
that ``--force`` cannot delete a user's data. An empty existing folder is used as if it were
new. A folder that holds one of the inputs is never replaced. Missing parent folders of
``--out`` are created (and removed again if the run fails before anything is written).

Replacing is as atomic as a file system allows: the old folder is renamed away, the new one
renamed in, and only then is the old one deleted.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import json
import os
import shutil
import signal
import sys
import tempfile
import threading
from collections.abc import Iterator, Sequence
from pathlib import Path

from kappa.errors import KappaError

__all__ = ["default_out", "output_folder", "check_out", "foreign_content", "Interrupted",
           "MARK", "FILES_KEY"]

#: The run record that marks every output folder kappa writes (and lists its files).
MARK = "run.json"
#: Key of the list of written files (relative path -> size in bytes) in the mark.
FILES_KEY = "output_files"

_SHOWN = 5  # foreign entries named in a message


class Interrupted(BaseException):
    """SIGTERM or SIGHUP stopped the run while an output folder was written.

    ``signum`` is the signal number; the command line exits with status 128 + signum. (Like
    :class:`KeyboardInterrupt`, which SIGINT raises, it is not an :class:`Exception`, so that
    nothing on the way mistakes it for an error to handle.)
    """

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum


def default_out(beside: str | Path, command: str) -> Path:
    """A new folder next to ``beside`` named after its stem, the command and a time stamp."""
    beside = Path(beside)
    stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    base = beside.parent / f"{beside.stem}-{command}-{stamp}"
    out, k = base, 1
    while out.exists():
        k += 1
        out = base.with_name(f"{base.name}-{k}")
    return out


def _written(folder: Path) -> dict[str, int]:
    """Relative path -> size of every file below ``folder`` (symbolic links not followed)."""
    files: dict[str, int] = {}
    for root, _dirs, names in os.walk(folder):
        for name in names:
            p = Path(root, name)
            files[p.relative_to(folder).as_posix()] = p.lstat().st_size
    return files


def _read_mark(folder: Path) -> dict[str, int] | None:
    """The files listed in the folder's mark, or None if it has no valid mark."""
    try:
        data = json.loads((folder / MARK).read_text(encoding="utf-8"))
        files = data[FILES_KEY]
        if data.get("program") != "kappa" or not isinstance(files, dict):
            return None
        return {str(k): int(v) for k, v in files.items()}
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return None


def foreign_content(folder: str | Path) -> tuple[list[str], list[str]]:
    """What in ``folder`` kappa did not write, and what kappa wrote but was changed since.

    Returns
    -------
    (list of str, list of str)
        Foreign entries (relative paths; folders end in ``/`` and are not descended into when
        they hold nothing kappa wrote) and files whose size differs from the mark. Without a
        valid mark, every entry is foreign.
    """
    folder = Path(folder)
    listed = _read_mark(folder)
    mark = listed or {}
    dirs_of_mark = {Path(p).parent.as_posix() for p in mark} | {
        parent.as_posix() for p in mark for parent in Path(p).parents}
    foreign: list[str] = []
    changed: list[str] = []
    for root, dirs, names in os.walk(folder):
        rel_root = Path(root).relative_to(folder)
        for d in sorted(dirs):
            rel = (rel_root / d).as_posix()
            if rel not in dirs_of_mark or Path(root, d).is_symlink():
                foreign.append(rel + "/")
                dirs.remove(d)
        for name in sorted(names):
            rel = (rel_root / name).as_posix()
            if rel == MARK and listed is not None:
                continue
            if rel not in mark:
                foreign.append(rel)
            elif Path(root, name).lstat().st_size != mark[rel]:
                changed.append(rel)
    return foreign, changed


def _legacy(folder: Path) -> bool:
    """A run record of kappa without the list of written files."""
    try:
        data = json.loads((folder / MARK).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return False
    return isinstance(data, dict) and data.get("program") == "kappa" and FILES_KEY not in data


def _listing(items: list[str]) -> str:
    shown = ", ".join(items[:_SHOWN])
    return shown + (f" and {len(items) - _SHOWN} more" if len(items) > _SHOWN else "")


def _nearest_existing(path: Path) -> Path:
    for p in (path, *path.parents):
        if p.exists():
            return p
    return Path(".")


def check_out(out: str | Path, *, force: bool, inputs: Sequence[str | Path] = ()) -> Path:
    """Check that ``out`` may be written; raise :class:`KappaError` (option ``--out``) if not."""
    out = Path(out)
    if out.is_symlink():
        raise KappaError("--out", str(out), "is a symbolic link; give a folder name")
    if out.exists() and not out.is_dir():
        raise KappaError("--out", str(out), "is a file; give a folder name")
    base = _nearest_existing(out.parent)
    if not base.is_dir():
        raise KappaError("--out", str(out), f"{base} is a file, not a folder; give a folder "
                         "name")
    if not os.access(base, os.W_OK | os.X_OK):
        raise KappaError("--out", str(out), f"cannot write in {base} (permission denied); "
                         "choose another folder")
    resolved = out.resolve()
    cwd = Path.cwd().resolve()
    if out.exists() and (resolved == cwd or resolved in cwd.parents):
        raise KappaError("--out", str(out), "is the current folder or holds it; choose another "
                         "folder")
    for item in inputs:
        p = Path(item).resolve()
        if p == resolved or resolved in p.parents:
            raise KappaError("--out", str(out),
                             f"holds the input {item}; inputs are never replaced, choose "
                             "another folder")
    if out.exists():
        if not force:
            raise KappaError("--out", str(out),
                             "already exists; choose another folder or add --force to replace "
                             "it (only a folder written by kappa is replaced)")
        foreign, changed = foreign_content(out)
        if foreign and _legacy(out):
            raise KappaError("--out", str(out), "was written by an older kappa that did not "
                             "list its files, so it is not replaced; delete it yourself or "
                             "choose another folder")
        if foreign:
            raise KappaError("--out", str(out), f"holds files kappa did not write "
                             f"({_listing(foreign)}); choose another folder")
        if changed:
            raise KappaError("--out", str(out), f"holds files changed since kappa wrote them "
                             f"({_listing(changed)}); choose another folder or move them")
    return out


@contextlib.contextmanager
def _signals_raise() -> Iterator[dict[str, object]]:
    """While the block runs, SIGINT raises KeyboardInterrupt and SIGTERM/SIGHUP Interrupted.

    Yields a state dict; while ``state["defer"]`` is true a signal is only remembered, and it
    is raised when the block ends. Signals the process ignores stay ignored. Outside the main
    thread nothing is installed (Python delivers signals to the main thread only).
    """
    state: dict[str, object] = {"defer": False, "pending": None}
    previous: dict[int, object] = {}

    def interrupt(signum: int) -> BaseException:
        return KeyboardInterrupt() if signum == signal.SIGINT else Interrupted(signum)

    def handle(signum, frame):
        if state["defer"]:
            state["pending"] = signum
            return
        raise interrupt(signum)

    if threading.current_thread() is threading.main_thread():
        for name in ("SIGINT", "SIGTERM", "SIGHUP"):
            sig = getattr(signal, name, None)
            if sig is None or signal.getsignal(sig) is signal.SIG_IGN:
                continue
            previous[sig] = signal.signal(sig, handle)
    try:
        yield state
    finally:
        for sig, old in previous.items():
            signal.signal(sig, old)
    if state["pending"] is not None:
        raise interrupt(int(state["pending"]))  # type: ignore[arg-type]


def _make_parents(parent: Path, out: Path) -> list[Path]:
    """Create missing parent folders; return those created (deepest last)."""
    missing = [p for p in (parent, *parent.parents) if not p.exists()][::-1]
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise KappaError("--out", str(out), f"cannot create the folder {parent} "
                         f"({exc.strerror or exc})") from None
    return missing


def _remove_created(created: list[Path]) -> None:
    for p in reversed(created):
        try:
            p.rmdir()
        except OSError:
            break


def _mark(tmp: Path) -> None:
    """Add the list of written files to the folder's run record (write a minimal one if none)."""
    from kappa.io.records import version, write_json

    files = _written(tmp)
    files.pop(MARK, None)
    record = None
    try:
        record = json.loads((tmp / MARK).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        pass
    if not isinstance(record, dict) or record.get("program") != "kappa":
        record = {"program": "kappa", "version": version(), "argv": ["kappa", *sys.argv[1:]]}
    record[FILES_KEY] = dict(sorted(files.items()))
    write_json(tmp / MARK, record)


def _commit(tmp: Path, out: Path, force: bool, inputs: Sequence[str | Path]) -> None:
    """Move the finished ``tmp`` to ``out``, replacing a kappa folder there if allowed."""
    check_out(out, force=force, inputs=inputs)  # again: the folder may have changed meanwhile
    umask = os.umask(0)
    os.umask(umask)
    tmp.chmod(0o777 & ~umask)  # mkdtemp makes 0700; give the folder the usual permissions
    if not out.exists():
        tmp.rename(out)
        return
    old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-", dir=out.parent))
    old.rmdir()
    out.rename(old)
    try:
        tmp.rename(out)
    except BaseException:
        old.rename(out)
        raise
    shutil.rmtree(old, ignore_errors=True)


@contextlib.contextmanager
def output_folder(out: str | Path, *, force: bool = False,
                  inputs: Sequence[str | Path] = ()) -> Iterator[Path]:
    """Yield a temporary folder; on success move it to ``out`` (replacing it only if allowed).

    On any exception, and on SIGINT (raised as KeyboardInterrupt) or SIGTERM/SIGHUP (raised as
    :class:`Interrupted`), the temporary folder is removed and ``out`` is left as it was. See the module docstring for
    when an existing folder is replaced.

    Raises
    ------
    KappaError
        Key ``--out``: the folder may not be replaced, or cannot be created or written.
    """
    out = check_out(out, force=force, inputs=inputs)
    created = _make_parents(out.parent, out)
    with _signals_raise() as state:
        tmp: Path | None = None
        try:
            try:
                tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.partial-", dir=out.parent))
            except OSError as exc:
                raise KappaError("--out", str(out), f"cannot write in {out.parent} "
                                 f"({exc.strerror or exc})") from None
            yield tmp
            _mark(tmp)
            state["defer"] = True
            _commit(tmp, out, force, inputs)
        except BaseException:
            if tmp is not None:
                shutil.rmtree(tmp, ignore_errors=True)
            if not out.exists():
                _remove_created(created)
            raise
