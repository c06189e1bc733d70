"""``kappa split --series FILE``: the split of every sample of a series, side by side.

Every sample's files are read and checked before anything is computed or written; the options
of the command apply to every sample. Outputs (one folder, written whole or not at all):
``series.csv`` (all samples' ``split.csv`` columns in one long table with a ``sample`` column
and the numeric notes), ``samples.csv`` (one row per sample: files, rows, notes),
``series.png``/``.svg`` (kappa, kappa_L, kappa_e and zT of all samples on shared axes),
``series.yaml`` (the same series file with each sample's ``data`` pointing at its new
``split.csv``, ready for ``kappa fit --series``), ``samples/NAME/split.csv`` and ``.png`` /
``.svg``, and ``run.json``.
"""

from __future__ import annotations

import os
import warnings
from pathlib import Path

import numpy as np
import typer

from kappa.cli import common
from kappa.cli.split import (
    check_seebeck,
    compute,
    derived_record,
    parse_options,
    read_data,
    summary_lines,
    table_columns,
    uncertainty_record,
)
from kappa.errors import DataError, KappaError, KappaWarning, warn
from kappa.io.outdir import check_out, default_out, output_folder
from kappa.io.records import dump_yaml, run_record, write_json
from kappa.io.series import Note, read_split_series
from kappa.io.tables import write_table

__all__ = ["run_series", "series_columns"]


def _sample_warnings(name: str, func, *args, **kwargs):
    """Call ``func``; re-issue its warnings with the sample's name in front."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", KappaWarning)
        result = func(*args, **kwargs)
    for w in caught:
        if issubclass(w.category, KappaWarning):
            warn(f"{name}: {w.message}")
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return result


def _note_header(note: Note, taken: set[str]) -> str:
    name = note.name if note.name not in taken else f"note_{note.name}"
    unit = note.display if note.display not in ("", "1") else "1"
    return f"{name} [{unit}]"


def series_columns(samples, results, measured) -> list[tuple[str, object]]:
    """One long table: ``sample``, the union of the samples' split.csv columns (blank where a
    sample lacks one), then the numeric notes (one value per sample, repeated on its rows)."""
    per = [table_columns(r, m) for r, m in zip(results, measured, strict=True)]
    headers: list[str] = []
    for cols in per:
        for h, _ in cols:
            if h not in headers:
                headers.append(h)
    sizes = [r.temperature.size for r in results]
    out: list[tuple[str, object]] = [
        ("sample", [s.name for s, n in zip(samples, sizes, strict=True) for _ in range(n)])]
    for h in headers:
        parts = []
        for cols, n in zip(per, sizes, strict=True):
            found = dict(cols).get(h)
            parts.append(np.full(n, np.nan) if found is None else
                         np.asarray(found, dtype=float))
        out.append((h, np.concatenate(parts)))
    taken = {h.split(" [")[0] for h in headers}
    names: list[str] = []
    for s in samples:
        for note in s.notes.values():
            if note.numeric and note.name not in names:
                names.append(note.name)
    for name in names:
        first = next(s.notes[name] for s in samples if name in s.notes)
        values = []
        for s, n in zip(samples, sizes, strict=True):
            note = s.notes.get(name)
            same_unit = note is not None and note.numeric and note.display == first.display
            values.append(np.full(n, note.shown if same_unit else np.nan))
        out.append((_note_header(first, taken), np.concatenate(values)))
    return out


def _samples_table(samples, results, folder: Path) -> list[tuple[str, object]]:
    names: list[str] = []
    for s in samples:
        names += [k for k in s.notes if k not in names]
    cols: list[tuple[str, object]] = [
        ("sample", [s.name for s in samples]),
        ("files", [";".join(os.path.relpath(f, folder) for f in s.files) for s in samples]),
        ("rows [1]", np.array([r.temperature.size for r in results])),
        ("T_min [K]", np.array([r.temperature[0] for r in results])),
        ("T_max [K]", np.array([r.temperature[-1] for r in results])),
        ("kappa_L_err_systematic_median [%]",
         np.array([100 * np.median(r.kappa_L_err_systematic / np.abs(r.kappa_L))
                   for r in results])),
        ("kappa_L_err_random_median [%]",
         np.array([100 * np.median(r.kappa_L_err_random / np.abs(r.kappa_L))
                   for r in results]))]
    for name in names:
        first = next(s.notes[name] for s in samples if name in s.notes)
        if first.numeric:
            unit = first.display if first.display not in ("", "1") else "1"
            cols.append((f"{name} [{unit}]",
                         [s.notes[name].shown if name in s.notes and s.notes[name].numeric
                          and s.notes[name].display == first.display else "" for s in samples]))
        else:
            cols.append((name, [s.notes[name].text if name in s.notes else "" for s in samples]))
    return cols


def _relative(path: Path, start: Path) -> str:
    try:
        return Path(os.path.relpath(path.resolve(), start.resolve())).as_posix()
    except ValueError:  # another drive (Windows): keep it absolute
        return str(path.resolve())


def _fit_series_file(sf, out: Path) -> str:
    """The series file for ``kappa fit --series`` written into ``out``: the same samples with
    ``data`` at their new split.csv and every other path rebased onto ``out``."""
    data = dict(sf.data)
    if "config" in data:
        data["config"] = _relative(sf.folder / str(data["config"]), out)
    samples = []
    for e in sf.entries:
        item = dict(e.item)
        if "measured" not in item:  # the split read its measurements from data
            item["measured"] = item.get("data")
        item["data"] = f"samples/{e.name}/split.csv"
        measured = item.get("measured")
        if isinstance(measured, str):
            item["measured"] = _relative(sf.folder / measured, out)
        elif isinstance(measured, list):
            item["measured"] = [_relative(sf.folder / m, out) for m in measured]
        if "config" in item:
            item["config"] = _relative(sf.folder / str(item["config"]), out)
        samples.append(item)
    data["samples"] = samples
    header = (f"Written by 'kappa split --series {sf.path.name}': the same series, each sample's "
              "data\nat its split.csv (with kappa_L_err_systematic and kappa_L_err_random), "
              "ready for\n'kappa fit --series series.yaml' once config, shared and "
              "per_sample are given.")
    return dump_yaml(data, header)


@common.handles_errors(command="split")
def run_series(series, out, force, lorenz, scattering_exponent, uncertainty, window_text, nan,
               draws, seed, number_density, sound_velocity, config, reading=None,
               format_=None, style="paper") -> None:
    """The command ``kappa split --series`` (see the module docstring); ``reading`` holds the
    lab-file options of the command (separator, decimal mark, sheet, extrapolation, constants),
    applied to every sample's files."""
    opts = parse_options(lorenz, scattering_exponent, uncertainty, window_text, nan, draws,
                         seed, number_density, sound_velocity)
    _, formats = common.parse_formats(format_, tables=("csv",))
    common.use_style(style)
    sf, samples = read_split_series(series)
    files = [f for s in samples for f in s.files]
    inputs = [Path(series), *files, *([config] if config is not None else [])]
    out = Path(out) if out is not None else default_out(series, "split")
    check_out(out, force=force, inputs=inputs)
    measured = []
    for i, s in enumerate(samples):
        try:
            m = _sample_warnings(s.name, read_data, list(s.files), opts.nan, s.composition,
                                 reading)
        except KappaError as exc:
            if exc.key == "--composition":
                raise DataError(f"series.samples.{i}.composition", exc.value,
                                exc.allowed) from None
            raise
        check_seebeck(m, opts.lorenz, f"series.samples.{i}.measured ({s.name})")
        measured.append(m)
    results = [_sample_warnings(s.name, compute, m, opts, s.name)
               for s, m in zip(samples, measured, strict=True)]

    from kappa.presentation.split import plot_series, plot_split
    from kappa.presentation.style import save

    pairs = [(s.name, r) for s, r in zip(samples, results, strict=True)]
    fig = plot_series(pairs, title=Path(series).name)
    sample_figs = [plot_split(r, title=s.name) for s, r in zip(samples, results, strict=True)]
    outputs = ["series.csv", "samples.csv", *(f"series.{f}" for f in formats), "series.yaml",
               "run.json", "samples/NAME/split.csv",
               *(f"samples/NAME/split.{f}" for f in formats)]
    record = run_record(
        "split",
        inputs=inputs,
        options={"series": str(series), **opts.record(),
                 "config": None if config is None else str(config),
                 "reading": {k: v for k, v in (reading or {}).items() if v}},
        samples={s.name: {
            "files": [str(f) for f in s.files], "composition": s.composition,
            "notes": {k: {"text": n.text, "value": n.value, "unit": n.unit}
                      for k, n in s.notes.items()},
            "uncertainty": uncertainty_record(r),
            "measurements": {"sources": m.sources, "heat_capacity": m.heat_capacity_source,
                             "dropped_rows": list(m.dropped), "notes": list(m.notes),
                             "rows": int(r.temperature.size)},
            "derived": derived_record(r),
            "summary": summary_lines(r, m)}
            for s, r, m in zip(samples, results, measured, strict=True)},
        outputs_written=outputs,
        citations=sorted({c for r in results for c in r.citations}),
        caution=common.CAUTION,
    )
    with output_folder(out, force=force, inputs=inputs) as tmp:
        write_table(tmp / "series.csv", series_columns(samples, results, measured))
        write_table(tmp / "samples.csv", _samples_table(samples, results, tmp))
        save(fig, tmp / "series", formats)
        (tmp / "series.yaml").write_text(_fit_series_file(sf, out), encoding="utf-8")
        for s, r, m, f in zip(samples, results, measured, sample_figs, strict=True):
            folder = tmp / "samples" / s.name
            folder.mkdir(parents=True, exist_ok=True)
            write_table(folder / "split.csv", table_columns(r, m))
            save(f, folder / "split", formats)
        write_json(tmp / "run.json", record)
    headers = ["sample", "rows", "T [K]", "kappa_L first", "kappa_L last", "sys %", "rand %",
               "notes"]
    rows = []
    for s, r in zip(samples, results, strict=True):
        rel = np.abs(r.kappa_L)
        rows.append([s.name, r.temperature.size,
                     f"{r.temperature[0]:.4g}-{r.temperature[-1]:.4g}",
                     f"{r.kappa_L[0]:.3g} ({r.kappa_L_low[0]:.3g}..{r.kappa_L_high[0]:.3g})",
                     f"{r.kappa_L[-1]:.3g} ({r.kappa_L_low[-1]:.3g}..{r.kappa_L_high[-1]:.3g})",
                     100 * float(np.median(r.kappa_L_err_systematic / rel)),
                     100 * float(np.median(r.kappa_L_err_random / rel)),
                     ", ".join(f"{k}={n.text}" for k, n in s.notes.items())])
    typer.echo("kappa_L in W/(m K) with its 68 % interval; sys/rand: median relative half "
               "widths of the systematic and random parts")
    common.print_table(headers, rows, max_rows=100, source=f"{out}/samples.csv")
    typer.echo(f"wrote {out}/ (series.csv, samples.csv, "
               f"{', '.join(f'series.{f}' for f in formats)}, series.yaml, run.json, "
               f"samples/NAME/split.csv|{'|'.join(formats)})")
