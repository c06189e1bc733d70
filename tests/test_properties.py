"""Properties that must hold for any parameters (hypothesis; DESIGN §6)."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc

from kappa.core.evaluator import lattice_conductivity
from kappa.core.material import Branch, Material
from kappa.core.mechanisms import Boundary, Normal, PointDefect, Umklapp
from kappa.core.scattering import Scattering

U = sc.atomic_mass

materials = st.builds(
    lambda mass, vol, theta, v, g, per: (
        Material(mass * U, vol * 1e-30, (Branch(theta, v * 1.3, g, 1, "longitudinal"),
                                         Branch(theta * 0.5, v * 0.8, g * 0.7, 2, "transverse")))
        if per else Material.averaged(mass * U, vol * 1e-30, theta, v, g)),
    st.floats(10, 250), st.floats(8, 60), st.floats(80, 1200), st.floats(1000, 9000),
    st.floats(0.3, 3.0), st.booleans())
temperatures = st.floats(2.0, 2000.0)
grain = st.floats(-8.5, -1.0).map(lambda e: 10**e)
gamma = st.floats(-6.0, 0.0).map(lambda e: 10**e)


def _k(m, mechs, T):
    return lattice_conductivity(m, Scattering(tuple(mechs)), [T])[0]


@settings(max_examples=60, deadline=None)
@given(materials, temperatures, grain, gamma, st.floats(0.1, 5.0))
def test_kappa_is_positive_and_finite(m, T, L, G, beta):
    k = _k(m, [Umklapp(), Boundary(L), PointDefect(G), Normal(ratio=beta)], T)
    assert np.isfinite(k) and k > 0


@settings(max_examples=60, deadline=None)
@given(materials, temperatures, grain, gamma, st.floats(1.01, 10.0))
def test_stronger_scattering_never_raises_kappa(m, T, L, G, factor):
    base = [Umklapp(), Boundary(L), PointDefect(G)]
    k0 = _k(m, base, T)
    tol = 1 + 1e-9
    assert _k(m, [Umklapp(scale=factor), Boundary(L), PointDefect(G)], T) <= k0 * tol
    assert _k(m, [Umklapp(), Boundary(L / factor), PointDefect(G)], T) <= k0 * tol
    assert _k(m, [Umklapp(), Boundary(L), PointDefect(G * factor)], T) <= k0 * tol
    assert _k(m, [Umklapp(), Boundary(L), PointDefect(G, G * (factor - 1))], T) <= k0 * tol


@settings(max_examples=60, deadline=None)
@given(materials, temperatures, grain, gamma, st.floats(0.01, 10.0))
def test_adding_any_mechanism_never_raises_kappa(m, T, L, G, beta):
    k_u = _k(m, [Umklapp(), Boundary(L)], T)
    tol = 1 + 1e-9
    assert _k(m, [Umklapp(), Boundary(L), PointDefect(G)], T) <= k_u * tol
    assert _k(m, [Umklapp(), Boundary(L), Normal(ratio=beta)], T) <= k_u * tol
    assert _k(m, [Umklapp(), Boundary(L)], T) <= _k(m, [Umklapp(scale=0), Boundary(L)], T) * tol


@settings(max_examples=40, deadline=None)
@given(materials, grain)
def test_low_temperature_casimir_cube_law(m, L):
    # far below θ with boundary scattering dominant, κ_L ∝ T³
    T1 = min(b.debye_temperature for b in m.branches) / 400
    k1 = _k(m, [Umklapp(), Boundary(min(L, 1e-4))], T1)
    k2 = _k(m, [Umklapp(), Boundary(min(L, 1e-4))], 2 * T1)
    assert abs(k2 / k1 / 8 - 1) < 1e-3
