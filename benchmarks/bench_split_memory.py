"""Benchmark of the memory and time of the lattice/electronic split (a script, not a test).

Prints, for a split of N rows of invented smooth data with the default 2,000 draws:
  * the wall time and the peak memory that Python allocated during ``kappa.split``
    (tracemalloc counts numpy's arrays too);
  * a plain baseline: the memory of the input and output arrays themselves (what any split of
    N rows must hold), and what holding every (row, draw) value of one quantity would take
    (N x draws x 8 bytes; the Monte Carlo works on several such quantities at once);
  * the ratios. The chunked Monte Carlo keeps the peak near the baseline plus a fixed amount
    (about 100 MB), independent of N; target: 10^6 rows within 1 GB.

Optionally (--command) also the whole ``kappa split`` command on a CSV of N rows (reading,
writing split.csv and the figure), with the peak resident memory of the process.

Run:  python benchmarks/bench_split_memory.py  [--rows 100000] [--draws 2000] [--command]
      python benchmarks/bench_split_memory.py --rows 1000000        (about 3 minutes)
"""

from __future__ import annotations

import argparse
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np

from kappa.workflows.split import split


def invented_data(n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Smooth invented data: kappa falling as 1/T with a bipolar rise, S growing with T."""
    T = np.linspace(300.0, 800.0, n)
    kappa = 2.0 * 300.0 / T + 0.4 + 0.3 * np.exp((T - 800.0) / 80.0)
    sigma = 6e4 * (300.0 / T) ** 1.2
    S = -(120e-6 + 0.15e-6 * (T - 300.0))
    return T, kappa, sigma, S


def bench_workflow(n: int, draws: int) -> None:
    data = invented_data(n)
    split(*(a[:10] for a in data), draws=draws)  # warm-up: builds the Lorenz-number table
    tracemalloc.start()
    t0 = time.perf_counter()
    r = split(*data, draws=draws)
    elapsed = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    arrays = sum(a.nbytes for a in data) + sum(
        v.nbytes for v in vars(r).values() if isinstance(v, np.ndarray))
    full = n * draws * 8
    mb = 1e6
    print(f"kappa.split of {n:,} rows x {draws:,} draws")
    print(f"  time                          {elapsed:10.2f} s   ({n * draws / elapsed:.3g} "
          "row-draws/s)")
    print(f"  peak memory (tracemalloc)     {peak / mb:10.1f} MB")
    print(f"  baseline: input+output arrays {arrays / mb:10.1f} MB   ratio "
          f"{peak / arrays:6.2f}")
    print(f"  one quantity for all draws    {full / mb:10.1f} MB   ratio "
          f"{peak / full:6.3f} (unchunked needs several of these)")
    print(f"  target 10^6 rows within 1 GB: peak - baseline = {(peak - arrays) / mb:.0f} MB "
          "(does not grow with rows)")


def bench_command(n: int, draws: int) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        csv = Path(tmp) / "rows.csv"
        T, kappa, sigma, S = invented_data(n)
        with open(csv, "w", encoding="utf-8") as fh:
            fh.write("T [K],kappa [W/(m K)],sigma [S/m],S [uV/K]\n")
            np.savetxt(fh, np.column_stack([T, kappa, sigma, S * 1e6]), fmt="%.10g",
                       delimiter=",")
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "kappa", "split", str(csv), "-o",
                        str(Path(tmp) / "out"), "--draws", str(draws)], check=True,
                       stdout=subprocess.DEVNULL)
        elapsed = time.perf_counter() - t0
        rss = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024  # kB on Linux
    print(f"kappa split (command) of {n:,} rows: {elapsed:.1f} s, peak resident memory "
          f"{rss:.0f} MB (target 1,000 MB)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=100_000)
    parser.add_argument("--draws", type=int, default=2000)
    parser.add_argument("--command", action="store_true",
                        help="also time the whole command on a CSV file")
    args = parser.parse_args()
    bench_workflow(args.rows, args.draws)
    if args.command:
        bench_command(args.rows, args.draws)


if __name__ == "__main__":
    main()
