"""Fits that know systematic from random errors: the shared scale, --errors, χ²_red far from 1,
mechanisms driven to an effective zero, series notes."""

import csv
import json
import warnings

import numpy as np
import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.evaluator import conductivity
from kappa.errors import KappaWarning
from kappa.io.config import config_from_dict
from kappa.workflows.fitting import fit, fit_data

runner = CliRunner()

# An averaged model (values chosen for these tests, no outside source).
MODEL = {"material": {"name": "errors test", "atomic_mass": "28.0855 u",
                      "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                      "sound_velocity": "6084 m/s", "gruneisen": 1.0},
         "scattering": {"boundary": {"grain_size": "1 um"},
                        "point_defect": {"mass_variance": 1e-3}}}
T = np.round(np.geomspace(20.0, 600.0, 14), 2)


def _truth(gruneisen=1.2, grain=1e-6):
    return config_from_dict(MODEL).model.with_values({"material.gruneisen": gruneisen,
                                                      "scattering.boundary.grain_size": grain})


def _messages(func, *args, **kwargs):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", KappaWarning)
        result = func(*args, **kwargs)
    return result, [str(w.message) for w in caught if issubclass(w.category, KappaWarning)]


def _write(tmp_path, name, k, sys_=None, rand=None, total=None):
    cols = ["T [K]", "kappa_L [W/(m K)]"]
    data = [T, k]
    for label, v in (("kappa_L_err", total), ("kappa_L_err_systematic", sys_),
                     ("kappa_L_err_random", rand)):
        if v is not None:
            cols.append(f"{label} [W/(m K)]")
            data.append(v)
    p = tmp_path / name
    rows = [",".join(f"{x:.10g}" for x in row) for row in zip(*data, strict=True)]
    p.write_text("\n".join([",".join(cols), *rows]) + "\n", encoding="utf-8")
    return p


def _config(tmp_path):
    p = tmp_path / "model.yaml"
    p.write_text(yaml.safe_dump(MODEL, sort_keys=False), encoding="utf-8")
    return p


def _shared_data(seed=4, shift=0.08):
    """κ_L of the truth, moved by a known shared error and 2 % scatter."""
    k = conductivity(_truth(), T)
    e = np.random.default_rng(seed).standard_normal(T.size)
    return k * (1 + shift + 0.02 * e)


def test_scale_is_fitted_and_reported(tmp_path):
    k = _shared_data()
    data = _write(tmp_path, "d.csv", k, sys_=0.11 * k, rand=0.02 * k,
                  total=np.hypot(0.11, 0.02) * k)
    out = tmp_path / "fit"
    r = runner.invoke(app, ["fit", str(_config(tmp_path)), str(data), "--free",
                            "material.gruneisen", "--free", "scattering.boundary.grain_size",
                            "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert "shared scale of the data" in r.output and "only a total" not in r.output
    rec = json.loads((out / "fit.json").read_text())
    assert rec["errors"] == "separate"
    scale = rec["shared_scale"]
    assert scale["systematic_width"] == pytest.approx(0.11, rel=1e-6)
    # the data sit 8 % above the truth; the model parameters can absorb part of it, so the
    # fitted scale lies between 1 and 1.08 (and within its interval of the shift)
    assert 1.0 <= scale["factor"] <= 1.1
    with open(out / "residuals.csv", newline="") as f:
        head = next(csv.reader(f))
    assert "scale_factor [1]" in head and "kappa_L_err_systematic [W/(m K)]" in head
    assert (out / "scales.csv").exists()
    run = json.loads((out / "run.json").read_text())
    assert run["statistics"]["errors"] == "separate"
    assert "nuisance parameter" in run["weighting"]


@pytest.mark.parametrize("mode, scale, words", [
    ("total", False, "taken as independent per point"),
    ("random", False, "random part per point only"),
    ("separate", True, "systematic part as a shared scale"),
])
def test_errors_choice(tmp_path, mode, scale, words):
    k = _shared_data()
    data = _write(tmp_path, "d.csv", k, sys_=0.11 * k, rand=0.02 * k,
                  total=np.hypot(0.11, 0.02) * k)
    out = tmp_path / mode
    r = runner.invoke(app, ["fit", str(_config(tmp_path)), str(data), "--free",
                            "material.gruneisen", "--errors", mode, "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert words in r.output
    assert (out / "scales.csv").exists() == scale


def test_auto_with_only_a_total_warns_and_none_ignores(tmp_path):
    k = _shared_data()
    data = _write(tmp_path, "d.csv", k, total=0.11 * k)
    r = runner.invoke(app, ["fit", str(_config(tmp_path)), str(data), "--free",
                            "material.gruneisen", "-o", str(tmp_path / "a")])
    assert r.exit_code == 0, r.output
    assert "only a total uncertainty is given" in r.output
    r = runner.invoke(app, ["fit", str(_config(tmp_path)), str(data), "--free",
                            "material.gruneisen", "--errors", "none", "-o", str(tmp_path / "b")])
    assert r.exit_code == 0 and "no uncertainties given" in r.output


@pytest.mark.parametrize("options, message", [
    (["--errors", "separate"], "--errors separate needs the column(s) kappa_L_err_systematic"),
    (["--errors", "most"], "--errors = most: auto, separate, random, total, none"),
])
def test_errors_bad_input(tmp_path, options, message):
    k = _shared_data()
    data = _write(tmp_path, "d.csv", k, total=0.11 * k)
    out = tmp_path / "o"
    r = runner.invoke(app, ["fit", str(_config(tmp_path)), str(data), "--free",
                            "material.gruneisen", *options, "-o", str(out)])
    assert r.exit_code == 2
    lines = [line for line in r.output.splitlines() if line.startswith("error:")]
    assert len(lines) == 1 and message in lines[0], r.output
    assert not out.exists()


def test_chi2_far_below_one_is_explained():
    # an 11 % error stated per point (as if independent) on data with 1 % scatter: χ²_red of
    # about (0.01/0.11)^2 -> far below the 0.5 % quantile of χ²
    k = conductivity(_truth(), T) * (1 + 0.01 * np.random.default_rng(2).standard_normal(T.size))
    res, msgs = _messages(fit, config_from_dict(MODEL).model, fit_data(T, k, 0.11 * k),
                          ["material.gruneisen"], checks=True)
    assert res.chi2_red < 0.1
    assert any("far below 1" in m and "not point-to-point noise" in m for m in msgs), msgs


def test_chi2_far_above_one_is_explained():
    k = conductivity(_truth(), T) * (1 + 0.05 * np.random.default_rng(3).standard_normal(T.size))
    res, msgs = _messages(fit, config_from_dict(MODEL).model, fit_data(T, k, 0.005 * k),
                          ["material.gruneisen"])
    assert res.chi2_red > 10
    assert any("far above 1" in m and "model lacks something" in m for m in msgs), msgs


def test_mechanism_driven_to_an_effective_zero_is_named():
    # data made without normal processes; the fit may use them but drives their scale to
    # nothing (bounded so that the solver stops on the bound, as a real fit may stop short)
    k = conductivity(_truth(), T) * (1 + 0.02 * np.random.default_rng(1).standard_normal(T.size))
    res, msgs = _messages(fit, config_from_dict(MODEL).model, fit_data(T, k, 0.02 * k),
                          ["material.gruneisen", "scattering.normal.ratio"],
                          start_values={"scattering.normal.ratio": 0.5},
                          bounds={"scattering.normal.ratio": (1e-5, 10.0)})
    assert res.value("scattering.normal.ratio") < 1e-3
    zero = [m for m in msgs if "effective zero" in m]
    assert len(zero) == 1 and "normal processes" in zero[0] and "less than 0.1 %" in zero[0]


def test_a_mechanism_that_matters_is_not_called_zero():
    k = conductivity(_truth(), T) * (1 + 0.02 * np.random.default_rng(1).standard_normal(T.size))
    _, msgs = _messages(fit, config_from_dict(MODEL).model, fit_data(T, k, 0.02 * k),
                        ["material.gruneisen", "scattering.boundary.grain_size"])
    assert not any("effective zero" in m for m in msgs)


def _series(tmp_path, notes_b="{grain_size: 320 nm, density: 3.0 g/cm^3}"):
    cfg = _config(tmp_path)
    for name, grain, shift in (("A", 2e-6, 0.05), ("B", 3e-7, -0.04), ("C", 8e-8, 0.02)):
        k = conductivity(_truth(grain=grain), T) * (1 + shift + 0.02 * np.random.default_rng(
            len(name) + int(grain * 1e9)).standard_normal(T.size))
        _write(tmp_path, f"{name}.csv", k, sys_=0.08 * k, rand=0.02 * k)
    s = tmp_path / "series.yaml"
    s.write_text(f"""config: {cfg.name}
shared: [material.gruneisen]
per_sample: [scattering.boundary.grain_size]
samples:
  - {{name: A, data: A.csv, notes: {{grain_size: 1.8 um, density: 3.1 g/cm^3}}}}
  - {{name: B, data: B.csv, notes: {notes_b}}}
  - {{name: C, data: C.csv, notes: {{grain_size: 70 nm, remark: annealed twice}}}}
""", encoding="utf-8")
    return s


def test_series_fit_plots_fitted_values_against_notes(tmp_path):
    out = tmp_path / "fit"
    r = runner.invoke(app, ["fit", "--series", str(_series(tmp_path)), "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert (out / "notes.png").exists() and (out / "notes.svg").exists()
    assert (out / "scales.csv").exists()
    rec = json.loads((out / "run.json").read_text())
    assert rec["notes"]["A"]["grain_size"]["value"] == pytest.approx(1.8e-6)
    assert rec["notes"]["C"]["remark"]["text"] == "annealed twice"
    assert len(rec["statistics"]["shared_scales"]) == 3


@pytest.mark.parametrize("notes_b, key", [
    ("{grain_size: 320 K}", "series.samples.1.notes.grain_size = 320 K"),
    ("{density: 3 nm}", "series.samples.1.notes.density = 3 nm"),
    ("{gruneisen: 1.2 m}", None),  # not a per-sample key here: any unit kappa knows is fine
    ("{grain_size: 320 blargs}", "series.samples.1.notes.grain_size = 320 blargs"),
])
def test_series_note_with_the_wrong_dimension(tmp_path, notes_b, key):
    out = tmp_path / "fit"
    r = runner.invoke(app, ["fit", "--series", str(_series(tmp_path, notes_b)), "-o", str(out)])
    if key is None:
        assert r.exit_code == 0, r.output
        return
    assert r.exit_code == 2, r.output
    lines = [line for line in r.output.splitlines() if line.startswith("error:")]
    assert len(lines) == 1 and key in lines[0], r.output
    assert not out.exists()


def test_note_named_like_a_per_sample_key_needs_its_dimension(tmp_path):
    s = _series(tmp_path)
    text = s.read_text().replace("per_sample: [scattering.boundary.grain_size]",
                                 "per_sample: [scattering.boundary.grain_size, "
                                 "material.gruneisen]").replace(
        "shared: [material.gruneisen]", "shared: []").replace(
        "remark: annealed twice", "gruneisen: 3 nm")
    s.write_text(text, encoding="utf-8")
    r = runner.invoke(app, ["fit", "--series", str(s), "-o", str(tmp_path / "o")])
    assert r.exit_code == 2
    assert "series.samples.2.notes.gruneisen = 3 nm" in r.output
