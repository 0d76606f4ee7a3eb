"""The reader's guards: numbers where numbers belong, windows every configuration covers, and
matrices that can support an audit. Each refusal names the file, the column and the row."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import DegenerateDataError, InputError
from ..sweep import MIN_WINDOWS
from .dates import numeric_dates
from .options import LoadOptions

__all__ = [
    "numeric", "refuse_whole_number_columns", "coverage", "LEVEL_RATIO", "level_like", "refuse_levels",
    "refuse_level_excess", "check_matrix",
]


def numeric(series: pd.Series, label: str, column: str, *, allow_missing: bool = False) -> np.ndarray:
    """Convert a column to float64, naming the first bad cell."""
    if pd.api.types.is_bool_dtype(series):
        raise InputError("holds true/false values, not numbers", path=label, column=column)
    if series.dtype == np.float64:  # numbers already: no cell to coerce, every NaN a missing cell
        values = series.to_numpy(dtype=np.float64)
        bad = np.zeros(0, dtype=bool)
    else:
        values = pd.to_numeric(series, errors="coerce").to_numpy(dtype=np.float64)
        bad = np.isnan(values) & series.notna().to_numpy()
    if bad.any():
        r = int(np.flatnonzero(bad)[0])
        raise InputError(
            f"not a number: {str(series.iloc[r])!r}", path=label, column=column, row=r + 1
        )
    inf = np.isinf(values)
    if inf.any():
        r = int(np.flatnonzero(inf)[0])
        raise InputError("infinite value", path=label, column=column, row=r + 1)
    if not allow_missing and np.isnan(values).any():
        r = int(np.flatnonzero(np.isnan(values))[0])
        raise InputError(
            "missing value (missing values are never filled; remove the row or fill it upstream)",
            path=label,
            column=column,
            row=r + 1,
        )
    return values


def refuse_whole_number_columns(
    frame: pd.DataFrame, label: str, window_col: str | None, layout: str, options: LoadOptions
) -> None:
    """A detected wide file without a window column makes every column a configuration: refuse a
    column of whole numbers, which is an index, a window or a parameter, not excess returns as
    fractions."""
    if options.layout != "auto" or layout != "wide" or window_col is not None or options.units != "fraction":
        return
    for c in frame.columns:
        if c == options.benchmark or not pd.api.types.is_numeric_dtype(frame[c]):
            continue
        v = frame[c].to_numpy(dtype=np.float64)
        v = v[np.isfinite(v)]
        if v.size and np.all(v == np.round(v)) and np.any(v != 0):
            raise InputError(
                "holds only whole numbers: it looks like a window, index or parameter column, not "
                "excess returns as fractions; name the window column with window_column, give units "
                "percent or bps, or layout wide to audit it as a configuration (command line: "
                "--window-column, --units, --layout wide)",
                path=label,
                column=c,
            )


def coverage(built, opt: LoadOptions, label: str, notes: list[str]) -> None:
    """Refuse (or, with common_windows, trim) configurations covering different windows."""
    matrix, names, window_labels = built.matrix, built.names, built.windows
    missing = np.isnan(matrix)
    if not missing.any():
        return
    affected = int(missing.any(axis=0).sum())
    full = ~missing.any(axis=1)
    if not opt.common_windows:
        k = int(np.flatnonzero(missing.any(axis=0))[0])
        t = int(np.flatnonzero(missing[:, k])[0])
        raise InputError(
            f"configurations cover different windows: {affected} of {matrix.shape[1]} configurations "
            f"miss at least one of the {matrix.shape[0]} windows (first: {names[k]!r} has no value "
            f"for window {window_labels[t]!r}); only {int(full.sum())} windows are common to all. "
            "Pass common_windows=True (command line: --common-windows) to audit those",
            path=label,
        )
    notes.append(
        f"kept the {int(full.sum())} windows common to every configuration; dropped "
        f"{int((~full).sum())} windows ({affected} configurations were incomplete)"
    )
    built.matrix = matrix[full]
    built.windows = [w for w, keep in zip(window_labels, full) if keep]
    if built.written is not None:
        built.written = [w for w, keep in zip(built.written, full) if keep]
    if built.dates is not None:
        built.dates = built.dates[full]
    if built.benchmark is not None:
        built.benchmark = built.benchmark[full]


#: A column whose values all share one sign and sit this many times their typical window-to-window
#: change away from zero is a level (a price, an index, a cumulative equity curve), not returns: for
#: returns the ratio is about the per-window Sharpe ratio over the square root of 2 (0.1 to 0.3 for
#: a good strategy), so 4 means a per-window Sharpe ratio near 6, which no strategy earns.
LEVEL_RATIO = 4.0


def level_like(matrix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per column: is it level-like, and its distance from zero in window-to-window changes."""
    if matrix.shape[0] < 3:
        return np.zeros(matrix.shape[1], dtype=bool), np.zeros(matrix.shape[1])
    step = np.diff(matrix, axis=0).std(axis=0)
    centre = np.abs(matrix.mean(axis=0))
    with np.errstate(divide="ignore", invalid="ignore"):
        # A constant column is no level: check_matrix refuses it as constant.
        ratio = np.where(step > 0, centre / step, 0.0)
    same_sign = np.all(matrix > 0, axis=0) | np.all(matrix < 0, axis=0)
    return same_sign & (ratio > LEVEL_RATIO), ratio


def _whole_columns(matrix: np.ndarray) -> np.ndarray:
    """Per column: whole numbers only."""
    return np.all(matrix == np.round(matrix), axis=0)


def _counter_like(matrix: np.ndarray, whole: np.ndarray | None = None) -> np.ndarray:
    """Per column: whole numbers that only rise or only fall (a counter, an index, dates).

    ``whole`` (:func:`_whole_columns`, if already known): only those columns are looked at further."""
    whole = _whole_columns(matrix) if whole is None else whole
    counters = np.zeros(matrix.shape[1], dtype=bool)
    if matrix.shape[0] < 2 or not whole.any():
        return counters
    columns = np.flatnonzero(whole)
    d = np.diff(matrix[:, columns], axis=0)
    rising = np.all(d >= 0, axis=0) & np.any(d > 0, axis=0)
    falling = np.all(d <= 0, axis=0) & np.any(d < 0, axis=0)
    counters[columns] = rising | falling
    return counters


def _date_like(values: np.ndarray) -> str | None:
    read = numeric_dates(pd.Series(values))
    return read.form if read is not None else None


def refuse_levels(built, label: str) -> None:
    """Refuse a configuration (or benchmark) that looks like dates, a counter, a price level or a
    cumulative equity curve: whatever the units, such a column is never audited as returns.

    Checked on the values as written (before units are applied), so no option bypasses it.
    """
    m = built.matrix
    integral = _whole_columns(m)  # returns seldom are: the further checks look at these columns only
    counters = _counter_like(m, integral)
    in_range = np.zeros(m.shape[1], dtype=bool)
    columns = np.flatnonzero(integral)
    for low in (180_000, 18_000_000):  # YYYYMM and YYYYMMDD numbers from 1800 to 2199
        in_range[columns] |= np.all((m[:, columns] >= low) & (m[:, columns] < low * 22 / 18), axis=0)
    whole = integral & (in_range | counters)
    for k in np.flatnonzero(whole):
        form = _date_like(m[:, k])
        if form is not None or counters[k]:
            _refuse(built, int(k), label, f"looks like dates ({form})" if form else
                    "looks like a counter or an index (whole numbers that only rise or only fall)")
    level, ratio = level_like(m)
    if level.any():
        k = int(np.flatnonzero(level)[0])
        _refuse(built, k, label, _level_reason(m[:, k], ratio[k]))
    if built.benchmark is not None:
        b = built.benchmark[:, None]
        form = _date_like(b[:, 0]) if np.all(b == np.round(b)) else None
        if form is not None or _counter_like(b)[0]:
            path, column, row = built.benchmark_where
            raise InputError(
                f"the benchmark looks like {'dates (' + form + ')' if form else 'a counter or an index'}, not "
                "returns", path=path, column=column, row=row + 1,
            )


def _level_reason(values: np.ndarray, ratio: float) -> str:
    sign = "positive" if values[0] > 0 else "negative"
    return (
        f"looks like a price level or a cumulative equity curve, not returns: every value is {sign} and the "
        f"values sit {ratio:.3g} times their typical window-to-window change away from zero (returns sit "
        "well under 1); give per-window returns"
    )


def _refuse(built, k: int, label: str, reason: str) -> None:
    column = built.columns[k]
    where = f"configuration {built.names[k]!r} " if column != built.names[k] else ""
    raise InputError(f"{where}{reason}; no option reads it as returns", path=label, column=column,
                     row=int(built.rows[k]) + 1)


def refuse_level_excess(matrix: np.ndarray, names: list[str], built, label: str) -> None:
    """After a benchmark was subtracted: excess returns that look like a level mean the benchmark
    is a price level or an equity curve."""
    level, ratio = level_like(matrix)
    if level.any():
        k = int(np.flatnonzero(level)[0])
        path, column, row = built.benchmark_where
        raise InputError(
            f"the excess returns of {names[k]!r} over this benchmark look like a level (they sit {ratio[k]:.3g} "
            "times their window-to-window change away from zero): is the benchmark a price level or an "
            "equity curve? give the benchmark's per-window returns", path=path, column=column, row=row + 1,
        )


def check_matrix(matrix: np.ndarray, names: list[str], label: str, layout: str, columns: list[str]) -> None:
    """A matrix (in fractions) that can be audited: configurations, enough windows, no constant one."""
    t, n = matrix.shape
    if n == 0:
        raise InputError("no configuration columns to audit", path=label)
    if t < MIN_WINDOWS:
        raise DegenerateDataError(
            f"only {t} windows; the audit needs at least {MIN_WINDOWS} (block bootstrap and moment "
            "estimates), and the selection tests need many more to say anything",
            path=label,
        )
    sd = matrix.std(axis=0)
    constant = np.flatnonzero(sd <= 1e-15 * np.maximum(1.0, np.abs(matrix).max(axis=0)))
    if len(constant):
        k = int(constant[0])
        never = " (it never invests)" if matrix[0, k] == 0 else ""
        raise DegenerateDataError(
            f"configuration {names[k]!r} is constant (every window = {matrix[0, k]:g}){never}: its "
            f"Sharpe ratio is undefined; remove it ({len(constant)} constant configuration(s) in all)",
            path=label,
            column=columns[k] if layout != "long" else None,
        )
