"""An independent evaluation of the Callaway/Debye model of DESIGN §2, for cross-checks.

Written straight from the formulas with scipy.integrate.quad (adaptive), in ω-space rates
converted per call, sharing no code with kappa's quadrature or kernels. Breakpoints are placed
where the rate's local power law changes so that quad resolves crossovers at any scale.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import constants as sc
from scipy.integrate import quad

KB = sc.k
HBAR = sc.hbar
U = sc.atomic_mass


def weight(x: float) -> float:
    """x⁴eˣ/(eˣ−1)²."""
    if x < 1e-150:
        return x * x
    if x > 700:
        return 0.0
    return x**4 * math.exp(-x) / (-math.expm1(-x)) ** 2


def reference_kappa(T: float, mass: float, volume: float, branches: list[dict],
                    umklapp: dict | None = None, boundary: dict | None = None,
                    point_defect: dict | None = None, normal: dict | None = None,
                    extra=None, extra_points=()) -> float:
    """κ_L [W/(m K)] by adaptive quadrature.

    branches: [{"count", "theta", "v", "gamma", "pol"}]; mass [kg], volume [m³];
    umklapp {"scale", "b"}; boundary {"L", "p"}; point_defect {"gamma_m", "gamma_s"};
    normal {"ratio"} or {"form": "branch", "scale"}; ``extra(ω, branch)`` an additional
    resistive rate [1/s] with ``extra_points`` (angular frequencies [rad/s]) where it changes
    fast.
    """
    total = 0.0
    wt = KB * T / HBAR
    for br in branches:
        th, v, g = br["theta"], br["v"], br["gamma"]
        polarization = br.get("pol", "average")

        def tau_u_inv(w, th=th, v=v, g=g):
            if umklapp is None or umklapp.get("scale", 1.0) == 0:
                return 0.0
            return (umklapp.get("scale", 1.0) * HBAR * g**2 / (mass * v**2 * th) * w**2 * T
                    * math.exp(-th / (umklapp.get("b", 3.0) * T)))

        def rates(w, th=th, v=v, g=g, pol=polarization, br=br):
            r = tau_u_inv(w)
            if boundary:
                p = boundary.get("p", 0.0)
                r += v * (1 - p) / ((1 + p) * boundary["L"])
            if extra is not None:
                r += extra(w, br)
            if point_defect:
                r += (volume * (point_defect.get("gamma_m", 0.0) + point_defect.get("gamma_s", 0.0))
                      * w**4 / (4 * math.pi * v**3))
            n = 0.0
            if normal:
                if normal.get("form", "ratio") == "ratio":
                    n = normal["ratio"] * tau_u_inv(w)
                else:
                    pre = normal.get("scale", 1.0) * g**2 * volume / (mass * v**5)
                    n = pre * (KB**3 / HBAR**2 * w**2 * T**3 if pol == "longitudinal"
                               else KB**4 / HBAR**3 * w * T**4)
            return r, n

        def f(u, which):
            x = math.exp(u)
            r, n = rates(x * wt)
            if r + n == 0.0:  # rate underflows far below every crossover: negligible piece
                return 0.0
            tc = 1.0 / (r + n)
            val = (tc, tc * n, tc * n * r)[which]
            return weight(x) * val * x

        top = min(th / T, 200.0)
        grid = np.logspace(-40, math.log10(top), 600)
        tot = np.array([sum(rates(x * wt)) for x in grid])
        slope = np.gradient(np.log(tot + 1e-300), np.log(grid))
        brk = [math.log(x) for x, a, b in zip(grid[1:], slope[1:], slope[:-1], strict=True)
               if abs(a - b) > 1e-3]
        brk = sorted(set(brk))[::4][:90]
        brk = sorted(set(brk) | {math.log(p / wt) for p in extra_points if 0 < p / wt < top})
        ints = []
        for which in range(3):
            lo = -92.0
            tail = quad(f, -np.inf, lo, args=(which,), epsabs=0, epsrel=1e-12, limit=200)[0]
            main = quad(f, lo, math.log(top), args=(which,), epsabs=0, epsrel=1e-12,
                        limit=5000, points=brk or None)[0]
            ints.append(tail + main)
        corr = ints[1] ** 2 / ints[2] if ints[2] > 0 else 0.0
        total += br["count"] / 3 * KB / (2 * math.pi**2 * v) * wt**3 * (ints[0] + corr)
    return total
