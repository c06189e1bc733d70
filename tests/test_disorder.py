"""Point-defect disorder from a composition: isotopes, sites, alloys, strain, vacancies."""

import numpy as np
import pytest

from kappa.core.composition import mean_molar_mass
from kappa.core.disorder import (
    alloy_strain_variance,
    disorder,
    format_sites,
    isotope_mass_variance,
    isotopes,
    parse_sites,
)
from kappa.errors import DataError
from tests.reference_values import VALUES

# Natural isotopic compositions written here, with their source, so that the expected Γ is
# derived independently of the data kappa reads. Abundances: IUPAC "representative isotopic
# compositions" (Berglund & Wieser, Pure Appl. Chem. 83, 397 (2011)); masses: atomic mass
# evaluation (AME) values in u. Both from memory, to the digits shown.
ISOTOPES = {
    "Si": [(27.9769265, 92.223), (28.9764947, 4.685), (29.9737701, 3.092)],
    "C": [(12.0, 98.93), (13.0033548, 1.07)],
    "Sn": [(111.904818, 0.97), (113.902779, 0.66), (114.903342, 0.34), (115.901741, 14.54),
           (116.902952, 7.68), (117.901603, 24.22), (118.903308, 8.59), (119.902195, 32.58),
           (121.903439, 4.63), (123.905274, 5.79)],
    "Te": [(119.904020, 0.09), (121.903044, 2.55), (122.904270, 0.89), (123.902818, 4.74),
           (124.904431, 7.07), (125.903312, 18.84), (127.904463, 31.74), (129.906224, 34.08)],
    "Pb": [(203.973044, 1.4), (205.974465, 24.1), (206.975897, 22.1), (207.976652, 52.4)],
}


def _gamma(symbol):
    """Γ = Σ f (1 − m/m̄)², plain arithmetic on the table above."""
    pairs = ISOTOPES[symbol]
    total = sum(a for _, a in pairs)
    mbar = sum(m * a for m, a in pairs) / total
    return sum(a / total * (1 - m / mbar) ** 2 for m, a in pairs)


@pytest.mark.parametrize("symbol", list(ISOTOPES))
def test_natural_isotope_gamma_against_an_independent_table(symbol):
    # tolerance 2 %: kappa's table (CIAAW ranges, middle values) and the representative
    # compositions differ slightly between editions
    assert isotope_mass_variance(symbol) == pytest.approx(_gamma(symbol), rel=0.02)
    assert disorder(symbol).mass_variance == pytest.approx(_gamma(symbol), rel=0.02)


def test_natural_silicon_against_the_published_value():
    ref = VALUES["gamma_si_natural"]  # 2.01e-4, isotope-effect literature
    assert disorder("Si").mass_variance == pytest.approx(ref.value, rel=ref.tolerance)


@pytest.mark.parametrize("name, symbol", [("gamma_c_natural", "C"), ("gamma_sn_natural", "Sn"),
                                          ("gamma_te_natural", "Te"),
                                          ("gamma_pb_natural", "Pb")])
def test_natural_isotope_gamma_against_reference_table(name, symbol):
    ref = VALUES[name]
    assert isotope_mass_variance(symbol) == pytest.approx(ref.value, rel=ref.tolerance)


def test_monoisotopic_elements_have_no_isotope_disorder():
    # Bi, As, Co, Al, Na have one stable isotope (common knowledge, no source)
    for el in ("Bi", "As", "Co", "Al", "Na"):
        assert isotope_mass_variance(el) == 0.0
    masses, abundances = isotopes("Si")
    assert abundances.sum() == pytest.approx(1.0, abs=1e-12) and masses.size == 3


@pytest.mark.parametrize("formula, weight", [
    # IUPAC abridged standard atomic weights (from memory)
    ("Si", 28.085), ("Ge", 72.630), ("Pb", 207.2), ("Te", 127.60), ("Bi", 208.98),
    ("Mg", 24.305), ("Sn", 118.71), ("Zr", 91.224), ("Hf", 178.49), ("Ni", 58.693),
])
def test_mean_mass_is_the_standard_atomic_weight(formula, weight):
    assert disorder(formula).atomic_mass == pytest.approx(weight, abs=0.01)
    assert mean_molar_mass(formula) * 1e3 == pytest.approx(weight, abs=0.01)


@pytest.mark.parametrize("formula, sites", [
    ("Si0.8Ge0.2", "[Si0.8Ge0.2]"),
    ("Mg2Si0.4Sn0.6", "[Mg]2[Si0.4Sn0.6]"),
    ("Zr0.5Hf0.5NiSn", "[Zr0.5Hf0.5][Ni][Sn]"),
    ("(Bi0.25Sb0.75)2Te3", "[Bi0.25Sb0.75]2[Te]3"),
    ("Bi2Te2.7Se0.3", "[Bi]2[Te0.9Se0.1]3"),
    ("Mg2(Si0.3Sn0.7)0.98Sb0.02", "[Mg]2[Si0.294Sn0.686Sb0.02]"),
    ("[Zr0.5Hf0.5][Ni][Sn0.98Sb0.02]", "[Zr0.5Hf0.5][Ni][Sn0.98Sb0.02]"),
    ("Zr0.5Hf0.5NiSn0.98Sb0.02", "[Zr0.5Hf0.5][Ni][Sn0.98Sb0.02]"),
    ("[Mg0.99Va0.01]2Si", "[Mg0.99Va0.01]2[Si]"),
    ("PbTe", "[Pb][Te]"),
])
def test_sites(formula, sites):
    assert format_sites(parse_sites(formula)) == sites


@pytest.mark.parametrize("formula, message", [
    ("Si0.8Ge0.3", "add up to 1.1"),
    ("Si0.8Ge0.1", "add up to 0.9"),
    ("Cu1.98Se", "Cu1.98 add up to 1.98"),
    ("(PbTe)0.9(SnTe)0.1", "run past a whole number"),
    ("[Si0.5Ge0.4]", "add up to 0.9, not 1"),
    ("Si0.5Ge0.5Qq", "unknown element symbol 'Qq'"),
    ("Si0.5Ge0.5)", "unbalanced ')'"),
    ("Si0.5Ge0.5$", "stops at character 11"),
    ("[Va]", "no atoms"),
])
def test_bad_compositions(formula, message):
    with pytest.raises(DataError) as info:
        disorder(formula)
    assert message in str(info.value)
    assert str(info.value).startswith("composition = ")


def test_alloy_on_one_site_by_hand():
    # Abeles' single-site form x(1−x)(ΔM/M̄)², standard weights Si 28.085, Ge 72.630
    # (hand arithmetic): M̄ = 0.8·28.085 + 0.2·72.630 = 36.994; ΔM = 44.545
    d = disorder("Si0.8Ge0.2", with_isotopes=False)
    assert d.mass_variance == pytest.approx(0.8 * 0.2 * (44.545 / 36.994) ** 2, rel=1e-4)
    assert d.isotope_mass_variance == 0.0


def test_site_weighted_gamma_of_a_half_heusler_by_hand():
    # Independent hand calculation from the site-weighted formula of Gurunathan et al.,
    # Phys. Rev. Applied 13, 034011 (2020) (their worked examples not recalled exactly):
    # Zr0.5Hf0.5NiSn, weights Zr 91.224, Hf 178.49, Ni 58.693, Sn 118.71 (IUPAC, from memory).
    m_site = 0.5 * 91.224 + 0.5 * 178.49                    # 134.857
    g_site = 0.5 * (1 - 91.224 / m_site) ** 2 + 0.5 * (1 - 178.49 / m_site) ** 2
    m_bar = (m_site + 58.693 + 118.71) / 3                 # 104.087
    expected = (1 / 3) * (m_site / m_bar) ** 2 * g_site      # 0.05858
    d = disorder("Zr0.5Hf0.5NiSn", with_isotopes=False)
    assert d.mass_variance == pytest.approx(expected, rel=2e-4)
    assert expected == pytest.approx(0.05858, abs=1e-4)
    # a simple average over all atoms (one site of every atom) overstates it: it counts the
    # ordered Ni/Sn mass contrast as disorder
    atoms = [(91.224, 1 / 6), (178.49, 1 / 6), (58.693, 1 / 3), (118.71, 1 / 3)]
    naive = sum(f * (1 - m / m_bar) ** 2 for m, f in atoms)
    assert naive > 2 * d.mass_variance


def test_mg2si_sn_by_hand():
    # [Mg]2[Si0.4Sn0.6], weights Mg 24.305, Si 28.085, Sn 118.71 (hand calculation, same formula)
    m_s = 0.4 * 28.085 + 0.6 * 118.71
    g_s = 0.4 * (1 - 28.085 / m_s) ** 2 + 0.6 * (1 - 118.71 / m_s) ** 2
    m_bar = (2 * 24.305 + m_s) / 3
    d = disorder("Mg2Si0.4Sn0.6", with_isotopes=False)
    assert d.mass_variance == pytest.approx((1 / 3) * (m_s / m_bar) ** 2 * g_s, rel=2e-4)


def test_isotope_and_alloy_parts_add_up_to_the_full_variance():
    # the variance over every isotope of every species on the site, computed directly
    d = disorder("Si0.8Ge0.2")
    parts = []
    for el, f in (("Si", 0.8), ("Ge", 0.2)):
        m, a = isotopes(el)
        parts += [(mi, f * ai) for mi, ai in zip(m, a, strict=True)]
    mbar = sum(m * w for m, w in parts)
    direct = sum(w * (1 - m / mbar) ** 2 for m, w in parts)
    assert d.mass_variance == pytest.approx(direct, rel=1e-12)
    assert d.mass_variance == pytest.approx(d.isotope_mass_variance + d.alloy_mass_variance,
                                            rel=1e-14)


def test_vacancy_small_fraction_limit():
    # Ratsifaritana & Klemens: a vacancy on a site of mass M_s is ΔM = −M_s − 2M̄; for a small
    # fraction y on c of N sites: Γ ≈ (c/N) y ((M_s + 2M̄)/M̄)² (hand derivation)
    y = 1e-4
    d = disorder(f"[Mg{1 - y}Va{y}]2Si", with_isotopes=False)
    m_mg, m_si = 24.305, 28.085
    m_bar = (2 * (1 - y) * m_mg + m_si) / (2 * (1 - y) + 1)
    approx = (2 / 3) * y * ((m_mg + 2 * m_bar) / m_bar) ** 2
    assert d.mass_variance == pytest.approx(approx, rel=2e-3)


def test_strain_term_by_hand():
    eps = 39.0
    radii = {"Si": 1.11e-10, "Ge": 1.20e-10}
    d = disorder("Si0.5Ge0.5", strain_parameter=eps, radii=radii)
    rbar = 1.155e-10
    expected = eps * (0.5 * (1 - 1.11e-10 / rbar) ** 2 + 0.5 * (1 - 1.20e-10 / rbar) ** 2)
    assert d.strain_variance == pytest.approx(expected, rel=1e-12)
    assert disorder("Si0.5Ge0.5", strain_parameter=0.0).strain_variance == 0.0
    assert disorder("PbTe").strain_variance == 0.0  # no site holds two species


def test_alloy_strain_from_end_member_sizes():
    a, b = parse_sites("Si"), parse_sites("Ge")
    x = np.array([0.0, 0.25, 0.5, 1.0])
    da, db = 2.716e-10, 2.829e-10
    gs = alloy_strain_variance(a, b, x, da, db, 39.0)
    dbar = (1 - x) * da + x * db
    # one site, M̄_s = M̄: Abeles' ε x(1−x)(Δδ/δ)²
    np.testing.assert_allclose(gs, 39.0 * x * (1 - x) * ((da - db) / dbar) ** 2, rtol=1e-12)
