"""Imports flow one way, for every module of the package.

Layers, from the bottom: ``errors`` < ``core`` (physics) < ``workflows`` < ``io`` (files, units,
YAML) < ``presentation`` (figures, terminal tables) < ``cli``. A module may import from its own
layer or a lower one, never from a higher one; the core and the workflows load no interface
library.
"""

import ast
import subprocess
import sys
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "kappa"
RANK = {"errors": 0, "core": 1, "workflows": 2, "io": 3, "presentation": 4, "cli": 5}
#: Interface libraries: which layers may import them.
LIBRARIES = {
    "typer": {"cli"}, "click": {"cli"}, "rich": {"presentation", "cli"},
    "matplotlib": {"presentation"}, "yaml": {"io"}, "pint": {"io"},
    "jinja2": {"presentation"}, "openpyxl": {"io"}, "python_calamine": {"io"},
    "pyarrow": {"io"}, "pandas": {"io", "presentation"}, "xarray": {"io", "presentation"},
}


def _layer(path: Path) -> str:
    rel = path.relative_to(PKG)
    if len(rel.parts) == 1:
        return "top"  # __init__.py, __main__.py, errors.py
    return rel.parts[0]


def _modules() -> list[Path]:
    return sorted(p for p in PKG.rglob("*.py") if "__pycache__" not in p.parts)


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = ".".join(("kappa", *path.relative_to(PKG).parts[:-1]))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.rsplit(".", node.level - 1)[0] if node.level > 1 else package
                mod = f"{base}.{node.module}" if node.module else base
                names.update(f"{mod}.{a.name}" if not node.module else mod for a in node.names)
            else:
                names.add(node.module or "")
    return names


MODULES = _modules()


def test_every_module_is_in_a_layer():
    for path in MODULES:
        layer = _layer(path)
        if layer == "top":
            assert path.name in ("__init__.py", "__main__.py", "errors.py"), path
        else:
            assert layer in RANK, f"{path}: not in a known layer"


@pytest.mark.parametrize("path", MODULES, ids=[str(p.relative_to(PKG)) for p in MODULES])
def test_imports_flow_one_way(path):
    layer = _layer(path)
    if path.name == "errors.py" and layer == "top":
        layer = "errors"
    for name in _imports(path):
        parts = name.split(".")
        top = parts[0]
        if top in LIBRARIES:
            assert layer in LIBRARIES[top], f"{path.relative_to(PKG)} imports {name}"
        if top == "kappa" and len(parts) > 1 and layer != "top":
            target = parts[1]
            target_rank = RANK.get(target, RANK["errors"] if target == "errors" else None)
            assert target_rank is not None, f"{path.relative_to(PKG)} imports {name}"
            assert target_rank <= RANK[layer], f"{path.relative_to(PKG)} ({layer}) imports {name}"


def test_package_import_does_not_load_cli_or_plots():
    code = ("import sys, kappa\n"
            "print(','.join(m for m in ('typer', 'matplotlib', 'yaml', 'pint') "
            "if m in sys.modules))\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                            check=True)
    assert result.stdout.strip() == ""
