"""Memory and time of a huge declared trial count: the haircut's closed form against padding.

    python benchmarks/trials_memory.py [--repeats 3]

1. The haircut adjustments of 42 Sharpe ratios with 10^7 declared tests: statsmodels'
   ``multipletests`` on the explicitly padded vector (what sweepaudit did before) against the
   closed form (``adjusted_pvalues``), in this process: peak traced memory (tracemalloc) and median
   time, and the ratio; the closed form at 6 x 10^8 and 10^15 tests beside them.
2. Whole audits of the demo sweep (``--quick``) in child processes, without ``--trials`` and with
   ``--trials 600000000``: median wall time and median peak resident memory, and the ratio.

Prints the load average, since the machine is shared.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np
from statsmodels.stats.multitest import multipletests

from sweepaudit.methods.haircut import adjusted_pvalues

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo_edge_long.csv"


def _measure(run, repeats: int) -> tuple[float, int]:
    times, peaks = [], []
    for _ in range(repeats):
        tracemalloc.start()
        start = time.perf_counter()
        run()
        times.append(time.perf_counter() - start)
        peaks.append(tracemalloc.get_traced_memory()[1])
        tracemalloc.stop()
    return statistics.median(times), int(statistics.median(peaks))


def _padded(pvalues: np.ndarray, index: int, tests: int) -> dict[str, float]:
    padded = np.concatenate([pvalues, np.ones(tests - pvalues.size)])
    return {m: float(multipletests(padded, method=sm)[1][index])
            for m, sm in (("bonferroni", "bonferroni"), ("holm", "holm"), ("bhy", "fdr_by"))}


def in_process(repeats: int) -> None:
    rng = np.random.default_rng(1)
    pvalues = np.minimum(2 * rng.uniform(0, 0.5, 42) ** 3, 1.0)
    tests = 10_000_000
    old_time, old_peak = _measure(lambda: _padded(pvalues, 0, tests), repeats)
    new_time, new_peak = _measure(lambda: adjusted_pvalues(pvalues, 0, tests), repeats)
    same = _padded(pvalues, 0, tests) == adjusted_pvalues(pvalues, 0, tests)
    print(f"haircut adjustments, 42 p-values, {tests:,} tests (median of {repeats}):")
    print(f"  padded multipletests  {old_time * 1e3:10.1f} ms  peak {old_peak / 2**20:9.1f} MiB")
    print(f"  closed form           {new_time * 1e3:10.3f} ms  peak {new_peak / 2**10:9.1f} KiB")
    print(f"  ratio (padded / closed): time {old_time / new_time:,.0f}x, memory {old_peak / new_peak:,.0f}x; "
          f"identical results: {same}")
    for huge in (600_000_000, 10**15):
        t, peak = _measure(lambda: adjusted_pvalues(pvalues, 0, huge), repeats)
        print(f"  closed form at {huge:.0e} tests: {t * 1e3:.3f} ms, peak {peak / 2**10:.1f} KiB")


def _child(args: list[str]) -> tuple[float, int]:
    # VmHWM (peak resident memory of this program since it was executed): ru_maxrss would carry
    # the parent's peak across fork.
    code = ("import sys; from sweepaudit.cli import main; sys.argv = ['sweepaudit', *sys.argv[1:]]\n"
            "try:\n    main()\nexcept SystemExit:\n    pass\n"
            "peak = [l for l in open('/proc/self/status') if l.startswith('VmHWM')][0].split()[1]\n"
            "print(peak, file=sys.stderr)")
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    return elapsed, int(done.stderr.strip().splitlines()[-1]) * 1024


def whole_audit(repeats: int) -> None:
    base = ["audit", str(DEMO), "--quick", "-q", "--seed", "7"]
    rows = {}
    for label, extra in (("no --trials", []), ("--trials 600000000", ["--trials", "600000000"])):
        runs = [_child(base + extra) for _ in range(repeats)]
        rows[label] = (statistics.median(r[0] for r in runs), statistics.median(r[1] for r in runs))
    print(f"whole audit of {DEMO.name} --quick (median of {repeats} child processes):")
    for label, (t, rss) in rows.items():
        print(f"  {label:20s} {t:6.2f} s  peak RSS {rss / 2**20:7.1f} MiB")
    (t0, m0), (t1, m1) = rows.values()
    print(f"  ratio (with / without): time {t1 / t0:.2f}, peak memory {m1 / m0:.2f}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    print(f"load average before: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    in_process(args.repeats)
    whole_audit(args.repeats)
    print(f"load average after: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
