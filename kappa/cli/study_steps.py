"""The steps of ``kappa study`` (see :mod:`kappa.cli.study`): each computes with the library
calls of a single command and writes its folder of the study whole (``output_folder``).

1. :func:`split_step` — ``1-split/NAME/`` as ``kappa split FILES --config CONFIG`` writes it;
2. :func:`fit_step` — ``2-fit/`` as ``kappa fit --series`` writes it, from step 1's
   ``split.csv`` files read as ``kappa fit`` reads them;
3. :func:`spectrum_step` — ``3-spectrum/`` as ``kappa spectrum`` writes it (reference sample);
4. :func:`scenario_step` — ``4-scenarios/``: every scenario as ``kappa predict FITTED --set``
   computes it, with the fit's uncertainty (:func:`kappa.workflows.study.what_if`) and the
   projected zT;
5. :func:`report_step` — ``report.html``, written last (a temporary file renamed into place).

Library errors name Python arguments; the steps rename them to study keys.
"""

from __future__ import annotations

import tempfile
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from . import common

if TYPE_CHECKING:
    from kappa.io.study import StudyRun

__all__ = ["split_step", "fit_step", "spectrum_step", "scenario_step", "report_step"]


def split_step(run: StudyRun) -> None:
    import dataclasses

    from kappa.cli.split import summary_lines, table_columns
    from kappa.errors import DataError
    from kappa.io.labfiles import split_sheet
    from kappa.io.measurements import parse_constants, read_measurements
    from kappa.io.outdir import output_folder
    from kappa.io.records import run_record, write_json
    from kappa.io.tables import write_table
    from kappa.presentation.split import plot_split
    from kappa.workflows.split import DEFAULT_UNCERTAINTY, split_measurements

    study, opts = run.study, run.study.split
    density, velocities = _cahill_inputs(study.config.material)
    options = {"lorenz": opts.lorenz, "scattering_exponent": opts.scattering_exponent,
               "uncertainty": opts.uncertainty, "draws": opts.draws, "seed": opts.seed,
               "fit_window": opts.window}
    for i, s in enumerate(study.samples):
        where = {"--density": f"study.samples.{i}.density",
                 "--heat-capacity": f"study.samples.{i}.heat_capacity"}
        constants = [dataclasses.replace(c, where=where[c.where])
                     for c in parse_constants(s.density, s.heat_capacity)]
        m = read_measurements(s.files, nan=opts.nan, composition=s.composition,
                              extrapolate=opts.extrapolate or 0.0, constants=constants)
        if m.seebeck is None and opts.lorenz in ("spb", "kim"):
            raise DataError(f"study.samples.{i}.files", ", ".join(p.name for p in s.files),
                            f"no column 'S [...]': the Lorenz choice {opts.lorenz} needs the "
                            "Seebeck coefficient; add it, or set study.split.lorenz to "
                            "degenerate, nondegenerate or a number")
        try:
            r = split_measurements(m, **options, number_density=density,
                                   sound_velocities=velocities,
                                   progress=common.Bar(f"split {s.name}"))
        except DataError as exc:
            names = {"fit_window": "study.split.window", "draws": "study.split.draws",
                     "seed": "study.split.seed", "uncertainty": "study.split.uncertainty",
                     "scattering_exponent": "study.split.scattering_exponent"}
            raise DataError(names.get(exc.key, exc.key), exc.value, exc.allowed) from None
        run.measurements[s.name], run.splits[s.name] = m, r
        run.split_summaries[s.name] = summary_lines(r, m)
    with output_folder(run.out / "1-split", inputs=study.files) as tmp:
        for s in study.samples:
            m, r = run.measurements[s.name], run.splits[s.name]
            folder = tmp / s.name
            folder.mkdir()
            write_table(folder / "split.csv", table_columns(r, m))
            fig = plot_split(r, title=f"{s.name}: " + ", ".join(p.name for p in s.files))
            _save(fig, folder / "split")
            write_json(folder / "run.json", run_record(
                "split", inputs=[*(split_sheet(f)[0] for f in s.files), study.config_path],
                study=str(study.path), sample=s.name, notes=s.notes,
                options={"files": [str(p) for p in s.files], "lorenz": opts.lorenz,
                         "scattering_exponent": opts.scattering_exponent,
                         "composition": s.composition, "uncertainty": r.uncertainty,
                         "uncertainty_defaults": DEFAULT_UNCERTAINTY,
                         "fit_window [K]": list(opts.window) if opts.window else "automatic",
                         "nan": opts.nan, "draws": opts.draws, "seed": opts.seed,
                         "number_density [1/m^3]": density,
                         "sound_velocities [m/s]": velocities,
                         "extrapolate": opts.extrapolate, "density": s.density,
                         "heat_capacity": s.heat_capacity,
                         "config": str(study.config_path)},
                measurements={"sources": m.sources, "heat_capacity": m.heat_capacity_source,
                              "dropped_rows": list(m.dropped), "notes": list(m.notes),
                              "rows": int(r.temperature.size)},
                summary=run.split_summaries[s.name], citations=list(r.citations),
                caution=common.CAUTION))


def _cahill_inputs(material) -> tuple[float, list[float]]:
    """Atoms per volume and acoustic velocities of the config for the Cahill minimum, as
    ``kappa split --config CONFIG`` takes them (one velocity per branch mode)."""
    velocities: list[float] = []
    for b in material.branches:
        velocities += [float(b.sound_velocity)] * (1 if not material.per_branch
                                                   else max(1, round(b.count)))
    return 1.0 / float(material.atomic_volume), velocities


_FIT_KEYS = {"window": "study.fit.window", "starts": "study.fit.starts",
             "seed": "study.fit.seed", "shared": "study.fit.shared",
             "per_sample": "study.fit.per_sample", "free": "study.fit"}


def _fit_key(key: str) -> str:
    for arg, name in (("bounds[", "study.fit.bounds."), ("start_values[", "study.fit.start.")):
        if key.startswith(arg):
            return name + key[len(arg):].rstrip("]")
    return _FIT_KEYS.get(key, key)


def fit_step(run: StudyRun) -> None:
    from kappa.cli.fit import write_fit
    from kappa.errors import KappaError
    from kappa.io.config import config_from_dict
    from kappa.io.fitfiles import fitted_config_data, read_fit_data
    from kappa.presentation.fit import fit_curves
    from kappa.workflows.fitting import Covariance, SeriesSample, fit_series

    study, opts = run.study, run.study.fit
    samples, csvs = [], []
    for i, s in enumerate(study.samples):
        path = run.out / "1-split" / s.name / "split.csv"
        window = s.window if s.window is not None else opts.window
        try:
            data = read_fit_data(path, window=window, name=s.name)
        except KappaError as exc:
            where = f"study.samples.{i}.window" if s.window is not None else "study.fit.window"
            key = where if exc.key == "window" else f"{where} (1-split/{s.name}/{exc.key})"
            raise type(exc)(key, *((exc.value,) if exc.has_value else ()),
                            allowed=exc.allowed) from None
        samples.append(SeriesSample(s.name, s.config.model, data))
        csvs.append(path)
    try:
        result = fit_series(samples, opts.shared, opts.per_sample,
                            start_values=opts.start_values, bounds=opts.bounds,
                            starts=opts.starts, seed=opts.seed, progress=common.Bar("fit"))
    except KappaError as exc:
        raise exc.renamed(_fit_key(exc.key)) from None
    configs = {s.name: s.config for s in study.samples}
    meta = {"study": str(study.path), "config": str(study.config_path),
            "shared": list(opts.shared), "per_sample": list(opts.per_sample),
            "bounds": {k: list(v) for k, v in opts.bounds.items()},
            "window": opts.window_text, "fit_options": opts.written}
    write_fit(result, fit_curves(result), run.out / "2-fit", False,
              [*csvs, study.config_path], meta, True, configs)
    run.fit, run.fit_samples = result, samples
    for sf in result.samples:
        cfg = configs[sf.name]
        data = fitted_config_data(cfg, sf.model, result, sf.name, sf.data.temperature)
        run.fitted[sf.name] = config_from_dict(
            data, str(run.out / "2-fit" / "samples" / sf.name / "fitted.yaml"))
    run.covariance = Covariance.from_result(result, study.projection.sample)


def spectrum_step(run: StudyRun) -> None:
    from kappa.cli.spectrum import NORMAL_NOTE, mfp_table, spectrum_table
    from kappa.io.outdir import output_folder
    from kappa.io.records import model_summary, run_record, write_json
    from kappa.io.tables import write_table
    from kappa.presentation.sweep import plot_cumulative, plot_rates, plot_spectral
    from kappa.workflows.spectrum import spectrum

    name = run.study.projection.sample
    model = run.fitted[name].model
    T = run.study.spectrum_at if run.study.spectrum_at.size else run.at
    sp = spectrum(model, T)
    run.spectrum, run.spectrum_at = sp, T
    fitted = run.out / "2-fit" / "samples" / name / "fitted.yaml"
    with output_folder(run.out / "3-spectrum", inputs=[fitted]) as tmp:
        write_table(tmp / "spectrum.csv", spectrum_table(sp))
        write_table(tmp / "cumulative_mfp.csv", mfp_table(sp))
        for stem, fig in (("spectral", plot_spectral(sp)), ("cumulative", plot_cumulative(sp)),
                          ("rates", plot_rates(sp))):
            _save(fig, tmp / stem)
        write_json(tmp / "run.json", run_record(
            "spectrum", inputs=[fitted], study=str(run.study.path), sample=name,
            **{"temperatures [K]": T, "kappa_L [W/(m K)]": sp.kappa_L,
               "mfp50 [nm]": sp.mfp50 * 1e9, "mfp80 [nm]": sp.mfp80 * 1e9},
            note=NORMAL_NOTE if model.mechanisms.normal else None,
            model_si=model_summary(model), citations=sp.citations))


def scenario_step(run: StudyRun) -> None:
    from kappa.io.outdir import output_folder
    from kappa.io.records import dump_yaml, run_record, write_json
    from kappa.io.study import json_safe, scenario_config
    from kappa.io.tables import write_table
    from kappa.presentation.report import plot_changes, plot_scenarios, plot_zT
    from kappa.workflows.predict import predict
    from kappa.workflows.study import ZT_ASSUMPTION, answers, project_zT, what_if

    study, proj = run.study, run.study.projection
    ref_cfg = run.fitted[proj.sample]
    split = run.splits[proj.sample]
    grid = proj.temperature if proj.temperature is not None else ref_cfg.require_temperature()
    T_all = np.unique(np.concatenate([grid, split.temperature, run.at]))
    ref = predict(ref_cfg.model, T_all, switch_off=False).kappa_L
    named = []
    for s in study.scenarios:
        cfg = scenario_config(ref_cfg, s)
        w = what_if(ref_cfg.model, run.covariance, cfg.model, T_all, held=tuple(s.changes),
                    draws=proj.draws, seed=proj.seed, reference=ref)
        run.scenarios.append((s, cfg, w))
        named.append((s.name, s.text, w))
    run.grid, run.reference = grid, ref
    run.answers = answers(named, split, run.at)
    if split.seebeck is not None:
        for s, _, w in run.scenarios:
            a = w.at(split.temperature)
            run.zT[s.name] = project_zT(split, split.temperature, a.ratio, a.ratio_draws)
    curves = _curve_columns(run, [w.at(grid) for _, _, w in run.scenarios], grid)
    figs = {"scenarios": plot_scenarios(run), "changes": plot_changes(run)}
    if run.zT:
        figs["zT"] = plot_zT(run)
    with output_folder(run.out / "4-scenarios", inputs=study.files) as tmp:
        write_table(tmp / "kappa_L_curves.csv", curves)
        write_table(tmp / "answers.csv", _answer_columns(run.answers))
        if run.zT:
            write_table(tmp / "zT_projected.csv", _zT_columns(run))
        for stem, fig in figs.items():
            _save(fig, tmp / stem)
        folder = tmp / "configs"
        folder.mkdir()
        for i, (s, cfg, _) in enumerate(run.scenarios):
            (folder / f"{i + 1:02d}-{_file_name(s.name)}.yaml").write_text(dump_yaml(
                cfg.data, f"Scenario '{s.name}' of the study {study.path.name}: the fitted "
                f"config of {proj.sample} with {s.text}.\nRuns as is in 'kappa predict'."),
                encoding="utf-8")
        write_json(tmp / "run.json", run_record(
            "study scenarios", inputs=[run.out / "2-fit" / "samples" / proj.sample /
                                       "fitted.yaml"],
            study=str(study.path), sample=proj.sample,
            scenarios=[{"name": s.name, "changes": json_safe(s.changes), "group": s.group,
                        "held_fitted_keys": list(w.held), "draws": w.draws,
                        "rejected": w.rejected, "no_interval": w.note or None}
                       for s, _, w in run.scenarios],
            **{"answer temperatures [K]": run.at, "curve temperatures [K]": grid},
            draws=proj.draws, seed=proj.seed,
            uncertainty=("68 % intervals: 16th/84th percentiles over parameter sets drawn from "
                         "the fit's covariance; the fitted model and every scenario use the "
                         "same draws (fitted keys a scenario sets are held)"),
            zT_assumption=ZT_ASSUMPTION))


def _save(fig, stem: Path) -> None:
    """``stem.png`` and ``stem.svg`` in the figure style's one way of saving."""
    from kappa.presentation.style import save

    save(fig, stem)


def _curve_columns(run: StudyRun, on_grid, grid) -> list[tuple[str, Any]]:
    """``kappa_L_curves.csv`` in long form: one row per scenario and temperature, with the
    fitted sample's κ_L beside each scenario's (``scenario`` is the scenario's name)."""
    names = [s.name for s, _, _ in run.scenarios]
    nT = grid.size
    nan = np.full(nT, np.nan)
    cols: list[tuple[str, Any]] = [
        ("scenario", [n for n in names for _ in range(nT)]),
        ("T [K]", np.tile(grid, len(names))),
        ("kappa_L_fitted [W/(m K)]", np.concatenate([w.reference for w in on_grid])),
        ("kappa_L [W/(m K)]", np.concatenate([w.kappa_L for w in on_grid])),
        ("kappa_L_low [W/(m K)]", np.concatenate([nan if w.low is None else w.low
                                                  for w in on_grid])),
        ("kappa_L_high [W/(m K)]", np.concatenate([nan if w.high is None else w.high
                                                   for w in on_grid]))]
    return cols


def _file_name(name: str) -> str:
    import re

    return re.sub(r"[^A-Za-z0-9._+-]+", "_", name).strip("_") or "scenario"


def _answer_columns(rows) -> list[tuple[str, Any]]:
    def col(name):
        return [getattr(r, name) for r in rows]

    pct = 100.0
    return [("scenario", col("scenario")), ("changes", col("changes")),
            ("T [K]", np.array(col("temperature"))),
            ("kappa_L_fitted [W/(m K)]", np.array(col("kappa_L_fitted"))),
            ("kappa_L [W/(m K)]", np.array(col("kappa_L"))),
            ("kappa_L_low [W/(m K)]", np.array(col("kappa_L_low"))),
            ("kappa_L_high [W/(m K)]", np.array(col("kappa_L_high"))),
            ("change [%]", pct * np.array(col("change"))),
            ("change_low [%]", pct * np.array(col("change_low"))),
            ("change_high [%]", pct * np.array(col("change_high"))),
            ("zT_measured [1]", np.array(col("zT_measured"))),
            ("zT_projected [1]", np.array(col("zT"))),
            ("zT_low [1]", np.array(col("zT_low"))),
            ("zT_high [1]", np.array(col("zT_high")))]


def _zT_columns(run: StudyRun) -> list[tuple[str, Any]]:
    """``zT_projected.csv`` in long form: one row per scenario and measured temperature."""
    split = run.splits[run.study.projection.sample]
    T = split.temperature
    nan = np.full(T.size, np.nan)
    zs = list(run.zT.items())
    return [("scenario", [name for name, _ in zs for _ in range(T.size)]),
            ("T [K]", np.tile(T, len(zs))),
            ("zT_measured [1]", np.tile(split.zT, len(zs))),
            ("zT_projected [1]", np.concatenate([z.projected for _, z in zs])),
            ("zT_low [1]", np.concatenate([nan if z.low is None else z.low for _, z in zs])),
            ("zT_high [1]", np.concatenate([nan if z.high is None else z.high for _, z in zs]))]


def report_step(run: StudyRun) -> None:
    import os

    from kappa.presentation.report import render_report

    html = render_report(run)
    fd, tmp = tempfile.mkstemp(prefix=".report.", suffix=".partial", dir=run.out)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(html)
        os.chmod(tmp, 0o644)
        os.replace(tmp, run.out / "report.html")
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


