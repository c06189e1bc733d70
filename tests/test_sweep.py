"""Sweeps: identity with lattice_conductivity, an independent quadrature check, grid parsing."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from scipy import constants as sc
from scipy.integrate import quad

from kappa.core.evaluator import conductivity
from kappa.errors import ConfigError, KappaWarning
from kappa.io.config import config_from_dict
from kappa.io.grids import parse_temperatures
from kappa.io.grids import parse_vary as _parse_vary
from kappa.io.tables import axis_columns as column_names
from kappa.workflows.sweep import Axis, grid_points, sweep


def _model(data):
    return config_from_dict(data).model


def parse_vary(spec, model=None):
    """Parse a grid for the averaged test model unless another model is given."""
    return _parse_vary(model if model is not None else _model(AVERAGED), spec)

RTOL_IDENTITY = 1e-12  # same formulas and kernel: agreement to rounding
RTOL_QUADRATURE = 1e-6  # DESIGN §5 accuracy target of the fixed rule against adaptive quadrature

AVERAGED = {
    "material": {"name": "test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.56},
    "scattering": {"boundary": {"grain_size": "1 um"}, "point_defect": {"mass_variance": 2e-4},
                   "normal": {"ratio": 0.5}},
    "temperature": {"values": ["80 K", "300 K", "900 K"]},
}
PER_BRANCH = {
    "material": {"name": "test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3",
                 "branches": [{"polarization": "longitudinal", "debye_temperature": "586 K",
                               "sound_velocity": "8480 m/s", "gruneisen": 1.0},
                              {"polarization": "transverse", "sound_velocity": "5860 m/s",
                               "gruneisen": 0.6}]},
    "scattering": {"boundary": {"grain_size": "10 um", "specularity": 0.1},
                   "point_defect": {"mass_variance": 2e-4, "strain_variance": 1e-4},
                   "normal": {"form": "branch", "scale": 1.0}},
}
DERIVED = {  # Debye temperature derived from the velocity: sweeping the velocity changes θ too
    "material": {"atomic_mass": "50 u", "atomic_volume": "25 angstrom**3",
                 "sound_velocity": "3 km/s", "gruneisen": 1.5},
    "scattering": {"boundary": {"grain_size": "200 nm"}},
}


def _check_identity(data: dict, specs: list[str], T) -> tuple:
    model = _model(data)
    axes = [parse_vary(s, model) for s in specs]
    result = sweep(model, axes, T)
    assert result.kappa_L.shape == (*[a.values.size for a in axes], len(T))
    for idx in itertools.product(*[range(a.values.size) for a in axes]):
        c = model.with_values({a.key: a.values[i] for a, i in zip(axes, idx, strict=True)})
        expected = conductivity(c, T)
        np.testing.assert_allclose(result.kappa_L[idx], expected, rtol=RTOL_IDENTITY)
    return result


@pytest.mark.parametrize("specs", [
    ["scattering.boundary.grain_size=10nm:10um:4:log", "scattering.point_defect.mass_variance=0,1e-3,1e-2"],
    ["material.gruneisen=0.5:2:3", "scattering.normal.ratio=0:2:3"],
    ["material.debye_temperature=300K:700K:3", "scattering.umklapp.exponent_divisor=2,3"],
    ["material.atomic_mass=20u:60u:3", "material.atomic_volume=15angstrom**3,25angstrom**3",
     "scattering.umklapp.scale=0.5,2"],
    ["material.sound_velocity=5km/s,7km/s", "scattering.boundary.specularity=0:0.8:3",
     "scattering.point_defect.strain_variance=0,1e-2"],
])
def test_sweep_equals_lattice_conductivity_averaged(specs):
    _check_identity(AVERAGED, specs, [80.0, 300.0, 900.0])


@pytest.mark.parametrize("specs", [
    ["material.branches.0.gruneisen=0.5:1.5:3", "material.branches.1.sound_velocity=5km/s,6km/s"],
    ["material.branches.0.debye_temperature=400K,600K", "scattering.normal.scale=0,1,3"],
    ["material.branches.1.gruneisen=0.3,0.9", "material.atomic_mass=20u,40u",
     "material.branches.0.sound_velocity=8km/s,9km/s"],
])
def test_sweep_equals_lattice_conductivity_per_branch(specs):
    _check_identity(PER_BRANCH, specs, [20.0, 300.0])


def test_derived_key_is_evaluated_per_config():
    result = _check_identity(DERIVED, ["material.sound_velocity=2km/s:4km/s:3",
                                       "scattering.boundary.grain_size=50nm,1um"], [100.0, 300.0])
    # the derived Debye temperature follows the velocity: θ = (ħ/k_B)(6π²/V₀)^(1/3) v
    # (Anderson, J. Phys. Chem. Solids 24, 909 (1963)) — so κ_L is not that of a fixed θ
    fixed = _model({**DERIVED, "material": {**DERIVED["material"], "debye_temperature": "300 K"}})
    c = fixed.with_values({"material.sound_velocity": 2000.0,
                           "scattering.boundary.grain_size": 50e-9})
    other = conductivity(c, [100.0, 300.0])
    assert not np.allclose(result.kappa_L[0, 0], other, rtol=1e-3)


def test_reference_and_ratio():
    cfg = config_from_dict(AVERAGED)
    axes = [parse_vary("scattering.boundary.grain_size=1um,100nm")]
    result = sweep(cfg.model, axes, cfg.temperature)
    np.testing.assert_allclose(result.temperature, [80.0, 300.0, 900.0])
    ref = conductivity(cfg.model, result.temperature)
    np.testing.assert_allclose(result.reference, ref, rtol=1e-14)
    # the config's own grain size is 1 um: ratio 1 there; smaller grains lower κ_L
    np.testing.assert_allclose(result.ratio[0], 1.0, rtol=1e-12)
    assert np.all(result.ratio[1] < 1.0)
    cols = result.long_form()
    assert list(cols) == ["scattering.boundary.grain_size", "temperature", "kappa_L",
                          "kappa_L_ratio"]
    np.testing.assert_allclose(cols["scattering.boundary.grain_size"],
                               [1e-6, 1e-6, 1e-6, 1e-7, 1e-7, 1e-7])


def _kappa_quad(T, L, gamma_m, *, M, V, theta, v, gruneisen, b=3.0):
    """DESIGN §2, single averaged branch, written out here: κ = k_B/(2π²v)(k_BT/ħ)³∫τ w dx with
    τ⁻¹ = v/L + V Γ ω⁴/(4π v³) + ħγ²/(M v² θ) ω² T e^(−θ/(bT)); constants from scipy."""
    kB, hb = sc.k, sc.hbar
    wT = kB * T / hb

    def integrand(x):
        om = x * wT
        rate = (v / L + V * gamma_m * om**4 / (4 * math.pi * v**3)
                + hb * gruneisen**2 / (M * v**2 * theta) * om**2 * T * math.exp(-theta / (b * T)))
        return x**4 * math.exp(x) / math.expm1(x) ** 2 / rate

    x_D = theta / T
    val = quad(integrand, 0.0, x_D, epsrel=1e-11, epsabs=0.0, limit=400,
               points=[p for p in (1e-3, 1e-2, 0.1, 1.0) if p < x_D])[0]
    return kB / (2 * math.pi**2 * v) * wT**3 * val


def test_two_key_sweep_against_independent_quadrature():
    data = {**AVERAGED, "scattering": {"boundary": {"grain_size": "1 um"},
                                       "point_defect": {"mass_variance": 0}}}
    model = _model(data)
    axes = [parse_vary("scattering.boundary.grain_size=20nm,300nm,5um", model),
            parse_vary("scattering.point_defect.mass_variance=0,1e-3,3e-2", model)]
    T = [50.0, 300.0, 800.0]
    result = sweep(model, axes, T)
    u = sc.physical_constants["atomic mass constant"][0]
    params = dict(M=28.0855 * u, V=20.02e-30, theta=645.0, v=6084.0, gruneisen=0.56)
    for i, L in enumerate([20e-9, 300e-9, 5e-6]):
        for j, g in enumerate([0.0, 1e-3, 3e-2]):
            for t, temp in enumerate(T):
                expected = _kappa_quad(temp, L, g, **params)
                assert result.kappa_L[i, j, t] == pytest.approx(expected, rel=RTOL_QUADRATURE)


def test_parse_vary_ranges_and_units():
    a = parse_vary("scattering.boundary.grain_size=10nm:10um:4:log")
    np.testing.assert_allclose(a.values, [1e-8, 1e-7, 1e-6, 1e-5], rtol=1e-12)
    np.testing.assert_allclose(a.shown, [10, 100, 1000, 10000], rtol=1e-12)
    assert a.log and a.unit == "nm"
    b = parse_vary("material.atomic_mass=20:40:3")  # bare number in u, as in the config
    np.testing.assert_allclose(b.shown, [20, 30, 40], rtol=1e-9)
    c = parse_vary("material.gruneisen=2,1, 0.5")
    np.testing.assert_allclose(c.values, [2, 1, 0.5])
    assert column_names([a, c]) == ["grain_size [nm]", "gruneisen [1]"]
    d = parse_vary("material.branches.0.gruneisen=1,2", _model(PER_BRANCH))
    e = parse_vary("material.branches.1.gruneisen=1,2", _model(PER_BRANCH))
    assert column_names([d, e]) == ["material.branches.0.gruneisen [1]",
                                    "material.branches.1.gruneisen [1]"]
    assert grid_points([a, c], 5) == 60
    np.testing.assert_allclose(parse_temperatures(["300K, 600 K", "27 degC"]), [300, 600, 300.15])


@pytest.mark.parametrize("spec, message", [
    ("scattering.boundary.grain_siz=1nm:2nm:3", "did you mean 'grain_size'"),
    ("scattering.normal.form=1,2", "not a numeric key"),
    ("material.gruneisen=1:2:1", "N must be a whole number from 2"),
    ("scattering.boundary.grain_size=0nm:1um:3:log", r"must be > 0 and <= 1e\+10 nm"),
    ("scattering.umklapp.scale=0:1:3:log", "a log range needs both ends > 0"),
    ("scattering.boundary.grain_size=1K:2K:3", "wrong dimension"),
    ("scattering.boundary.specularity=0:1:3", "must be >= 0 and < 1"),
    ("temperature.start=1K:3K:3", "give them with --at"),
    ("material.gruneisen=1,1", "must not repeat"),
    ("material.gruneisen=1:1:3", "START and STOP must differ"),
])
def test_parse_vary_rejects(spec, message):
    with pytest.raises(ConfigError, match=message):
        parse_vary(spec)


def test_sweep_rejects():
    model = _model(AVERAGED)
    a = parse_vary("material.gruneisen=1,2")
    with pytest.raises(ConfigError, match="varied only once"):
        sweep(model, [a, parse_vary("material.gruneisen=3,4")], [300.0])
    with pytest.raises(ConfigError, match="averaged-branch model"):
        sweep(model, [parse_vary("material.branches.0.gruneisen=1,2", _model(PER_BRANCH))],
              [300.0])
    with pytest.raises(ConfigError, match="temperature"):
        sweep(model, [a], [])
    with pytest.raises(ConfigError, match="umklapp.scale=0.*diverges"):  # Umklapp off, no boundary
        bare = _model({**AVERAGED, "scattering": {}})
        sweep(bare, [parse_vary("scattering.umklapp.scale=0,1", bare)], [300.0])
    with pytest.raises(ConfigError, match="allow_large"):
        sweep(model, {"material.gruneisen": np.linspace(1, 2, 100_000),
                      "scattering.umklapp.scale": np.linspace(1, 2, 1001)}, [300.0])


def test_sweep_warns_about_dubious_values():
    model = _model(AVERAGED)
    with pytest.warns(KappaWarning, match="below 1 nm"):
        sweep(model, [parse_vary("scattering.boundary.grain_size=0.5nm,10nm")], [300.0])
    with pytest.warns(KappaWarning, match="exceed 3θ"):
        sweep(model, [parse_vary("material.gruneisen=1,2")], [3000.0])


def test_more_scattering_never_raises_kappa():
    """DESIGN §6 property on a grid: κ_L falls with mass disorder and rises with grain size."""
    model = _model(AVERAGED)
    r = sweep(model, [parse_vary("scattering.boundary.grain_size=5nm:50um:9:log"),
                    parse_vary("scattering.point_defect.mass_variance=0:0.1:6")], [50.0, 500.0])
    assert np.all(np.diff(r.kappa_L, axis=0) > 0)
    assert np.all(np.diff(r.kappa_L, axis=1) < 0)


def test_axis_is_plain_dataclass():
    a = parse_vary("material.gruneisen=1,2")
    assert isinstance(a, Axis) and a.key == "material.gruneisen" and a.name == "gruneisen"


def test_many_debye_temperatures_use_the_same_rules():
    """A swept Debye temperature × many temperatures: hundreds of distinct upper limits, each
    sample must be given the rule of its own θ/T."""
    model = _model(AVERAGED)
    T = np.linspace(50.0, 900.0, 30)
    axes = [parse_vary("material.debye_temperature=300K:700K:12")]  # 360 upper limits
    r = sweep(model, axes, T)
    for i in (0, 5, 11):
        c = model.with_values({"material.debye_temperature": axes[0].values[i]})
        np.testing.assert_allclose(r.kappa_L[i], conductivity(c, T), rtol=1e-12)


def test_sweep_from_plain_si_arrays():
    # the notebook form {key: SI values} gives the same numbers as the evaluator point by point
    import kappa

    model = _model(AVERAGED)
    L = np.array([50e-9, 2e-6])
    r = kappa.sweep(model, {"scattering.boundary.grain_size": L}, [300.0])
    for i, li in enumerate(L):
        c = model.with_values({"scattering.boundary.grain_size": li})
        assert r.kappa_L[i, 0] == pytest.approx(kappa.conductivity(c, [300.0])[0], rel=1e-12)
    with pytest.raises(ConfigError, match="must be >= 0 and < 1"):
        sweep(model, {"scattering.boundary.specularity": [0.5, 1.0]}, [300.0])
