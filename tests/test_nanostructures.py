"""Precipitates, dislocations, rough boundaries and higher-order anharmonicity.

Each rate against its analytic limits (with the formula's source beside it), against independent
adaptive quadrature where an integral is involved (tests/reference.py, scipy), bad input, and
one published trend (Mingo et al., Nano Lett. 9, 711 (2009), from memory).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import constants as sc
from scipy.integrate import quad
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.evaluator import branch_states, conductivity
from kappa.core.mechanisms import RateContext
from kappa.core.mechanisms.boundary import rough_specularity
from kappa.core.mechanisms.dislocation import strain_factor
from kappa.core.mechanisms.precipitate import precipitate_cross_section
from kappa.errors import ConfigError, KappaWarning
from kappa.io.config import config_from_dict, set_value

from .reference import reference_kappa, reference_kappa_q
from .reference_values import value

U = sc.atomic_mass
runner = CliRunner()
RTOL_QUADRATURE = 1e-6

# Averaged silicon-like material (the values set the scales; no outside source needed).
AVG = {
    "material": {"name": "nano test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.9},
    "scattering": {"boundary": {"grain_size": "1 um"}},
}
MASS, VOLUME, THETA, V, GAMMA = 28.0855 * U, 20.02e-30, 645.0, 6084.0, 0.9
AVG_BRANCH = [dict(count=3, theta=THETA, v=V, gamma=GAMMA, pol="average")]


def _model(**sections):
    data = AVG
    for key, section in sections.items():
        data = set_value(data, f"scattering.{key}", section)
    return config_from_dict(data).model


def _rates(model, key, omega, T=300.0):
    m = model.material
    ctx = RateContext(m, m.branches[0], np.array([T]), model.mechanisms, (1,))
    mech = model.mechanisms.get(key)
    return np.asarray(mech.rate(ctx, np.asarray(omega, dtype=float)[None, :]))[0], mech, ctx


# --- precipitates -------------------------------------------------------------------------------

PRECIPITATE = {"radius": "2 nm", "volume_fraction": 0.02, "mass_contrast": 0.5,
               "elastic_contrast": 0.2}


def _contrast(dm=0.5, dk=0.2):
    return dm**2 + 3 * dk**2  # the Rayleigh contrast factor of the module notes


def test_precipitate_cross_section_reaches_rayleigh_and_geometric_limits():
    R = 2e-9
    # qR ≪ 1: σ → (4π/9)R²(qR)⁴[(ΔD/D)² + 3(ΔK/K)²] (Rayleigh), relative gap ~ σ_R/σ_g
    q = 1e-4 / R
    rayleigh = 4 * math.pi / 9 * R**2 * (q * R) ** 4 * _contrast()
    assert precipitate_cross_section(R, q, 0.5, 0.2) == pytest.approx(rayleigh, rel=1e-12)
    # qR ≫ 1: σ → 2πR² (geometric limit, extinction: twice the projected area)
    q = 1e4 / R
    assert precipitate_cross_section(R, q, 0.5, 0.2) == pytest.approx(2 * math.pi * R**2,
                                                                      rel=1e-12)
    # in between, 1/σ = 1/σ_R + 1/σ_g (Kim & Majumdar 2006): below both limits
    q = 1.0 / R
    s = precipitate_cross_section(R, q, 0.5, 0.2)
    s_r = 4 * math.pi / 9 * R**2 * (q * R) ** 4 * _contrast()
    assert 1 / s == pytest.approx(1 / s_r + 1 / (2 * math.pi * R**2), rel=1e-12)


def test_precipitate_rate_limits_on_a_debye_branch():
    model = _model(precipitate=PRECIPITATE)
    n_p = 0.02 / (4 / 3 * math.pi * (2e-9) ** 3)
    omega_low, omega_high = np.array([1e8]), np.array([5e15])
    low, mech, ctx = _rates(model, "precipitate", omega_low)
    # Rayleigh: τ⁻¹ = v n_p σ_R with q = ω/v
    q = omega_low / V
    expected = V * n_p * 4 * math.pi / 9 * (2e-9) ** 6 * q**4 * _contrast()
    np.testing.assert_allclose(low, expected, rtol=1e-9)
    np.testing.assert_allclose(mech.low_frequency(ctx)[4][0] * omega_low**4, expected,
                               rtol=1e-12)
    high, _, _ = _rates(model, "precipitate", omega_high)
    np.testing.assert_allclose(high, V * n_p * 2 * math.pi * (2e-9) ** 2, rtol=1e-9)


def test_one_atom_precipitate_is_a_klemens_point_defect():
    # a precipitate of one atom's volume, n_p = c/V₀, mass contrast ΔM/M: its Rayleigh rate is
    # Klemens' V₀c(ΔM/M)²ω⁴/(4πv³) (Klemens, Proc. Phys. Soc. A 68, 1113 (1955))
    c, dm = 0.01, 0.5
    radius = (3 * VOLUME / (4 * math.pi)) ** (1 / 3)
    model = _model(precipitate={"radius": f"{radius!r} m", "number_density": f"{c / VOLUME!r} "
                                "1/m**3", "mass_contrast": dm})
    _, mech, ctx = _rates(model, "precipitate", np.array([1e10]))
    klemens = VOLUME * c * dm**2 / (4 * math.pi * V**3)
    assert float(mech.low_frequency(ctx)[4][0]) == pytest.approx(klemens, rel=1e-12)


def _lognormal_rate(omega, r0, width, n_p):
    """v n_p ∫ σ(R) f(R) dR over the log-normal density, by scipy quad (independent)."""
    q = omega / V

    def f(u):  # u = ln R
        pdf = math.exp(-((u - math.log(r0)) ** 2) / (2 * width**2)) / (width * math.sqrt(2 * math.pi))
        r = math.exp(u)
        s_r = 4 * math.pi / 9 * r**2 * (q * r) ** 4 * _contrast()
        return pdf / (1 / s_r + 1 / (2 * math.pi * r * r))

    lo, hi = math.log(r0) - 12 * width, math.log(r0) + 12 * width
    return V * n_p * quad(f, lo, hi, epsabs=0, epsrel=1e-12, limit=400,
                          points=[math.log(r0)])[0]


@pytest.mark.parametrize("width", [0.2, 0.5, 1.0])
def test_size_distribution_against_adaptive_quadrature(width):
    section = dict(PRECIPITATE, width=width)
    model = _model(precipitate=section)
    n_p = 0.02 / (4 / 3 * math.pi * (2e-9) ** 3 * math.exp(4.5 * width**2))
    omegas = np.array([1e11, 3e12, 2e13, 8e13])
    ours, _, _ = _rates(model, "precipitate", omegas)
    ref = [_lognormal_rate(w, 2e-9, width, n_p) for w in omegas]
    np.testing.assert_allclose(ours, ref, rtol=1e-6)


def test_volume_fraction_and_number_density_describe_the_same_precipitates():
    width = 0.3
    n_p = 0.02 / (4 / 3 * math.pi * (2e-9) ** 3 * math.exp(4.5 * width**2))  # ⟨R³⟩ log-normal
    a = _model(precipitate=dict(PRECIPITATE, width=width))
    b = _model(precipitate={"radius": "2 nm", "number_density": f"{n_p!r} 1/m**3",
                            "mass_contrast": 0.5, "elastic_contrast": 0.2, "width": width})
    np.testing.assert_allclose(conductivity(a, [50.0, 300.0]), conductivity(b, [50.0, 300.0]),
                               rtol=1e-12)
    assert any(d.key == "scattering.precipitate.number_density" for d in a.derived)


@pytest.mark.parametrize("T", [10.0, 300.0])
def test_precipitates_in_the_kernel_against_adaptive_quadrature(T):
    model = _model(precipitate=PRECIPITATE)
    n_p = 0.02 / (4 / 3 * math.pi * (2e-9) ** 3)

    def extra(w, _branch):
        return V * n_p * precipitate_cross_section(2e-9, w / V, 0.5, 0.2)

    ref = reference_kappa(T, MASS, VOLUME, AVG_BRANCH, umklapp={}, boundary={"L": 1e-6},
                          extra=extra, extra_points=(V / 2e-9,))
    assert conductivity(model, [T])[0] == pytest.approx(ref, rel=RTOL_QUADRATURE)


def test_nanoparticles_in_an_alloy_have_an_optimal_size():
    """Trend of Mingo, Hauser, Kobayashi, Plissonnier & Shakouri, Nano Lett. 9, 711 (2009)
    (from memory): at a fixed volume fraction, nanoparticles in SiGe lower κ below the alloy
    value most at a radius of a few nm; much smaller ones act as (coherent) point defects and
    change little, much larger ones are too few. SiGe-like values (this test's choice: M̄ of
    Si₀.₈Ge₀.₂, alloy Γ = x(1−x)(ΔM/M̄)² = 0.23, derived)."""
    alloy = config_from_dict({
        "material": {"name": "SiGe-like alloy", "atomic_mass": "37.0 u",
                     "atomic_volume": "20.9 angstrom**3", "debye_temperature": "600 K",
                     "sound_velocity": "5600 m/s", "gruneisen": 1.0},
        "scattering": {"boundary": {"grain_size": "1 mm"},
                       "point_defect": {"mass_variance": 0.23}}}).model
    k_alloy = conductivity(alloy, [300.0])[0]
    radii = np.geomspace(0.2e-9, 50e-9, 25)
    k = conductivity(alloy.with_values({"scattering.precipitate.radius": radii,
                                        "scattering.precipitate.volume_fraction": 0.02,
                                        "scattering.precipitate.mass_contrast": 0.5}),
                     [300.0])[:, 0]
    best = int(np.argmin(k))
    assert 0 < best < radii.size - 1 and 1e-9 < radii[best] < 20e-9
    assert k[best] < 0.7 * k_alloy  # a clear cut below the alloy
    assert k[0] > 0.9 * k_alloy  # sub-nm particles: little change
    assert k[-1] > 1.3 * k[best]  # large particles: fewer, less effective


@pytest.mark.parametrize(("key", "value", "message"), [
    ("radius", "-2 nm", r"scattering\.precipitate\.radius = -2 nm: must be > 0 and <= 1e\+06 nm"),
    ("radius", "2 K", r"scattering\.precipitate\.radius.*wrong dimension"),
    ("volume_fraction", 1.0, r"scattering\.precipitate\.volume_fraction = 1(\.0)?: must be >= 0 "
                             r"and < 1"),
    ("volume_fraction", -0.1, r"scattering\.precipitate\.volume_fraction = -0\.1"),
    ("number_density", "1e17 1/cm**3", r"scattering\.precipitate\.number_density = given: "
                                      r"give only one of"),
    ("width", 1.5, r"scattering\.precipitate\.width = 1\.5: must be >= 0 and <= 1"),
])
def test_bad_precipitate_values_name_the_key(key, value, message):
    with pytest.raises(ConfigError, match=message):
        _model(precipitate=dict(PRECIPITATE, **{key: value}))


def test_precipitates_without_contrast_are_an_error():
    with pytest.raises(ConfigError, match="without a contrast do not scatter"):
        _model(precipitate={"radius": "2 nm", "volume_fraction": 0.02})


def test_bad_precipitate_on_the_command_line_writes_nothing(tmp_path):
    import yaml

    cfg = tmp_path / "p.yaml"
    cfg.write_text(yaml.safe_dump(set_value(AVG, "scattering.precipitate", PRECIPITATE)),
                   encoding="utf-8")
    out = tmp_path / "out"
    r = runner.invoke(app, ["predict", str(cfg), "--set", "scattering.precipitate.radius=-1nm",
                            "-o", str(out)])
    assert r.exit_code == 2
    lines = [line for line in r.output.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: scattering.precipitate.radius")
    assert not out.exists()


# --- dislocations -----------------------------------------------------------------------------

DISLOCATION = {"density": "1e11 1/cm**2", "burgers_vector": "4 angstrom"}


def test_dislocation_rates_have_the_published_form():
    """Kim et al., Science 348, 109 (2015) (from memory): core N_D V^(4/3) ω³/v², strain field
    0.6 b² N_D γ² ω {1/2 + (1/24)[(1−2ν)/(1−ν)]²[1 + √2 (v_L/v_T)²]²}."""
    model = _model(dislocation=dict(DISLOCATION, poisson_ratio=0.25))
    omega = np.array([1e12, 2e12])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", KappaWarning)
        rate, _, _ = _rates(model, "dislocation", omega)
    nd, b = 1e15, 4e-10
    # ν = 1/4: (1−2ν)/(1−ν) = 2/3 and (v_L/v_T)² = 2(1−ν)/(1−2ν) = 3 for an isotropic solid
    bracket = 0.5 + (2 / 3) ** 2 * (1 + math.sqrt(2) * 3) ** 2 / 24
    assert float(strain_factor(0.25)) == pytest.approx(bracket, rel=1e-14)
    expected = 0.6 * b**2 * nd * GAMMA**2 * omega * bracket + nd * VOLUME ** (4 / 3) * omega**3 / V**2
    np.testing.assert_allclose(rate, expected, rtol=1e-12)


def test_poisson_ratio_from_the_material_velocities():
    # silicon Voigt–Reuss–Hill velocities (tests/reference_values.py): ν = 0.2228 (derived)
    data = set_value(AVG, "material", {"name": "si", "atomic_mass": "28.0855 u",
                                       "atomic_volume": "20.02 angstrom**3",
                                       "longitudinal_velocity": f"{value('si_vl_hill')} m/s",
                                       "transverse_velocity": f"{value('si_vt_hill')} m/s",
                                       "gruneisen": 0.9})
    model = config_from_dict(set_value(data, "scattering.dislocation", DISLOCATION)).model
    assert model.value("scattering.dislocation.poisson_ratio") == pytest.approx(
        value("si_poisson_hill"), rel=2e-3)
    assert model.unused("scattering.dislocation.poisson_ratio")
    with pytest.raises(ConfigError, match="poisson_ratio.*remove this key"):
        config_from_dict(set_value(data, "scattering.dislocation",
                                   dict(DISLOCATION, poisson_ratio=0.3)))


def test_default_poisson_ratio_warns():
    from kappa.workflows.predict import predict

    model = _model(dislocation=DISLOCATION)
    with pytest.warns(KappaWarning, match="Poisson ratio is the default 0.25"):
        predict(model, [300.0])


def test_dislocations_lower_kappa_more_where_umklapp_is_weak():
    # strain-field scattering ∝ ω competes with Umklapp ∝ ω²T: its share grows as T falls
    densities = np.array([1e13, 1e14, 1e15, 1e16])  # m⁻²
    model = _model(dislocation=dict(DISLOCATION, poisson_ratio=0.25))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", KappaWarning)
        k = conductivity(model.with_values({"scattering.dislocation.density": densities}),
                         [50.0, 300.0])
        k0 = conductivity(model.without("dislocation"), [50.0, 300.0])
    ratio = k / k0
    assert np.all(np.diff(ratio, axis=0) < 0)  # denser → lower
    assert np.all(ratio[:, 0] <= ratio[:, 1])  # the cut is deeper at low T


@pytest.mark.parametrize(("key", "value", "message"), [
    ("burgers_vector", "4 K", r"scattering\.dislocation\.burgers_vector.*wrong dimension"),
    ("burgers_vector", "-4 angstrom", r"scattering\.dislocation\.burgers_vector = -4 angstrom"),
    ("density", "1e11 1/cm", r"scattering\.dislocation\.density.*wrong dimension"),
])
def test_bad_dislocation_values_name_the_key(key, value, message):
    with pytest.raises(ConfigError, match=message):
        _model(dislocation=dict(DISLOCATION, **{key: value}))


@pytest.mark.parametrize("T", [20.0, 300.0])
def test_dislocations_on_a_sine_branch_against_quadrature_over_q(T):
    # on a curved branch the rate is v_g × N_D × cross-section(q): c_k ω^k → c_k v_g q^k v^(k−1)
    data = {"material": {"name": "sine", "atomic_mass": "28.0855 u",
                         "atomic_volume": "20.02 angstrom**3",
                         "branches": [{"polarization": "longitudinal", "sound_velocity": "8480 m/s",
                                       "debye_temperature": "586 K", "gruneisen": 1.06},
                                      {"polarization": "transverse", "sound_velocity": "5860 m/s",
                                       "debye_temperature": "240 K", "gruneisen": 0.56,
                                       "dispersion": "sine"}]},
            "scattering": {"boundary": {"grain_size": "1 um"}, "dislocation": DISLOCATION}}
    model = config_from_dict(data).model
    nu = float(model.value("scattering.dislocation.poisson_ratio"))
    ratio = 8480 / 5860

    def extra(w, q, vg, br):
        strain = 0.6 * (4e-10) ** 2 * 1e15 * br["gamma"] ** 2 * float(strain_factor(nu, ratio))
        core = 1e15 * VOLUME ** (4 / 3) / br["v"] ** 2
        return vg * (strain * q + core * br["v"] ** 2 * q**3)

    branches = [dict(count=1, theta=586.0, v=8480.0, gamma=1.06, pol="longitudinal"),
                dict(count=2, theta=240.0, v=5860.0, gamma=0.56, pol="transverse", disp="sine",
                     nu_zb=sc.k * 240.0 / sc.h)]
    ref = reference_kappa_q(T, MASS, VOLUME, branches, umklapp={}, boundary={"L": 1e-6},
                            extra=extra)
    assert conductivity(model, [T])[0] == pytest.approx(ref, rel=RTOL_QUADRATURE)


# --- rough boundaries ---------------------------------------------------------------------------


def test_ziman_specularity():
    # p = exp(−16π³η²/λ²) (Ziman, Electrons and Phonons (1960)), λ = 2π/q
    eta, lam = 1e-9, 10e-9
    assert float(rough_specularity(2 * math.pi / lam, eta)) == pytest.approx(
        math.exp(-16 * math.pi**3 * eta**2 / lam**2), rel=1e-14)


@pytest.mark.parametrize("p0", [0.0, 0.3])
def test_rough_boundary_limits(p0):
    omega = np.geomspace(1e11, 1e14, 7)
    grey_model = _model(boundary={"grain_size": "100 nm", "specularity": p0})
    grey, _, _ = _rates(grey_model, "boundary", omega)
    # η → ∞: p → p₀, the grey boundary v(1−p₀)/((1+p₀)L) (p₀ = 0: the diffuse Casimir limit)
    rough, _, _ = _rates(_model(boundary={"grain_size": "100 nm", "specularity": p0,
                                          "roughness": "1 mm"}), "boundary", omega)
    np.testing.assert_allclose(rough, grey, rtol=1e-12)
    assert grey[0] == pytest.approx(V * (1 - p0) / ((1 + p0) * 100e-9), rel=1e-12)
    # η → 0 at finite ω: p → 1, no boundary scattering (rate ∝ η²)
    smooth, mech, ctx = _rates(_model(boundary={"grain_size": "100 nm", "specularity": p0,
                                                "roughness": "1e-16 m"}), "boundary", omega)
    assert np.all(smooth < 1e-9 * grey)
    # long waves: an ω² rate 2π(1−p₀)η²ω²/(vL)
    eta = 1e-16
    np.testing.assert_allclose(smooth, 2 * math.pi * (1 - p0) * eta**2 * omega**2 / (V * 100e-9),
                               rtol=1e-6)
    assert float(mech.low_frequency(ctx)[2][0]) == pytest.approx(
        2 * math.pi * (1 - p0) * eta**2 / (V * 100e-9), rel=1e-12)


def test_rough_boundary_kappa_lies_between_none_and_grey():
    T = [10.0, 100.0, 300.0]
    none = conductivity(_model(point_defect={"mass_variance": 1e-3}).without("boundary"), T)
    grey = conductivity(_model(boundary={"grain_size": "50 nm"},
                               point_defect={"mass_variance": 1e-3}), T)
    rough = conductivity(_model(boundary={"grain_size": "50 nm", "roughness": "0.3 nm"},
                                point_defect={"mass_variance": 1e-3}), T)
    assert np.all(grey < rough) and np.all(rough < none)


@pytest.mark.parametrize("T", [5.0, 300.0])
def test_rough_boundary_against_adaptive_quadrature(T):
    model = _model(boundary={"grain_size": "200 nm", "roughness": "0.5 nm", "specularity": 0.1},
                   point_defect={"mass_variance": 1e-3})
    ref = reference_kappa_q(T, MASS, VOLUME, AVG_BRANCH, umklapp={},
                            boundary={"L": 200e-9, "eta": 0.5e-9, "p": 0.1},
                            point_defect={"gamma_m": 1e-3})
    assert conductivity(model, [T])[0] == pytest.approx(ref, rel=RTOL_QUADRATURE)


def test_roughness_with_a_wrong_unit_names_the_key():
    with pytest.raises(ConfigError, match=r"scattering\.boundary\.roughness.*wrong dimension"):
        _model(boundary={"grain_size": "100 nm", "roughness": "0.3 K"})


# --- higher-order anharmonicity ---------------------------------------------------------------


def test_four_phonon_rate_grows_as_t_squared():
    model = _model(four_phonon={"scale": 0.2})
    omega = np.array([1e13])
    r300, _, _ = _rates(model, "four_phonon", omega, 300.0)
    r600, _, _ = _rates(model, "four_phonon", omega, 600.0)
    expected = 0.2 * sc.hbar * GAMMA**2 * omega**2 * 300.0**2 / (MASS * V**2 * THETA**2)
    np.testing.assert_allclose(r300, expected, rtol=1e-12)
    assert r600[0] / r300[0] == pytest.approx(4.0, rel=1e-12)
    # it lowers κ far more at high temperature than at low
    k = conductivity(model, [50.0, 900.0])
    k0 = conductivity(model.without("four_phonon"), [50.0, 900.0])
    assert k[1] / k0[1] < 0.95 and k[0] / k0[0] - k[1] / k0[1] > 0.03


def test_spectrum_rates_include_the_new_mechanisms():
    model = _model(precipitate=PRECIPITATE, boundary={"grain_size": "1 um", "roughness": "1 nm"},
                   dislocation=dict(DISLOCATION, poisson_ratio=0.25), four_phonon={"scale": 0.1})
    state = branch_states(model, 300.0)[0]
    rates = state.mechanism_rates(np.array([0.1, 1.0, 2.0]))
    for key in ("precipitate", "boundary", "dislocation", "four_phonon"):
        assert key in rates and np.all(np.isfinite(rates[key])) and np.all(rates[key] > 0)
