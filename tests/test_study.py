"""`kappa study`: the study's numbers are those of the single commands; bad input; partial output.

A small synthetic study (invented data made here with kappa's own model, two samples) runs once
through the library (module fixture); the single commands (`kappa split`, `kappa fit --series`,
`kappa predict --set`) then run on the same inputs through the command line and must give the
same numbers (1e-9 relative where full precision is available; CSV files are compared as
written).
"""

from __future__ import annotations

import csv
import json
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.evaluator import conductivity
from kappa.io.config import config_from_dict, load_config

runner = CliRunner()

CONFIG = {
    "material": {"name": "study test solid (invented)", "atomic_mass": "60 u",
                 "atomic_volume": "20 angstrom**3", "debye_temperature": "320 K",
                 "sound_velocity": "3200 m/s", "gruneisen": 1.3},
    "scattering": {"boundary": {"grain_size": "1 um"},
                   "point_defect": {"mass_variance": 0.02}},
    "temperature": {"start": "300 K", "stop": "700 K", "points": 9},
}
T = np.arange(300.0, 701.0, 40.0)
TRUE = {"A": 2e-6, "B": 150e-9}


def _sample_file(folder: Path, name: str, grain: float, seed: int) -> Path:
    model = config_from_dict(CONFIG).model.with_values(
        {"material.gruneisen": 1.6, "scattering.boundary.grain_size": grain})
    rng = np.random.default_rng(seed)
    kl = conductivity(model, T) * (1 + 0.01 * rng.standard_normal(T.size))
    S = 150e-6 + 0.1e-6 * (T - 300.0)
    sigma = 6e4 * (300.0 / T)
    kappa = kl + 1.8e-8 * sigma * T
    path = folder / f"{name}.csv"
    rows = [f"{t:g},{k:.5f},{s / 100:.3f},{-v * 1e6:.3f}"
            for t, k, s, v in zip(T, kappa, sigma, S, strict=True)]
    path.write_text("# invented test data\nT [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]\n"
                    + "\n".join(rows) + "\n", encoding="utf-8")
    return path


STUDY = {
    "title": "synthetic test study",
    "config": "solid.yaml",
    "samples": [{"name": "A", "files": ["A.csv"], "notes": "coarse <grains> & \"co\""},
                {"name": "B", "files": ["B.csv"], "notes": "fine",
                 "set": {"scattering.boundary.grain_size": "300 nm"}}],
    "split": {"lorenz": "spb", "uncertainty": {"kappa": 0.06, "sigma": 0.04, "S": 0.04},
              "draws": 300, "seed": 3},
    "fit": {"shared": ["material.gruneisen"], "per_sample": ["scattering.boundary.grain_size"],
            "bounds": {"scattering.boundary.grain_size": "10 nm:100 um"},
            "window": "300K:660K", "starts": 2, "seed": 1},
    "scenarios": [
        {"name": "grains 100 nm", "changes": {"scattering.boundary.grain_size": "100 nm"}},
        {"name": "defects", "key": "scattering.point_defect.mass_variance",
         "values": [0.05, 0.1]},
        {"name": "unchanged", "changes": {"scattering.point_defect.mass_variance": 0.02}},
    ],
    "projection": {"sample": "A", "at": ["500 K"], "draws": 60, "seed": 2},
    "spectrum": {"at": ["500 K"]},
}


def make_study(folder: Path, study: dict | None = None) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "solid.yaml").write_text(yaml.safe_dump(CONFIG, sort_keys=False),
                                       encoding="utf-8")
    for i, (name, grain) in enumerate(TRUE.items()):
        _sample_file(folder, name, grain, seed=i)
    path = folder / "study.yaml"
    path.write_text(yaml.safe_dump(study or STUDY, sort_keys=False, allow_unicode=True),
                    encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def done(tmp_path_factory):
    """The synthetic study, run once through the command line (``kappa study``); the study's
    in-memory results are kept too (from the terminal summary, which receives them)."""
    import kappa.cli.study as command

    folder = tmp_path_factory.mktemp("study")
    path = make_study(folder / "in")
    kept = {}
    original = command.summary

    def keep(run):
        kept["run"] = run
        original(run)

    command.summary = keep
    try:
        r = runner.invoke(app, ["study", str(path), "-o", str(folder / "out")])
    finally:
        command.summary = original
    assert r.exit_code == 0, r.output
    kept["run"].output = r.output
    return kept["run"]


def _csv(path: Path) -> tuple[list[str], list[list[str]]]:
    with open(path, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    return rows[0], rows[1:]


def _column(path: Path, header: str) -> np.ndarray:
    head, rows = _csv(path)
    i = head.index(header)
    return np.array([float(r[i]) if r[i] else np.nan for r in rows])


# --- the same numbers as the single commands ------------------------------------------------


def test_split_equals_kappa_split(done, tmp_path):
    from kappa.io.measurements import read_measurements
    from kappa.workflows.split import split_measurements

    inputs = done.study.path.parent
    for name in TRUE:
        out = tmp_path / f"split-{name}"
        r = runner.invoke(app, ["split", str(inputs / f"{name}.csv"), "--config",
                                str(inputs / "solid.yaml"), "--lorenz", "spb", "--uncertainty",
                                "kappa=0.06,sigma=0.04,S=0.04", "--draws", "300", "--seed", "3",
                                "-o", str(out)])
        assert r.exit_code == 0, r.output
        mine = (done.out / "1-split" / name / "split.csv").read_text(encoding="utf-8")
        assert mine == (out / "split.csv").read_text(encoding="utf-8")
        # and at full precision, through the library
        m = read_measurements([inputs / f"{name}.csv"])
        cfg = load_config(inputs / "solid.yaml").material
        ref = split_measurements(m, lorenz="spb", uncertainty={"kappa": 0.06, "sigma": 0.04,
                                                               "S": 0.04},
                                 draws=300, seed=3, number_density=1 / cfg.atomic_volume,
                                 sound_velocities=[cfg.branches[0].sound_velocity])
        got = done.splits[name]
        for field in ("kappa_L", "kappa_L_low", "kappa_L_high", "kappa_e", "lorenz", "zT"):
            np.testing.assert_allclose(getattr(got, field), getattr(ref, field), rtol=1e-9,
                                       atol=0)


def test_fit_equals_kappa_fit_series(done, tmp_path):
    inputs = done.study.path.parent
    for name in TRUE:  # the single command's own split files
        r = runner.invoke(app, ["split", str(inputs / f"{name}.csv"), "--config",
                                str(inputs / "solid.yaml"), "--uncertainty",
                                "kappa=0.06,sigma=0.04,S=0.04", "--draws", "300", "--seed",
                                "3", "-o", str(tmp_path / name)])
        assert r.exit_code == 0, r.output
    series = {"config": str(inputs / "solid.yaml"), "shared": ["material.gruneisen"],
              "per_sample": ["scattering.boundary.grain_size"],
              "bounds": {"scattering.boundary.grain_size": "10 nm:100 um"},
              "window": "300K:660K",
              "samples": [{"name": "A", "data": "A/split.csv"},
                          {"name": "B", "data": "B/split.csv",
                           "set": {"scattering.boundary.grain_size": "300 nm"}}]}
    (tmp_path / "series.yaml").write_text(yaml.safe_dump(series), encoding="utf-8")
    r = runner.invoke(app, ["fit", "--series", str(tmp_path / "series.yaml"), "--starts", "2",
                            "--seed", "1", "-o", str(tmp_path / "fit")])
    assert r.exit_code == 0, r.output
    for name in TRUE:
        theirs = json.loads((tmp_path / "fit" / "samples" / name / "fit.json").read_text())
        mine = json.loads((done.out / "2-fit" / "samples" / name / "fit.json").read_text())
        assert [p["key"] for p in mine["parameters"]] == [p["key"] for p in theirs["parameters"]]
        np.testing.assert_allclose([p["value"] for p in mine["parameters"]],
                                   [p["value"] for p in theirs["parameters"]], rtol=1e-9)
        np.testing.assert_allclose(mine["covariance"], theirs["covariance"], rtol=1e-9,
                                   atol=1e-300)
        fitted = done.fit.parameter("scattering.boundary.grain_size", name).value
        assert fitted == pytest.approx(theirs["parameters"][1]["value"], rel=1e-9)


def test_scenarios_equal_kappa_predict_set(done, tmp_path):
    from kappa.workflows.predict import predict

    fitted = done.out / "2-fit" / "samples" / "A" / "fitted.yaml"
    curves = done.out / "4-scenarios" / "kappa_L_curves.csv"
    head, rows = _csv(curves)
    names = np.array([r[head.index("scenario")] for r in rows])
    for s, _, w in done.scenarios:
        sets = [f"{k}={v}" for k, v in s.changes.items()]
        out = tmp_path / f"p{len(list(tmp_path.iterdir()))}"
        args = ["predict", str(fitted), "-o", str(out)]
        for item in sets:
            args += ["--set", item]
        r = runner.invoke(app, args)
        assert r.exit_code == 0, r.output
        theirs = _column(out / "kappa_L.csv", "kappa_L [W/(m K)]")
        grid = _column(out / "kappa_L.csv", "T [K]")
        mine = names == s.name  # long form: this scenario's rows
        np.testing.assert_array_equal(grid, _column(curves, "T [K]")[mine])
        np.testing.assert_allclose(_column(curves, "kappa_L [W/(m K)]")[mine], theirs,
                                   rtol=1e-7)  # both as written (8 digits)
        model = load_config(fitted, sets).model  # full precision through the library
        np.testing.assert_allclose(w.at(grid).kappa_L, predict(model, grid).kappa_L,
                                   rtol=1e-9, atol=0)
    base = predict(load_config(fitted).model, done.grid).kappa_L
    np.testing.assert_allclose(done.scenarios[0][2].at(done.grid).reference, base, rtol=1e-9)


def test_answers_and_zT(done):
    split = done.splits["A"]
    rows = {a.scenario: a for a in done.answers}
    assert set(rows) == {"grains 100 nm", "defects 0.05", "defects 0.1", "unchanged"}
    i = int(np.flatnonzero(split.temperature == 500.0)[0])
    for a in rows.values():
        assert a.temperature == 500.0
        assert a.zT_measured == pytest.approx(split.zT[i], rel=1e-12)
        # zT = S² σ T / κ with κ = κ_e + κ_L·(1 + change) (definition; common practice)
        kappa = split.kappa_e[i] + split.kappa_L[i] * (1 + a.change)
        expected = split.seebeck[i] ** 2 * split.electrical_conductivity[i] * 500.0 / kappa
        assert a.zT == pytest.approx(expected, rel=1e-12)
    # a change that changes nothing: ratio exactly 1 in every paired draw
    same = rows["unchanged"]
    assert same.change == 0.0 and same.change_low == 0.0 and same.change_high == 0.0
    assert same.zT == same.zT_measured
    # smaller grains and more disorder lower κ_L; its interval brackets the value
    for name in ("grains 100 nm", "defects 0.05", "defects 0.1"):
        a = rows[name]
        assert a.change < 0 and a.change_low <= a.change <= a.change_high < 0
        assert a.zT > a.zT_measured
    assert rows["defects 0.1"].change < rows["defects 0.05"].change
    held = {s.name: w.held for s, _, w in done.scenarios}
    assert held["grains 100 nm"] == ("scattering.boundary.grain_size",)
    assert held["defects 0.05"] == ()


def test_outputs_and_record(done):
    out = done.out
    for rel in ("1-split/A/split.csv", "1-split/B/split.png", "2-fit/fit.svg",
                "2-fit/samples/B/fitted.yaml", "3-spectrum/cumulative_mfp.csv",
                "4-scenarios/answers.csv", "4-scenarios/zT_projected.csv",
                "4-scenarios/scenarios.png", "4-scenarios/scenarios.svg",
                "4-scenarios/configs/01-grains_100_nm.yaml", "report.html", "run.json"):
        assert (out / rel).is_file(), rel
    record = json.loads((out / "run.json").read_text())
    assert record["program"] == "kappa" and record["status"] == "done"
    assert [s for s in record["steps"]] == ["1-split", "2-fit", "3-spectrum", "4-scenarios",
                                           "report"]
    files = record["output_files"]
    assert "report.html" in files and "2-fit/samples/A/fit.json" in files
    assert all(len(f["sha256"]) == 64 for f in record["input_files"])
    # a scenario's config runs as it is
    cfg = load_config(out / "4-scenarios" / "configs" / "01-grains_100_nm.yaml")
    assert cfg.model.value("scattering.boundary.grain_size") == pytest.approx(100e-9)


# --- the command line: output folder, --force, bad input, a failing step ---------------------


def test_command_line_summary_and_force(done, tmp_path):
    import shutil

    assert "what-if answers for A" in done.output and "grains 100 nm" in done.output
    assert "report.html" in done.output and "1-split: 2 sample(s)" in done.output
    out = tmp_path / "out"
    shutil.copytree(done.out, out)
    path = done.study.path
    r = runner.invoke(app, ["study", str(path), "-o", str(out)])
    assert r.exit_code == 2 and "already exists" in r.output
    (out / "report.html").write_text("changed", encoding="utf-8")
    r = runner.invoke(app, ["study", str(path), "-o", str(out), "--force"])
    assert r.exit_code == 2 and "changed since kappa wrote them" in r.output
    assert (out / "report.html").read_text(encoding="utf-8") == "changed"  # nothing touched
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]


def _bad(tmp_path, change) -> tuple[int, list[str], Path]:
    study = json.loads(json.dumps(STUDY))
    change(study)
    path = make_study(tmp_path / "in", study)
    out = tmp_path / "out"
    r = runner.invoke(app, ["study", str(path), "-o", str(out)])
    lines = [line for line in r.output.splitlines() if line.strip()]
    return r.exit_code, lines, out


@pytest.mark.parametrize("change, fragment", [
    (lambda s: s["samples"][1].update(files=["B.csv", "B_missing.csv"]),
     "error: study.samples.1.files.1 = B_missing.csv: file not found"),
    (lambda s: s["scenarios"].append({"name": "typo", "changes": {
        "scattering.boundary.grain_sise": "50 nm"}}),
     "error: study.scenarios.3.changes.scattering.boundary.grain_sise: unknown key; did you "
     "mean 'grain_size'?"),
    (lambda s: s.update(scenarios=[]), "error: study.scenarios = []: must be a non-empty list"),
    (lambda s: s["scenarios"][0]["changes"].update({"scattering.boundary.grain_size": "5 K"}),
     "error: study.scenarios.0.changes.scattering.boundary.grain_size = 5 K: wrong dimension"),
    (lambda s: s["scenarios"][1].update(key="scattering.point_defect.mass_varianse"),
     "error: study.scenarios.1.key = scattering.point_defect.mass_varianse: unknown key; did "
     "you mean 'mass_variance'?"),
    (lambda s: s["scenarios"][1].update(values=[0.05, -1]),
     "error: study.scenarios.1.values.1 = -1"),
    (lambda s: s["scenarios"][0]["changes"].update({"material.branches.0.gruneisen": 1.0}),
     "error: study.scenarios.0.changes.material.branches.0.gruneisen = 1: this is an "
     "averaged-branch model"),
    (lambda s: s["scenarios"][0]["changes"].update({"temperature.stop": "900 K"}),
     "error: study.scenarios.0.changes.temperature.stop = 900 K: temperatures are not a "
     "what-if"),
    (lambda s: s["fit"].update(shared=["material.gruneisn"]),
     "error: study.fit.shared.0 = material.gruneisn: unknown key; did you mean 'gruneisen'?"),
    (lambda s: s.update(sceanrios=[]), "error: study.sceanrios: unknown key; did you mean "
                                       "'scenarios'?"),
    (lambda s: s["projection"].update(sample="C"),
     "error: study.projection.sample = C: the name of a sample: A, B"),
    (lambda s: s["split"].update(lorenz="metallic"), "error: study.split.lorenz = metallic"),
    (lambda s: s.pop("fit"), "error: study.fit: missing"),
])
def test_bad_study_file_exit_2_one_line_nothing_written(tmp_path, change, fragment):
    code, lines, out = _bad(tmp_path, change)
    assert code == 2
    assert len(lines) == 1 and lines[0].startswith(fragment), lines
    assert not out.exists()


def test_bad_data_in_the_first_step_leaves_nothing(tmp_path):
    path = make_study(tmp_path / "in")
    data = tmp_path / "in" / "B.csv"
    data.write_text(data.read_text().replace("\n460,", "\n460x,"), encoding="utf-8")
    out = tmp_path / "out"
    r = runner.invoke(app, ["study", str(path), "-o", str(out)])
    lines = [line for line in r.output.splitlines() if line.strip()]
    assert r.exit_code == 2 and len(lines) == 1, r.output
    assert lines[0].startswith("error: study step 1-split failed (nothing written): B.csv, line")
    assert not out.exists()


def test_failing_step_names_it_and_keeps_the_steps_before(tmp_path):
    study = json.loads(json.dumps(STUDY))
    study["fit"]["window"] = "650K:700K"  # one point per sample: too few for the free keys
    path = make_study(tmp_path / "in", study)
    out = tmp_path / "out"
    r = runner.invoke(app, ["study", str(path), "-o", str(out)])
    lines = [line for line in r.output.splitlines() if line.startswith("error:")]
    assert r.exit_code == 2 and len(lines) == 1, r.output
    assert lines[0].startswith(f"error: study step 2-fit failed (1-split written in {out}): "
                               "study.fit.window")
    assert (out / "1-split" / "A" / "split.csv").is_file()
    assert not (out / "2-fit").exists() and not (out / "report.html").exists()
    record = json.loads((out / "run.json").read_text())
    assert record["status"] == "failed"
    assert record["steps"]["1-split"]["status"] == "done"
    assert record["steps"]["2-fit"]["status"] == "failed"
    assert not [p for p in out.iterdir() if p.name.startswith(".")]
    # the partial folder is marked as kappa's: --force may replace it
    from kappa.io.outdir import check_out

    assert check_out(out, force=True, inputs=[path]) == out


# --- the propagation alone --------------------------------------------------------------------


def test_what_if_without_a_covariance_has_no_interval():
    from kappa.workflows.study import what_if

    model = config_from_dict(CONFIG).model
    small = model.with_values({"scattering.boundary.grain_size": 100e-9})
    w = what_if(model, None, small, [300.0, 600.0])
    assert w.low is None and w.ratio_low is None and w.note
    np.testing.assert_allclose(w.ratio, conductivity(small, [300.0, 600.0])
                               / conductivity(model, [300.0, 600.0]), rtol=1e-12)


# --- the report: self-contained, escaped, rendered by a real browser -----------------------


class _Refs(HTMLParser):
    """Every attribute that makes a browser fetch or navigate, and the tags used."""

    ATTRS = {"src", "href", "srcset", "action", "formaction", "poster", "data", "xlink:href",
             "background", "manifest", "cite", "longdesc", "ping", "lowsrc"}

    def __init__(self) -> None:
        super().__init__()
        self.refs: list[tuple[str, str, str]] = []
        self.tags: set[str] = set()
        self.ids: set[str] = set()

    def handle_starttag(self, tag, attrs):
        self.tags.add(tag)
        for name, value in attrs:
            if name == "id":
                self.ids.add(value)
            if name.lower() in self.ATTRS:
                self.refs.append((tag, name, value or ""))


def test_report_has_no_external_references(done):
    html = (done.out / "report.html").read_text(encoding="utf-8")
    parser = _Refs()
    parser.feed(html)
    images = [v for tag, _, v in parser.refs if tag == "img"]
    assert len(images) >= 8  # split ×2, fit, spectrum ×3, scenarios ×3
    for tag, name, value in parser.refs:
        assert value.startswith(("data:image/png;base64,", "#")), (tag, name, value[:80])
    assert not re.search(r"https?://", html)
    assert not re.search(r"file:|<script|<link|<iframe|<object|<embed|@import|url\(", html,
                         re.IGNORECASE)
    assert {"answers", "inputs", "split", "fit", "spectrum", "scenarios", "warnings",
            "cautions", "files"} <= parser.ids
    # text from the study file is shown, never interpreted
    assert "coarse &lt;grains&gt; &amp; &#34;co&#34;" in html
    assert "<grains>" not in html
    # the answers and the cautions are there
    assert "grains 100 nm" in html and "zT assumption" in html
    assert "validate them by measurement" in html and "licensed engineering practice" in html
    assert "Grain boundaries and alloying also scatter electrons" in html
    for sha in (f["sha256"] for f in json.loads((done.out / "run.json").read_text())[
            "input_files"]):
        assert sha in html


def _chromium(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    profile = cwd / "profile"
    profile.mkdir(exist_ok=True)
    return subprocess.run(
        ["chromium", "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
         "--no-first-run", "--disable-background-networking", "--disable-component-update",
         "--disable-sync", "--hide-scrollbars", f"--user-data-dir={profile}", *args],
        cwd=cwd, capture_output=True, text=True, timeout=120)


@pytest.mark.skipif(shutil.which("chromium") is None, reason="chromium is not on PATH")
def test_report_renders_completely_in_chromium(done, tmp_path):
    html = (done.out / "report.html").read_text(encoding="utf-8")
    # a copy that reports, once loaded, how many images the browser decoded (the report
    # itself runs no scripts: its content policy allows only inline styles and data: images)
    probe = re.sub(r'<meta http-equiv="Content-Security-Policy"[^>]*>', "", html)
    probe = probe.replace("</body>", (
        "<script>window.addEventListener('load', () => { const all = [...document.images];"
        " const ok = all.filter(i => i.complete && i.naturalWidth > 0).length;"
        " document.body.setAttribute('data-rendered', ok + '/' + all.length); });"
        "</script></body>"))
    (tmp_path / "probe.html").write_text(probe, encoding="utf-8")
    r = _chromium("--virtual-time-budget=20000", "--dump-dom",
                  (tmp_path / "probe.html").as_uri(), cwd=tmp_path)
    assert r.returncode == 0, r.stderr[-2000:]
    found = re.search(r'data-rendered="(\d+)/(\d+)"', r.stdout)
    assert found, r.stdout[:500]
    assert found.group(1) == found.group(2) and int(found.group(2)) >= 8
    # and the report as written: a screenshot of the whole page
    shot = tmp_path / "report.png"
    r = _chromium(f"--screenshot={shot}", "--window-size=1280,4000",
                  (done.out / "report.html").as_uri(), cwd=tmp_path)
    assert r.returncode == 0, r.stderr[-2000:]
    head = shot.read_bytes()[:24]
    assert head[:8] == b"\x89PNG\r\n\x1a\n"
    assert int.from_bytes(head[16:20], "big") == 1280
    assert shot.stat().st_size > 100_000  # a page of figures and tables, not a blank one


def test_every_table_header_and_record_key_in_the_study_folder_has_one_style(done):
    """`name [unit]` headers without `=` or parentheses, and no unit glued to a record key
    (`onset_K`, `..._per_m3`) anywhere in the study's folders (common practice, no source)."""
    from tests.test_outputs import HEADER, _keys

    tables = list(done.out.rglob("*.csv"))
    assert tables
    for path in tables:
        head, _ = _csv(path)
        # correlation.csv is a matrix labelled by keys (SAMPLE:key for per-sample ones)
        bad = [h for h in head if not (HEADER.match(h) or h in ("scenario", "changes",
                                                                 "sample", "key", "branch")
                                       or (path.name == "correlation.csv"
                                           and re.fullmatch(r"[\w.:-]+", h)))]
        assert not bad, (path.relative_to(done.out), bad)
    for path in done.out.rglob("run.json"):
        keys = _keys(json.loads(path.read_text(encoding="utf-8")), [])
        bad = [k for k in keys if re.search(r"_(K|eV|s|nm|m)$|_per_", k)]
        assert not bad, (path.relative_to(done.out), bad)


def test_split_step_reads_lab_files_as_kappa_split_does(tmp_path):
    # sample A as a lab keeps it: the flash trio in a sheet of a spreadsheet, the density
    # given once in the study file, systematic + random uncertainties, an extrapolation
    # allowance; the study's split equals `kappa split` with the same options
    import openpyxl

    study = json.loads(json.dumps(STUDY))
    study["fit"]["window"] = "650K:700K"  # the fit fails: only the split step runs
    rho, cp = 3.08, 0.25  # g/cm^3, J/(g K) (invented)
    folder = tmp_path / "in"
    make_study(folder, study)
    lines = (folder / "A.csv").read_text(encoding="utf-8").splitlines()
    rows = [line.split(",") for line in lines[2:]]  # after the note and the header
    book = openpyxl.Workbook()
    book.active.title = "notes"
    sheet = book.create_sheet("A-flash")
    sheet.append(["T (K)", "D (mm2/s)", "cp (J/(g K))", "sigma (S/cm)", "S (uV/K)"])
    for r in rows:
        t, k, s, v = (float(x) for x in r)
        sheet.append([t, k / (rho * 1e3 * cp * 1e3) * 1e6, cp, s, v])
    book.save(folder / "A-lab.xlsx")
    study["samples"][0].update(files=["A-lab.xlsx:A-flash"], density=f"{rho} g/cm^3")
    study["split"].update(uncertainty={"kappa": "0.06+0.02", "sigma": 0.04, "S": "4%+1%"},
                          extrapolate="5 K")
    path = make_study(folder, study)
    out = tmp_path / "out"
    r = runner.invoke(app, ["study", str(path), "-o", str(out)])
    assert r.exit_code == 2 and (out / "1-split" / "A" / "split.csv").is_file(), r.output
    alone = tmp_path / "alone"
    r = runner.invoke(app, ["split", str(folder / "A-lab.xlsx:A-flash"), "--density",
                            f"{rho}g/cm^3", "--uncertainty", "kappa=0.06+0.02,sigma=0.04,"
                            "S=0.04+0.01", "--extrapolate", "5K", "--draws", "300", "--seed",
                            "3", "--config", str(folder / "solid.yaml"), "-o", str(alone)])
    assert r.exit_code == 0, r.output
    for column in ("kappa_L [W/(m K)]", "kappa_L_err_systematic [W/(m K)]",
                   "kappa_L_err_random [W/(m K)]", "zT [1]"):
        np.testing.assert_array_equal(_column(out / "1-split" / "A" / "split.csv", column),
                                      _column(alone / "split.csv", column))
    record = json.loads((out / "1-split" / "A" / "run.json").read_text(encoding="utf-8"))
    assert any("study.samples.0.density" in n for n in record["measurements"]["notes"])


def test_report_figures_have_no_clipped_or_overlapping_text(done):
    from kappa.presentation import style
    from kappa.presentation.report import plot_changes, plot_scenarios, plot_zT

    for plot in (plot_scenarios, plot_changes, plot_zT):
        fig = plot(done)
        fig.canvas.draw()
        assert style.text_problems(fig) == [], plot.__name__
