"""Systematic and random uncertainties in the split: the Monte Carlo against linear error
propagation written here, the per-row draws, validation and the command line."""

import json
import math

import numpy as np
import pytest
from typer.testing import CliRunner

import kappa.workflows.split as split_module
from kappa.cli.main import app
from kappa.errors import DataError
from kappa.io.tables import read_table
from kappa.workflows.split import split
from kappa.workflows.split_draws import Draws
from kappa.workflows.uncertainty import (
    DEFAULT_RANDOM,
    DEFAULT_SYSTEMATIC,
    Parts,
    resolve_uncertainty,
    row_normals,
)

from . import spb_reference as ref
from .reference_values import VALUES

T5 = np.array([300.0, 350.0, 400.0, 450.0, 500.0])


def test_defaults_and_their_sources():
    # systematic: Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015) (round robins);
    # random: repeatability within one run (common practice, no single source)
    assert DEFAULT_SYSTEMATIC == {"kappa": VALUES["roundrobin_kappa"].value,
                                  "sigma": VALUES["roundrobin_sigma"].value,
                                  "S": VALUES["roundrobin_seebeck"].value, "L": 0.0}
    assert DEFAULT_RANDOM == {"kappa": VALUES["repeatability_kappa"].value,
                              "sigma": VALUES["repeatability_sigma"].value,
                              "S": VALUES["repeatability_seebeck"].value, "L": 0.0}


def test_linear_case_parts_match_analytic_propagation():
    # constant L: kappa_L = kappa (1 + u_k z_k + r_k e_k) - L sigma T (1 + u_s z_s + r_s e_s) is
    # linear in Gaussian numbers, so (analytic propagation, exact):
    #   sd_sys = sqrt((u_k kappa)^2 + (u_s kappa_e)^2), sd_rand likewise with r, total both.
    kappa, sigma, L = 2.0, 1e5, 2.0e-8
    u = {"kappa": (0.10, 0.03), "sigma": (0.05, 0.02), "S": (0.0, 0.0)}
    r = split(T5, np.full(5, kappa), np.full(5, sigma), lorenz=L, uncertainty=u,
              draws=100_000, seed=3)
    ke = L * sigma * T5
    sd_sys = np.hypot(0.10 * kappa, 0.05 * ke)
    sd_rand = np.hypot(0.03 * kappa, 0.02 * ke)
    # quantile error at 1e5 draws is about 0.5 % of the sd; allow 1.5 %
    np.testing.assert_allclose(r.kappa_L_err_systematic, sd_sys, rtol=0.015)
    np.testing.assert_allclose(r.kappa_L_err_random, sd_rand, rtol=0.015)
    np.testing.assert_allclose(r.kappa_L_err, np.hypot(sd_sys, sd_rand), rtol=0.015)


def _dlnL_dlnS_mpmath(s_abs, lam=0.0, h=1e-5):
    """d ln L / d ln |S| of the SPB from the mpmath reference (central difference)."""
    up = ref.lorenz_from_seebeck(s_abs * (1 + h), lam)
    down = ref.lorenz_from_seebeck(s_abs * (1 - h), lam)
    return (math.log(up) - math.log(down)) / (math.log1p(h) - math.log1p(-h))


def test_spb_parts_match_linear_propagation_written_here():
    # Linear error propagation, independent of kappa: kappa_L = kappa - L(S) sigma T;
    # d kappa_L / d ln kappa = kappa, / d ln sigma = -kappa_e, / d ln S = -kappa_e dlnL/dlnS
    # (dlnL/dlnS from the mpmath SPB reference, tests/spb_reference.py). Each part's sd is the
    # root sum of squares of its inputs' terms (independent inputs). Defaults of both parts.
    S = np.array([120e-6, 150e-6, 180e-6, 210e-6, 240e-6])
    sigma = np.array([8e4, 6e4, 5e4, 4e4, 3.5e4])
    kappa = np.array([2.0, 1.9, 1.8, 1.7, 1.6])
    r = split(T5, kappa, sigma, S, draws=40_000, seed=7)
    L = np.array([ref.lorenz_from_seebeck(s) for s in S])
    ke = L * sigma * T5
    slope = np.array([_dlnL_dlnS_mpmath(s) for s in S])
    terms = {"kappa": kappa, "sigma": ke, "S": ke * np.abs(slope)}
    sd = {part: np.sqrt(sum((terms[q] * values[q]) ** 2 for q in terms))
          for part, values in (("systematic", DEFAULT_SYSTEMATIC), ("random", DEFAULT_RANDOM))}
    # Monte Carlo quantiles at 4e4 draws: about 0.8 % of the sd; second-order terms of the
    # (mildly nonlinear) L(S) and of sigma x L below 0.5 %: allow 2.5 %
    np.testing.assert_allclose(r.kappa_L_err_systematic, sd["systematic"], rtol=0.025)
    np.testing.assert_allclose(r.kappa_L_err_random, sd["random"], rtol=0.025)
    # the linear budget kappa reports: each input's term, to the accuracy of the derivative
    for q, term in terms.items():
        np.testing.assert_allclose(r.budget[q]["systematic"], term * DEFAULT_SYSTEMATIC[q],
                                   rtol=1e-5)
        np.testing.assert_allclose(r.budget[q]["random"], term * DEFAULT_RANDOM[q], rtol=1e-5)


def test_systematic_parts_shared_random_parts_independent():
    # the per-draw values: the systematic-only kappa_L of two rows move together (correlation
    # 1: one systematic input, a constant L), the random-only ones do not (correlation within
    # the noise of 4000 draws, |r| < 0.06 at about 4 sigma = 4/sqrt(4000))
    from kappa.workflows.measurements import measurements_from_arrays

    m = measurements_from_arrays(T5, kappa=np.full(5, 2.0), electrical_conductivity=np.full(5, 1e5))
    parts = resolve_uncertainty({"kappa": (0.1, 0.05), "sigma": (0.0, 0.02)})
    mc = Draws(m, 2e-8, np.full(5, 2e-8), 0.0, parts, 4000, 11)
    d = mc.rows(np.arange(5), parts=True)
    assert np.corrcoef(d["kappa_L_sys"][0], d["kappa_L_sys"][4])[0, 1] > 1 - 1e-12
    assert abs(np.corrcoef(d["kappa_L_rand"][0], d["kappa_L_rand"][4])[0, 1]) < 0.06
    # the same rows asked for in another subset give the same numbers
    again = mc.rows(np.array([4, 0]), parts=True)
    np.testing.assert_array_equal(again["kappa_L"][1], d["kappa_L"][0])


def test_chunked_monte_carlo_same_numbers_with_random_parts(monkeypatch):
    T = np.linspace(300.0, 800.0, 60)
    args = (T, 2.0 * 300.0 / T + 0.4, 6e4 * (300.0 / T) ** 1.2, -(120e-6 + 0.15e-6 * (T - 300)))
    whole = split(*args, draws=500, seed=2)
    monkeypatch.setattr(split_module, "CHUNK_VALUES", 700)  # one row per chunk
    chunked = split(*args, draws=500, seed=2)
    for name in ("kappa_L_err", "kappa_L_err_systematic", "kappa_L_err_random", "zT_low",
                 "kappa_e_high"):
        np.testing.assert_allclose(getattr(chunked, name), getattr(whole, name), rtol=1e-12)
    np.testing.assert_allclose(chunked.bipolar.excess_err, whole.bipolar.excess_err,
                               rtol=1e-9)


def test_row_normals_are_standard_normal_and_addressable():
    z = row_normals(5, 2, np.arange(200), 1000)
    assert abs(z.mean()) < 4 / math.sqrt(z.size)  # 4 standard errors of the mean
    assert abs(z.std() - 1) < 0.01
    np.testing.assert_array_equal(row_normals(5, 2, [7, 3], 1000), z[[7, 3]])
    assert not np.array_equal(row_normals(5, 3, [7], 1000), z[[7]])
    assert not np.array_equal(row_normals(6, 2, [7], 1000), z[[7]])


@pytest.mark.parametrize("value, key", [
    (-0.1, "uncertainty[kappa].systematic = -0.1"),
    ((0.1, -0.02), "uncertainty[kappa].random = -0.02"),
    ("abc", "uncertainty[kappa].systematic = abc"),
    ((0.1, float("nan")), "uncertainty[kappa].random = nan"),
    ((0.1, 0.2, 0.3), "uncertainty[kappa] = (0.1, 0.2, 0.3)"),
])
def test_bad_parts_name_the_key(value, key):
    with pytest.raises(DataError, match=re_escape(key)):
        resolve_uncertainty({"kappa": value})


def re_escape(text):
    import re

    return re.escape(text)


def test_parts_forms():
    p = resolve_uncertainty({"kappa": 0.05, "resistivity": (0.04, 0.0), "S": Parts(0.03, 0.02)})
    assert p["kappa"] == Parts(0.05, DEFAULT_RANDOM["kappa"])
    assert p["sigma"] == Parts(0.04, 0.0) and p["S"] == Parts(0.03, 0.02)
    assert p["L"] == Parts(0.0, 0.0)


def test_command_writes_both_parts_and_the_budget(tmp_path):
    f = tmp_path / "d.csv"
    f.write_text("T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]\n300,2,500,150\n400,1.9,450,170\n"
                 "500,1.8,400,190\n600,1.7,380,200\n700,1.7,360,210\n", encoding="utf-8")
    out = tmp_path / "o"
    r = CliRunner().invoke(app, ["split", str(f), "--uncertainty", "kappa=8%+3%,S=0.05",
                                 "--draws", "400", "-o", str(out)])
    assert r.exit_code == 0, r.output
    t = read_table(out / "split.csv")
    sys_, rand, tot = (t.get(c, "W/(m K)") for c in ("kappa_L_err_systematic",
                                                      "kappa_L_err_random", "kappa_L_err"))
    assert np.all(rand < sys_) and np.all(tot >= 0.9 * sys_)  # 400 draws: a few % noise
    rec = json.loads((out / "run.json").read_text())
    u = rec["uncertainty"]
    assert u["systematic"]["kappa"] == 0.08 and u["random"]["kappa"] == 0.03
    assert u["systematic"]["S"] == 0.05 and u["random"]["S"] == DEFAULT_RANDOM["S"]
    assert set(u["budget_linear_propagation"]) == {"kappa", "sigma", "S", "L"}
    assert "systematic 8 % + 3 %" not in r.output  # printed as "kappa 8 % + 3 %"
    assert "kappa 8 % + 3 %" in r.output
