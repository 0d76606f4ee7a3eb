"""Finer returns -> windows: compound daily (or any finer) returns into weekly, monthly or quarterly
windows.

Strategy and benchmark are compounded separately over each window and only then subtracted:

    excess_w = prod(1 + r_strategy) - prod(1 + r_benchmark)

which is the excess return an investor in the window actually earned over the benchmark.
Compounding the per-period excess returns instead, ``prod(1 + r_strategy - r_benchmark) - 1``, is a
different number: the two agree to first order only, and the gap grows with volatility and with the
window's length (over a month of daily returns with 1% daily volatility each, a few basis points;
in a crash month, far more). So aggregation wants raw returns and a benchmark (``benchmark``,
``benchmark_file``). Given excess returns alone, their compounded product is used and a note says
it approximates the compounded difference.

Windows are calendar weeks ending Friday, calendar months or calendar quarters, each dated by its
last input date. A first or last window holding fewer than 80% of the median number of input
returns per window is partial (the data start or end inside it) and is dropped, with a note; the
periods per year follow the rule (52, 12, 4).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError
from .dates import cell_label
from .options import WINDOW_RULES

__all__ = ["PARTIAL_SHARE", "aggregate_windows", "compound"]

#: A first or last window with fewer input returns than this share of the median is partial.
PARTIAL_SHARE = 0.8


def compound(values: np.ndarray, starts: np.ndarray) -> np.ndarray:
    """``prod(1 + r) - 1`` over the row groups that begin at ``starts`` (rows in time order)."""
    return np.multiply.reduceat(1.0 + values, starts, axis=0) - 1.0


def _groups(dates: pd.DatetimeIndex, rule: str, label: str) -> tuple[np.ndarray, np.ndarray]:
    """The first row of each window and the number of rows in it."""
    periods = dates.to_period(WINDOW_RULES[rule][0]).asi8
    starts = np.flatnonzero(np.r_[True, periods[1:] != periods[:-1]])
    counts = np.diff(np.r_[starts, len(dates)])
    if np.median(counts) < 2:
        raise InputError(
            f"windows={rule} needs returns finer than {rule} windows; these windows are already {rule} or "
            "coarser (median one input window per window)", path=label,
        )
    return starts, counts


def _partial(counts: np.ndarray) -> np.ndarray:
    """Which windows to keep: all but a partial first or last one."""
    keep = np.ones(len(counts), dtype=bool)
    typical = float(np.median(counts))
    if len(counts) > 1 and counts[0] < PARTIAL_SHARE * typical:
        keep[0] = False
    if len(counts) > 1 and counts[-1] < PARTIAL_SHARE * typical:
        keep[-1] = False
    return keep


def _refuse_total_loss(values: np.ndarray, names: list[str], windows: list[str], label: str, what: str) -> None:
    bad = values <= -1.0
    if bad.any():
        t, k = (int(i[0]) for i in np.nonzero(bad))
        raise InputError(
            f"{what} {names[k]!r} loses 100% or more in window {windows[t]!r} ({values[t, k]:g}): such a "
            "return cannot be compounded; check the units", path=label,
        )


def aggregate_windows(built, rule: str, label: str, notes: list[str]) -> dict:
    """Compound ``built``'s returns (fractions, windows in time order) into ``rule`` windows, in
    place; returns the description of what was done (the reading's ``aggregation`` block)."""
    if built.dates is None:
        raise InputError(
            f"windows={rule} needs dated windows (a window column of dates); these windows are plain labels",
            path=label,
        )
    starts, counts = _groups(built.dates, rule, label)
    _refuse_total_loss(built.matrix, built.names, built.windows, label, "configuration")
    ends = np.r_[starts[1:], len(built.dates)] - 1
    matrix = compound(built.matrix, starts)
    bench = None
    if built.benchmark is not None:
        _refuse_total_loss(built.benchmark[:, None], ["benchmark"], built.windows, label, "the")
        bench = compound(built.benchmark[:, None], starts)[:, 0]
    keep = _partial(counts)
    dropped = [
        {"window": cell_label(built.dates[ends[g]]), "position": "first" if g == 0 else "last",
         "input_windows": int(counts[g])}
        for g in np.flatnonzero(~keep)
    ]
    typical = float(np.median(counts))
    for d in dropped:
        notes.append(
            f"dropped the partial {d['position']} {rule} window ending {d['window']}: {d['input_windows']} input "
            f"returns against a median of {typical:g} (a partial window is one with under "
            f"{PARTIAL_SHARE:.0%} of the median)"
        )
    before = len(built.dates)
    built.matrix = matrix[keep]
    built.benchmark = bench[keep] if bench is not None else None
    built.dates = pd.DatetimeIndex(built.dates[ends[keep]])
    built.windows = [cell_label(d) for d in built.dates]
    built.written = list(built.windows)
    if bench is None:
        notes.append(
            f"compounded the excess returns as given into {rule} windows: prod(1 + excess) - 1 only "
            "approximates the compounded strategy minus the compounded benchmark; give raw returns and "
            "benchmark (--benchmark) for the exact figure"
        )
    return {
        "windows": rule,
        "input_windows": before,
        "output_windows": int(keep.sum()),
        "median_inputs_per_window": typical,
        "partial_windows_dropped": dropped,
        "compounding": ("strategy and benchmark compounded separately per window, then subtracted"
                        if bench is not None else "excess returns compounded as given (an approximation)"),
    }
