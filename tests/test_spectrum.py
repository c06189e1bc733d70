"""Spectral decomposition: closure on κ_L, boundary-only mean free path, Umklapp rates and
the high-temperature trend, and an independent quadrature of the spectral density."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as sc
from scipy.integrate import quad

from kappa.cli.spectrum import mfp_table, spectrum_table
from kappa.core.evaluator import conductivity
from kappa.errors import ConfigError
from kappa.io.config import config_from_dict
from kappa.workflows.spectrum import spectrum

RTOL_CLOSURE = 1e-6  # the mean-free-path accumulation must close on κ_L
RTOL_QUADRATURE = 1e-6  # DESIGN §5 accuracy target against adaptive quadrature
U = sc.physical_constants["atomic mass constant"][0]

AVERAGED = {
    "material": {"name": "test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.56},
    "scattering": {"boundary": {"grain_size": "1 um"}, "point_defect": {"mass_variance": 2e-4}},
}
PER_BRANCH_NORMAL = {
    "material": {"name": "test crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3",
                 "branches": [{"polarization": "longitudinal", "debye_temperature": "586 K",
                               "sound_velocity": "8480 m/s", "gruneisen": 1.0},
                              {"polarization": "transverse", "debye_temperature": "240 K",
                               "sound_velocity": "5860 m/s", "gruneisen": 0.6}]},
    "scattering": {"boundary": {"grain_size": "3 um"}, "point_defect": {"mass_variance": 2e-4},
                   "normal": {"form": "branch"}},
}


@pytest.mark.filterwarnings("ignore:no boundary scattering:kappa.errors.KappaWarning")
@pytest.mark.parametrize("data", [AVERAGED, PER_BRANCH_NORMAL,
                                  {**AVERAGED, "scattering": {"normal": {"ratio": 2.0}}}])
def test_cumulatives_close_on_kappa_L(data):
    model = config_from_dict(data).model
    T = [10.0, 300.0, 900.0]
    sp = spectrum(model, T)
    ref = conductivity(model, T)
    np.testing.assert_allclose(sp.kappa_L, ref, rtol=1e-12)
    np.testing.assert_allclose(sp.cumulative[:, :, -1].sum(axis=1), ref, rtol=1e-12)
    np.testing.assert_allclose([c[-1] for c in sp.mfp_cumulative], ref, rtol=RTOL_CLOSURE)
    cols = dict(mfp_table(sp))
    for t, temp in enumerate(T):
        last = cols["kappa_cumulative [W/(m K)]"][cols["T [K]"] == temp][-1]
        assert last == pytest.approx(ref[t], rel=RTOL_CLOSURE)
        mfp = cols["mfp [nm]"][cols["T [K]"] == temp]
        assert np.all(np.diff(mfp) > 0)
    # non-decreasing up to rounding (each point uses the rule for its own upper limit)
    assert np.all(np.diff(sp.cumulative, axis=2) >= -1e-12 * sp.kappa_L[:, None, None])
    assert np.all(sp.mfp50 < sp.mfp80)


def test_boundary_only_mean_free_path_is_the_effective_length():
    """With boundary scattering alone τ⁻¹ = v(1−p)/((1+p)L) for every phonon (Casimir; Ziman),
    so Λ = vτ = L(1+p)/(1−p) at every frequency and Λ50 = Λ80 = that length."""
    L, p = 250e-9, 0.3
    data = {**AVERAGED, "scattering": {"umklapp": False,
                                       "boundary": {"grain_size": "250 nm", "specularity": p}}}
    sp = spectrum(config_from_dict(data).model, [5.0, 300.0])
    expected = L * (1 + p) / (1 - p)
    np.testing.assert_allclose(sp.mfp, expected, rtol=1e-12)
    np.testing.assert_allclose(np.concatenate(sp.mfp_nodes), expected, rtol=1e-12)
    np.testing.assert_allclose(sp.mfp50, expected, rtol=1e-12)
    np.testing.assert_allclose(sp.mfp80, expected, rtol=1e-12)


@pytest.mark.filterwarnings("ignore:temperatures up to:kappa.errors.KappaWarning")
def test_umklapp_rate_column_and_high_temperature_trend():
    theta, v, gamma, M = 645.0, 6084.0, 0.56, 28.0855 * U
    data = {**AVERAGED, "scattering": {}}  # Umklapp only (the default mechanism)
    T = np.array([2000.0, 4000.0, 8000.0])  # x_D = θ/T from 0.32 down to 0.08
    sp = spectrum(config_from_dict(data).model, T)
    assert list(sp.rates) == ["umklapp"]
    hb, kB = sc.hbar, sc.k
    for t, temp in enumerate(T):
        omega = 2 * math.pi * sp.frequency[t, 0]
        # Slack–Morelli form (Morelli, Heremans & Slack, PRB 66, 195304 (2002)), b = 3
        expected = hb * gamma**2 / (M * v**2 * theta) * omega**2 * temp * math.exp(-theta / (3 * temp))
        np.testing.assert_allclose(sp.rates["umklapp"][t, 0], expected, rtol=1e-12)
    # High-T limit of DESIGN §2 with w(x) ≈ x²(1 − x²/12) (x ≪ 1), derived here:
    # κ = k_B² θ e^(θ/3T) / (2π² v ħ B₀ T) · (1 − x_D²/36),  B₀ = ħγ²/(M v² θ)
    B0 = hb * gamma**2 / (M * v**2 * theta)
    x_D = theta / T
    limit = (kB**2 * theta * np.exp(theta / (3 * T)) / (2 * math.pi**2 * v * hb * B0 * T)
             * (1 - x_D**2 / 36))
    np.testing.assert_allclose(sp.kappa_L, limit, rtol=2e-4)  # next term is O(x_D⁴) ≈ 1e-4
    # and the 1/T trend: κ·T·e^(−θ/3T) is nearly constant
    trend = sp.kappa_L * T * np.exp(-theta / (3 * T))
    assert trend.max() / trend.min() - 1 < 3e-3


def test_spectral_density_against_independent_quadrature():
    """κ_ν from DESIGN §2 written here (no normal processes): κ_ν = k_B/(2π²v)(k_BT/ħ)³ τ w ·
    h/(k_BT); its integral from 0 to ν must equal the reported cumulative at ν."""
    sp = spectrum(config_from_dict(AVERAGED).model, [300.0])
    T, L, G, V, theta, v, gamma, M = 300.0, 1e-6, 2e-4, 20.02e-30, 645.0, 6084.0, 0.56, 28.0855 * U
    kB, hb, h = sc.k, sc.hbar, sc.h

    def density(nu):
        om = 2 * math.pi * nu
        x = h * nu / (kB * T)
        rate = (v / L + V * G * om**4 / (4 * math.pi * v**3)
                + hb * gamma**2 / (M * v**2 * theta) * om**2 * T * math.exp(-theta / (3 * T)))
        w = x**4 * math.exp(x) / math.expm1(x) ** 2
        return kB / (2 * math.pi**2 * v) * (kB * T / hb) ** 3 * w / rate * h / (kB * T)

    nu = sp.frequency[0, 0]
    for k in (10, 60, 140, nu.size - 1):
        assert sp.spectral[0, 0, k] == pytest.approx(density(nu[k]), rel=1e-10)
        integral = quad(density, 0.0, nu[k], epsrel=1e-11, limit=200)[0]
        assert sp.cumulative[0, 0, k] == pytest.approx(integral, rel=RTOL_QUADRATURE)
    # frequencies: ν = ω/2π up to the Debye cutoff k_B θ/h
    assert nu[-1] == pytest.approx(kB * theta / h, rel=1e-12)


def test_table_columns():
    sp = spectrum(config_from_dict(PER_BRANCH_NORMAL).model, [300.0], points=50)
    cols = dict(spectrum_table(sp))
    assert list(cols) == ["T [K]", "branch", "frequency [THz]", "kappa_spectral [W/(m K THz)]",
                          "kappa_cumulative [W/(m K)]", "mfp [nm]", "rate_umklapp [1/s]",
                          "rate_boundary [1/s]", "rate_point_defect [1/s]", "rate_normal [1/s]"]
    assert len(cols["T [K]"]) == 100
    assert set(cols["branch"]) == {"longitudinal", "transverse"}


def test_spectrum_rejects_bad_temperature():
    with pytest.raises(ConfigError, match="> 0 K"):
        spectrum(config_from_dict(AVERAGED).model, [300.0, -1.0])


def test_mean_free_path_cumulative_against_independent_quadrature():
    # K(Λ) = ∫_{Λ(x) ≤ Λ} τ w dx / ∫ τ w dx with Λ = vτ, written here from DESIGN §2 with
    # scipy quad and brentq (resistive scattering only, so Λ(x) falls with x).
    import math

    from scipy import constants as c
    from scipy.integrate import quad
    from scipy.optimize import brentq


    data = {"material": {"atomic_mass": "60 u", "atomic_volume": "25 angstrom**3",
                         "debye_temperature": "400 K", "sound_velocity": "3.5 km/s",
                         "gruneisen": 1.5},
            "scattering": {"umklapp": {"scale": 1.3, "exponent_divisor": 2.5},
                           "boundary": {"grain_size": "0.3 um", "specularity": 0.2},
                           "point_defect": {"mass_variance": 0.02, "strain_variance": 0.01}}}
    M, V, th, v, g, L, G = 60 * c.atomic_mass, 25e-30, 400.0, 3500.0, 1.5, 0.45e-6, 0.03
    for T in (77.0, 300.0):
        wt = c.k * T / c.hbar

        def rate(x, T=T, wt=wt):
            w = x * wt
            return (1.3 * c.hbar * g**2 / (M * v**2 * th) * w**2 * T * math.exp(-th / (2.5 * T))
                    + v / L + V * G * w**4 / (4 * math.pi * v**3))

        def f(x, rate=rate):
            return x**4 * math.exp(-x) / (-math.expm1(-x)) ** 2 / rate(x)

        top = th / T
        total = quad(f, 0, top, epsabs=0, epsrel=1e-12, limit=500)[0]

        def K(lam, rate=rate, f=f, top=top, total=total):
            x0 = brentq(lambda x: v / rate(x) - lam, 1e-300, top, xtol=1e-300, rtol=1e-14)
            return quad(f, x0, top, epsabs=0, epsrel=1e-12, limit=500)[0] / total

        lo, hi = v / rate(top) * (1 + 1e-12), v / rate(1e-300) * (1 - 1e-12)
        l50 = brentq(lambda lam, K=K: K(lam) - 0.5, lo, hi, rtol=1e-13)
        l80 = brentq(lambda lam, K=K: K(lam) - 0.8, lo, hi, rtol=1e-13)
        sp = spectrum(config_from_dict(data).model, [T])
        assert sp.mfp50[0] == pytest.approx(l50, rel=1e-4)
        assert sp.mfp80[0] == pytest.approx(l80, rel=1e-4)
        cols = dict(mfp_table(sp))
        lam, acc = cols["mfp [nm]"] * 1e-9, cols["kappa_cumulative [W/(m K)]"]
        for i in range(0, lam.size - 1, 23):
            assert acc[i] / sp.kappa_L[0] == pytest.approx(K(lam[i]), abs=1e-5)
        assert acc[-1] == pytest.approx(sp.kappa_L[0], rel=1e-9)
