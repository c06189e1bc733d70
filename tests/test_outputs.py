"""What kappa writes and prints: terminal tables, column headers, run records, file names,
Parquet, and results in pandas/xarray."""

import json
import re
import sys

import numpy as np
import pytest
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.presentation.terminal import format_number, table_text

runner = CliRunner()

CONFIG = """\
material: {name: invented half-Heusler HH-4, atomic_mass: 80 u, atomic_volume: 18 angstrom**3,
           debye_temperature: 380 K, sound_velocity: 3200 m/s, gruneisen: 1.6}
scattering: {boundary: {grain_size: 1 um}, point_defect: {mass_variance: 0.02}}
temperature: {start: 300 K, stop: 900 K, points: 13}
"""
#: Names of output columns: letters, digits, _ and . only; the unit in brackets after one space.
HEADER = re.compile(r"^[A-Za-z0-9_.]+( \[[^\[\]=]*\])?$")


@pytest.fixture
def config(tmp_path):
    p = tmp_path / "hh4.yaml"
    p.write_text(CONFIG)
    return p


# --- terminal tables ------------------------------------------------------------------------


def test_no_row_is_dropped_silently():
    T = np.linspace(300.0, 900.0, 13)
    text = table_text(["T [K]", "kappa_L [W/(m K)]"], [[t, 2.0] for t in T], max_rows=12)
    assert "600" in text and "…" not in text  # 13 rows for 12 places: all shown
    T = np.linspace(300.0, 900.0, 31)
    text = table_text(["T [K]", "kappa_L [W/(m K)]"], [[t, 2.0] for t in T], max_rows=12,
                      source="out/kappa_L.csv")
    shown = [ln for ln in text.splitlines() if re.match(r"^\s*\d", ln)]
    assert len(shown) == 12
    assert "… 19 more rows (rows 7 to 25 of 31) …; all 31 rows in out/kappa_L.csv" in text
    assert shown[0].split()[0] == "300" and shown[-1].split()[0] == "900"


def test_numbers_and_temperatures_as_written():
    text = table_text(["T [K]", "x [1]"], [[373.15, 13171.234], [1000.0, 1.2e-7]])
    assert "373.15" in text and "373.1 " not in text and "13171" in text and "1.2e-7" in text
    assert format_number(0.0451234) == "0.04512"
    assert format_number(4787.3) == "4787"
    assert format_number(float("nan")) == "-"


def test_headers_in_brackets_are_not_eaten_by_markup():
    text = table_text(["mfp50 [nm]", "rate [1/s]"], [[1.0, 2.0]])
    assert "mfp50 [nm]" in text and "rate [1/s]" in text


def test_predict_prints_head_tail_and_the_file(config, tmp_path):
    config.write_text(CONFIG.replace("points: 13", "points: 40"))
    r = runner.invoke(app, ["predict", str(config), "-o", str(tmp_path / "o")])
    assert r.exit_code == 0, r.output
    assert "more rows" in r.output and "all 40 rows in" in r.output
    assert "kappa_L.csv" in r.output and "more columns" in r.output


# --- headers, records, names ----------------------------------------------------------------


def _headers(path):
    return path.read_text(encoding="utf-8").splitlines()[0].split(",")


def _keys(obj, found):
    if isinstance(obj, dict):
        for k, v in obj.items():
            found.append(k)
            _keys(v, found)
    elif isinstance(obj, list):
        for v in obj:
            _keys(v, found)
    return found


def test_every_header_is_name_and_unit(config, tmp_path):
    runs = {
        "predict": ["predict", str(config), "--compare",
                    "scattering.boundary.grain_size=1um,100nm"],
        "sweep": ["sweep", str(config), "--vary", "scattering.boundary.grain_size=10nm:1um:4",
                  "--vary", "scattering.point_defect.mass_variance=0,0.05", "--at", "300K"],
        "spectrum": ["spectrum", str(config), "--at", "300K"],
    }
    for name, args in runs.items():
        out = tmp_path / name
        r = runner.invoke(app, [*args, "-o", str(out)])
        assert r.exit_code == 0, (name, r.output)
        for csv in out.glob("*.csv"):
            for h in _headers(csv):
                assert HEADER.match(h) or h == "branch", (csv.name, h)
        keys = _keys(json.loads((out / "run.json").read_text()), [])
        bad = [k for k in keys if re.search(r"_(K|eV|s|nm|m)$|_per_", k)]
        assert not bad, (name, bad)
    assert _headers(tmp_path / "predict" / "compare.csv") == [
        "grain_size [nm]", "T [K]", "kappa_L [W/(m K)]"]
    assert _headers(tmp_path / "sweep" / "sweep.csv")[:2] == ["grain_size [nm]",
                                                             "mass_variance [1]"]
    spectrum = {p.name for p in (tmp_path / "spectrum").iterdir()}
    assert "kappa_by_mean_free_path.csv" in spectrum and "cumulative_mfp.csv" not in spectrum


def test_format_parquet_and_pdf(config, tmp_path):
    pq = pytest.importorskip("pyarrow.parquet")
    out = tmp_path / "p"
    r = runner.invoke(app, ["sweep", str(config), "--vary",
                            "scattering.boundary.grain_size=10nm:1um:5", "--at", "300K,600K",
                            "--format", "parquet,pdf", "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert {p.name for p in out.iterdir()} == {"sweep.parquet", "sweep.pdf", "run.json"}
    table = pq.read_table(out / "sweep.parquet")
    assert table.column_names == ["grain_size [nm]", "T [K]", "kappa_L [W/(m K)]",
                                  "kappa_L_ratio [1]"]
    assert table.schema.field("T [K]").metadata == {b"unit": b"K"}
    assert table.num_rows == 10
    assert (out / "sweep.pdf").read_bytes()[:5] == b"%PDF-"


def test_parquet_without_pyarrow_is_one_line(config, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "pyarrow", None)  # import pyarrow → ImportError
    out = tmp_path / "p"
    r = runner.invoke(app, ["sweep", str(config), "--vary",
                            "scattering.boundary.grain_size=10nm:1um:5", "--at", "300K",
                            "--format", "parquet", "-o", str(out)])
    assert r.exit_code == 2
    assert r.output.strip() == ("error: --format = parquet: needs pyarrow: pip install "
                                "'kappa[parquet]' (or pip install pyarrow); or use --format csv")
    assert not out.exists()


def test_unknown_format_and_style(config, tmp_path):
    r = runner.invoke(app, ["predict", str(config), "--format", "jpg", "-o", str(tmp_path / "a")])
    assert r.exit_code == 2 and "--format = jpg" in r.output
    r = runner.invoke(app, ["predict", str(config), "--style", "poster", "-o",
                            str(tmp_path / "b")])
    assert r.exit_code == 2 and "--style = poster: paper or talk" in r.output


def test_fast_writer_matches_the_plain_one(tmp_path):
    pytest.importorskip("pyarrow")
    from kappa.io import tables

    rng = np.random.default_rng(3)
    n = tables.ARROW_ROWS + 5
    cols = [("x [nm]", np.geomspace(1.0, 1e4, n)), ("T [K]", np.tile([300.0, 373.15], n)[:n]),
            ("k [W/(m K)]", rng.random(n) * 100), ("flag [1]", rng.random(n) > 0.5)]
    cols[2][1][7] = np.nan
    tables.write_table(tmp_path / "fast.csv", cols)
    slow = tables.format_table([(h, v[:tables.ARROW_ROWS - 1]) for h, v in cols])
    fast = (tmp_path / "fast.csv").read_text().splitlines()
    assert fast[0] == slow.splitlines()[0]
    for a, b in zip(fast[1:200], slow.splitlines()[1:200], strict=True):
        fa = [float(c) if c else np.nan for c in a.split(",")]
        fb = [float(c) if c else np.nan for c in b.split(",")]
        np.testing.assert_allclose(fa, fb, rtol=1e-8)  # both 8 significant digits
    assert fast[8].split(",")[2] == ""  # NaN is an empty cell


# --- Python export --------------------------------------------------------------------------


def _model():
    import yaml

    from kappa.io.config import config_from_dict

    return config_from_dict(yaml.safe_load(CONFIG)).model


def test_to_pandas_and_to_xarray():
    pd = pytest.importorskip("pandas")
    import kappa

    model = _model()
    p = kappa.predict(model, [300.0, 600.0])
    df = p.to_pandas()
    assert isinstance(df, pd.DataFrame)
    assert list(df.columns) == [h for h, _ in p.columns()]
    assert df.attrs["units"]["kappa_L [W/(m K)]"] == "W/(m K)"
    np.testing.assert_array_equal(df["kappa_L [W/(m K)]"].to_numpy(), p.kappa_L)
    grid = kappa.sweep(model, {"scattering.boundary.grain_size": [1e-8, 1e-7, 1e-6]},
                       [300.0, 600.0])
    assert len(grid.to_pandas()) == 6
    xr = pytest.importorskip("xarray")
    ds = grid.to_xarray()
    assert isinstance(ds, xr.Dataset)
    assert ds["kappa_L"].dims == ("grain_size", "T")
    assert ds["grain_size"].attrs["units"] == "nm"
    np.testing.assert_allclose(ds["grain_size"].values, [10.0, 100.0, 1000.0])
    np.testing.assert_array_equal(ds["kappa_L"].values, grid.kappa_L)
    sp = kappa.spectrum(model, [300.0])
    assert "kappa_cumulative [W/(m K)]" in sp.to_pandas("mean_free_path").columns


def test_export_without_pandas_says_how_to_install(monkeypatch):
    import kappa

    p = kappa.predict(_model(), [300.0])
    monkeypatch.setitem(sys.modules, "pandas", None)
    with pytest.raises(ImportError, match=r"pip install 'kappa\[pandas\]'"):
        p.to_pandas()
