"""Branches with a sine (Born–von Kármán) dispersion: limits, heat capacity, accuracy, commands.

Outside values: the q-space reference of tests/reference.py (scipy adaptive quadrature written
from the Callaway solution over the wavevector, sharing no code with kappa's weights); a direct
summation of mode heat capacities over a fine q grid (numpy); the constants of scipy.constants;
the analytic limits of the sine (v_g → 0 and qv/ω → π/2 at the zone boundary).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import constants as sc
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.dispersion import (
    callaway_factors,
    curved_rule,
    sine_debye_function,
    sine_factors,
)
from kappa.core.evaluator import branch_states, conductivity
from kappa.core.heat_capacity import debye_function, heat_capacity
from kappa.errors import ConfigError, KappaWarning
from kappa.io.config import config_from_dict, set_value
from kappa.workflows.spectrum import spectrum

from .reference import reference_kappa_q

U = sc.atomic_mass
RTOL_QUADRATURE = 1e-6  # the accuracy target of the fixed rule against adaptive quadrature
MASS, VOLUME = 28.0855 * U, 20.02e-30
runner = CliRunner()

# A silicon-like per-branch material (values set the scales only; no outside source needed).
BASE = {
    "material": {"name": "sine test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3",
                 "branches": [{"polarization": "longitudinal", "debye_temperature": "586 K",
                               "sound_velocity": "8480 m/s", "gruneisen": 1.06,
                               "dispersion": "sine"},
                              {"polarization": "transverse", "debye_temperature": "240 K",
                               "sound_velocity": "5860 m/s", "gruneisen": 0.56,
                               "dispersion": "sine"}]},
    "scattering": {"boundary": {"grain_size": "5 mm"},
                   "point_defect": {"mass_variance": 2.01e-4},
                   "normal": {"form": "branch"}},
    "temperature": {"values": ["20 K", "100 K", "300 K", "600 K"]},
}


def _ref_branches(nu_t=None, nu_l=None):
    """The BASE branches for the reference (zone boundary at the top unless given)."""
    def nu(theta, given):
        return given if given is not None else sc.k * theta / sc.h
    return [dict(count=1, theta=586.0, v=8480.0, gamma=1.06, pol="longitudinal", disp="sine",
                 nu_zb=nu(586.0, nu_l)),
            dict(count=2, theta=240.0, v=5860.0, gamma=0.56, pol="transverse", disp="sine",
                 nu_zb=nu(240.0, nu_t))]


# --- the shape of the sine ------------------------------------------------------------------


def test_sine_factors_at_both_ends():
    g, p = sine_factors(np.array([0.0, 1e-9, 1.0]))
    np.testing.assert_allclose(g, [1.0, 1.0, 0.0], atol=1e-15)
    np.testing.assert_allclose(p, [1.0, 1.0, math.pi / 2], rtol=1e-15)  # q_zb v/ω_zb = π/2
    f1, f2, f3 = callaway_factors(np.array([0.5]))
    phi = math.pi / 6  # sin φ = 1/2
    assert f1[0] == pytest.approx(math.cos(phi) * (phi / 0.5) ** 2, rel=1e-14)
    assert f2[0] == pytest.approx((phi / 0.5) ** 3, rel=1e-14)
    assert f3[0] == pytest.approx((phi / 0.5) ** 4 / math.cos(phi), rel=1e-14)


def test_rule_without_curvature_is_the_debye_rule():
    x, wq, gp = curved_rule(30.0, math.inf)
    np.testing.assert_allclose(wq[0], wq[1])
    np.testing.assert_allclose(wq[0], wq[2])
    assert np.all(gp == 1.0)
    # ∫₀^∞ x⁴eˣ/(eˣ−1)² dx = 4π⁴/15 (textbook identity), to the rule's accuracy below x = 30
    assert wq[0].sum() == pytest.approx(4 * math.pi**4 / 15, rel=1e-6)


# --- heat capacity --------------------------------------------------------------------------


def _direct_sum(t_over_theta: float, r: float, n: int = 400_000) -> float:
    """C/(N k_B) of one sine branch by summing mode heat capacities over a fine q grid.

    Modes fill a sphere up to q_top evenly (N modes: weight 3q²dq/q_top³); ω(q) =
    ω_zb sin(πq/(2q_zb)) with ω(q_top) = k_Bθ/ħ and ω_zb = k_Bθ/(ħ r). Midpoint rule in q.
    """
    phi_top = math.asin(r)
    u = (np.arange(n) + 0.5) / n  # q/q_top
    x = (1.0 / r) * np.sin(phi_top * u) / t_over_theta  # ħω/(k_BT) = (θ_zb/T) sin(...)
    c = x * x * np.exp(-x) / (-np.expm1(-x)) ** 2
    return float(np.sum(3.0 * u * u * c) / n)


@pytest.mark.parametrize("t_over_theta", [0.02, 0.1, 0.5, 1.0, 3.0])
@pytest.mark.parametrize("r", [1.0, 0.6])
def test_sine_heat_capacity_against_direct_summation(t_over_theta, r):
    ours = sine_debye_function(1.0 / t_over_theta, 1.0 / (t_over_theta * r))
    assert float(ours) == pytest.approx(_direct_sum(t_over_theta, r), rel=1e-7)


def test_sine_heat_capacity_limits():
    # high T: every mode holds k_B (Dulong–Petit); vanishing curvature: the Debye function
    assert float(sine_debye_function(1e-3, 1e-3)) == pytest.approx(1.0, rel=1e-6)
    for x in (0.5, 3.0, 20.0):
        assert float(sine_debye_function(x, x * 1e4)) == pytest.approx(
            float(debye_function(x)[0]), rel=1e-7)
    # the sine puts more modes near the top frequency: less heat capacity below θ than the
    # Debye-linear branch with the same top (the overstatement the sine removes)
    for x in (2.0, 10.0):
        assert float(sine_debye_function(x, x)) < float(debye_function(x)[0])


def test_heat_capacity_of_a_model_with_sine_branches():
    model = config_from_dict(BASE).model
    T = np.array([50.0, 300.0])
    m = model.material
    expected = 3 * sc.R * (1 / 3 * sine_debye_function(586.0 / T, 586.0 / T)
                           + 2 / 3 * sine_debye_function(240.0 / T, 240.0 / T))
    np.testing.assert_allclose(heat_capacity(m, T), expected, rtol=1e-6)


# --- κ against adaptive quadrature over q -----------------------------------------------------


CASES = {
    # name: (scattering section, reference keywords, T zone boundary [Hz] or None)
    "sine, branch normal forms": (BASE["scattering"], dict(
        umklapp={}, boundary={"L": 5e-3}, point_defect={"gamma_m": 2.01e-4},
        normal={"form": "branch"}), None),
    "partly curved, ratio normal, small grains": (
        {"boundary": {"grain_size": "50 nm", "specularity": 0.2},
         "point_defect": {"mass_variance": 2.01e-2}, "normal": {"ratio": 1.5}},
        dict(umklapp={}, boundary={"L": 50e-9, "p": 0.2}, point_defect={"gamma_m": 2.01e-2},
             normal={"ratio": 1.5}), 7e12),
    "rough boundary, four-phonon": (
        {"boundary": {"grain_size": "200 nm", "roughness": "0.5 nm"},
         "point_defect": {"mass_variance": 2.01e-4}, "four_phonon": {"scale": 0.3}},
        dict(umklapp={}, boundary={"L": 200e-9, "eta": 0.5e-9},
             point_defect={"gamma_m": 2.01e-4}, four_phonon=0.3), None),
}


@pytest.mark.parametrize("T", [3.0, 30.0, 150.0, 300.0, 900.0])
@pytest.mark.parametrize("case", list(CASES))
def test_sine_kappa_matches_adaptive_quadrature_over_q(case, T):
    scattering, ref, nu_t = CASES[case]
    data = set_value(BASE, "scattering", scattering)
    if nu_t is not None:
        data = set_value(data, "material.branches.1.zone_boundary_frequency", f"{nu_t} Hz")
    ours = conductivity(config_from_dict(data).model, [T])[0]
    assert ours == pytest.approx(reference_kappa_q(T, MASS, VOLUME, _ref_branches(nu_t), **ref),
                                 rel=RTOL_QUADRATURE)


@pytest.mark.parametrize("r", [0.1, 0.01])
def test_vanishing_curvature_tends_to_the_debye_result(r):
    debye = config_from_dict(set_value(set_value(
        BASE, "material.branches.0.dispersion", "debye"), "material.branches.1.dispersion",
        "debye")).model
    T = [20.0, 300.0, 900.0]
    k_debye = conductivity(debye, T)
    data = BASE
    for i, theta in enumerate((586.0, 240.0)):
        data = set_value(data, f"material.branches.{i}.zone_boundary_frequency",
                         f"{sc.k * theta / (sc.h * r)!r} Hz")
    k_sine = conductivity(config_from_dict(data).model, T)
    # the curvature enters as s² ≤ r² (F = 1 − O(s²)): the gap closes like r²
    assert np.max(np.abs(k_sine / k_debye - 1)) < 2.0 * r * r
    assert np.max(np.abs(k_sine / k_debye - 1)) > 0.01 * r * r


def test_a_batch_of_zone_boundary_frequencies_equals_single_models():
    model = config_from_dict(BASE).model
    key = "material.branches.1.zone_boundary_frequency"
    nus = np.array([5.1e12, 6.0e12, 9.0e12])
    batch = conductivity(model.with_values({key: nus}), [30.0, 300.0])
    for i, nu in enumerate(nus):
        np.testing.assert_allclose(batch[i], conductivity(model.with_values({key: nu}),
                                                          [30.0, 300.0]), rtol=1e-12)


# --- the keys and bad input -------------------------------------------------------------------


def test_zone_boundary_and_debye_temperature_are_derived_from_each_other():
    model = config_from_dict(BASE).model
    b = model.material.branches[1]
    assert b.zone_boundary_frequency == pytest.approx(sc.k * 240.0 / sc.h, rel=1e-12)
    assert any(d.key == "material.branches.1.zone_boundary_frequency" for d in model.derived)
    data = set_value(BASE, "material.branches.1",
                     {"polarization": "transverse", "sound_velocity": "5860 m/s",
                      "gruneisen": 0.56, "dispersion": "sine",
                      "zone_boundary_frequency": "4.5 THz"})
    b = config_from_dict(data).model.material.branches[1]
    assert b.debye_temperature == pytest.approx(sc.h * 4.5e12 / sc.k, rel=1e-12)
    # neither: the zone boundary at the Debye wavevector, ω_zb = 2 v q_D/π
    data = set_value(BASE, "material.branches.1",
                     {"polarization": "transverse", "sound_velocity": "5860 m/s",
                      "gruneisen": 0.56, "dispersion": "sine"})
    b = config_from_dict(data).model.material.branches[1]
    q_d = (6 * math.pi**2 / VOLUME) ** (1 / 3)
    assert 2 * math.pi * b.zone_boundary_frequency == pytest.approx(2 * 5860 * q_d / math.pi,
                                                                    rel=1e-12)


def test_zone_boundary_below_the_branch_top_is_an_error():
    data = set_value(BASE, "material.branches.1.zone_boundary_frequency", "4 THz")
    with pytest.raises(ConfigError, match=r"material\.branches\.1\.zone_boundary_frequency = "
                       r"4 THz: must be at least k_Bθ/h = 5\.00\d* THz"):
        config_from_dict(data)
    model = config_from_dict(BASE).model
    with pytest.raises(ConfigError, match="zone_boundary_frequency"):
        model.with_values({"material.branches.1.zone_boundary_frequency": 4e12})


@pytest.mark.parametrize(("key", "value", "message"), [
    ("material.branches.0.dispersion", "cubic", "allowed: debye, sine"),
    ("material.branches.0.zone_boundary_frequency", "5 K", "wrong dimension"),
])
def test_bad_dispersion_keys(key, value, message):
    with pytest.raises(ConfigError, match=message):
        config_from_dict(set_value(BASE, key, value))


def test_zone_boundary_on_a_debye_branch_is_an_error():
    data = set_value(set_value(BASE, "material.branches.0.dispersion", "debye"),
                     "material.branches.0.zone_boundary_frequency", "13 THz")
    with pytest.raises(ConfigError, match="only a sine branch has one"):
        config_from_dict(data)
    model = config_from_dict(set_value(BASE, "material.branches.0.dispersion", "debye")).model
    with pytest.raises(ConfigError, match="only a sine branch has a zone-boundary frequency"):
        model.with_values({"material.branches.0.zone_boundary_frequency": 13e12})


def test_inconsistent_sine_is_one_line_exit_2_and_nothing_written(tmp_path):
    import yaml

    cfg = tmp_path / "bad.yaml"
    cfg.write_text(yaml.safe_dump(set_value(
        BASE, "material.branches.1.zone_boundary_frequency", "4 THz")), encoding="utf-8")
    out = tmp_path / "out"
    r = runner.invoke(app, ["predict", str(cfg), "-o", str(out)])
    assert r.exit_code == 2
    lines = [line for line in r.output.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: material.branches.1."
                                                   "zone_boundary_frequency")
    assert not out.exists()


# --- every command on a sine branch -------------------------------------------------------------


def test_spectrum_of_sine_branches_closes_on_kappa():
    model = config_from_dict(BASE).model
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", KappaWarning)
        sp = spectrum(model, [600.0])
    np.testing.assert_allclose(sp.kappa_L, conductivity(model, [600.0]), rtol=1e-12)
    np.testing.assert_allclose(sp.cumulative[:, :, -1].sum(axis=1), sp.kappa_L, rtol=1e-9)
    np.testing.assert_allclose([c[-1] for c in sp.mfp_cumulative], sp.kappa_L, rtol=1e-6)
    assert np.all(np.isfinite(sp.mfp)) and np.all(sp.mfp > 0)
    # the spectral parts add up to the branch's κ (trapezoid over ν; the last point is the
    # zone boundary, where v_g = 0 but the mean free path stays finite)
    for t in range(1):
        for j in range(2):
            total = np.trapezoid(np.concatenate([[0.0], sp.spectral[t, j]]),
                                 np.concatenate([[0.0], sp.frequency[t, j]]))
            assert total == pytest.approx(sp.branch_kappa[t, j], rel=2e-3)


def test_group_velocity_vanishes_at_the_zone_boundary():
    state = branch_states(config_from_dict(BASE).model, 300.0)[1]
    g, p = state.factors([state.x_top])
    assert g[0] == pytest.approx(0.0, abs=1e-7) and p[0] == pytest.approx(math.pi / 2)
    assert state.mean_free_path([state.x_top], 0.0)[0] == pytest.approx(0.0, abs=1e-12)


def test_sine_branch_in_every_command(tmp_path):
    import yaml

    # one sine branch, no normal processes: the plumbing of every command (the physics of the
    # spectrum is checked above)
    base = set_value(set_value(BASE, "material.branches.0.dispersion", "debye"),
                     "scattering", {"boundary": {"grain_size": "5 mm"},
                                    "point_defect": {"mass_variance": 2.01e-4}})
    cfg = tmp_path / "sine.yaml"
    cfg.write_text(yaml.safe_dump(base), encoding="utf-8")
    data = tmp_path / "k.csv"
    T = np.array([50.0, 100.0, 200.0, 300.0, 500.0])
    truth = conductivity(config_from_dict(base).model.with_values(
        {"material.branches.1.gruneisen": 0.7}), T)
    data.write_text("T [K],kappa_L [W/(m K)]\n" + "".join(
        f"{t},{float(k)!r}\n" for t, k in zip(T, truth, strict=True)), encoding="utf-8")
    commands = {
        "check": ["check", str(cfg)],
        "predict": ["predict", str(cfg), "-o", str(tmp_path / "p")],
        "fit": ["fit", str(cfg), str(data), "--free", "material.branches.1.gruneisen",
                "-o", str(tmp_path / "f")],
        "sweep": ["sweep", str(cfg), "--vary",
                  "material.branches.1.zone_boundary_frequency=5.1THz:8THz:3",
                  "--at", "300K", "-o", str(tmp_path / "s")],
        "spectrum": ["spectrum", str(cfg), "--at", "300K", "-o", str(tmp_path / "sp")],
    }
    for name, args in commands.items():
        r = runner.invoke(app, args)
        assert r.exit_code == 0, (name, r.output)
    assert "zone_boundary_frequency = 5.00" in runner.invoke(app, commands["check"]).output
    fitted = config_from_dict(yaml.safe_load((tmp_path / "f" / "fitted.yaml").read_text()))
    assert fitted.model.value("material.branches.1.gruneisen") == pytest.approx(0.7, rel=1e-5)
    assert fitted.model.material.branches[1].dispersion == "sine"


def test_rules_made_together_are_the_rules_made_one_by_one():
    """curved_rules builds new rules in batches (spectra need one per interval end): the same
    nodes, weights and factors to the last bit as curved_rule, for both kinds of rule."""
    from kappa.core import dispersion

    rng = np.random.default_rng(7)
    zb = np.concatenate([rng.uniform(0.3, 60.0, 150), np.full(50, np.inf), np.full(50, 2.4)])
    top = np.where(np.isfinite(zb), zb * rng.uniform(0.01, 1.0, zb.size),
                   rng.uniform(0.01, 50.0, zb.size))
    dispersion._CACHE.clear()
    xx, wq, gp, count, _ = dispersion.curved_rules(top, zb)
    dispersion._CACHE.clear()
    for i in range(top.size):
        t = min(float(top[i]), 40.0)
        x, w, f = dispersion.curved_rule(t, max(float(zb[i]), t))
        m = x.size
        assert count[i] == m
        assert np.array_equal(xx[i, :m], x) and np.all(xx[i, m:] == 1.0)
        assert np.array_equal(wq[i, :, :m], w) and np.all(wq[i, :, m:] == 0.0)
        assert np.array_equal(gp[i, :, :m], f) and np.all(gp[i, :, m:] == 1.0)
