"""``kappa spectrum`` on the command line."""

from __future__ import annotations

import csv
import json
import re

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
  normal: {ratio: 0.5}
"""

runner = CliRunner()


@pytest.fixture
def cfg(tmp_path):
    p = tmp_path / "crystal.yaml"
    p.write_text(CONFIG, encoding="utf-8")
    return p


def test_help():
    r = runner.invoke(app, ["spectrum", "--help"])
    assert r.exit_code == 0 and "Examples" in r.output and "--at" in r.output


def test_spectrum_outputs(cfg, tmp_path):
    out = tmp_path / "spec"
    r = runner.invoke(app, ["spectrum", str(cfg), "--at", "300K", "--at", "600K", "-o", str(out)])
    assert r.exit_code == 0, r.output
    names = {p.name for p in out.iterdir()}
    assert {"spectrum.csv", "kappa_by_mean_free_path.csv", "run.json", "spectral.png", "cumulative.png",
            "rates.png", "rates.svg"} <= names
    with open(out / "spectrum.csv", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert list(rows[0]) == ["T [K]", "branch", "frequency [THz]",
                             "kappa_spectral [W/(m K THz)]", "kappa_cumulative [W/(m K)]",
                             "mfp [nm]", "rate_umklapp [1/s]", "rate_boundary [1/s]",
                             "rate_point_defect [1/s]", "rate_normal [1/s]"]
    config = load_config(cfg)
    ref = conductivity(config.model, [300.0, 600.0])
    last_300 = [r for r in rows if r["T [K]"] == "300"][-1]
    assert float(last_300["kappa_cumulative [W/(m K)]"]) == pytest.approx(ref[0], rel=1e-7)
    mfp = read_table(out / "kappa_by_mean_free_path.csv")
    T = mfp.get("T", "K")
    acc = mfp.get("kappa_cumulative", "W/(m K)")
    assert acc[T == 600.0][-1] == pytest.approx(ref[1], rel=1e-6)
    lines = re.findall(r"half the heat at (\d+) K is carried by phonons with mean free path "
                       r"above ([\d.e+]+) nm, and 20 % by phonons with mean free path above "
                       r"([\d.e+]+) nm", r.output)
    assert [x[0] for x in lines] == ["300", "600"]
    record = json.loads((out / "run.json").read_text())
    assert record["command"] == "spectrum"
    assert record["mfp50 [nm]"][0] == pytest.approx(float(lines[0][1]), rel=5e-3)
    assert "tau_eff" in record["relaxation_time"]


@pytest.mark.parametrize("extra, message", [
    ([], "--at: missing"),
    (["--at", "-5K"], "temperatures must be > 0 K"),
    (["--at", "300 m"], "wrong dimension"),
    (["--at", "300K", "--set", "scattering.boundary.grain_size=-1nm"], "must be > 0"),
])
def test_bad_input(cfg, tmp_path, extra, message):
    out = tmp_path / "bad"
    r = runner.invoke(app, ["spectrum", str(cfg), *extra, "-o", str(out)])
    assert r.exit_code == 2, r.output
    assert message in r.output and "Traceback" not in r.output
    assert not out.exists()


def test_warns_far_above_debye_temperature(cfg, tmp_path):
    r = runner.invoke(app, ["spectrum", str(cfg), "--at", "3000K", "-o", str(tmp_path / "hot")])
    assert r.exit_code == 0
    assert "warning: temperatures up to 3000 K exceed 3θ" in r.output
