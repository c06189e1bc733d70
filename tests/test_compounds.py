"""Compounds: atoms per cell (acoustic θ, optical part), disorder from the composition in
configs, the alloy fraction as a key, and alloy series."""

import copy
import warnings

import numpy as np
import pytest
import scipy.constants as sc

from kappa.core.alloy import alloy_models
from kappa.core.evaluator import conductivity, optical_part
from kappa.errors import ConfigError, KappaWarning
from kappa.io.config import config_from_dict
from kappa.io.grids import parse_vary
from kappa.workflows.alloy import alloy_series
from kappa.workflows.fitting import fit
from kappa.workflows.predict import predict
from kappa.workflows.spectrum import spectrum
from kappa.workflows.sweep import sweep
from tests.reference_values import VALUES

BASE = {
    "material": {"name": "compound", "atomic_mass": "100 u", "atomic_volume": "25 angstrom**3",
                 "debye_temperature": "300 K", "longitudinal_velocity": "4000 m/s",
                 "transverse_velocity": "2400 m/s", "gruneisen": 1.5},
    "scattering": {"boundary": {"grain_size": "1 um"},
                   "point_defect": {"mass_variance": 0.01}},
}
T = np.array([50.0, 150.0, 300.0, 600.0])


def _cfg(changes=None, **material):
    data = copy.deepcopy(BASE)
    data["material"].update(material)
    data["material"] = {k: v for k, v in data["material"].items() if v is not None}
    for key, value in (changes or {}).items():
        data[key] = value
    return config_from_dict(data)


def _quiet(fn, *a, **k):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", KappaWarning)
        return fn(*a, **k)


def test_one_atom_per_cell_changes_nothing():
    plain, one = _cfg(), _cfg(atoms_per_cell=1)
    p0, p1 = _quiet(predict, plain.model, T), _quiet(predict, one.model, T)
    assert np.array_equal(p0.kappa_L, p1.kappa_L)
    for key in p0.without:
        assert np.array_equal(p0.without[key], p1.without[key])
    assert np.array_equal(p0.molar_heat_capacity, p1.molar_heat_capacity)
    assert p1.optical is None
    s0 = sweep(plain.model, [parse_vary(plain.model, "material.gruneisen=1:2:5")], T)
    s1 = sweep(one.model, [parse_vary(one.model, "material.gruneisen=1:2:5")], T)
    assert np.array_equal(s0.kappa_L, s1.kappa_L)
    sp0, sp1 = spectrum(plain.model, [300.0]), spectrum(one.model, [300.0])
    assert np.array_equal(sp0.kappa_L, sp1.kappa_L)
    per_branch = _cfg(atoms_per_cell=1, debye_temperature=None)
    assert [d.key for d in per_branch.model.derived] == [d.key for d in _cfg(
        debye_temperature=None).model.derived]


def test_acoustic_debye_temperature_and_optical_part():
    n = 8
    cfg = _cfg(atoms_per_cell=n)
    m = cfg.model.material
    assert m.branches[0].debye_temperature == pytest.approx(300.0 * n ** (-1 / 3), rel=1e-14)
    keys = {d.key: d.value for d in cfg.model.derived}
    assert keys["material.acoustic_debye_temperature"] == pytest.approx(150.0, rel=1e-14)
    # the key keeps its meaning: the Debye temperature of all modes, as written
    assert cfg.model.value("material.debye_temperature") == 300.0
    # optical part: (3/2)(π/6)^(1/3) k_B n^(2/3) v̄ (1 − N^(−2/3)), Toberer et al. (2011),
    # v̄ = (v_L + 2 v_T)/3, computed here with scipy.constants
    vbar = (4000.0 + 2 * 2400.0) / 3
    expected = 1.5 * (np.pi / 6) ** (1 / 3) * sc.k * (1 / 25e-30) ** (2 / 3) * vbar * (
        1 - n ** (-2 / 3))
    assert float(optical_part(cfg.model)) == pytest.approx(expected, rel=1e-12)
    p = _quiet(predict, cfg.model, T)
    np.testing.assert_allclose(p.kappa_L, p.acoustic + p.optical, rtol=1e-14)
    np.testing.assert_allclose(p.kappa_L, conductivity(cfg.model, T), rtol=1e-14)
    # fewer acoustic modes and a lower θ_a: less heat than the same solid as one atom per cell
    assert np.all(p.kappa_L < _quiet(predict, _cfg().model, T).kappa_L)


def test_three_theta_warning_uses_the_theta_of_all_modes():
    cfg = _cfg(atoms_per_cell=8)  # θ_a = 150 K, θ_D = 300 K
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", KappaWarning)
        predict(cfg.model, [500.0, 800.0])  # above 3θ_a = 450 K, below 3θ_D = 900 K
    assert not [w for w in caught if "exceed" in str(w.message)]
    with pytest.warns(KappaWarning, match="3θ_D"):
        predict(cfg.model, [500.0, 1000.0])


def test_atoms_per_cell_is_a_key_for_sweeps_and_fits():
    cfg = _cfg(atoms_per_cell=2)
    r = sweep(cfg.model, [parse_vary(cfg.model, "material.atoms_per_cell=1,2,4,8")], [300.0])
    assert np.all(np.diff(r.kappa_L[:, 0]) < 0)
    # fit the Debye temperature of all modes back from synthetic data of θ_D = 300 K
    data_model = cfg.model
    k = conductivity(data_model, T)
    start = cfg.model.with_values({"material.debye_temperature": 250.0})
    from kappa.workflows.fitting import fit_data

    res = _quiet(fit, start, fit_data(T, k), ["material.debye_temperature"], starts=1)
    assert res.value("material.debye_temperature") == pytest.approx(300.0, rel=1e-5)


def test_point_defect_from_the_composition():
    cfg = config_from_dict({
        "material": {"composition": "Mg2Si0.4Sn0.6", "atomic_volume": "25 angstrom**3",
                     "sound_velocity": "4000 m/s", "gruneisen": 1.5},
        "scattering": {"point_defect": {"disorder": "composition", "strain_parameter": 20},
                       "boundary": {"grain_size": "1 um"}}})
    from kappa.core.disorder import disorder

    d = disorder("Mg2Si0.4Sn0.6", strain_parameter=20)
    pd = cfg.model.mechanisms.get("point_defect")
    assert pd.mass_variance == pytest.approx(d.mass_variance, rel=1e-14)
    assert pd.strain_variance == pytest.approx(d.strain_variance, rel=1e-12)
    keys = [x.key for x in cfg.model.derived]
    assert "scattering.point_defect.mass_variance" in keys
    assert "scattering.point_defect.strain_variance" in keys
    # the strain parameter is a key: Γ_S follows it
    r = _quiet(sweep, cfg.model, [parse_vary(cfg.model, "scattering.point_defect."
                                              "strain_parameter=0,20,80")], [300.0])
    assert r.kappa_L[0, 0] > r.kappa_L[1, 0] > r.kappa_L[2, 0]
    iso = config_from_dict({
        "material": {"composition": "Si", "atomic_volume": "20 angstrom**3",
                     "sound_velocity": "6000 m/s", "gruneisen": 1.0},
        "scattering": {"point_defect": {"disorder": "isotopes"}}})
    assert iso.model.mechanisms.get("point_defect").mass_variance == pytest.approx(
        VALUES["gamma_si_natural"].value, rel=0.02)


@pytest.mark.parametrize("section, message", [
    ({"disorder": "composition", "mass_variance": 0.1}, "derived from the composition"),
    ({"disorder": "isotopes", "strain_parameter": 50}, "used only with disorder: composition"),
    ({"disorder": "alloyed"}, "allowed: given, isotopes, composition"),
])
def test_point_defect_disorder_errors(section, message):
    data = copy.deepcopy(BASE)
    data["material"]["composition"] = "Si"
    del data["material"]["atomic_mass"]
    data["scattering"]["point_defect"] = section
    with pytest.raises(ConfigError, match=message):
        config_from_dict(data)
    data = copy.deepcopy(BASE)
    data["scattering"]["point_defect"] = {"disorder": "isotopes"}
    with pytest.raises(ConfigError, match="needs material.composition"):
        config_from_dict(data)


ALLOY = {
    "material": {"alloy": {"end_members": ["Mg2Si", "Mg2Sn"], "fraction": 0.4},
                 "atomic_volume": "25 angstrom**3", "sound_velocity": "4000 m/s",
                 "gruneisen": 1.5},
    "scattering": {"point_defect": {"disorder": "composition"},
                   "boundary": {"grain_size": "1 um"}},
}


def test_alloy_fraction_is_a_key():
    cfg = config_from_dict(ALLOY)
    from kappa.core.disorder import disorder

    direct = disorder("Mg2Si0.6Sn0.4")
    pd = cfg.model.mechanisms.get("point_defect")
    assert pd.mass_variance == pytest.approx(direct.mass_variance, rel=1e-12)
    assert cfg.model.material.atomic_mass == pytest.approx(direct.atomic_mass * sc.atomic_mass,
                                                           rel=1e-9)
    assert "material.alloy.fraction" in cfg.model.keys()
    assert "material.atomic_mass" not in cfg.model.keys()
    r = sweep(cfg.model, [parse_vary(cfg.model, "material.alloy.fraction=0:1:11")], [300.0])
    k = r.kappa_L[:, 0]
    # a batch point equals the single model at that fraction
    single = conductivity(cfg.model.with_values({"material.alloy.fraction": 0.3}), [300.0])
    assert k[3] == pytest.approx(single[0], rel=1e-12)
    assert k.argmin() not in (0, 10) and k[0] > k[5] and k[10] > k[5]
    with pytest.raises(ConfigError, match="fraction"):
        cfg.model.with_values({"material.alloy.fraction": 1.5})
    bad = copy.deepcopy(ALLOY)
    bad["material"]["alloy"]["end_members"] = ["Mg2Si", "MgSn"]
    with pytest.raises(ConfigError, match="same sites"):
        config_from_dict(bad)


# --- alloy series -----------------------------------------------------------------------------

# Per-branch Si and Ge as in the bundled configs (Morelli, Heremans & Slack, Phys. Rev. B 66,
# 195304 (2002), values from memory; natural-isotope Γ), with the compositions.
SI = {"material": {"composition": "Si", "atomic_volume": "20.02 angstrom**3", "branches": [
    {"polarization": "longitudinal", "debye_temperature": "586 K", "sound_velocity": "8480 m/s",
     "gruneisen": 1.06},
    {"polarization": "transverse", "debye_temperature": "240 K", "sound_velocity": "5860 m/s",
     "gruneisen": 0.56}]},
    "scattering": {"boundary": {"grain_size": "5 mm"}, "normal": {"form": "branch"}}}
GE = {"material": {"composition": "Ge", "atomic_volume": "22.64 angstrom**3", "branches": [
    {"polarization": "longitudinal", "debye_temperature": "333 K", "sound_velocity": "4920 m/s",
     "gruneisen": 0.91},
    {"polarization": "transverse", "debye_temperature": "101 K", "sound_velocity": "3540 m/s",
     "gruneisen": 0.48}]},
    "scattering": {"boundary": {"grain_size": "5 mm"}, "normal": {"form": "branch"}}}


def test_sige_trend_at_300K():
    a, b = config_from_dict(SI).model, config_from_dict(GE).model
    x = np.linspace(0, 1, 11)
    s = _quiet(alloy_series, a, b, x, [300.0])
    k = s.kappa_L[:, 0]
    ref = VALUES["kappa_sige_300K_mid"]  # ~8.5 W/(m K) for 30-70 % Ge, from memory
    mid = k[3:8]
    assert np.all(np.abs(np.log(mid / ref.value)) < np.log(1 + ref.tolerance))
    # a broad, shallow minimum in the middle and a steep fall from the pure ends
    assert 3 <= int(np.argmin(k)) <= 7
    assert mid.max() / mid.min() < 1.35
    assert k[0] > 10 * k[2] and k[10] > 5 * k[8]
    assert np.all(s.kappa_L <= s.kappa_L_mass_only * (1 + 1e-12))


def test_alloy_end_points_are_the_end_members():
    a, b = config_from_dict(SI).model, config_from_dict(GE).model
    m = alloy_models(a, b, [0.0, 1.0])
    # at x = 0, 1 the alloy Γ is the natural-isotope Γ of the end member
    iso = [config_from_dict({**d, "scattering": {**d["scattering"], "point_defect":
                                                   {"disorder": "isotopes"}}}).model
           for d in (SI, GE)]
    k = conductivity(m.model, [100.0, 300.0])
    for i, ref in enumerate(iso):
        np.testing.assert_allclose(k[i], conductivity(ref, [100.0, 300.0]), rtol=1e-10)


def test_alloy_rules():
    a, b = config_from_dict(SI).model, config_from_dict(GE).model
    m = alloy_models(a, b, [0.5])
    ma, mb = a.material, b.material
    d = (np.cbrt(ma.atomic_volume) + np.cbrt(mb.atomic_volume)) / 2
    assert m.values["material.atomic_volume"][0] == pytest.approx(d**3, rel=1e-14)
    rho = (ma.atomic_mass + mb.atomic_mass) / 2 / d**3
    c = (ma.atomic_mass / ma.atomic_volume * 8480.0**2 + mb.atomic_mass / mb.atomic_volume
         * 4920.0**2) / 2
    assert m.values["material.branches.0.sound_velocity"][0] == pytest.approx(
        np.sqrt(c / rho), rel=1e-14)


def test_alloy_bad_end_members():
    a = config_from_dict(SI).model
    averaged = _cfg().model
    with pytest.raises(ConfigError, match="different branch layouts"):
        alloy_models(a, averaged, [0.5])
    with pytest.raises(ConfigError, match="between 0 and 1"):
        alloy_models(a, a, [1.2])
    c = copy.deepcopy(GE)
    c["material"]["composition"] = "GeSi"
    with pytest.raises(ConfigError, match="same sites"):
        alloy_models(a, config_from_dict(c).model, [0.5])
