"""kappa's constants against scipy.constants (CODATA, a general-purpose reference library)."""

import pytest
from scipy import constants as sc

from kappa.core import constants as kc


@pytest.mark.parametrize(("ours", "ref"), [
    (kc.k_B, sc.k), (kc.h, sc.h), (kc.hbar, sc.hbar), (kc.e, sc.e), (kc.N_A, sc.N_A),
    (kc.R, sc.R), (kc.u, sc.atomic_mass),
])
def test_constant_matches_scipy(ours, ref):
    assert ours == pytest.approx(ref, rel=1e-12)
