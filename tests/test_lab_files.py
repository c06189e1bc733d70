"""Lab files as they come: header styles, separators, decimal commas, encodings, spreadsheets,
values given once, and the explicit extrapolation allowance.

Every file is written by the test (invented numbers of an invented half-Heusler series); the
expected SI values are worked out here by hand (unit factors: 1 mm^2/s = 1e-6 m^2/s,
1 g/cm^3 = 1000 kg/m^3, 1 J/(g K) = 1000 J/(kg K), 1 S/cm = 100 S/m, 0 °C = 273.15 K —
SI definitions, common practice, no source).
"""

import json

import numpy as np
import pytest
from typer.testing import CliRunner

from kappa.errors import DataError
from kappa.io.measurements import read_measurements
from kappa.io.tables import parse_header, read_table

runner = CliRunner()

#: Invented flash data of sample "HH-4" at °C: T, D [mm^2/s], cp [J/(g K)]
FLASH_C = [(25, 2.10, 0.250), (100, 1.90, 0.260), (200, 1.70, 0.270), (300, 1.55, 0.280),
           (400, 1.45, 0.290)]
#: Invented electrical data at K: T, sigma [S/cm], S [uV/K]
ELECTRICAL = [(303.15, 900, -150), (373.15, 800, -170), (473.15, 700, -190),
              (573.15, 600, -210), (673.15, 520, -225)]
RHO = 3.08  # g/cm^3


def _flash_semicolon(path, encoding="latin-1", note=True):
    lines = ["# HH-4 flash, invented demo data"]
    if note:
        lines.append(f"# rho = {RHO} g/cm^3".replace(".", ","))  # a lab's note, decimal comma
    lines.append("Temperature (°C);D (mm²/s);Cp (J/gK)")
    for t, d, cp in FLASH_C:
        lines.append(f"{t};{d:.2f};{cp:.3f}".replace(".", ","))
    path.write_bytes(("\r\n".join(lines) + "\r\n").encode(encoding))
    return path


def _electrical_tab(path, bom=True):
    text = "T [K]\tsigma (S/cm)\tSeebeck (µV/K)\n" + "".join(
        f"{t}\t{s}\t{S}\n" for t, s, S in ELECTRICAL)
    path.write_bytes(("\ufeff" if bom else "").encode() + text.encode("utf-8"))
    return path


def _expected_kappa(rows):
    return np.array([d * 1e-6 * RHO * 1e3 * cp * 1e3 for _, d, cp in rows])


@pytest.mark.parametrize("text, name, unit", [
    ("T [K]", "T", "K"), ("Temperature (°C)", "Temperature", "°C"),
    ("kappa (W/mK)", "kappa", "W/mK"), ("kappa (W/(m K))", "kappa", "W/(m K)"),
    ("sigma [S/cm]", "sigma", "S/cm"), ("Seebeck coefficient (µV/K)", "Seebeck coefficient",
                                        "µV/K"),
])
def test_header_styles(text, name, unit):
    assert parse_header(text, "f.csv") == (name, unit)


def test_header_without_unit_is_an_error():
    with pytest.raises(DataError, match="'name \\[unit\\]' or 'name \\(unit\\)'"):
        parse_header("kappa", "f.csv")


def test_semicolon_decimal_comma_latin1_and_a_note_with_the_density(tmp_path):
    flash = _flash_semicolon(tmp_path / "HH-4_flash.csv")
    elec = _electrical_tab(tmp_path / "HH-4_electrical.txt")
    m = read_measurements([flash, elec], extrapolate="5K")
    # 25 °C = 298.15 K: the electrical data start at 303.15 K, 5 K later (allowed)
    assert m.temperature == pytest.approx([t + 273.15 for t, _, _ in FLASH_C[:4]] + [673.15])
    assert m.kappa == pytest.approx(_expected_kappa(FLASH_C), rel=1e-12)
    assert m.density == pytest.approx(np.full(5, RHO * 1e3))
    # linear extrapolation from the first two electrical points, by hand
    slope = (800 - 900) / (373.15 - 303.15) * 100  # S/m per K
    assert m.electrical_conductivity[0] == pytest.approx(900 * 100 + slope * (298.15 - 303.15))
    assert m.seebeck[1] == pytest.approx(-170e-6)
    notes = " ".join(m.notes)
    assert "T = 298.15 K: sigma extrapolated linearly from 303.15 K" in notes
    assert "line 2 'rho = 3,08 g/cm^3'" in notes


def test_without_allowance_the_first_row_is_dropped_and_listed(tmp_path):
    flash = _flash_semicolon(tmp_path / "f.csv")
    elec = _electrical_tab(tmp_path / "e.tsv", bom=False)
    m = read_measurements([flash, elec])
    assert m.temperature[0] == pytest.approx(373.15)
    assert any("T = 298.15 K: outside the measured range of sigma" in d and "--extrapolate" in d
               for d in m.dropped)


def test_allowance_too_small_drops_the_row(tmp_path):
    flash = _flash_semicolon(tmp_path / "f.csv")
    elec = _electrical_tab(tmp_path / "e.txt")
    m = read_measurements([flash, elec], extrapolate=2.0)
    assert m.temperature[0] == pytest.approx(373.15)
    assert any("beyond the allowance of 2 K" in d for d in m.dropped)


def test_utf8_file_with_decimal_comma_and_separator_given(tmp_path):
    p = tmp_path / "a.csv"
    p.write_text("T [K];kappa [W/(m K)];sigma [S/cm]\n300;1,5;100\n400;1,4;90\n500;1,3;80\n",
                 encoding="utf-8")
    t = read_table(p, separator=";", decimal=",")
    assert t.get("kappa", "W/(m K)") == pytest.approx([1.5, 1.4, 1.3])
    assert list(t.rows) == [2, 3, 4]


def test_separators_and_decimal_marks_detected(tmp_path):
    for sep, dec in ((",", "."), (";", "."), ("\t", "."), (";", ","), ("\t", ",")):
        p = tmp_path / "t.txt"
        rows = [("300", "1.25"), ("400", "1.5")]
        lines = [sep.join(["T [K]", "kappa [W/(m K)]"])]
        lines += [sep.join((a, b.replace(".", dec))) for a, b in rows]
        p.write_text("\n".join(lines) + "\n", encoding="utf-8")
        assert read_table(p).get("kappa", "W/(m K)") == pytest.approx([1.25, 1.5]), (sep, dec)


def _xlsx(path, sheets):
    openpyxl = pytest.importorskip("openpyxl")
    book = openpyxl.Workbook()
    book.remove(book.active)
    for name, rows in sheets.items():
        ws = book.create_sheet(name)
        for row in rows:
            ws.append(list(row))
    book.save(path)
    return path


def test_spreadsheet_first_and_named_sheet(tmp_path):
    flash_rows = [("# HH-4 flash",), ("# density: 3.08 g/cm3",),
                  ("T (°C)", "D (mm2/s)", "cp (J/(g K))"), *FLASH_C]
    elec_rows = [("T [K]", "sigma [S/cm]", "S [uV/K]"),
                 *[(t, str(s), f"{S},0") for t, s, S in ELECTRICAL]]  # text cells, comma
    book = _xlsx(tmp_path / "HH-4.xlsx", {"flash": flash_rows, "electrical": elec_rows})
    m = read_measurements([book, f"{book}:electrical"], extrapolate="5 K")
    assert m.kappa == pytest.approx(_expected_kappa(FLASH_C), rel=1e-12)
    assert m.seebeck[-1] == pytest.approx(-225e-6)
    t = read_table(book, sheet="electrical")
    assert t.source == "HH-4.xlsx, sheet 'electrical'" and list(t.rows) == [2, 3, 4, 5, 6]
    other = _xlsx(tmp_path / "elec.xlsx", {"notes": [("# nothing here",)],
                                           "electrical": elec_rows})
    m2 = read_measurements([f"{book}:flash", other], sheet="electrical", extrapolate=5.0)
    assert m2.kappa == pytest.approx(m.kappa)


def test_split_command_reads_lab_files_and_reports(tmp_path):
    flash = _flash_semicolon(tmp_path / "flash.csv", note=False)
    elec = _electrical_tab(tmp_path / "elec.txt")
    out = tmp_path / "out"
    r = runner.invoke(_app(), ["split", str(flash), str(elec), "--density", "3.08g/cm^3",
                               "--extrapolate", "5K", "--lorenz", "degenerate", "--draws",
                               "200", "-o", str(out)])
    assert r.exit_code == 0, r.output
    assert "298.15" in r.output and "extrapolated linearly" in r.output
    t = read_table(out / "split.csv")
    assert t.get("T", "K")[0] == pytest.approx(298.15)
    record = json.loads((out / "run.json").read_text())
    assert record["options"]["reading"]["density"] == "3.08g/cm^3"


def _app():
    from kappa.cli.main import app

    return app


@pytest.mark.parametrize("case, message", [
    ("no_temperature", "HH.xlsx = no column 'T [...]'"),
    ("no_separator", "cannot tell the separator"),
    ("mixed_decimals", "column 'kappa [W/(m K)]' = mixed decimal marks"),
    ("wrong_dimension", "--extrapolate = 5kg: wrong dimension: needs a unit of temperature"),
    ("bad_sheet", "sheet 'nope': no such sheet; the file has: flash"),
])
def test_bad_lab_files_exit_2_with_one_line_and_write_nothing(tmp_path, case, message):
    good = tmp_path / "good.csv"
    good.write_text("T [K],kappa [W/(m K)],sigma [S/cm]\n300,1,100\n400,1,90\n500,1,80\n")
    extra: list[str] = []
    if case == "no_temperature":
        files = [str(_xlsx(tmp_path / "HH.xlsx", {"flash": [("kappa [W/(m K)]", "sigma [S/cm]"),
                                                             (1, 100), (1, 90), (1, 80)]}))]
    elif case == "no_separator":
        p = tmp_path / "bad.csv"
        p.write_text("T [K] kappa [W/(m K)]\n300 1\n400 1\n")
        files = [str(p)]
    elif case == "mixed_decimals":
        p = tmp_path / "bad.csv"
        p.write_text("T [K];kappa [W/(m K)];sigma [S/cm]\n300;1,5;100\n400;1.4;90\n500;1,3;80\n")
        files = [str(p)]
    elif case == "wrong_dimension":
        files, extra = [str(good)], ["--extrapolate", "5kg"]
    else:
        book = _xlsx(tmp_path / "b.xlsx", {"flash": [("T [K]", "kappa [W/(m K)]"), (300, 1)]})
        files = [f"{book}:nope"]
    out = tmp_path / "out"
    r = runner.invoke(_app(), ["split", *files, *extra, "--lorenz", "degenerate", "-o",
                               str(out)])
    assert r.exit_code == 2, r.output
    lines = [ln for ln in r.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: "), r.output
    assert message in lines[0]
    assert not out.exists()


def test_value_given_twice_is_an_error(tmp_path):
    flash = _flash_semicolon(tmp_path / "f.csv")  # has the note rho = 3,08 g/cm^3
    elec = _electrical_tab(tmp_path / "e.txt")
    from kappa.io.measurements import parse_constants

    with pytest.raises(DataError, match="--density = rho: already given in f.csv, line 2"):
        read_measurements([flash, elec], constants=parse_constants(density="3 g/cm^3"))


def test_free_text_notes_are_ignored(tmp_path):
    p = tmp_path / "a.csv"
    p.write_text("# density: measured by Archimedes, see sheet\n# operator = Ada\n"
                 "T [K],kappa [W/(m K)],sigma [S/cm]\n300,1,100\n400,1,90\n500,1,80\n")
    m = read_measurements(p)
    assert m.kappa == pytest.approx([1, 1, 1])


def test_several_notes_in_one_comment_line(tmp_path):
    # a sample-sheet line: notes separated by ';' or ',' before a name; a decimal comma stays
    flash = tmp_path / "f.txt"
    flash.write_text("# HH-7, operator Ada; density = 3,08 g/cm^3, mass = 1.2 g\n"
                     "T (K)\tD (mm2/s)\tcp (J/gK)\tsigma (S/cm)\n300\t2,1\t0,25\t900\n"
                     "400\t1,9\t0,26\t800\n500\t1,7\t0,27\t700\n", encoding="utf-8")
    m = read_measurements(flash)
    assert m.density == pytest.approx(np.full(3, RHO * 1e3))
    assert m.kappa[0] == pytest.approx(2.1e-6 * RHO * 1e3 * 0.25e3, rel=1e-12)
    assert any("line 1 'density = 3,08 g/cm^3'" in n for n in m.notes)


@pytest.mark.parametrize("header, quantity", [
    ("Temp.", "T"), ("Temperature", "T"), ("λ", "kappa"), ("Thermal conductivity", "kappa"),
    ("Cp", "cp"), ("Seebeck coefficient", "S"), ("Electrical resistivity", "resistivity"),
])
def test_column_names_labs_write(header, quantity):
    # names as lab instruments and sample sheets write them (common practice, no source)
    from kappa.io.measurements import canonical_name

    assert canonical_name(header) == quantity


def test_mutated_lab_files_end_in_the_error_family(tmp_path):
    # seeded fuzz: random edits of lab files (separators, decimal marks, quotes, units, NaN,
    # encodings) are read or refused with a KappaError naming the input, never another error
    import random
    import warnings

    from kappa.errors import KappaError, KappaWarning

    bases = [
        "# density = 3,08 g/cm^3; cp = 0.25 J/(g K)\nTemperature (°C);D (mm²/s);sigma (S/cm);"
        "S (µV/K)\n25;2,10;900;-150\n100;1,90;800;-170\n200;1,70;700;-190\n300;1,55;600;-210\n",
        "T [K],kappa [W/(m K)],sigma [S/m],S [uV/K]\n300,1.5,1e5,150\n400,1.4,9e4,170\n"
        "500,1.3,8e4,190\n600,1.2,7e4,200\n",
        "T (K)\tkappa (W/mK)\tResistivity (mOhm cm)\tSeebeck (uV/K)\n300\t1,5\t1,0\t150\n"
        "400\t1,4\t1,1\t170\n500\t1,3\t1,2\t190\n",
    ]
    pieces = [*";,\t\n.-+eE#[]()°µ0123456789 x\"'=:/\r", "nan", "inf", "1e999", "K", "W/mK"]
    rng = random.Random(7)
    for i in range(400):
        text = list(rng.choice(bases))
        for _ in range(rng.randint(1, 6)):
            pos = rng.randrange(len(text) + 1)
            if rng.random() < 0.4 and text:
                del text[min(pos, len(text) - 1)]
            else:
                text.insert(pos, rng.choice(pieces))
        path = tmp_path / f"f{i % 5}.csv"
        path.write_bytes("".join(text).encode(rng.choice(["utf-8", "latin-1"]),
                                               errors="replace"))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", KappaWarning)
            try:
                read_measurements(path, nan=rng.choice(["raise", "omit"]),
                                  extrapolate=rng.choice([0, "5K"]))
            except KappaError:
                pass


def test_a_stray_quote_does_not_join_lines(tmp_path):
    # a lone '"' in one cell (a typing slip) stays in its line; the rows are read as written
    p = tmp_path / "q.csv"
    p.write_text('T [K],kappa [W/(m K)],sigma [S/m],S [uV/K]\n300,1.5,1e5,150\n'
                 '400,1.4,9e4,"170\n500,1.3,8e4,190\n600,1.2,7e4,200\n', encoding="utf-8")
    m = read_measurements(p)
    assert m.temperature == pytest.approx([300, 400, 500, 600])
    assert m.seebeck == pytest.approx([150e-6, 170e-6, 190e-6, 200e-6])
