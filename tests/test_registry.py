"""Every scattering mechanism of the registry, checked the same way; and a mechanism whose rate
is not a polynomial, added by one class plus one registry entry (tests only).

Generic checks per mechanism: a citation and a title; rates ≥ 0 and finite from ω → 0 to the
cutoff at low, room and high temperature; a batch of parameter sets gives the numbers of each
set alone; every numeric parameter round-trips through a config (written in its display unit),
``--set``, a sweep and a fit (noise-free synthetic data made with a changed value is fitted back).
Parameters that are alternatives (``Mechanism.exclusive``) are given one at a time.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from kappa.core.evaluator import branch_states, conductivity
from kappa.core.mechanisms import REGISTRY, RateContext
from kappa.io.config import apply_overrides, config_from_dict, set_value, write_values
from kappa.workflows.fitting import fit, fit_data
from kappa.workflows.predict import predict
from kappa.workflows.spectrum import spectrum
from kappa.workflows.sweep import sweep

from .mechanism_for_tests import Resonance, resonance_rate
from .reference import reference_kappa

# A per-branch silicon-like model (values set the scales only; no outside source needed).
PER_BRANCH = {
    "material": {"name": "registry test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3",
                 "branches": [{"polarization": "longitudinal", "debye_temperature": "586 K",
                               "sound_velocity": "8480 m/s", "gruneisen": 1.0},
                              {"polarization": "transverse", "debye_temperature": "240 K",
                               "sound_velocity": "5860 m/s", "gruneisen": 0.6}]},
    "scattering": {"umklapp": {"scale": 1.0}, "boundary": {"grain_size": "2 um"}},
    "temperature": {"values": ["20 K", "60 K", "150 K", "300 K", "700 K"]},
}
T_FIT = np.array([20.0, 40.0, 80.0, 150.0, 300.0, 500.0, 700.0])


def _value(p):
    """A typical non-zero value of a parameter [SI]."""
    for v in (p.start, p.default):
        if isinstance(v, (int, float)) and v > 0:
            return float(v)
    return 1.0


def _left_out(cls, p_name=None):
    """Parameters left at their defaults: all but one of each group of alternatives
    (``cls.exclusive``, e.g. a volume fraction or a number density) — ``p_name`` if it is in
    the group, else the group's first."""
    out = set()
    for group in cls.exclusive:
        keep = p_name if p_name in group else group[0]
        out |= {n for n in group if n != keep}
    return out


def _section(cls, p_name=None, value=None):
    """Config section of mechanism ``cls`` with typical values, written in display units."""
    out = {}
    skip = _left_out(cls, p_name)
    for p in cls.parameters:
        if not p.numeric or p.name in skip:
            continue
        v = value if p.name == p_name and value is not None else _value(p)
        shown = float(p.shown(v))
        out[p.name] = shown if p.shown_unit in ("1", "") else f"{shown!r} {p.shown_unit}"
    return out


def _model_with(cls, p_name=None):
    data = set_value(PER_BRANCH, f"scattering.{cls.key}", _section(cls, p_name))
    return config_from_dict(data)


def _numeric(cls):
    return [p for p in cls.parameters if p.numeric]


@pytest.fixture(params=sorted(REGISTRY), ids=sorted(REGISTRY))
def mechanism(request):
    return REGISTRY[request.param]


def test_declarations_are_complete(mechanism):
    assert mechanism.citation and len(mechanism.citation) > 20
    assert mechanism.title and mechanism.key
    names = [p.name for p in mechanism.parameters]
    assert len(set(names)) == len(names)
    for p in mechanism.parameters:
        assert p.description
        if p.numeric:
            assert p.contains(_value(p)), p.name
            assert p.label


def test_rates_are_non_negative_and_finite(mechanism):
    model = _model_with(mechanism).model
    m = model.material
    mech = model.mechanisms.get(mechanism.key)
    for T in (5.0, 300.0, 2000.0):
        for branch in m.branches:
            ctx = RateContext(m, branch, np.array([T]), model.mechanisms, (1,))
            omega_d = 1.380649e-23 * branch.debye_temperature / 1.054571817e-34
            omega = np.geomspace(1e-12 * omega_d, omega_d, 400)[None, :]
            r = np.asarray(mech.rate(ctx, omega))
            assert np.all(np.isfinite(r)) and np.all(r >= 0), (mechanism.key, T)
            for c in mech.low_frequency(ctx).values():
                assert np.all(np.isfinite(c)) and np.all(np.asarray(c) >= 0)


def test_batch_equals_single_sets(mechanism):
    T = [30.0, 300.0]
    for p in _numeric(mechanism):
        model = _model_with(mechanism, p.name).model
        key = f"scattering.{mechanism.key}.{p.name}"
        if model.unused(key):
            continue
        v = _value(p)
        values = np.array([v, v * (0.5 if p.linear else 3.0)])
        values = values[[p.contains(x) for x in values]]
        batch = conductivity(model.with_values({key: values}), T)
        for i, x in enumerate(values):
            single = conductivity(model.with_values({key: float(x)}), T)
            np.testing.assert_allclose(batch[i], single, rtol=1e-12)


def test_parameters_round_trip_through_config_set_sweep_and_fit(mechanism):
    for p in _numeric(mechanism):
        cfg = _model_with(mechanism, p.name)
        model = cfg.model
        key = f"scattering.{mechanism.key}.{p.name}"
        if model.unused(key):
            continue
        v = _value(p)
        new = v * 0.6 if p.linear else v * 1.7
        # config, written in the display unit
        data = write_values(cfg.data, model, {key: new})
        assert config_from_dict(data).model.value(key) == pytest.approx(new, rel=1e-10)
        # --set with the display unit spelled out
        unit = "" if p.shown_unit in ("1", "") else f" {p.shown_unit}"
        data = apply_overrides(cfg.data, [f"{key}={float(p.shown(new))!r}{unit}"])
        assert config_from_dict(data).model.value(key) == pytest.approx(new, rel=1e-10)
        # a sweep over the key
        r = sweep(model, {key: [v, new]}, [50.0, 300.0])
        np.testing.assert_allclose(
            r.kappa_L[1], conductivity(model.with_values({key: new}), [50.0, 300.0]), rtol=1e-12)
        # a fit of the key to data made with the new value
        truth = conductivity(model.with_values({key: new}), T_FIT)
        if np.allclose(truth, conductivity(model, T_FIT), rtol=1e-3):
            continue  # the parameter barely changes κ_L here; nothing to fit
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = fit(model, fit_data(T_FIT, truth), [key], starts=2, checks=False)
        assert res.value(key) == pytest.approx(new, rel=1e-4), key


# --- a mechanism that is not a polynomial in ω ---------------------------------------------


@pytest.fixture
def resonance(monkeypatch):
    """Register the test mechanism: one class, one registry entry."""
    monkeypatch.setitem(REGISTRY, Resonance.key, Resonance)
    return Resonance


AVERAGED = {
    "material": {"name": "test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.9},
    "scattering": {"boundary": {"grain_size": "1 um"},
                   "resonance": {"strength": "1e12 1/s", "frequency": "3e13 rad/s",
                                 "damping": 0.2}},
}
RTOL_QUADRATURE = 1e-6  # accuracy target of the fixed rule against adaptive quadrature


@pytest.mark.parametrize("T", [5.0, 40.0, 150.0, 300.0, 900.0])
@pytest.mark.parametrize("normal", [None, 1.5])
def test_resonance_matches_adaptive_quadrature(resonance, T, normal):
    data = AVERAGED if normal is None else set_value(AVERAGED, "scattering.normal.ratio", normal)
    model = config_from_dict(data).model
    ours = conductivity(model, [T])[0]
    m = model.material
    b = m.branches[0]

    def extra(w, _branch):
        return resonance_rate(w, 1e12, 3e13, 0.2)

    ref = reference_kappa(T, m.atomic_mass, m.atomic_volume,
                          [dict(count=3, theta=b.debye_temperature, v=b.sound_velocity,
                                gamma=0.9, pol="average")],
                          umklapp={}, boundary={"L": 1e-6},
                          normal=None if normal is None else {"ratio": normal},
                          extra=extra, extra_points=(3e13 * 0.8, 3e13, 3e13 * 1.2))
    assert ours == pytest.approx(ref, rel=RTOL_QUADRATURE)


def test_resonance_works_in_predict_fit_sweep_and_spectrum(resonance):
    cfg = config_from_dict(AVERAGED)
    model = cfg.model
    T = np.array([20.0, 50.0, 100.0, 200.0, 400.0])
    p = predict(model, T)
    assert "resonance" in p.without and np.all(p.without["resonance"] > p.kappa_L)
    # fit: recover a changed resonance frequency from noise-free data
    truth = conductivity(model.with_values({"scattering.resonance.frequency": 2.2e13}), T)
    res = fit(model, fit_data(T, truth), ["scattering.resonance.frequency"], starts=2,
              checks=False)
    assert res.value("scattering.resonance.frequency") == pytest.approx(2.2e13, rel=1e-5)
    # sweep: equals the evaluator point by point
    r = sweep(model, {"scattering.resonance.frequency": [1e13, 3e13, 5e13]}, [100.0, 300.0])
    for i, w0 in enumerate([1e13, 3e13, 5e13]):
        np.testing.assert_allclose(r.kappa_L[i], conductivity(
            model.with_values({"scattering.resonance.frequency": w0}), [100.0, 300.0]),
            rtol=1e-12)
    # spectrum: the frequency and mean-free-path cumulatives close on κ_L
    sp = spectrum(model, [100.0, 300.0])
    np.testing.assert_allclose(sp.kappa_L, conductivity(model, [100.0, 300.0]), rtol=1e-12)
    np.testing.assert_allclose([c[-1] for c in sp.mfp_cumulative], sp.kappa_L, rtol=1e-6)
    assert "resonance" in sp.rates and np.all(np.isfinite(sp.rates["resonance"]))
    # the rate at the resonance is the largest of the spectrum's rates there
    state = branch_states(model, 300.0)[0]
    x0 = 3e13 / state.wt
    assert state.mechanism_rates([x0])["resonance"][0] > state.mechanism_rates(
        [0.2 * x0])["resonance"][0]


def test_resonance_needs_the_registry_entry():
    with pytest.raises(Exception, match="unknown key"):
        config_from_dict(AVERAGED)


def test_low_frequency_limit_is_used_below_the_rule():
    # without boundary scattering the ω⁴ limit of the resonance carries the small-x piece
    r = Resonance(1e12, 3e13, 0.2)
    assert math.isclose(float(r.low_frequency(_ctx())[4]), 1e12 / 3e13**4)


def _ctx():
    model = config_from_dict(PER_BRANCH).model
    m = model.material
    return RateContext(m, m.branches[0], np.array([300.0]), model.mechanisms, ())
