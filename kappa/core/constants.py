"""Physical constants in SI units.

k_B, h, e and N_A are exact in the 2019 SI; the atomic mass constant is CODATA 2022.
``tests/test_constants.py`` checks them against :mod:`scipy.constants`. They are written out
here (not imported from scipy) so that importing kappa stays fast for the command line.
"""

from __future__ import annotations

import math

k_B: float = 1.380649e-23  #: Boltzmann constant [J/K] (exact)
h: float = 6.62607015e-34  #: Planck constant [J s] (exact)
hbar: float = h / (2.0 * math.pi)  #: reduced Planck constant [J s]
e: float = 1.602176634e-19  #: elementary charge [C] (exact)
N_A: float = 6.02214076e23  #: Avogadro constant [1/mol] (exact)
R: float = k_B * N_A  #: molar gas constant [J/(mol K)]
u: float = 1.66053906892e-27  #: unified atomic mass unit [kg] (CODATA 2022)
angstrom: float = 1e-10  #: [m]
