"""Point-defect disorder from a composition: natural isotopes, alloys on sublattices, vacancies.

Pure functions; masses in u (atomic mass units), radii in m; the scattering parameters Γ are
dimensionless and enter the Klemens rate τ⁻¹ = V₀ (Γ_M + Γ_S) ω⁴ / (4π v³) with V₀ the volume
per atom.

**Sites.** A compound is a set of sites (sublattices) s, c_s of them per formula unit, each
holding species i (elements, or a vacancy ``Va``) with site fractions f_si, Σ_i f_si = 1.
Square brackets name a site (``[Zr0.5Hf0.5][Ni][Sn]``, ``[Bi0.25Sb0.75]2Te3``); without
brackets the sites are read from the formula in order: an element or bracket whose amount is
a whole number is a site of that multiplicity; consecutive items with fractional amounts
(parenthesized groups count as one item) are one site, closed as soon as their amounts add up
to a whole number (``Mg2Si0.4Sn0.6`` → [Mg]2 [Si0.4Sn0.6]; ``Bi2Te2.7Se0.3`` → [Bi]2
[Te0.9Se0.1]3; ``(Bi0.25Sb0.75)2Te3`` → [Bi0.25Sb0.75]2 [Te]3). Amounts that run past a whole
number without reaching it (``(PbTe)0.9(SnTe)0.1``) or never reach one (``Cu1.98Se``) are an
error: name the sites with brackets (``[Pb0.9Sn0.1]Te``, ``[Cu0.99Va0.01]2Se``).

**Mass disorder** (site-weighted form of Yang, Meisner & Chen, Appl. Phys. Lett. 85, 1140
(2004), as generalized by Gurunathan, Hanus, Dylla, Katre & Snyder, Phys. Rev. Applied 13,
034011 (2020)). Every element i is itself a mixture of its natural isotopes k (abundances
a_ik, masses m_ik, mean m̄_i = Σ_k a_ik m_ik, isotope variance g_i = Σ_k a_ik (1 − m_ik/m̄_i)²).
With o_s = 1 − f_sVa the occupied part of site s,

    M̄_s = Σ_i f_si m̄_i / o_s                     (mean mass of the atoms on site s)
    M̄   = Σ_s c_s o_s M̄_s / Σ_s c_s o_s           (mean mass per atom)
    Γ_s,isotope = Σ_i f_si (m̄_i/M̄_s)² g_i
    Γ_s,alloy   = Σ_i f_si (1 − m̄_i/M̄_s)² + f_sVa ((M̄_s + 2M̄)/M̄_s)²
    Γ_M = Σ_s c_s (M̄_s/M̄)² (Γ_s,isotope + Γ_s,alloy) / Σ_s c_s.

Γ_s,isotope + Γ_s,alloy is exactly the mass variance of site s over all its isotopes (the
variance of a mixture is the mean of the parts' variances plus the variance of their means), so
the natural-isotope Γ of a compound and its alloy Γ add without double counting; kappa reports
both parts. Vacancies follow Ratsifaritana & Klemens, Int. J. Thermophys. 8, 737 (1987): a
vacancy scatters like a mass change ΔM = −M̄_s − 2M̄ (the missing atom plus its missing bonds,
counted as −2 mean atomic masses), as used by Gurunathan et al. (2020). Vacancies carry no
strain term.

**Strain disorder** (Abeles, Phys. Rev. 131, 1906 (1963); site-weighted as above): with radii
r_i and r̄_s = Σ_i f_si r_i / o_s over the atoms of the site,

    Γ_S = Σ_s c_s (M̄_s/M̄)² ε Σ_i f_si (1 − r_i/r̄_s)² / Σ_s c_s,

ε a phenomenological strain parameter. Default ε = 39, the value Abeles fitted to Si–Ge alloys
(from memory); published fits of other alloys range from about 10 to over 100, so treat ε as a
fit parameter. Radii default to the covalent radii of Cordero et al., Dalton Trans. 2008, 2832
(as distributed by ``periodictable``); :func:`alloy_strain_variance` instead takes the size
mismatch from two end members' δ = V₀^(1/3).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from kappa.core.composition import (
    VACANCY,
    Node,
    mean_molar_mass,
    parse_tree,
    standard_atomic_weight,
)
from kappa.errors import DataError

__all__ = [
    "DEFAULT_STRAIN_PARAMETER",
    "STRAIN_PARAMETER_SOURCE",
    "DISORDER_CITATIONS",
    "Site",
    "SiteDisorder",
    "Disorder",
    "isotopes",
    "isotope_mass_variance",
    "parse_sites",
    "format_sites",
    "interpolate_sites",
    "disorder",
    "site_disorder",
    "alloy_strain_variance",
    "covalent_radius",
]

DEFAULT_STRAIN_PARAMETER = 39.0  #: ε, Abeles (1963), Si–Ge (from memory)
STRAIN_PARAMETER_SOURCE = ("ε = 39: the strain parameter Abeles fitted to Si–Ge alloys, "
                           "Phys. Rev. 131, 1906 (1963) (from memory); treat it as a fit "
                           "parameter (published fits: about 10 to over 100)")
DISORDER_CITATIONS = (
    "Site-weighted point-defect Γ: R. Gurunathan, R. Hanus, M. Dylla, A. Katre & G. J. Snyder, "
    "Phys. Rev. Applied 13, 034011 (2020); J. Yang, G. P. Meisner & L. Chen, Appl. Phys. Lett. "
    "85, 1140 (2004)",
    "Strain term: B. Abeles, Phys. Rev. 131, 1906 (1963)",
    "Vacancies: C. A. Ratsifaritana & P. G. Klemens, Int. J. Thermophys. 8, 737 (1987)",
    "Isotope masses and abundances: CIAAW/AME 2020 via the periodictable package; covalent "
    "radii: B. Cordero et al., Dalton Trans. 2008, 2832",
)
_TOL = 1e-3  #: how close to a whole number the amounts of one site must add up


# --- isotopes -------------------------------------------------------------------------------


@functools.cache
def isotopes(symbol: str) -> tuple[np.ndarray, np.ndarray]:
    """Natural isotopes of an element: (masses [u], abundances summing to 1).

    Source: CIAAW abundances and AME 2020 masses as distributed by ``periodictable``.

    Raises
    ------
    DataError
        No natural abundances known for this element (e.g. U in the distributed table).
    """
    standard_atomic_weight(symbol)  # unknown symbols fail here
    import periodictable

    el = periodictable.elements.symbol(symbol)
    iso = [el[n] for n in el.isotopes if el[n].abundance > 0]
    if not iso:
        raise DataError("symbol", symbol, "no natural isotope abundances are known for it")
    m = np.array([i.mass for i in iso], dtype=float)
    a = np.array([i.abundance for i in iso], dtype=float)
    return m, a / a.sum()


def _mean_and_variance(symbol: str, with_isotopes: bool) -> tuple[float, float]:
    """(m̄_i [u], g_i): isotope-weighted mean mass and isotope Γ of one element.

    Without isotopes: the standard atomic weight and 0.
    """
    if not with_isotopes:
        return standard_atomic_weight(symbol), 0.0
    m, a = isotopes(symbol)
    mean = float(a @ m)
    return mean, float(a @ (1.0 - m / mean) ** 2)


def isotope_mass_variance(symbol: str) -> float:
    """Natural-isotope mass variance Γ = Σ_k a_k (1 − m_k/m̄)² of one element [1].

    Examples
    --------
    >>> round(isotope_mass_variance("Si") * 1e4, 2)   # natural silicon, ≈ 2.0e-4
    2.0
    >>> isotope_mass_variance("Bi")                   # one stable isotope
    0.0
    """
    return _mean_and_variance(symbol, True)[1]


@functools.cache
def covalent_radius(symbol: str) -> float:
    """Covalent radius [m] (Cordero et al., Dalton Trans. 2008, 2832, via ``periodictable``)."""
    standard_atomic_weight(symbol)
    import periodictable

    r = periodictable.elements.symbol(symbol).covalent_radius
    if r is None:
        raise DataError("symbol", symbol, "no covalent radius is known for it")
    return float(r) * 1e-10


# --- sites -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Site:
    """One site (sublattice): ``multiplicity`` sites per formula unit and its species.

    ``species`` maps a symbol (``Va`` for a vacancy) to its site fraction; fractions add up to
    1 and may be numpy arrays (a batch of compositions).
    """

    multiplicity: float
    species: Mapping[str, object]

    def text(self, digits: int = 4) -> str:
        """``[Zr0.5Hf0.5]`` or ``[Mg]2`` (``[Si(x)Ge(x)]`` for a batch of fractions)."""
        inner = "".join(f"{s}(x)" if np.ndim(f) else (
            s if abs(float(f) - 1.0) < 1e-12 else f"{s}{float(f):.{digits}g}")
            for s, f in self.species.items())
        m = self.multiplicity
        return f"[{inner}]" + ("" if abs(m - 1.0) < 1e-12 else f"{m:.{digits}g}")


def format_sites(sites: Sequence[Site]) -> str:
    """The sites as one bracketed formula, e.g. ``[Zr0.5Hf0.5][Ni][Sn]``."""
    return "".join(s.text() for s in sites)


@dataclass
class _Unit:
    amounts: dict[str, float]  # symbol → atoms per formula unit
    total: float
    complete: bool


def _is_whole(t: float) -> bool:
    return t >= 1.0 - _TOL and abs(t - round(t)) <= _TOL


def _units(items: Sequence[Node], key: str, formula: str) -> list[_Unit]:
    """Complete sites and open runs at one level of the formula, in order."""
    raw: list[_Unit] = []
    for n in items:
        if n.kind == "element":
            raw.append(_Unit({n.symbol: n.amount}, n.amount, _is_whole(n.amount)))
        elif n.kind == "site":
            fr: dict[str, float] = {}
            for c in n.children:
                fr[c.symbol] = fr.get(c.symbol, 0.0) + c.amount
            total = sum(fr.values())
            if abs(total - 1.0) > _TOL:
                text = "".join(f"{s}{f:g}" for s, f in fr.items())
                raise DataError(key, formula, f"the site fractions of [{text}] add up to "
                                f"{total:.6g}, not 1")
            raw.append(_Unit({s: f / total * n.amount for s, f in fr.items()}, n.amount, True))
        else:  # a parenthesized group: its units scaled by the group's amount
            for u in _units(n.children, key, formula):
                amounts = {s: a * n.amount for s, a in u.amounts.items()}
                total = u.total * n.amount
                raw.append(_Unit(amounts, total, _is_whole(total)))
    out: list[_Unit] = []
    run: _Unit | None = None
    for u in raw:
        if run is None and u.complete:
            out.append(u)
            continue
        if run is None:
            run = _Unit(dict(u.amounts), u.total, False)
        elif u.complete:  # a whole number added to an open run can never close it
            raise DataError(key, formula, _unfilled(run, "are not a whole number of sites"))
        else:
            before = run.total
            for s, a in u.amounts.items():
                run.amounts[s] = run.amounts.get(s, 0.0) + a
            run.total += u.total
            if math.floor(run.total + _TOL) > math.floor(before + _TOL) and \
                    not _is_whole(run.total):
                raise DataError(key, formula, _unfilled(run, "run past a whole number of "
                                                        "sites without reaching one"))
        if _is_whole(run.total):
            run.complete = True
            out.append(run)
            run = None
    if run is not None:
        out.append(run)  # still open: the caller decides (a group may close it outside)
    return out


def _unfilled(run: _Unit, what: str) -> str:
    text = "".join(f"{s}{a:.4g}" for s, a in run.amounts.items())
    return (f"the amounts {text} add up to {run.total:.4g} and {what}; the fractions on one "
            "site must fill it (add up to a whole number); name the sites with brackets, e.g. "
            "[Zr0.5Hf0.5]NiSn or [Cu0.99Va0.01]2Se")


def parse_sites(formula: str, key: str = "composition") -> tuple[Site, ...]:
    """The sites of a formula (see the module docstring for how they are read).

    Examples
    --------
    >>> format_sites(parse_sites("Mg2Si0.4Sn0.6"))
    '[Mg]2[Si0.4Sn0.6]'
    >>> format_sites(parse_sites("(Bi0.25Sb0.75)2Te3"))
    '[Bi0.25Sb0.75]2[Te]3'

    Raises
    ------
    DataError
        A bad formula, or fractions that do not fill a site.
    """
    units = _units(parse_tree(formula, key), key, formula)
    sites = []
    for u in units:
        if not u.complete:
            raise DataError(key, formula, _unfilled(u, "are not a whole number of sites"))
        m = float(round(u.total)) if abs(u.total - round(u.total)) <= _TOL else u.total
        sites.append(Site(m, {s: a / u.total for s, a in u.amounts.items()}))
    if all(set(s.species) == {VACANCY} for s in sites):
        raise DataError(key, formula, "has no atoms, only vacancies")
    for s in sites:
        if set(s.species) == {VACANCY}:
            raise DataError(key, formula, "a site holds only vacancies; leave it out")
    return tuple(sites)


def interpolate_sites(a: Sequence[Site], b: Sequence[Site], fraction,
                      key: str = "end_members") -> tuple[Site, ...]:
    """Sites of the alloy (1 − x)·A + x·B, site by site (fractions may be an array).

    Both end members must list the same number of sites with the same multiplicities, in the
    same order (``Mg2Si`` with ``Mg2Sn``; ``ZrNiSn`` with ``HfNiSn``).
    """
    if len(a) != len(b) or any(abs(sa.multiplicity - sb.multiplicity) > 1e-9
                               for sa, sb in zip(a, b, strict=False)):
        raise DataError(key, f"{format_sites(a)} and {format_sites(b)}",
                        "the end members need the same sites in the same order (same number "
                        "of sites and multiplicities), e.g. Mg2Si and Mg2Sn")
    x = np.asarray(fraction, dtype=float) if np.ndim(fraction) else float(fraction)
    out = []
    for sa, sb in zip(a, b, strict=True):
        species: dict[str, object] = {}
        for s, f in sa.species.items():
            species[s] = species.get(s, 0.0) + (1.0 - x) * f
        for s, f in sb.species.items():
            species[s] = species.get(s, 0.0) + x * f
        out.append(Site(sa.multiplicity, species))
    return tuple(out)


# --- Γ -------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SiteDisorder:
    """Γ parts of one site (values may be arrays for a batch)."""

    site: Site
    mean_mass: object  # M̄_s [u]
    weight: object  # c_s (M̄_s/M̄)² / Σ c_s
    isotope: object  # Γ_s,isotope
    alloy: object  # Γ_s,alloy (vacancies included)
    strain: object  # ε Σ f (1 − r/r̄)²


@dataclass(frozen=True)
class Disorder:
    """Point-defect disorder of a composition.

    Attributes
    ----------
    formula : str
        As given.
    sites : tuple of SiteDisorder
    atomic_mass : float or ndarray
        Mean mass per atom from the standard atomic weights [u].
    mass_variance, isotope_mass_variance, alloy_mass_variance : float or ndarray
        Γ_M and its two parts (they add up exactly) [1].
    strain_variance : float or ndarray
        Γ_S [1].
    strain_parameter : float
        ε used.
    """

    formula: str
    sites: tuple[SiteDisorder, ...]
    atomic_mass: object
    mass_variance: object
    isotope_mass_variance: object
    alloy_mass_variance: object
    strain_variance: object
    strain_parameter: float
    citations: tuple[str, ...] = field(default=DISORDER_CITATIONS)

    def as_dict(self) -> dict:
        """Plain values (scalar compositions), SI/u, for JSON."""
        return {
            "formula": self.formula,
            "sites": format_sites([s.site for s in self.sites]),
            "atomic_mass": float(self.atomic_mass),
            "atomic_mass_unit": "u",
            "mass_variance": float(self.mass_variance),
            "isotope_mass_variance": float(self.isotope_mass_variance),
            "alloy_mass_variance": float(self.alloy_mass_variance),
            "strain_variance": float(self.strain_variance),
            "strain_parameter": self.strain_parameter,
            "per_site": [{
                "site": s.site.text(),
                "multiplicity": s.site.multiplicity,
                "fractions": {k: float(v) for k, v in s.site.species.items()},
                "mean_mass": float(s.mean_mass),
                "weight": float(s.weight),
                "isotope_mass_variance": float(s.isotope),
                "alloy_mass_variance": float(s.alloy),
                "strain_variance": float(s.strain),
                "contribution_mass": float(s.weight * (s.isotope + s.alloy)),
                "contribution_strain": float(s.weight * s.strain),
            } for s in self.sites],
            "citations": list(self.citations),
        }


def site_disorder(sites: Sequence[Site], *, strain_parameter: float = DEFAULT_STRAIN_PARAMETER,
                  with_isotopes: bool = True, radii: Mapping[str, float] | None = None,
                  key: str = "composition", formula: str = "") -> Disorder:
    """Γ_M (isotopes + alloy + vacancies) and Γ_S of a list of sites (module docstring).

    Parameters
    ----------
    sites : sequence of Site
        Fractions may be numpy arrays (a batch).
    strain_parameter : float
        ε [1], ≥ 0.
    with_isotopes : bool
        Include the natural-isotope part.
    radii : mapping, optional
        Symbol → radius [m] overriding the covalent radii.
    """
    if not (strain_parameter >= 0 and math.isfinite(strain_parameter)):
        raise DataError("strain_parameter", strain_parameter, "must be a finite number >= 0")
    radii = dict(radii or {})
    parts = []
    for s in sites:
        occ = 1.0 - np.asarray(s.species.get(VACANCY, 0.0))
        if np.any(occ <= 1e-12):
            raise DataError(key, formula or format_sites(sites), "a site holds only vacancies")
        try:
            stats = {sym: _mean_and_variance(sym, with_isotopes) for sym in s.species
                     if sym != VACANCY}
        except DataError as exc:
            raise DataError(key, formula or format_sites(sites),
                            f"{exc.value}: {exc.allowed}") from None
        mean = sum(f * stats[sym][0] for sym, f in s.species.items() if sym != VACANCY) / occ
        parts.append((s, occ, stats, mean))
    n_sites = sum(s.multiplicity for s in sites)
    n_atoms = sum(s.multiplicity * occ for s, occ, _, _ in parts)
    mbar = sum(s.multiplicity * occ * mean for s, occ, _, mean in parts) / n_atoms
    out = []
    for s, _occ, stats, mean in parts:
        iso = 0.0
        alloy = 0.0
        for sym, f in s.species.items():
            if sym == VACANCY:
                alloy = alloy + f * ((mean + 2.0 * mbar) / mean) ** 2
                continue
            m_i, g_i = stats[sym]
            iso = iso + f * (m_i / mean) ** 2 * g_i
            alloy = alloy + f * (1.0 - m_i / mean) ** 2
        atoms = [sym for sym in s.species if sym != VACANCY]
        strain = 0.0
        if strain_parameter > 0 and len(atoms) > 1:
            r = {sym: radii[sym] if sym in radii else covalent_radius(sym) for sym in atoms}
            occ_f = sum(s.species[sym] for sym in atoms)
            rbar = sum(s.species[sym] * r[sym] for sym in atoms) / occ_f
            strain = strain_parameter * sum(s.species[sym] * (1.0 - r[sym] / rbar) ** 2
                                            for sym in atoms)
        weight = s.multiplicity * (mean / mbar) ** 2 / n_sites
        out.append(SiteDisorder(s, _plain(mean), _plain(weight), _plain(iso), _plain(alloy),
                                _plain(strain)))
    iso_total = _plain(sum(p.weight * p.isotope for p in out))
    alloy_total = _plain(sum(p.weight * p.alloy for p in out))
    strain_total = _plain(sum(p.weight * p.strain for p in out))
    return Disorder(formula or format_sites(sites), tuple(out),
                    _plain(_standard_mean_mass(sites)), _plain(iso_total + alloy_total),
                    iso_total, alloy_total, strain_total, float(strain_parameter))


def _standard_mean_mass(sites: Sequence[Site]):
    """Mean mass per atom [u] from the standard atomic weights (vacancies not counted)."""
    num = 0.0
    den = 0.0
    for s in sites:
        for sym, f in s.species.items():
            if sym == VACANCY:
                continue
            num = num + s.multiplicity * f * standard_atomic_weight(sym)
            den = den + s.multiplicity * f
    return num / den


def _plain(v):
    return float(v) if np.ndim(v) == 0 else np.asarray(v, dtype=float)


def disorder(formula: str, *, strain_parameter: float = DEFAULT_STRAIN_PARAMETER,
             with_isotopes: bool = True, radii: Mapping[str, float] | None = None,
             key: str = "composition") -> Disorder:
    """Point-defect disorder of a formula: mean mass, Γ_M (isotopes + alloy), Γ_S.

    Examples
    --------
    >>> d = disorder("Si")
    >>> round(d.atomic_mass, 3), round(d.mass_variance * 1e4, 2), d.strain_variance
    (28.085, 2.0, 0.0)
    >>> d = disorder("Si0.8Ge0.2")       # alloy on one site; isotopes included
    >>> round(d.alloy_mass_variance, 3)  # 0.8·0.2·(ΔM/M̄)² with M̄ = 0.8·28.085 + 0.2·72.63
    0.232
    """
    sites = parse_sites(formula, key)
    mean_molar_mass(formula, key)  # the mean mass must exist (standard weights)
    return site_disorder(sites, strain_parameter=strain_parameter, with_isotopes=with_isotopes,
                         radii=radii, key=key, formula=str(formula).strip())


def alloy_strain_variance(sites_a: Sequence[Site], sites_b: Sequence[Site], fraction,
                          size_a, size_b, strain_parameter: float = DEFAULT_STRAIN_PARAMETER,
                          key: str = "end_members"):
    """Γ_S of the alloy (1 − x)A + xB from the end members' sizes δ = V₀^(1/3).

    Every site whose species differ between A and B is a two-species mixture of A's and B's
    occupants with sizes δ_A and δ_B: Γ_s = ε x(1 − x) ((δ_A − δ_B)/δ̄)², δ̄ = (1 − x)δ_A + xδ_B
    (Abeles 1963), site-weighted by c_s (M̄_s/M̄)² / Σc as the mass term. Returns Γ_S [1]
    (an array for an array of fractions).
    """
    x = np.asarray(fraction, dtype=float)
    mixed = interpolate_sites(sites_a, sites_b, x, key)
    d = site_disorder(mixed, strain_parameter=0.0, with_isotopes=False, key=key)
    dbar = (1.0 - x) * size_a + x * size_b
    total = 0.0
    for sa, sb, part in zip(sites_a, sites_b, d.sites, strict=True):
        if dict(sa.species) == dict(sb.species):
            continue
        total = total + part.weight * strain_parameter * x * (1.0 - x) * (
            (size_a - size_b) / dbar) ** 2
    return _plain(total * np.ones(np.shape(x)))
