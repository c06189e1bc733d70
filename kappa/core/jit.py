"""The compile cache of the numba kernels, and the decorator the kernels use.

numba can keep compiled kernels on disk so that only the first run on a machine pays for the
compilation. By default numba writes that cache beside the source (``__pycache__`` of the
installed package), which puts files an installer does not know about into ``site-packages``
and fails on a read-only install. kappa therefore points numba at a folder of its own:

1. ``NUMBA_CACHE_DIR``, when the user has set it (kappa never overrides it);
2. else ``KAPPA_CACHE_DIR/numba`` (kappa's own setting);
3. else the user's cache folder from :mod:`platformdirs`, e.g. ``~/.cache/kappa`` on Linux
   (see :mod:`kappa.core.cache`); the kernels go into its sub-folder ``numba``.

The folder is created if needed and tried with a temporary file. When it cannot be written,
the kernels are compiled in memory on every run (slower start, same results) and one
:class:`~kappa.errors.KappaWarning` says so. numba reads ``NUMBA_CACHE_DIR`` only when it is
first imported, so this module sets it before importing numba; if numba was imported earlier,
its configuration is updated directly.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Callable
from typing import Any

from kappa.core.cache import CACHE_ENV, cache_root, writable_folder
from kappa.errors import warn

__all__ = ["jit", "prange", "cache_folder", "CACHE_ENV"]


def _candidate() -> tuple[str, str]:
    """The folder to use and where that choice came from (for messages)."""
    user = os.environ.get("NUMBA_CACHE_DIR", "")
    if user:
        return user, "NUMBA_CACHE_DIR"
    root, origin = cache_root()
    return (os.path.join(root, "numba") if root else ""), origin


def _configure() -> str | None:
    """Decide the cache folder, tell numba, and return it (None: no writable folder)."""
    path, origin = _candidate()
    if not writable_folder(path):
        shown = f" ({path})" if path else ""
        warn(f"no writable folder for the compile cache{shown}, chosen by {origin}: the kernels "
             f"are compiled on every run (set {CACHE_ENV} to a writable folder to keep them)")
        return None
    if "numba" not in sys.modules:
        if origin != "NUMBA_CACHE_DIR":
            os.environ["NUMBA_CACHE_DIR"] = path
    else:  # numba was imported before kappa: its configuration is already read
        from numba.core import config

        if not config.CACHE_DIR:
            config.CACHE_DIR = path
    return path


_FOLDER = _configure()

from numba import njit, prange  # noqa: E402  (only now: numba reads its cache setting on import)


def cache_folder() -> str | None:
    """The folder holding kappa's compiled kernels, or None when they are not cached."""
    return _FOLDER


def jit(**options: Any) -> Callable[[Callable], Callable]:
    """``numba.njit(**options)`` with the compile cache decided by this module.

    Parameters
    ----------
    **options
        Passed to :func:`numba.njit` (e.g. ``parallel=True``, ``fastmath={...}``); ``cache``
        is set here: on when a writable cache folder exists, off otherwise.
    """
    return njit(cache=_FOLDER is not None, **options)
