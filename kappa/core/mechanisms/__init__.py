"""Phonon scattering mechanisms and their registry.

Adding a mechanism is one class (a module here) plus one entry in :data:`REGISTRY`; see
DEVELOPERS.md. Everything else — config keys, ``--set``, fits, sweeps, spectra, ``kappa
check``, figure labels — reads the class's declarations.
"""

from __future__ import annotations

from kappa.core.mechanisms.base import NPOW, VELOCITY_FORMS, Mechanism, RateContext, per_node
from kappa.core.mechanisms.boundary import Boundary, boundary_rate, rough_boundary_rate
from kappa.core.mechanisms.dislocation import Dislocation
from kappa.core.mechanisms.four_phonon import FourPhonon
from kappa.core.mechanisms.normal import Normal, normal_branch_coefficient
from kappa.core.mechanisms.point_defect import PointDefect, point_defect_coefficient
from kappa.core.mechanisms.precipitate import Precipitate, precipitate_cross_section
from kappa.core.mechanisms.umklapp import Umklapp, umklapp_coefficient

__all__ = [
    "NPOW",
    "VELOCITY_FORMS",
    "REGISTRY",
    "Mechanism",
    "RateContext",
    "per_node",
    "Umklapp",
    "Boundary",
    "PointDefect",
    "Normal",
    "FourPhonon",
    "Precipitate",
    "Dislocation",
    "umklapp_coefficient",
    "boundary_rate",
    "rough_boundary_rate",
    "precipitate_cross_section",
    "point_defect_coefficient",
    "normal_branch_coefficient",
]

#: Every mechanism by config key (in the order configs, tables and figures list them).
REGISTRY: dict[str, type[Mechanism]] = {
    cls.key: cls for cls in (
        Umklapp,
        FourPhonon,
        Boundary,
        PointDefect,
        Precipitate,
        Dislocation,
        Normal,
    )
}
