"""Regression: the chunked Monte Carlo of `kappa split` reproduces its earlier numbers.

Not a physics check. ``tests/data/split_regression.json`` holds the intervals that the split
computed for these inputs before its rows were processed in chunks (labelled there as a
regression fixture). The same seed must give the same random numbers in the same order, so
the results must agree to 1e-12 — whatever the chunk size.
"""

import json
from pathlib import Path

import numpy as np
import pytest

import kappa.workflows.split as split_module
from kappa.io.measurements import read_measurements
from kappa.workflows.split import split, split_measurements

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "examples" / "split-demo"
FIXTURE = json.loads((Path(__file__).parent / "data" / "split_regression.json").read_text())

ARRAYS = ("kappa_L", "lorenz_low", "lorenz_high", "kappa_e_low", "kappa_e_high", "kappa_L_low",
          "kappa_L_high", "kappa_L_err", "zT_low", "zT_high")


def _synthetic(n):
    """Smooth invented data (the same formulas as when the fixture was made)."""
    T = np.linspace(300.0, 800.0, n)
    kappa = 2.0 * 300.0 / T + 0.4 + 0.3 * np.exp((T - 800.0) / 80.0)
    sigma = 6e4 * (300.0 / T) ** 1.2
    S = -(120e-6 + 0.15e-6 * (T - 300.0))
    return T, kappa, sigma, S


def _systematic_only(kw):
    """The fixture was made before the random parts existed: the same run with them at 0."""
    u = {"kappa": 0.11, "sigma": 0.08, "S": 0.06, "L": 0.0}
    u.update(kw.get("uncertainty", {}))
    return {**kw, "uncertainty": {key: (value, 0.0) for key, value in u.items()}}


def _run(name):
    demo = {
        "FH-03 default": ([DEMO / "FH-03_total.csv"], None, {}),
        "FH-07 flash": ([DEMO / "FH-07_flash.csv", DEMO / "FH-07_electrical.csv"],
                        "Mg2Si0.4Sn0.6", {}),
        "FH-03 kim window": ([DEMO / "FH-03_total.csv"], None,
                             {"lorenz": "kim", "uncertainty": {"L": 0.05, "S": 0.1}, "seed": 7,
                              "draws": 500, "fit_window": (300.0, 450.0)}),
        "FH-03 constant": ([DEMO / "FH-03_total.csv"], None,
                           {"lorenz": 2.0e-8, "draws": 300, "seed": 3}),
        "FH-03 spb lambda 2": ([DEMO / "FH-03_total.csv"], None,
                               {"scattering_exponent": 2.0, "draws": 1000, "seed": 11}),
    }
    if name in demo:
        files, composition, kw = demo[name]
        return split_measurements(read_measurements(files, composition=composition),
                                  **_systematic_only(kw))
    if name == "synthetic 2500 rows":
        return split(*_synthetic(2500), **_systematic_only({}))
    T, kappa, sigma, _ = _synthetic(40)
    return split(T, kappa, sigma, lorenz="nondegenerate", seed=5, draws=400,
                 **_systematic_only({}))


def _compare(name, r):
    case = FIXTURE["cases"][name]
    rows = case["rows"]
    # A window of more rows than one chunk holds is fitted chunk by chunk: only rounding
    # differs, so the excess uncertainty is compared on the scale of kappa_L.
    scale = float(np.max(np.abs(r.kappa_L)))
    for key in ARRAYS:
        if key in case:
            np.testing.assert_allclose(getattr(r, key)[rows], case[key], rtol=1e-12, atol=0,
                                       err_msg=f"{name}: {key}")
    b = r.bipolar
    np.testing.assert_allclose(b.excess_err[rows], case["excess_err"], rtol=1e-12,
                               atol=1e-12 * scale, err_msg=f"{name}: excess_err")
    assert b.bipolar[rows].tolist() == case["bipolar"]
    assert b.onset == case["onset"]
    np.testing.assert_allclose(b.coefficients, case["coefficients"], rtol=1e-12)


@pytest.mark.parametrize("name", list(FIXTURE["cases"]))
def test_same_numbers_as_before(name):
    _compare(name, _run(name))


@pytest.mark.parametrize("name", ["FH-07 flash", "synthetic 2500 rows",
                                  "synthetic 40 rows without S"])
def test_same_numbers_with_tiny_chunks(name, monkeypatch):
    monkeypatch.setattr(split_module, "CHUNK_VALUES", 1500)  # one row per chunk at 2000 draws
    _compare(name, _run(name))


def test_progress_reports_every_chunk(monkeypatch):
    monkeypatch.setattr(split_module, "CHUNK_VALUES", 20_000)  # 10 rows per chunk
    T, kappa, sigma, S = _synthetic(95)
    calls = []
    r = split(T, kappa, sigma, S, progress=lambda done, total: calls.append((done, total)))
    lo, hi = r.bipolar.fit_window
    window = int(np.sum((T >= lo) & (T <= hi)))  # more than one chunk: counted first
    total = window + 95
    assert calls == ([(min(window, k), total) for k in range(10, window + 10, 10)]
                     + [(window + min(95, k), total) for k in range(10, 101, 10)])
