"""Imports flow one way: the physics core imports no workflow or interface module."""

import ast
import subprocess
import sys
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "kappa"
CORE = ["constants", "errors", "material", "scattering", "quadrature", "kernels", "conductivity",
        "heat_capacity", "electronic", "composition", "limits"]
FORBIDDEN_LIBS = {"typer", "matplotlib", "yaml", "pint", "click", "rich"}
FORBIDDEN_OWN = {"config", "cli", "plots", "tables", "units", "records", "outdir", "predict",
                 "split", "fit", "sweep", "spectrum", "measurements"}


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:  # relative: from .x import y / from . import x
                names.update(f"kappa.{node.module or a.name}" for a in node.names)
            else:
                names.add(node.module or "")
    return names


@pytest.mark.parametrize("module", CORE)
def test_core_module_imports(module):
    for name in _imports(PKG / f"{module}.py"):
        top = name.split(".")[0]
        assert top not in FORBIDDEN_LIBS, f"kappa.{module} imports {name}"
        if top == "kappa":
            own = name.split(".")[1]
            assert own not in FORBIDDEN_OWN, f"kappa.{module} imports {name}"


def test_package_import_does_not_load_cli_or_plots():
    code = ("import sys, kappa\n"
            "print(','.join(m for m in ('typer', 'matplotlib') if m in sys.modules))\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                            check=True)
    assert result.stdout.strip() == ""
