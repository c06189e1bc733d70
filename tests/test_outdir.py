"""Output folders: --force replaces only what kappa wrote; all-or-nothing; one-line errors."""

import json
import os
from pathlib import Path

import pytest
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.errors import KappaError
from kappa.io.outdir import FILES_KEY, MARK, check_out, foreign_content, output_folder

DEMO = Path(__file__).resolve().parents[1] / "examples" / "split-demo"
runner = CliRunner()

ROOT_IGNORES_PERMISSIONS = hasattr(os, "geteuid") and os.geteuid() == 0


def snapshot(folder: Path) -> dict[str, bytes]:
    """Every file below ``folder`` with its bytes, and every sub-folder."""
    out: dict[str, bytes] = {}
    for p in sorted(folder.rglob("*")):
        out[p.relative_to(folder).as_posix()] = p.read_bytes() if p.is_file() else b"<dir>"
    return out


def split(tmp_path, out, *extra):
    data = tmp_path / "FH-03_total.csv"
    if not data.exists():
        data.write_bytes((DEMO / "FH-03_total.csv").read_bytes())
    return runner.invoke(app, ["split", str(data), "-o", str(out), "--draws", "200", *extra])


def one_error(result) -> str:
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), result.stderr
    assert "Traceback" not in result.output
    return lines[0]


def test_force_never_deletes_a_users_folder(tmp_path):
    mydata = tmp_path / "mydata"
    (mydata / "raw").mkdir(parents=True)
    (mydata / "thesis.tex").write_text("\\chapter{Results}\n")
    (mydata / "raw" / "run1.dat").write_bytes(b"\x00\x01")
    before = snapshot(mydata)
    for extra in ([], ["--force"]):
        line = one_error(split(tmp_path, mydata, *extra))
        assert f"--out = {mydata}" in line
    assert "holds files kappa did not write (raw/, thesis.tex); choose another folder" in line
    assert snapshot(mydata) == before
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".mydata")]


def test_force_replaces_a_folder_kappa_wrote(tmp_path):
    out = tmp_path / "o"
    assert split(tmp_path, out).exit_code == 0
    record = json.loads((out / MARK).read_text())
    assert record["program"] == "kappa"
    assert set(record[FILES_KEY]) == {"split.csv", "split.png", "split.svg"}
    assert "already exists" in one_error(split(tmp_path, out))
    result = split(tmp_path, out, "--force", "--seed", "3")
    assert result.exit_code == 0, result.output
    assert json.loads((out / MARK).read_text())["options"]["seed"] == 3
    assert sorted(p.name for p in tmp_path.iterdir()) == ["FH-03_total.csv", "o"]


def test_force_refuses_when_a_file_was_added_or_changed(tmp_path):
    out = tmp_path / "o"
    assert split(tmp_path, out).exit_code == 0
    (out / "notes.txt").write_text("mine")
    assert "holds files kappa did not write (notes.txt)" in one_error(split(tmp_path, out,
                                                                          "--force"))
    (out / "notes.txt").unlink()
    with open(out / "split.csv", "a") as fh:
        fh.write("# my comment\n")
    assert "holds files changed since kappa wrote them (split.csv)" in one_error(
        split(tmp_path, out, "--force"))


def test_run_json_of_another_program_or_older_kappa_is_not_a_mark(tmp_path):
    other = tmp_path / "other"
    other.mkdir()
    (other / "run.json").write_text('{"program": "something else"}')
    assert "holds files kappa did not write (run.json)" in one_error(
        split(tmp_path, other, "--force"))
    old = tmp_path / "old"
    old.mkdir()
    (old / "run.json").write_text('{"program": "kappa", "command": "split"}')
    (old / "split.csv").write_text("T [K]\n1\n")
    assert "older kappa that did not list its files" in one_error(split(tmp_path, old, "--force"))


def test_out_is_a_file_or_below_a_file(tmp_path):
    f = tmp_path / "results.txt"
    f.write_text("keep")
    assert f"--out = {f}: is a file" in one_error(split(tmp_path, f, "--force"))
    assert "is a file, not a folder" in one_error(split(tmp_path, f / "sub"))
    assert f.read_text() == "keep"


def test_missing_parents_are_created(tmp_path):
    out = tmp_path / "a" / "b" / "o"
    assert split(tmp_path, out).exit_code == 0
    assert (out / "split.csv").exists()


def test_failed_run_removes_created_parents_and_partial_folder(tmp_path):
    out = tmp_path / "a" / "b" / "o"
    with pytest.raises(RuntimeError), output_folder(out) as tmp:
        (tmp / "x.csv").write_text("1")
        raise RuntimeError("disk full")
    assert list(tmp_path.iterdir()) == []


def test_symbolic_link_is_refused(tmp_path):
    target = tmp_path / "target"
    target.mkdir()
    link = tmp_path / "link"
    link.symlink_to(target)
    with pytest.raises(KappaError, match="is a symbolic link"):
        check_out(link, force=True)


def test_foreign_content_lists_folders_once(tmp_path):
    (tmp_path / "raw" / "deep").mkdir(parents=True)
    (tmp_path / "raw" / "deep" / "x").write_text("1")
    (tmp_path / "a.txt").write_text("1")
    assert foreign_content(tmp_path) == (["raw/", "a.txt"], [])


@pytest.mark.skipif(ROOT_IGNORES_PERMISSIONS, reason="root ignores file permissions")
def test_folder_without_write_permission(tmp_path):
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    try:
        line = one_error(split(tmp_path, locked / "o"))
        assert "permission denied" in line
    finally:
        locked.chmod(0o755)
    assert list(locked.iterdir()) == []
