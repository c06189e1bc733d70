"""`kappa new`, `kappa check` and `kappa predict` through the command line."""

import csv
import json
import math
from pathlib import Path

import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app

runner = CliRunner()
CONFIGS = Path(__file__).resolve().parents[1] / "configs"

GOOD = {
    "material": {"name": "cli test", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.9},
    "scattering": {"boundary": {"grain_size": "1 mm"}},
    "temperature": {"start": "100 K", "stop": "600 K", "points": 6},
}


def _write(tmp_path, data, name="c.yaml"):
    p = tmp_path / name
    p.write_text(yaml.safe_dump(data), encoding="utf-8")
    return p


def _read(path):
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    return rows[0], [[float(x) if x else math.nan for x in r] for r in rows[1:]]


def test_help_of_every_command():
    result = runner.invoke(app, ["--help"])
    assert result.exit_code == 0
    for cmd in ("new", "check", "predict"):
        r = runner.invoke(app, [cmd, "--help"])
        assert r.exit_code == 0, cmd
        assert "Example" in r.output or "kappa " in r.output
    # the validation caution is in the top-level help (and the README), not in every command's
    assert "validate" in result.output.lower()
    for cmd in ("predict", "sweep", "spectrum", "fit", "alloy"):
        assert "validate them by measurement" not in runner.invoke(app, [cmd, "--help"]).output


def test_new_then_check_then_predict(tmp_path):
    cfg = tmp_path / "start.yaml"
    r = runner.invoke(app, ["new", str(cfg)])
    assert r.exit_code == 0 and cfg.exists()
    r = runner.invoke(app, ["new", str(cfg)])
    assert r.exit_code == 2 and "already exists" in r.output
    r = runner.invoke(app, ["check", str(cfg)])
    assert r.exit_code == 0, r.output
    assert "valid" in r.output and "material.branches.0.gruneisen" in r.output
    out = tmp_path / "run"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert {p.name for p in out.iterdir()} == {"kappa_L.csv", "kappa_L.png", "kappa_L.svg",
                                                "run.json"}


def test_predict_outputs(tmp_path):
    cfg = _write(tmp_path, GOOD)
    out = tmp_path / "out"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out)])
    assert r.exit_code == 0, r.output
    header, rows = _read(out / "kappa_L.csv")
    assert header[:2] == ["T [K]", "kappa_L [W/(m K)]"]
    assert "kappa_L_without_boundary [W/(m K)]" in header
    assert "kappa_L_without_umklapp [W/(m K)]" in header
    assert header[-1] == "C_V [J/(mol K)]"
    assert [r[0] for r in rows] == [100, 200, 300, 400, 500, 600]
    for r_ in rows:  # switching a mechanism off never lowers κ_L
        assert all(v >= r_[1] * (1 - 1e-9) for v in r_[2:4])
    record = json.loads((out / "run.json").read_text())
    assert record["command"] == "predict" and record["version"]
    assert record["derived"] == {}
    assert any("Callaway" in c for c in record["citations"])
    assert record["resolved_inputs"]["scattering"]["boundary"]["grain_size"] == "1 mm"
    assert "kappa_L" in r.output


def test_predict_never_overwrites_without_force(tmp_path):
    cfg = _write(tmp_path, GOOD)
    out = tmp_path / "out"
    assert runner.invoke(app, ["predict", str(cfg), "-o", str(out)]).exit_code == 0
    stamp = (out / "kappa_L.csv").read_text()
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out), "--set",
                            "scattering.boundary.grain_size=10nm"])
    assert r.exit_code == 2 and "--force" in r.output
    assert (out / "kappa_L.csv").read_text() == stamp
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out), "--force", "--set",
                            "scattering.boundary.grain_size=10nm"])
    assert r.exit_code == 0
    assert (out / "kappa_L.csv").read_text() != stamp


def test_output_folder_holding_the_input_is_refused(tmp_path):
    cfg = _write(tmp_path, GOOD)
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(tmp_path), "--force"])
    assert r.exit_code == 2 and "inputs are never replaced" in r.output
    assert cfg.exists()


def test_set_and_compare(tmp_path):
    cfg = _write(tmp_path, GOOD)
    out = tmp_path / "cmp"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out), "--compare",
                            "scattering.boundary.grain_size=1um,100nm,20nm"])
    assert r.exit_code == 0, r.output
    _, base = _read(out / "kappa_L.csv")
    header, rows = _read(out / "compare.csv")  # long form: one row per value and temperature
    assert header == ["grain_size [nm]", "T [K]", "kappa_L [W/(m K)]"]
    assert all("=" not in h and "(" not in h.split(" [")[0] for h in header)
    n = len(base)
    assert len(rows) == 3 * n
    by_size = {size: [r[2] for r in rows if r[0] == size] for size in (1000.0, 100.0, 20.0)}
    assert [r[1] for r in rows[:n]] == [b[0] for b in base]
    for k, row in enumerate(base):  # smaller grains, lower κ_L
        assert row[1] > by_size[1000.0][k] > by_size[100.0][k] > by_size[20.0][k] > 0
    # --set gives the same numbers as the corresponding --compare column
    out2 = tmp_path / "set"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out2), "--set",
                            "scattering.boundary.grain_size=100nm"])
    assert r.exit_code == 0
    _, rows2 = _read(out2 / "kappa_L.csv")
    assert [x[1] for x in rows2] == pytest.approx(by_size[100.0], rel=1e-7)


BAD_CLI = [
    # (key, value, message fragment) — one case per class of bad input
    ("material.gruneisn", 1.0, "did you mean 'gruneisen'"),            # unknown key
    ("scattering.boundary.grain_size", "5 K", "wrong dimension"),      # wrong dimension
    ("scattering.boundary.grain_size", "5 furlongz", "unknown unit"),  # unknown unit
    ("material.debye_temperature", "0 K", "must be >= 0.1"),              # zero
    ("material.sound_velocity", "-6 km/s", "must be >= 1"),             # negative
    ("scattering.boundary.specularity", 1.0, ">= 0 and < 1"),          # specularity
    ("material.gruneisen", ".nan", "NaN"),                             # NaN
    ("temperature.stop", "50 K", "must be above"),                     # reversed range
    ("temperature", {"values": []}, "non-empty"),                      # empty range
    ("material.branches", [{"polarization": "longitudinal", "sound_velocity": "1 km/s",
                            "gruneisen": 1}], "not both"),             # both given
]


@pytest.mark.parametrize(("key", "value", "fragment"), BAD_CLI)
def test_bad_input_exit_2_one_line_no_output(tmp_path, key, value, fragment):
    from kappa.io.config import set_value

    if key == "material.gruneisn":  # set_value itself refuses unknown keys; write it raw
        data = yaml.safe_load(yaml.safe_dump(GOOD))
        data["material"]["gruneisn"] = value
    else:
        data = set_value(GOOD, key, value)
    if key == "material.gruneisen" and value == ".nan":
        data["material"]["gruneisen"] = float("nan")
    cfg = _write(tmp_path, data)
    before = cfg.read_text()
    out = tmp_path / "out"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out)])
    assert r.exit_code == 2, r.output
    lines = [ln for ln in r.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: ")
    assert fragment in lines[0]
    assert "Traceback" not in r.output
    assert not out.exists()
    assert not any(p.name.startswith(".out") for p in tmp_path.iterdir())
    assert cfg.read_text() == before


def test_missing_key_and_missing_temperature(tmp_path):
    data = {k: v for k, v in GOOD.items() if k != "temperature"}
    cfg = _write(tmp_path, data)
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(tmp_path / "o")])
    assert r.exit_code == 2 and "temperature: missing" in r.output
    data = yaml.safe_load(yaml.safe_dump(GOOD))
    del data["material"]["atomic_volume"]
    cfg = _write(tmp_path, data)
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(tmp_path / "o")])
    assert r.exit_code == 2 and "material.atomic_volume: missing" in r.output


def test_bad_set_option(tmp_path):
    cfg = _write(tmp_path, GOOD)
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(tmp_path / "o"), "--set", "nonsense"])
    assert r.exit_code == 2 and "KEY=VALUE" in r.output


def test_debug_shows_traceback(tmp_path):
    cfg = _write(tmp_path, {**GOOD, "scatering": {}})
    r = runner.invoke(app, ["--debug", "predict", str(cfg), "-o", str(tmp_path / "o")])
    assert r.exit_code != 0 and r.exception is not None


def test_warning_is_printed_and_run_continues(tmp_path):
    cfg = _write(tmp_path, {**GOOD, "temperature": {"start": "100 K", "stop": "2500 K",
                                                    "points": 3}})
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(tmp_path / "o")])
    assert r.exit_code == 0
    assert "warning: temperatures up to 2500 K exceed 3θ" in r.output


@pytest.mark.parametrize("name", ["silicon", "germanium", "lead-telluride", "bismuth-telluride"])
def test_bundled_configs_run_without_warnings(tmp_path, name):
    r = runner.invoke(app, ["predict", str(CONFIGS / f"{name}.yaml"), "-o", str(tmp_path / name)])
    assert r.exit_code == 0, r.output
    assert "warning" not in r.output


def test_version():
    r = runner.invoke(app, ["--version"])
    assert r.exit_code == 0 and r.output.startswith("kappa ")


def test_set_switches_the_temperature_form(tmp_path):
    cfg = _write(tmp_path, GOOD)  # start/stop/points
    out = tmp_path / "v"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out), "--set",
                            "temperature.values=[150, 250]"])
    assert r.exit_code == 0, r.output
    _, rows = _read(out / "kappa_L.csv")
    assert [row[0] for row in rows] == [150.0, 250.0]


def test_unused_normal_parameter_is_an_error(tmp_path):
    cfg = _write(tmp_path, {**GOOD, "scattering": {"normal": {"ratio": 1.0}}})
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(tmp_path / "o"), "--set",
                            "scattering.normal.scale=5"])
    assert r.exit_code == 2 and "used only with form: branch" in r.output


def test_output_folder_has_ordinary_permissions(tmp_path):
    import os
    import stat

    cfg = _write(tmp_path, GOOD)
    out = tmp_path / "perm"
    assert runner.invoke(app, ["predict", str(cfg), "-o", str(out)]).exit_code == 0
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(out.stat().st_mode) == 0o777 & ~umask


def test_usage_errors_are_one_line_through_the_console_script(tmp_path):
    # the installed entry point (not CliRunner) turns usage errors into one 'error:' line
    import subprocess
    import sys

    cmd = [sys.executable, "-m", "kappa", "predict", str(tmp_path / "missing.yaml")]
    r = subprocess.run(cmd, capture_output=True, text=True, check=False)
    assert r.returncode == 2
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: ") and "missing.yaml" in lines[0]
    assert "Traceback" not in r.stderr


def test_check_prints_the_cahill_minimum(tmp_path):
    # Silicon, VRH velocities v_L = 8950, v_T = 5345 m/s, V₀ = 20.02 Å³: κ_min = 1.148 W/(m K)
    # at 300 K and 1.48 W/(m K) high-T (tests/reference_values.py, D from Cahill, Watson & Pohl 1992).
    mat = {k: v for k, v in GOOD["material"].items() if k != "sound_velocity"}
    mat.update(longitudinal_velocity="8950 m/s", transverse_velocity="5345 m/s")
    cfg = _write(tmp_path, {**GOOD, "material": mat})
    r = runner.invoke(app, ["check", str(cfg)])
    assert r.exit_code == 0, r.output
    import re

    m = re.search(r"κ_min = ([\d.]+) W/\(m K\) at 300 K, ([\d.]+) W/\(m K\) high-T", r.output)
    assert m is not None
    assert float(m.group(1)) == pytest.approx(1.148, rel=0.01)
    assert float(m.group(2)) == pytest.approx(1.48, rel=0.01)
