"""Config loading: units, derived values, overrides, and every bad-input class."""

import math
import re

import numpy as np
import pytest

from kappa.core.checks import model_warnings
from kappa.errors import ConfigError, KappaWarning
from kappa.io.config import config_from_dict, load_config, set_value

BASE = {
    "material": {"name": "test", "atomic_mass": "28.0855 u", "atomic_volume": "20.02 angstrom**3",
                 "debye_temperature": "645 K", "sound_velocity": "6.084 km/s", "gruneisen": 0.9},
    "scattering": {"boundary": {"grain_size": "1 mm"}, "point_defect": {"mass_variance": 2e-4}},
    "temperature": {"start": "50 K", "stop": "1000 K", "points": 20},
}


def _with(key, value, data=BASE):
    return config_from_dict(set_value(data, key, value))


def test_units_are_converted_to_si():
    # 1 km/s = 1000 m/s, 1 Å³ = 1e-30 m³ (SI definitions); u = 1.66053906892e-27 kg (CODATA 2022)
    c = config_from_dict(BASE)
    b = c.material.branches[0]
    assert b.sound_velocity == pytest.approx(6084.0)
    assert c.material.atomic_volume == pytest.approx(20.02e-30)
    assert c.material.atomic_mass == pytest.approx(28.0855 * 1.66053906892e-27)
    assert c.model.scattering.get("boundary").grain_size == pytest.approx(1e-3)
    assert c.temperature[0] == 50.0 and c.temperature[-1] == 1000.0 and c.temperature.size == 20


def test_bare_numbers_use_the_documented_unit():
    c = _with("material.atomic_mass", 28.0855)  # bare atomic_mass is in u
    assert c.material.atomic_mass == pytest.approx(28.0855 * 1.66053906892e-27)
    c = _with("scattering.boundary.grain_size", 2e-6)  # bare lengths are in m
    assert c.model.scattering.get("boundary").grain_size == pytest.approx(2e-6)


def test_celsius_temperatures_are_converted():
    c = _with("temperature", {"values": ["26.85 degC", "326.85 degC"]})
    assert c.temperature == pytest.approx([300.0, 600.0])


def test_log_spacing():
    c = _with("temperature.spacing", "log")
    assert c.temperature[1] / c.temperature[0] == pytest.approx(
        c.temperature[-1] / c.temperature[-2])


def test_debye_temperature_derived_and_reported():
    data = set_value(BASE, "material", {k: v for k, v in BASE["material"].items()
                                        if k != "debye_temperature"})
    c = config_from_dict(data)
    # θ = (ħ/k_B)(6π²/V₀)^(1/3) v (Anderson, J. Phys. Chem. Solids 24, 909 (1963))
    hbar, kB = 1.054571817e-34, 1.380649e-23
    expected = hbar / kB * (6 * math.pi**2 / 20.02e-30) ** (1 / 3) * 6084.0
    assert c.material.branches[0].debye_temperature == pytest.approx(expected, rel=1e-9)
    assert "material.debye_temperature" in c.derived


def test_mean_velocity_from_longitudinal_and_transverse():
    mat = {k: v for k, v in BASE["material"].items() if k != "sound_velocity"}
    mat.update(longitudinal_velocity="8950 m/s", transverse_velocity="5345 m/s")
    c = config_from_dict(set_value(BASE, "material", mat))
    # silicon Voigt–Reuss–Hill velocities → v_m = 5915 m/s (derived from the Debye mean
    # [(1/v_L³ + 2/v_T³)/3]^(−1/3) with these velocities; tests/reference_values.py)
    assert c.material.branches[0].sound_velocity == pytest.approx(5915, abs=2)
    assert "material.sound_velocity" in c.derived


def test_per_branch_counts_default():
    mat = {"atomic_mass": "28.0855 u", "atomic_volume": "20.02 angstrom**3", "branches": [
        {"polarization": "longitudinal", "sound_velocity": "8480 m/s", "gruneisen": 1.0,
         "debye_temperature": "586 K"},
        {"polarization": "transverse", "sound_velocity": "5860 m/s", "gruneisen": 0.6,
         "debye_temperature": "240 K"}]}
    c = config_from_dict({**BASE, "material": mat})
    assert [b.count for b in c.material.branches] == [1.0, 2.0]
    assert c.material.per_branch
    assert "material.branches.1.gruneisen" in c.model.keys()


def test_with_values_round_trip():
    c = config_from_dict(BASE)
    c2 = c.model.with_values({"scattering.boundary.grain_size": 5e-8, "material.gruneisen": 1.7})
    assert c2.scattering.get("boundary").grain_size == pytest.approx(5e-8, rel=1e-15)
    assert c2.material.branches[0].gruneisen == 1.7
    assert c.material.branches[0].gruneisen == 0.9  # the original is unchanged


BAD = [
    # (key, value, fragment of the message)
    ("material.atomic_mass", "-28 u", "must be >= 0.1 and <= 10000 u"),
    ("material.atomic_volume", 20.02, "a bare number is read in m**3"),
    ("material.gruneisen", 0, "must be > 0"),
    ("material.debye_temperature", "5e-322 K", "must be >= 0.1"),
    ("material.sound_velocity", "6e103 m/s", "<= 1e+06 m/s"),
    ("scattering.normal.ratio", 1e308, "<= 1e+06"),
    ("temperature.stop", "1e102 K", "<= 100000"),
    ("material.debye_temperature", "645 m", "wrong dimension"),
    ("scattering.boundary.grain_size", "5 K", "wrong dimension"),
    ("scattering.boundary.grain_size", "5 parsecs_per_fortnight", "unknown unit"),
    ("scattering.boundary.grain_size", "nan nm", "NaN"),
    ("scattering.boundary.specularity", 1.0, ">= 0 and < 1"),
    ("scattering.boundary.specularity", -0.1, ">= 0 and < 1"),
    ("scattering.point_defect.mass_variance", -1e-4, ">= 0"),
    ("scattering.umklapp.exponent_divisor", 0, "> 0"),
    ("scattering.normal.form", "other", "allowed: ratio, branch"),
    ("temperature.stop", "10 K", "must be above temperature.start"),
    ("temperature.points", 1, "whole number >= 2"),
    ("temperature", {"values": []}, "non-empty list"),
    ("temperature", {"values": ["300 K", "200 K"]}, "strictly increasing"),
    ("temperature", {"values": ["300 K"], "points": 3}, "not both"),
    ("temperature.start", "-5 K", "must be > 0"),
    ("material.branches", [{"polarization": "longitudinal"}], "not both"),
]


@pytest.mark.parametrize(("key", "value", "fragment"), BAD)
def test_bad_values_name_key_value_and_rule(key, value, fragment):
    with pytest.raises(ConfigError) as info:
        _with(key, value)
    message = str(info.value)
    assert message.startswith(key.split(".")[0])
    assert fragment in message


def test_unknown_key_suggests_nearest():
    with pytest.raises(ConfigError, match="did you mean 'grain_size'"):
        _with("scattering.boundary.grainsize", "1 um")
    data = dict(BASE, scatering={})
    with pytest.raises(ConfigError, match="did you mean 'scattering'"):
        config_from_dict(data)


def test_missing_required_key():
    mat = {k: v for k, v in BASE["material"].items() if k != "gruneisen"}
    with pytest.raises(ConfigError, match="material.gruneisen: missing"):
        config_from_dict(set_value(BASE, "material", mat))
    with pytest.raises(ConfigError, match="grain_size: missing"):
        _with("scattering.boundary", {"specularity": 0.1})


def test_velocity_given_twice():
    with pytest.raises(ConfigError, match="not both"):
        _with("material.longitudinal_velocity", "8 km/s")


def test_branch_normal_form_needs_branches():
    with pytest.raises(ConfigError, match="need material.branches"):
        _with("scattering.normal", {"form": "branch"})


def test_branch_counts_must_add_to_three():
    mat = {"atomic_mass": "28 u", "atomic_volume": "20 angstrom**3", "branches": [
        {"polarization": "longitudinal", "sound_velocity": "8 km/s", "gruneisen": 1},
        {"polarization": "transverse", "count": 1, "sound_velocity": "5 km/s", "gruneisen": 1}]}
    with pytest.raises(ConfigError, match="add up to 3"):
        config_from_dict({**BASE, "material": mat})


def test_parameter_rejects_unknown_and_text_keys():
    model = config_from_dict(BASE).model
    assert model.parameter("scattering.boundary.grain_size").unit == "m"
    assert model.parameter("material.branches.0.gruneisen").unit == "1"
    with pytest.raises(ConfigError):
        model.parameter("scattering.normal.form")
    with pytest.raises(ConfigError, match="unknown key"):
        model.parameter("material.colour")
    with pytest.raises(ConfigError, match="per-branch|averaged"):
        model.check_key("material.branches.0.gruneisen")


@pytest.mark.parametrize(("key", "value", "fragment"), [
    ("scattering.boundary.grain_size", "0.5 nm", "below 1 nm"),
    ("scattering.point_defect.mass_variance", 1.5, "above 1"),
    ("material.atomic_volume", "2000 angstrom**3", "outside 1 angstrom**3 to 1000 angstrom**3"),
    ("material.gruneisen", 1.45e-6, "outside 0.2 to 5"),
    ("material.debye_temperature", "136000 K", "outside 10 K to 2500 K"),
])
def test_dubious_values_warn_and_continue(key, value, fragment):
    c = _with(key, value)  # loading does not warn; the model is checked where it is used
    assert any(fragment in m for m in model_warnings(c.model))
    from kappa.workflows.predict import predict

    with pytest.warns(KappaWarning, match=re.escape(fragment)):
        predict(c.model, [300.0])


def test_temperature_warnings_come_with_the_temperatures_used():
    from kappa.workflows.predict import predict

    data = set_value(BASE, "scattering", {"point_defect": {"mass_variance": 1e-4}})
    cfg = config_from_dict(set_value(data, "temperature.start", "5 K"))  # no warning yet
    with pytest.warns(KappaWarning) as caught:
        predict(cfg.model, cfg.temperature)
    messages = " ".join(str(w.message) for w in caught)
    assert "no boundary scattering" in messages and "above any known solid" in messages
    with pytest.warns(KappaWarning, match="exceed 3θ"):
        predict(config_from_dict(BASE).model, [2500.0])
    predict(config_from_dict(BASE).model, [300.0])  # no warning (pytest turns one into an error)


def test_load_config_reports_yaml_errors(tmp_path):
    p = tmp_path / "bad.yaml"
    p.write_text("material: {atomic_mass: [\n", encoding="utf-8")
    with pytest.raises(ConfigError, match="YAML"):
        load_config(p)
    with pytest.raises(ConfigError, match="not found"):
        load_config(tmp_path / "missing.yaml")


def test_overrides(tmp_path):
    from kappa.io.records import dump_yaml

    p = tmp_path / "c.yaml"
    p.write_text(dump_yaml(BASE), encoding="utf-8")
    c = load_config(p, ["scattering.boundary.grain_size=50nm", "material.gruneisen=1.2"])
    assert c.model.scattering.get("boundary").grain_size == pytest.approx(50e-9)
    assert c.material.branches[0].gruneisen == 1.2
    with pytest.raises(ConfigError, match="KEY=VALUE"):
        load_config(p, ["scattering.boundary.grain_size"])
    assert np.all(load_config(p).temperature == c.temperature)


def test_mass_and_volume_from_composition_and_density():
    # Si: standard atomic weight 28.085 (IUPAC abridged), density 2.329 g/cm³ (handbook, published);
    # V₀ = M̄/ρ must match the handbook lattice constant, a³/8 = 5.431³/8 = 20.02 Å³ (handbook).
    mat = {k: v for k, v in BASE["material"].items() if k not in ("atomic_mass", "atomic_volume")}
    mat.update(composition="Si", density="2.329 g/cm^3")
    c = config_from_dict(set_value(BASE, "material", mat))
    assert c.material.atomic_mass / 1.66053906892e-27 == pytest.approx(28.085, abs=1e-3)
    assert c.material.atomic_volume / 1e-30 == pytest.approx(5.431**3 / 8, rel=1e-3)
    assert {"material.atomic_mass", "material.atomic_volume"} <= set(c.derived)
    assert "material.density" in c.model.keys()
    assert "material.atomic_volume" not in c.model.keys()
    with pytest.raises(ConfigError, match="not both"):
        config_from_dict(set_value(BASE, "material.composition", "Si"))
    with pytest.raises(ConfigError, match="unknown element"):
        config_from_dict(set_value(set_value(BASE, "material", mat), "material.composition", "Qq2"))
