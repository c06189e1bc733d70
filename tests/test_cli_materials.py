"""`kappa disorder`, `kappa material` and `kappa alloy` through the command line."""

import csv
import json

import pytest
import yaml
from typer.testing import CliRunner

from kappa.cli.main import app
from tests.reference_values import VALUES
from tests.test_compounds import GE, SI

runner = CliRunner()


def _one_error_line(result):
    lines = [ln for ln in result.output.splitlines() if ln.strip()]
    errors = [ln for ln in lines if ln.startswith("error: ")]
    assert result.exit_code == 2 and len(errors) == 1, result.output
    assert "Traceback" not in result.output
    return errors[0]


def test_disorder_json():
    r = runner.invoke(app, ["disorder", "Zr0.5Hf0.5NiSn", "--json"])
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    for key in ("mass_variance", "strain_variance", "atomic_mass", "per_site",
                "isotope_mass_variance", "alloy_mass_variance"):
        assert key in data
    assert data["sites"] == "[Zr0.5Hf0.5][Ni][Sn]"
    assert len(data["per_site"]) == 3
    assert data["mass_variance"] == pytest.approx(
        sum(s["contribution_mass"] for s in data["per_site"]), rel=1e-12)
    r = runner.invoke(app, ["disorder", "Si", "--json"])
    assert json.loads(r.output)["mass_variance"] == pytest.approx(
        VALUES["gamma_si_natural"].value, rel=VALUES["gamma_si_natural"].tolerance)


def test_disorder_table():
    r = runner.invoke(app, ["disorder", "Mg2Si0.4Sn0.6", "--strain-parameter", "10"])
    assert r.exit_code == 0, r.output
    assert "[Mg]2[Si0.4Sn0.6]" in r.output and "Γ_S" in r.output


@pytest.mark.parametrize("args, where", [
    (["disorder", "Si0.8Ge0.3"], "FORMULA = Si0.8Ge0.3"),
    (["disorder", "Si0.8Xy0.2"], "unknown element symbol 'Xy'"),
    (["disorder", "Mg2Si0.4Sn0.6)"], "unbalanced ')'"),
    (["disorder", "Si", "--strain-parameter", "-1"], "--strain-parameter"),
])
def test_disorder_bad_input(args, where):
    assert where in _one_error_line(runner.invoke(app, args))


SI_ARGS = ["material", "--vl", "8.95km/s", "--vt", "5.345km/s", "--density", "2.329g/cm^3",
           "--composition", "Si"]


def test_material_json_silicon():
    r = runner.invoke(app, [*SI_ARGS, "--json"])
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    checks = {"debye_temperature": "si_theta_hill", "poisson_ratio": "si_poisson_hill",
              "gruneisen": "si_gruneisen_from_poisson", "kappa_min_cahill": "cahill_si_high_T",
              "kappa_min_cahill_300K": "cahill_si_300K", "kappa_min_clarke": "clarke_si",
              "sound_velocity": "si_vm_hill"}
    for key, name in checks.items():
        assert data[key] == pytest.approx(VALUES[name].value, rel=5e-3), key
    for key in ("kappa_min_diffuson", "kappa_slack_300K", "acoustic_debye_temperature"):
        assert data[key] > 0


def test_material_writes_a_block_that_kappa_reads(tmp_path):
    out = tmp_path / "si-material.yaml"
    r = runner.invoke(app, [*SI_ARGS, "--atoms-per-cell", "2", "-o", str(out)])
    assert r.exit_code == 0, r.output
    data = yaml.safe_load(out.read_text())
    assert data["material"]["atoms_per_cell"] == 2
    r = runner.invoke(app, ["check", str(out)])
    assert r.exit_code == 0, r.output
    assert "acoustic_debye_temperature" in r.output
    stamp = out.read_text()
    r = runner.invoke(app, [*SI_ARGS, "-o", str(out)])
    assert "--force" in _one_error_line(r)
    assert out.read_text() == stamp


@pytest.mark.parametrize("change, where", [
    (("--vl", "-8km/s"), "--vl"),
    (("--vl", "0"), "--vl"),
    (("--vt", "8km/s"), "--vt"),
    (("--vt", "7.76km/s"), "(√3/2)·v_L"),
    (("--density", "2.3 K"), "--density"),
    (("--composition", "Si2Qq"), "--composition"),
])
def test_material_bad_input(change, where, tmp_path):
    args = list(SI_ARGS)
    i = args.index(change[0])
    args[i + 1] = change[1]
    out = tmp_path / "m.yaml"
    assert where in _one_error_line(runner.invoke(app, [*args, "-o", str(out)]))
    assert not out.exists()


def _write(tmp_path, name, data):
    p = tmp_path / name
    p.write_text(yaml.safe_dump(data), encoding="utf-8")
    return p


def test_alloy_command(tmp_path):
    a, b = _write(tmp_path, "si.yaml", SI), _write(tmp_path, "ge.yaml", GE)
    out = tmp_path / "sige"
    r = runner.invoke(app, ["alloy", str(a), str(b), "--fraction", "0:1:6", "--at",
                            "300K,600K", "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert {p.name for p in out.iterdir()} == {"alloy.csv", "alloy.png", "alloy.svg",
                                                "run.json"}
    with open(out / "alloy.csv", newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    header = rows[0]
    assert header[:4] == ["fraction [1]", "T [K]", "kappa_L [W/(m K)]",
                          "kappa_L_mass_only [W/(m K)]"]
    assert len(rows) == 1 + 6 * 2
    for row in rows[1:]:
        assert float(row[2]) <= float(row[3]) * (1 + 1e-9)
    record = json.loads((out / "run.json").read_text())
    assert record["command"] == "alloy" and record["strain_parameter"] == 39.0
    assert any("Gurunathan" in c for c in record["citations"])


def test_alloy_bad_input(tmp_path):
    a = _write(tmp_path, "si.yaml", SI)
    averaged = _write(tmp_path, "avg.yaml", {"material": {
        "composition": "Ge", "atomic_volume": "22.64 angstrom**3",
        "sound_velocity": "4000 m/s", "gruneisen": 1.0}})
    out = tmp_path / "bad"
    line = _one_error_line(runner.invoke(app, ["alloy", str(a), str(averaged), "--at", "300K",
                                               "-o", str(out)]))
    assert "different branch layouts" in line and "avg.yaml" in line
    assert not out.exists()
    line = _one_error_line(runner.invoke(app, ["alloy", str(a), str(a), "--fraction", "0:2:3",
                                               "--at", "300K", "-o", str(out)]))
    assert "--fraction" in line
    assert not out.exists()
