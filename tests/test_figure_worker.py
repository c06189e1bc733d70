"""The figure worker (kappa/cli/figures.py): same files as drawing in-process, errors as one
line with nothing written, no process left behind.

The command-line tests run ``python -m kappa`` (the worker starts only from the entry point,
before matplotlib is loaded); they are skipped where the worker cannot run (one core, not
Linux), where the in-process path is what every other test covers.
"""

from __future__ import annotations

import base64
import hashlib
import io
import os
import re
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from kappa.cli import figures

CONFIG = """material: {name: worker crystal, atomic_mass: 28.0855 u, atomic_volume: 20.02 angstrom**3,
           debye_temperature: 645 K, sound_velocity: 6084 m/s, gruneisen: 0.56}
scattering: {boundary: {grain_size: 1 um}, point_defect: {mass_variance: 2.0e-4}}
temperature: {start: 50 K, stop: 800 K, points: 12}
"""

needs_worker = pytest.mark.skipif(
    not (sys.platform.startswith("linux") and hasattr(os, "sched_getaffinity")
         and len(os.sched_getaffinity(0)) >= 2),
    reason="the figure worker runs on Linux with two cores")


def env(**extra: str) -> dict[str, str]:
    e = {k: v for k, v in os.environ.items() if k != "KAPPA_FIGURE_PROCESSES"}
    e.update(extra)
    return e


def kappa(args: list, cwd: Path, **extra: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "kappa", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, env=env(**extra), timeout=120)


def _pixels(match: re.Match) -> str:
    from PIL import Image

    data = base64.b64decode(re.sub(r"\s", "", match.group(1)))
    image = np.asarray(Image.open(io.BytesIO(data)))
    return "base64," + hashlib.sha256(image.tobytes()).hexdigest()


def comparable(path: Path) -> bytes | str:
    """A file's content; SVG and PDF without their dates, SVG without its random ids and
    with embedded images as pixels."""
    if path.suffix == ".pdf":
        return re.sub(rb"/CreationDate \(D:[^)]*\)", b"", path.read_bytes())
    if path.suffix != ".svg":
        return path.read_bytes()
    text = path.read_text(encoding="utf-8")
    text = re.sub(r"base64,\s*([^\"]+)", _pixels, text)
    text = re.sub(r"<dc:date>.*?</dc:date>", "", text)
    ids: dict[str, str] = {}
    return re.sub(r"\b(?:image|[a-z])[0-9a-f]{10}\b",
                  lambda m: ids.setdefault(m.group(0), f"id{len(ids)}"), text)


def same_outputs(a: Path, b: Path) -> None:
    names = sorted(p.name for p in a.iterdir())
    assert names == sorted(p.name for p in b.iterdir())
    for name in names:
        if name != "run.json":  # holds the folder name and the time
            assert comparable(a / name) == comparable(b / name), name


@needs_worker
@pytest.mark.parametrize("args", [
    ["predict", "c.yaml", "--style", "talk", "--format", "csv,png,svg,pdf"],
    ["spectrum", "c.yaml", "--at", "100K,300K"],
    ["sweep", "c.yaml", "--vary", "scattering.boundary.grain_size=10nm:10um:30:log",
     "--vary", "scattering.point_defect.mass_variance=0:0.05:20", "--at", "300K,600K"],
])
def test_worker_writes_the_same_files_as_one_process(tmp_path, args):
    (tmp_path / "c.yaml").write_text(CONFIG, encoding="utf-8")
    two = kappa([*args, "-o", "two"], tmp_path)
    one = kappa([*args, "-o", "one"], tmp_path, KAPPA_FIGURE_PROCESSES="1")
    assert two.returncode == 0, two.stderr
    assert one.returncode == 0, one.stderr
    timing = r"\d[\d.e+-]* s \([^)]*\)"  # the sweep prints its own time
    assert (re.sub(timing, "", two.stdout.replace("two/", "one/"))
            == re.sub(timing, "", one.stdout))
    same_outputs(tmp_path / "two", tmp_path / "one")


BROKEN = """
import sys
import kappa.presentation.predict as figure

def broken(*args, **kwargs):
    raise ZeroDivisionError("float division by zero")

figure.prediction_figure = broken
sys.argv = ["kappa", *sys.argv[1:]]
from kappa.cli.entry import run
run()
"""


@needs_worker
def test_a_figure_that_fails_in_the_worker_is_one_line_and_writes_nothing(tmp_path):
    (tmp_path / "c.yaml").write_text(CONFIG, encoding="utf-8")
    driver = tmp_path / "driver.py"
    driver.write_text(BROKEN, encoding="utf-8")
    results = [subprocess.run([sys.executable, str(driver), "predict", "c.yaml", "-o", out],
                              cwd=tmp_path, capture_output=True, text=True, timeout=120,
                              env=env(**extra))
               for out, extra in (("two", {}), ("one", {"KAPPA_FIGURE_PROCESSES": "1"}))]
    for result in results:
        assert result.returncode == 2
        assert result.stderr.strip().splitlines() == [
            "error: kappa predict stopped: a division by zero (ZeroDivisionError: float "
            "division by zero); rerun with --debug for the full traceback"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["c.yaml", "driver.py"]


def _children(pid: int) -> list[int]:
    try:
        found = []
        for task in Path(f"/proc/{pid}/task").iterdir():
            found += [int(c) for c in (task / "children").read_text().split()]
        return found
    except OSError:
        return []


@needs_worker
def test_sigterm_while_the_worker_draws_leaves_no_process_and_no_folder(tmp_path):
    (tmp_path / "c.yaml").write_text(CONFIG, encoding="utf-8")
    proc = subprocess.Popen([sys.executable, "-m", "kappa", "sweep", "c.yaml", "--vary",
                             "scattering.boundary.grain_size=10nm:10um:200:log", "--vary",
                             "scattering.point_defect.mass_variance=0:0.05:100", "-o", "out"],
                            cwd=tmp_path, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, env=env())
    deadline = time.monotonic() + 30
    workers: list[int] = []
    while time.monotonic() < deadline and not workers:
        workers = _children(proc.pid)
        time.sleep(0.01)
    assert workers, "no figure worker was started"
    time.sleep(0.3)
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    # 143: in the output folder; -15: before it (nothing begun); 0: done before the signal
    assert proc.returncode in (143, -signal.SIGTERM, 0), err
    if proc.returncode != 0:
        assert proc.returncode != 143 or err.strip().splitlines()[-1] == "aborted (SIGTERM)"
        assert not (tmp_path / "out").exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []
    for pid in workers:  # gone, or dead and left to the system to reap (its parent is gone)
        state = "?"
        for _ in range(100):
            try:
                state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
            except OSError:
                state = "gone"
            if state in ("gone", "Z", "X"):
                break
            time.sleep(0.05)
        assert state in ("gone", "Z", "X"), f"worker {pid} still running ({state})"


def test_no_worker_for_one_process_help_or_other_commands(monkeypatch):
    import matplotlib  # noqa: F401 - as in every in-process caller

    monkeypatch.setenv("KAPPA_FIGURE_PROCESSES", "1")
    assert figures.start(["predict", "c.yaml"]) is None
    monkeypatch.delenv("KAPPA_FIGURE_PROCESSES")
    assert figures.start(["predict", "--help"]) is None
    assert figures.start(["split", "a.csv"]) is None
    assert figures.start(["--debug", "split", "predict"]) is None  # a file named predict
    assert figures.start(["predict", "c.yaml"]) is None  # matplotlib is loaded here already
    assert figures.worker() is None


def square(values):
    """A figure job for the tests (runs in the worker)."""
    from kappa.presentation.style import new_figure

    fig, axes = new_figure(layout=None)
    axes[0, 0].plot(values, np.square(values))
    return fig


def fails(message):
    from kappa.errors import ConfigError

    raise ConfigError("figure", message, "a figure that draws")


@needs_worker
def test_worker_draws_jobs_and_reports_kappa_errors(tmp_path):
    worker = figures.FigureWorker(["kappa.presentation.predict"])
    pids = [worker.pid]
    try:
        worker.send("paper", tmp_path, [(__name__, "square", (np.arange(5.0),), {}, "sq",
                                         ("png", "svg"))])
        worker.wait()
    finally:
        worker.stop()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["sq.png", "sq.svg"]
    worker = figures.FigureWorker([])
    pids.append(worker.pid)
    try:
        worker.send("talk", tmp_path, [(__name__, "fails", ("bad",), {}, "x", ("png",))])
        from kappa.errors import ConfigError

        with pytest.raises(ConfigError, match="figure = bad"):
            worker.wait()
    finally:
        worker.stop()
    for pid in pids:  # every child was reaped
        with pytest.raises(ChildProcessError):
            os.waitpid(pid, os.WNOHANG)


@needs_worker
def test_stopping_an_unused_worker_reaps_it():
    worker = figures.FigureWorker([])
    pid = worker.pid
    worker.stop()
    assert worker.pid == 0
    with pytest.raises(ChildProcessError):
        os.waitpid(pid, os.WNOHANG)


def test_saver_keeps_the_files_of_a_laid_out_figure_together(tmp_path, monkeypatch):
    from kappa.presentation.style import new_figure

    laid_out, _ = new_figure()  # constrained layout: computed for its first format
    plain, _ = new_figure(layout=None)
    files = [(laid_out, tmp_path / "a", "png"), (plain, tmp_path / "b", "png"),
             (laid_out, tmp_path / "a", "svg"), (plain, tmp_path / "b", "svg")]
    monkeypatch.setattr(figures, "parallel_figures", lambda: True)
    monkeypatch.setattr(os, "fork", lambda: 123456789)  # record the split, start nothing
    saver = figures.Saver(files)
    os.close(saver.read_fd)
    saver.pid, saver.read_fd = 0, -1
    own = [(f, fmt) for f, _, fmt in saver.own]
    assert ((laid_out, "png") in own) == ((laid_out, "svg") in own)
    assert [fmt for f, fmt in own if f is laid_out] in ([], ["png", "svg"])  # in order
    assert 0 < len(own) < 4
