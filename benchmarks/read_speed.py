"""How much reading a sweep costs beyond pandas' own parsing, on SYNTHETIC sweeps.

    python benchmarks/read_speed.py [--configurations 2000] [--windows 520] [--repeats 5]

Writes, in a temporary folder, a long CSV (one row per configuration and window: week, lookback,
band, excess_return), the same sweep as a wide Parquet file with a DatetimeIndex, and the same
sweep as daily returns for aggregation; then times, in this process:

* ``pandas``: ``pd.read_csv`` / ``pd.read_parquet`` of the file (the floor: parsing alone);
* ``load_sweep``: the whole reader (sniffing, dates, reshape, guards, sweep);

and prints the medians and their ratio (reader / pandas), with the load average, so runs on a busy
machine can be read for what they are. Run it with another checkout's ``src`` first on
``PYTHONPATH`` to compare two versions with the same yardstick.
"""

from __future__ import annotations

import argparse
import os
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from timing import median_seconds  # benchmarks/timing.py, beside this script

from sweepaudit import load_sweep


def _files(folder: Path, n: int, t: int) -> dict[str, Path]:
    rng = np.random.default_rng(5)
    grid = [(lb, band) for lb in range(5, 5 + 5 * (n // 10), 5) for band in np.round(np.linspace(0.5, 2.75, 10), 2)]
    grid = grid[:n]
    values = rng.normal(0.0005, 0.02, size=(t, len(grid)))
    weeks = pd.date_range("2010-01-08", periods=t, freq="W-FRI")
    long = pd.DataFrame({
        "week": np.tile(weeks.strftime("%Y-%m-%d"), len(grid)),
        "lookback": np.repeat([g[0] for g in grid], t),
        "band": np.repeat([g[1] for g in grid], t),
        "excess_return": values.T.ravel(),
    })
    paths = {"long CSV": folder / "long.csv", "wide Parquet": folder / "wide.parquet", "daily CSV": folder / "daily.csv"}
    long.to_csv(paths["long CSV"], index=False)
    names = [f"lookback={lb}, band={band}" for lb, band in grid]
    pd.DataFrame(values, index=pd.DatetimeIndex(weeks, name="Date"), columns=names).to_parquet(paths["wide Parquet"])
    days = pd.bdate_range("2010-01-04", periods=t * 5)
    daily = pd.DataFrame(rng.normal(0.0003, 0.01, size=(len(days), 50)), index=days.strftime("%Y-%m-%d"),
                         columns=[f"lookback={5 * (k + 1)}" for k in range(50)])
    daily["buy_and_hold"] = rng.normal(0.0003, 0.01, size=len(days))
    daily.index.name = "date"
    daily.to_csv(paths["daily CSV"])
    return paths


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--configurations", type=int, default=2_000)
    ap.add_argument("--windows", type=int, default=520)
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        paths = _files(Path(tmp), args.configurations, args.windows)
        cases = [
            ("long CSV", lambda: pd.read_csv(paths["long CSV"]), lambda: load_sweep(str(paths["long CSV"]))),
            ("wide Parquet", lambda: pd.read_parquet(paths["wide Parquet"]),
             lambda: load_sweep(str(paths["wide Parquet"]))),
        ]
        try:  # aggregation exists from this version on; an older checkout skips the case
            from sweepaudit.read import LoadOptions

            LoadOptions(windows="monthly", benchmark="buy_and_hold")
            cases.append(("daily CSV -> monthly", lambda: pd.read_csv(paths["daily CSV"]),
                          lambda: load_sweep(str(paths["daily CSV"]), LoadOptions(windows="monthly",
                                                                                   benchmark="buy_and_hold"))))
        except (TypeError, ValueError):
            pass
        print(f"load average {os.getloadavg()[0]:.2f}; {args.configurations:,} configurations x "
              f"{args.windows:,} windows; median of {args.repeats}")
        for name, floor, reader in cases:
            base = median_seconds(floor, args.repeats)
            full = median_seconds(reader, args.repeats)
            print(f"{name:>22}: pandas {base:7.3f} s, load_sweep {full:7.3f} s, ratio {full / base:5.2f}")


if __name__ == "__main__":
    main()
