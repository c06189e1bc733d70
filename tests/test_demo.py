"""`kappa demo`: the whole invented study from the files bundled in the package.

The demo runs once, as a new user runs it: `python -m kappa demo -o OUT` in a folder outside
the repository, so its files must come from the package (importlib.resources), and nothing may
be written into the package.
"""

from __future__ import annotations

import hashlib
import json
import os
import subprocess
import sys
from pathlib import Path

from kappa.cli.demo import demo_files

ROOT = Path(__file__).resolve().parents[1]
BUNDLED = ROOT / "kappa" / "data" / "demo"
EXAMPLE = ROOT / "examples" / "study-demo"


def _digests(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(folder.iterdir())
            if p.is_file()}


def test_bundled_demo_is_the_example():
    """kappa/data/demo holds exactly the inputs of examples/study-demo (make_data.py copies)."""
    inputs = {p.name for p in EXAMPLE.iterdir() if p.suffix in (".csv", ".yaml")}
    assert inputs == {f.name for f in demo_files()}
    assert "study.yaml" in inputs
    for name in inputs:
        assert (EXAMPLE / name).read_bytes() == (BUNDLED / name).read_bytes(), name


def test_demo_runs_from_another_folder(tmp_path):
    before = _digests(BUNDLED)
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    work = tmp_path / "somewhere"
    work.mkdir()
    r = subprocess.run([sys.executable, "-m", "kappa", "demo", "-o", "demo-report"], cwd=work,
                       env=env, capture_output=True, text=True, timeout=600)
    assert r.returncode == 0, r.stdout[-2000:] + r.stderr[-3000:]
    out = work / "demo-report"
    assert "what-if answers for FH-21" in r.stdout and "report:" in r.stdout
    assert [line for line in r.stderr.splitlines() if line.startswith("error")] == []
    for rel in ("inputs/study.yaml", "inputs/FH-23_sheet.csv", "1-split/FH-22/split.csv",
                "2-fit/parameters.csv", "3-spectrum/cumulative.png", "4-scenarios/answers.csv",
                "report.html", "run.json"):
        assert (out / rel).is_file(), rel
    assert _digests(out / "inputs") == before  # the bundled files, copied unchanged
    assert _digests(BUNDLED) == before  # and nothing written into the package
    record = json.loads((out / "run.json").read_text(encoding="utf-8"))
    assert record["status"] == "done" and "inputs/study.yaml" in record["output_files"]
    # the demo's story: finer grains lower κ_L of FH-21, and the fit finds it
    answers = (out / "4-scenarios" / "answers.csv").read_text(encoding="utf-8")
    assert "grains 100 nm" in answers and "alloy x = 0.5" in answers
    # a second run replaces the folder only with --force
    again = subprocess.run([sys.executable, "-m", "kappa", "demo", "-o", "demo-report"],
                           cwd=work, env=env, capture_output=True, text=True, timeout=120)
    assert again.returncode == 2 and "already exists" in again.stderr
