"""Which column holds the windows, and is the file long (one row per configuration and window) or
wide (one row per window, one column per configuration)?

The window column is the one named by the options, else the first named like a window
(:data:`WINDOW_NAMES`), else the first column holding datetimes, else a first column of text, else a
first column of YYYYMM or YYYYMMDD numbers.
"""

from __future__ import annotations

import re

import pandas as pd

from ..errors import InputError
from .dates import numeric_dates
from .options import LoadOptions

__all__ = [
    "WINDOW_NAMES", "VALUE_NAMES", "ID_NAMES", "BENCHMARK_NAME", "find_column", "require_column", "window_column",
    "layout_of",
]

WINDOW_NAMES = ("window", "date", "period", "week", "month", "day", "time", "timestamp", "window_end", "datetime",
                "yyyymm", "yyyymmdd", "month_end", "period_end", "week_end", "quarter")
VALUE_NAMES = ("excess_return", "excess", "value", "return", "returns", "ret", "pnl")
#: A configuration named like this is probably the benchmark of raw strategy returns, not a strategy.
BENCHMARK_NAME = re.compile(
    r"(^|[^a-z])(bench(mark)?|index|market|mkt|buy[_ -]?(and|&|n)?[_ -]?hold|b&h|bnh|passive|spx)([^a-z]|$)",
    re.IGNORECASE,
)
ID_NAMES = ("configuration", "config", "config_id", "configuration_id", "strategy", "id", "name")


def find_column(columns, names, *, exclude=()) -> str | None:
    """The first column named like one of ``names`` (case-insensitive), skipping ``exclude``."""
    lowered = {c.lower(): c for c in columns if c not in exclude}
    for n in names:
        if n in lowered:
            return lowered[n]
    return None


def require_column(frame: pd.DataFrame, column: str, label: str, what: str) -> None:
    """Refuse a column the options name that the file does not have."""
    if column not in frame.columns:
        raise InputError(
            f"{what} column {column!r} not found; columns are {', '.join(frame.columns)}", path=label
        )


def _looks_long(frame: pd.DataFrame, window_col: str) -> bool:
    """Long files repeat each window once per configuration; a wide file's windows are unique, and
    one repeated window there is an error to report as such, not a reason to read the file as long.
    A long file of a single configuration is told by its value column's name and its constant
    configuration columns."""
    windows = frame[window_col]
    others = [c for c in frame.columns if c != window_col]
    value = find_column(others, VALUE_NAMES)
    distinct = windows.nunique(dropna=False)  # fewer than the rows: a window repeats
    if distinct < len(frame):
        if distinct * 2 <= len(frame) or value is not None:
            return True
        # Windows mostly unique: wide with a repeated window, unless some column cannot be a
        # configuration's returns (a configuration id, or few configurations on ragged windows).
        return find_column(others, ID_NAMES) is not None or not all(
            pd.api.types.is_numeric_dtype(frame[c]) for c in others
        )
    rest = [c for c in others if c != value]
    return value is not None and bool(rest) and all(frame[c].nunique(dropna=False) == 1 for c in rest)


def window_column(frame: pd.DataFrame, label: str, options: LoadOptions) -> str | None:
    """The window column: as named, else by a known name, else a first column of non-numbers."""
    columns = list(frame.columns)
    if options.window_column is not None:
        require_column(frame, options.window_column, label, "window")
        return options.window_column
    found = find_column(columns, WINDOW_NAMES)
    if found is None:
        stamped = [c for c in columns if pd.api.types.is_datetime64_any_dtype(frame[c])]
        first = frame[columns[0]]
        if stamped:
            found = stamped[0]
        elif not pd.api.types.is_numeric_dtype(first):
            found = columns[0]
        elif numeric_dates(first.drop_duplicates()) is not None:
            # A first column of YYYYMM or YYYYMMDD numbers is a date column exported as numbers.
            found = columns[0]
    return found


def layout_of(frame: pd.DataFrame, window_col: str | None, options: LoadOptions) -> str:
    """"long" or "wide": as given, or long when long-only options or repeated windows say so."""
    layout = options.layout
    if layout == "auto":
        if options.parameter_columns or options.value_column:
            layout = "long"
        elif window_col is not None and _looks_long(frame, window_col):
            layout = "long"
        else:
            layout = "wide"
    if layout not in ("long", "wide"):
        raise InputError(f"layout must be auto, long or wide; got {layout!r}")
    return layout
