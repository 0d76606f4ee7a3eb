"""Write a large SYNTHETIC sweep as wide Parquet, for the scale test of the audit.

    python benchmarks/make_large_sweep.py OUT.parquet --configurations 100000 --windows 2000

Correlated normal excess returns (a common factor and a factor per row of a 2-parameter grid),
daily dates, no edge except a small one on a handful of configurations. Not market data.
"""

from __future__ import annotations

import argparse

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--configurations", type=int, default=100_000)
    ap.add_argument("--windows", type=int, default=2_000)
    ap.add_argument("--seed", type=int, default=8)
    args = ap.parse_args()
    n, t = args.configurations, args.windows
    rng = np.random.default_rng(args.seed)
    rows = 250
    cols = -(-n // rows)
    common = rng.standard_normal(t)
    row_factor = rng.standard_normal((t, rows))
    names, arrays = [], []
    for k in range(n):
        i, j = divmod(k, cols)
        i = k % rows
        j = k // rows
        x = 0.006 * (0.4 * common + 0.5 * row_factor[:, i] + 0.77 * rng.standard_normal(t))
        if k % 20_011 == 7:
            x += 0.0008
        names.append(f"lookback={i + 1}, band={j + 1}")
        arrays.append(pa.array(x))
    dates = pd.bdate_range("2015-01-02", periods=t)
    table = pa.Table.from_arrays([pa.array(dates.strftime("%Y-%m-%d"))] + arrays, names=["date"] + names)
    pq.write_table(table, args.out, compression="snappy")


if __name__ == "__main__":
    main()
