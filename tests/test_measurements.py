"""Reading, validating and merging measurement tables."""

import numpy as np
import pytest

from kappa.errors import DataError, KappaWarning
from kappa.io.measurements import read_measurements
from kappa.workflows.measurements import measurements_from_arrays


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_flash_trio_unit_arithmetic(tmp_path):
    # source: tests/reference_values.py unit reminder: mm^2/s x g/cm^3 x J/(g K) = W/(m K), no extra factor;
    # 1.5 * 6.0 * 0.2 = 1.8 W/(m K) (hand arithmetic)
    p = write(tmp_path, "f.csv", "T [K],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n"
              "300,1.5,6.0,0.2,1e5\n400,1.5,6.0,0.2,1e5\n500,1.5,6.0,0.2,1e5\n")
    m = read_measurements(p)
    np.testing.assert_allclose(m.kappa, 1.8, rtol=1e-14)
    assert m.heat_capacity_source.startswith("measured")


def test_conductivity_units_agree(tmp_path):
    # 1000 S/cm = 1e5 S/m = 1 / (1 mOhm cm) = 1 / (10 uOhm m) (unit definitions)
    a = write(tmp_path, "a.csv", "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]\n"
              "300,2,1000,-150\n400,2,1000,-160\n500,2,1000,-170\n")
    b = write(tmp_path, "b.csv", "T [degC],kappa [W/(m K)],resistivity [mOhm cm],S [V/K]\n"
              "26.85,2,1,-150e-6\n126.85,2,1,-160e-6\n226.85,2,1,-170e-6\n")
    c = write(tmp_path, "c.csv", "T [K],kappa [mW/(cm K)],resistivity [uOhm m],S [mV/K]\n"
              "300,20,10,-0.150\n400,20,10,-0.160\n500,20,10,-0.170\n")
    ma, mb, mc = (read_measurements(p) for p in (a, b, c))
    for m in (ma, mb, mc):
        np.testing.assert_allclose(m.temperature, [300, 400, 500], rtol=1e-12)
        np.testing.assert_allclose(m.electrical_conductivity, 1e5, rtol=1e-12)
        np.testing.assert_allclose(m.seebeck, [-150e-6, -160e-6, -170e-6], rtol=1e-12)
        np.testing.assert_allclose(m.kappa, 2.0, rtol=1e-12)


def test_merge_two_files_interpolates_and_drops_outside(tmp_path):
    thermal = write(tmp_path, "thermal.csv", "T [K],kappa [W/(m K)]\n"
                    "250,3.0\n300,2.8\n400,2.4\n500,2.0\n600,1.8\n")
    elec = write(tmp_path, "elec.csv", "T [K],sigma [S/m],S [uV/K]\n"
                 "280,1e5,100\n380,2e5,200\n480,3e5,300\n580,4e5,400\n")
    m = read_measurements([thermal, elec])
    np.testing.assert_array_equal(m.temperature, [300, 400, 500])
    np.testing.assert_allclose(m.electrical_conductivity, [1.2e5, 2.2e5, 3.2e5], rtol=1e-12)  # linear in T
    np.testing.assert_allclose(m.seebeck * 1e6, [120, 220, 320], rtol=1e-12)
    assert len(m.dropped) == 2
    assert "T = 250 K" in m.dropped[0] and "not extrapolated" in m.dropped[0]
    assert "T = 600 K" in m.dropped[1]
    assert any("interpolated" in n for n in m.notes)


def test_blank_cells_are_another_grid(tmp_path):
    p = write(tmp_path, "d.csv", "T [K],kappa [W/(m K)],sigma [S/m],S [uV/K]\n"
              "300,2.0,1e5,\n350,1.9,,150\n400,1.8,2e5,\n450,1.7,,250\n500,1.6,3e5,\n")
    m = read_measurements(p)
    np.testing.assert_array_equal(m.temperature, [350, 400, 450])  # S spans 350-450 K only
    np.testing.assert_allclose(m.electrical_conductivity, [1.5e5, 2e5, 2.5e5])
    np.testing.assert_allclose(m.seebeck * 1e6, [150, 200, 250])


def test_density_given_once(tmp_path):
    p = write(tmp_path, "f.csv", "T [K],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n"
              "300,1.0,5.0,0.2,1e5\n400,1.0,,0.2,1e5\n500,1.0,,0.2,1e5\n")
    m = read_measurements(p)
    np.testing.assert_allclose(m.kappa, 1.0)
    assert any("one temperature" in n for n in m.notes)


def test_dulong_petit_from_composition(tmp_path):
    p = write(tmp_path, "f.csv", "T [K],D [mm^2/s],rho [g/cm^3],sigma [S/m]\n"
              "300,1.0,8.16,1e5\n400,1.0,8.16,1e5\n500,1.0,8.16,1e5\n")
    m = read_measurements(p, composition="PbTe")
    # 3R / M(PbTe) = 24.943/167.40 = 0.14900 J/(g K) (hand arithmetic) -> kappa = 1.2159
    np.testing.assert_allclose(m.kappa, 1.0 * 8.16 * 0.14900, rtol=2e-4)
    assert "Dulong-Petit" in m.heat_capacity_source


def test_composition_replaces_cp_with_warning(tmp_path):
    p = write(tmp_path, "f.csv", "T [K],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n"
              "300,1.0,8.16,0.15,1e5\n400,1.0,8.16,0.15,1e5\n500,1.0,8.16,0.15,1e5\n")
    with pytest.warns(KappaWarning, match="ignored: Dulong-Petit"):
        m = read_measurements(p, composition="PbTe")
    assert "Dulong-Petit" in m.heat_capacity_source


NAN_FILE = ("T [K],kappa [W/(m K)],sigma [S/m],S [uV/K]\n"
            "300,2.0,1e5,100\n350,nan,1e5,110\n400,1.8,1e5,120\n450,1.7,1e5,130\n")


def test_nan_raise_names_row_and_column(tmp_path):
    p = write(tmp_path, "n.csv", NAN_FILE)
    with pytest.raises(DataError) as info:
        read_measurements(p)
    msg = str(info.value)
    assert msg.startswith("n.csv, row 3 = NaN in column 'kappa [W/(m K)]': ")
    assert "--nan omit" in msg


def test_nan_omit_drops_and_lists(tmp_path):
    p = write(tmp_path, "n.csv", NAN_FILE)
    m = read_measurements(p, nan="omit")
    np.testing.assert_array_equal(m.temperature, [300, 400, 450])
    assert m.dropped == ("n.csv, row 3 (T = 350 K): NaN in column 'kappa [W/(m K)]' "
                         "(--nan omit)",)


def test_arrays_api_nan_policy():
    T = [300.0, 400.0, 500.0, 600.0]
    with pytest.raises(DataError, match="arrays, index 1"):
        measurements_from_arrays(T, kappa=[1, np.nan, 1, 1], electrical_conductivity=[1e5] * 4)
    m = measurements_from_arrays(T, kappa=[1, np.nan, 1, 1], electrical_conductivity=[1e5] * 4, nan="omit")
    np.testing.assert_array_equal(m.temperature, [300, 500, 600])


BAD = [
    ("T [K],sigma [S/m],S [uV/K]\n300,1,1\n400,1,1\n500,1,1\n",
     "a.csv = no thermal conductivity: needs a column 'kappa [W/(m K)]'"),
    ("T [K],kappa [W/(m K)],S [uV/K]\n300,1,1\n400,1,1\n500,1,1\n",
     "a.csv = no electrical conductivity: needs a column 'sigma [S/cm]'"),
    ("kappa [W/(m K)],sigma [S/m]\n1,1\n1,1\n1,1\n", "a.csv = no column 'T [...]'"),
    ("T [K],kappa,sigma [S/m]\n300,1,1\n400,1,1\n500,1,1\n",
     "a.csv, header = kappa: every column header must be 'name [unit]' or 'name (unit)'; accepted: T [K], kappa"),
    ("T [K],kappa [W/(m K)],sigma [K]\n300,1,1\n400,1,1\n500,1,1\n",
     "a.csv, column 'sigma [K]' = K: wrong dimension for the electrical conductivity: use e.g. "
     "S/cm, S/m"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,1,-5\n500,1,1\n",
     "a.csv, column 'sigma [S/m]', row 3 = -5: the electrical conductivity must be >= 0"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,-1,1\n500,1,1\n",
     "a.csv, column 'kappa [W/(m K)]', row 3 = -1: the total thermal conductivity must be > 0"),
    ("T [K],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n300,1,1,1,1\n400,-1,1,1,1\n"
     "500,1,1,1,1\n", "a.csv, column 'D [mm^2/s]', row 3 = -1: the thermal diffusivity must be > 0"),
    ("T [K],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n300,1,1,1,1\n400,1,1,0,1\n"
     "500,1,1,1,1\n", "a.csv, column 'cp [J/(g K)]', row 3 = 0: the specific heat capacity must be > 0"),
    ("T [K],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n300,1,1,1,1\n400,1,-2,1,1\n"
     "500,1,1,1,1\n", "a.csv, column 'rho [g/cm^3]', row 3 = -2: the density must be > 0"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n500,1,1\n400,1,1\n",
     "a.csv, column 'T [K]', row 4 = 400: is not above the temperature of row 3"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,1,1\n400,1,1\n",
     "a.csv, column 'T [K]', row 4 = 400: duplicates the temperature of row 3"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,1,1\n",
     "a.csv = 2 rows with all quantities: needs at least 3 rows"),
    ("T [K],kappa [W/(m K)],sigma [S/m],resistivity [Ohm m]\n300,1,1,1\n400,1,1,1\n500,1,1,1\n",
     "give one of 'sigma' or 'resistivity', not both"),
    ("T [K],kappa [W/(m K)],D [mm^2/s],rho [g/cm^3],cp [J/(g K)],sigma [S/m]\n300,1,1,1,1,1\n"
     "400,1,1,1,1,1\n500,1,1,1,1,1\n", "give either the total 'kappa' or the flash trio"),
    ("T [K],kappa [W/(m K)],sigma [S/m],rho [K]\n300,1,1,1\n400,1,1,1\n500,1,1,1\n",
     "with a resistivity unit (e.g. mOhm cm) the electrical resistivity"),
    ("T [K],kappa [W/(m K)],rho [mOhm cm],rho_e [mOhm cm]\n300,1,1,1\n400,1,1,1\n500,1,1,1\n",
     "gives the same quantity as column"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,1,1\n0,1,1\n",
     "temperatures must be > 0 K"),
    ("T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,inf,1\n500,1,1\n", "must be finite"),
]


@pytest.mark.parametrize("text, message", BAD)
def test_bad_input_messages(tmp_path, text, message):
    p = write(tmp_path, "a.csv", text)
    with pytest.raises(DataError) as info:
        read_measurements(p)
    assert message in str(info.value)


def test_quantity_in_two_files(tmp_path):
    a = write(tmp_path, "a.csv", "T [K],kappa [W/(m K)],sigma [S/m]\n300,1,1\n400,1,1\n500,1,1\n")
    b = write(tmp_path, "b.csv", "T [K],sigma [S/m]\n300,1\n400,1\n500,1\n")
    with pytest.raises(DataError, match="already given in a.csv"):
        read_measurements([a, b])


def test_sign_change_of_S_warns(tmp_path):
    p = write(tmp_path, "a.csv", "T [K],kappa [W/(m K)],sigma [S/m],S [uV/K]\n"
              "300,1,1,20\n400,1,1,-5\n500,1,1,-30\n")
    with pytest.warns(KappaWarning, match="changes sign"):
        read_measurements(p)


def test_bad_nan_policy():
    with pytest.raises(DataError, match="--nan = drop: raise or omit"):
        measurements_from_arrays([1, 2, 3], kappa=[1, 1, 1], electrical_conductivity=[1, 1, 1], nan="drop")


def test_alternative_column_names(tmp_path):
    # 'rho' with a resistivity unit is the electrical resistivity; common spellings are accepted
    p = tmp_path / "alt.csv"
    p.write_text("temperature [K],kappa_total [W/(m K)],rho [mOhm cm],Seebeck [uV/K]\n"
                 "300,2.0,1.0,150\n400,1.8,1.2,170\n500,1.6,1.4,190\n", encoding="utf-8")
    m = read_measurements([p])
    assert m.temperature.tolist() == [300.0, 400.0, 500.0]
    assert m.kappa.tolist() == [2.0, 1.8, 1.6]
    # 1 mOhm cm = 1e-5 Ohm m → sigma = 1e5 S/m (unit arithmetic, no source needed)
    assert m.electrical_conductivity[0] == pytest.approx(1e5)
    assert m.seebeck[0] == pytest.approx(150e-6)
