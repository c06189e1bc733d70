"""A corpus of bad inputs through the real entry point, and a fuzz test over mutated configs.

Every case of the corpus must end with exit status 2 and exactly one `error:` line on stderr
naming the input (file, key, column or option), with no traceback, nothing written and the
input files byte-identical afterwards. The fuzz test mutates the bundled configs with a fixed
seed and runs `kappa check` and `kappa predict` on each: every outcome is either success with
finite numbers in the table or one clean `error:` line — never an exception escaping the family.
"""

from __future__ import annotations

import hashlib
import io
import random
import re
import sys
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import numpy as np
import pytest
import yaml

from kappa.cli.main import run

ROOT = Path(__file__).resolve().parents[1]
CONFIGS = ROOT / "configs"

GOOD = """material:
  name: corpus crystal
  atomic_mass: 28.0855 u
  atomic_volume: 20.02 angstrom**3
  debye_temperature: 645 K
  sound_velocity: 6084 m/s
  gruneisen: 1.0
scattering:
  boundary: {grain_size: 1 um}
  point_defect: {mass_variance: 2.0e-4}
temperature: {start: 50 K, stop: 800 K, points: 8}
"""
SPLIT = "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]\n" + "".join(
    f"{300 + 50 * i},{2.5 - 0.1 * i:.3f},{200 + 5 * i},{-200 - 3 * i}\n" for i in range(8))
FITDATA = "T [K],kappa_L [W/(m K)]\n" + "".join(
    f"{50 * (i + 1)},{300.0 / (i + 1):.4f}\n" for i in range(8))


def invoke(args: list[str], cwd: Path) -> tuple[int, str, str]:
    """Run ``kappa ARGS`` in-process through the console entry point."""
    out, err = io.StringIO(), io.StringIO()
    old_argv = sys.argv
    sys.argv = ["kappa", *map(str, args)]
    code = 0
    import os

    here = os.getcwd()
    os.chdir(cwd)
    try:
        with redirect_stdout(out), redirect_stderr(err):
            run()
    except SystemExit as exc:
        code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
    finally:
        sys.argv = old_argv
        os.chdir(here)
    return code, out.getvalue(), err.getvalue()


def _digest(folder: Path) -> dict[str, str]:
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def _files(tmp: Path, files: dict[str, str | bytes]) -> None:
    for name, content in files.items():
        p = tmp / name
        p.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            p.write_bytes(content)
        else:
            p.write_text(content, encoding="utf-8")


def _config(**changes) -> str:
    data = yaml.safe_load(GOOD)
    for key, value in changes.items():
        node = data
        parts = key.split(".")
        for part in parts[:-1]:
            node = node.setdefault(part, {})
        if value is _DROP:
            node.pop(parts[-1], None)
        else:
            node[parts[-1]] = value
    return yaml.safe_dump(data, sort_keys=False)


_DROP = object()

#: (name, command arguments, files, fragment the error line must contain)
CORPUS = [
    # --- configs: syntax, encoding, structure ------------------------------------------------
    ("yaml syntax", ["check", "c.yaml"], {"c.yaml": "material: {atomic_mass: [\n"}, "c.yaml"),
    ("binary config", ["check", "c.yaml"], {"c.yaml": b"\x00\x01\x02\xff\xfe" * 50}, "c.yaml"),
    ("duplicate key", ["check", "c.yaml"],
     {"c.yaml": GOOD.replace("  gruneisen: 1.0\n", "  gruneisen: 1.0\n  gruneisen: 2.0\n")},
     "gruneisen"),
    ("alias bomb", ["check", "c.yaml"], {"c.yaml": GOOD + "notes:\n  a0: &a0 [x, x, x, x, x, x, x, x, x]\n"
     + "".join(f"  a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * 9) + "]\n" for i in range(1, 10))},
     "c.yaml"),
    ("deep nesting", ["check", "c.yaml"], {"c.yaml": "notes: " + "[" * 20000 + "]" * 20000},
     "c.yaml"),
    ("not a mapping", ["check", "c.yaml"], {"c.yaml": "- 1\n- 2\n"}, "c.yaml"),
    ("empty config", ["predict", "c.yaml", "-o", "o"], {"c.yaml": ""}, "material"),
    ("unknown top key", ["check", "c.yaml"], {"c.yaml": GOOD + "scatering: {}\n"}, "scatering"),
    ("unknown material key", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.colour": "red"})}, "material.colour"),
    ("unknown mechanism", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.phonon_glass": {"x": 1}})}, "scattering.phonon_glass"),
    ("unknown mechanism key", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.boundary": {"grainsize": "1 um"}})}, "grainsize"),
    ("missing gruneisen", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.gruneisen": _DROP})}, "material.gruneisen"),
    ("missing mass", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.atomic_mass": _DROP})}, "material.atomic_mass"),
    ("missing grain size", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.boundary": {"specularity": 0.1}})}, "grain_size"),
    # --- configs: values -------------------------------------------------------------------
    ("negative mass", ["check", "c.yaml"], {"c.yaml": _config(**{"material.atomic_mass": "-28 u"})},
     "material.atomic_mass"),
    ("zero velocity", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.sound_velocity": "0 m/s"})}, "material.sound_velocity"),
    ("tiny debye temperature", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"material.debye_temperature": "5e-322 K"})},
     "material.debye_temperature"),
    ("huge velocity", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"material.sound_velocity": "6e103 m/s"})}, "material.sound_velocity"),
    ("wrong dimension", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.boundary.grain_size": "5 K"})}, "grain_size"),
    ("unknown unit", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.boundary.grain_size": "5 parsecs_per_hour"})},
     "grain_size"),
    ("unit bomb", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.boundary.grain_size": "5 mm**2**2**2**2**2**2**2**2"})},
     "grain_size"),
    ("nan value", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.gruneisen": "nan"})}, "material.gruneisen"),
    ("text for number", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.gruneisen": "about one"})}, "material.gruneisen"),
    ("boolean for number", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.gruneisen": True})}, "material.gruneisen"),
    ("specularity 1", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.boundary.specularity": 1.0})}, "specularity"),
    ("negative gamma", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.point_defect.mass_variance": -1e-4})}, "mass_variance"),
    ("huge normal scale", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"scattering.normal": {"ratio": 1e308}})}, "scattering.normal.ratio"),
    ("unused normal key", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.normal": {"ratio": 1, "scale": 2}})}, "scale"),
    ("branch form averaged", ["check", "c.yaml"],
     {"c.yaml": _config(**{"scattering.normal": {"form": "branch"}})}, "scattering.normal.form"),
    ("both velocities", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.longitudinal_velocity": "8 km/s"})}, "material"),
    ("bad composition", ["check", "c.yaml"],
     {"c.yaml": _config(**{"material.atomic_mass": _DROP, "material.composition": "Qq2Si"})},
     "material.composition"),
    ("temperature order", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"temperature": {"values": ["300 K", "200 K"]}})}, "temperature"),
    ("temperature too high", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"temperature": {"values": ["300 K", "1e102 K"]}})}, "temperature"),
    ("temperature points", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"temperature.points": 1})}, "temperature.points"),
    ("no temperatures", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"temperature": _DROP})}, "temperature"),
    ("diverges", ["predict", "c.yaml", "-o", "o"],
     {"c.yaml": _config(**{"scattering": {"umklapp": {"scale": 0},
                                          "point_defect": {"mass_variance": 0.1}}})},
     "scattering"),
    # --- options -----------------------------------------------------------------------------
    ("missing config file", ["predict", "missing.yaml", "-o", "o"], {}, "missing.yaml"),
    ("set without value", ["predict", "c.yaml", "--set", "material.gruneisen", "-o", "o"],
     {"c.yaml": GOOD}, "--set"),
    ("set unknown key", ["predict", "c.yaml", "--set", "material.gruneisn=1", "-o", "o"],
     {"c.yaml": GOOD}, "material.gruneisn"),
    ("compare bad", ["predict", "c.yaml", "--compare", "scattering.boundary.grain_size", "-o",
                     "o"], {"c.yaml": GOOD}, "--compare"),
    ("band without record", ["predict", "c.yaml", "--band", "-o", "o"], {"c.yaml": GOOD},
     "fit.json"),
    ("sweep no vary", ["sweep", "c.yaml", "-o", "o"], {"c.yaml": GOOD}, "--vary"),
    ("sweep bad range", ["sweep", "c.yaml", "--vary", "material.gruneisen=1:2:1", "-o", "o"],
     {"c.yaml": GOOD}, "--vary"),
    ("sweep huge", ["sweep", "c.yaml", "--vary", "material.gruneisen=1:2:100000", "--vary",
                    "scattering.umklapp.scale=1:2:100000", "-o", "o"], {"c.yaml": GOOD},
     "--vary"),
    ("sweep temperature key", ["sweep", "c.yaml", "--vary", "temperature.start=1K:2K:3", "-o",
                               "o"], {"c.yaml": GOOD}, "temperature"),
    ("sweep bad at", ["sweep", "c.yaml", "--vary", "material.gruneisen=1,2", "--at", "-5K",
                      "-o", "o"], {"c.yaml": GOOD}, "--at"),
    ("spectrum no at", ["spectrum", "c.yaml", "-o", "o"], {"c.yaml": GOOD}, "--at"),
    ("spectrum too many", ["spectrum", "c.yaml", "--at", ",".join(f"{t}K" for t in
                                                                range(100, 2200, 100)),
                           "-o", "o"], {"c.yaml": GOOD}, "--at"),
    ("fit no free", ["fit", "c.yaml", "d.csv", "-o", "o"], {"c.yaml": GOOD, "d.csv": FITDATA},
     "--free"),
    ("fit bad key", ["fit", "c.yaml", "d.csv", "--free", "material.grunisen", "-o", "o"],
     {"c.yaml": GOOD, "d.csv": FITDATA}, "material.grunisen"),
    ("fit bad bounds", ["fit", "c.yaml", "d.csv", "--free", "material.gruneisen=2:1", "-o",
                        "o"], {"c.yaml": GOOD, "d.csv": FITDATA}, "material.gruneisen"),
    ("fit bad window", ["fit", "c.yaml", "d.csv", "--free", "material.gruneisen", "--window",
                        "600K:100K", "-o", "o"], {"c.yaml": GOOD, "d.csv": FITDATA},
     "--window"),
    ("fit no kappa_L", ["fit", "c.yaml", "d.csv", "--free", "material.gruneisen", "-o", "o"],
     {"c.yaml": GOOD, "d.csv": SPLIT}, "d.csv"),
    ("fit negative seed", ["fit", "c.yaml", "d.csv", "--free", "material.gruneisen", "--seed",
                           "-1", "-o", "o"], {"c.yaml": GOOD, "d.csv": FITDATA}, "--seed"),
    ("fit series missing sample", ["fit", "--series", "s.yaml", "-o", "o"],
     {"c.yaml": GOOD, "s.yaml": "config: c.yaml\nshared: [material.gruneisen]\nsamples:\n"
      "  - {name: A, data: nothere.csv}\n"}, "nothere.csv"),
    ("fit series duplicate key", ["fit", "--series", "s.yaml", "-o", "o"],
     {"c.yaml": GOOD, "d.csv": FITDATA, "s.yaml": "config: c.yaml\nconfig: c.yaml\nsamples:\n"
      "  - {name: A, data: d.csv}\n"}, "config"),
    # --- data files --------------------------------------------------------------------------
    ("split missing column", ["split", "d.csv", "-o", "o"],
     {"d.csv": "T [K],kappa [W/(m K)]\n300,2\n350,2\n400,2\n"}, "d.csv"),
    ("split header without unit", ["split", "d.csv", "-o", "o"],
     {"d.csv": SPLIT.replace("T [K]", "T")}, "d.csv"),
    ("split text cell", ["split", "d.csv", "-o", "o"],
     {"d.csv": SPLIT.replace("2.400", "abc")}, "d.csv"),
    ("split decreasing T", ["split", "d.csv", "-o", "o"],
     {"d.csv": SPLIT.replace("350,", "250,")}, "d.csv"),
    ("split nan", ["split", "d.csv", "-o", "o"], {"d.csv": SPLIT.replace("2.400", "nan")},
     "d.csv"),
    ("split negative kappa", ["split", "d.csv", "-o", "o"],
     {"d.csv": SPLIT.replace("2.400", "-2.4")}, "d.csv"),
    ("split wrong unit", ["split", "d.csv", "-o", "o"],
     {"d.csv": SPLIT.replace("sigma [S/cm]", "sigma [K]")}, "d.csv"),
    ("split empty", ["split", "d.csv", "-o", "o"], {"d.csv": ""}, "d.csv"),
    ("split binary", ["split", "d.csv", "-o", "o"], {"d.csv": b"\x00\xff" * 200}, "d.csv"),
    ("split seebeck in volts", ["split", "d.csv", "-o", "o"],
     {"d.csv": SPLIT.replace("S [uV/K]", "S [V/K]")}, "S"),
    ("split bad lorenz", ["split", "d.csv", "--lorenz", "sommerfeld", "-o", "o"],
     {"d.csv": SPLIT}, "--lorenz"),
    ("split bad uncertainty", ["split", "d.csv", "--uncertainty", "kappa=-0.1", "-o", "o"],
     {"d.csv": SPLIT}, "--uncertainty"),
    ("split draws", ["split", "d.csv", "--draws", "1000000000", "-o", "o"], {"d.csv": SPLIT},
     "--draws"),
    ("split exponent", ["split", "d.csv", "--scattering-exponent", "1e9", "-o", "o"],
     {"d.csv": SPLIT}, "--scattering-exponent"),
    ("split bad nan policy", ["split", "d.csv", "--nan", "drop", "-o", "o"], {"d.csv": SPLIT},
     "--nan"),
    # --- outputs -----------------------------------------------------------------------------
    ("out is a file", ["predict", "c.yaml", "-o", "c.yaml"], {"c.yaml": GOOD}, "--out"),
    ("out exists", ["predict", "c.yaml", "-o", "o"], {"c.yaml": GOOD, "o/x.txt": "mine"},
     "--out"),
    ("force over foreign", ["predict", "c.yaml", "-o", "o", "--force"],
     {"c.yaml": GOOD, "o/thesis.tex": "mine", "o/raw/a.dat": "1"}, "--out"),
    ("new into missing folder", ["new", "nofolder/x.yaml"], {}, "nofolder"),
    # --- materials -----------------------------------------------------------------------------
    ("disorder bad formula", ["disorder", "Si0.8Ge"], {}, "Si0.8Ge"),
    ("disorder unknown element", ["disorder", "Xx2Te3"], {}, "Xx"),
    ("disorder site not filled", ["disorder", "[Si0.5Ge0.3]"], {}, "0.8"),
    ("material negative velocity", ["material", "--vl", "-8km/s", "--vt", "5km/s",
                                    "--density", "2.3g/cm^3", "--composition", "Si"], {},
     "--vl"),
    ("material poisson", ["material", "--vl", "8km/s", "--vt", "7.5km/s", "--density",
                          "2.3g/cm^3", "--composition", "Si"], {}, "--vt"),
    ("alloy different layouts", ["alloy", "a.yaml", str(CONFIGS / "silicon.yaml"),
                                 "--fraction", "0:1:5", "--at", "300K", "-o", "o"],
     {"a.yaml": GOOD}, "yaml"),
]


@pytest.mark.parametrize("name, args, files, fragment", CORPUS, ids=[c[0] for c in CORPUS])
def test_bad_input_is_one_clean_error(tmp_path, name, args, files, fragment):
    _files(tmp_path, files)
    before = _digest(tmp_path)
    code, out, err = invoke(args, tmp_path)
    lines = err.strip().splitlines()
    errors = [ln for ln in lines if ln.startswith("error:")]
    assert code == 2, (name, code, out, err)
    assert len(errors) == 1, (name, err)
    assert fragment in errors[0], (name, errors[0])
    assert "Traceback" not in out + err
    after = _digest(tmp_path)
    assert after == before, f"{name}: files changed or written"
    assert not any(p.name.startswith(".") for p in tmp_path.iterdir()), "partial folder left"


def test_corpus_is_large_enough():
    assert len(CORPUS) >= 60


# --- fuzz ------------------------------------------------------------------------------------

_VALUES = ["0", "-1", "1e308", "-1e308", "nan", "inf", "1e-320", "abc", "", "[1, 2]",
           "{a: 1}", "5 K", "5 m", "5 nm", "5 km/s", "5 u", "5 angstrom**3", "3.2",
           "1e6", "null", "true", "5 mm**9**9", "0.5", "10 degC"]


def _mutate(data, rng: random.Random, depth: int = 0):
    """One random change somewhere in plain config data (a copy is returned)."""
    import copy

    data = copy.deepcopy(data)
    paths = []

    def walk(node, path):
        if isinstance(node, dict):
            for k, v in node.items():
                paths.append((*path, k))
                walk(v, (*path, k))
        elif isinstance(node, list):
            for i, v in enumerate(node):
                paths.append((*path, i))
                walk(v, (*path, i))

    walk(data, ())
    path = rng.choice(paths)
    parent = data
    for part in path[:-1]:
        parent = parent[part]
    action = rng.random()
    if action < 0.6:
        parent[path[-1]] = yaml.safe_load(rng.choice(_VALUES) or "''")
    elif action < 0.8 and isinstance(parent, dict):
        parent.pop(path[-1])
    elif isinstance(parent, dict):
        parent[str(path[-1]) + rng.choice(["_x", "s", ""])] = rng.choice([1, "2 K", None])
    return data


def test_fuzzed_configs_never_escape_the_error_family(tmp_path):
    rng = random.Random(20261202)
    bases = [yaml.safe_load(p.read_text(encoding="utf-8"))
             for p in sorted(CONFIGS.glob("*.yaml"))]
    number = re.compile(r"^\s*[-+]?\d")
    for i in range(150):
        data = _mutate(rng.choice(bases), rng)
        if rng.random() < 0.3:
            data = _mutate(data, rng)
        folder = tmp_path / f"case{i}"
        folder.mkdir()
        (folder / "c.yaml").write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
        commands = [["check", "c.yaml"]]
        if i % 4 == 0:  # predict writes figures: a quarter of the cases keep the test quick
            commands.append(["predict", "c.yaml", "-o", "o"])
        for args in commands:
            code, out, err = invoke(args, folder)
            assert "Traceback" not in out + err, (i, args, err)
            assert code in (0, 2), (i, args, code, err)
            errors = [ln for ln in err.splitlines() if ln.startswith("error:")]
            if code == 2:
                assert len(errors) == 1, (i, args, err)
                assert "stopped" not in errors[0], (i, "unexpected exception", errors[0])
            elif args[0] == "predict":
                table = (folder / "o" / "kappa_L.csv").read_text(encoding="utf-8").splitlines()
                for row in table[1:]:
                    cells = [c for c in row.split(",") if number.match(c)]
                    values = np.array([float(c) for c in cells])
                    assert np.all(np.isfinite(values)), (i, row)
