"""The one date reader: window labels -> dates, windows in time order, and periods per year.

Forms understood (a column uses one form throughout):

========================  ===================  =================================================
form                      example              window date
========================  ===================  =================================================
ISO date / datetime       ``2024-01-05``,      as written; a time-zone offset must be the same on
                          ``2024-01-05T16:00   every row (the wall-clock time is kept)
                          +01:00``
year first, slashes       ``2024/01/05``       as written
day first                 ``05/01/2024``       ``DD/MM/YYYY`` (``/``, ``.`` or ``-``)
month first               ``01/05/2024``       ``MM/DD/YYYY``
year-month                ``2024-01``          the month's last day (12 a year)
YYYYMM                    ``202401`` (text     the month's last day (12 a year)
                          or whole number)
YYYYMMDD                  ``20240105``         as written
ISO week                  ``2024-W01``         the week's Sunday (52 a year)
quarter                   ``2024Q1``           the quarter's last day (4 a year)
a datetime column         Parquet / DataFrame  as stored (offsets: wall-clock time kept)
========================  ===================  =================================================

Day-first and month-first labels are told apart by a day above 12. A column where no day is above
12 reads validly both ways and is refused: say which with ``date_order`` (command line:
``--day-first`` / ``--month-first``) or give ``date_format`` (a ``strptime`` format, command line
``--date-format``). A column mixing forms, or offsets, is refused at the first row that differs.
A column of mostly dates with one label that is not a date is refused at that row. Numeric labels
(``1, 2, 3``) order numerically; other labels keep the file's order.

Periods per year come from the user, else from the form (12, 52, 4 for period labels), else from
the median spacing of the dates (252 trading days, 365 calendar days, 52, 26, 12, 4, 2, 1: the
calendar, common practice for annualizing).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import InputError

__all__ = [
    "WindowDates",
    "DATE_ORDERS",
    "cell_label",
    "read_dates",
    "numeric_dates",
    "order_windows",
    "infer_periods",
    "periods_per_year",
]

DATE_ORDERS = ("auto", "day-first", "month-first")

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

_OFFSET = r"(?P<offset>Z|[+-]\d{2}:?\d{2})?"
# form -> (pattern, description); checked in this order, the first that matches names the form.
_FORMS: dict[str, tuple[re.Pattern, str]] = {
    "iso": (re.compile(r"\d{4}-\d{1,2}-\d{1,2}([T ]\d{1,2}:\d{2}(:\d{2}(\.\d+)?)?" + _OFFSET + r")?"),
            "ISO dates (YYYY-MM-DD)"),
    "year_slash": (re.compile(r"\d{4}/\d{1,2}/\d{1,2}"), "year-first dates (YYYY/MM/DD)"),
    "slashed": (re.compile(r"(?P<a>\d{1,2})(?P<sep>[/.-])(?P<b>\d{1,2})(?P=sep)\d{4}"), "DD/MM/YYYY or MM/DD/YYYY"),
    "year_month": (re.compile(r"\d{4}-\d{2}"), "year-month labels (YYYY-MM)"),
    "yyyymm": (re.compile(r"\d{6}"), "YYYYMM labels"),
    "yyyymmdd": (re.compile(r"\d{8}"), "YYYYMMDD labels"),
    "week": (re.compile(r"\d{4}-?W\d{2}"), "ISO week labels (YYYY-Www)"),
    "quarter": (re.compile(r"\d{4}-?Q[1-4]"), "quarter labels (YYYYQn)"),
}
# Forms whose labels name a period: (periods per year, frequency).
_PERIOD_FORMS = {
    "year_month": (12.0, "monthly"),
    "yyyymm": (12.0, "monthly"),
    "week": (52.0, "weekly"),
    "quarter": (4.0, "quarterly"),
}


@dataclass(frozen=True)
class WindowDates:
    """How a window column was read as dates.

    Attributes
    ----------
    dates : DatetimeIndex
        One date per label, in the column's order (period labels: the period's last day).
    form : str
        The form read, in words (e.g. ``"day-first dates (DD/MM/YYYY)"``).
    periods_per_year : float or None
        Set by period labels (12 for months, 52 for ISO weeks, 4 for quarters), else None.
    frequency : str or None
        The period labels' frequency ("monthly", ...), else None.
    keep_labels : bool
        Period labels are shown as written ("2024-01"); dates as ISO dates.
    """

    dates: pd.DatetimeIndex
    form: str
    periods_per_year: float | None = None
    frequency: str | None = None
    keep_labels: bool = False


def cell_label(value) -> str:
    """A cell as the label the audit shows: dates as ISO dates, whole floats as read."""
    if isinstance(value, float) and value.is_integer():
        return str(value)
    if isinstance(value, (np.floating, float)):
        return f"{float(value):g}"
    if isinstance(value, pd.Timestamp):
        return value.date().isoformat() if value == value.normalize() else value.isoformat()
    return str(value)


class _Where:
    """Where a column came from, to name the file, the column and the row in a message."""

    def __init__(self, path: str | None, column: str | None, rows: np.ndarray | None) -> None:
        self.path, self.column, self.rows = path, column, rows

    def error(self, message: str, position: int | None = None) -> InputError:
        row = None
        if position is not None:
            row = int(self.rows[position] if self.rows is not None else position) + 1
        return InputError(message, path=self.path, column=self.column, row=row)


def _form_of(text: pd.Series) -> pd.Series:
    """Each label's form (the first of :data:`_FORMS` it matches whole), or "" for none."""
    form = pd.Series("", index=text.index, dtype=object)
    for name, (pattern, _) in _FORMS.items():
        open_ = form == ""
        if not open_.any():
            break
        form[open_ & text.str.fullmatch(pattern.pattern)] = name
    return form


def _invalid(where: _Where, parsed: pd.Series, text: pd.Series, what: str) -> None:
    bad = parsed.isna().to_numpy()
    if bad.any():
        p = int(np.flatnonzero(bad)[0])
        raise where.error(f"not a date: {text.iloc[p]!r} (read as {what})", p)


def _iso(text: pd.Series, where: _Where) -> WindowDates:
    offsets = text.str.extract(_FORMS["iso"][0].pattern)["offset"]
    offsets = offsets.fillna("").str.replace("Z", "+00:00").str.replace(r"^([+-]\d{2})(\d{2})$", r"\1:\2", regex=True)
    if offsets.nunique() > 1:
        p = int(np.flatnonzero((offsets != offsets.iloc[0]).to_numpy())[0])
        first = offsets.iloc[0] or "no offset"
        raise where.error(
            f"mixed time-zone offsets: {text.iloc[p]!r} has {offsets.iloc[p] or 'no offset'} while row 1 has "
            f"{first}; write every window in one offset (UTC, say)", p,
        )
    bare = text.str.replace(r"(Z|[+-]\d{2}:?\d{2})$", "", regex=True).str.replace("T", " ")
    parsed = pd.Series(pd.to_datetime(bare, format="mixed", errors="coerce"), index=text.index)
    _invalid(where, parsed, text, "an ISO date")
    form = "ISO dates (YYYY-MM-DD)" if not text.str.len().gt(10).any() else "ISO datetimes"
    if offsets.iloc[0]:
        form += f" (offset {offsets.iloc[0]}, wall-clock time kept)"
    return WindowDates(pd.DatetimeIndex(parsed), form)


def _slashed(text: pd.Series, order: str, where: _Where) -> WindowDates:
    """DD/MM/YYYY or MM/DD/YYYY, told apart by a day above 12 or by ``order``."""
    parts = text.str.extract(_FORMS["slashed"][0].pattern)
    a, b = parts["a"].astype(int), parts["b"].astype(int)
    seps = parts["sep"]
    if seps.nunique() > 1:
        p = int(np.flatnonzero((seps != seps.iloc[0]).to_numpy())[0])
        raise where.error(f"mixed date formats: {text.iloc[p]!r} uses {seps.iloc[p]!r} where row 1 uses {seps.iloc[0]!r}", p)
    if order == "auto":
        day_first, month_first = bool((a > 12).any()), bool((b > 12).any())
        if day_first and month_first:
            p = int(np.flatnonzero((b > 12).to_numpy())[0])
            q = int(np.flatnonzero((a > 12).to_numpy())[0])
            raise where.error(
                f"mixed date formats: {text.iloc[p]!r} is month-first (MM/DD/YYYY) but {text.iloc[q]!r} "
                "is day-first (DD/MM/YYYY); write one format", max(p, q),
            )
        if not day_first and not month_first:
            raise where.error(
                f"dates like {text.iloc[0]!r} read validly both day-first (DD/MM/YYYY) and month-first "
                "(MM/DD/YYYY); say which with date_order='day-first' or 'month-first' (command line: "
                "--day-first or --month-first), or give date_format (--date-format)", 0,
            )
        order = "day-first" if day_first else "month-first"
    sep = seps.iloc[0]
    fmt = f"%d{sep}%m{sep}%Y" if order == "day-first" else f"%m{sep}%d{sep}%Y"
    described = "day-first dates (DD/MM/YYYY)" if order == "day-first" else "month-first dates (MM/DD/YYYY)"
    parsed = pd.Series(pd.to_datetime(text, format=fmt, errors="coerce"), index=text.index)
    _invalid(where, parsed, text, described)
    return WindowDates(pd.DatetimeIndex(parsed), described)


def _period_end(text: pd.Series, form: str, where: _Where) -> WindowDates:
    """Period labels: the period's last day as the window date."""
    if form == "week":
        canon = text.str.replace(r"^(\d{4})-?W(\d{2})$", r"\1-W\2-7", regex=True)
        parsed = pd.Series(pd.to_datetime(canon, format="%G-W%V-%u", errors="coerce"), index=text.index)
        # strptime accepts week 53 of a year that has none (it rolls over): refuse it.
        iso_weeks = parsed.dt.isocalendar().week.astype("float").to_numpy()
        named = text.str[-2:].astype(int).to_numpy()
        parsed[iso_weeks != named] = pd.NaT
    elif form == "quarter":
        canon = text.str.replace(r"^(\d{4})-?Q([1-4])$", r"\1Q\2", regex=True)
        parsed = pd.Series(pd.PeriodIndex(canon, freq="Q").end_time.normalize(), index=text.index)
    else:
        fmt = "%Y-%m" if form == "year_month" else "%Y%m"
        start = pd.to_datetime(text, format=fmt, errors="coerce")
        parsed = pd.Series(start + pd.offsets.MonthEnd(0), index=text.index)
    _invalid(where, parsed, text, _FORMS[form][1])
    ppy, freq = _PERIOD_FORMS[form]
    return WindowDates(pd.DatetimeIndex(parsed), _FORMS[form][1] + ", dated at the period's end", ppy, freq, True)


def _explicit(text: pd.Series, date_format: str, where: _Where) -> WindowDates:
    parsed = pd.Series(pd.to_datetime(text, format=date_format, errors="coerce"), index=text.index)
    _invalid(where, parsed, text, f"date format {date_format!r}")
    return WindowDates(pd.DatetimeIndex(parsed), f"dates in the given format {date_format!r}")


def numeric_dates(values: pd.Series) -> WindowDates | None:
    """Whole numbers that are all valid YYYYMM or all valid YYYYMMDD dates (a date column exported
    as numbers), else None."""
    if not pd.api.types.is_numeric_dtype(values) or pd.api.types.is_bool_dtype(values) or values.isna().any():
        return None
    v = values.to_numpy(dtype=np.float64)
    if len(v) == 0 or not np.all(v == np.round(v)):
        return None
    for digits, form in ((6, "yyyymm"), (8, "yyyymmdd")):
        if np.all((v >= 10 ** (digits - 1) * 1.8) & (v < 10 ** (digits - 1) * 2.2)):
            text = pd.Series(v.astype(np.int64).astype(str), index=values.index)
            try:
                if form == "yyyymmdd":
                    parsed = pd.to_datetime(text, format="%Y%m%d", errors="coerce")
                    if parsed.isna().any():
                        return None
                    return WindowDates(pd.DatetimeIndex(parsed), "YYYYMMDD numbers")
                return _period_end(text, form, _Where(None, None, None))
            except InputError:
                return None
    return None


def read_dates(
    labels: pd.Series,
    *,
    date_order: str = "auto",
    date_format: str | None = None,
    path: str | None = None,
    column: str | None = None,
    rows: np.ndarray | None = None,
) -> WindowDates | None:
    """Read a window column as dates, or None when it holds plain labels.

    Parameters
    ----------
    labels : Series
        The window labels (unique ones for a long file), in file order.
    date_order : {"auto", "day-first", "month-first"}
        How to read ``DD/MM/YYYY``-shaped labels; auto decides from a day above 12.
    date_format : str, optional
        A ``strptime`` format every label must match (then no detection).
    path, column : str, optional
        Named in messages.
    rows : ndarray, optional
        The 0-based data row of each label (long layout: its first occurrence).

    Raises
    ------
    InputError
        A label that is not a date in a column of dates, mixed forms or offsets, a label valid both
        day-first and month-first, a label that breaks ``date_format``: naming the file, the column
        and the row.
    """
    where = _Where(path, column, rows)
    if pd.api.types.is_datetime64_any_dtype(labels):
        return _datetime_column(labels, where)
    if date_format is not None:
        return _explicit(labels.astype(str).str.strip(), date_format, where)
    if pd.api.types.is_numeric_dtype(labels):
        return numeric_dates(labels)
    if labels.map(lambda v: isinstance(v, pd.Timestamp)).all():
        return _datetime_column(pd.Series(pd.to_datetime(list(labels), utc=False), index=labels.index), where)
    text = labels.astype(str).str.strip()
    form = _form_of(text)
    shaped = form != ""
    if 2 * shaped.sum() < len(text):
        return None
    if not shaped.all():
        p = int(np.flatnonzero(~shaped.to_numpy())[0])
        raise where.error(f"not a date: {text.iloc[p]!r} (the other windows are dates)", p)
    if form.nunique() > 1:
        p = int(np.flatnonzero((form != form.iloc[0]).to_numpy())[0])
        raise where.error(
            f"mixed date formats: {text.iloc[p]!r} ({_FORMS[form.iloc[p]][1]}) where row 1 holds "
            f"{text.iloc[0]!r} ({_FORMS[form.iloc[0]][1]}); write one format or give date_format "
            "(--date-format)", p,
        )
    kind = form.iloc[0]
    if kind == "iso":
        return _iso(text, where)
    if kind == "year_slash":
        parsed = pd.Series(pd.to_datetime(text, format="%Y/%m/%d", errors="coerce"), index=text.index)
        _invalid(where, parsed, text, _FORMS[kind][1])
        return WindowDates(pd.DatetimeIndex(parsed), _FORMS[kind][1])
    if kind == "slashed":
        return _slashed(text, date_order, where)
    if kind == "yyyymmdd":
        parsed = pd.Series(pd.to_datetime(text, format="%Y%m%d", errors="coerce"), index=text.index)
        _invalid(where, parsed, text, _FORMS[kind][1])
        return WindowDates(pd.DatetimeIndex(parsed), _FORMS[kind][1])
    return _period_end(text, kind, where)


def _datetime_column(values: pd.Series, where: _Where) -> WindowDates:
    """A column stored as datetimes: the wall-clock time kept, the offset dropped."""
    dates = pd.DatetimeIndex(values)
    form = "a datetime column"
    if dates.tz is not None:
        form += f" (time zone {dates.tz}, wall-clock time kept)"
        dates = dates.tz_localize(None)
    if dates.isna().any():
        raise where.error("missing window date", int(np.flatnonzero(dates.isna())[0]))
    return WindowDates(dates.as_unit("ns"), form)


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


def order_windows(
    labels: pd.Series,
    label: str,
    column: str,
    rows: np.ndarray | None = None,
    *,
    date_order: str = "auto",
    date_format: str | None = None,
):
    """Unique windows in time order: by date when dated, numerically when numeric, else as read.

    ``rows`` maps each label's position to its 0-based data row (long layout: first occurrence).
    Returns the sort key and the :class:`WindowDates` (None for plain labels).
    """
    read = read_dates(labels, date_order=date_order, date_format=date_format, path=label, column=column, rows=rows)
    if read is not None:
        dup = read.dates.duplicated()
        if dup.any():
            p = int(np.flatnonzero(dup)[0])
            raise _Where(label, column, rows).error(
                f"window {cell_label(labels.iloc[p])!r} is the same date as an earlier window", p
            )
        return pd.Series(read.dates.asi8, index=labels.index), read
    if pd.api.types.is_numeric_dtype(labels):
        key = pd.Series(labels.to_numpy(dtype=np.float64), index=labels.index)
        if key.isna().any():
            r = int(np.flatnonzero(key.isna().to_numpy())[0])
            raise _Where(label, column, rows).error("missing window label", r)
        return key, None
    if labels.isna().any():
        r = int(np.flatnonzero(labels.isna().to_numpy())[0])
        raise _Where(label, column, rows).error("missing window label", r)
    codes, _ = pd.factorize(labels)
    return pd.Series(codes.astype(np.float64), index=labels.index), None


def periods_per_year(
    given: float | None, dates: pd.DatetimeIndex | None, notes: list[str], *, hint: tuple[float, str] | None = None
) -> tuple[float | None, str, str | None]:
    """Windows per year, where they came from ("given", "inferred", "unknown") and the frequency.

    A given value wins; a note says so when it disagrees with the dates by more than a quarter.
    ``hint`` (periods per year, frequency) comes from period labels or from aggregation and wins
    over the spacing of the dates.
    """
    inferred, name = hint if hint is not None else (infer_periods(dates) if dates is not None else (None, None))
    if given is not None:
        ppy = float(given)
        if inferred is not None and abs(inferred - ppy) > 0.25 * inferred:
            notes.append(
                f"--periods-per-year {ppy:g} disagrees with the window dates, which look {name} "
                f"({inferred:g} a year): annualized figures use {ppy:g}"
            )
        return ppy, "given", None
    if dates is None:
        return None, "unknown", None
    if inferred is None:
        notes.append("could not infer periods per year from the window dates; figures are per window")
    return inferred, "inferred" if inferred else "unknown", name
