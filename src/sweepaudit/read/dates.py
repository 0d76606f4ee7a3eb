"""Windows in time order, and how many of them make a year.

A window column of dates (ISO ``2024-01-05`` or ``01/05/2024``; any pandas datetime) orders the
windows by date and tells the periods per year from the median spacing; numeric labels order
numerically; other labels keep the file's order.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError

__all__ = ["cell_label", "looks_like_dates", "order_windows", "infer_periods", "periods_per_year"]

# (median spacing in days, windows per year, frequency name)
_SPACINGS = [
    (1.0, 252.0, "daily (trading days)"),
    (7.0, 52.0, "weekly"),
    (14.0, 26.0, "fortnightly"),
    (30.4, 12.0, "monthly"),
    (91.3, 4.0, "quarterly"),
    (182.6, 2.0, "semi-annual"),
    (365.25, 1.0, "annual"),
]


def cell_label(value) -> str:
    """A cell as the label the audit shows: dates as ISO dates, whole floats as read."""
    if isinstance(value, float) and value.is_integer():
        return str(value)
    if isinstance(value, (np.floating, float)):
        return f"{float(value):g}"
    if isinstance(value, pd.Timestamp):
        return value.date().isoformat() if value == value.normalize() else value.isoformat()
    return str(value)


def looks_like_dates(series: pd.Series) -> pd.DatetimeIndex | None:
    """The column as dates when every cell is one (ISO or day/month/year), else None."""
    if pd.api.types.is_datetime64_any_dtype(series):
        return pd.DatetimeIndex(series)
    if pd.api.types.is_numeric_dtype(series):
        return None
    text = series.astype(str)
    if not text.str.match(r"^\d{4}([-/])\d{1,2}\1\d{1,2}").all() and not text.str.match(r"^\d{1,2}/\d{1,2}/\d{4}").all():
        return None
    try:
        return pd.DatetimeIndex(pd.to_datetime(text, format="mixed"))
    except (ValueError, TypeError):
        return None


def infer_periods(dates: pd.DatetimeIndex) -> tuple[float | None, str | None]:
    """Windows per year from the median spacing of the window dates."""
    if len(dates) < 3:
        return None, None
    days = dates.sort_values().to_series().diff().dt.total_seconds().to_numpy()[1:] / 86_400.0
    median = float(np.median(days))
    if median <= 0:
        return None, None
    for spacing, per_year, name in _SPACINGS:
        if abs(median - spacing) <= 0.2 * spacing:
            if spacing == 1.0 and (days >= 3).mean() < 0.05 and dates.dayofweek.max() >= 5:
                return 365.0, "daily (calendar days)"
            return per_year, name
    return None, None


def _first_bad_date(labels: pd.Series) -> int | None:
    """Position of the first label that is not a date in a column of mostly dates, else None.

    One mistyped date (2023-13-01) or a stray label must not silently turn a dated column into
    plain labels: the windows would stay in file order and the periods per year unknown.
    """
    if pd.api.types.is_numeric_dtype(labels) or pd.api.types.is_datetime64_any_dtype(labels):
        return None
    text = labels.astype(str)
    shaped = text.str.match(r"^\d{4}([-/])\d{1,2}\1\d{1,2}") | text.str.match(r"^\d{1,2}/\d{1,2}/\d{4}")
    parsed = pd.to_datetime(text.where(shaped), format="mixed", errors="coerce")
    good = parsed.notna().to_numpy()
    bad = ~good & labels.notna().to_numpy()  # missing labels are reported as missing elsewhere
    if 2 * good.sum() < len(labels) or not bad.any():
        return None
    return int(np.flatnonzero(bad)[0])


def order_windows(labels: pd.Series, label: str, column: str, rows: np.ndarray | None = None):
    """Unique windows in time order: by date when dated, numerically when numeric, else as read.

    ``rows`` maps each label's position to its 0-based data row (long layout: first occurrence).
    """
    dates = looks_like_dates(labels)
    if dates is None:
        p = _first_bad_date(labels)
        if p is not None:
            raise InputError(
                f"not a date: {str(labels.iloc[p])!r} (the other windows are dates)",
                path=label,
                column=column,
                row=int(rows[p] if rows is not None else p) + 1,
            )
    if dates is not None:
        key = pd.Series(dates.asi8, index=labels.index)
    elif pd.api.types.is_numeric_dtype(labels):
        key = pd.Series(labels.to_numpy(dtype=np.float64), index=labels.index)
        if key.isna().any():
            r = int(np.flatnonzero(key.isna().to_numpy())[0])
            raise InputError("missing window label", path=label, column=column, row=r + 1)
    else:
        if labels.isna().any():
            r = int(np.flatnonzero(labels.isna().to_numpy())[0])
            raise InputError("missing window label", path=label, column=column, row=r + 1)
        codes, _ = pd.factorize(labels)
        key = pd.Series(codes.astype(np.float64), index=labels.index)
    return key, dates


def periods_per_year(
    given: float | None, dates: pd.DatetimeIndex | None, notes: list[str]
) -> tuple[float | None, str, str | None]:
    """Windows per year, where they came from ("given", "inferred", "unknown") and the frequency.

    A given value wins; a note says so when it disagrees with the dates by more than a quarter.
    """
    if given is not None:
        ppy = float(given)
        if dates is not None:
            inferred, name = infer_periods(dates)
            if inferred is not None and abs(inferred - ppy) > 0.25 * inferred:
                notes.append(
                    f"--periods-per-year {ppy:g} disagrees with the window dates, which look {name} "
                    f"({inferred:g} a year): annualised figures use {ppy:g}"
                )
        return ppy, "given", None
    if dates is None:
        return None, "unknown", None
    ppy, freq = infer_periods(dates)
    if ppy is None:
        notes.append("could not infer periods per year from the window dates; figures are per window")
    return ppy, "inferred" if ppy else "unknown", freq
