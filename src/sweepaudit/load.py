"""Files -> Sweep. The only module that reads input files.

Two layouts are understood:

* **long**: one row per (configuration, window): a window column, one or more parameter columns (or
  one configuration-id column) and a value column;
* **wide**: one row per window, one column per configuration.

Every problem is an :class:`~sweepaudit.errors.InputError` naming the file, the column and the row.
Rows are counted as data rows, 1-based, the header not counted (row 1 is the line after the header).
Missing values are never filled.
"""

from __future__ import annotations

import hashlib
import io
import re
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np
import pandas as pd

from .errors import DegenerateDataError, InputError
from .sweep import MIN_WINDOWS, UNIT_SCALE, Sweep

__all__ = ["LoadOptions", "load_sweep", "read_table"]

Layout = Literal["auto", "long", "wide"]

WINDOW_NAMES = ("window", "date", "period", "week", "month", "day", "time", "timestamp", "window_end")
VALUE_NAMES = ("excess_return", "excess", "value", "return", "returns", "ret", "pnl")
ID_NAMES = ("configuration", "config", "config_id", "configuration_id", "strategy", "id", "name")
NA_TOKENS = ["", "NA", "N/A", "NaN", "nan", "null", "NULL", "None"]


@dataclass(frozen=True)
class LoadOptions:
    """How to read a sweep file; every field overrides detection when set.

    Attributes
    ----------
    layout : {"auto", "long", "wide"}
    window_column, value_column : str or None
    parameter_columns : tuple of str or None
        Long layout: the columns that name a configuration (one id column or several parameters).
    benchmark : str or None
        Raw strategy returns: the benchmark column (wide) or configuration (long) to subtract.
    benchmark_file : str or None
        Long or wide layout: a second file with a window column and one value column.
    units : {"fraction", "percent", "bps"}
    periods_per_year : float or None
    common_windows : bool
        Keep only the windows every configuration covers instead of refusing.
    """

    layout: Layout = "auto"
    window_column: str | None = None
    value_column: str | None = None
    parameter_columns: tuple[str, ...] | None = None
    benchmark: str | None = None
    benchmark_file: str | None = None
    units: str = "fraction"
    periods_per_year: float | None = None
    common_windows: bool = False


def read_table(path: str) -> tuple[pd.DataFrame, str, str]:
    """Read a CSV, TSV or Parquet file (``-``: CSV from standard input).

    Returns the table, a label for messages and the SHA-256 of the bytes read.
    """
    if path == "-":
        data = sys.stdin.buffer.read()
        label = "<stdin>"
        kind = "csv"
    else:
        p = Path(path)
        label = str(path)
        if not p.exists():
            raise InputError("no such file", path=label)
        if p.is_dir():
            raise InputError("is a directory, not a sweep file", path=label)
        suffix = p.suffix.lower()
        kinds = {".csv": "csv", ".txt": "csv", ".tsv": "tsv", ".tab": "tsv", ".parquet": "parquet", ".pq": "parquet"}
        if suffix not in kinds:
            raise InputError(
                f"unreadable format {suffix or '(no suffix)'!r}: use .csv, .tsv or .parquet", path=label
            )
        kind = kinds[suffix]
        data = p.read_bytes()
    digest = hashlib.sha256(data).hexdigest()
    if not data.strip():
        raise InputError("empty input: no header and no data rows", path=label)
    try:
        if kind == "parquet":
            frame = pd.read_parquet(io.BytesIO(data))
        else:
            sep = "\t" if kind == "tsv" else ","
            # pandas renames a repeated header name ("a", "a.1"); read the header as written.
            header = pd.read_csv(
                io.BytesIO(data), sep=sep, header=None, nrows=1, dtype=str, keep_default_na=False,
                skipinitialspace=True,
            ).iloc[0]
            frame = pd.read_csv(
                io.BytesIO(data),
                sep=sep,
                na_values=NA_TOKENS,
                keep_default_na=False,
                skipinitialspace=True,
            )
            if len(header) == len(frame.columns):
                # Empty header cells keep pandas' "Unnamed: k" names.
                frame.columns = [h if h.strip() else c for h, c in zip(header, frame.columns)]
    except (ValueError, pd.errors.ParserError, UnicodeDecodeError, OSError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(f"unreadable {kind.upper()} file ({first})", path=label) from None
    except Exception as exc:  # pyarrow raises its own types for corrupt Parquet files
        raise InputError(f"unreadable {kind.upper()} file ({type(exc).__name__})", path=label) from None
    frame.columns = [str(c).strip() for c in frame.columns]
    if len(frame) == 0:
        raise InputError("empty input: a header but no data rows", path=label)
    dupes = frame.columns[frame.columns.duplicated()].tolist()
    if dupes:
        raise InputError("the header repeats this column name", path=label, column=dupes[0])
    return frame, label, digest


def _find(columns, names, *, exclude=()) -> str | None:
    lowered = {c.lower(): c for c in columns if c not in exclude}
    for n in names:
        if n in lowered:
            return lowered[n]
    return None


def _require_column(frame: pd.DataFrame, column: str, label: str, what: str) -> None:
    if column not in frame.columns:
        raise InputError(
            f"{what} column {column!r} not found; columns are {', '.join(frame.columns)}", path=label
        )


def _numeric(series: pd.Series, label: str, column: str, *, allow_missing: bool = False) -> np.ndarray:
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


def _label(value) -> str:
    if isinstance(value, float) and value.is_integer():
        return str(value)
    if isinstance(value, (np.floating, float)):
        return f"{float(value):g}"
    if isinstance(value, pd.Timestamp):
        return value.date().isoformat() if value == value.normalize() else value.isoformat()
    return str(value)


def _looks_like_dates(series: pd.Series) -> pd.DatetimeIndex | None:
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


def _infer_periods(dates: pd.DatetimeIndex) -> tuple[float | None, str | None]:
    """Windows per year from the median spacing of the window dates."""
    if len(dates) < 3:
        return None, None
    days = dates.sort_values().to_series().diff().dt.total_seconds().to_numpy()[1:] / 86_400.0
    median = float(np.median(days))
    if median <= 0:
        return None, None
    table = [
        (1.0, 252.0, "daily (trading days)"),
        (7.0, 52.0, "weekly"),
        (14.0, 26.0, "fortnightly"),
        (30.4, 12.0, "monthly"),
        (91.3, 4.0, "quarterly"),
        (182.6, 2.0, "semi-annual"),
        (365.25, 1.0, "annual"),
    ]
    for spacing, per_year, name in table:
        if abs(median - spacing) <= 0.2 * spacing:
            if spacing == 1.0 and (days >= 3).mean() < 0.05 and dates.dayofweek.max() >= 5:
                return 365.0, "daily (calendar days)"
            return per_year, name
    return None, None


def _looks_long(frame: pd.DataFrame, window_col: str) -> bool:
    """Long files repeat each window once per configuration; a wide file's windows are unique, and
    one repeated window there is an error to report as such, not a reason to read the file as long.
    A long file of a single configuration is told by its value column's name and its constant
    configuration columns."""
    windows = frame[window_col]
    others = [c for c in frame.columns if c != window_col]
    value = _find(others, VALUE_NAMES)
    if windows.duplicated().any():
        if windows.nunique(dropna=False) * 2 <= len(frame) or value is not None:
            return True
        # Windows mostly unique: wide with a repeated window, unless some column cannot be a
        # configuration's returns (a configuration id, or few configurations on ragged windows).
        return _find(others, ID_NAMES) is not None or not all(
            pd.api.types.is_numeric_dtype(frame[c]) for c in others
        )
    rest = [c for c in others if c != value]
    return value is not None and bool(rest) and all(frame[c].nunique(dropna=False) == 1 for c in rest)


def _parse_named_parameters(names: list[str]) -> pd.DataFrame | None:
    """Recover a parameter table from names like ``lookback=20, band=1.5``."""
    rows = []
    for name in names:
        parts = [p.strip() for p in name.split(",")]
        row = {}
        for part in parts:
            m = re.fullmatch(r"([A-Za-z_][\w.]*)\s*=\s*(.+)", part)
            if not m:
                return None
            row[m.group(1)] = m.group(2).strip()
        rows.append(row)
    table = pd.DataFrame(rows, index=pd.Index(names, name="configuration"))
    if table.isna().any().any():
        return None
    for col in table.columns:
        num = pd.to_numeric(table[col], errors="coerce")
        if num.notna().all():
            table[col] = num
    return table


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


def _order_windows(labels: pd.Series, label: str, column: str, rows: np.ndarray | None = None):
    """Unique windows in time order: by date when dated, numerically when numeric, else as read.

    ``rows`` maps each label's position to its 0-based data row (long layout: first occurrence).
    """
    dates = _looks_like_dates(labels)
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


def load_sweep(path: str, options: LoadOptions | None = None) -> Sweep:
    """Read a sweep file into a validated :class:`~sweepaudit.sweep.Sweep`.

    Parameters
    ----------
    path : str
        CSV, TSV or Parquet file, or ``-`` for CSV on standard input.
    options : LoadOptions, optional
        Overrides for layout and column detection, units, periods per year and benchmark.
    """
    opt = options or LoadOptions()
    if opt.units not in UNIT_SCALE:
        raise InputError(f"units must be one of {', '.join(UNIT_SCALE)}; got {opt.units!r}")
    if opt.periods_per_year is not None and not (0 < opt.periods_per_year < np.inf):
        raise InputError(f"periods per year must be positive and finite; got {opt.periods_per_year}")
    frame, label, digest = read_table(path)
    columns = list(frame.columns)

    window_col = opt.window_column
    if window_col is not None:
        _require_column(frame, window_col, label, "window")
    else:
        window_col = _find(columns, WINDOW_NAMES)
        if window_col is None and not pd.api.types.is_numeric_dtype(frame[columns[0]]):
            window_col = columns[0]

    layout = opt.layout
    if layout == "auto":
        if opt.parameter_columns or opt.value_column:
            layout = "long"
        elif window_col is not None and _looks_long(frame, window_col):
            layout = "long"
        else:
            layout = "wide"
    if layout not in ("long", "wide"):
        raise InputError(f"layout must be auto, long or wide; got {layout!r}")
    if opt.layout == "auto" and layout == "wide" and window_col is None and opt.units == "fraction":
        # Without a window column every column becomes a configuration: refuse a column of whole
        # numbers, which is an index, a window or a parameter, not excess returns as fractions.
        for c in columns:
            if c == opt.benchmark or not pd.api.types.is_numeric_dtype(frame[c]):
                continue
            v = frame[c].to_numpy(dtype=np.float64)
            v = v[np.isfinite(v)]
            if v.size and np.all(v == np.round(v)) and np.any(v != 0):
                raise InputError(
                    "holds only whole numbers: it looks like a window, index or parameter column, not "
                    "excess returns as fractions; name the window column with --window-column, give "
                    "--units percent or bps, or pass --layout wide to audit it as a configuration",
                    path=label,
                    column=c,
                )

    notes: list[str] = []
    if layout == "long":
        matrix, names, params, window_labels, dates = _long(frame, label, window_col, opt, notes)
    else:
        matrix, names, params, window_labels, dates = _wide(frame, label, window_col, opt, notes)

    if opt.benchmark_file is not None:
        matrix = _subtract_benchmark_file(matrix, window_labels, dates, opt, notes)

    matrix = matrix / UNIT_SCALE[opt.units]
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
            f"window, read as {opt.units}: check --units (percent? bps?) and that it is a return column"
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

    if opt.periods_per_year is not None:
        ppy, source, freq = float(opt.periods_per_year), "given", None
        if dates is not None:
            inferred, name = _infer_periods(dates)
            if inferred is not None and abs(inferred - ppy) > 0.25 * inferred:
                notes.append(
                    f"--periods-per-year {ppy:g} disagrees with the window dates, which look {name} "
                    f"({inferred:g} a year): annualised figures use {ppy:g}"
                )
    elif dates is not None:
        ppy, freq = _infer_periods(dates)
        source = "inferred" if ppy else "unknown"
        if ppy is None:
            notes.append("could not infer periods per year from the window dates; figures are per window")
    else:
        ppy, source, freq = None, "unknown", None

    return Sweep(
        returns=np.ascontiguousarray(matrix),
        configurations=tuple(names),
        parameters=params,
        windows=tuple(window_labels),
        dates=dates,
        periods_per_year=ppy,
        periods_source=source,
        frequency=freq,
        units=opt.units,
        layout=layout,
        path=label,
        sha256=digest,
        notes=tuple(notes),
    )


def _coverage(matrix: np.ndarray, names, window_labels, dates, opt: LoadOptions, label: str, notes):
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
            "Pass --common-windows to audit those",
            path=label,
        )
    notes.append(
        f"kept the {int(full.sum())} windows common to every configuration; dropped "
        f"{int((~full).sum())} windows ({affected} configurations were incomplete)"
    )
    labels = [w for w, keep in zip(window_labels, full) if keep]
    return matrix[full], labels, (dates[full] if dates is not None else None)


def _long(frame, label, window_col, opt: LoadOptions, notes):
    columns = list(frame.columns)
    if window_col is None:
        raise InputError(
            "long layout needs a window column; name it with --window-column "
            f"(columns are {', '.join(columns)})",
            path=label,
        )
    value_col = opt.value_column
    if value_col is not None:
        _require_column(frame, value_col, label, "value")
    else:
        value_col = _find(columns, VALUE_NAMES, exclude=(window_col,))
        if value_col is None:
            numeric = [c for c in columns if c != window_col and pd.api.types.is_float_dtype(frame[c])]
            if not numeric:
                raise InputError(
                    "no numeric value column found; name it with --value-column "
                    f"(columns are {', '.join(columns)})",
                    path=label,
                )
            value_col = numeric[-1]
    if opt.parameter_columns:
        params = list(opt.parameter_columns)
        for c in params:
            _require_column(frame, c, label, "parameter")
    else:
        params = [c for c in columns if c not in (window_col, value_col)]
    if not params:
        raise InputError(
            "long layout needs a configuration-id column or parameter columns besides the window "
            f"column {window_col!r} and the value column {value_col!r}",
            path=label,
        )
    values = _numeric(frame[value_col], label, value_col)
    for c in params:
        if frame[c].isna().any():
            r = int(np.flatnonzero(frame[c].isna().to_numpy())[0])
            raise InputError("missing parameter value", path=label, column=c, row=r + 1)

    single_id = len(params) == 1 and (
        params[0].lower() in ID_NAMES or not pd.api.types.is_numeric_dtype(frame[params[0]])
    )
    # Factorise first and label only the unique values: the file may hold millions of rows.
    if len(params) == 1:
        config_codes, uniq = pd.factorize(frame[params[0]])
        combos = [(v,) for v in uniq]
    else:
        config_codes, uniq = pd.MultiIndex.from_frame(frame[params]).factorize()
        combos = list(uniq)
    if single_id:
        config_uniques = [_label(c[0]) for c in combos]
    else:
        config_uniques = [", ".join(f"{p}={_label(v)}" for p, v in zip(params, c)) for c in combos]
    if len(set(config_uniques)) != len(config_uniques):
        raise InputError("two different parameter values print the same configuration name", path=label)

    window_codes, raw_windows = pd.factorize(frame[window_col])
    if (window_codes < 0).any():
        r = int(np.flatnonzero(window_codes < 0)[0])
        raise InputError("missing window label", path=label, column=window_col, row=r + 1)
    window_uniques = [_label(v) for v in raw_windows]
    first_rows = pd.Series(window_codes).drop_duplicates().index.to_numpy()
    order_key, dates_unique = _order_windows(pd.Series(raw_windows), label, window_col, first_rows)
    # Duplicate (configuration, window) pairs: name the second occurrence.
    pair = config_codes.astype(np.int64) * (len(window_uniques) + 1) + window_codes
    dup = pd.Series(pair).duplicated().to_numpy()
    if dup.any():
        r = int(np.flatnonzero(dup)[0])
        raise InputError(
            f"duplicate row for configuration {config_uniques[config_codes[r]]!r} and window "
            f"{window_uniques[window_codes[r]]!r}",
            path=label,
            row=r + 1,
        )
    order = np.argsort(order_key.to_numpy(), kind="stable")
    rank = np.empty_like(order)
    rank[order] = np.arange(len(order))
    matrix = np.full((len(window_uniques), len(config_uniques)), np.nan)
    matrix[rank[window_codes], config_codes] = values
    window_labels = [window_uniques[i] for i in order]
    dates = None
    if dates_unique is not None:
        dates = pd.DatetimeIndex(dates_unique[order])
        window_labels = [_label(d) for d in dates]

    names = [str(c) for c in config_uniques]
    if single_id:
        table = pd.DataFrame(index=pd.Index(names, name="configuration"))
    else:
        first_rows = pd.Series(np.arange(len(frame))).groupby(config_codes).first().to_numpy()
        table = frame[params].iloc[first_rows].reset_index(drop=True)
        table.index = pd.Index(names, name="configuration")

    if opt.benchmark is not None:
        if opt.benchmark not in names:
            raise InputError(
                f"benchmark configuration {opt.benchmark!r} not found among the {len(names)} configurations",
                path=label,
            )
        b = names.index(opt.benchmark)
        if np.isnan(matrix[:, b]).any():
            raise InputError(f"benchmark configuration {opt.benchmark!r} misses windows", path=label)
        matrix = np.delete(matrix, b, axis=1) - matrix[:, [b]]
        names.pop(b)
        table = table.drop(index=opt.benchmark)
        notes.append(f"excess returns computed against the benchmark configuration {opt.benchmark!r}")

    matrix, window_labels, dates = _coverage(matrix, names, window_labels, dates, opt, label, notes)
    return matrix, names, table, window_labels, dates


def _wide(frame, label, window_col, opt: LoadOptions, notes):
    columns = list(frame.columns)
    if window_col is not None:
        labels = frame[window_col]
        dup = labels.duplicated().to_numpy()
        if dup.any():
            r = int(np.flatnonzero(dup)[0])
            raise InputError(f"window {_label(labels.iloc[r])!r} appears twice", path=label, column=window_col, row=r + 1)
        order_key, dates = _order_windows(labels, label, window_col)
        order = np.argsort(order_key.to_numpy(), kind="stable")
        window_labels = [_label(v) for v in labels.iloc[order]]
        if dates is not None:
            dates = pd.DatetimeIndex(dates[order])
            window_labels = [_label(d) for d in dates]
        config_cols = [c for c in columns if c != window_col]
    else:
        order = np.arange(len(frame))
        window_labels = [str(i + 1) for i in order]
        dates = None
        config_cols = columns
    if opt.benchmark is not None:
        _require_column(frame, opt.benchmark, label, "benchmark")
        if opt.benchmark not in config_cols:
            raise InputError(f"the benchmark column {opt.benchmark!r} is the window column", path=label)
    if not config_cols or (opt.benchmark is not None and len(config_cols) == 1):
        raise InputError("no configuration columns: a wide file needs one column per configuration", path=label)
    block = frame[config_cols]
    if all(pd.api.types.is_float_dtype(d) for d in block.dtypes):
        # Fast path for wide numeric files (a Parquet file of 100,000 configurations): one
        # conversion; the per-column check runs only on a column holding an infinite value.
        matrix = block.to_numpy(dtype=np.float64)
        bad = np.isinf(matrix).any(axis=0)
        if bad.any():
            c = config_cols[int(np.flatnonzero(bad)[0])]
            _numeric(frame[c], label, c, allow_missing=True)
        matrix = matrix[order]
    else:
        matrix = np.column_stack(
            [_numeric(frame[c], label, c, allow_missing=True) for c in config_cols]
        )[order]
    names = list(config_cols)
    if opt.benchmark is not None:
        b = names.index(opt.benchmark)
        bench = matrix[:, b]
        if np.isnan(bench).any():
            r = int(order[np.flatnonzero(np.isnan(bench))[0]])
            raise InputError("missing benchmark value", path=label, column=opt.benchmark, row=r + 1)
        matrix = np.delete(matrix, b, axis=1) - bench[:, None]
        names.pop(b)
        notes.append(f"excess returns computed against the benchmark column {opt.benchmark!r}")
    table = _parse_named_parameters(names)
    if table is None:
        table = pd.DataFrame(index=pd.Index(names, name="configuration"))
    matrix, window_labels, dates = _coverage(matrix, names, window_labels, dates, opt, label, notes)
    return matrix, names, table, window_labels, dates


def _subtract_benchmark_file(matrix, window_labels, dates, opt: LoadOptions, notes):
    frame, label, _ = read_table(opt.benchmark_file)
    columns = list(frame.columns)
    wcol = _find(columns, WINDOW_NAMES) or columns[0]
    vcols = [c for c in columns if c != wcol]
    if opt.value_column and opt.value_column in vcols:
        vcols = [opt.value_column]
    if len(vcols) != 1:
        raise InputError(
            f"a benchmark file needs a window column and one value column; got {', '.join(columns)}",
            path=label,
        )
    values = _numeric(frame[vcols[0]], label, vcols[0])
    keys = frame[wcol]
    bdates = _looks_like_dates(keys)
    if dates is not None and bdates is not None:
        lookup = pd.Series(values, index=bdates)
        wanted = dates
    else:
        lookup = pd.Series(values, index=keys.astype(object).map(_label).to_numpy())
        wanted = pd.Index(window_labels)
    if lookup.index.duplicated().any():
        r = int(np.flatnonzero(lookup.index.duplicated())[0])
        raise InputError("window appears twice", path=label, column=wcol, row=r + 1)
    aligned = lookup.reindex(wanted)
    if aligned.isna().any():
        t = int(np.flatnonzero(aligned.isna().to_numpy())[0])
        raise InputError(
            f"no benchmark value for window {window_labels[t]!r} ({int(aligned.isna().sum())} windows missing)",
            path=label,
            column=wcol,
        )
    notes.append(f"excess returns computed against the benchmark file {label}")
    return matrix - aligned.to_numpy()[:, None]
