"""Lorenz numbers in their regimes: the non-degenerate limit follows the scattering exponent,
and warnings when a choice is used outside the regime it was made for."""

import math

import mpmath as mp
import numpy as np
import pytest
import scipy.constants as sc
from typer.testing import CliRunner

from kappa.cli.main import app
from kappa.core.electronic import (
    LORENZ_NONDEGENERATE,
    lorenz_nondegenerate,
    lorenz_number,
    lorenz_regime_warnings,
    spb_lorenz,
)
from kappa.errors import KappaWarning
from kappa.io.tables import read_table
from kappa.workflows.split import split

from . import spb_reference as ref
from .reference_values import VALUES

KB_E2 = (sc.k / sc.e) ** 2  # (k_B/e)^2 from scipy.constants (exact 2019 SI)
T5 = np.array([300.0, 350.0, 400.0, 450.0, 500.0])


def _mpmath_limit(lam: float) -> float:
    """L(eta)/(k_B/e)^2 of the SPB deep in the non-degenerate regime, with mpmath's polylog
    (tests/spb_reference.py: F_j = -Gamma(j+1) Li_{j+1}(-e^eta)), at eta = -60 where
    F_j -> Gamma(j+1) e^eta to 1e-26."""
    return float(ref.lorenz(mp.mpf(-60), lam) / ref.KB_E**2)


@pytest.mark.parametrize("lam", [0.0, 1.0, 2.0])
def test_nondegenerate_limit_against_mpmath(lam):
    # source: mpmath Fermi-Dirac integrals (polylog) as eta -> -inf; the limit is
    # (lambda + 2)(k_B/e)^2 (tests/reference_values.py, "lorenz_nondegenerate_lambda")
    limit = _mpmath_limit(lam)
    assert limit == pytest.approx(VALUES["lorenz_nondegenerate_lambda"].value + lam, rel=1e-12)
    assert lorenz_nondegenerate(lam) == pytest.approx(limit * KB_E2, rel=1e-12)
    np.testing.assert_allclose(lorenz_number("nondegenerate", [1e-4, 3e-4], lam),
                               limit * KB_E2, rtol=1e-12)
    # kappa's own SPB formula reaches the same limit (a consistency check)
    assert spb_lorenz(-60.0, lam) == pytest.approx(limit * KB_E2, rel=1e-10)


def test_lambda_two_gives_four_and_lambda_zero_the_tabulated_value():
    # source: tests/reference_values.py: 2(k_B/e)^2 = 1.485e-8 (acoustic phonons, derived)
    ref_value = VALUES["lorenz_nondegenerate_acoustic"]
    assert LORENZ_NONDEGENERATE == pytest.approx(ref_value.value, rel=ref_value.tolerance)
    assert lorenz_nondegenerate(2.0) == pytest.approx(4 * KB_E2, rel=1e-12)
    assert lorenz_nondegenerate(2.0) == pytest.approx(2 * ref_value.value, rel=1e-3)


def test_split_nondegenerate_with_lambda_two(tmp_path):
    # the command: --lorenz nondegenerate --scattering-exponent 2 writes L = 4 (k_B/e)^2
    f = tmp_path / "d.csv"
    f.write_text("T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]\n300,2,50,-300\n400,1.9,45,-320\n"
                 "500,1.8,40,-340\n", encoding="utf-8")
    r = CliRunner().invoke(app, ["split", str(f), "--lorenz", "nondegenerate",
                                 "--scattering-exponent", "2", "--draws", "200", "-o",
                                 str(tmp_path / "o")])
    assert r.exit_code == 0, r.output
    t = read_table(tmp_path / "o" / "split.csv")
    np.testing.assert_allclose(t.get("L", "W*ohm/K^2"), 4 * KB_E2, rtol=1e-7)  # 8 digits
    assert "(2 + lambda)(k_B/e)^2" in r.output


def test_kim_with_nonzero_exponent_warns():
    args = (T5, np.full(5, 2.0), np.full(5, 3e4), np.full(5, 200e-6))
    with pytest.warns(KappaWarning, match="kim approximates .*lambda = 0.*lambda = 2"):
        split(*args, lorenz="kim", scattering_exponent=2.0, draws=200)
    assert lorenz_regime_warnings("kim", args[3], 0.0) == []


def test_degenerate_with_large_seebeck_warns():
    # 100 uV/K: the limit of the degenerate regime (common practice, no source); above it
    # the SPB (acoustic) L lies about 25 % below the Sommerfeld value
    S = np.array([80e-6, 120e-6, 180e-6, 200e-6, 220e-6])
    with pytest.warns(KappaWarning, match="degenerate Lorenz number .* 220 uV/K"):
        split(T5, np.full(5, 2.0), np.full(5, 3e4), S, lorenz="degenerate", draws=200)
    assert lorenz_regime_warnings("degenerate", np.full(3, 60e-6)) == []
    assert lorenz_regime_warnings("spb", S, 2.0) == []


def test_mpmath_limit_is_really_the_limit():
    # the eta = -60 value is the limit: eta = -40 and -50 agree with it to 1e-13 (the next
    # term of the expansion is of order e^eta)
    for lam in (0.0, 1.0, 2.0):
        a = ref.lorenz(mp.mpf(-60), lam) / ref.KB_E**2
        for eta in (-40, -50):
            b = ref.lorenz(mp.mpf(eta), lam) / ref.KB_E**2
            assert math.isclose(float(a), float(b), rel_tol=1e-13)
