"""Run records: ``run.json`` beside every output, and YAML dumping of configs.

A record holds the resolved inputs, the derived quantities, the package version, the command
line and the citations of the models used, so that a table can be traced back to its inputs.
"""

from __future__ import annotations

import datetime as _dt
import json
import math
import sys
from pathlib import Path
from typing import Any

import numpy as np

__all__ = ["version", "run_record", "write_json", "dump_yaml", "to_plain", "model_summary"]


def version() -> str:
    """The installed version of kappa (from the package metadata)."""
    from importlib.metadata import PackageNotFoundError
    from importlib.metadata import version as _v

    try:
        return _v("kappa")
    except PackageNotFoundError:  # running from a source tree that was not installed
        return "unknown"


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


def run_record(command: str, **sections: Any) -> dict[str, Any]:
    """Build the dictionary written to ``run.json``."""
    record: dict[str, Any] = {
        "program": "kappa",
        "version": version(),
        "command": command,
        "argv": ["kappa", *sys.argv[1:]],
        "created": _dt.datetime.now().astimezone().isoformat(timespec="seconds"),
    }
    record.update(sections)
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
