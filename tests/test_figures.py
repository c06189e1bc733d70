"""Every figure renders clean: no text outside the canvas, no texts on top of each other, no
code names in labels; the data fill the panel; maps share one colour scale with round levels.

The checks use the renderer's window extents of every visible text
(:func:`kappa.presentation.style.text_problems`); each figure is drawn in both styles.
"""

import re

import numpy as np
import pytest
import yaml

import kappa
from kappa.io.config import config_from_dict
from kappa.presentation import style
from kappa.presentation.alloy import plot_alloy
from kappa.presentation.predict import plot_prediction
from kappa.presentation.split import plot_split
from kappa.presentation.sweep import (
    plot_cumulative,
    plot_rates,
    plot_spectral,
    plot_sweep,
)

CONFIG = """\
material: {name: invented half-Heusler HH-4 with a rather long descriptive name for the title,
           atomic_mass: 80 u, atomic_volume: 18 angstrom**3, debye_temperature: 380 K,
           sound_velocity: 3200 m/s, gruneisen: 1.6}
scattering: {boundary: {grain_size: 1 um}, point_defect: {mass_variance: 0.02},
             umklapp: {scale: 1}}
temperature: {start: 20 K, stop: 900 K, points: 60}
"""
STYLES = ("paper", "talk")
#: Code names that must not appear in figure texts (config keys, field names).
CODE = re.compile(r"point_defect|grain_size|mass_variance|kappa_L|=\d|_\w+=")


@pytest.fixture(scope="module")
def model():
    return config_from_dict(yaml.safe_load(CONFIG)).model


def _texts(fig):
    from matplotlib.text import Text

    fig.canvas.draw()
    return [t.get_text() for t in fig.findobj(Text) if t.get_visible() and t.get_text()]


def _clean(fig):
    problems = style.text_problems(fig)
    assert problems == [], problems
    for text in _texts(fig):
        plain = re.sub(r"\$[^$]*\$", "", text)  # mathtext may hold κ_L
        assert not CODE.search(plain), text


@pytest.mark.parametrize("name", STYLES)
def test_prediction_figures(model, name):
    T = np.geomspace(20, 900, 60)
    p = kappa.predict(model, T)
    with style.context(name):
        fig = plot_prediction(p)
        _clean(fig)
        ax = fig.axes[0]
        lo, hi = ax.get_ylim()
        # κ_L fills the panel (log axis when it spans a factor of 8 or more)
        k = p.kappa_L
        if ax.get_yscale() == "log":
            assert k.max() / k.min() >= 8
            frac = np.log(k.max() / k.min()) / np.log(hi / lo)
        else:
            assert k.max() / k.min() < 8
            frac = (k.max() - k.min()) / (hi - lo)
        assert frac > 0.8 and lo <= k.min() and k.max() <= hi
        labels = [t.get_text() for t in ax.get_legend().get_texts()]
        assert "without point defects" in " ".join(labels)
        values = [1e-6, 3e-7, 1e-7, 3e-8, 1e-8, 3e-9, 1e-9]
        curves = kappa.compare(model, "scattering.boundary.grain_size", values, T)
        fig = plot_prediction(p, [(f"grain size = {v * 1e9:g} nm (scenario)", c)
                                  for v, c in zip(values, curves, strict=True)])
        _clean(fig)
        colors = [ln.get_color() for ln in fig.axes[0].get_lines()[:len(values)]]
        assert len({tuple(np.round(c, 3)) for c in colors}) == len(values)  # sequential map
        band = (T, p.kappa_L * 0.9, p.kappa_L * 1.1)
        data = (T[::6], p.kappa_L[::6] * 1.02, p.kappa_L[::6] * 0.05)
        _clean(plot_prediction(p, band=band, data=data))


@pytest.mark.parametrize("name", STYLES)
@pytest.mark.parametrize("temperatures", [[300.0], [300.0, 600.0, 900.0],
                                          list(np.linspace(100, 1000, 10))])
def test_sweep_maps_share_one_scale(model, name, temperatures):
    grid = kappa.sweep(model, {"scattering.boundary.grain_size": np.geomspace(1e-8, 1e-5, 30),
                               "scattering.point_defect.mass_variance": np.linspace(0, 0.1, 12)},
                       temperatures)
    with style.context(name):
        fig = plot_sweep(grid)
        _clean(fig)
    colorbars = [ax for ax in fig.axes if ax.get_label() == "<colorbar>"]
    assert len(colorbars) == 1  # one colour scale for every panel
    ticks = colorbars[0].get_yticks()
    for v in ticks:  # round levels: 1, 2 or 5 times a power of ten
        mantissa = v / 10 ** np.floor(np.log10(v))
        assert min(abs(mantissa - m) for m in (1, 2, 3, 5, 10)) < 1e-6, ticks
    from matplotlib.collections import QuadMesh

    meshes = [c for ax in fig.axes for c in ax.collections if isinstance(c, QuadMesh)
              and ax.get_label() != "<colorbar>"]
    assert len(meshes) == min(len(temperatures), 6)
    assert len({c.get_clim() for c in meshes}) == 1
    panel = fig.axes[0]
    assert any(ln.get_marker() == "*" for ln in panel.get_lines())  # the config's point
    fitted = {"scattering.boundary.grain_size": (1e-6, 0.8e-6, 1.25e-6)}
    with style.context(name):
        fig = plot_sweep(grid, fitted=fitted)
        _clean(fig)
    labels = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert labels == ["config", "fitted (68 %)"]


@pytest.mark.parametrize("name", STYLES)
def test_sweep_lines(model, name):
    grid = kappa.sweep(model, {"scattering.boundary.grain_size": np.geomspace(1e-8, 1e-5, 20)},
                       [300.0, 600.0, 900.0])
    with style.context(name):
        _clean(plot_sweep(grid))


@pytest.mark.parametrize("name", STYLES)
@pytest.mark.parametrize("temperatures", [[300.0], [100.0, 300.0, 600.0, 900.0]])
def test_spectrum_figures(model, name, temperatures):
    sp = kappa.spectrum(model, temperatures)
    with style.context(name):
        for plot in (plot_spectral, plot_cumulative, plot_rates):
            _clean(plot(sp))
        fig = plot_cumulative(sp)
    texts = " ".join(_texts(fig))
    if len(temperatures) == 1:  # the values beside the Λ50/Λ80 lines
        assert re.search(r"Lambda_\{50\}\$ = [\d.]+ (nm|µm)", texts), texts


def test_round_levels():
    assert list(style.round_levels(3.2, 870.0, log=True)) == [5, 10, 20, 50, 100, 200, 500]
    assert list(style.round_levels(4.94, 13.4, log=False)) == [5, 6, 7, 8, 9, 10, 11, 12, 13]
    assert list(style.round_levels(4.94, 13.4, log=False, most=5)) == [6, 8, 10, 12]
    levels = style.round_levels(0.013, 0.049, log=False)
    assert np.allclose(np.diff(levels), levels[1] - levels[0])


def test_fit_series_panels_share_axes(tmp_path):
    from pathlib import Path

    from kappa.io.fitfiles import read_series
    from kappa.presentation.fit import fit_curves, plot_fit
    from kappa.workflows.fitting import fit_series

    series = Path(__file__).resolve().parents[1] / "examples" / "fit-demo" / "series.yaml"
    s = read_series(series)
    result = fit_series(s.samples, s.shared, s.per_sample, start_values=s.start_values,
                        bounds=s.bounds, starts=1, seed=0)
    for name in STYLES:
        with style.context(name):
            fig = plot_fit(result, fit_curves(result))
            _clean(fig)
    data_axes = [ax for ax in fig.axes if ax.get_visible() and ax.get_ylabel().startswith("$\\kappa_L$ [")]
    assert len(data_axes) == 3
    assert len({ax.get_ylim() for ax in data_axes}) == 1
    assert len({ax.get_xlim() for ax in data_axes}) == 1


@pytest.mark.parametrize("name", STYLES)
def test_split_and_alloy_figures(name):
    from kappa.core.alloy import alloy_models  # noqa: F401 - the alloy workflow's models
    from kappa.workflows.alloy import alloy_series

    T = np.linspace(300, 800, 11)
    r = kappa.split(T, 2.0 * 300 / T + 0.5, 5e4 * (300 / T), -(150e-6 + 1e-7 * (T - 300)),
                    draws=200, lorenz="spb")
    with style.context(name):
        _clean(plot_split(r, title="HH-4_flash.csv, HH-4_electrical.csv"))
    a = config_from_dict(yaml.safe_load(CONFIG)).model
    b = a.with_values({"material.atomic_mass": 120 * 1.66053906660e-27})
    series = alloy_series(a, b, np.linspace(0, 1, 11), [300.0, 600.0])
    with style.context(name):
        _clean(plot_alloy(series, ("HH-4", "HH-9")))


@pytest.mark.parametrize("name", STYLES)
def test_what_if_bands_keep_the_figure_clean(model, name):
    # the bands of `kappa predict --fit --compare` redraw the legend beside the panel: nothing
    # may be clipped, in either style (an invented covariance: 5 % on γ, 20 % on grain size)
    from kappa.presentation.whatif import add_overlay_bands
    from kappa.workflows.fitting import Covariance

    keys = ("material.gruneisen", "scattering.boundary.grain_size")
    cov = Covariance(keys, ("log", "log"), tuple(float(model.value(k)) for k in keys),
                     np.diag([0.05**2, 0.2**2]))
    T = np.geomspace(20, 900, 40)
    values = [1e-6, 3e-7, 1e-7, 3e-8, 1e-8]  # enough entries for a legend beside the panel
    answers = kappa.what_if(model, cov, {keys[1]: values}, T, draws=60)
    curves = [kappa.predict(model.with_values({keys[1]: v}), T) for v in values]
    with style.context(name):
        fig = plot_prediction(kappa.predict(model, T),
                              [(f"grain size = {v * 1e9:g} nm (scenario)", c)
                               for v, c in sorted(zip(values, curves, strict=True))],
                              band=(T, answers.reference_low, answers.reference_high))
        _clean(add_overlay_bands(fig, answers, np.argsort(values)))
