"""Benchmark of the Callaway kernel and of `kappa predict` (a script, not a test).

Prints, in one run:
  * κ_L points per second of the numba kernel, with 1 thread and with all threads;
  * the same for a per-point ``scipy.integrate.quad`` loop at matched accuracy, and the ratio;
  * the largest relative difference between the two (accuracy check, target ≤ 1e-6);
  * the same three for a branch with a sine dispersion (group velocity and density of states in
    the weights, boundary rate ∝ v_g), against a quad loop over the same integral;
  * the wall time of ``kappa predict`` on a 100-point curve with a warm compile cache.

Run:  python benchmarks/bench_kernel.py  [--points 200000] [--quad-points 300]
"""

from __future__ import annotations

import argparse
import math
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numba
import numpy as np
from scipy.integrate import quad

from kappa.core.constants import hbar, k_B
from kappa.core.evaluator import conductivity_from_rates

ROOT = Path(__file__).resolve().parents[1]


def make_samples(n: int, seed: int = 1):
    """Random but realistic samples: one averaged branch, T 20–900 K, mixed scattering."""
    rng = np.random.default_rng(seed)
    T = rng.uniform(20.0, 900.0, n)
    theta = np.full(n, 645.0)
    v = np.full(n, 6084.0)
    mass, gamma, vol = 28.0855 * 1.66054e-27, 1.0, 20.02e-30
    res = np.zeros((n, 5))
    res[:, 0] = v / 10 ** rng.uniform(-7.5, -3.0, n)  # boundary v/L
    res[:, 2] = hbar * gamma**2 / (mass * v**2 * theta) * T * np.exp(-theta / (3 * T))
    res[:, 4] = vol * 10 ** rng.uniform(-5.0, -1.0, n) / (4 * math.pi * v**3)
    nrm = np.zeros((n, 5))
    pre = k_B / (2 * math.pi**2 * v) * (k_B * T / hbar) ** 3
    return theta / T, pre, res, nrm, T


def quad_point(x_top, pre, res, T, epsrel=1e-8):
    wt = k_B * T / hbar
    d = res * wt ** np.arange(5)

    def f(x):
        if x == 0.0:
            return 0.0
        return x**4 * math.exp(-x) / (-math.expm1(-x)) ** 2 / (
            d[0] + x * (d[1] + x * (d[2] + x * (d[3] + x * d[4]))))

    top = min(x_top, 60.0)
    return pre * quad(f, 0.0, top, epsabs=0.0, epsrel=epsrel, limit=500)[0]


def make_sine_samples(n: int, seed: int = 3):
    """A transverse-like sine branch (θ = zone boundary = 240 K, v = 5860 m/s) on a shared grid
    of 100 temperatures: Umklapp and point defects as written, boundary v_g/L (× g)."""
    rng = np.random.default_rng(seed)
    T = np.repeat(np.linspace(20.0, 900.0, 100)[None, :], max(1, n // 100), 0).ravel()
    theta, v = 240.0, 5860.0
    mass, gamma, vol = 28.0855 * 1.66054e-27, 0.6, 20.02e-30
    res = np.zeros((T.size, 2, 5))
    res[:, 0, 2] = hbar * gamma**2 / (mass * v**2 * theta) * T * np.exp(-theta / (3 * T))
    res[:, 0, 4] = vol * 10 ** rng.uniform(-5.0, -1.0, T.size) / (4 * math.pi * v**3)
    res[:, 1, 0] = v / 10 ** rng.uniform(-7.5, -3.0, T.size)  # boundary, × v_g/v
    nrm = np.zeros((T.size, 5))
    pre = 2.0 / 3.0 * k_B / (2 * math.pi**2 * v) * (k_B * T / hbar) ** 3
    return theta / T, theta / T, pre, res, nrm, T


def quad_point_sine(x_top, x_zb, pre, res, T, epsrel=1e-8):
    """pre ∫ w F₁/τ⁻¹ dx for a sine branch by adaptive quadrature in x: F₁ = g p², g = √(1−s²),
    p = arcsin(s)/s, s = x/x_zb; the boundary term scales with g."""
    wt = k_B * T / hbar
    d0 = res[0] * wt ** np.arange(5)
    d1 = res[1] * wt ** np.arange(5)

    def f(x):
        if x == 0.0:
            return 0.0
        s = min(x / x_zb, 1.0)
        g = math.sqrt(max(0.0, 1.0 - s * s))
        p = math.asin(s) / s if s > 1e-8 else 1.0
        rate = (d0[0] + x * (d0[1] + x * (d0[2] + x * (d0[3] + x * d0[4])))
                + g * (d1[0] + x * p * (d1[1] + x * p * (d1[2] + x * p * (d1[3] + x * p * d1[4])))))
        return x**4 * math.exp(-x) / (-math.expm1(-x)) ** 2 * g * p * p / rate

    top = min(x_top, 60.0)
    return pre * quad(f, 0.0, top, epsabs=0.0, epsrel=epsrel, limit=500)[0]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=200_000)
    ap.add_argument("--quad-points", type=int, default=300)
    args = ap.parse_args()

    x_top, pre, res, nrm, T = make_samples(args.points)
    conductivity_from_rates(x_top[:10], pre[:10], res[:10], nrm[:10], T[:10])  # compile/load

    def rate(xt, p, r, n, t):
        best = math.inf
        for _ in range(3):
            t0 = time.perf_counter()
            out = conductivity_from_rates(xt, p, r, n, t)
            best = min(best, time.perf_counter() - t0)
        return xt.size / best, out

    # (a) worst case: every point at its own temperature, so no quadrature rule is shared
    rates = {}
    for threads in sorted({1, numba.config.NUMBA_NUM_THREADS}):
        numba.set_num_threads(threads)
        rates[threads], kernel = rate(x_top, pre, res, nrm, T)
    # (b) the designed use: many parameter sets on one grid of 100 temperatures
    grid_T = np.repeat(np.linspace(20.0, 900.0, 100)[None, :], args.points // 100, 0).ravel()
    gx, gp, gr, gn, _ = make_samples(grid_T.size, seed=2)
    gx = 645.0 / grid_T
    gp = k_B / (2 * math.pi**2 * 6084.0) * (k_B * grid_T / hbar) ** 3
    gr[:, 2] = (hbar / (28.0855 * 1.66054e-27 * 6084.0**2 * 645.0) * grid_T
                * np.exp(-645.0 / (3 * grid_T)))
    shared = {}
    for threads in sorted({1, numba.config.NUMBA_NUM_THREADS}):
        numba.set_num_threads(threads)
        shared[threads], _ = rate(gx, gp, gr, gn, grid_T)
    numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)

    nq = args.quad_points
    t0 = time.perf_counter()
    ref = np.array([quad_point(x_top[i], pre[i], res[i], T[i]) for i in range(nq)])
    quad_rate = nq / (time.perf_counter() - t0)
    err = np.max(np.abs(kernel[:nq] / ref - 1))

    nt = max(rates)
    print(f"scipy quad loop (epsrel 1e-8), 1 core:          {quad_rate:10.3e} κ_L points/s")
    print("(a) every point its own temperature (no shared rule):")
    print(f"    kernel, 1 thread:   {rates[1]:10.3e} points/s   ratio to quad {rates[1] / quad_rate:7.0f}x")
    print(f"    kernel, {nt} threads:  {rates[nt]:10.3e} points/s   ratio to quad {rates[nt] / quad_rate:7.0f}x")
    print("(b) parameter sets on a shared 100-temperature grid (predict, fits, sweeps):")
    print(f"    kernel, 1 thread:   {shared[1]:10.3e} points/s   ratio to quad {shared[1] / quad_rate:7.0f}x"
          "  (target ≥ 1000x)")
    print(f"    kernel, {nt} threads:  {shared[nt]:10.3e} points/s   ratio to quad "
          f"{shared[nt] / quad_rate:7.0f}x")
    print(f"max relative difference kernel vs quad on {nq} points: {err:.2e} (target ≤ 1e-6)")
    print("per-core throughput target 1e6 points/s: "
          f"{'met' if min(rates[1], shared[1]) >= 1e6 else 'NOT met'} in both cases")

    # (c) a sine branch on the shared grid
    sx, sz, sp, sr, sn, sT = make_sine_samples(args.points)
    conductivity_from_rates(sx[:10], sp[:10], sr[:10], sn[:10], sT[:10], x_zb=sz[:10])
    sine = {}
    for threads in sorted({1, numba.config.NUMBA_NUM_THREADS}):
        numba.set_num_threads(threads)
        best = math.inf
        for _ in range(3):
            t0 = time.perf_counter()
            sine_out = conductivity_from_rates(sx, sp, sr, sn, sT, x_zb=sz)
            best = min(best, time.perf_counter() - t0)
        sine[threads] = sx.size / best
    numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)
    pick = np.random.default_rng(4).choice(sx.size, nq, replace=False)
    t0 = time.perf_counter()
    sref = np.array([quad_point_sine(sx[i], sz[i], sp[i], sr[i], sT[i]) for i in pick])
    sine_quad = nq / (time.perf_counter() - t0)
    sine_err = np.max(np.abs(sine_out[pick] / sref - 1))
    print("(c) sine branch (dispersion: sine), shared 100-temperature grid:")
    print(f"    scipy quad loop (epsrel 1e-8), 1 core: {sine_quad:10.3e} points/s")
    print(f"    kernel, 1 thread:   {sine[1]:10.3e} points/s   ratio to quad "
          f"{sine[1] / sine_quad:7.0f}x")
    print(f"    kernel, {nt} threads:  {sine[nt]:10.3e} points/s   ratio to quad "
          f"{sine[nt] / sine_quad:7.0f}x")
    print(f"    max relative difference kernel vs quad on {nq} points: {sine_err:.2e} "
          "(target ≤ 1e-6)")
    print("    per-core throughput target 1e6 points/s: "
          f"{'met' if sine[1] >= 1e6 else 'NOT met'}")

    with tempfile.TemporaryDirectory() as tmp:
        cfg = Path(tmp) / "bench.yaml"
        cfg.write_text((ROOT / "configs" / "silicon.yaml").read_text().replace(
            "points: 99", "points: 100"), encoding="utf-8")
        cmd = [sys.executable, "-m", "kappa", "predict", str(cfg), "--force", "-o"]
        subprocess.run([*cmd, str(Path(tmp) / "warm")], check=True, capture_output=True)
        walls = []
        for k in range(3):
            t0 = time.perf_counter()
            subprocess.run([*cmd, str(Path(tmp) / f"o{k}")], check=True, capture_output=True)
            walls.append(time.perf_counter() - t0)
    best = min(walls)
    print(f"kappa predict, 100-point curve, warm cache: {best:.2f} s wall "
          f"(target ≤ 1 s: {'met' if best <= 1.0 else 'NOT met'}; "
          "see benchmarks/bench_edges.py for the whole commands against plain baselines)")


if __name__ == "__main__":
    main()
