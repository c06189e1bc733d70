"""``kappa demo``: the whole study of a fictional lab, from files bundled with kappa."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = f"""Run the demo study: a fictional lab's three pellets, from measured files to the report.

Copies the invented demo files (kappa/data/demo: a material config, a study file and the
measurements of three samples of the fictional Fenwick Hollow lab) into OUT/inputs/ and runs
'kappa study OUT/inputs/study.yaml' into OUT: OUT/1-split/, OUT/2-fit/, OUT/3-spectrum/,
OUT/4-scenarios/, OUT/report.html (open it in a browser) and OUT/run.json. Takes a few
seconds (the first run of kappa also compiles its kernels).

\b
Examples:
  kappa demo -o demo-report
  kappa demo -o demo-report --force

The data are invented. {common.CAUTION}
"""

#: The demo's files inside the package (found with importlib.resources).
DEMO = "data/demo"
STUDY = "study.yaml"


def demo_files() -> list:
    """The bundled demo files (importlib.resources traversables), sorted by name."""
    from importlib.resources import files

    folder = files("kappa").joinpath(DEMO)
    return sorted((f for f in folder.iterdir() if f.is_file() and not f.name.startswith(".")),
                  key=lambda f: f.name)


def copy_demo(folder: Path) -> Path:
    """Copy the demo files into ``folder`` (created); return the study file there."""
    folder.mkdir(parents=True, exist_ok=True)
    for f in demo_files():
        (folder / f.name).write_bytes(f.read_bytes())
    return folder / STUDY


def demo_command(
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a "
                                             "new folder kappa-demo-TIME here).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder "
                                        "that kappa wrote.")] = False,
) -> None:
    from kappa.cli.study import StudyFolder, run_study, summary
    from kappa.io.outdir import default_out

    out = Path(out) if out is not None else default_out(Path("kappa"), "demo")
    folder = StudyFolder(out, force=force, inputs=())
    written = False
    try:
        study = copy_demo(out / "inputs")
        typer.echo(f"demo: the invented files of the fictional Fenwick Hollow lab are in "
                   f"{out / 'inputs'}/")
        written = True
        run = run_study(study, out, prepared=True)
    finally:
        folder.close(written)
    summary(run)


def register(app: typer.Typer) -> None:
    app.command("demo", help=HELP)(common.handles_errors(demo_command, command="demo"))
