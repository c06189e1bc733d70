"""`kappa fit` and `kappa predict --band` through the command line."""

import csv
import hashlib
import json
import math

import numpy as np
import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.evaluator import conductivity
from kappa.io.config import config_from_dict, load_config

runner = CliRunner()

MODEL = {
    "material": {"name": "cli fit test", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.8},
    "scattering": {"boundary": {"grain_size": "1 um"},
                   "point_defect": {"mass_variance": 2.01e-4}},
}
T = np.round(np.geomspace(20.0, 800.0, 20), 2)


def _data(tmp_path, name="k.csv", gruneisen=1.1, grain=3e-6, noise=0.03, err=True, seed=1,
          kappa=None, temps=T):
    cfg = config_from_dict(MODEL).model.with_values({"material.gruneisen": gruneisen,
                                               "scattering.boundary.grain_size": grain})
    k = conductivity(cfg, temps)
    k = k * (1 + noise * np.random.default_rng(seed).standard_normal(temps.size))
    if kappa is not None:
        k = kappa
    p = tmp_path / name
    head = "T [K],kappa_L [W/(m K)]" + (",kappa_L_err [W/(m K)]" if err else "")
    rows = [f"{t},{v:.8g}" + (f",{noise * v:.6g}" if err else "")
            for t, v in zip(temps, k, strict=True)]
    p.write_text("\n".join([head, *rows]) + "\n", encoding="utf-8")
    return p


def _config(tmp_path, data=None, name="model.yaml"):
    p = tmp_path / name
    p.write_text(yaml.safe_dump(data or MODEL, sort_keys=False), encoding="utf-8")
    return p


def _read(path):
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    return rows[0], rows[1:]


def _digest(*paths):
    return [hashlib.sha256(p.read_bytes()).hexdigest() for p in paths]


FREE = ["--free", "material.gruneisen", "--free", "scattering.boundary.grain_size"]


def test_help():
    r = runner.invoke(app, ["fit", "--help"])
    assert r.exit_code == 0
    assert "Examples" in r.output and "--series" in r.output and "--free" in r.output
    # the caution belongs in the top-level help and the README, not in every command's help
    assert "validate them by measurement" not in " ".join(r.output.split())
    assert "validate them by measurement" in " ".join(runner.invoke(app, ["--help"]).output.split())


def test_fit_writes_outputs_and_round_trips_through_predict(tmp_path):
    cfg, data = _config(tmp_path), _data(tmp_path)
    before = _digest(cfg, data)
    out = tmp_path / "fit"
    r = runner.invoke(app, ["fit", str(cfg), str(data), *FREE, "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert {p.name for p in out.iterdir()} == {
        "fitted.yaml", "fit.json", "parameters.csv", "correlation.csv", "residuals.csv",
        "fit.png", "fit.svg", "run.json"}
    assert "chi2_red" in r.output and "AIC" in r.output and "BIC" in r.output
    assert _digest(cfg, data) == before  # inputs never modified
    head, rows = _read(out / "parameters.csv")
    assert head[:3] == ["parameter", "value", "stderr"] and "at_bound" in head
    values = {row[0]: (float(row[1]), float(row[2])) for row in rows}
    g, g_err = values["material.gruneisen"]
    assert abs(g - 1.1) < 3 * g_err  # the value the data were made with (this test's choice)
    L, L_err = values["scattering.boundary.grain_size"]  # written in nm
    assert abs(L - 3000.0) < 3 * L_err
    record = json.loads((out / "run.json").read_text())
    assert record["statistics"]["n_points"] == T.size
    assert "uncertainties" in record["weighting"]
    assert any("Callaway" in c for c in record["citations"])

    # fitted.yaml holds the fitted values and reproduces the fitted curve
    fitted = load_config(out / "fitted.yaml")
    assert fitted.model.value("material.gruneisen") == pytest.approx(g, rel=1e-6)
    head, rows = _read(out / "residuals.csv")
    col = head.index("kappa_L_fit [W/(m K)]")
    k_fit = np.array([float(row[col]) for row in rows])
    np.testing.assert_allclose(conductivity(fitted.model, T),
                               k_fit, rtol=1e-6)
    pred = tmp_path / "pred"
    r = runner.invoke(app, ["predict", str(out / "fitted.yaml"), "-o", str(pred)])
    assert r.exit_code == 0, r.output
    head, rows = _read(pred / "kappa_L.csv")
    Tp = np.array([float(row[0]) for row in rows])
    kp = np.array([float(row[1]) for row in rows])
    np.testing.assert_allclose(kp, conductivity(fitted.model, Tp),
                               rtol=1e-6)

    # --band reads fit.json beside fitted.yaml
    band = tmp_path / "band"
    r = runner.invoke(app, ["predict", str(out / "fitted.yaml"), "--band", "--draws", "100",
                            "-o", str(band)])
    assert r.exit_code == 0, r.output
    head, rows = _read(band / "kappa_L.csv")
    lo, hi = head.index("kappa_L_low [W/(m K)]"), head.index("kappa_L_high [W/(m K)]")
    for row in rows:
        assert float(row[lo]) < float(row[1]) < float(row[hi])
    assert json.loads((band / "run.json").read_text())["band"]["draws"] == 100


def test_unweighted_fit_says_so(tmp_path):
    cfg, data = _config(tmp_path), _data(tmp_path, err=False)
    r = runner.invoke(app, ["fit", str(cfg), str(data), *FREE, "-o", str(tmp_path / "o")])
    assert r.exit_code == 0, r.output
    assert "no uncertainties given: errors scaled by the residual scatter" in r.output


def test_band_needs_fit_json(tmp_path):
    cfg = _config(tmp_path, {**MODEL, "temperature": {"start": "100 K", "stop": "300 K",
                                                      "points": 3}})
    out = tmp_path / "o"
    r = runner.invoke(app, ["predict", str(cfg), "--band", "-o", str(out)])
    assert r.exit_code == 2
    assert "fit.json" in r.output and "Traceback" not in r.output
    assert not out.exists()


def test_series(tmp_path):
    base = _config(tmp_path, name="base.yaml")
    _data(tmp_path, "a.csv", grain=2e-6, seed=2)
    _data(tmp_path, "b.csv", grain=200e-9, seed=3)
    series = tmp_path / "series.yaml"
    series.write_text(yaml.safe_dump({
        "config": base.name,
        "shared": ["material.gruneisen"],
        "per_sample": ["scattering.boundary.grain_size"],
        "samples": [{"name": "A", "data": "a.csv"},
                    {"name": "B", "data": "b.csv", "window": "30K:800K",
                     "set": {"scattering.boundary.grain_size": "300 nm"}}],
    }, sort_keys=False), encoding="utf-8")
    out = tmp_path / "series-out"
    r = runner.invoke(app, ["fit", "--series", str(series), "-o", str(out)])
    assert r.exit_code == 0, r.output
    for name in ("A", "B"):
        for f in ("fitted.yaml", "fit.json", "residuals.csv"):
            assert (out / "samples" / name / f).is_file()
    head, rows = _read(out / "parameters.csv")
    assert head[:2] == ["parameter", "sample"]
    found = {(row[0], row[1]): float(row[2]) for row in rows}
    assert found[("scattering.boundary.grain_size", "B")] == pytest.approx(200.0, rel=0.15)
    assert found[("material.gruneisen", "shared")] == pytest.approx(1.1, rel=0.05)
    b = load_config(out / "samples" / "B" / "fitted.yaml")
    assert b.model.value("scattering.boundary.grain_size") == pytest.approx(
        found[("scattering.boundary.grain_size", "B")] * 1e-9, rel=1e-9)
    r = runner.invoke(app, ["predict", str(out / "samples" / "B" / "fitted.yaml"), "--band",
                            "--draws", "50", "-o", str(tmp_path / "band-b")])
    assert r.exit_code == 0, r.output


def _bad_cases(tmp_path):
    cfg, data = _config(tmp_path), _data(tmp_path)
    neg = _data(tmp_path, "neg.csv", kappa=np.where(T > 700, -1.0, 10.0), err=False)
    nocol = tmp_path / "nocol.csv"
    nocol.write_text("T [K],kappa [W/(m K)]\n100,5\n200,4\n300,3\n400,2\n", encoding="utf-8")
    unsorted = tmp_path / "unsorted.csv"
    unsorted.write_text("T [K],kappa_L [W/(m K)]\n100,5\n300,4\n200,3\n400,2\n",
                        encoding="utf-8")
    c, d = str(cfg), str(data)
    g = ["--free", "material.gruneisen"]
    return [
        ([c, d, "--free", "material.grunesen"], "material.grunesen"),
        ([c, d, "--free", "scattering.normal.form"], "scattering.normal.form: not a numeric"),
        ([c, d, *g, "--bounds", "material.gruneisen=1.5:2"], "must contain the start value"),
        ([c, d, "--free", "scattering.boundary.grain_size", "--bounds",
          "scattering.boundary.grain_size=10K:1mm"], "wrong dimension"),
        ([c, d, *g, "--bounds", "material.gruneisen=0.9:0.5"], "lower bound must be below"),
        ([c, d, *FREE, "--window", "100K:130K"], "needs at least 4 points"),
        ([c, d, *g, "--window", "600K:100K"], "--window"),
        ([c, str(neg), *g], "<= 0 at"),
        ([c, str(nocol), *g], "run 'kappa split' first"),
        ([c, str(unsorted), *g], "strictly increasing"),
        ([c, d], "--free"),
        (["--series", d, c, d], "--series"),
        ([c, d, "--free", "scattering.normal.ratio"], "scattering.normal is not in the model"),
    ]


def test_bad_input_exits_2_with_one_line_and_no_output(tmp_path):
    for args, message in _bad_cases(tmp_path):
        out = tmp_path / "never"
        r = runner.invoke(app, ["fit", *args, "-o", str(out)])
        assert r.exit_code == 2, (args, r.output)
        assert message in r.output, (args, r.output)
        assert "Traceback" not in r.output
        assert not out.exists(), args


def test_existing_output_needs_force(tmp_path):
    cfg, data = _config(tmp_path), _data(tmp_path)
    out = tmp_path / "o"
    out.mkdir()
    (out / "keep.txt").write_text("x")
    args = ["fit", str(cfg), str(data), "--free", "material.gruneisen", "-o", str(out)]
    r = runner.invoke(app, args)
    assert r.exit_code == 2 and "--force" in r.output
    assert (out / "keep.txt").exists()
    r = runner.invoke(app, [*args, "--force"])  # --force never deletes files kappa did not write
    assert r.exit_code == 2 and "holds files kappa did not write (keep.txt)" in r.output
    assert (out / "keep.txt").exists()
    (out / "keep.txt").unlink()
    for _ in range(2):  # an empty folder, then a folder kappa wrote, are replaced
        r = runner.invoke(app, [*args, "--force"])
        assert r.exit_code == 0, r.output
    assert (out / "fitted.yaml").exists()


def test_demo_series_example_runs(tmp_path):
    from pathlib import Path

    demo = Path(__file__).resolve().parents[1] / "examples" / "fit-demo" / "series.yaml"
    r = runner.invoke(app, ["fit", "--series", str(demo), "-o", str(tmp_path / "demo")])
    assert r.exit_code == 0, r.output
    head, rows = _read(tmp_path / "demo" / "parameters.csv")
    g = next(row for row in rows if row[0] == "material.gruneisen")
    # the invented demo data were made with γ = 1.4 (examples/fit-demo/make_data.py)
    assert abs(float(g[2]) - 1.4) < 3 * float(g[3])
    assert not math.isnan(float(g[3]))


def test_free_with_bounds_in_one_item(tmp_path):
    # --free KEY=LOW:HIGH gives bounds (the start is the config value)
    from pathlib import Path

    demo = Path(__file__).resolve().parents[1] / "examples" / "fit-demo"
    out = tmp_path / "fb"
    r = runner.invoke(app, ["fit", str(demo / "base.yaml"), str(demo / "FH-11_coarse.csv"),
                            "--free", "material.gruneisen",
                            "--free", "scattering.boundary.grain_size=10nm:100um", "-o", str(out)])
    assert r.exit_code == 0, r.output
    rec = json.loads((out / "run.json").read_text())
    assert "scattering.boundary.grain_size" in json.dumps(rec)
    r = runner.invoke(app, ["fit", str(demo / "base.yaml"), str(demo / "FH-11_coarse.csv"),
                            "--free", "scattering.boundary.grain_size=1nm:2nm",
                            "-o", str(tmp_path / "bad")])
    assert r.exit_code == 2 and "must contain the start value" in r.output
    assert not (tmp_path / "bad").exists()


def test_free_key_without_effect_is_refused(tmp_path):
    import yaml

    cfg = tmp_path / "ratio.yaml"
    cfg.write_text(yaml.safe_dump({
        "material": {"atomic_mass": "50 u", "atomic_volume": "20 angstrom**3",
                     "debye_temperature": "400 K", "sound_velocity": "4000 m/s",
                     "gruneisen": 1.5},
        "scattering": {"boundary": {"grain_size": "200 nm"}, "normal": {"ratio": 2.0}}}))
    data = tmp_path / "d.csv"
    data.write_text("T [K],kappa_L [W/(m K)]\n100,10\n200,6\n300,4\n400,3\n500,2.5\n")
    out = tmp_path / "o"
    r = runner.invoke(app, ["fit", str(cfg), str(data), "--free", "scattering.normal.scale",
                            "-o", str(out)])
    assert r.exit_code == 2 and "has no effect in this model" in r.output
    assert not out.exists()
