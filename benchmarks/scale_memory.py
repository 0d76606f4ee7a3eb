"""Time and peak memory as the sweep grows: wide Parquet from 1,000 to 100,000 configurations, the
Dask executor against the in-process one, a million configurations at a reduced size, and the
per-block cost and bytes behind a cluster estimate.

    python benchmarks/scale_memory.py --files 1k.parquet 10k.parquet 100k.parquet
    python benchmarks/scale_memory.py --files 1k.parquet --dask 10k.parquet --million
    python benchmarks/scale_memory.py --block-cost

The Parquet files are SYNTHETIC sweeps written by ``benchmarks/make_large_sweep.py`` (2,000 daily
windows; ``--configurations`` sets N). Each audit runs as ``python -m sweepaudit audit FILE --json
OUT -q`` in a fresh process under ``/usr/bin/time -v`` (wall time and maximum resident set size),
one run each (the large ones take minutes); the load average is printed beside each row. Time is
compared with the linear extrapolation from the first file: ``seconds(first) x N / N(first)``.

``--million`` audits 1,000,000 configurations x 250 windows at 1,000 resamples and CSCV on 8
partitions (in a fresh process, the Sweep built directly from an in-memory array), and 250,000 at
the same settings, and prints the process's resident memory before the audit (the sweep) and its
peak: the audit's own memory should stay near the budget, beyond small per-configuration summaries.

``--block-cost`` times one block task of the streamed audit at 2,000 windows and 10,000 resamples
(the block's products, intervals and snooping maxima) and measures the bytes a block exchanges (its
returns in, its summary out), for the on-paper estimate of a 32-worker cluster.
"""

from __future__ import annotations

import argparse
import os
import pickle
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

SRC = Path(__file__).resolve().parents[1] / "src"


def timed(cmd: list[str], env: dict | None = None) -> tuple[float, float]:
    """Wall seconds and peak resident MB of a command under /usr/bin/time -v."""
    start = time.perf_counter()
    done = subprocess.run(["/usr/bin/time", "-v", *cmd], capture_output=True, text=True,
                          env={**os.environ, "PYTHONPATH": str(SRC), **(env or {})})
    seconds = time.perf_counter() - start
    if done.returncode not in (0, 1):
        raise SystemExit(f"failed ({done.returncode}): {done.stderr.strip()[-800:]}")
    peak = re.search(r"Maximum resident set size \(kbytes\): (\d+)", done.stderr)
    return seconds, int(peak.group(1)) / 1024


def configurations_of(path: str) -> int:
    import pyarrow.parquet as pq

    return len(pq.ParquetFile(path).schema_arrow.names) - 1  # the date column


def audit_cmd(path: str, out: str, *extra: str) -> list[str]:
    return [sys.executable, "-m", "sweepaudit", "audit", path, "--seed", "1", "--json", out, "-q", *extra]


def files_table(files: list[str], tmp: Path) -> None:
    print("| configurations | seconds | linear from the first | ratio | peak MB | load average |")
    print("|---|---|---|---|---|---|")
    first = None
    for path in files:
        n = configurations_of(path)
        seconds, peak = timed(audit_cmd(path, str(tmp / "out.json")))
        first = first or (n, seconds)
        linear = first[1] * n / first[0]
        print(f"| {n:,} | {seconds:.1f} | {linear:.1f} | x{seconds / linear:.2f} | {peak:,.0f} | {os.getloadavg()[0]:.2f} |",
              flush=True)


def dask_table(path: str, tmp: Path) -> None:
    print("| executor | seconds | ratio | peak MB (client) | load average |")
    print("|---|---|---|---|---|")
    local, peak_local = timed(audit_cmd(path, str(tmp / "local.json")))
    print(f"| in process | {local:.1f} | x1.00 | {peak_local:,.0f} | {os.getloadavg()[0]:.2f} |", flush=True)
    dask, peak_dask = timed(audit_cmd(path, str(tmp / "dask.json"), "--workers", "2"))
    print(f"| Dask, local cluster of 2 worker processes (start-up included) | {dask:.1f} | x{dask / local:.2f} | "
          f"{peak_dask:,.0f} | {os.getloadavg()[0]:.2f} |", flush=True)


MILLION = """
import sys, numpy as np
from sweepaudit import AuditSettings
from sweepaudit.audit import gather_evidence
from sweepaudit.policy import DEFAULT_POLICY
from sweepaudit.sweep import Sweep

def status(key):
    return next(int(line.split()[1]) // 1024 for line in open("/proc/self/status") if line.startswith(key))

n, t = int(sys.argv[1]), 250
rng = np.random.default_rng(3)
x = np.empty((t, n))
common = rng.standard_normal(t)
for a in range(0, n, 50_000):
    b = min(n, a + 50_000)
    x[:, a:b] = 0.01 * (0.5 * common[:, None] + 0.85 * rng.standard_normal((t, b - a)))
# The Sweep built directly: this measures the audit (the reader of in-memory arrays is not the point).
import pandas as pd
sweep = Sweep(returns=x, configurations=tuple(f"c{k}" for k in range(n)),
              parameters=pd.DataFrame(index=pd.Index([f"c{k}" for k in range(n)], name="configuration")),
              windows=tuple(str(w) for w in range(t)), periods_per_year=52.0)
before = status("VmRSS")
policy = DEFAULT_POLICY.replace(partitions=8)
evidence = gather_evidence(sweep, settings=AuditSettings(seed=1, resamples=1_000), policy=policy)
print(before, status("VmHWM"))
"""


def million_table() -> None:
    print("| configurations | windows | resamples | seconds | process peak MB | before the audit MB | the audit's own peak MB | per configuration | load average |")
    print("|---|---|---|---|---|---|---|---|---|")
    for n in (250_000, 1_000_000):
        start = time.perf_counter()
        done = subprocess.run([sys.executable, "-c", MILLION, str(n)], capture_output=True, text=True,
                              env={**os.environ, "PYTHONPATH": str(SRC)})
        seconds = time.perf_counter() - start
        if done.returncode:
            raise SystemExit(done.stderr[-800:])
        before, peak = (int(v) for v in done.stdout.split()[-2:])
        print(f"| {n:,} | 250 | 1,000 | {seconds:.0f} | {peak:,} | {before:,} | {peak - before:,} | "
              f"{(peak - before) * 2**20 / n:,.0f} bytes | {os.getloadavg()[0]:.2f} |", flush=True)


def block_cost() -> None:
    sys.path.insert(0, str(SRC))
    import functools

    from sweepaudit.engine import WeightTable, block_moments, plan_blocks
    from sweepaudit.resample import draw_resamples
    from sweepaudit.streamed import _first_task, _ranks_task, _resampled_task

    t, b = 2_000, 10_000
    width = plan_blocks(1_000_000, t, b).width
    rng = np.random.default_rng(0)
    block = 0.01 * rng.standard_normal((t, width))
    resamples = draw_resamples(t, count=b, block_length=10.0, seed=1)
    start = time.perf_counter()
    table = WeightTable(resamples)
    drawn = time.perf_counter() - start
    task = functools.partial(_resampled_task, confidence=0.95, method="percentile", selected=0)
    times = []
    for _ in range(2):
        start = time.perf_counter()
        summary = task(block, block_moments(block, resamples, table), 0)
        times.append(time.perf_counter() - start)
    out_bytes = len(pickle.dumps(summary, protocol=5))
    in_bytes = block.nbytes
    resampled = min(times)
    start = time.perf_counter()
    first = _first_task(block, 0, sample_columns=np.arange(0, width, 7), partitions=16, statistic="sharpe",
                        threshold=4.0)
    data_pass = time.perf_counter() - start
    winners = first["winners"]
    points = np.unique(winners.out_of_sample)
    start = time.perf_counter()
    ranks = _ranks_task(block, 0, partitions=16, statistic="sharpe", target=winners.out_of_sample, points=points,
                        pooled_size=winners.out_of_sample.size * 1_000_000)
    rank_pass = time.perf_counter() - start
    out_bytes += len(pickle.dumps(first, protocol=5)) + len(pickle.dumps(ranks, protocol=5))
    in_bytes *= 3  # each of the three passes ships the block
    per_block = resampled + data_pass + rank_pass
    blocks = -(-1_000_000 // width)
    print(f"block width (the default budget, B = {b:,}, T = {t:,}): {width} configurations")
    print(f"weights drawn once per worker: {drawn:.2f} s; one block: resampled pass {resampled:.2f} s, first data "
          f"pass {data_pass:.2f} s, CSCV ranks {rank_pass:.2f} s (one thread; load average {os.getloadavg()[0]:.2f})")
    print(f"bytes per block, three passes: {in_bytes / 2**20:.1f} MiB of returns in, {out_bytes / 2**20:.2f} MiB of "
          "summaries out")
    for workers in (1, 32):
        seconds = blocks * per_block / workers + drawn
        print(f"1,000,000 configurations: {blocks} blocks; on {workers} worker(s): {seconds / 60:.1f} min; "
              f"{blocks * (in_bytes + out_bytes) / 2**30:.1f} GiB exchanged")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--files", nargs="*", default=[])
    ap.add_argument("--dask")
    ap.add_argument("--million", action="store_true")
    ap.add_argument("--block-cost", action="store_true")
    args = ap.parse_args()
    print(f"{os.cpu_count()} cores; load average {os.getloadavg()[0]:.2f}", flush=True)
    with tempfile.TemporaryDirectory() as folder:
        tmp = Path(folder)
        if args.files:
            files_table(args.files, tmp)
        if args.dask:
            dask_table(args.dask, tmp)
    if args.million:
        million_table()
    if args.block_cost:
        block_cost()


if __name__ == "__main__":
    main()
