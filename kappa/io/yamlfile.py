"""Reading YAML files (configs, series files) safely, with one-line errors.

Every YAML file kappa reads goes through :func:`load_yaml` (or :func:`load_yaml_text` for a
string). On top of ``yaml.SafeLoader`` (plain data only: no Python objects, no unknown tags)
it guards against files that would crash, hang or mislead:

* **Encoding.** UTF-8 with or without a byte-order mark, and UTF-16 with a byte-order mark.
  A file that is not UTF-8 but is Windows-1252/Latin-1 text (what many Windows editors save,
  e.g. ``µm`` or ``°C`` as one byte) is read as such with a warning. A binary file (NUL bytes,
  control characters, or bytes that are no text encoding) is an error naming the file.
* **Size.** At most :data:`MAX_BYTES` (1 MB). Configs and series files are a few kB; the
  pure-Python YAML parser needs about 10 s per MB.
* **Duplicate keys** in one mapping are refused with the key and both line numbers (plain
  YAML would silently keep the last one).
* **Nesting depth** is limited to :data:`MAX_DEPTH` levels (deeper input would exhaust the
  Python stack).
* **Aliases** (``*name``) are limited: the document with every alias expanded may hold at
  most :data:`MAX_NODES` values, and an alias may not refer to a node that contains it. This
  stops "billion laughs" documents (a few lines that expand to 10⁹ values) at once.

Errors are :class:`kappa.errors.ConfigError` with the file name as key, e.g.
``error: run.yaml: key 'material' appears twice (lines 2 and 9); each key may appear once``.
"""

from __future__ import annotations

import codecs
import re
from pathlib import Path

import yaml

from kappa.errors import ConfigError, warn

__all__ = ["load_yaml", "load_yaml_text", "MAX_BYTES", "MAX_DEPTH", "MAX_NODES"]

#: Largest YAML file read [bytes].
MAX_BYTES = 1_000_000
#: Deepest nesting of sequences and mappings.
MAX_DEPTH = 100
#: Most values (scalars, sequences, mappings) in a document with its aliases expanded.
MAX_NODES = 100_000

# C0 control characters other than tab, line feed and carriage return, and DEL: not text.
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


class _Refused(Exception):
    """Raised inside the loader; turned into a ConfigError naming the file."""


class _Loader(yaml.SafeLoader):
    """SafeLoader with a nesting limit, an alias-expansion limit and duplicate-key errors."""

    def __init__(self, stream: str) -> None:
        super().__init__(stream)
        self._depth = 0

    def fetch_flow_collection_start(self, TokenClass):  # type: ignore[override]
        # the scanner reads a whole run of '[' or '{' before the first token (quadratic in
        # the run), so flow nesting is limited here, before the composer sees it
        if self.flow_level >= MAX_DEPTH:
            raise _Refused(f"nested more than {MAX_DEPTH} levels deep (at line "
                           f"{self.line + 1}); a config needs a few levels")
        super().fetch_flow_collection_start(TokenClass)

    def add_indent(self, column):  # type: ignore[override]
        if len(self.indents) >= MAX_DEPTH:
            raise _Refused(f"nested more than {MAX_DEPTH} levels deep (at line "
                           f"{self.line + 1}); a config needs a few levels")
        return super().add_indent(column)

    def compose_node(self, parent, index):  # type: ignore[override]
        self._depth += 1
        try:
            if self._depth > MAX_DEPTH:
                mark = self.peek_event().start_mark
                raise _Refused(f"nested more than {MAX_DEPTH} levels deep (at line "
                               f"{mark.line + 1}); a config needs a few levels")
            return super().compose_node(parent, index)
        finally:
            self._depth -= 1

    def compose_document(self):  # type: ignore[override]
        node = super().compose_document()
        _check_expansion(node)
        return node

    def construct_mapping(self, node, deep=False):  # type: ignore[override]
        if isinstance(node, yaml.MappingNode):
            seen: dict[object, int] = {}
            for key_node, _ in node.value:
                if key_node.tag == "tag:yaml.org,2002:merge":
                    continue  # '<<' merges; explicit keys may override merged ones
                key = self.construct_object(key_node, deep=True)
                line = key_node.start_mark.line + 1
                try:
                    first = seen.get(key)
                except TypeError:  # an unhashable key: SafeLoader reports it
                    continue
                if first is not None:
                    lines = f"lines {first} and {line}" if first != line else f"line {line}"
                    raise _Refused(f"key {_shown_key(key)} appears twice ({lines}); each key "
                                   "may appear once in a mapping")
                seen[key] = line
        return super().construct_mapping(node, deep=deep)


def _shown_key(key: object) -> str:
    text = repr(key) if isinstance(key, str) else str(key)
    return text if len(text) <= 60 else text[:57] + "..."


def _children(node: yaml.Node) -> list[yaml.Node]:
    if isinstance(node, yaml.SequenceNode):
        return list(node.value)
    if isinstance(node, yaml.MappingNode):
        return [n for pair in node.value for n in pair]
    return []


def _check_expansion(root: yaml.Node | None) -> None:
    """Refuse a node graph that refers to itself or expands to more than MAX_NODES values."""
    if root is None:
        return
    size: dict[int, int] = {}
    entered: set[int] = set()
    stack: list[tuple[yaml.Node, bool]] = [(root, False)]
    while stack:
        node, leaving = stack.pop()
        k = id(node)
        if leaving:
            total = 1 + sum(size[id(c)] for c in _children(node))
            if total > MAX_NODES:
                raise _Refused(f"its aliases (*name) expand to more than {MAX_NODES:,} values "
                               f"(at line {node.start_mark.line + 1}); write the values out "
                               "instead of repeating aliases")
            size[k] = total
            continue
        if k in size:
            continue
        if k in entered:
            raise _Refused(f"an alias refers to a node that contains it (line "
                           f"{node.start_mark.line + 1}); aliases may not be recursive")
        entered.add(k)
        stack.append((node, True))
        stack.extend((c, False) for c in _children(node) if id(c) not in size)


def _decode(data: bytes, source: str, what: str) -> str:
    """Bytes -> text: UTF-8 (BOM optional), UTF-16 with BOM, else Windows-1252 with a warning."""
    hint = ", e.g. written by 'kappa new'" if what == "config" else ""
    binary = ConfigError(source, allowed=f"not a text file (it holds binary data); the {what} "
                         f"must be YAML text{hint}")
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            text = data.decode("utf-16")
        except UnicodeDecodeError:
            raise binary from None
        if _CONTROL.search(text):
            raise binary
        return text
    if b"\x00" in data:
        raise binary
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        try:
            text = data.decode("cp1252")
        except UnicodeDecodeError:
            raise binary from None
        if _CONTROL.search(text):
            raise binary from None
        warn(f"{source} is not UTF-8: read as Windows-1252/Latin-1 text; check characters such "
             "as µ and ° in it, and save it as UTF-8 to silence this warning")
        return text
    if _CONTROL.search(text):
        raise binary
    return text


def load_yaml_text(text: str, *, source: str = "<text>", what: str = "config") -> object:
    """Parse YAML text with the limits of this module.

    Parameters
    ----------
    text : str
        The YAML document.
    source : str
        What the text is, for messages (a file name or an option such as ``--set``).
    what : str
        The kind of document, for messages (``config``, ``series file``).

    Returns
    -------
    object
        Plain data: dict, list, str, int, float, bool, None (and dates).

    Raises
    ------
    ConfigError
        Invalid YAML, a duplicate key, too deep, too many expanded aliases; ``key`` is
        ``source``.
    """
    if len(text) > MAX_BYTES:
        raise ConfigError(source, allowed=f"longer than {MAX_BYTES // 1_000_000} MB; a {what} "
                          "holds a few kB")
    loader = _Loader(text)
    try:
        return loader.get_single_data()
    except _Refused as exc:
        raise ConfigError(source, allowed=str(exc)) from None
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1}, column {mark.column + 1}" if mark else ""
        problem = getattr(exc, "problem", None) or "syntax error"
        raise ConfigError(source, allowed=f"not valid YAML{where}: {problem}") from None
    except ValueError:  # an integer with more digits than Python converts (over 4300)
        raise ConfigError(source, allowed="holds a number with too many digits to read") from None
    finally:
        loader.dispose()


def load_yaml(path: str | Path, *, what: str = "config") -> object:
    """Read a YAML file with the checks of this module (encoding, size, keys, depth, aliases).

    Parameters
    ----------
    path : str or Path
        The file.
    what : str
        What the file is, for messages (``config``, ``series file``).

    Returns
    -------
    object
        The document as plain data (None for an empty file).

    Raises
    ------
    ConfigError
        With ``key`` = the path as given: the file is missing, unreadable, a folder, too
        large, binary, not valid YAML, or breaks a limit of this module.

    Warns
    -----
    KappaWarning
        When the file is read as Windows-1252/Latin-1 instead of UTF-8.
    """
    source = str(path)
    try:
        with open(path, "rb") as fh:
            data = fh.read(MAX_BYTES + 1)
    except FileNotFoundError:
        raise ConfigError(source, allowed=f"file not found (the {what} to read)") from None
    except IsADirectoryError:
        raise ConfigError(source, allowed=f"is a folder; give the {what} (a YAML file)") from None
    except OSError as exc:
        raise ConfigError(source, allowed=f"cannot read the file ({exc.strerror or exc})"
                          ) from None
    if len(data) > MAX_BYTES:
        raise ConfigError(source, allowed=f"larger than {MAX_BYTES // 1_000_000} MB; a {what} "
                          "holds a few kB (is it the right file?)")
    text = _decode(data, source, what)
    return load_yaml_text(text, source=source, what=what)
