"""How much reading a sweep costs beyond pandas' own parsing, on SYNTHETIC sweeps.

    python benchmarks/read_speed.py [--configurations 2000] [--windows 520] [--repeats 5] [--busy 0]

Writes, in a temporary folder, a long CSV (one row per configuration and window: week, lookback,
band, excess_return), the same sweep as a wide Parquet file with a DatetimeIndex and as a wide CSV,
and the same sweep as daily returns for aggregation; then times, in this process:

* ``pandas``: ``pd.read_csv`` / ``pd.read_parquet`` of the file (the floor: parsing alone);
* ``load_sweep``: the whole reader (sniffing, dates, reshape, guards, sweep);
* for the text files, ``general``: the whole reader with pandas' parser for every text file (the
  reference the fast path, pyarrow's CSV reader, is held equal to in ``tests/read/test_fast_paths.py``);

and prints the medians and their ratios (reader / pandas, reader / general), with the load average,
so runs on a busy machine can be read for what they are. ``--busy k`` runs the timings beside ``k``
busy loops (the reader's pyarrow threads on a loaded machine). The issue's size is
``--configurations 1000 --windows 2000`` (2 million rows). Run it with another checkout's ``src``
first on ``PYTHONPATH`` to compare two versions with the same yardstick.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import tempfile
from pathlib import Path
from unittest import mock

import numpy as np
import pandas as pd

from timing import busy_loops, median_seconds  # benchmarks/timing.py, beside this script

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
    paths = {"long CSV": folder / "long.csv", "wide Parquet": folder / "wide.parquet", "daily CSV": folder / "daily.csv",
             "wide CSV": folder / "wide.csv"}
    long.to_csv(paths["long CSV"], index=False)
    names = [f"lookback={lb}, band={band}" for lb, band in grid]
    wide = pd.DataFrame(values, index=pd.DatetimeIndex(weeks, name="Date"), columns=names)
    wide.to_parquet(paths["wide Parquet"])
    wide.to_csv(paths["wide CSV"], date_format="%Y-%m-%d")
    days = pd.bdate_range("2010-01-04", periods=t * 5)
    daily = pd.DataFrame(rng.normal(0.0003, 0.01, size=(len(days), 50)), index=days.strftime("%Y-%m-%d"),
                         columns=[f"lookback={5 * (k + 1)}" for k in range(50)])
    daily["buy_and_hold"] = rng.normal(0.0003, 0.01, size=len(days))
    daily.index.name = "date"
    daily.to_csv(paths["daily CSV"])
    return paths


@contextlib.contextmanager
def _general_path():
    """pandas' parser for every text file (a version without the fast path reads so anyway)."""
    try:
        from sweepaudit.read import formats
    except ImportError:
        yield
        return
    if not hasattr(formats, "arrow_table"):
        yield
        return
    with mock.patch.object(formats, "arrow_table", lambda *args: None):
        yield


def _general(reader):
    def run():
        with _general_path():
            return reader()
    return run


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--configurations", type=int, default=2_000)
    ap.add_argument("--windows", type=int, default=520)
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--busy", type=int, default=0, help="busy loops beside the timings")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        paths = _files(Path(tmp), args.configurations, args.windows)
        cases = [
            ("long CSV", lambda: pd.read_csv(paths["long CSV"]), lambda: load_sweep(str(paths["long CSV"]))),
            ("wide Parquet", lambda: pd.read_parquet(paths["wide Parquet"]),
             lambda: load_sweep(str(paths["wide Parquet"]))),
            ("wide CSV", lambda: pd.read_csv(paths["wide CSV"]), lambda: load_sweep(str(paths["wide CSV"]))),
        ]
        try:  # aggregation exists from this version on; an older checkout skips the case
            from sweepaudit.read import LoadOptions

            LoadOptions(windows="monthly", benchmark="buy_and_hold")
            cases.append(("daily CSV -> monthly", lambda: pd.read_csv(paths["daily CSV"]),
                          lambda: load_sweep(str(paths["daily CSV"]), LoadOptions(windows="monthly",
                                                                                   benchmark="buy_and_hold"))))
        except (TypeError, ValueError):
            pass
        with busy_loops(args.busy) if args.busy else contextlib.nullcontext():
            print(f"load average {os.getloadavg()[0]:.2f}; {args.configurations:,} configurations x "
                  f"{args.windows:,} windows; median of {args.repeats}; {args.busy} busy loops")
            for name, floor, reader in cases:
                base = median_seconds(floor, args.repeats)
                full = median_seconds(reader, args.repeats)
                line = f"{name:>22}: pandas {base:7.3f} s, load_sweep {full:7.3f} s, ratio {full / base:5.2f}"
                if "CSV" in name:
                    general = median_seconds(_general(reader), args.repeats)
                    line += f"; general {general:7.3f} s, load_sweep / general {full / general:5.2f}"
                print(line)
            print(f"load average at the end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
