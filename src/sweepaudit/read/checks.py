"""The reader's guards: numbers where numbers belong, windows every configuration covers, and
matrices that can support an audit. Each refusal names the file, the column and the row."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import DegenerateDataError, InputError
from ..sweep import MIN_WINDOWS
from .options import LoadOptions

__all__ = ["numeric", "refuse_whole_number_columns", "coverage", "check_matrix"]


def numeric(series: pd.Series, label: str, column: str, *, allow_missing: bool = False) -> np.ndarray:
    """Convert a column to float64, naming the first bad cell."""
    if pd.api.types.is_bool_dtype(series):
        raise InputError("holds true/false values, not numbers", path=label, column=column)
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


def coverage(matrix: np.ndarray, names, window_labels, dates, opt: LoadOptions, label: str, notes):
    """Refuse (or, with common_windows, trim) configurations covering different windows."""
    missing = np.isnan(matrix)
    if not missing.any():
        return matrix, window_labels, dates
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
    labels = [w for w, keep in zip(window_labels, full) if keep]
    return matrix[full], labels, (dates[full] if dates is not None else None)


def check_matrix(matrix: np.ndarray, names: list[str], label: str, layout: str, units: str, notes: list[str]) -> None:
    """A matrix (in fractions) that can be audited: configurations, enough windows, no constant one;
    a note for a return of 100% or more in a window (wrong units?)."""
    t, n = matrix.shape
    if n == 0:
        raise InputError("no configuration columns to audit", path=label)
    if t < MIN_WINDOWS:
        raise DegenerateDataError(
            f"only {t} windows; the audit needs at least {MIN_WINDOWS} (block bootstrap and moment "
            "estimates), and the selection tests need many more to say anything",
            path=label,
        )
    biggest = np.abs(matrix).max(axis=0)
    if biggest.max() >= 1.0:
        k = int(np.argmax(biggest))
        notes.append(
            f"configuration {names[k]!r} has an excess return of {biggest[k]:g} (100% or more) in one "
            f"window, read as {units}: check --units (percent? bps?) and that it is a return column"
        )
    sd = matrix.std(axis=0)
    constant = np.flatnonzero(sd <= 1e-15 * np.maximum(1.0, np.abs(matrix).max(axis=0)))
    if len(constant):
        k = int(constant[0])
        raise DegenerateDataError(
            f"configuration {names[k]!r} is constant (every window = {matrix[0, k]:g}): its "
            f"Sharpe ratio is undefined; remove it ({len(constant)} constant configuration(s) in all)",
            path=label,
            column=names[k] if layout == "wide" else None,
        )
