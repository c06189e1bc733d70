"""``kappa sweep`` on the command line: outputs, values, and every bad-input class."""

from __future__ import annotations

import json

import numpy as np
import pytest
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.evaluator import conductivity
from kappa.io.config import load_config
from kappa.io.tables import read_table

CONFIG = """\
material:
  name: invented test crystal
  atomic_mass: 28.0855 u
  atomic_volume: 20.02 angstrom**3
  debye_temperature: 645 K
  sound_velocity: 6084 m/s
  gruneisen: 0.56
scattering:
  boundary: {grain_size: 1 um}
  point_defect: {mass_variance: 2.0e-4}
temperature: {start: 100 K, stop: 500 K, points: 3}
"""

runner = CliRunner()


@pytest.fixture
def cfg(tmp_path):
    p = tmp_path / "crystal.yaml"
    p.write_text(CONFIG, encoding="utf-8")
    return p


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_help_has_examples_and_caution():
    r = run("sweep", "--help")
    assert r.exit_code == 0
    assert "Examples" in r.output and "--vary" in r.output
    assert "validate them by measurement" not in r.output  # the caution is in `kappa --help`
    assert "validate them by measurement" in run("--help").output


def test_one_key_sweep(cfg, tmp_path):
    out = tmp_path / "one"
    r = run("sweep", cfg, "--vary", "scattering.boundary.grain_size=10nm:10um:4:log",
            "--at", "300K,600K", "-o", out)
    assert r.exit_code == 0, r.output
    assert {p.name for p in out.iterdir()} == {"sweep.csv", "sweep.png", "sweep.svg", "run.json"}
    t = read_table(out / "sweep.csv")
    assert list(t.columns) == ["grain_size", "T", "kappa_L", "kappa_L_ratio"]
    assert t.columns["grain_size"].unit == "nm"
    assert len(t) == 8
    L = t.get("grain_size", "m")
    T = t.get("T", "K")
    config = load_config(cfg)
    for i in range(len(t)):
        c = config.model.with_values({"scattering.boundary.grain_size": L[i]})
        expected = conductivity(c, [T[i]])[0]
        assert t.get("kappa_L", "W/(m K)")[i] == pytest.approx(expected, rel=1e-7)  # 8 digits
    ref = conductivity(config.model, [300.0])[0]
    row = (np.abs(L - 1e-6) < 1e-12) & (T == 300.0)
    assert t.get("kappa_L_ratio", "1")[row][0] == pytest.approx(1.0, rel=1e-7)
    assert t.get("kappa_L", "W/(m K)")[row][0] == pytest.approx(ref, rel=1e-7)
    record = json.loads((out / "run.json").read_text())
    assert record["command"] == "sweep" and record["points"] == 8
    assert record["axes"][0]["unit"] == "nm"
    assert "min kappa_L" in r.output and "grain_size [nm]" in r.output


def test_two_key_sweep_uses_config_temperatures(cfg, tmp_path):
    out = tmp_path / "two"
    r = run("sweep", cfg, "--vary", "scattering.boundary.grain_size=10nm:1um:3:log",
            "--vary", "material.gruneisen=0.5,1.0", "--set", "scattering.normal.ratio=1",
            "-o", out)
    assert r.exit_code == 0, r.output
    t = read_table(out / "sweep.csv")
    assert list(t.columns) == ["grain_size", "gruneisen", "T", "kappa_L", "kappa_L_ratio"]
    assert len(t) == 3 * 2 * 3
    np.testing.assert_allclose(t.get("T", "K")[:3], [100, 300, 500])
    assert "columns: gruneisen [1]" in r.output
    c = load_config(cfg, ["scattering.normal.ratio=1"]).model.with_values(
        {"scattering.boundary.grain_size": 1e-8, "material.gruneisen": 1.0})
    expected = conductivity(c, [100.0, 300.0, 500.0])
    np.testing.assert_allclose(t.get("kappa_L", "W/(m K)")[3:6], expected, rtol=1e-7)


def test_three_keys_and_force(cfg, tmp_path):
    out = tmp_path / "three"
    args = ["sweep", cfg, "--vary", "scattering.boundary.grain_size=10nm:1um:3:log",
            "--vary", "scattering.point_defect.mass_variance=0,0.01",
            "--vary", "material.gruneisen=0.5,1.0", "--at", "300K", "-o", out]
    assert run(*args).exit_code == 0
    r = run(*args)
    assert r.exit_code == 2 and "already exists" in r.output
    assert run(*args, "--force").exit_code == 0
    assert len(read_table(out / "sweep.csv")) == 12


@pytest.mark.parametrize("extra, message", [
    (["--vary", "scattering.boundary.grain_siz=1nm:2nm:3"], "unknown key; did you mean 'grain_size'"),
    (["--vary", "material.name=1,2"], "not a numeric key"),
    (["--vary", "scattering.boundary.grain_size=10nm:1um:1"], "N must be a whole number from 2"),
    (["--vary", "scattering.boundary.grain_size=0nm:1um:5:log"], "must be > 0 and <= 1e+10 nm"),
    (["--vary", "scattering.umklapp.scale=0:2:5:log"], "a log range needs both ends > 0"),
    (["--vary", "scattering.boundary.grain_size=1K:2K:3"], "wrong dimension"),
    (["--vary", "scattering.boundary.specularity=0.5:1.5:3"], "must be >= 0 and < 1"),
    (["--vary", "material.gruneisen=1,2", "--vary", "material.gruneisen=3,4"],
     "each key may be varied only once"),
    (["--vary", "scattering.boundary.grain_size=1nm:1um:10001",
      "--vary", "scattering.point_defect.mass_variance=0:0.1:10001"], "add --yes"),
    (["--vary", "material.gruneisen=1,2", "--at", ""], "give one or more temperatures"),
    (["--vary", "material.gruneisen=1,2", "--at", "300K,-4K"], "temperatures must be > 0 K"),
    (["--vary", "material.gruneisen=1,2", "--at", "0K"], "temperatures must be > 0 K"),
    (["--vary", "material.branches.0.gruneisen=1,2"], "averaged-branch model"),
    ([], "--vary: missing"),
])
def test_bad_input_exits_2_without_output(cfg, tmp_path, extra, message):
    out = tmp_path / "bad"
    r = run("sweep", cfg, *extra, "-o", out)
    assert r.exit_code == 2, r.output
    assert message in r.output
    assert "Traceback" not in r.output
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir()] == ["crystal.yaml"]


def test_no_temperatures_anywhere(tmp_path):
    p = tmp_path / "crystal.yaml"
    p.write_text(CONFIG.replace("temperature: {start: 100 K, stop: 500 K, points: 3}\n", ""),
                 encoding="utf-8")
    r = run("sweep", p, "--vary", "material.gruneisen=1,2", "-o", tmp_path / "x")
    assert r.exit_code == 2
    assert "--at: missing" in r.output
    assert not (tmp_path / "x").exists()
