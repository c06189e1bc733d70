"""The command line never loses files, never shows a traceback, and stays within its limits.

Every bad input: exit status 2, exactly one `error:` line, no traceback, nothing written, the
inputs byte-identical afterwards.
"""

import hashlib
import json
import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

import kappa.cli.split as cli_split
from kappa.cli.main import app
from kappa.errors import KappaWarning, warn
from kappa.io.records import collect_warnings, run_record

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "examples" / "split-demo"
runner = CliRunner()


def digest(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.iterdir()) if p.is_file()}


def one_error(result) -> str:
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), result.stderr
    assert "Traceback" not in result.output
    return lines[0]


@pytest.fixture()
def demo(tmp_path):
    data = tmp_path / "FH-03_total.csv"
    data.write_bytes((DEMO / "FH-03_total.csv").read_bytes())
    return data


def split(data, *extra):
    out = data.parent / "out"
    result = runner.invoke(app, ["split", str(data), "-o", str(out), *map(str, extra)])
    return result, out


# --- options out of range ---------------------------------------------------------------------

@pytest.mark.parametrize("options, message", [
    (["--seed", "-1"], "--seed = -1: a whole number >= 0"),
    (["--scattering-exponent", "1e9"], "--scattering-exponent = 1e+09: from -0.9 to 4"),
    (["--scattering-exponent", "-0.95"], "--scattering-exponent = -0.95: from -0.9 to 4"),
    (["--draws", "1000000000"], "--draws = 1000000000: from 100 to 100,000"),
    (["--draws", "50"], "--draws = 50: from 100 to 100,000"),
    (["--window", "300 m**2**2**2**2**2**2**2**2:450K"], "exponents in units must be"),
])
def test_options_out_of_range(demo, options, message):
    before = digest(demo.parent)
    result, out = split(demo, *options)
    assert message in one_error(result)
    assert not out.exists() and digest(demo.parent) == before


def test_library_limits_name_the_arguments():
    from kappa.errors import DataError
    from kappa.workflows.split import split as split_arrays

    T = np.linspace(300.0, 700.0, 6)
    args = (T, np.full(6, 2.0), np.full(6, 1e5), np.full(6, 150e-6))
    with pytest.raises(DataError, match="^seed = -1"):
        split_arrays(*args, seed=-1)
    with pytest.raises(DataError, match="^draws = 1000000"):
        split_arrays(*args, draws=1_000_000)
    with pytest.raises(DataError, match="^scattering_exponent = 1e"):
        split_arrays(*args, scattering_exponent=1e9)


def test_usage_errors_through_the_entry_point_are_one_line(demo):
    out = demo.parent / "out"
    result = subprocess.run([sys.executable, "-m", "kappa", "split", str(demo), "-o", str(out),
                             "--draws", "10**9"], capture_output=True, text=True,
                            env=clean_env())
    assert result.returncode == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: ") and "'--draws'" in lines[0], \
        result.stderr
    assert not out.exists()


# --- measured data that no solid shows ----------------------------------------------------------

def table(tmp_path, header, rows, name="d.csv"):
    p = tmp_path / name
    p.write_text(header + "\n" + "\n".join(",".join(map(str, r)) for r in rows) + "\n")
    return p


T6 = [300, 350, 400, 450, 500, 550]


def test_seebeck_in_wrong_unit_warns_and_gives_no_gap(tmp_path):
    # S written in V/K multiplied by 1e6 twice (a typical spreadsheet slip): |S| ~ 1e5 uV/K
    p = table(tmp_path, "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]",
              [(t, 2.0, 500, -1.5e5 - 100 * i) for i, t in enumerate(T6)])
    result, out = split(p, "--lorenz", "degenerate", "--draws", 200)
    assert result.exit_code == 0, result.output
    warnings = [ln for ln in result.stderr.splitlines() if ln.startswith("warning: ")]
    assert len([w for w in warnings if "is the unit right" in w]) == 1, result.stderr
    assert "1.505e+05 uV/K, above 2,000 uV/K" in result.stderr
    derived = json.loads((out / "run.json").read_text())["derived"]["bipolar"]
    assert derived["goldsmid_sharp_gap [eV]"] is None
    assert "not estimated" in derived["gap_note"]
    assert "Goldsmid-Sharp gap: not estimated" in result.output


def test_seebeck_that_cannot_be_physical_is_an_error(tmp_path):
    p = table(tmp_path, "T [K],kappa [W/(m K)],sigma [S/cm],S [V/K]",
              [(t, 2.0, 500, -150) for t in T6])  # uV/K values labelled V/K
    before = digest(tmp_path)
    result, out = split(p, "--lorenz", "degenerate")
    line = one_error(result)
    assert "d.csv, column 'S [V/K]', row 2 = -150: |S| = 150 V/K cannot be physical" in line
    assert not out.exists() and digest(tmp_path) == before


@pytest.mark.parametrize("column, value, fragment", [
    ("sigma [S/cm]", 5e7, "electrical conductivity reaches 5e+09 S/m, above 1e+08 S/m"),
    ("sigma [S/cm]", 1e-9, "electrical conductivity reaches 1e-07 S/m, below 1e-06 S/m"),
    ("kappa [W/(m K)]", 5000, "total thermal conductivity reaches 5000 W/(m K), above 3,000"),
    ("kappa [W/(m K)]", 0.001, "total thermal conductivity reaches 0.001 W/(m K), below 0.01"),
])
def test_implausible_values_warn_once(tmp_path, column, value, fragment):
    cols = {"kappa [W/(m K)]": 2.0, "sigma [S/cm]": 500}
    cols[column] = value
    p = table(tmp_path, "T [K]," + ",".join(cols), [(t, *cols.values()) for t in T6])
    result, _ = split(p, "--lorenz", "degenerate", "--draws", 200)
    assert result.exit_code == 0, result.output
    hits = [ln for ln in result.stderr.splitlines() if fragment in ln]
    assert len(hits) == 1 and hits[0].startswith("warning: d.csv, column"), result.stderr


def test_temperature_above_3000_K_warns(tmp_path):
    p = table(tmp_path, "T [K],kappa [W/(m K)],sigma [S/cm]",
              [(t, 2.0, 500) for t in (2000, 2500, 3000, 3500, 4000, 4500)])
    result, _ = split(p, "--lorenz", "degenerate", "--draws", 200)
    assert result.exit_code == 0
    assert "temperature reaches 4500 K, above 3,000 K" in result.stderr


def test_number_overflowing_on_conversion(tmp_path):
    p = table(tmp_path, "T [K],kappa [kW/(m K)],sigma [S/cm]",
              [(t, 1e306, 500) for t in T6])
    line = one_error(split(p, "--lorenz", "degenerate")[0])
    assert "column 'kappa [kW/(m K)]', row 2 = 1e+306: too large" in line


# --- the safety net ---------------------------------------------------------------------------

@pytest.mark.parametrize("exc, fragment", [
    (OverflowError("math range error"), "a number grew too large (OverflowError: math range"),
    (ZeroDivisionError("float division by zero"), "a division by zero"),
    (MemoryError(), "ran out of memory"),
    (RecursionError("maximum recursion depth exceeded"), "nested too deeply"),
    (PermissionError(13, "Permission denied", "/data/x.csv"),
     "cannot read or write /data/x.csv: Permission denied"),
    (RuntimeError("numba said no"), "unexpected RuntimeError: numba said no"),
])
def test_unexpected_errors_are_one_line(demo, monkeypatch, exc, fragment):
    def boom(*args, **kwargs):
        raise exc

    monkeypatch.setattr(cli_split, "split_measurements", boom)
    result, out = split(demo)
    line = one_error(result)
    assert line.startswith("error: kappa split") and fragment in line and "--debug" in line
    assert not out.exists()


def test_debug_keeps_the_traceback(demo, monkeypatch):
    def boom(*args, **kwargs):
        raise OverflowError("math range error")

    monkeypatch.setattr(cli_split, "split_measurements", boom)
    result = runner.invoke(app, ["--debug", "split", str(demo), "-o", str(demo.parent / "o")])
    assert isinstance(result.exception, OverflowError)


# --- warnings: printed once, recorded in run.json -----------------------------------------

def test_warnings_printed_once_and_recorded(tmp_path, monkeypatch):
    p = table(tmp_path, "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]",
              [(t, 2.0, 500, -150) for t in T6])
    real = cli_split.split_measurements

    def twice(*args, **kwargs):
        warn("a test warning")
        warn("a test warning")
        return real(*args, **kwargs)

    monkeypatch.setattr(cli_split, "split_measurements", twice)
    result, out = split(p, "--composition", "PbTe", "--draws", 200)
    assert result.exit_code == 0, result.output
    assert result.stderr.count("warning: a test warning") == 1
    assert result.stderr.count("warning: --composition PbTe not used") == 1
    recorded = json.loads((out / "run.json").read_text())["warnings"]
    assert recorded == ["--composition PbTe not used: the data give kappa directly",
                        "a test warning"]


def test_run_record_reads_the_collected_warnings():
    with collect_warnings():
        warn("first")
        record = run_record("x", warnings=["from the command", "first"])
    assert record["warnings"] == ["from the command", "first"]
    with pytest.warns(KappaWarning):
        warn("outside")
    assert run_record("x")["warnings"] == []


# --- interrupted runs leave nothing behind -----------------------------------------------------

DRIVER = textwrap.dedent("""
    import pathlib, sys, time
    import kappa.cli.split as cli_split

    ready = pathlib.Path(sys.argv[1])

    def slow_write(path, columns):  # writes part of the output, then waits for the signal
        pathlib.Path(path).write_text("T [K]\\n")
        ready.write_text(str(path))
        while True:
            time.sleep(0.02)

    cli_split.write_table = slow_write
    sys.argv = ["kappa", *sys.argv[2:]]
    from kappa.cli.main import run
    run()
""")


def clean_env() -> dict[str, str]:
    env = dict(os.environ)
    env.pop("NUMBA_CACHE_DIR", None)
    return env


@pytest.mark.parametrize("signum, code", [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
@pytest.mark.parametrize("existing", [False, True])
def test_signal_while_writing_leaves_no_partial_folder(tmp_path, demo, signum, code, existing):
    out = tmp_path / "out"
    if existing:  # an earlier kappa output that --force would replace must survive
        assert split(demo, "--draws", 200)[0].exit_code == 0
    before_out = digest(out) if existing else None
    before_inputs = demo.read_bytes()
    driver = tmp_path / "driver.py"
    driver.write_text(DRIVER)
    ready = tmp_path / "ready"
    proc = subprocess.Popen(
        [sys.executable, str(driver), str(ready), "split", str(demo), "-o", str(out),
         "--draws", "200", "--force"], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
        text=True, env=clean_env())
    deadline = time.monotonic() + 120
    while not ready.exists() and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.05)
    assert ready.exists(), proc.communicate()
    assert Path(ready.read_text()).parent.name.startswith(".out.partial-")
    proc.send_signal(signum)
    _, stderr = proc.communicate(timeout=60)
    assert proc.returncode == code, stderr
    assert stderr.strip().splitlines()[-1].startswith("aborted") and "Traceback" not in stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        ["FH-03_total.csv", "driver.py", "ready"] + (["out"] if existing else []))
    assert demo.read_bytes() == before_inputs
    if existing:
        assert digest(out) == before_out


# --- kappa new --------------------------------------------------------------------------------

def test_new_into_a_missing_folder_or_over_a_file(tmp_path):
    line = one_error(runner.invoke(app, ["new", str(tmp_path / "missing" / "m.yaml")]))
    assert f"the folder {tmp_path / 'missing'} does not exist" in line
    existing = tmp_path / "m.yaml"
    existing.write_text("mine")
    assert "already exists" in one_error(runner.invoke(app, ["new", str(existing)]))
    assert "is a folder" in one_error(runner.invoke(app, ["new", str(tmp_path)]))
    assert existing.read_text() == "mine"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.yaml"]
    result = runner.invoke(app, ["new", str(existing), "--force"])
    assert result.exit_code == 0 and existing.read_text().startswith("#")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.yaml"]  # no temporary file left


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0,
                    reason="root ignores file permissions")
def test_unreadable_input_is_one_line(demo):
    demo.chmod(0o000)
    try:
        result = subprocess.run([sys.executable, "-m", "kappa", "split", str(demo), "-o",
                                 str(demo.parent / "out")], capture_output=True, text=True,
                                env=clean_env())
    finally:
        demo.chmod(0o644)
    assert result.returncode == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: ") and str(demo.name) in lines[0]
    assert not (demo.parent / "out").exists()


def test_safety_net_of_the_entry_point(demo, tmp_path):
    """An exception escaping outside the command wrapper still ends in one line."""
    driver = tmp_path / "driver.py"
    driver.write_text(textwrap.dedent("""
        import sys
        import kappa.cli.split as cli_split

        def broken(*args, **kwargs):
            raise ZeroDivisionError("float division by zero")

        cli_split._run = broken
        sys.argv = ["kappa", *sys.argv[1:]]
        from kappa.cli.main import run
        run()
    """))
    result = subprocess.run([sys.executable, str(driver), "split", str(demo), "-o",
                             str(tmp_path / "out")], capture_output=True, text=True,
                            env=clean_env())
    assert result.returncode == 2
    assert result.stderr.strip().splitlines() == [
        "error: kappa split stopped: a division by zero (ZeroDivisionError: float division by "
        "zero); rerun with --debug for the full traceback"]
