"""`--fit FIT.json` of predict, sweep and alloy: intervals, flags, records that do not belong."""

import json

import numpy as np
import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.evaluator import conductivity
from kappa.io.config import config_from_dict
from kappa.io.tables import read_table

runner = CliRunner()

MODEL = {"material": {"name": "what-if cli", "atomic_mass": "28.0855 u",
                      "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                      "sound_velocity": "6084 m/s", "gruneisen": 1.0},
         "scattering": {"boundary": {"grain_size": "1 um"},
                        "point_defect": {"mass_variance": 1e-3}},
         "temperature": {"start": "50 K", "stop": "500 K", "points": 6}}
T = np.round(np.geomspace(20.0, 600.0, 14), 2)


@pytest.fixture(scope="module")
def fitted(tmp_path_factory):
    """A fit (shared + random errors in the data) and its folder."""
    tmp = tmp_path_factory.mktemp("fit")
    truth = config_from_dict(MODEL).model.with_values({"material.gruneisen": 1.2,
                                                       "scattering.boundary.grain_size": 2e-6})
    k = conductivity(truth, T) * (1.05 + 0.02 * np.random.default_rng(8).standard_normal(T.size))
    rows = [f"{t},{v:.8g},{0.1 * v:.6g},{0.02 * v:.6g}" for t, v in zip(T, k, strict=True)]
    data = tmp / "d.csv"
    data.write_text("T [K],kappa_L [W/(m K)],kappa_L_err_systematic [W/(m K)],"
                    "kappa_L_err_random [W/(m K)]\n" + "\n".join(rows) + "\n", encoding="utf-8")
    cfg = tmp / "model.yaml"
    cfg.write_text(yaml.safe_dump(MODEL, sort_keys=False), encoding="utf-8")
    r = runner.invoke(app, ["fit", str(cfg), str(data), "--free", "material.gruneisen",
                            "--free", "scattering.boundary.grain_size", "-o", str(tmp / "fit")])
    assert r.exit_code == 0, r.output
    return tmp


def _one_error(r):
    lines = [line for line in r.output.splitlines() if line.startswith("error:")]
    assert r.exit_code == 2 and len(lines) == 1, r.output
    return lines[0]


def test_predict_compare_with_intervals(fitted, tmp_path):
    out = tmp_path / "p"
    r = runner.invoke(app, ["predict", str(fitted / "fit" / "fitted.yaml"), "--fit",
                            str(fitted / "fit" / "fit.json"), "--compare",
                            "scattering.boundary.grain_size=100nm,10nm", "--draws", "300",
                            "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert "ratio to the fitted sample" in r.output
    t = read_table(out / "compare.csv")  # long form: one row per grain size and temperature
    size = t.get("grain_size", "nm")
    assert sorted(set(size)) == [10.0, 100.0]
    lo, hi = t.get("kappa_L_low", "W/(m K)"), t.get("kappa_L_high", "W/(m K)")
    k = t.get("kappa_L", "W/(m K)")
    assert np.all(lo <= k * (1 + 1e-9)) and np.all(k <= hi * (1 + 1e-9))
    ratio = t.get("kappa_L_ratio", "1")
    assert np.all(ratio < 1)
    assert np.all(ratio[size == 10.0] < ratio[size == 100.0])  # smaller grains, larger cut
    assert set(t.get("pinned", "1")) <= {0.0, 1.0}
    rec = json.loads((out / "run.json").read_text())
    assert rec["what_if"]["draws"] == 300 and rec["what_if"]["fitted_keys"] == [
        "material.gruneisen", "scattering.boundary.grain_size"]
    assert "kappa_L_low [W/(m K)]" in (out / "kappa_L.csv").read_text().splitlines()[0]


def test_record_of_another_config_is_refused(fitted, tmp_path):
    # the fitted config without its boundary section: a fitted key is missing
    other = yaml.safe_load((fitted / "fit" / "fitted.yaml").read_text(encoding="utf-8"))
    del other["scattering"]["boundary"]
    cfg = tmp_path / "other.yaml"
    cfg.write_text(yaml.safe_dump(other, sort_keys=False), encoding="utf-8")
    out = tmp_path / "o"
    r = runner.invoke(app, ["predict", str(cfg), "--fit", str(fitted / "fit" / "fit.json"),
                            "--compare", "material.gruneisen=1,2", "-o", str(out)])
    line = _one_error(r)
    assert "--fit fit.json: scattering.boundary.grain_size" in line and "not in this config" \
        in line
    assert not out.exists()


def test_record_with_values_far_from_the_config_is_refused(fitted, tmp_path):
    # the config as first written (γ = 1.0), not the fitted one (γ ≈ 1.2)
    cfg = fitted / "model.yaml"
    out = tmp_path / "o"
    r = runner.invoke(app, ["sweep", str(cfg), "--fit", str(fitted / "fit" / "fit.json"),
                            "--vary", "scattering.point_defect.mass_variance=0:0.01:3", "--at",
                            "300K", "-o", str(out)])
    line = _one_error(r)
    assert "--fit fit.json: material.gruneisen = 1: differs from the fitted" in line
    assert not out.exists()


def test_sweep_with_intervals(fitted, tmp_path):
    out = tmp_path / "s"
    r = runner.invoke(app, ["sweep", str(fitted / "fit" / "fitted.yaml"), "--fit",
                            str(fitted / "fit" / "fit.json"), "--vary",
                            "scattering.point_defect.mass_variance=0.001,0.01,0.1", "--at",
                            "100K,300K", "--draws", "100", "-o", str(out)])
    assert r.exit_code == 0, r.output
    t = read_table(out / "sweep.csv")
    lo, hi = t.get("kappa_L_low", "W/(m K)"), t.get("kappa_L_high", "W/(m K)")
    k = t.get("kappa_L", "W/(m K)")
    assert lo.size == 6 and np.all(lo <= k * (1 + 1e-9)) and np.all(k <= hi * (1 + 1e-9))
    rl, rh = t.get("kappa_L_ratio_low", "1"), t.get("kappa_L_ratio_high", "1")
    assert np.all(rl <= rh)
    assert "68 % intervals from the fit" in r.output


def test_sweep_map_with_intervals(fitted, tmp_path):
    out = tmp_path / "m"
    r = runner.invoke(app, ["sweep", str(fitted / "fit" / "fitted.yaml"), "--fit",
                            str(fitted / "fit" / "fit.json"), "--vary",
                            "scattering.point_defect.mass_variance=0.001,0.01,0.1", "--vary",
                            "scattering.boundary.grain_size=10nm,100nm", "--at", "300K",
                            "--draws", "60", "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert (out / "sweep.png").exists()
    assert read_table(out / "sweep.csv").get("pinned", "1").size == 6


def test_alloy_with_intervals(fitted, tmp_path):
    b = dict(MODEL)
    b["material"] = {**MODEL["material"], "atomic_mass": "72.63 u", "sound_velocity": "3900 m/s"}
    cfg_b = tmp_path / "b.yaml"
    cfg_b.write_text(yaml.safe_dump(b, sort_keys=False), encoding="utf-8")
    out = tmp_path / "a"
    r = runner.invoke(app, ["alloy", str(fitted / "fit" / "fitted.yaml"), str(cfg_b), "--fit",
                            str(fitted / "fit" / "fit.json"), "--fraction", "0,0.1,0.5",
                            "--at", "300K", "--draws", "100", "-o", str(out)])
    assert r.exit_code == 0, r.output
    t = read_table(out / "alloy.csv")
    ratio = t.get("kappa_L_ratio", "1")
    assert ratio[0] == pytest.approx(1.0, rel=1e-6) and ratio[2] < ratio[1] < 1
    assert np.all(t.get("kappa_L_low", "W/(m K)") <= t.get("kappa_L_high", "W/(m K)"))
    # the record belongs to the first end member only
    r = runner.invoke(app, ["alloy", str(cfg_b), str(fitted / "fit" / "fitted.yaml"), "--fit",
                            str(fitted / "fit" / "fit.json"), "--at", "300K", "-o",
                            str(tmp_path / "bad")])
    assert "differs from the fitted" in _one_error(r)
    assert not (tmp_path / "bad").exists()


def test_an_answer_the_data_do_not_pin_is_flagged(fitted, tmp_path):
    # grains 3 % below the fitted size change κ_L by a little, and the fitted size is only
    # known to about 10 %: the interval of that small change includes no change (or spans
    # more than a factor of two)
    rec = json.loads((fitted / "fit" / "fit.json").read_text())
    grain = next(p["value"] for p in rec["parameters"]
                 if p["key"] == "scattering.boundary.grain_size")
    out = tmp_path / "p"
    r = runner.invoke(app, ["predict", str(fitted / "fit" / "fitted.yaml"), "--fit",
                            str(fitted / "fit" / "fit.json"), "--compare",
                            f"scattering.boundary.grain_size={0.97 * grain!r}", "--draws", "300",
                            "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert "not pinned by the data" in r.output
    assert "includes no change" in r.output or "spans more than a factor of 2" in r.output
    pinned = read_table(out / "compare.csv").get("pinned", "1")
    assert np.any(pinned == 0)
    assert json.loads((out / "run.json").read_text())["what_if"]["not_pinned"] > 0
