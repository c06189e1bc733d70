"""``kappa disorder``: mean mass and point-defect Γ of a composition."""

from __future__ import annotations

import json
from typing import Annotated

import typer

from . import common

HELP = """Mean atomic mass and point-defect disorder Γ of a composition.

Γ_M (mass) is the site-weighted mass variance over the natural isotopes and the alloy
species of every site (Gurunathan et al., Phys. Rev. Applied 13, 034011 (2020)), reported as
its isotope and alloy parts, which add up exactly; Γ_S (strain) uses covalent radii and the
strain parameter ε (--strain-parameter, default 39). Vacancies are written Va inside a
bracketed site and scatter as the missing mass plus the missing bonds (Ratsifaritana &
Klemens 1987).

Sites: square brackets name one site, with fractions adding up to 1 and the number of such
sites after the bracket: [Zr0.5Hf0.5][Ni][Sn], [Bi0.25Sb0.75]2Te3, [Mg0.99Va0.01]2Si.
Without brackets, consecutive fractional amounts form one site as soon as they add up to a
whole number (Mg2Si0.4Sn0.6 is [Mg]2[Si0.4Sn0.6]).

Examples:

  kappa disorder Si

  kappa disorder Mg2Si0.4Sn0.6 --json

  kappa disorder "[Zr0.5Hf0.5]NiSn" --strain-parameter 100

  kappa disorder "[Mg0.99Va0.01]2Si"
"""


def disorder_command(
    formula: Annotated[str, typer.Argument(help="Chemical formula, e.g. Mg2Si0.4Sn0.6 or "
                                           "[Zr0.5Hf0.5][Ni][Sn].", show_default=False)],
    strain_parameter: Annotated[float, typer.Option(
        "--strain-parameter", help="Strain parameter ε (Abeles 1963: 39 for Si-Ge; a fit "
        "parameter).")] = 39.0,
    no_isotopes: Annotated[bool, typer.Option(
        "--no-isotopes", help="Leave out the natural-isotope part (isotopically pure "
        "elements).")] = False,
    as_json: Annotated[bool, typer.Option("--json", help="Print JSON (Γ dimensionless, mass "
                                          "in u).")] = False,
) -> None:
    from kappa.core.disorder import STRAIN_PARAMETER_SOURCE, disorder
    from kappa.errors import KappaError

    if not (strain_parameter >= 0 and strain_parameter < float("inf")):
        raise KappaError("--strain-parameter", strain_parameter, "must be a number >= 0")
    try:
        d = disorder(formula, strain_parameter=strain_parameter, with_isotopes=not no_isotopes,
                     key="FORMULA")
    except KappaError as exc:
        raise exc.renamed("FORMULA") if exc.key == "composition" else exc from None
    data = d.as_dict()
    data["isotopes"] = not no_isotopes
    data["strain_parameter_source"] = STRAIN_PARAMETER_SOURCE
    if as_json:
        typer.echo(json.dumps(data, indent=2, ensure_ascii=False))
        return
    typer.echo(f"{formula}: sites {data['sites']}")
    typer.echo(f"mean atomic mass M̄ = {d.atomic_mass:.6g} u (standard atomic weights)")
    typer.echo(f"mass disorder   Γ_M = {d.mass_variance:.4g}  (isotopes "
               f"{d.isotope_mass_variance:.4g} + alloy {d.alloy_mass_variance:.4g})")
    typer.echo(f"strain disorder Γ_S = {d.strain_variance:.4g}  (ε = {strain_parameter:g}, "
               "covalent radii)")
    rows = [[s["site"], s["mean_mass"], s["weight"], s["isotope_mass_variance"],
             s["alloy_mass_variance"], s["strain_variance"], s["contribution_mass"],
             s["contribution_strain"]] for s in data["per_site"]]
    common.print_table(["site", "M_s [u]", "weight", "Γ_iso", "Γ_alloy", "Γ_strain",
                        "→ Γ_M", "→ Γ_S"], rows, max_rows=100)
    typer.echo("weight = c_s (M_s/M̄)² / Σc; Γ_M = Σ weight·(Γ_iso + Γ_alloy), "
               "Γ_S = Σ weight·Γ_strain")
    typer.echo(f"strain parameter: {STRAIN_PARAMETER_SOURCE}")


def register(app: typer.Typer) -> None:
    app.command("disorder", help=HELP)(common.handles_errors(disorder_command))
