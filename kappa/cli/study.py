"""``kappa study``: one command for a whole study, from measured samples to a report.

The steps are the single commands' library calls, run in order, each written into its own
folder of OUT as soon as it is done (``output_folder``: the folder appears whole or not at
all):

1. ``1-split/NAME/`` — :func:`~kappa.workflows.split.split_measurements` per sample, written as
   ``kappa split FILES --config CONFIG`` writes it;
2. ``2-fit/`` — :func:`~kappa.workflows.fitting.fit_series` on the ``split.csv`` files of step 1
   (read with :func:`~kappa.io.fitfiles.read_fit_data`, as ``kappa fit`` reads them), written
   as ``kappa fit --series`` writes it;
3. ``3-spectrum/`` — :func:`~kappa.workflows.spectrum.spectrum` of the reference sample's fitted
   model, written as ``kappa spectrum`` writes it;
4. ``4-scenarios/`` — every scenario as ``kappa predict FITTED --set KEY=VALUE`` computes it,
   with the fit's uncertainty carried into the answer (:func:`~kappa.workflows.study.what_if`)
   and the projected zT (:func:`~kappa.workflows.study.project_zT`);
5. ``report.html`` — one self-contained file (:mod:`kappa.presentation.report`);

then ``run.json``, the study's record, listing every file written. This is the one command
whose output may be partial on purpose: when a step fails, the error names the step, the
folders of the steps before it stay, and ``run.json`` records where the study stopped.
"""

from __future__ import annotations

import shutil
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import numpy as np
import typer

from . import common

if TYPE_CHECKING:
    from kappa.io.study import StudyRun

HELP = f"""Run a whole study from one file: measured samples -> lattice part -> fitted model ->
what smaller grains or more alloying would do -> projected zT, as one report.

STUDY.yaml names the measurement files of one sample or a series (each with its own notes),
the material config, the split options (Lorenz choice, uncertainties), the keys to fit, and
the what-if scenarios (any config key: grain size, alloy fraction, composition, disorder
...). README.md describes the file; 'kappa demo' runs a complete example.

Writes, step by step: OUT/1-split/NAME/ (as kappa split), OUT/2-fit/ (as kappa fit --series),
OUT/3-spectrum/ (as kappa spectrum, reference sample), OUT/4-scenarios/ (κ_L curves with 68 %
intervals from the fit, the answer table, projected zT), OUT/report.html (one self-contained
file: figures, tables, cautions) and OUT/run.json. Each step's folder appears when the step is
done; if a step fails, the error names it and the steps before it stay written.

\b
Examples:
  kappa study study.yaml -o my-study
  kappa study study.yaml -o my-study --force
  kappa demo -o demo-report

Projected zT holds the measured S and σ fixed; grain boundaries and alloying also scatter
electrons. {common.CAUTION}
"""

STEPS = ("1-split", "2-fit", "3-spectrum", "4-scenarios", "report")


# --- the output folder ---------------------------------------------------------------------


class StudyFolder:
    """The output folder of a study: checked, created, and undone if nothing was written.

    An existing folder that kappa wrote (``--force``) is moved aside first; it is deleted
    when the study has written at least one step, and put back if the study stops before
    that (bad data in the first step leaves everything as it was).
    """

    def __init__(self, out: Path, *, force: bool, inputs) -> None:
        from kappa.io.outdir import check_out

        self.out = Path(out)
        check_out(self.out, force=force, inputs=inputs)
        self.old: Path | None = None
        self.empty = self.out.is_dir()  # an empty folder the user made (check_out allows it)
        self.parents = [p for p in self.out.parents if not p.exists()]  # deepest first
        if self.out.exists() and any(self.out.iterdir()):
            self.empty = False
            self.old = Path(tempfile.mkdtemp(prefix=f".{self.out.name}.old-",
                                             dir=self.out.parent))
            self.old.rmdir()
            self.out.rename(self.old)
        self.out.mkdir(parents=True, exist_ok=True)

    def close(self, written: bool) -> None:
        """Delete the moved-aside folder (``written``), or undo everything (nothing written)."""
        if written:
            if self.old is not None:
                shutil.rmtree(self.old, ignore_errors=True)
            return
        shutil.rmtree(self.out, ignore_errors=True)
        if self.old is not None:
            self.old.rename(self.out)
        elif self.empty:
            self.out.mkdir()
        for p in self.parents:
            try:
                p.rmdir()
            except OSError:
                break


@contextmanager
def _step(run: StudyRun, name: str) -> Iterator[None]:
    """Run one step: note its warnings; a failure names the step and what is written."""
    from kappa.errors import KappaError
    from kappa.io.records import issued_warnings

    before = set(issued_warnings())
    try:
        yield
    except KappaError as exc:
        run.steps[name] = {"status": "failed", "error": str(exc)}
        raise _failed(run, name, exc.key, exc.allowed,
                      (exc.value,) if exc.has_value else ()) from None
    except Exception as exc:
        if common.debug():
            raise
        run.steps[name] = {"status": "failed", "error": f"{type(exc).__name__}: {exc}"}
        raise _failed(run, name, "", common.unexpected_message("study", exc), ()) from None
    except BaseException:
        run.steps[name] = {"status": "interrupted"}
        raise
    finally:
        run.warnings[name] = [w for w in issued_warnings() if w not in before]
    run.steps[name] = {"status": "done"}


def _failed(run: StudyRun, name: str, key: str, allowed: str, value: tuple):
    from kappa.errors import KappaError

    done = [s for s, v in run.steps.items() if v.get("status") == "done"]
    kept = (f"{', '.join(done)} written in {run.out}" if done else "nothing written")
    where = f"study step {name} failed ({kept})" + (f": {key}" if key else "")
    return KappaError(where, *value, allowed=allowed)


# --- the record and the whole study ----------------------------------------------------------


def _record(run: StudyRun, status: str) -> dict:
    from kappa.io.records import run_record
    from kappa.io.study import json_safe
    from kappa.workflows.study import CAUTIONS

    study = run.study
    return run_record(
        "study", inputs=study.files, status=status, study=str(study.path),
        title=study.title, notes=study.notes, study_file=json_safe(study.data),
        samples=[{"name": s.name, "files": [str(p) for p in s.files], "notes": s.notes,
                  "set": json_safe(s.changes), "window": s.window_text} for s in study.samples],
        steps=run.steps, step_warnings=run.warnings,
        answers=[vars(a) for a in run.answers], cautions=CAUTIONS)


def run_study(path: Path, out: Path | None, *, force: bool = False, prepared: bool = False,
              echo: bool = True) -> StudyRun:
    """Read the study file, run every step into ``out`` and write the report.

    ``prepared`` means the caller has checked and created ``out`` (``kappa demo``, whose
    folder holds the inputs). Raises :class:`~kappa.errors.KappaError`: bad input before
    anything is written (naming the study key), or a failed step (naming the step; the steps
    before it stay written).
    """
    from kappa.cli import study_steps as steps
    from kappa.io.outdir import default_out
    from kappa.io.study import StudyRun, write_study_record
    from kappa.io.studyfile import read_study
    from kappa.workflows.study import default_at

    study = read_study(path)
    out = Path(out) if out is not None else default_out(path, "study")
    folder = None if prepared else StudyFolder(out, force=force, inputs=study.files)
    run = StudyRun(study, out)
    status = "failed"
    try:
        with _step(run, "1-split"):
            steps.split_step(run)
        ref = run.splits[study.projection.sample]
        run.at = study.projection.at if study.projection.at is not None else np.array(
            [default_at(ref)])
        _say(echo, f"1-split: {len(study.samples)} sample(s) -> {out / '1-split'}/")
        with _step(run, "2-fit"):
            steps.fit_step(run)
        _say(echo, f"2-fit: {len(run.fit.parameters)} parameter(s) -> {out / '2-fit'}/")
        with _step(run, "3-spectrum"):
            steps.spectrum_step(run)
        _say(echo, f"3-spectrum: {study.projection.sample} -> {out / '3-spectrum'}/")
        with _step(run, "4-scenarios"):
            steps.scenario_step(run)
        _say(echo, f"4-scenarios: {len(run.scenarios)} scenario(s) -> {out / '4-scenarios'}/")
        with _step(run, "report"):
            steps.report_step(run)
        status = "done"
    except BaseException:
        status = "failed" if any(v.get("status") == "failed" for v in run.steps.values()) \
            else "interrupted"
        raise
    finally:
        written = prepared or any(v.get("status") == "done" for v in run.steps.values())
        if written:
            write_study_record(out, _record(run, status))
        if folder is not None:
            folder.close(written)
    return run


def _say(echo: bool, text: str) -> None:
    if echo:
        typer.echo(text)


def _zt(x: float) -> str:
    return f"{x:.2f}" if abs(x) >= 0.1 else f"{x:.2g}"


def summary(run: StudyRun) -> None:
    """The answer table and where the report is, on the terminal."""
    from kappa.workflows.study import ZT_ASSUMPTION

    def pct(x: float) -> str:
        return f"{100 * x:+.0f}" if abs(100 * x) >= 9.5 else f"{100 * x:+.1f}"

    rows = []
    for a in run.answers:
        band = ("" if not np.isfinite(a.change_low) else
                f" ({pct(a.change_low)}..{pct(a.change_high)} %)")
        zt = "-" if not np.isfinite(a.zT) else f"{_zt(a.zT_measured)} -> {_zt(a.zT)}"
        rows.append([a.scenario, f"{a.temperature:.4g}", f"{a.kappa_L_fitted:.3g}",
                     f"{a.kappa_L:.3g}", f"{pct(a.change)} %{band}", zt])
    typer.echo(f"\nwhat-if answers for {run.study.projection.sample} (68 % intervals from the "
               "fit):")
    common.print_table(["scenario", "T [K]", "kappa_L fitted", "kappa_L", "change", "zT"], rows,
                       max_rows=100)
    if any(np.isfinite(a.zT) for a in run.answers):
        typer.echo(f"zT: {ZT_ASSUMPTION}; grain boundaries and alloying also scatter "
                   "electrons, so measure before you trust a gain")
    typer.echo(f"wrote {run.out}/ (1-split/, 2-fit/, 3-spectrum/, 4-scenarios/, report.html, "
               "run.json)")
    typer.echo(f"report: {run.out / 'report.html'}")


def study_command(
    study: Annotated[Path, typer.Argument(help="Study file (YAML): samples, config, split, "
                                          "fit, scenarios.", exists=True, dir_okay=False,
                                          readable=True, metavar="STUDY.yaml")],
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Output folder (default: a "
                                             "new folder beside the study file).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing output folder "
                                        "that kappa wrote.")] = False,
) -> None:
    run = run_study(study, out, force=force)
    summary(run)


def register(app: typer.Typer) -> None:
    app.command("study", help=HELP)(common.handles_errors(study_command, command="study"))
