"""Reading YAML files (configs, series files) into plain data, with one-line errors."""

from __future__ import annotations

from pathlib import Path

import yaml

from kappa.errors import ConfigError

__all__ = ["load_yaml", "load_yaml_text"]


def load_yaml_text(text: str, source: str):
    """Parse YAML ``text``; ConfigError naming ``source`` on a syntax error."""
    try:
        return yaml.safe_load(text)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1}, column {mark.column + 1}" if mark else ""
        problem = getattr(exc, "problem", None) or "syntax error"
        raise ConfigError(source, allowed=f"not valid YAML{where}: {problem}") from None


def load_yaml(path: str | Path):
    """Read and parse a YAML file; ConfigError naming the file on any problem."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise ConfigError(str(path), allowed="file not found") from None
    except UnicodeDecodeError:
        raise ConfigError(str(path), allowed="not a UTF-8 text file") from None
    except OSError as exc:
        raise ConfigError(str(path), allowed=f"cannot read the file ({exc.strerror})") from None
    return load_yaml_text(text, str(path))
