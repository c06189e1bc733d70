"""The skeleton every computing command follows: check the output → compute → write → record →
report.

A command makes a :class:`Run` first (which decides and checks the output folder before any
work is done), computes, then hands the run its tables, figures and other files and the
sections of its record, and calls :meth:`Run.finish`: everything is written into a hidden
folder that becomes the output folder only when complete (:func:`kappa.io.outdir.
output_folder`), with ``run.json`` (inputs with checksums, versions, warnings, derived values,
citations) beside the results, and one ``wrote ...`` line is printed.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

import typer

__all__ = ["Run"]


class Run:
    """One command's outputs, written whole or not at all.

    Parameters
    ----------
    command : str
        The command's name (``predict``), used in the record and the default folder name.
    out : Path or None
        The output folder; None → a new folder beside ``beside`` named after the command and
        a time stamp.
    force : bool
        Replace an existing folder that kappa wrote (never anything else).
    inputs : sequence of Path
        The input files: never replaced, checksummed in the record.
    beside : Path, optional
        Where the default folder goes (default: the first input).
    """

    def __init__(self, command: str, out: Path | None, *, force: bool,
                 inputs: Sequence[Path], beside: Path | None = None) -> None:
        from kappa.io.outdir import check_out, default_out

        self.command = command
        self.inputs = [Path(p) for p in inputs]
        self.force = force
        self.out = Path(out) if out is not None else default_out(
            beside if beside is not None else self.inputs[0], command)
        check_out(self.out, force=force, inputs=self.inputs)
        self._writers: list[tuple[str, Callable[[Path], None] | None]] = []
        self._figures: list[tuple[Any, str, str]] = []  # (figure, stem, format)
        self._jobs: list[tuple] = []  # (module, function, args, kwargs, stem, formats)
        self._record: dict[str, Any] = {}

    def table(self, name: str, columns: Sequence[tuple[str, Any]],
              formats: Sequence[str] = ("csv",)) -> list[str]:
        """A table ``name`` (``sweep.csv``) with ``name [unit]`` headers, written in each of
        ``formats`` (csv, parquet: the suffix of ``name`` is replaced). Returns the names."""
        from kappa.io.tables import write_parquet, write_table

        stem = name.rsplit(".", 1)[0] if name.endswith(".csv") else name
        names = []
        for fmt in formats:
            fname = f"{stem}.{fmt}"
            writer = write_parquet if fmt == "parquet" else write_table
            self._writers.append((fname, lambda folder, f=fname, w=writer: w(folder / f,
                                                                              columns)))
            names.append(fname)
        return names

    def figure(self, stem: str, fig, formats: Sequence[str] = ("png", "svg")) -> None:
        """A figure written as ``stem.png`` and ``stem.svg`` (or the formats given)."""
        self._figures.extend((fig, stem, fmt) for fmt in formats)
        self._writers.append((", ".join(f"{stem}.{fmt}" for fmt in formats), None))

    def figure_job(self, stem: str, module: str, function: str, *args: Any,
                   formats: Sequence[str] = ("png", "svg"), **kwargs: Any) -> None:
        """A figure made by ``module.function(*args, **kwargs)`` when the run is written, and
        saved as ``stem.png`` and ``stem.svg`` (or the formats given): in the figure worker
        when the command has one (:mod:`kappa.cli.figures`), else here. The arguments must
        pickle (results do); the function runs under the command's figure style."""
        self._jobs.append((module, function, tuple(args), dict(kwargs), stem, tuple(formats)))
        self._writers.append((", ".join(f"{stem}.{fmt}" for fmt in formats), None))

    def text(self, name: str, text: str) -> None:
        """A text file (e.g. a YAML config)."""
        def write(folder: Path) -> None:
            (folder / name).parent.mkdir(parents=True, exist_ok=True)
            (folder / name).write_text(text, encoding="utf-8")

        self._writers.append((name, write))

    def json(self, name: str, data: Any) -> None:
        """A JSON file other than the record."""
        from kappa.io.records import write_json

        def write(folder: Path) -> None:
            (folder / name).parent.mkdir(parents=True, exist_ok=True)
            write_json(folder / name, data)

        self._writers.append((name, write))

    def record(self, **sections: Any) -> None:
        """Sections of ``run.json`` (added to the command line, inputs, versions, warnings)."""
        self._record.update(sections)

    @property
    def outputs(self) -> list[str]:
        """The files this run writes, as listed in its record."""
        return [n for name, _ in self._writers for n in name.split(", ")] + ["run.json"]

    def finish(self, report: bool = True) -> Path:
        """Write everything (whole or not at all) and print one ``wrote ...`` line."""
        from kappa.io.outdir import output_folder
        from kappa.io.records import run_record, write_json

        record = run_record(self.command, inputs=self.inputs, outputs=self.outputs,
                            **self._record)
        tables = [w for name, w in self._writers if name.endswith((".csv", ".parquet"))]
        others = [w for name, w in self._writers
                  if w is not None and not name.endswith((".csv", ".parquet"))]
        from kappa.cli import figures as workers
        from kappa.cli.figures import Saver, draw

        worker = workers.worker()
        remote = bool(self._jobs) and worker is not None and worker.ready
        with output_folder(self.out, force=self.force, inputs=self.inputs) as tmp:
            figures = [(fig, tmp / stem, fmt) for fig, stem, fmt in self._figures]
            if remote:
                from kappa.presentation.style import current

                worker.send(current(), tmp, self._jobs)
            elif self._jobs:
                figures += draw(self._jobs, tmp)
            saver = Saver(figures)  # on two cores: half the figure files in a helper process
            try:
                if tables:
                    # tables (numpy/pyarrow, mostly without the GIL) beside the figures (Agg)
                    from concurrent.futures import ThreadPoolExecutor

                    with ThreadPoolExecutor(max_workers=1) as pool:
                        futures = [pool.submit(write, tmp) for write in tables]
                        saver.save_own()
                        for write in others:
                            write(tmp)
                        for f in futures:
                            f.result()
                else:
                    saver.save_own()
                    for write in others:
                        write(tmp)
                saver.wait()
                if remote:
                    from kappa.presentation.terminal import load

                    load()  # the tables printed next: rich loads while the worker draws
                    worker.wait()
            finally:
                saver.stop()
                if remote:
                    workers.stop()
            write_json(tmp / "run.json", record)
        if report:
            typer.echo(f"wrote {self.out}/ ({', '.join(self.outputs)})")
        return self.out
