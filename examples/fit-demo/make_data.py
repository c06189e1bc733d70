"""Regenerate the invented data of the fit demo (seeded; fictional samples of a fictional lab).

The "measurements" are made up: kappa_L(T) computed with kappa's own Callaway model for
base.yaml with a Grüneisen parameter of 1.4 and grain sizes of 2 um, 300 nm and 80 nm, then
moved by a seeded error shared by all temperatures of a sample (8 %, 1 sigma: the calibration
of the imaginary lab's set-up) and seeded point-to-point scatter (2 %, 1 sigma), written as
kappa_L_err_systematic, kappa_L_err_random and their total kappa_L_err (as 'kappa split'
writes them). They describe no real sample; they exist to show `kappa fit` recovering known
parameters with honest error bars.
Run: python make_data.py  (writes the CSV files beside this script).
"""

from pathlib import Path

import numpy as np

from kappa.core.evaluator import conductivity
from kappa.io.config import load_config

HERE = Path(__file__).parent
TRUE_GRUNEISEN = 1.4
GRAIN = {"FH-11_coarse": 2e-6, "FH-12_medium": 300e-9, "FH-13_fine": 80e-9}  # m
SHARED, SCATTER = 0.08, 0.02  # relative 1-sigma: per sample (all temperatures) / per point
rng = np.random.default_rng(20240917)
base = load_config(HERE / "base.yaml").model
T = np.round(np.geomspace(30.0, 700.0, 24), 1)
for name, grain in GRAIN.items():
    model = base.with_values({"material.gruneisen": TRUE_GRUNEISEN,
                              "scattering.boundary.grain_size": grain})
    k = conductivity(model, T)
    measured = k * (1.0 + SHARED * rng.standard_normal() + SCATTER * rng.standard_normal(T.size))
    sys_, rand = SHARED * measured, SCATTER * measured
    lines = [f"# {name} (fictional sample, invented data: model, 8 % shared error, 2 % scatter)",
             "T [K],kappa_L [W/(m K)],kappa_L_err [W/(m K)],kappa_L_err_systematic [W/(m K)],"
             "kappa_L_err_random [W/(m K)]"]
    lines += [f"{t:g},{m:.4f},{e:.4f},{s:.4f},{r:.4f}" for t, m, e, s, r in
              zip(T, measured, np.hypot(sys_, rand), sys_, rand, strict=True)]
    (HERE / f"{name}.csv").write_text("\n".join(lines) + "\n")
