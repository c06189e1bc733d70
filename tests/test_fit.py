"""The fit workflow: recovery, uncertainties, warnings, series, bands, bad input."""

import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from kappa.core.evaluator import conductivity
from kappa.errors import ConfigError, DataError, KappaWarning
from kappa.io.config import config_from_dict, load_config
from kappa.io.fitfiles import fit_record, parse_free
from kappa.workflows.fitting import (
    Covariance,
    SeriesSample,
    fit,
    fit_data,
    fit_series,
    prediction_band,
)

CONFIGS = Path(__file__).resolve().parents[1] / "configs"

# exact SI constants (2019 SI) for the independent Casimir formula below
K_B = 1.380649e-23
HBAR = 6.62607015e-34 / (2 * math.pi)

# An averaged silicon-like model (Γ of natural Si: tests/reference_values.py).
SI_LIKE = {
    "material": {"name": "si-like", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.8},
    "scattering": {"boundary": {"grain_size": "1 um"},
                   "point_defect": {"mass_variance": 2.01e-4}},
}
# Parameters the synthetic data are made with (chosen by this test, no outside source).
TRUE = {"material.gruneisen": 1.1, "scattering.boundary.grain_size": 3e-6}
T_DATA = np.geomspace(20.0, 800.0, 30)


def _quiet(func, *args, **kwargs):
    """Call ``func`` and return (result, warning messages)."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", KappaWarning)
        result = func(*args, **kwargs)
    return result, [str(w.message) for w in caught if issubclass(w.category, KappaWarning)]


def _synthetic(noise, seed, true=TRUE, T=T_DATA, base=SI_LIKE):
    cfg = config_from_dict(base).model
    truth = cfg.with_values(true)
    k = conductivity(truth, T)
    rng = np.random.default_rng(seed)
    return cfg, k * (1.0 + noise * rng.standard_normal(T.size)), k


def test_batched_model_matches_single_models():
    # a batch of parameter sets (arrays) gives the numbers of each set alone
    cfg = config_from_dict(SI_LIKE).model
    gammas = np.array([0.8, 1.7, 2.4])
    batch = cfg.with_values({"material.gruneisen": gammas})
    k = conductivity(batch, T_DATA)
    for i, g in enumerate(gammas):
        np.testing.assert_allclose(k[i], conductivity(cfg.with_values({"material.gruneisen": g}),
                                                      T_DATA), rtol=1e-12)


def test_recovers_known_parameters_within_reported_errors():
    cfg, k, k_true = _synthetic(0.03, seed=11)
    res, msgs = _quiet(fit, cfg, fit_data(T_DATA, k, 0.03 * k_true),
                       ["material.gruneisen", "scattering.boundary.grain_size"])
    assert res.weighted and res.n_free == 2 and res.dof == 28
    for key, true in TRUE.items():
        p = res.parameter(key)
        assert abs(p.value - true) < 3.0 * p.stderr, (key, p.value, p.stderr)
        assert p.low68 < p.value < p.high68
        assert p.at_bound == ""
    assert 0.4 < res.chi2_red < 2.0  # Gaussian noise of the stated size: chi2_red near 1
    assert res.converged >= 1 and res.starts == 5
    assert not any("correlated" in m for m in msgs)


def test_uncertainty_shrinks_with_less_noise():
    errs = []
    for noise in (0.03, 0.003):
        cfg, k, k_true = _synthetic(noise, seed=5)
        res, _ = _quiet(fit, cfg, fit_data(T_DATA, k, noise * k_true),
                        ["material.gruneisen", "scattering.boundary.grain_size"])
        errs.append(res.parameter("material.gruneisen").stderr)
        assert abs(res.value("material.gruneisen") - 1.1) < 3 * errs[-1]
    assert errs[1] < errs[0] / 5.0  # σ ∝ noise for a least-squares estimate: 10× less noise


def test_unweighted_fit_scales_errors_by_the_scatter():
    cfg, k, _ = _synthetic(0.04, seed=3)
    res, _ = _quiet(fit, cfg, fit_data(T_DATA, k), ["material.gruneisen",
                                                    "scattering.boundary.grain_size"])
    assert not res.weighted and res.chi2_red is None
    assert "residual scatter" in res.weighting
    assert 0.025 < res.scatter < 0.06  # rms relative residual ≈ the 4 % noise put in
    for key, true in TRUE.items():
        p = res.parameter(key)
        assert abs(p.value - true) < 3.0 * p.stderr


def _casimir(T, L, v):
    """Boundary-limited Debye conductivity at T ≪ θ: (2π²/15) k_B⁴ T³ L/(ħ³ v²).

    Source: closed form of the Debye model in the boundary limit (tests/reference_values.py,
    derived), written here independently of kappa's kernels.
    """
    return 2 * math.pi**2 / 15 * K_B**4 * T**3 * L / (HBAR**3 * v**2)


CASIMIR_MODEL = {
    "material": {"atomic_mass": "28.0855 u", "atomic_volume": "20.02 angstrom**3",
                 "debye_temperature": "645 K", "sound_velocity": "6084 m/s", "gruneisen": 1.0},
    "scattering": {"umklapp": False, "boundary": {"grain_size": "0.5 mm"}},
}


def test_one_parameter_fit_matches_closed_form_least_squares():
    """κ ∝ L in the Casimir limit, so the weighted fit has a closed form.

    L̂ = Σ(c_i κ_i/σ_i²)/Σ(c_i²/σ_i²), σ_L = 1/√Σ(c_i²/σ_i²) (linear least squares, common
    practice, no source); the unweighted log fit: ln L̂ = mean(ln κ_i − ln c_i), σ_u = s/√n.
    """
    T = np.linspace(1.0, 3.0, 9)
    c = _casimir(T, 1.0, 6084.0)
    rng = np.random.default_rng(42)
    kappa = c * 2e-3 * (1 + 0.05 * rng.standard_normal(T.size))
    sigma = 0.05 * c * 2e-3
    cfg = config_from_dict(CASIMIR_MODEL).model
    res, _ = _quiet(fit, cfg, fit_data(T, kappa, sigma), ["scattering.boundary.grain_size"],
                    checks=False)
    L_hat = np.sum(c * kappa / sigma**2) / np.sum(c**2 / sigma**2)
    s_L = 1.0 / math.sqrt(np.sum(c**2 / sigma**2))
    p = res.parameter("scattering.boundary.grain_size")
    assert p.value == pytest.approx(L_hat, rel=1e-5)
    assert p.stderr == pytest.approx(s_L, rel=1e-3)
    chi2 = float(np.sum(((c * L_hat - kappa) / sigma) ** 2))
    assert res.chi2 == pytest.approx(chi2, rel=1e-4)
    assert res.aic == pytest.approx(chi2 + 2, rel=1e-4)  # AIC = χ² + 2k
    assert res.bic == pytest.approx(chi2 + math.log(T.size), rel=1e-4)  # BIC = χ² + k ln n

    res, _ = _quiet(fit, cfg, fit_data(T, kappa), ["scattering.boundary.grain_size"],
                    checks=False)
    d = np.log(kappa) - np.log(c)
    s = math.sqrt(np.sum((d - d.mean()) ** 2) / (T.size - 1))
    p = res.parameter("scattering.boundary.grain_size")
    assert p.value == pytest.approx(math.exp(d.mean()), rel=1e-5)
    assert p.high68 == pytest.approx(math.exp(d.mean() + s / math.sqrt(T.size)), rel=1e-3)
    rss = float(np.sum((d - d.mean()) ** 2))
    assert res.aic == pytest.approx(T.size * math.log(rss / T.size) + 2, rel=1e-4)


def test_degenerate_pair_is_flagged():
    # Averaged model without normal processes: the Umklapp rate depends on s_U·γ² only
    # (DESIGN §2 rate formula), so γ and s_U cannot both be determined.
    cfg, k, k_true = _synthetic(0.02, seed=8, true={"material.gruneisen": 1.1})
    res, msgs = _quiet(fit, cfg, fit_data(T_DATA, k, 0.02 * k_true),
                       ["material.gruneisen", "scattering.umklapp.scale"])
    assert any("not separately determined" in m for m in msgs)
    i = [p.key for p in res.parameters]
    r = res.correlation[i.index("material.gruneisen"), i.index("scattering.umklapp.scale")]
    assert abs(r) > 0.99
    assert any("BIC" in w for w in res.warnings)
    # the product that is determined is still right: s_U·γ² = 1.1² (true s_U = 1)
    product = res.value("scattering.umklapp.scale") * res.value("material.gruneisen") ** 2
    assert product == pytest.approx(1.21, rel=0.05)


def test_bound_hit_is_reported():
    cfg, k, k_true = _synthetic(0.02, seed=2)
    res, msgs = _quiet(fit, cfg, fit_data(T_DATA, k, 0.02 * k_true), ["material.gruneisen"],
                       bounds={"material.gruneisen": (0.5, 0.9)})
    assert any("at its upper bound" in m for m in msgs)
    assert res.parameter("material.gruneisen").at_bound == "upper"
    assert res.value("material.gruneisen") == pytest.approx(0.9, rel=1e-6)


def test_unneeded_parameter_and_far_boundary_warn():
    # High-temperature data of a coarse-grained sample: the boundary term hardly matters,
    # so freeing the grain size is not supported by BIC.
    T = np.linspace(300.0, 800.0, 12)
    coarse = {**SI_LIKE, "scattering": {**SI_LIKE["scattering"],
                                        "boundary": {"grain_size": "0.5 mm"}}}
    cfg, k, k_true = _synthetic(0.01, seed=4, true={"material.gruneisen": 1.1,
                                                     "scattering.boundary.grain_size": 1e-3},
                                T=T, base=coarse)
    res, msgs = _quiet(fit, cfg, fit_data(T, k, 0.01 * k_true),
                       ["material.gruneisen", "scattering.boundary.grain_size"])
    assert res.delta_bic["scattering.boundary.grain_size"] < 2.0
    assert any("freeing scattering.boundary.grain_size" in m and "BIC" in m for m in msgs)
    assert res.delta_bic["material.gruneisen"] > 10.0
    # a boundary length fitted far from the 1 um written in the config is pointed out
    cfg, k, k_true = _synthetic(0.01, seed=4, true={"material.gruneisen": 1.1,
                                                     "scattering.boundary.grain_size": 40e-6})
    res, msgs = _quiet(fit, cfg, fit_data(T_DATA, k, 0.01 * k_true),
                       ["material.gruneisen", "scattering.boundary.grain_size"])
    assert any("× the grain size in the model" in m for m in msgs)


def test_high_temperature_upturn_is_flagged():
    cfg, k, k_true = _synthetic(0.01, seed=6)
    # an invented activated extra term: +23 % at 800 K, +7 % at 600 K
    bump = k_true * 10.0 * np.exp(-3000.0 / T_DATA)
    data = fit_data(T_DATA, k + bump, 0.01 * (k_true + bump))
    _, msgs = _quiet(fit, cfg, data, ["material.gruneisen", "scattering.boundary.grain_size"])
    assert any("possible bipolar part" in m for m in msgs)
    _, msgs = _quiet(fit, cfg, fit_data(T_DATA, k, 0.01 * k_true), ["material.gruneisen"])
    assert not any("bipolar" in m for m in msgs)


def test_same_seed_same_result_and_multistart_count():
    cfg, k, k_true = _synthetic(0.03, seed=1)
    data = fit_data(T_DATA, k, 0.03 * k_true)
    a, _ = _quiet(fit, cfg, data, ["material.gruneisen"], starts=4, seed=9, checks=False)
    b, _ = _quiet(fit, cfg, data, ["material.gruneisen"], starts=4, seed=9, checks=False)
    assert a.value("material.gruneisen") == b.value("material.gruneisen")
    assert a.starts == 4 and 1 <= a.converged <= 4


def test_series_shared_and_per_sample_parameters():
    base = config_from_dict(SI_LIKE).model
    grains = {"A": 2e-6, "B": 200e-9}
    samples = []
    rng = np.random.default_rng(12)
    for name, L in grains.items():
        truth = base.with_values({"material.gruneisen": 1.1,
                                  "scattering.boundary.grain_size": L})
        k = conductivity(truth, T_DATA)
        noisy = k * (1 + 0.02 * rng.standard_normal(T_DATA.size))
        samples.append(SeriesSample(name, base, fit_data(T_DATA, noisy, 0.02 * k, name=name)))
    res, _ = _quiet(fit_series, samples, shared=["material.gruneisen"],
                    per_sample=["scattering.boundary.grain_size"])
    assert res.n_free == 3 and res.n_points == 2 * T_DATA.size
    g = res.parameter("material.gruneisen")
    assert abs(g.value - 1.1) < 3 * g.stderr
    for name, L in grains.items():
        p = res.parameter("scattering.boundary.grain_size", name)
        assert abs(p.value - L) < 3 * p.stderr
        sample = next(s for s in res.samples if s.name == name)
        assert sample.model.value("scattering.boundary.grain_size") == p.value
        assert sample.model.value("material.gruneisen") == g.value
    rec = fit_record(res, "B")
    assert [p["key"] for p in rec["parameters"]] == ["material.gruneisen",
                                                    "scattering.boundary.grain_size"]


def test_prediction_band_matches_the_covariance():
    # Casimir limit: κ ∝ L, so the 68 % band of κ is κ·exp(±σ_u) (σ_u of ln L).
    T = np.linspace(1.0, 3.0, 9)
    c = _casimir(T, 1.0, 6084.0)
    rng = np.random.default_rng(7)
    kappa = c * 2e-3 * (1 + 0.05 * rng.standard_normal(T.size))
    cfg = config_from_dict(CASIMIR_MODEL).model
    res, _ = _quiet(fit, cfg, fit_data(T, kappa, 0.05 * kappa), ["scattering.boundary.grain_size"],
                    checks=False)
    band = prediction_band(res.model, Covariance.from_result(res), T, draws=2000, seed=3)
    s_u = math.sqrt(res.covariance[0, 0])
    np.testing.assert_allclose(band.kappa_L, conductivity(res.model, T), rtol=1e-12)
    np.testing.assert_allclose(band.low / band.kappa_L, math.exp(-s_u), rtol=0.01)
    np.testing.assert_allclose(band.high / band.kappa_L, math.exp(s_u), rtol=0.01)


def test_per_branch_silicon_fit_reproduces_measured_conductivity():
    """Natural silicon: Glassbrenner & Slack, Phys. Rev. 134, A1058 (1964).

    300 K: 148–156 W/(m K) (P, midpoint 152 used); 100 K ≈ 880–950 (M, 915 used);
    200 K ≈ 260–270 (M, 265); 400 K ≈ 100 (M); 600 K ≈ 62 (M) — as listed in tests/reference_values.py.
    The all-Debye per-branch model of kappa 0.1.0's silicon config (tests/data; Morelli,
    Heremans & Slack, PRB 66, 195304 (2002) branch parameters, natural-isotope Γ = 2.01e-4,
    normal processes in the branch forms) with γ_L, γ_T and the normal-process scale free
    reproduces the five points within 10 % (the M values themselves carry ≥ 10 % tolerance);
    the Grüneisen parameters must come out physically plausible (0.3–3, common practice, no
    source), and the fit must say that five points do not separate them. (The current
    configs/silicon.yaml, with sine transverse branches, is checked in tests/test_silicon.py.)
    """
    cfg = load_config(CONFIGS.parent / "tests" / "data" / "silicon-0.1.0.yaml").model
    T = np.array([100.0, 200.0, 300.0, 400.0, 600.0])
    measured = np.array([915.0, 265.0, 152.0, 100.0, 62.0])
    free = ["material.branches.0.gruneisen", "material.branches.1.gruneisen",
            "scattering.normal.scale"]
    res, msgs = _quiet(fit, cfg, fit_data(T, measured), free, starts=3)
    fitted = conductivity(res.model, T)
    np.testing.assert_allclose(fitted, measured, rtol=0.10)
    for key in free[:2]:
        assert 0.3 <= res.value(key) <= 3.0
    # five points do not separate γ_L from γ_T: the fit says so
    assert any("not separately determined" in m for m in msgs)


# --- bad input -----------------------------------------------------------------------------


def test_bad_data_is_rejected_with_the_column_named():
    with pytest.raises(DataError, match="strictly increasing"):
        fit_data([100.0, 300.0, 200.0], [10.0, 5.0, 6.0])
    with pytest.raises(DataError, match=r"kappa_L.*<= 0 at 300 K.*window"):
        fit_data([100.0, 200.0, 300.0], [10.0, 5.0, -1.0])
    with pytest.raises(DataError, match="NaN"):
        fit_data([100.0, 200.0, 300.0], [10.0, np.nan, 4.0])
    d = fit_data([100.0, 200.0, 300.0], [10.0, np.nan, 4.0], nan="omit")
    assert d.size == 2 and d.dropped
    d = fit_data([100.0, 200.0, 300.0], [10.0, 5.0, -1.0], window=(50.0, 250.0))
    assert d.size == 2
    with pytest.raises(DataError, match="uncertainties must be > 0"):
        fit_data([100.0, 200.0], [10.0, 5.0], [1.0, 0.0])


def test_too_few_points_for_the_free_parameters():
    cfg = config_from_dict(SI_LIKE).model
    data = fit_data(T_DATA, np.ones(T_DATA.size), window=(100.0, 130.0))
    with pytest.raises(DataError, match=r"window = 2 points: 2 in data \(window 100 K:130 K\)"
                       r".*needs at least 4 points"):
        fit(cfg, data, ["material.gruneisen", "scattering.boundary.grain_size"])


@pytest.mark.parametrize("free, bounds, message", [
    (["material.grunesen"], None, "did you mean 'gruneisen'"),
    (["scattering.normal.form"], None, "scattering.normal.form: not a numeric key"),
    (["material.branches.0.gruneisen"], None, "averaged-branch model"),
    (["scattering.normal.ratio"], None, "scattering.normal is not in the model"),
    (["material.gruneisen"], {"material.gruneisen": (1.5, 2.0)}, "must contain the start value"),
    (["material.gruneisen"], {"material.gruneisen": (2.0, 1.0)}, "lower bound must be below"),
    (["scattering.point_defect.strain_variance"], None, "needs a start value > 0"),
])
def test_bad_free_keys_and_bounds(free, bounds, message):
    cfg, k, _ = _synthetic(0.02, seed=1)
    with pytest.raises(ConfigError, match=message):
        fit(cfg, fit_data(T_DATA, k), free, bounds=bounds)


def test_free_items_with_units():
    # the text forms of the command line and series files: KEY=START and KEY=LOW:HIGH
    model = config_from_dict(SI_LIKE).model
    keys, starts, bounds = parse_free(model, ["material.gruneisen",
                                              "scattering.boundary.grain_size=10nm:100um"],
                                      ["scattering.umklapp.scale=0.1:"])
    assert keys == ["material.gruneisen", "scattering.boundary.grain_size"] and not starts
    assert bounds["scattering.boundary.grain_size"] == pytest.approx((1e-8, 1e-4))
    assert bounds["scattering.umklapp.scale"] == (pytest.approx(0.1), None)
    with pytest.raises(ConfigError, match="wrong dimension"):
        parse_free(model, ["scattering.boundary.grain_size=1K:2K"])
    keys, starts, _ = parse_free(model, ["scattering.boundary.grain_size=1um"])
    assert starts == {"scattering.boundary.grain_size": pytest.approx(1e-6)}


def test_start_for_an_absent_mechanism():
    cfg, k, _ = _synthetic(0.02, seed=1)
    no_boundary = config_from_dict({**SI_LIKE, "scattering": {"point_defect":
                                                                {"mass_variance": 2.01e-4}}}).model
    with pytest.raises(ConfigError, match=r"give a start"):
        fit(no_boundary, fit_data(T_DATA, k), ["scattering.boundary.grain_size"])
    res, _ = _quiet(fit, no_boundary, fit_data(T_DATA, k, 0.02 * k),
                    ["material.gruneisen", "scattering.boundary.grain_size"],
                    start_values={"scattering.boundary.grain_size": 1e-6})
    assert res.parameter("scattering.boundary.grain_size").start == pytest.approx(1e-6)
    assert res.value("scattering.boundary.grain_size") == pytest.approx(3e-6, rel=0.2)
    assert cfg.scattering.get("boundary").grain_size == 1e-6  # the input config is unchanged


def test_no_upturn_flag_on_pure_lattice_curves():
    # Umklapp-limited κ_L of the bundled configs falls a little faster than 1/T; that must
    # not read as a bipolar upturn (a regression: an A/T + B trend did flag it).
    from pathlib import Path

    from kappa.workflows.fitting.diagnostics import upturn
    from kappa.workflows.predict import predict

    root = Path(__file__).resolve().parents[1] / "configs"
    for name in ("silicon", "germanium", "lead-telluride", "bismuth-telluride"):
        model = load_config(root / f"{name}.yaml").model
        theta = float(model.material.max_debye_temperature)
        T = np.geomspace(40.0, min(800.0, 3 * theta), 25)
        k = predict(model, T, warnings=False).kappa_L
        assert upturn(fit_data(T, k, 0.03 * k)) == [], name


def test_fit_data_column_names_and_units(tmp_path):
    # spelled-out names and lab units are accepted (unit conversions: SI definitions)
    from kappa.io.fitfiles import read_fit_data

    p = tmp_path / "alt.csv"
    p.write_text("temperature [degC],kappa_lattice [mW/(cm K)],kappa_L_sigma [mW/(cm K)]\n"
                 "26.85,100,3\n126.85,60,2\n226.85,40,1\n", encoding="utf-8")
    d = read_fit_data(p, errors="total")
    assert d.temperature == pytest.approx([300.0, 400.0, 500.0])
    assert d.kappa_L == pytest.approx([10.0, 6.0, 4.0])  # 1 mW/(cm K) = 0.1 W/(m K)
    assert d.uncertainty == pytest.approx([0.3, 0.2, 0.1])


def test_progress_is_reported_through_starts_and_refits():
    # one unit per start and per diagnostic refit, never going back, ending at the total
    cfg, k, _ = _synthetic(0.01, 3)
    calls = []
    r, _ = _quiet(fit, cfg, fit_data(T_DATA, k), list(TRUE), starts=3,
                  progress=lambda done, total: calls.append((done, total)))
    assert calls and all(t == 3 + 2 for _, t in calls)  # 3 starts + 2 refits (one per key)
    done = [d for d, _ in calls]
    assert all(b >= a for a, b in zip(done, done[1:], strict=False))
    assert done[-1] == 5 and any(0 < d < 1 for d in done)
    assert r.parameters[0].key == "material.gruneisen"
