"""Reading YAML safely: encodings, binary files, duplicate keys, aliases, depth, size.

Each bad file must stop at once with one ConfigError naming the file (through `kappa fit
--series`: exit status 2, one `error:` line, nothing written, the file unchanged).
"""

import shutil
import time
import tracemalloc
from pathlib import Path

import pytest
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.errors import ConfigError, KappaWarning
from kappa.io.yamlfile import MAX_BYTES, load_yaml, load_yaml_text

DEMO = Path(__file__).resolve().parents[1] / "examples" / "fit-demo"


def write(tmp_path, data: bytes, name="c.yaml"):
    p = tmp_path / name
    p.write_bytes(data)
    return p


def refused(path, *fragments):
    with pytest.raises(ConfigError) as info:
        load_yaml(path)
    message = str(info.value)
    assert message.startswith(f"{path}: ") and "\n" not in message
    for f in fragments:
        assert f in message, message
    return message


# "billion laughs": nine levels of nine aliases expand to 9^9 (about 4e8) values
BOMB = ("a: &a [lol, lol, lol, lol, lol, lol, lol, lol, lol]\n" + "".join(
    f"{chr(98 + i)}: &{chr(98 + i)} [" + ", ".join([f"*{chr(97 + i)}"] * 9) + "]\n"
    for i in range(8))).encode()
DEEP_FLOW = b"a: " + b"[" * 20_000 + b"]" * 20_000 + b"\n"
DEEP_BLOCK = b"a:\n" + b"- " * 20_000 + b"x\n"


def test_utf8_with_and_without_bom(tmp_path):
    text = "grain: 5 \u00b5m  # \u00b0C\n".encode()
    assert load_yaml(write(tmp_path, text)) == {"grain": "5 \u00b5m"}
    assert load_yaml(write(tmp_path, b"\xef\xbb\xbf" + text, "bom.yaml")) == {"grain": "5 \u00b5m"}


def test_utf16_with_bom(tmp_path):
    p = write(tmp_path, "grain: 5 \u00b5m\n".encode("utf-16"))
    assert load_yaml(p) == {"grain": "5 \u00b5m"}


def test_latin1_is_read_with_one_warning(tmp_path):
    p = write(tmp_path, "grain: 5 \u00b5m\nt: 20 \u00b0C\n".encode("latin-1"))
    with pytest.warns(KappaWarning, match="not UTF-8: read as Windows-1252/Latin-1") as record:
        assert load_yaml(p) == {"grain": "5 \u00b5m", "t": "20 \u00b0C"}
    assert len(record) == 1


@pytest.mark.parametrize("data", [bytes(range(256)), b"\x89PNG\r\n\x1a\n" + bytes(40),
                                  b"a: 1\x07\n", b"a: 1\n\x00\x00"])
def test_binary_file_is_one_line_error(tmp_path, data):
    refused(write(tmp_path, data), "not a text file")


def test_duplicate_keys_name_key_and_both_lines(tmp_path):
    p = write(tmp_path, b"material:\n  gruneisen: 1\nscattering: {}\nmaterial:\n  gruneisen: 2\n")
    refused(p, "key 'material' appears twice (lines 1 and 4)")
    refused(write(tmp_path, b"a: {x: 1, x: 2}\n", "flow.yaml"), "key 'x' appears twice (line 1)")


def test_merge_keys_may_be_overridden(tmp_path):
    p = write(tmp_path, b"base: &b {x: 1, y: 2}\nd:\n  <<: *b\n  x: 3\n")
    assert load_yaml(p)["d"] == {"x": 3, "y": 2}


def test_alias_bomb_fails_fast_with_little_memory(tmp_path):
    p = write(tmp_path, BOMB)
    tracemalloc.start()
    t0 = time.perf_counter()
    refused(p, "aliases (*name) expand to more than")
    elapsed = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert elapsed < 1.0 and peak < 20e6  # generous bounds: it stops after a few thousand nodes


def test_recursive_alias_is_refused(tmp_path):
    refused(write(tmp_path, b"a: &x [1, *x]\n"), "aliases may not be recursive")


@pytest.mark.parametrize("data", [DEEP_FLOW, DEEP_BLOCK, b"a: " + b"{b: " * 20_000 + b"1"
                                  + b"}" * 20_000 + b"\n"])
def test_deep_nesting_fails_fast(tmp_path, data):
    t0 = time.perf_counter()
    refused(write(tmp_path, data), "nested more than 100 levels deep")
    assert time.perf_counter() - t0 < 1.0


def test_size_limit(tmp_path):
    refused(write(tmp_path, b"a: 1\n" + b"#" * MAX_BYTES), "larger than 1 MB")


@pytest.mark.parametrize("data, fragment", [
    (b"a: !!python/object/apply:os.system [ls]\n", "could not determine a constructor"),
    (b"a: !mine 3\n", "could not determine a constructor for the tag '!mine'"),
    (b"a: [1, 2\nb: 3\n", "not valid YAML at line 2"),
    (b"a: " + b"9" * 5000 + b"\n", "too many digits"),
])
def test_other_bad_documents(tmp_path, data, fragment):
    refused(write(tmp_path, data), fragment)


def test_missing_file_and_folder(tmp_path):
    refused(tmp_path / "nope.yaml", "file not found (the config to read)")
    with pytest.raises(ConfigError, match="is a folder"):
        load_yaml(tmp_path)


def test_text_variant_names_its_source():
    assert load_yaml_text("[1, 2]", source="--set x") == [1, 2]
    with pytest.raises(ConfigError, match=r"^--set x: key 'a' appears twice"):
        load_yaml_text("{a: 1, a: 2}", source="--set x")


# --- through the command line: kappa fit --series ------------------------------------------

BAD_SERIES = {
    "binary": bytes(range(256)),
    "duplicate": b"config: base.yaml\nshared: [material.gruneisen]\nconfig: other.yaml\n",
    "bomb": BOMB,
    "deep": DEEP_FLOW,
    "recursive": b"a: &x [1, *x]\n",
}


@pytest.mark.parametrize("kind", list(BAD_SERIES))
def test_series_file_errors_through_the_command_line(tmp_path, kind):
    for name in ("base.yaml", "FH-11_coarse.csv"):
        shutil.copy(DEMO / name, tmp_path / name)
    series = write(tmp_path, BAD_SERIES[kind], "series.yaml")
    before = sorted(p.name for p in tmp_path.iterdir())
    out = tmp_path / "out"
    result = CliRunner().invoke(app, ["fit", "--series", str(series), "-o", str(out)])
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"error: {series}: "), result.stderr
    assert "Traceback" not in result.output
    assert sorted(p.name for p in tmp_path.iterdir()) == before
    assert series.read_bytes() == BAD_SERIES[kind]


def test_latin1_series_file_warns_once_and_runs(tmp_path):
    for name in ("base.yaml", "FH-11_coarse.csv"):
        shutil.copy(DEMO / name, tmp_path / name)
    text = ("# Grüneisen fit of one sample (°)\nconfig: base.yaml\n"
            "shared: [material.gruneisen]\nsamples:\n  - {name: A, data: FH-11_coarse.csv}\n")
    series = write(tmp_path, text.encode("latin-1"), "series.yaml")
    out = tmp_path / "out"
    result = CliRunner().invoke(app, ["fit", "--series", str(series), "-o", str(out),
                                      "--starts", "1"])
    assert result.exit_code == 0, result.output
    warnings = [ln for ln in result.stderr.splitlines() if "not UTF-8" in ln]
    assert len(warnings) == 1 and warnings[0].startswith("warning: ")
