"""Run records: ``run.json`` beside every output, and YAML dumping of configs.

A record holds the resolved inputs, the derived quantities, the package version, the command
line and the citations of the models used, so that a table can be traced back to its inputs:

* ``input_files``: path, size [bytes] and SHA-256 checksum of every input file, so that a
  record proves which file version it was made from;
* ``environment``: the versions of kappa, Python, numpy, scipy and numba (read from the
  package metadata; nothing is imported for it);
* ``warnings``: every :class:`~kappa.errors.KappaWarning` issued during the run, once each,
  collected by :func:`collect_warnings` (the command line wraps every command in it).
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import hashlib
import json
import math
import platform
import sys
import warnings
from collections.abc import Iterator, Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from kappa.errors import KappaWarning

__all__ = ["version", "run_record", "write_json", "dump_yaml", "to_plain", "file_record",
           "file_records", "environment", "collect_warnings", "issued_warnings",
           "model_summary"]

#: Distributions whose versions a record names (besides kappa and Python).
_LIBRARIES = ("numpy", "scipy", "numba")

_ACTIVE: list[list[warnings.WarningMessage]] = []


def _distribution_version(name: str) -> str | None:
    from importlib.metadata import PackageNotFoundError
    from importlib.metadata import version as _v

    try:
        return _v(name)
    except PackageNotFoundError:
        return None


def version() -> str:
    """The installed version of kappa (from the package metadata)."""
    return _distribution_version("kappa") or "unknown"  # "unknown": a source tree not installed


def environment() -> dict[str, str | None]:
    """Versions of kappa, Python and the numerical libraries (None: not installed).

    Read from the package metadata with :mod:`importlib.metadata`; numba and scipy are not
    imported for it.
    """
    env: dict[str, str | None] = {"kappa": version(), "python": platform.python_version()}
    env.update({name: _distribution_version(name) for name in _LIBRARIES})
    env["platform"] = f"{platform.system()} {platform.machine()}"
    return env


def file_record(path: str | Path, *, block: int = 1 << 20) -> dict[str, Any]:
    """Path, size [bytes] and SHA-256 checksum (hex) of one input file.

    A file that cannot be read any more gets an ``error`` entry instead of failing the run.
    """
    digest = hashlib.sha256()
    size = 0
    try:
        with open(path, "rb") as fh:
            while chunk := fh.read(block):
                digest.update(chunk)
                size += len(chunk)
    except OSError as exc:
        return {"path": str(path), "error": f"cannot read ({exc.strerror or exc})"}
    return {"path": str(path), "bytes": size, "sha256": digest.hexdigest()}


def file_records(paths: Sequence[str | Path]) -> list[dict[str, Any]]:
    """:func:`file_record` of every input file, in the order given."""
    return [file_record(p) for p in paths]


@contextlib.contextmanager
def collect_warnings() -> Iterator[list[warnings.WarningMessage]]:
    """Record every warning issued inside (KappaWarnings always, each time they occur).

    Yields the list of :class:`warnings.WarningMessage`; :func:`issued_warnings` (and so
    :func:`run_record`) reads the innermost active list. Nothing is printed here: the caller
    decides how to show the warnings.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", KappaWarning)
        _ACTIVE.append(caught)
        try:
            yield caught
        finally:
            _ACTIVE.remove(caught)


def issued_warnings() -> list[str]:
    """The texts of the KappaWarnings issued so far inside :func:`collect_warnings`, once each."""
    texts: list[str] = []
    for w in _ACTIVE[-1] if _ACTIVE else ():
        text = str(w.message)
        if issubclass(w.category, KappaWarning) and text not in texts:
            texts.append(text)
    return texts


def to_plain(obj: Any) -> Any:
    """Convert numpy scalars/arrays, tuples and dataclass-like objects to JSON-able values."""
    if isinstance(obj, dict):
        return {str(k): to_plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_plain(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return [to_plain(v) for v in obj.tolist()]
    if isinstance(obj, (np.floating, float)):
        v = float(obj)
        return None if math.isnan(v) else (str(v) if math.isinf(v) else v)
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if isinstance(obj, Path):
        return str(obj)
    return obj


def run_record(command: str, *, inputs: Sequence[str | Path] = (),
               **sections: Any) -> dict[str, Any]:
    """Build the dictionary written to ``run.json``.

    Parameters
    ----------
    command : str
        The command name (``predict``, ``split``, ...).
    inputs : sequence of path
        The input files; each gets its size and SHA-256 checksum under ``input_files``.
        (A mapping is kept as a section named ``inputs``, as older callers passed it.)
    **sections
        Further sections, written in the order given. A ``warnings`` list is merged with the
        KappaWarnings collected so far (see :func:`collect_warnings`).

    Returns
    -------
    dict
        Plain JSON-able data: program, version, command, argv, created, input_files,
        environment, the sections, warnings.
    """
    if isinstance(inputs, Mapping):
        sections = {"inputs": inputs, **sections}
        inputs = ()
    listed = [str(w) for w in sections.pop("warnings", None) or ()]
    record: dict[str, Any] = {
        "program": "kappa",
        "version": version(),
        "command": command,
        "argv": ["kappa", *sys.argv[1:]],
        "created": _dt.datetime.now().astimezone().isoformat(timespec="seconds"),
        "input_files": file_records(inputs),
        "environment": environment(),
    }
    record.update(sections)
    record["warnings"] = listed + [w for w in issued_warnings() if w not in listed]
    return to_plain(record)


def write_json(path: str | Path, record: dict[str, Any]) -> None:
    """Write ``record`` as indented JSON."""
    Path(path).write_text(json.dumps(to_plain(record), indent=2, ensure_ascii=False) + "\n",
                          encoding="utf-8")


def dump_yaml(data: dict[str, Any], header: str = "") -> str:
    """Return ``data`` as YAML text (key order kept), with an optional ``#`` comment header."""
    import yaml

    text = yaml.safe_dump(to_plain(data), sort_keys=False, allow_unicode=True,
                          default_flow_style=False)
    if header:
        text = "".join(f"# {line}\n" if line else "#\n" for line in header.splitlines()) + text
    return text


def model_summary(model) -> dict:
    """The resolved model in SI units, for run records (``name [unit]`` keys)."""
    from dataclasses import asdict

    m = model.material
    return {
        "material": {
            "name": m.name,
            "atomic_mass [kg]": m.atomic_mass,
            "atomic_volume [m^3]": m.atomic_volume,
            "branches": [{f"{k} [{u}]" if u else k: v for (k, v), u in zip(
                asdict(b).items(), ("K", "m/s", "1", "1", "", "", "Hz"), strict=True)}
                for b in m.branches],
        },
        "scattering": {mech.key: {(f"{p.name} [{p.unit}]" if p.unit else p.name):
                                  getattr(mech, p.name) for p in mech.parameters}
                       for mech in model.mechanisms},
    }
