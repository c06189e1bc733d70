"""Regenerate the invented measurements of the study demo (seeded; a fictional lab's samples).

The Fenwick Hollow lab does not exist and its three pellets of the fictional "FH demo silicide"
were never made. Their numbers come from kappa's own Callaway model (fh-silicide.yaml with a
Grüneisen parameter of 1.8 and grain sizes of 4 um, 700 nm and 180 nm) plus an activated
bipolar term, a single-parabolic-band electronic part, and seeded noise of about 1.5 %. Finer
grains also lower the electrical conductivity a little (grain boundaries scatter electrons
too). They describe no real sample; they exist to show `kappa study` at work.

Run: python make_data.py  (writes the CSV files beside this script and the copy that
`kappa demo` uses, kappa/data/demo/, when run inside the repository).
"""

import shutil
from pathlib import Path

import numpy as np

from kappa.core.electronic import lorenz_spb, spb_seebeck
from kappa.core.evaluator import conductivity
from kappa.io.config import load_config

HERE = Path(__file__).parent
BUNDLED = HERE.parents[1] / "kappa" / "data" / "demo"
TRUE_GRUNEISEN = 1.8
#: name: (grain size [m], factor on sigma from grain-boundary electron scattering)
SAMPLES = {"FH-21": (4e-6, 1.00), "FH-22": (700e-9, 0.94), "FH-23": (180e-9, 0.82)}
kB_eV = 8.617333e-5
rng = np.random.default_rng(20250314)
base = load_config(HERE / "fh-silicide.yaml").model


def noisy(x, rel):
    return x * (1.0 + rel * rng.standard_normal(np.shape(x)))


def truth(T, grain, factor):
    """Lattice (with bipolar) conductivity, electrical conductivity and Seebeck at T."""
    model = base.with_values({"material.gruneisen": TRUE_GRUNEISEN,
                              "scattering.boundary.grain_size": grain})
    kl = conductivity(model, T) + 12.0 * np.exp(-0.64 / (2 * kB_eV * T))
    eta = 1.1 - 2.6e-3 * (T - 300.0)
    S = -spb_seebeck(eta) * (1.0 + 0.1 * (1.0 - factor))
    sigma = factor * 1.35e5 * (300.0 / T) ** 1.05
    return kl, sigma, S


def write(name, header, lines):
    (HERE / name).write_text("\n".join([header[0], header[1], *lines]) + "\n", encoding="utf-8")


Tf_C = np.arange(50.0, 476.0, 25.0)  # flash furnace set points [degC]
Tf = Tf_C + 273.15
Te = np.arange(300.0, 761.0, 20.0)  # four-probe stage [K]
rho = 3.12e3  # kg/m^3, Archimedes
M = 3 * 8.314462618 / 0.04369  # Dulong-Petit of Mg2Si0.4Sn0.6 [J/(kg K)]

# FH-21 and FH-22: flash (D, rho; FH-21 with a DSC c_p) and four-probe files on their own grids
for name in ("FH-21", "FH-22"):
    grain, factor = SAMPLES[name]
    kl, sigma, S = truth(Tf, grain, factor)
    cp = M * (1.0 + 0.05 * (Tf - 300.0) / 450.0)  # the "true" c_p rises above Dulong-Petit
    kappa = kl + lorenz_spb(np.abs(S)) * sigma * Tf
    D = kappa / (rho * cp)
    if name == "FH-21":
        head = (f"# {name} (fictional sample), laser flash and DSC, Fenwick Hollow lab "
                "(fictional)", "T [degC],D [mm^2/s],rho [g/cm^3],cp [J/(g K)]")
        rows = [f"{t:.0f},{noisy(d, 0.012) * 1e6:.4f},{rho / 1e3 if i == 0 else '':},"
                f"{noisy(c, 0.01) / 1e3:.4f}" for i, (t, d, c) in enumerate(zip(Tf_C, D, cp, strict=True))]
    else:
        head = (f"# {name} (fictional sample), laser flash, Fenwick Hollow lab (fictional); "
                "the DSC was booked, no c_p", "T [degC],D [mm^2/s],rho [g/cm^3]")
        rows = [f"{t:.0f},{noisy(d, 0.012) * 1e6:.4f},{rho / 1e3 if i == 0 else '':}"
                for i, (t, d) in enumerate(zip(Tf_C, D, strict=True))]
    write(f"{name}_flash.csv", head, rows)
    _, sigma_e, S_e = truth(Te, grain, factor)
    write(f"{name}_electrical.csv",
          (f"# {name} (fictional sample), four-probe resistivity and Seebeck, Fenwick Hollow "
           "lab", "T [K],resistivity [mOhm cm],S [uV/K]"),
          [f"{t:.0f},{noisy(1 / s, 0.008) * 1e5:.4f},{noisy(v, 0.008) * 1e6:.2f}"
           for t, s, v in zip(Te, sigma_e, S_e, strict=True)])

# FH-23: the lab's spreadsheet with total kappa, sigma and S in one file
T3 = np.arange(325.0, 751.0, 25.0)
kl, sigma, S = truth(T3, *SAMPLES["FH-23"])
kappa = kl + lorenz_spb(np.abs(S)) * sigma * T3
write("FH-23_sheet.csv",
      ("# FH-23 (fictional sample), ball-milled 10 h; the lab's sheet (kappa from flash x "
       "density x c_p)", "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]"),
      [f"{t:.0f},{noisy(k, 0.015):.4f},{noisy(s, 0.008) / 100:.2f},{noisy(v, 0.008) * 1e6:.2f}"
       for t, k, s, v in zip(T3, kappa, sigma, S, strict=True)])

if BUNDLED.is_dir():  # keep the copy that `kappa demo` runs identical
    for p in sorted(HERE.iterdir()):
        if p.suffix in (".csv", ".yaml"):
            shutil.copy(p, BUNDLED / p.name)
