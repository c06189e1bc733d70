"""Run records: input checksums, library versions, warnings."""

import hashlib
import subprocess
import sys

from kappa.io.records import environment, file_records, run_record


def test_input_files_have_size_and_sha256(tmp_path):
    a, b = tmp_path / "a.csv", tmp_path / "b.yaml"
    a.write_bytes(b"T [K],kappa [W/(m K)]\n300,1.5\n")
    b.write_bytes("name: Grüneisen test\n".encode())
    records = file_records([a, b])
    for p, rec in zip((a, b), records, strict=True):
        data = p.read_bytes()
        assert rec == {"path": str(p), "bytes": len(data),
                       "sha256": hashlib.sha256(data).hexdigest()}  # hashlib: the reference
    record = run_record("split", inputs=[a, b], options={"seed": 0})
    assert record["input_files"] == records and record["options"] == {"seed": 0}
    missing = file_records([tmp_path / "gone.csv"])[0]
    assert missing["path"].endswith("gone.csv") and "cannot read" in missing["error"]


def test_old_style_inputs_section_still_works():
    record = run_record("split", inputs={"files": ["a.csv"]})
    assert record["inputs"] == {"files": ["a.csv"]} and record["input_files"] == []


def test_versions_without_importing_numba_or_scipy():
    env = environment()
    assert set(env) == {"kappa", "python", "numpy", "scipy", "numba", "platform"}
    assert env["python"].count(".") == 2
    code = ("import sys; from kappa.io.records import environment; environment(); "
            "print(sorted(m for m in ('numba', 'scipy') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
