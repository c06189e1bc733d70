"""Regenerate the invented demo data of the fictional Fenwick Hollow lab (seeded).

The numbers are made up from a simple model (single parabolic band, kappa_L = A/T + B plus an
activated bipolar term) with a little seeded noise; they describe no real sample.
Run: python make_data.py  (writes the CSV files beside this script).
"""

from pathlib import Path

import numpy as np

from kappa.core.electronic import lorenz_spb, spb_seebeck

HERE = Path(__file__).parent
rng = np.random.default_rng(20240611)
kB_eV = 8.617333e-5


def noisy(x, rel):
    return x * (1.0 + rel * rng.standard_normal(np.shape(x)))


# --- FH-07: Sb-doped Mg2Si0.4Sn0.6, flash on one instrument, electrical on another -------------
Tf_C = np.arange(25.0, 501.0, 25.0)  # flash furnace set points [degC]
Tf = Tf_C + 273.15
eta = 2.2 - 2.0e-3 * (Tf - 300.0)  # reduced Fermi level drifts down with T
kL = 620.0 / Tf + 0.55 + 9.0 * np.exp(-0.62 / (2 * kB_eV * Tf))  # W/(m K)
sigma = 1.05e5 * (300.0 / Tf) ** 1.3  # S/m
kappa = kL + lorenz_spb(spb_seebeck(eta)) * sigma * Tf
rho = 3.08e3  # kg/m^3, Archimedes, one value
cp = 3 * 8.314462618 / 43.69e-3 * (1.0 + 0.04 * (Tf - 300.0) / 500.0)  # J/(kg K), "true" c_p
D = kappa / (rho * cp)
lines = ["# FH-07 (fictional sample), laser flash, Fenwick Hollow lab (fictional); no DSC run",
         "T [degC],D [mm^2/s],rho [g/cm^3]"]
for i, t in enumerate(Tf_C):
    r = f"{rho / 1e3:.3f}" if i == 0 else ""
    lines.append(f"{t:.0f},{noisy(D[i], 0.01) * 1e6:.4f},{r}")
(HERE / "FH-07_flash.csv").write_text("\n".join(lines) + "\n")

Te = np.arange(300.0, 761.0, 20.0)  # electrical stage [K]
eta_e = 2.2 - 2.0e-3 * (Te - 300.0)
S = -spb_seebeck(eta_e)
res = 1.0 / (1.05e5 * (300.0 / Te) ** 1.3)  # Ohm m
lines = ["# FH-07 (fictional sample), four-probe resistivity and Seebeck, Fenwick Hollow lab",
         "T [K],resistivity [mOhm cm],S [uV/K]"]
for i, t in enumerate(Te):
    lines.append(f"{t:.0f},{noisy(res[i], 0.01) * 1e5:.4f},{noisy(S[i], 0.01) * 1e6:.2f}")
(HERE / "FH-07_electrical.csv").write_text("\n".join(lines) + "\n")

# --- FH-03: lightly doped sibling, total kappa already computed, one file ------------------
T3 = np.arange(300.0, 801.0, 25.0)
eta3 = -0.3 - 4.0e-3 * (T3 - 300.0)
S3 = -spb_seebeck(eta3) * (1.0 - 0.8 * np.exp(-0.62 / (2 * kB_eV * T3)) * 40.0)  # minority carriers
sigma3 = 2.2e4 * (T3 / 300.0) ** 0.3
kL3 = 640.0 / T3 + 0.5 + 25.0 * np.exp(-0.62 / (2 * kB_eV * T3))
kappa3 = kL3 + lorenz_spb(spb_seebeck(eta3)) * sigma3 * T3
lines = ["# FH-03 (fictional sample), light Sb doping; kappa from the lab's flash sheet",
         "T [K],kappa [W/(m K)],sigma [S/cm],S [uV/K]"]
for i, t in enumerate(T3):
    lines.append(f"{t:.0f},{noisy(kappa3[i], 0.01):.4f},{noisy(sigma3[i], 0.01) / 100:.2f},"
                 f"{noisy(S3[i], 0.01) * 1e6:.2f}")
(HERE / "FH-03_total.csv").write_text("\n".join(lines) + "\n")
