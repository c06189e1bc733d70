"""Installs that always work: the README's two set-up commands, in either order.

A throwaway virtual environment gets kappa installed from a copy of this repository, first as
a normal install (``pip install .``) and then editable (``pip install -e .``), or the other way
round. After each install kappa must run from another folder, and the compiled kernels must
land in the cache folder (``KAPPA_CACHE_DIR``), never inside the installed package or the
source tree: files there that the installer does not know about break the next install.

Dependencies come from the running test environment (``--system-site-packages`` and, when
the tests themselves run in a virtual environment, a ``.pth`` line), so the installs need no
network (``--no-deps --no-build-isolation``) when setuptools can build wheels offline.
Also: with no writable cache folder anywhere, kappa runs uncached with one warning line.
"""

import os
import shutil
import subprocess
import sys
import sysconfig
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _env(**extra: str) -> dict[str, str]:
    env = {k: v for k, v in os.environ.items()
           if k not in ("NUMBA_CACHE_DIR", "KAPPA_CACHE_DIR", "PYTHONPATH")}
    env.update(extra)
    return env


def _run(args, cwd, env, timeout=300) -> subprocess.CompletedProcess:
    result = subprocess.run([str(a) for a in args], cwd=cwd, env=env, capture_output=True,
                            text=True, timeout=timeout)
    assert result.returncode == 0, f"{args}\n{result.stdout[-2000:]}\n{result.stderr[-3000:]}"
    return result


def _copy_repository(dest: Path) -> Path:
    src = dest / "src"
    src.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copy(ROOT / name, src / name)
    for name in ("kappa", "configs"):
        shutil.copytree(ROOT / name, src / name,
                        ignore=shutil.ignore_patterns("__pycache__", "*.nbi", "*.nbc"))
    return src


def _venv(path: Path) -> Path:
    """A virtual environment without pip that sees the test environment's packages."""
    try:
        subprocess.run([sys.executable, "-m", "venv", "--system-site-packages", "--without-pip",
                        str(path)], check=True, capture_output=True, timeout=120)
    except (subprocess.CalledProcessError, OSError, subprocess.TimeoutExpired) as exc:
        pytest.skip(f"cannot create a virtual environment here: {exc}")
    python = path / ("Scripts/python.exe" if os.name == "nt" else "bin/python")
    site = subprocess.run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()"
                           "['purelib'])"], check=True, capture_output=True, text=True).stdout
    paths = {sysconfig.get_paths()["purelib"], sysconfig.get_paths()["platlib"]}
    Path(site.strip(), "test-environment.pth").write_text("\n".join(sorted(paths)) + "\n")
    return python


def _offline_build(python: Path) -> bool:
    """Can setuptools build a wheel without downloading anything?"""
    code = ("import setuptools, importlib.util as u; v = tuple(int(x) for x in "
            "setuptools.__version__.split('.')[:2]); "
            "raise SystemExit(0 if v >= (70, 1) or u.find_spec('wheel') else 1)")
    return subprocess.run([str(python), "-c", code], capture_output=True).returncode == 0


def _pip_install(python: Path, *args, env) -> None:
    if subprocess.run([sys.executable, "-m", "pip", "--python", str(python), "--version"],
                      capture_output=True).returncode != 0:
        pytest.skip("this pip cannot install into another environment (needs pip >= 22.3)")
    isolation = ["--no-build-isolation"] if _offline_build(python) else []
    _run([sys.executable, "-m", "pip", "--python", python, "install", "--quiet", "--no-deps",
          *isolation, *args], cwd=python.parent, env=env)


def _bin(python: Path, name: str) -> Path:
    return python.parent / (f"{name}.exe" if os.name == "nt" else name)


def _stray_cache_files(*folders: Path) -> list[Path]:
    return [p for f in folders for p in f.rglob("*") if p.suffix in (".nbi", ".nbc")]


#: A sweep large enough for the compiled kernels (small jobs are integrated with numpy).
SWEEP = ["--vary", "scattering.boundary.grain_size=10nm:10um:2100:log", "--at", "300K,600K"]


def _check_runs(python: Path, src: Path, work: Path, env, expect_in: Path) -> None:
    """predict and a sweep from another folder, kappa new, import kappa: all from ``work``."""
    work.mkdir()
    kappa = _bin(python, "kappa")
    _run([kappa, "predict", src / "configs" / "silicon.yaml", "-o", "silicon-run"], work, env)
    assert (work / "silicon-run" / "kappa_L.csv").exists()
    _run([kappa, "sweep", src / "configs" / "silicon.yaml", *SWEEP, "-o", "grains"], work, env)
    assert (work / "grains" / "sweep.csv").exists()
    _run([kappa, "new", "my-material.yaml"], work, env)
    assert (work / "my-material.yaml").exists()
    # the demo's files and the report template ship with the package (kappa demo needs them)
    shipped = _run([python, "-c", "from importlib.resources import files; "
                    "from kappa.cli.demo import demo_files; "
                    "print(len(demo_files()), files('kappa').joinpath("
                    "'templates/report.html.j2').is_file())"], work, env).stdout.split()
    assert shipped == ["7", "True"], shipped
    where = _run([python, "-c", "import kappa; print(kappa.__file__)"], work, env).stdout
    assert Path(where.strip()).resolve().is_relative_to(expect_in.resolve()), where


@pytest.mark.parametrize("editable_first", [False, True], ids=["install-then-editable",
                                                                "editable-then-install"])
def test_both_setup_commands_in_either_order(tmp_path, editable_first):
    src = _copy_repository(tmp_path)
    python = _venv(tmp_path / "venv")
    site = Path(subprocess.run([str(python), "-c", "import sysconfig; print(sysconfig."
                                "get_paths()['purelib'])"], capture_output=True, text=True,
                               check=True).stdout.strip())
    cache = tmp_path / "cache"
    env = _env(KAPPA_CACHE_DIR=str(cache))
    steps = [("editable", ["-e", src]), ("install", [src])]
    if not editable_first:
        steps.reverse()
    for k, (kind, args) in enumerate(steps):
        _pip_install(python, *args, env=env)
        _check_runs(python, src, tmp_path / f"work{k}", env,
                    src / "kappa" if kind == "editable" else site / "kappa")
        assert not _stray_cache_files(site, src / "kappa"), "compile cache inside the package"
    assert list(cache.rglob("*.nbi")), "the kernels were not cached in KAPPA_CACHE_DIR"


def test_no_writable_cache_folder_runs_uncached_with_one_warning(tmp_path):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("a file where the home and cache folders would be")
    env = _env(HOME=str(blocker), XDG_CACHE_HOME=str(blocker / "cache"),
               XDG_CONFIG_HOME=str(blocker / "config"))
    env.pop("MPLCONFIGDIR", None)
    version = _run([sys.executable, "-m", "kappa", "--version"], tmp_path, env)
    assert version.stdout.startswith("kappa ") and version.stderr == ""
    config = ROOT / "configs" / "silicon.yaml"
    result = _run([sys.executable, "-m", "kappa", "sweep", config, *SWEEP, "-o", "run"],
                  tmp_path, env)
    assert [ln for ln in result.stderr.splitlines() if ln.startswith("warning:")] == [
        f"warning: no writable folder for the compile cache ({blocker}/cache/kappa/numba), "
        "chosen by the user's cache folder: the kernels are compiled on every run (set "
        "KAPPA_CACHE_DIR to a writable folder to keep them)"]
    assert (tmp_path / "run" / "sweep.csv").exists()


def test_version_and_help_do_not_load_numba(tmp_path):
    code = ("import atexit, sys\n"
            "atexit.register(lambda: print('numba' in sys.modules, file=sys.stderr))\n"
            "sys.argv = ['kappa', *sys.argv[1:]]\n"
            "from kappa.cli.main import run\n"
            "run()\n")
    for args in (["--version"], ["--help"], ["split", "--help"]):
        result = subprocess.run([sys.executable, "-c", code, *args], capture_output=True,
                                text=True, cwd=tmp_path, env=_env())
        assert result.returncode == 0, result.stderr
        assert result.stderr.strip() == "False", (args, result.stderr)


def test_cache_folder_choice(tmp_path):
    code = "from kappa.core.jit import cache_folder; print(cache_folder())"
    own = _run([sys.executable, "-c", code], tmp_path,
               _env(KAPPA_CACHE_DIR=str(tmp_path / "k"))).stdout.strip()
    assert own == str(tmp_path / "k" / "numba")
    users = _run([sys.executable, "-c", code], tmp_path,
                 _env(KAPPA_CACHE_DIR=str(tmp_path / "k"),
                      NUMBA_CACHE_DIR=str(tmp_path / "n"))).stdout.strip()
    assert users == str(tmp_path / "n")  # a NUMBA_CACHE_DIR set by the user is never overridden


def test_every_public_name_resolves():
    """``import kappa`` is lazy; every name it exports must still be there."""
    import kappa

    for name in kappa.__all__:
        assert getattr(kappa, name) is not None, name
    assert set(kappa.__all__) <= set(dir(kappa))
