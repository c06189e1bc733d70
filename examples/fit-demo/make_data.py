"""Regenerate the invented data of the fit demo (seeded; fictional samples of a fictional lab).

The "measurements" are made up: kappa_L(T) computed with kappa's own Callaway model for
base.yaml with a Grüneisen parameter of 1.4 and grain sizes of 2 um, 300 nm and 80 nm, plus
seeded Gaussian noise of 4 % (1 sigma, also written as kappa_L_err). They describe no real
sample; they exist to show `kappa fit` recovering known parameters.
Run: python make_data.py  (writes the CSV files beside this script).
"""

from pathlib import Path

import numpy as np

from kappa.core.evaluator import lattice_conductivity
from kappa.io.config import load_config

HERE = Path(__file__).parent
TRUE_GRUNEISEN = 1.4
GRAIN = {"FH-11_coarse": 2e-6, "FH-12_medium": 300e-9, "FH-13_fine": 80e-9}  # m
NOISE = 0.04
rng = np.random.default_rng(20240917)
base = load_config(HERE / "base.yaml")
T = np.round(np.geomspace(30.0, 700.0, 24), 1)
for name, grain in GRAIN.items():
    cfg = base.with_values({"material.gruneisen": TRUE_GRUNEISEN,
                            "scattering.boundary.grain_size": grain})
    k = lattice_conductivity(cfg.material, cfg.scattering, T)
    measured = k * (1.0 + NOISE * rng.standard_normal(T.size))
    err = NOISE * measured
    lines = [f"# {name} (fictional sample, invented data: model + 4 % seeded noise)",
             "T [K],kappa_L [W/(m K)],kappa_L_err [W/(m K)]"]
    lines += [f"{t:g},{m:.4f},{e:.4f}" for t, m, e in zip(T, measured, err, strict=True)]
    (HERE / f"{name}.csv").write_text("\n".join(lines) + "\n")
