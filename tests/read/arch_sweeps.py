"""Sweeps built from the open data sets arch ships (``arch.data``), written in the formats real
exports take. The strategies are SYNTHETIC rules (moving-average timing at several lookbacks) applied
to real published series; the series are the data sets' own:

* ``arch.data.sp500``: daily S&P 500 index prices, 1999 to 2018 (Yahoo! Finance via arch);
* ``arch.data.frenchdata``: monthly Fama-French factor returns in percent, 1926 onwards (Kenneth
  French's data library via arch); arch reads its YYYYMM dates as nanosecond integers, which are
  recovered here as the YYYYMM numbers of the original file;
* ``arch.data.nasdaq``: daily NASDAQ composite prices, 1999 to 2018.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pandas as pd

LOOKBACKS = (10, 20, 50, 100, 150, 200)


@lru_cache(maxsize=None)
def daily_prices(name: str = "sp500") -> pd.Series:
    """Adjusted closes of an arch daily index data set, by trading day."""
    import importlib

    data = importlib.import_module(f"arch.data.{name}").load()
    return data["Adj Close"].astype(float)


def moving_average_sweep(name: str = "sp500", lookbacks=LOOKBACKS) -> tuple[pd.DataFrame, pd.Series]:
    """Daily raw returns of "hold the index while it closes above its L-day moving average" (decided
    on yesterday's close), one column per lookback, and the buy-and-hold daily return."""
    price = daily_prices(name)
    r = price.pct_change()
    cols = {}
    for lb in lookbacks:
        above = (price > price.rolling(lb).mean()).astype(float).shift(1)
        cols[f"lookback={lb}"] = above * r
    frame = pd.DataFrame(cols).iloc[max(lookbacks) + 1:]
    return frame, r.loc[frame.index].rename("buy_and_hold")


@lru_cache(maxsize=None)
def french_monthly() -> pd.DataFrame:
    """The monthly factors (percent) with their YYYYMM numbers as a column."""
    from arch.data import frenchdata

    data = frenchdata.load()
    out = data.reset_index(drop=True)
    out.insert(0, "yyyymm", data.index.asi8.astype(np.int64))
    return out


def factor_timing_sweep(lookbacks=(3, 6, 9, 12, 18, 24)) -> pd.DataFrame:
    """Monthly excess returns (percent) of "hold the market factor while its trailing L-month mean is
    positive", one column per lookback, with the YYYYMM column first."""
    f = french_monthly()
    mkt = f["Mkt-RF"]
    cols = {"yyyymm": f["yyyymm"]}
    for lb in lookbacks:
        cols[f"lookback={lb}"] = (mkt.rolling(lb).mean() > 0).astype(float).shift(1) * mkt
    return pd.DataFrame(cols).iloc[max(lookbacks) + 1:].reset_index(drop=True)
