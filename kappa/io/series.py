"""Sample series files: several samples' files and notes, for ``kappa split`` and ``kappa fit``.

One file format serves both commands; each reads the keys it needs and checks only those. Paths
are relative to the series file's folder::

    config: base.yaml                      # fit: the base config (or one per sample)
    shared: [material.gruneisen]           # fit: keys with one value for all samples
    per_sample: [scattering.boundary.grain_size]   # fit: keys with one value per sample
    bounds: {scattering.boundary.grain_size: "10 nm:1 mm"}   # fit, optional
    window: 100K:700K                      # fit, optional: temperature window of every sample
    notes: free text about the series      # ignored
    samples:
      - name: FH-21
        measured: [FH-21_flash.csv, FH-21_electrical.csv]   # split: measurement file(s)
        composition: Mg2Si0.4Sn0.6         # split, optional: Dulong-Petit c_p (flash data)
        data: FH-21-split/split.csv        # fit: T and kappa_L (e.g. a split.csv)
        set: {scattering.boundary.grain_size: 2 um}         # fit, optional
        window: 100K:500K                  # fit, optional
        config: other.yaml                 # fit, optional
        notes: {grain_size: 250 nm, density: 3.05 g/cm^3, composition: Mg2Si0.4Sn0.6}

Per-sample **notes** are what was measured about the sample itself (grain size from
microscopy, density, composition, ...). Known names (:data:`NOTE_UNITS`) must have their
dimension (``grain_size: 250 nm``; a bare number is read in the SI unit); ``composition`` must be
a formula kappa can read; a note named like the last part of a fitted per-sample key
(``gruneisen``, ``mass_variance``) must have that key's dimension. Other names take a number,
a number with any unit kappa knows, or text. ``notes`` may also be one text.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from kappa.errors import ConfigError, KappaError
from kappa.io.units import _NUMBER, parse_quantity, parse_unit

__all__ = ["Note", "SeriesFile", "SeriesEntry", "SplitSample", "NOTE_UNITS", "SERIES_KEYS",
           "SAMPLE_KEYS", "load_series_file", "read_split_series", "parse_notes",
           "notes_for_keys"]

#: Keys of a series file (top level) and of each sample.
SERIES_KEYS = ("config", "shared", "per_sample", "bounds", "window", "samples", "notes")
SAMPLE_KEYS = ("name", "data", "set", "window", "config", "measured", "composition", "notes")

#: Known notes: name -> (SI unit, display unit, what it is). Dimensionless notes accept a
#: fraction or a percentage (``0.97`` or ``97 %``).
NOTE_UNITS: dict[str, tuple[str, str, str]] = {
    "grain_size": ("m", "nm", "a length (e.g. 250 nm)"),
    "particle_size": ("m", "nm", "a length (e.g. 2 um)"),
    "thickness": ("m", "mm", "a length (e.g. 1.5 mm)"),
    "density": ("kg/m^3", "g/cm^3", "a density (e.g. 3.05 g/cm^3)"),
    "relative_density": ("", "1", "a fraction (0.97 or 97 %)"),
    "porosity": ("", "1", "a fraction (0.03 or 3 %)"),
    "carrier_concentration": ("1/m^3", "1/cm^3", "a number density (e.g. 2e19 cm^-3)"),
    "annealing_temperature": ("K", "K", "a temperature (e.g. 900 K or 600 degC)"),
    "sintering_temperature": ("K", "K", "a temperature (e.g. 900 K or 600 degC)"),
    "fraction": ("", "1", "an alloy fraction from 0 to 1"),
}

_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._+-]*$")
_NOTE_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")


@dataclass(frozen=True)
class Note:
    """One per-sample note.

    Attributes
    ----------
    name : str
    text : str
        As written.
    value : float or None
        In :attr:`unit` (SI for known notes); None for text.
    unit : str
        The unit of ``value`` (``""`` for a number).
    display : str
        The unit figures and tables show it in.
    shown : float or None
        ``value`` in ``display``.
    """

    name: str
    text: str
    value: float | None = None
    unit: str = ""
    display: str = ""
    shown: float | None = None

    @property
    def numeric(self) -> bool:
        return self.value is not None


@dataclass(frozen=True)
class SeriesEntry:
    """One sample of a series file, checked for structure (files not read)."""

    index: int
    name: str
    item: dict[str, Any]
    notes: dict[str, Note]

    @property
    def key(self) -> str:
        """``series.samples.I``, for messages."""
        return f"series.samples.{self.index}"


@dataclass(frozen=True)
class SeriesFile:
    """A series file, checked for structure."""

    path: Path
    data: dict[str, Any]
    entries: tuple[SeriesEntry, ...]

    @property
    def folder(self) -> Path:
        return self.path.parent

    @property
    def notes(self) -> dict[str, dict[str, Note]]:
        """Sample name -> its notes."""
        return {e.name: e.notes for e in self.entries}


@dataclass(frozen=True)
class SplitSample:
    """What ``kappa split --series`` needs of one sample."""

    name: str
    files: tuple[Path, ...]
    composition: str | None
    notes: dict[str, Note] = field(default_factory=dict)


def _fraction(text: str, key: str) -> float:
    t = text.strip()
    if t.endswith("%"):
        return parse_quantity(t[:-1], "", key) / 100.0
    return parse_quantity(t, "", key)


def _note(name: str, value: Any, key: str, units: Mapping[str, tuple[str, str, str]]) -> Note:
    text = str(value)
    if name == "composition":
        from kappa.core.composition import parse_formula

        if not isinstance(value, str):
            raise ConfigError(key, value, "a chemical formula, e.g. Mg2Si0.4Sn0.6")
        try:
            parse_formula(value, key)
        except KappaError as exc:
            raise ConfigError(key, value, exc.allowed) from None
        return Note(name, text)
    if name in units:
        si, display, what = units[name]
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            raise ConfigError(key, value, f"must be {what}")
        try:
            v = (_fraction(value, key) if isinstance(value, str) and si == "" else
                 parse_quantity(value, si, key))
        except KappaError as exc:
            raise ConfigError(key, value, exc.allowed) from None
        if not math.isfinite(v):
            raise ConfigError(key, value, f"must be {what}")
        shown = v if display in ("", "1", si) else parse_quantity(f"{v!r} {si}", display, key)
        return Note(name, text, v, si, display, shown)
    # any other note: a number, a number with a known unit, or text
    if isinstance(value, bool):
        return Note(name, text)
    if isinstance(value, (int, float)):
        if not math.isfinite(float(value)):
            raise ConfigError(key, value, "a finite number, a number with a unit, or text")
        return Note(name, text, float(value), "", "1", float(value))
    if isinstance(value, str):
        match = _NUMBER.match(value)
        if match and match.group(1).lower().lstrip("+-") not in ("inf", "nan"):
            number, unit = float(match.group(1)), match.group(2).strip()
            if unit == "%":
                return Note(name, text, number / 100.0, "", "1", number / 100.0)
            parse_unit(unit, key)  # an unknown unit is an error, not text
            return Note(name, text, number, unit, unit, number)
        return Note(name, text)
    raise ConfigError(key, value, "a number, a number with a unit, or text")


def parse_notes(value: Any, key: str,
                units: Mapping[str, tuple[str, str, str]] | None = None) -> dict[str, Note]:
    """A sample's ``notes`` mapping (or one text) -> {name: Note} (see the module docstring).

    ``units`` adds or overrides known notes (name -> (SI unit, display unit, what)).
    """
    known = dict(NOTE_UNITS)
    known.update(units or {})
    if value is None:
        return {}
    if isinstance(value, str):
        return {"text": Note("text", value)}
    if not isinstance(value, dict):
        raise ConfigError(key, value, "a mapping NAME: VALUE (e.g. {grain_size: 250 nm}) or "
                          "one text")
    out = {}
    for name, v in value.items():
        name = str(name)
        if not _NOTE_NAME.match(name):
            raise ConfigError(f"{key}.{name}", v, "note names are letters, digits and '_', "
                              "e.g. grain_size")
        out[name] = _note(name, v, f"{key}.{name}", known)
    return out


def notes_for_keys(keys: Sequence[str], model) -> dict[str, tuple[str, str, str]]:
    """Known-note entries for fitted keys: a note named like a key's last part must have its
    dimension (``mass_variance``, ``gruneisen``, ``specularity``...)."""
    out = {}
    for key in keys:
        p = model.parameter(key)
        name = key.rsplit(".", 1)[-1]
        out[name] = (p.unit if p.unit != "1" else "", p.shown_unit,
                     f"in units of {p.shown_unit} like {key}")
    return out


def _entries(path: Path, data: dict, units) -> tuple[SeriesEntry, ...]:
    items = data.get("samples")
    if not isinstance(items, list) or not items:
        raise ConfigError("series.samples", items, "must be a non-empty list of samples "
                          "{name, ...}")
    entries, seen = [], {}
    for i, item in enumerate(items):
        key = f"series.samples.{i}"
        if not isinstance(item, dict):
            raise ConfigError(key, item, "must be a mapping {name, ...}")
        for k in item:
            if k not in SAMPLE_KEYS:
                raise ConfigError(f"{key}.{k}", allowed="unknown key; allowed: "
                                  + ", ".join(SAMPLE_KEYS))
        name = item.get("name")
        if not isinstance(name, str) or not _NAME.match(name):
            raise ConfigError(f"{key}.name", name, "a name of letters, digits, '.', '_', '+', "
                              "'-' (used as a folder name)")
        if name.lower() in seen:
            raise ConfigError(f"{key}.name", name, f"repeats the name of series.samples."
                              f"{seen[name.lower()]} (names must be unique ignoring upper/lower "
                              "case: they name output folders)")
        seen[name.lower()] = i
        notes = parse_notes(item.get("notes"), f"{key}.notes", units)
        entries.append(SeriesEntry(i, name, dict(item), notes))
    return tuple(entries)


def load_series_file(path: str | Path, *,
                     note_units: Mapping[str, tuple[str, str, str]] | None = None
                     ) -> SeriesFile:
    """Read a series file and check its structure and notes (no other file is opened)."""
    from kappa.io.yamlfile import load_yaml

    path = Path(path)
    data = load_yaml(path, what="series file")
    if not isinstance(data, dict):
        raise ConfigError("series", data, "must be a mapping with samples (and config, shared, "
                          "per_sample for fits)")
    for k in data:
        if k not in SERIES_KEYS:
            raise ConfigError(f"series.{k}", allowed="unknown key; allowed: "
                              + ", ".join(SERIES_KEYS))
    return SeriesFile(path, data, _entries(path, data, note_units))


def read_split_series(path: str | Path) -> tuple[SeriesFile, tuple[SplitSample, ...]]:
    """The samples of a series file for ``kappa split --series``: measurement files (checked
    to exist), composition and notes. A sample without ``measured`` may name its measurement
    file(s) under ``data``."""
    sf = load_series_file(path)
    out = []
    for e in sf.entries:
        key = "measured" if "measured" in e.item else "data"  # data: a lone measurement file
        measured = e.item.get(key)
        if measured is None:
            raise ConfigError(f"{e.key}.measured", allowed="missing; the measurement file(s) "
                              "of the sample (T, kappa or D+rho+cp, sigma or resistivity, S)")
        names = [measured] if isinstance(measured, str) else measured
        if not isinstance(names, list) or not names or not all(isinstance(n, str)
                                                                for n in names):
            raise ConfigError(f"{e.key}.{key}", measured, "a file name or a list of file "
                              "names")
        files = []
        for j, n in enumerate(names):
            p = sf.folder / n
            if not p.is_file():
                where = f"{e.key}.{key}" + ("" if isinstance(measured, str) else f".{j}")
                raise ConfigError(where, n, f"file not found (looked for {p})")
            files.append(p)
        comp = e.item.get("composition")
        if comp is not None and not isinstance(comp, str):
            raise ConfigError(f"{e.key}.composition", comp, "a chemical formula, e.g. "
                              "Mg2Si0.4Sn0.6")
        out.append(SplitSample(e.name, tuple(files), comp, e.notes))
    return sf, tuple(out)
