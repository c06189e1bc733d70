"""κ_L of the kernels against independent adaptive quadrature and closed-form limits."""

import math

import numpy as np
import pytest
from scipy import constants as sc
from scipy.integrate import quad

from kappa.core.evaluator import lattice_conductivity
from kappa.core.material import Branch, Material
from kappa.core.mechanisms import Boundary, Normal, PointDefect, Umklapp
from kappa.core.scattering import Scattering
from kappa.errors import ConfigError

from .reference import reference_kappa

RTOL_QUADRATURE = 1e-6  # DESIGN §5: within 1e-6 relative of adaptive quadrature
U = sc.atomic_mass

# An averaged silicon-like material and a per-branch one (values only set the scales).
AVG = dict(mass=28.0855 * U, volume=20.02e-30,
           branches=[dict(count=3, theta=645.0, v=6084.0, gamma=0.9, pol="average")])
PER = dict(mass=28.0855 * U, volume=20.02e-30,
           branches=[dict(count=1, theta=586.0, v=8480.0, gamma=1.06, pol="longitudinal"),
                     dict(count=2, theta=240.0, v=5860.0, gamma=0.56, pol="transverse")])


def _material(spec):
    return Material(spec["mass"], spec["volume"], tuple(
        Branch(b["theta"], b["v"], b["gamma"], b["count"], b["pol"]) for b in spec["branches"]))


def _scattering(u=None, b=None, pd=None, n=None):
    mechs = []
    mechs.append(Umklapp(u.get("scale", 1.0), u.get("b", 3.0)) if u is not None
                 else Umklapp(scale=0.0))
    if b:
        mechs.append(Boundary(b["L"], b.get("p", 0.0)))
    if pd:
        mechs.append(PointDefect(pd.get("gamma_m", 0.0), pd.get("gamma_s", 0.0)))
    if n:
        mechs.append(Normal(ratio=n.get("ratio", 0.0), form=n.get("form", "ratio"),
                            scale=n.get("scale", 1.0)))
    return Scattering(tuple(mechs))


CASES = {
    # name: (material, umklapp, boundary, point_defect, normal)
    "umklapp+boundary": (AVG, {}, {"L": 1e-3}, None, None),
    "boundary-dominated": (AVG, {}, {"L": 20e-9, "p": 0.3}, None, None),
    "point-defect-dominated": (AVG, {}, {"L": 1e-6}, {"gamma_m": 0.5, "gamma_s": 0.2}, None),
    "all-resistive": (AVG, {"scale": 2.0, "b": 2.5}, {"L": 1e-4}, {"gamma_m": 2e-4}, None),
    "umklapp+point-defect, no boundary": (AVG, {}, None, {"gamma_m": 1e-2}, None),
    "normal ratio": (AVG, {}, {"L": 1e-5}, {"gamma_m": 1e-3}, {"ratio": 2.0}),
    "per-branch resistive": (PER, {}, {"L": 5e-3}, {"gamma_m": 2.01e-4}, None),
    "per-branch normal forms": (PER, {}, {"L": 5e-3}, {"gamma_m": 2.01e-4},
                                {"form": "branch", "scale": 1.0}),
    "per-branch normal ratio, small grains": (PER, {}, {"L": 50e-9}, {"gamma_m": 0.05},
                                              {"ratio": 0.7}),
}


@pytest.mark.parametrize("name", list(CASES))
@pytest.mark.parametrize("T_over_theta", [1 / 645, 0.01, 0.05, 0.2, 0.5, 1.0, 3.0])
def test_kernel_matches_adaptive_quadrature(name, T_over_theta):
    spec, u, b, pd, n = CASES[name]
    T = T_over_theta * 645.0  # 1 K ... 3θ
    if b is None and T < 645.0 / 30:
        pytest.skip("no boundary scattering: κ_L grows without bound at low T")
    ours = lattice_conductivity(_material(spec), _scattering(u, b, pd, n), [T])[0]
    ref = reference_kappa(T, spec["mass"], spec["volume"], spec["branches"],
                          umklapp=u if u is not None else None, boundary=b, point_defect=pd,
                          normal=n)
    assert ours == pytest.approx(ref, rel=RTOL_QUADRATURE)


@pytest.mark.parametrize("T", [0.5, 1.0, 2.0])
def test_casimir_limit_single_branch(T):
    # Boundary-only Debye conductivity at T ≪ θ: κ = (2π²/15) k_B⁴T³L/(ħ³v²)
    # (closed form; tests/reference_values.py "Boundary-limited (Casimir) Debye conductivity", D).
    L, v = 2e-3, 6084.0
    m = Material.averaged(28.0855 * U, 20.02e-30, 645.0, v, 1.0)
    ours = lattice_conductivity(m, Scattering((Boundary(L),)), [T])[0]
    expected = 2 * math.pi**2 / 15 * sc.k**4 * T**3 * L / (sc.hbar**3 * v**2)
    assert ours == pytest.approx(expected, rel=1e-4)


def test_casimir_limit_per_branch():
    # Per-branch weights: (2π²/45)(k_B⁴T³L/ħ³) Σ_i v_i⁻² over the three branches (tests/reference_values.py, D)
    T, L = 1.0, 1e-3
    m = _material(PER)
    ours = lattice_conductivity(m, Scattering((Boundary(L),)), [T])[0]
    s = 1 / 8480.0**2 + 2 / 5860.0**2
    expected = 2 * math.pi**2 / 45 * sc.k**4 * T**3 * L / sc.hbar**3 * s
    assert ours == pytest.approx(expected, rel=1e-4)


def test_casimir_T_cubed_law():
    m = _material(AVG)
    k = lattice_conductivity(m, Scattering((Umklapp(), Boundary(1e-3))), [1.0, 2.0, 4.0])
    assert k[1] / k[0] == pytest.approx(8.0, rel=1e-4)
    assert k[2] / k[1] == pytest.approx(8.0, rel=1e-3)


def test_umklapp_only_high_temperature_falls_like_one_over_T():
    # Umklapp only, τ⁻¹ = B ω² T e^(−θ/3T): κ_L = (k_B²θ/(2π²vħB'))·e^(θ/3T)·J(θ/T)/(θ/T) with
    # J(a) = ∫₀^a x²eˣ/(eˣ−1)² dx ≈ a, i.e. κ_L ∝ 1/T at T ≫ θ (DESIGN §6 property).
    # J is evaluated here with scipy quad; the ratio of κ_L at 20θ and 40θ must match.
    m = _material(AVG)
    T = np.array([20 * 645.0, 40 * 645.0])
    k = lattice_conductivity(m, Scattering((Umklapp(),)), T)

    def J(a):
        return quad(lambda x: x * x * math.exp(-x) / (-math.expm1(-x)) ** 2, 0, a,
                    epsabs=0, epsrel=1e-13)[0]

    expected_ratio = (J(1 / 40) * math.exp(1 / 120)) / (J(1 / 20) * math.exp(1 / 60))
    assert expected_ratio == pytest.approx(0.5, rel=0.01)  # the 1/T law itself
    assert k[1] / k[0] == pytest.approx(expected_ratio, rel=1e-6)


def test_diverging_combination_is_an_error():
    m = _material(AVG)
    with pytest.raises(ConfigError, match="diverges"):
        lattice_conductivity(m, Scattering((Umklapp(scale=0.0), PointDefect(0.1))), [300.0])


def test_bad_temperature_is_an_error():
    m = _material(AVG)
    with pytest.raises(ConfigError, match="temperature"):
        lattice_conductivity(m, Scattering((Umklapp(),)), [300.0, -1.0])


def test_specular_boundary_equals_longer_diffuse_boundary():
    # v(1−p)/((1+p)L) is a diffuse boundary of length L(1+p)/(1−p) (DESIGN §2 table)
    m = _material(AVG)
    a = lattice_conductivity(m, Scattering((Umklapp(), Boundary(1e-6, 0.5))), [50.0])
    b = lattice_conductivity(m, Scattering((Umklapp(), Boundary(3e-6, 0.0))), [50.0])
    assert a[0] == pytest.approx(b[0], rel=1e-12)


def test_per_sample_rules_match_shared_rules():
    # Many samples with distinct upper limits take the kernel that builds rules on the fly;
    # it must give the same numbers as the shared-rule kernel (one temperature at a time).
    m = _material(AVG)
    s = _scattering({}, {"L": 1e-6}, {"gamma_m": 1e-3}, {"ratio": 0.5})
    T = np.linspace(3.0, 1900.0, 400)
    batch = lattice_conductivity(m, s, T)
    single = np.array([lattice_conductivity(m, s, [t])[0] for t in T])
    np.testing.assert_allclose(batch, single, rtol=1e-12)


def test_point_defects_without_boundary_far_below_theta():
    # Point defects and Umklapp without boundary scattering at θ/(bT) ≈ 450: the Umklapp
    # coefficient is e^(−450) ≈ 1e-196 of its high-temperature size and the ω²/ω⁴ crossover
    # sits near x ~ 1e-98. The integral is finite: with w(x) ≈ x² there,
    # ∫ x²/(a x² + c x⁴) dx = π/(2√(ac)) (closed form, textbook arctangent integral).
    spec = dict(AVG)
    m = _material(spec)
    T = 645.0 / (3 * 450)
    k = lattice_conductivity(m, Scattering((Umklapp(), PointDefect(1e-3))), [T])[0]
    assert np.isfinite(k) and k > 0
    mass, vol, v = spec["mass"], spec["volume"], 6084.0
    wt = sc.k * T / sc.hbar
    a = sc.hbar * 0.9**2 / (mass * v**2 * 645.0) * T * math.exp(-450.0) * wt**2
    c = vol * 1e-3 / (4 * math.pi * v**3) * wt**4
    pre = sc.k / (2 * math.pi**2 * v) * wt**3
    assert k == pytest.approx(pre * math.pi / (2 * math.sqrt(a * c)), rel=1e-6)


def test_frozen_out_umklapp_without_boundary_is_one_clear_error():
    # θ/(bT) above ~745: e^(−θ/bT) underflows to zero, nothing limits the long waves and the
    # integral diverges; the evaluator says so instead of dividing by zero.
    m = _material(AVG)
    with pytest.raises(ConfigError, match="diverges"):
        lattice_conductivity(m, Scattering((Umklapp(), PointDefect(1e-3))), [0.2])
