"""The whole audit against the floor of its two float64 products, measured in the same run.

    python benchmarks/audit_floor.py                       # 1,000 configurations x 2,000 windows, 10,000 resamples
    python benchmarks/audit_floor.py --busy 4              # the same, then again with 4 busy loops running
    python benchmarks/audit_floor.py --reference-src ../other/src   # another checkout, same yardstick
    python benchmarks/audit_floor.py --without-sensitivity          # also without the sensitivity block
    python benchmarks/audit_floor.py --fixed-costs         # also what any command spends beside the products
    python benchmarks/audit_floor.py --quick               # 200 x 500, 2,000 resamples

Writes a SYNTHETIC long CSV (one row per configuration and window: week, lookback, band,
excess_return; correlated normal returns, one configuration with an edge) in a temporary folder,
then measures, each as the median of ``--runs``:

* the floor: ``weights @ returns`` and ``weights @ returns**2`` for all B x T weights (float64, numpy's
  default threads), in this process;
* the whole command, ``python -m sweepaudit audit FILE --json OUT -q`` in a fresh process (imports,
  reading, audit, JSON), with its peak memory from ``/usr/bin/time -v`` when that exists;
* ``audit()`` in this process on the sweep already read.

Ratios to the floor are the stable part on a shared machine; the load average is printed beside
every figure. ``--busy N`` starts N single-process busy loops (ended by this script, by their own
process ids) and measures everything again under that load. ``--reference-src`` runs the command
with another checkout's ``src`` first on ``PYTHONPATH``, interleaved with this one.
"""

from __future__ import annotations

import argparse
import os
import re
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd
from timing import busy_loops, median_seconds

SRC = Path(__file__).resolve().parents[1] / "src"


def write_long_csv(path: Path, n: int, t: int) -> None:
    rng = np.random.default_rng(1)
    x = 0.01 * (0.6 * rng.standard_normal((t, 1)) + 0.8 * rng.standard_normal((t, n)))
    x[:, n // 3] += 0.002
    weeks = pd.date_range("1985-01-04", periods=t, freq="W-FRI").strftime("%Y-%m-%d")
    rows = int(np.ceil(np.sqrt(n)))
    look, band = np.arange(n) // rows + 1, np.arange(n) % rows + 1
    frame = pd.DataFrame({"week": np.tile(weeks, n), "lookback": np.repeat(look, t), "band": np.repeat(band, t),
                          "excess_return": x.T.ravel()})
    frame.to_csv(path, index=False, float_format="%.8f")


def floor_seconds(n: int, t: int, b: int) -> float:
    """Both float64 products over all resamples, in chunks of 2,048 as the audit takes them."""
    rng = np.random.default_rng(0)
    x = rng.standard_normal((t, n))
    x2 = x * x
    weights = rng.poisson(1.0, (min(b, 2048), t)).astype(np.float64)
    out = np.empty((weights.shape[0], n))
    start = time.perf_counter()
    for done in range(0, b, weights.shape[0]):
        w = weights[: min(weights.shape[0], b - done)]
        np.matmul(w, x, out=out[: w.shape[0]])
        np.matmul(w, x2, out=out[: w.shape[0]])
    return time.perf_counter() - start


def command_seconds(csv: Path, out: Path, resamples: int, src: Path, *extra: str) -> tuple[float, float | None]:
    """Wall seconds and peak resident MB of one audit command in a fresh process."""
    env = {**os.environ, "PYTHONPATH": str(src)}
    cmd = [sys.executable, "-m", "sweepaudit", "audit", str(csv), "--seed", "1", "--resamples", str(resamples),
           "--json", str(out), "-q", *extra]
    timer = shutil.which("time") or ("/usr/bin/time" if Path("/usr/bin/time").exists() else None)
    if timer:
        cmd = [timer, "-v", *cmd]
    start = time.perf_counter()
    done = subprocess.run(cmd, env=env, capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    if done.returncode not in (0, 1):
        raise SystemExit(f"the audit command failed ({done.returncode}): {done.stderr.strip()[-500:]}")
    peak = re.search(r"Maximum resident set size \(kbytes\): (\d+)", done.stderr)
    return elapsed, (int(peak.group(1)) / 1024 if peak else None)


def fixed_costs(csv: Path, n: int, t: int, b: int, runs: int) -> list[tuple[str, float]]:
    """What any whole command must spend beside the products, each at its cheapest (medians):

    * starting Python and importing numpy, pandas and scipy.special (fresh process, no sweepaudit);
    * parsing the CSV with pyarrow's multi-threaded reader (no checks, no reshaping);
    * the uniform and integer random numbers the stationary bootstrap's weights are drawn from
      (one of each per resample and window, numpy's PCG64), without turning them into weights;
    * placing the two order statistics of a 95% interval in each configuration's B resampled
      means (one partition of a B x N array), for one statistic of the intervals' two.
    """
    import pyarrow.csv

    def timed(action) -> float:
        return median_seconds(action, runs)

    rng = np.random.default_rng(3)
    draws = rng.standard_normal((b, n))
    below, above = int(0.025 * (b - 1)), int(0.975 * (b - 1))
    return [
        ("start Python, import numpy, pandas, scipy.special",
         timed(lambda: subprocess.run([sys.executable, "-c", "import numpy, pandas, scipy.special"], check=True))),
        ("parse the long CSV (pyarrow, all threads)", timed(lambda: pyarrow.csv.read_csv(csv))),
        ("the bootstrap's random numbers (B x T uniforms and integers)",
         timed(lambda: (rng.random((b, t)), rng.integers(0, t, size=(b, t))))),
        ("one interval's order statistics (partition of B x N)",
         timed(lambda: np.partition(draws.T.copy(), [below, below + 1, above, above + 1], axis=1))),
    ]


def in_process_seconds(csv: Path, resamples: int, **options) -> float:
    from sweepaudit import AuditSettings, audit, load_sweep

    sweep = load_sweep(csv)
    start = time.perf_counter()
    audit(sweep, settings=AuditSettings(seed=1, resamples=resamples), **options)
    return time.perf_counter() - start


def measure(csv: Path, tmp: Path, args, label: str) -> list[tuple]:
    rows = []
    floors, commands, peaks, inner, references, plain, plain_inner = [], [], [], [], [], [], []
    for _ in range(args.runs):
        floors.append(floor_seconds(args.configurations, args.windows, args.resamples))
        seconds, peak = command_seconds(csv, tmp / "audit.json", args.resamples, SRC)
        commands.append(seconds)
        peaks.append(peak)
        inner.append(in_process_seconds(csv, args.resamples))
        if args.without_sensitivity:
            plain.append(command_seconds(csv, tmp / "plain.json", args.resamples, SRC, "--no-sensitivity")[0])
            plain_inner.append(in_process_seconds(csv, args.resamples, sensitivity=False))
        if args.reference_src:
            references.append(command_seconds(csv, tmp / "reference.json", args.resamples, Path(args.reference_src))[0])
    floor = statistics.median(floors)
    load = os.getloadavg()[0]
    rows.append((label, "floor: the two float64 products", floor, 1.0, None, load))
    rows.append((label, "whole command (long CSV -> JSON)", statistics.median(commands),
                 statistics.median(commands) / floor, max((p for p in peaks if p), default=None), load))
    rows.append((label, "audit() in process", statistics.median(inner), statistics.median(inner) / floor, None, load))
    if plain:
        rows.append((label, "whole command, --no-sensitivity", statistics.median(plain),
                     statistics.median(plain) / floor, None, load))
        rows.append((label, "audit(sensitivity=False) in process", statistics.median(plain_inner),
                     statistics.median(plain_inner) / floor, None, load))
    if references:
        rows.append((label, f"whole command, {args.reference_src}", statistics.median(references),
                     statistics.median(references) / floor, None, load))
    return rows


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--configurations", type=int, default=1_000)
    ap.add_argument("--windows", type=int, default=2_000)
    ap.add_argument("--resamples", type=int, default=10_000)
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--busy", type=int, default=0, help="busy loops for a second measurement under load")
    ap.add_argument("--reference-src", help="another checkout's src, run with the same yardstick")
    ap.add_argument("--without-sensitivity", action="store_true",
                    help="also the command and audit() without the sensitivity block, interleaved")
    ap.add_argument("--fixed-costs", action="store_true",
                    help="also what any whole command spends beside the products, each at its cheapest")
    ap.add_argument("--quick", action="store_true")
    args = ap.parse_args()
    if args.quick:
        args.configurations, args.windows, args.resamples = 200, 500, 2_000
    sys.path.insert(0, str(SRC))
    with tempfile.TemporaryDirectory() as folder:
        tmp = Path(folder)
        csv = tmp / "sweep_long.csv"
        write_long_csv(csv, args.configurations, args.windows)
        print(f"{args.configurations:,} configurations x {args.windows:,} windows, {args.resamples:,} resamples; "
              f"{os.cpu_count()} cores; median of {args.runs} runs")
        rows = measure(csv, tmp, args, "as found")
        if args.fixed_costs:
            costs = fixed_costs(csv, args.configurations, args.windows, args.resamples, args.runs)
            floor = rows[0][2]
        if args.busy:
            with busy_loops(args.busy):
                rows += measure(csv, tmp, args, f"+{args.busy} busy loops")
    print("| load | what | median seconds | ratio to floor | peak MB | load average |")
    print("|---|---|---|---|---|---|")
    for label, what, seconds, ratio, peak, load in rows:
        print(f"| {label} | {what} | {seconds:.2f} | x{ratio:.2f} | {'' if peak is None else f'{peak:,.0f}'} | {load:.2f} |")
    if args.fixed_costs:
        print(f"\nFixed costs, each at its cheapest (as found; load average {os.getloadavg()[0]:.2f}):\n")
        print("| what | median seconds | ratio to floor |")
        print("|---|---|---|")
        for what, seconds in costs:
            print(f"| {what} | {seconds:.2f} | x{seconds / floor:.2f} |")
        total = sum(seconds for _, seconds in costs)
        print(f"| sum, before any product, interval or test | {total:.2f} | x{total / floor:.2f} |")


if __name__ == "__main__":
    main()
