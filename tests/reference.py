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


def reference_kappa_q(T: float, mass: float, volume: float, branches: list[dict],
                      umklapp: dict | None = None, boundary: dict | None = None,
                      point_defect: dict | None = None, normal: dict | None = None,
                      extra=None, four_phonon: float = 0.0) -> float:
    """κ_L [W/(m K)] by adaptive quadrature over the wavevector q, for any isotropic dispersion.

    Written independently of kappa's reduced-frequency weights: straight from the Callaway
    solution with a displaced distribution for the normal processes,

        κ_j = (n_j/3)(1/2π²) [∫ C v_g² τ_c q² dq + (∫ C v_g (q/ω)(τ_c/τ_N) q² dq)²
                                                  / ∫ C (q/ω)² τ_c/(τ_N τ_R) q² dq],

    C = k_B x²eˣ/(eˣ−1)², x = ħω/k_BT. branches: [{"count", "theta", "v", "gamma", "pol",
    "disp": "debye"|"sine", "nu_zb" [Hz]}]; a sine branch is ω = ω_zb sin(πq/(2q_zb)),
    q_zb = πω_zb/(2v), integrated to ω = k_Bθ/ħ. Rates: umklapp {"scale", "b"} (sound velocity);
    boundary {"L", "p", "eta"}: v_g(1−p)/((1+p)L), with a roughness η the specularity
    p₀ + (1−p₀)exp(−4πη²q²); point_defect {"gamma_m"}: V₀Γω⁴/(4πv³); normal {"ratio"} or
    {"form": "branch", "scale"}; ``four_phonon`` s₄ħγ²ω²T²/(M̄v²θ²); ``extra(ω, q, v_g, br)``
    an additional resistive rate [1/s].
    """
    total = 0.0
    for br in branches:
        th, v, g = br["theta"], br["v"], br["gamma"]
        pol = br.get("pol", "average")
        w_top = KB * th / HBAR
        sine = br.get("disp", "debye") == "sine"
        w_zb = 2 * math.pi * br["nu_zb"] if sine else math.inf
        q_zb = math.pi * w_zb / (2 * v)
        q_top = 2 * q_zb / math.pi * math.asin(min(1.0, w_top / w_zb)) if sine else w_top / v

        def disp(q, sine=sine, v=v, w_zb=w_zb, q_zb=q_zb):
            if not sine:
                return v * q, v
            a = math.pi * q / (2 * q_zb)
            return w_zb * math.sin(a), v * math.cos(a)

        def tau_u(w, th=th, v=v, g=g):
            if umklapp is None or umklapp.get("scale", 1.0) == 0:
                return 0.0
            return (umklapp.get("scale", 1.0) * HBAR * g**2 / (mass * v**2 * th) * w**2 * T
                    * math.exp(-th / (umklapp.get("b", 3.0) * T)))

        def rates(q, th=th, v=v, g=g, pol=pol, br=br):
            w, vg = disp(q)
            r = tau_u(w) + four_phonon * HBAR * g**2 * w**2 * T**2 / (mass * v**2 * th**2)
            if boundary:
                p0 = boundary.get("p", 0.0)
                a = 4 * math.pi * boundary.get("eta", 0.0) ** 2 * q**2
                if a > 0:  # 1 − p = (1 − p₀)(1 − e^(−a)), written with expm1 for small a
                    r += vg * (1 - p0) * -math.expm1(-a) / (
                        (1 + p0 + (1 - p0) * math.exp(-a)) * boundary["L"])
                else:
                    r += vg * (1 - p0) / ((1 + p0) * boundary["L"])
            if point_defect:
                r += volume * point_defect.get("gamma_m", 0.0) * w**4 / (4 * math.pi * v**3)
            if extra is not None:
                r += extra(w, q, vg, br)
            n = 0.0
            if normal:
                if normal.get("form", "ratio") == "ratio":
                    n = normal["ratio"] * tau_u(w)
                else:
                    pre = normal.get("scale", 1.0) * g**2 * volume / (mass * v**5)
                    n = pre * (KB**3 / HBAR**2 * w**2 * T**3 if pol == "longitudinal"
                               else KB**4 / HBAR**3 * w * T**4)
            return w, vg, r, n

        def f(t, which):
            q = math.exp(t)
            w, vg, r, n = rates(q)
            x = HBAR * w / (KB * T)
            if x > 700:
                return 0.0
            c = KB * (1.0 if x < 1e-8 else x * x * math.exp(-x) / (-math.expm1(-x)) ** 2)
            if r + n == 0.0:
                return 0.0
            tc = 1.0 / (r + n)
            val = (vg * vg * tc, vg * (q / w) * tc * n, (q / w) ** 2 * tc * n * r)[which]
            return c * val * q**3  # q² dq = q³ dt

        lo = math.log(q_top) - 80.0
        top = math.log(q_top)
        pts = sorted({top - k for k in (1e-4, 1e-3, 1e-2, 0.05, 0.2, 0.5, 1.0, 2.0, 3.0, 5.0,
                                        8.0, 12.0, 20.0, 30.0, 45.0)})
        ints = [quad(f, lo, top, args=(which,), epsabs=0, epsrel=1e-12, limit=5000,
                     points=pts)[0] for which in range(3)]
        corr = ints[1] ** 2 / ints[2] if ints[2] > 0 else 0.0
        total += br["count"] / 3 * (ints[0] + corr) / (2 * math.pi**2)
    return total
