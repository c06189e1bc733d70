"""`kappa split --series`: one file for several samples, with notes; then the series fit."""

import json

import numpy as np
import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.electronic import lorenz_spb
from kappa.core.evaluator import conductivity
from kappa.io.config import config_from_dict
from kappa.io.series import parse_notes
from kappa.io.tables import read_table

runner = CliRunner()

# Invented samples of an averaged model (values chosen for this test, no outside source).
MODEL = {"material": {"name": "series test", "atomic_mass": "28.0855 u",
                      "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                      "sound_velocity": "6084 m/s", "gruneisen": 1.2},
         "scattering": {"boundary": {"grain_size": "1 um"},
                        "point_defect": {"mass_variance": 0.02}}}
T = np.arange(300.0, 701.0, 50.0)
GRAINS = {"S1": 2e-6, "S2": 200e-9, "S3": 20e-9}


def _files(tmp_path):
    model = config_from_dict(MODEL).model
    sigma, S = 2e4, 220e-6  # S/m, V/K
    for i, (name, grain) in enumerate(GRAINS.items()):
        kL = conductivity(model.with_values({"scattering.boundary.grain_size": grain}), T)
        kappa = kL + lorenz_spb(S) * sigma * T
        if i == 1:  # flash + electrical in two files for one sample
            (tmp_path / f"{name}_flash.csv").write_text(
                "T [K],kappa [W/(m K)]\n" + "".join(f"{t},{k:.6g}\n" for t, k in zip(
                    T, kappa, strict=True)), encoding="utf-8")
            (tmp_path / f"{name}_el.csv").write_text(
                "T [K],sigma [S/cm],S [uV/K]\n" + "".join(f"{t},{sigma / 100:g},{S * 1e6:g}\n"
                                                          for t in T), encoding="utf-8")
        else:
            (tmp_path / f"{name}.csv").write_text(
                "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]\n" + "".join(
                    f"{t},{k:.6g},{sigma / 100:g},{S * 1e6:g}\n"
                    for t, k in zip(T, kappa, strict=True)), encoding="utf-8")
    (tmp_path / "model.yaml").write_text(yaml.safe_dump(MODEL, sort_keys=False),
                                         encoding="utf-8")


SERIES = """config: model.yaml
shared: [material.gruneisen]
per_sample: [scattering.boundary.grain_size]
samples:
  - name: S1
    measured: S1.csv
    notes: {grain_size: 1.8 um, density: 2.3 g/cm^3, composition: Si}
  - name: S2
    measured: [S2_flash.csv, S2_el.csv]
    notes: {grain_size: 250 nm, relative_density: 96 %}
  - name: S3
    measured: S3.csv
    notes: {grain_size: 25 nm, remark: ball-milled}
"""


def _series(tmp_path, text=SERIES):
    _files(tmp_path)
    p = tmp_path / "series.yaml"
    p.write_text(text, encoding="utf-8")
    return p


def _one_error(r):
    lines = [line for line in r.output.splitlines() if line.startswith("error:")]
    assert r.exit_code == 2 and len(lines) == 1, r.output
    return lines[0]


def test_three_samples_outputs_and_fit(tmp_path):
    s = _series(tmp_path)
    out = tmp_path / "split"
    r = runner.invoke(app, ["split", "--series", str(s), "--draws", "300", "-o", str(out)])
    assert r.exit_code == 0, r.output
    for name in ("series.csv", "samples.csv", "series.png", "series.svg", "series.yaml",
                 "run.json"):
        assert (out / name).exists(), name
    for name in GRAINS:
        assert (out / "samples" / name / "split.csv").exists()
        assert (out / "samples" / name / "split.png").exists()
    with open(out / "series.csv", encoding="utf-8") as f:
        head = f.readline().strip().split(",")
        samples = [line.split(",")[0] for line in f]
    assert head[0] == "sample" and samples.count("S1") == T.size and samples.count("S3") == T.size
    assert "kappa_L_err_systematic [W/(m K)]" in head and "grain_size [nm]" in head
    t = read_table(out / "samples" / "S2" / "split.csv")
    assert t.get("kappa_L", "W/(m K)").size == T.size
    rec = json.loads((out / "run.json").read_text())
    assert set(rec["samples"]) == set(GRAINS)
    assert rec["samples"]["S2"]["notes"]["relative_density"]["value"] == pytest.approx(0.96)
    assert rec["samples"]["S1"]["notes"]["grain_size"]["value"] == pytest.approx(1.8e-6)
    # the series file written for the fit runs as it is
    fit_out = tmp_path / "fit"
    r = runner.invoke(app, ["fit", "--series", str(out / "series.yaml"), "-o", str(fit_out)])
    assert r.exit_code == 0, r.output
    assert (fit_out / "notes.png").exists() and (fit_out / "scales.csv").exists()
    grains = {row.split(",")[1]: float(row.split(",")[2]) for row in
              (fit_out / "parameters.csv").read_text().splitlines()[1:]
              if row.startswith("scattering.boundary.grain_size")}
    # the samples were made with 2 um, 200 nm and 20 nm (this file); the fit finds their order
    assert grains["S1"] > grains["S2"] > grains["S3"]


@pytest.mark.parametrize("change, key", [
    (("S3.csv", "S4.csv"), "series.samples.2.measured = S4.csv: file not found"),
    (("S2_el.csv", "S2_missing.csv"), "series.samples.1.measured.1 = S2_missing.csv"),
    (("grain_size: 25 nm", "grain_size: 25 K"), "series.samples.2.notes.grain_size = 25 K"),
    (("density: 2.3 g/cm^3", "density: 2.3 um"), "series.samples.0.notes.density = 2.3 um"),
    (("composition: Si", "composition: Qx2"), "series.samples.0.notes.composition = Qx2"),
    (("relative_density: 96 %", "relative_density: lots"),
     "series.samples.1.notes.relative_density = lots"),
    (("name: S3", "name: s1"), "series.samples.2.name = s1: repeats the name"),
    (("    measured: S3.csv\n", ""), "series.samples.2.measured: missing"),
])
def test_bad_series_exit_2_one_line_nothing_written(tmp_path, change, key):
    s = _series(tmp_path, SERIES.replace(*change))
    out = tmp_path / "split"
    r = runner.invoke(app, ["split", "--series", str(s), "-o", str(out)])
    assert key in _one_error(r)
    assert not out.exists()


def test_series_and_files_are_exclusive(tmp_path):
    s = _series(tmp_path)
    r = runner.invoke(app, ["split", str(tmp_path / "S1.csv"), "--series", str(s), "-o",
                            str(tmp_path / "o")])
    assert "DATA.csv.../--series = both" in _one_error(r)
    r = runner.invoke(app, ["split", "-o", str(tmp_path / "o")])
    assert "DATA.csv.../--series = neither" in _one_error(r)
    r = runner.invoke(app, ["split", "--series", str(s), "--composition", "Si", "-o",
                            str(tmp_path / "o")])
    assert "--composition = Si" in _one_error(r)


def test_notes_units_and_text():
    notes = parse_notes({"grain_size": "250 nm", "porosity": "3 %", "density": 3050,
                         "remark": "pressed at 900 degC", "hardness": "9 GPa", "count": 4},
                        "n")
    assert notes["grain_size"].value == pytest.approx(2.5e-7)
    assert notes["grain_size"].shown == pytest.approx(250.0)
    assert notes["porosity"].value == pytest.approx(0.03)
    assert notes["density"].value == 3050.0 and notes["density"].shown == pytest.approx(3.05)
    assert not notes["remark"].numeric
    assert notes["hardness"].value == 9.0 and notes["hardness"].unit == "GPa"
    assert notes["count"].value == 4.0
    assert parse_notes("one text", "n")["text"].text == "one text"


def test_data_names_the_measurements_when_measured_is_absent(tmp_path):
    s = _series(tmp_path, SERIES.replace("measured: S1.csv", "data: S1.csv"))
    out = tmp_path / "split"
    r = runner.invoke(app, ["split", "--series", str(s), "--draws", "200", "-o", str(out)])
    assert r.exit_code == 0, r.output
    written = yaml.safe_load((out / "series.yaml").read_text(encoding="utf-8"))
    first = written["samples"][0]
    assert first["data"] == "samples/S1/split.csv" and first["measured"].endswith("S1.csv")


def test_errors_random_takes_a_lone_uncertainty_as_the_random_part(tmp_path):
    from kappa.io.fitfiles import read_fit_data

    p = tmp_path / "k.csv"
    p.write_text("T [K],kappa_L [W/(m K)],kappa_L_err [W/(m K)]\n100,10,0.2\n200,6,0.1\n"
                 "300,4,0.1\n", encoding="utf-8")
    d = read_fit_data(p, errors="random")
    assert d.errors == "random" and d.systematic is None
    assert d.uncertainty.tolist() == [0.2, 0.1, 0.1]
    assert "taken as the random part" in d.uncertainty_source
