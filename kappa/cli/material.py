"""``kappa material``: a material block from measured sound velocities, density, composition."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Annotated

import typer

from . import common

HELP = """A material from its sound velocities, density and composition.

Prints the Debye mean velocity, the Debye temperature (and the acoustic one, θ_a = θ_D
n^(-1/3) for n atoms per primitive cell), the Poisson ratio, the Grüneisen parameter from
the Poisson ratio (Belomestnykh & Tesleva 2004), the minimum conductivities of
Cahill-Watson-Pohl, Clarke and the diffuson model (Agne, Hanus & Snyder 2018), and Slack's
high-temperature estimate at 300 K; writes a ready 'material:' block (averaged branch, with
the per-branch form as a comment) to -o FILE or prints it.

Examples:

  kappa material --vl 8.43km/s --vt 5.84km/s --density 2.329g/cm^3 --composition Si

  kappa material --vl 3.53km/s --vt 1.61km/s --density 8.16g/cm^3 --composition PbTe
      --atoms-per-cell 2 -o pbte-material.yaml

  kappa material --vl 8.43km/s --vt 5.84km/s --density 2.329g/cm^3 --composition Si --json
"""


def material_command(
    vl: Annotated[str, typer.Option("--vl", help="Longitudinal sound velocity, e.g. 8.43km/s "
                                    "(bare number: m/s).", show_default=False)],
    vt: Annotated[str, typer.Option("--vt", help="Transverse sound velocity, e.g. 5.84km/s.",
                                    show_default=False)],
    density: Annotated[str, typer.Option("--density", help="Density, e.g. 2.329g/cm^3 (bare "
                                         "number: kg/m^3).", show_default=False)],
    composition: Annotated[str | None, typer.Option(
        "--composition", help="Chemical formula (gives the mean atomic mass).",
        show_default=False)] = None,
    atomic_mass: Annotated[str | None, typer.Option(
        "--atomic-mass", help="Mean mass per atom instead of --composition, e.g. 28.0855u.",
        show_default=False)] = None,
    atoms_per_cell: Annotated[float, typer.Option(
        "--atoms-per-cell", help="Atoms per primitive cell n (acoustic θ_a, Slack).")] = 1.0,
    name: Annotated[str | None, typer.Option("--name", help="Name of the material block.",
                                             show_default=False)] = None,
    out: Annotated[Path | None, typer.Option("-o", "--out", help="Write the material block "
                                             "to this YAML file.", show_default=False)] = None,
    force: Annotated[bool, typer.Option("--force", help="Replace an existing -o file.")
                     ] = False,
    as_json: Annotated[bool, typer.Option("--json", help="Print the derived values as JSON "
                                          "(SI units).")] = False,
) -> None:
    import math

    from kappa.core.composition import mean_molar_mass
    from kappa.core.constants import N_A, u
    from kappa.core.elastic import ELASTIC_CITATIONS, from_sound_velocities
    from kappa.errors import KappaError
    from kappa.io.units import parse_quantity

    v_l = parse_quantity(vl, "m/s", "--vl")
    v_t = parse_quantity(vt, "m/s", "--vt")
    rho = parse_quantity(density, "kg/m^3", "--density")
    if (composition is None) == (atomic_mass is None):
        raise KappaError("--composition", allowed="give either --composition (e.g. Si) or "
                         "--atomic-mass (e.g. 28.0855u), one of them")
    if composition is not None:
        try:
            mass = mean_molar_mass(composition, "--composition") / N_A
        except KappaError as exc:
            raise exc.renamed("--composition") from None
    else:
        mass = parse_quantity(atomic_mass, "kg", "--atomic-mass", bare="u")
    if not (atoms_per_cell >= 1 and math.isfinite(atoms_per_cell)):
        raise KappaError("--atoms-per-cell", atoms_per_cell, "must be a number >= 1")
    flags = {"longitudinal": "--vl", "transverse": "--vt", "density": "--density",
             "atomic_mass": "--atomic-mass", "atoms_per_cell": "--atoms-per-cell"}
    try:
        e = from_sound_velocities(v_l, v_t, rho, mass, atoms_per_cell)
    except KappaError as exc:
        raise exc.renamed(flags.get(exc.key, exc.key)) from None
    if out is not None:
        if out.exists() and out.is_dir():
            raise KappaError("--out", str(out), "is a folder; give a file name (e.g. "
                             "material.yaml)")
        if out.exists() and not force:
            raise KappaError("--out", str(out), "already exists; choose another name or add "
                             "--force to replace it")
    text = _block(e, name or (f"{composition} (from sound velocities)" if composition
                              else "from sound velocities"), composition, mass / u)
    if as_json:
        data = e.as_dict()
        data["atomic_mass_u"] = mass / u
        data["units"] = _UNITS
        data["citations"] = list(ELASTIC_CITATIONS)
        typer.echo(json.dumps(data, indent=2, ensure_ascii=False))
    else:
        _report(e)
        if out is None:
            typer.echo("")
            typer.echo(text, nl=False)
    if out is not None:
        out.parent.mkdir(parents=True, exist_ok=True)
        tmp = out.with_name(f".{out.name}.partial")
        tmp.write_text(text, encoding="utf-8")
        tmp.replace(out)
        common.echo_err(f"wrote {out}")


_UNITS = {
    "longitudinal_velocity": "m/s", "transverse_velocity": "m/s", "sound_velocity": "m/s",
    "density": "kg/m^3", "atomic_mass": "kg", "atomic_mass_u": "u", "atoms_per_cell": "1",
    "atomic_volume": "m^3", "number_density": "1/m^3", "debye_temperature": "K",
    "acoustic_debye_temperature": "K", "longitudinal_debye_temperature": "K",
    "transverse_debye_temperature": "K", "poisson_ratio": "1", "gruneisen": "1",
    "youngs_modulus": "Pa", "shear_modulus": "Pa", "bulk_modulus": "Pa",
    "kappa_min_cahill": "W/(m K)", "kappa_min_cahill_300K": "W/(m K)",
    "kappa_min_clarke": "W/(m K)", "kappa_min_diffuson": "W/(m K)",
    "kappa_slack_300K": "W/(m K)",
}


def _report(e) -> None:
    rows = [
        ("mean sound velocity v_m", e.sound_velocity, "m/s", "Debye mean of v_L, 2 v_T"),
        ("Debye temperature θ_D", e.debye_temperature, "K", "Anderson 1963"),
        ("acoustic Debye temperature θ_a", e.acoustic_debye_temperature, "K",
         f"θ_D n^(-1/3), n = {e.atoms_per_cell:g}"),
        ("Poisson ratio ν", e.poisson_ratio, "1", "(1-2r²)/(2-2r²), r = v_T/v_L"),
        ("Grüneisen parameter γ", e.gruneisen, "1", "3(1+ν)/(2(2-3ν)), Belomestnykh & "
         "Tesleva 2004"),
        ("Young's modulus E", e.youngs_modulus / 1e9, "GPa", "isotropic"),
        ("volume per atom V₀", e.atomic_volume * 1e30, "angstrom**3", "M̄/ρ"),
        ("κ_min Cahill-Watson-Pohl", e.kappa_min_cahill, "W/(m K)", "high-T limit"),
        ("κ_min Cahill-Watson-Pohl, 300 K", e.kappa_min_cahill_300K, "W/(m K)", ""),
        ("κ_min Clarke", e.kappa_min_clarke, "W/(m K)", "0.87 k_B V₀^(-2/3) (E/ρ)^(1/2)"),
        ("κ_min diffuson", e.kappa_min_diffuson, "W/(m K)", "0.76 n^(2/3) k_B (v_L+2v_T)/3"),
        ("κ Slack at 300 K", e.kappa_slack_300K, "W/(m K)", "A(γ) M̄ θ_a³ δ n^(1/3)/(γ² T)"),
    ]
    common.print_table(["quantity", "value", "unit", "how"], rows, max_rows=100)


def _block(e, name: str, composition: str | None, mass_u: float) -> str:
    """The ``material:`` block as YAML text with comments (re-loadable by kappa)."""
    lines = [
        "# Material from measured sound velocities (kappa material).",
        f"# v_L = {e.longitudinal_velocity:.6g} m/s, v_T = {e.transverse_velocity:.6g} m/s, "
        f"density = {e.density / 1e3:.6g} g/cm**3",
        f"# Derived: v_m = {e.sound_velocity:.6g} m/s, θ_D = {e.debye_temperature:.6g} K, "
        f"θ_a = {e.acoustic_debye_temperature:.6g} K,",
        f"#   Poisson ratio ν = {e.poisson_ratio:.4g}; γ = 3(1+ν)/(2(2-3ν)) = "
        f"{e.gruneisen:.4g} (Belomestnykh & Tesleva,",
        "#   Tech. Phys. 49, 1098 (2004)): an estimate; fit it to data where you have them.",
        "# kappa derives the Debye temperature from the velocities and the volume per atom.",
        "material:",
        f"  name: {json.dumps(name, ensure_ascii=False)}",
    ]
    if composition is not None:
        lines.append(f"  composition: {json.dumps(composition)}")
    else:
        lines.append(f"  atomic_mass: {mass_u:.8g} u")
    lines += [f"  density: {e.density / 1e3:.6g} g/cm**3"]
    if e.atoms_per_cell != 1.0:
        lines.append(f"  atoms_per_cell: {e.atoms_per_cell:g}")
    lines += [
        f"  longitudinal_velocity: {e.longitudinal_velocity:.6g} m/s",
        f"  transverse_velocity: {e.transverse_velocity:.6g} m/s",
        f"  gruneisen: {e.gruneisen:.4g}",
        "# Per-branch form: replace the last three keys with",
        "#  branches:",
        f"#    - {{polarization: longitudinal, count: 1, sound_velocity: "
        f"{e.longitudinal_velocity:.6g} m/s, gruneisen: {e.gruneisen:.4g}}}",
        f"#    - {{polarization: transverse, count: 2, sound_velocity: "
        f"{e.transverse_velocity:.6g} m/s, gruneisen: {e.gruneisen:.4g}}}",
        f"#  (branch Debye temperatures from the velocities: θ_L = "
        f"{e.longitudinal_debye_temperature:.5g} K, θ_T = {e.transverse_debye_temperature:.5g}"
        " K, acoustic)",
    ]
    return "\n".join(lines) + "\n"


def register(app: typer.Typer) -> None:
    app.command("material", help=HELP)(common.handles_errors(material_command))
