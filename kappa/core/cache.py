"""Where kappa keeps files that only save time (compiled kernels, the units table).

The folder is ``KAPPA_CACHE_DIR`` when that environment variable is set, else the user's
cache folder from :mod:`platformdirs` (``~/.cache/kappa`` on Linux,
``~/Library/Caches/kappa`` on macOS, ``%LOCALAPPDATA%\\kappa\\Cache`` on Windows). Nothing in
it is needed: when it cannot be written, kappa runs without it.
"""

from __future__ import annotations

import os
import tempfile

__all__ = ["CACHE_ENV", "cache_root", "writable_folder"]

#: Environment variable that chooses kappa's cache folder.
CACHE_ENV = "KAPPA_CACHE_DIR"


def cache_root() -> tuple[str, str]:
    """kappa's cache folder and where that choice came from (for messages)."""
    own = os.environ.get(CACHE_ENV, "")
    if own:
        return own, CACHE_ENV
    try:
        from platformdirs import user_cache_dir
    except ImportError:  # pragma: no cover - platformdirs is a dependency
        return "", "the user's cache folder (platformdirs is not installed)"
    return user_cache_dir("kappa", appauthor=False), "the user's cache folder"


def writable_folder(path: str) -> bool:
    """Create ``path`` if needed and try a temporary file in it; False if that fails."""
    if not path:
        return False
    try:
        os.makedirs(path, exist_ok=True)
        tempfile.TemporaryFile(dir=path).close()
    except (OSError, ValueError):  # ValueError: a path with a NUL byte
        return False
    return True
