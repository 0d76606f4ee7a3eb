"""How the whole audit's time grows with N (configurations), T (windows) and B (resamples).

Runs ``sweepaudit.audit`` in-process on seeded synthetic sweeps (correlated normal excess returns,
not market data): a base case, then each of N, T and B doubled alone. Prints the median of
``--runs`` runs of each and the ratio to the base, as a Markdown table for docs/performance.md.

    python benchmarks/audit_scaling.py              # base N=500, T=1000, B=5000, 3 runs each
    python benchmarks/audit_scaling.py --quick      # base N=100, T=300, B=1000
"""

from __future__ import annotations

import argparse
import os
import statistics
import time

import numpy as np

from sweepaudit import AuditSettings, audit, sweep_from_array


def sweep(n: int, t: int, seed: int = 1):
    rng = np.random.default_rng(seed)
    common = rng.standard_normal((t, 1))
    x = 0.01 * (0.6 * common + 0.8 * rng.standard_normal((t, n)))
    return sweep_from_array(x, periods_per_year=52)


def timed(n: int, t: int, b: int, runs: int) -> float:
    s = sweep(n, t)
    times = []
    for r in range(runs):
        start = time.perf_counter()
        audit(s, settings=AuditSettings(seed=r, resamples=b))
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--runs", type=int, default=3)
    args = ap.parse_args()
    n, t, b = (100, 300, 1000) if args.quick else (500, 1000, 5000)
    print(f"machine: {os.cpu_count()} cores; load average {os.getloadavg()[0]:.2f}; median of {args.runs} runs")
    timed(n, t, b, 1)  # warm-up: imports, caches
    base = timed(n, t, b, args.runs)
    rows = [("base", n, t, b, base)]
    for label, (nn, tt, bb) in (("N doubled", (2 * n, t, b)), ("T doubled", (n, 2 * t, b)), ("B doubled", (n, t, 2 * b))):
        rows.append((label, nn, tt, bb, timed(nn, tt, bb, args.runs)))
    print("| case | N | T | B | median seconds | ratio to base |")
    print("|---|---|---|---|---|---|")
    for label, nn, tt, bb, sec in rows:
        print(f"| {label} | {nn:,} | {tt:,} | {bb:,} | {sec:.2f} | x{sec / base:.2f} |")


if __name__ == "__main__":
    main()
