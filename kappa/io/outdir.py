"""Output folders that are written whole or not at all.

A command writes into a hidden sibling folder; only when everything is written is it renamed to
the requested name. An existing folder is replaced only with ``force``; a folder that holds one
of the inputs is never replaced.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import os
import shutil
import tempfile
from collections.abc import Iterator, Sequence
from pathlib import Path

from kappa.errors import KappaError

__all__ = ["default_out", "output_folder", "check_out"]


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


def check_out(out: str | Path, *, force: bool, inputs: Sequence[str | Path] = ()) -> Path:
    """Check that ``out`` may be written; raise :class:`KappaError` (option ``--out``) if not."""
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise KappaError("--out", str(out), "is a file; give a folder name")
    if out.exists() and not force:
        raise KappaError("--out", str(out),
                         "already exists; choose another folder or add --force to replace it")
    resolved = out.resolve()
    for item in inputs:
        p = Path(item).resolve()
        if p == resolved or resolved in p.parents:
            raise KappaError("--out", str(out),
                             f"holds the input {item}; inputs are never replaced, choose "
                             "another folder")
    return out


@contextlib.contextmanager
def output_folder(out: str | Path, *, force: bool = False,
                  inputs: Sequence[str | Path] = ()) -> Iterator[Path]:
    """Yield a temporary folder; on success move it to ``out`` (replacing it only if ``force``).

    On any exception the temporary folder is removed and ``out`` is left as it was.
    """
    out = check_out(out, force=force, inputs=inputs)
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.partial-", dir=out.parent))
    try:
        yield tmp
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    umask = os.umask(0)
    os.umask(umask)
    tmp.chmod(0o777 & ~umask)  # mkdtemp makes 0700; give the folder the usual permissions
    if out.exists():
        shutil.rmtree(out)
    tmp.rename(out)
