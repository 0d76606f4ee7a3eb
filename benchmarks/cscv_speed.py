"""Speed and memory of sweepaudit's CSCV on synthetic sweeps (standard normal noise).

Times ``cscv`` on T = 2,000 windows x N = 1,000 configurations at S = 16 (12,870 splits), median
of several runs (wall clock and process CPU time, since the machine may be shared), for both
statistics, and the peak memory that numpy allocates (traced with
``tracemalloc``, input matrix excluded) at N = 10,000, where the per-split statistics no longer
fit the cache and are computed in chunks twice.

    PYTHONPATH=src python benchmarks/cscv_speed.py [--runs 5] [--skip-large]
"""

from __future__ import annotations

import argparse
import os
import time
import tracemalloc

import numpy as np

from sweepaudit.methods.cscv import cscv


def timed(returns: np.ndarray, statistic: str, runs: int) -> tuple[list[float], list[float]]:
    cscv(returns, statistic=statistic)  # warm-up: split indicator cache
    wall, cpu = [], []
    for _ in range(runs):
        start, start_cpu = time.perf_counter(), time.process_time()
        cscv(returns, statistic=statistic)
        wall.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    return wall, cpu


def peak_memory(returns: np.ndarray) -> tuple[float, float]:
    tracemalloc.start()
    start = time.perf_counter()
    cscv(returns)
    elapsed = time.perf_counter() - start
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20, elapsed


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--skip-large", action="store_true")
    arguments = parser.parse_args()
    print(f"cores {os.cpu_count()}, load average {os.getloadavg()[0]:.2f}, "
          f"numpy {np.__version__}")
    rng = np.random.default_rng(20170401)
    returns = rng.standard_normal((2000, 1000))
    for statistic in ("sharpe", "mean"):
        seconds, cpu = timed(returns, statistic, arguments.runs)
        print(f"T=2000 N=1000 S=16 {statistic:<6}: median {np.median(seconds):.3f} s wall "
              f"(min {min(seconds):.3f}, max {max(seconds):.3f}), median {np.median(cpu):.3f} s "
              f"CPU, {arguments.runs} runs")
    if not arguments.skip_large:
        large = rng.standard_normal((2000, 10000))
        peak, elapsed = peak_memory(large)
        print(f"T=2000 N=10000 S=16 sharpe: peak traced memory {peak:.0f} MiB beyond the "
              f"{large.nbytes / 2**20:.0f} MiB input, {elapsed:.1f} s (one run, traced)")


if __name__ == "__main__":
    main()
