"""The thread policy's reason, measured: one eigenvalue step on one and on two BLAS threads, on the
machine as found and with busy loops added.

    python benchmarks/blas_threads_load.py            # 1,000 x 1,000 correlation matrix, 4 busy loops
    python benchmarks/blas_threads_load.py --busy 2

The step is the effective-trials eigenvalues of an audit of 1,000 configurations
(``numpy.linalg.eigvalsh`` of their correlation matrix; SYNTHETIC correlated returns). Each figure is
the median of ``--runs``; the busy loops are single-process spin loops started and ended by this
script (by their own process ids). OpenBLAS threads that wait for a core spin, so a two-thread call on
a busy machine can take many times the one-thread time: the audit runs every BLAS call but the big
products on one thread (``sweepaudit.engine.threads``).
"""

from __future__ import annotations

import argparse
import os
import statistics
import time

import numpy as np
from threadpoolctl import threadpool_limits
from timing import busy_loops


def step_seconds(corr: np.ndarray, threads: int, runs: int) -> float:
    times = []
    with threadpool_limits(limits=threads, user_api="blas"):
        for _ in range(runs):
            start = time.perf_counter()
            np.linalg.eigvalsh(corr)
            times.append(time.perf_counter() - start)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--configurations", type=int, default=1_000)
    ap.add_argument("--busy", type=int, default=4)
    ap.add_argument("--runs", type=int, default=5)
    args = ap.parse_args()
    rng = np.random.default_rng(2)
    x = 0.6 * rng.standard_normal((2_000, 1)) + 0.8 * rng.standard_normal((2_000, args.configurations))
    corr = np.corrcoef(x, rowvar=False)
    rows = [("as found", os.getloadavg()[0], step_seconds(corr, 1, args.runs), step_seconds(corr, 2, args.runs))]
    with busy_loops(args.busy):
        rows.append((f"+{args.busy} busy loops", os.getloadavg()[0], step_seconds(corr, 1, args.runs),
                     step_seconds(corr, 2, args.runs)))
    print(f"eigenvalues of a {args.configurations:,} x {args.configurations:,} correlation matrix; "
          f"{os.cpu_count()} cores; median of {args.runs}")
    print("| load | load average | one BLAS thread, s | two BLAS threads, s | two / one |")
    print("|---|---|---|---|---|")
    for label, load, one, two in rows:
        print(f"| {label} | {load:.2f} | {one:.3f} | {two:.3f} | x{two / one:.1f} |")


if __name__ == "__main__":
    main()
