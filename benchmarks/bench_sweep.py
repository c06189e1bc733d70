"""Benchmark of parameter sweeps (a script, not a test).

Prints, in one run:
  * κ_L points per second of ``kappa.sweep.sweep`` for sweeps sharing a temperature grid
    (averaged model without and with normal processes, per-branch model, a Debye-temperature
    axis that changes the quadrature rule), target ≥ 1e7 points/s on two cores;
  * the same for the straightforward loop (one ``Config.with_values`` + ``lattice_conductivity``
    per parameter set) and the speed-up;
  * the wall time of a 10⁶-point ``kappa sweep`` run end to end (CLI, CSV and figure written),
    target ≤ 3 s on two cores (benchmarks/bench_edges.py compares it with numpy.savetxt).

Run:  python benchmarks/bench_sweep.py  [--points 1000000] [--loop-sets 200]
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numba

from kappa.core.evaluator import conductivity
from kappa.io.config import config_from_dict
from kappa.io.grids import parse_vary
from kappa.workflows.sweep import sweep

AVERAGED = {
    "material": {"name": "bench crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3", "debye_temperature": "645 K",
                 "sound_velocity": "6084 m/s", "gruneisen": 0.56},
    "scattering": {"boundary": {"grain_size": "1 um"}, "point_defect": {"mass_variance": 2e-4}},
}
PER_BRANCH = {
    "material": {"name": "bench crystal", "atomic_mass": "28.0855 u",
                 "atomic_volume": "20.02 angstrom**3",
                 "branches": [{"polarization": "longitudinal", "debye_temperature": "586 K",
                               "sound_velocity": "8480 m/s", "gruneisen": 1.0},
                              {"polarization": "transverse", "debye_temperature": "240 K",
                               "sound_velocity": "5860 m/s", "gruneisen": 0.6}]},
    "scattering": {"boundary": {"grain_size": "1 um"}, "point_defect": {"mass_variance": 2e-4},
                   "normal": {"form": "branch"}},
}


def _best(fn, repeat: int = 3) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def bench_api(label: str, data: dict, specs: list[str], temps: list[float]) -> float:
    cfg = config_from_dict(data).model
    axes = [parse_vary(cfg, s) for s in specs]
    sweep(cfg, axes, temps[:1])  # warm-up (compile cache load)
    result = []
    dt = _best(lambda: result.append(sweep(cfg, axes, temps)))
    n = result[-1].kappa_L.size
    print(f"  {label:<46s} {n:>9d} points  {dt:7.3f} s  {n / dt:10.3g} points/s")
    return n / dt


def bench_loop(n_sets: int, temps: list[float]) -> float:
    cfg = config_from_dict(AVERAGED).model
    values = [1e-8 * 1.01**i for i in range(n_sets)]
    t0 = time.perf_counter()
    for v in values:
        c = cfg.with_values({"scattering.boundary.grain_size": v})
        conductivity(c, temps)
    dt = time.perf_counter() - t0
    n = n_sets * len(temps)
    print(f"  {'loop: with_values + conductivity, one set each':<46s} {n:>9d} points  {dt:7.3f} s  "
          f"{n / dt:10.3g} points/s")
    return n / dt


def bench_cli(points: int) -> float:
    n1 = 1000
    n2 = max(2, points // (n1 * 10))
    with tempfile.TemporaryDirectory() as tmp:
        cfg = Path(tmp) / "bench.yaml"
        cfg.write_text(
            "material: {name: bench crystal, atomic_mass: 28.0855 u, atomic_volume: 20.02 "
            "angstrom**3, debye_temperature: 645 K, sound_velocity: 6084 m/s, gruneisen: 0.56}\n"
            "scattering: {boundary: {grain_size: 1 um}, point_defect: {mass_variance: 2.0e-4}}\n"
            "temperature: {start: 100 K, stop: 1000 K, points: 10}\n", encoding="utf-8")
        cmd = [sys.executable, "-m", "kappa", "sweep", str(cfg),
               "--vary", f"scattering.boundary.grain_size=10nm:10um:{n1}:log",
               "--vary", f"scattering.point_defect.mass_variance=0:0.05:{n2}",
               "-o", str(Path(tmp) / "out")]
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
        dt = time.perf_counter() - t0
        rows = sum(1 for _ in open(Path(tmp) / "out" / "sweep.csv", encoding="utf-8")) - 1
    print(f"  kappa sweep end to end: {rows} rows (CSV, figure, run.json) in {dt:.2f} s "
          f"(target ≤ 3 s: {'met' if dt <= 3.0 else 'NOT met'})")
    return dt


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--loop-sets", type=int, default=200)
    args = ap.parse_args()
    print(f"threads: {numba.get_num_threads()}")
    temps = [100.0 + 100.0 * i for i in range(10)]
    n_side = max(2, int((args.points / len(temps)) ** 0.5))
    g = f"scattering.boundary.grain_size=10nm:10um:{n_side}:log"
    md = f"scattering.point_defect.mass_variance=0:0.05:{n_side}"
    print("sweep (vectorised), temperatures shared by all parameter sets:")
    fast = bench_api("averaged, grain size x mass variance", AVERAGED, [g, md], temps)
    bench_api("averaged + normal (ratio 1)",
              {**AVERAGED, "scattering": {**AVERAGED["scattering"], "normal": {"ratio": 1.0}}},
              [g, md], temps)
    bench_api("per-branch (2 branches) + normal branch forms", PER_BRANCH, [g, md], temps)
    bench_api("averaged, Debye temperature x grain size", AVERAGED,
              [f"material.debye_temperature=300K:700K:{n_side}", g], temps)
    slow = bench_loop(args.loop_sets, temps)
    ratio = fast / slow
    print(f"speed-up of the vectorised sweep over the loop: {ratio:.0f}x")
    print(f"target >= 1e7 points/s: {'met' if fast >= 1e7 else 'NOT met'} ({fast:.3g})")
    bench_cli(args.points)


if __name__ == "__main__":
    main()
