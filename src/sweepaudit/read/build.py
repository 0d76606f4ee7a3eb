"""Table -> matrix: the T x N values, configuration names, parameter table, windows and, for raw
strategy returns, the benchmark series of a long or a wide table.

Each builder returns a :class:`Built` with windows in time order, in the file's units, the benchmark
kept apart (the loader scales, aggregates and subtracts); missing values are never filled
(:func:`~sweepaudit.read.checks.coverage` refuses or trims).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import InputError
from .checks import numeric
from .dates import WindowDates, cell_label, order_windows, read_dates
from .formats import read_table
from .layout import ID_NAMES, VALUE_NAMES, WINDOW_NAMES, find_column, require_column
from .options import LoadOptions

__all__ = ["Built", "long_matrix", "wide_matrix", "benchmark_from_file", "parse_named_parameters"]


@dataclass
class Built:
    """What a builder read (mutable: the loader's later steps trim, scale and subtract in place).

    ``columns[k]`` and ``rows[k]`` locate configuration ``k`` in the table (the column holding its
    values and the 0-based data row of its first window), for messages; ``benchmark_where`` is the
    benchmark's (file, column, row).
    """

    matrix: np.ndarray
    names: list[str]
    parameters: pd.DataFrame
    windows: list[str]
    dates: pd.DatetimeIndex | None
    reading: WindowDates | None
    columns: list[str]
    rows: np.ndarray
    benchmark: np.ndarray | None = None
    benchmark_source: str | None = None
    benchmark_where: tuple[str, str, int] | None = None
    value_column: str | None = None
    parameter_columns: tuple[str, ...] = ()
    parameter_note: str | None = None
    written: list[str] | None = None


def parse_named_parameters(names: list[str]) -> tuple[pd.DataFrame | None, str | None]:
    """Recover a parameter table from names like ``lookback=20, band=1.5``; when some names carry
    parameters and the table cannot be built, say why."""
    rows = []
    for name in names:
        parts = [p.strip() for p in name.split(",")]
        row = {}
        for part in parts:
            m = re.fullmatch(r"([A-Za-z_][\w.]*)\s*=\s*(.+)", part)
            if not m:
                return None, _why_no_table(names, name)
            row[m.group(1)] = m.group(2).strip()
        rows.append(row)
    table = pd.DataFrame(rows, index=pd.Index(names, name="configuration"))
    if table.isna().any().any():
        k = int(np.flatnonzero(table.isna().any(axis=1).to_numpy())[0])
        missing = [c for c in table.columns if pd.isna(table.iloc[k][c])]
        return None, (f"no parameter table: configuration {names[k]!r} has no value for {missing[0]!r}, which "
                      "other names carry; the parameter surface check needs every name to carry every parameter")
    for col in table.columns:
        num = pd.to_numeric(table[col], errors="coerce")
        if num.notna().all():
            table[col] = num
    return table, None


def _why_no_table(names: list[str], odd: str) -> str | None:
    """A note when the names carry parameters but one does not (a benchmark column left in?)."""
    carrying = sum("=" in n for n in names)
    if carrying == 0:
        return None
    return (f"no parameter table: {carrying} of {len(names)} configuration names read like 'lookback=20, band=1.5' but "
            f"{odd!r} does not; the parameter surface check needs every name in that form")


# ---------------------------------------------------------------------------------------------
# long: one row per (configuration, window)


def _long_columns(frame: pd.DataFrame, label: str, window_col: str | None, opt: LoadOptions) -> tuple[str, list[str]]:
    """The value column and the columns that name a configuration."""
    columns = list(frame.columns)
    if window_col is None:
        raise InputError(
            "long layout needs a window column; name it with window_column (command line: --window-column); "
            f"columns are {', '.join(columns)}",
            path=label,
        )
    value_col = opt.value_column
    if value_col is not None:
        require_column(frame, value_col, label, "value")
    else:
        value_col = find_column(columns, VALUE_NAMES, exclude=(window_col,))
        if value_col is None:
            floats = [c for c in columns if c != window_col and pd.api.types.is_float_dtype(frame[c])]
            if not floats:
                raise InputError(
                    "no numeric value column found; name it with value_column (command line: --value-column); "
                    f"columns are {', '.join(columns)}",
                    path=label,
                )
            value_col = floats[-1]
    if opt.parameter_columns:
        params = list(opt.parameter_columns)
        for c in params:
            require_column(frame, c, label, "parameter")
    else:
        params = [c for c in columns if c not in (window_col, value_col)]
    if not params:
        raise InputError(
            "long layout needs a configuration-id column or parameter columns besides the window "
            f"column {window_col!r} and the value column {value_col!r}",
            path=label,
        )
    return value_col, params


def _configurations(frame: pd.DataFrame, params: list[str], label: str
                    ) -> tuple[np.ndarray, list[str], bool, np.ndarray]:
    """Each row's configuration code, the configuration names, whether one id column names them,
    and each configuration's first data row (0-based)."""
    for c in params:
        if frame[c].isna().any():
            r = int(np.flatnonzero(frame[c].isna().to_numpy())[0])
            raise InputError("missing parameter value", path=label, column=c, row=r + 1)
    single_id = len(params) == 1 and (
        params[0].lower() in ID_NAMES or not pd.api.types.is_numeric_dtype(frame[params[0]])
    )
    # Label only the unique values (the file may hold millions of rows), and factorise only the
    # first row of each run of rows naming one configuration (a long file usually lists each
    # configuration's windows together): the codes are the whole columns' factorisation.
    starts = _run_starts(frame, params)
    heads = frame[params] if len(starts) == len(frame) else frame[params].iloc[starts]
    if len(params) == 1:
        head_codes, uniq = pd.factorize(heads[params[0]])
        combos = [(v,) for v in uniq]
    else:
        head_codes, combos = _combined_codes(heads, params)
    codes = np.repeat(head_codes, np.diff(np.append(starts, len(frame))))
    if single_id:
        names = [cell_label(c[0]) for c in combos]
    else:
        names = [", ".join(f"{p}={cell_label(v)}" for p, v in zip(params, c)) for c in combos]
    if len(set(names)) != len(names):
        raise InputError("two different parameter values print the same configuration name", path=label)
    return codes, names, single_id, starts[first_occurrences(head_codes)]


def _run_starts(frame: pd.DataFrame, params: list[str]) -> np.ndarray:
    """The rows whose configuration differs from the row before's (the first row included).

    Numbers are compared as they are (equal numbers factorise to one code, ``-0.0`` and ``0.0``
    included), other columns by their factorisation codes."""
    change = np.zeros(len(frame), dtype=bool)
    change[:1] = True
    for c in params:
        column = frame[c]
        if pd.api.types.is_numeric_dtype(column) and not pd.api.types.is_bool_dtype(column) \
                and isinstance(column.dtype, np.dtype):
            values = column.to_numpy()
        else:
            values, _ = pd.factorize(column)
        change[1:] |= values[1:] != values[:-1]
    return np.flatnonzero(change)


def first_occurrences(codes: np.ndarray) -> np.ndarray:
    """The position of each code's first occurrence, for codes numbered ``0, 1, ...`` in order of
    first appearance (``pd.factorize``'s): where the running maximum rises."""
    if len(codes) == 0:
        return np.zeros(0, dtype=np.int64)
    rising = np.empty(len(codes), dtype=bool)
    rising[0] = True
    running = np.maximum.accumulate(codes)
    rising[1:] = running[1:] > running[:-1]
    return np.flatnonzero(rising)


def _combined_codes(frame: pd.DataFrame, params: list[str]) -> tuple[np.ndarray, list[tuple]]:
    """Each row's code of its parameter combination, numbered in order of first appearance, and the
    combinations: what ``pd.MultiIndex.from_frame(frame[params]).factorize()`` gives, from one
    factorisation per column and of the combined integer codes (the MultiIndex route builds a tuple
    per row, seconds for millions of rows)."""
    codes = np.zeros(len(frame), dtype=np.int64)
    for c in params:
        column_codes, _ = pd.factorize(frame[c])
        codes, _ = pd.factorize(codes * (int(column_codes.max()) + 1) + column_codes)
    first = pd.Series(np.arange(len(frame))).groupby(codes).first().to_numpy()
    rows = frame[params].iloc[first]
    combos = list(pd.MultiIndex.from_frame(rows)) if len(first) else []
    return codes, combos


def _long_windows(frame: pd.DataFrame, window_col: str, label: str, opt: LoadOptions):
    """Each row's window code, the unique window labels, their time-order key and dates, and the
    first data row of each unique window."""
    window_codes, raw_windows = pd.factorize(frame[window_col])
    if (window_codes < 0).any():
        r = int(np.flatnonzero(window_codes < 0)[0])
        raise InputError("missing window label", path=label, column=window_col, row=r + 1)
    first_rows = first_occurrences(window_codes)
    order_key, reading = order_windows(pd.Series(raw_windows), label, window_col, first_rows,
                                       date_order=opt.date_order, date_format=opt.date_format)
    return window_codes, [cell_label(v) for v in raw_windows], order_key, reading, first_rows


def _benchmark_configuration(built: Built, opt: LoadOptions, label: str, first_rows: np.ndarray) -> None:
    """Take the benchmark configuration out of the matrix (kept apart for the loader to subtract)."""
    names = built.names
    if opt.benchmark not in names:
        raise InputError(
            f"benchmark configuration {opt.benchmark!r} not found among the {len(names)} configurations",
            path=label,
        )
    b = names.index(opt.benchmark)
    if np.isnan(built.matrix[:, b]).any():
        raise InputError(f"benchmark configuration {opt.benchmark!r} misses windows", path=label)
    built.benchmark = built.matrix[:, b].copy()
    built.benchmark_source = f"configuration {opt.benchmark!r}"
    built.benchmark_where = (label, built.value_column, int(first_rows[b]))
    built.matrix = np.delete(built.matrix, b, axis=1)
    names.pop(b)
    built.rows = np.delete(built.rows, b)
    built.parameters = built.parameters.drop(index=opt.benchmark)


def _windows_in_order(order: np.ndarray, uniques: list[str], reading: WindowDates | None):
    """Window labels and dates in time order (dates shown as ISO dates, period labels as written),
    and the labels as written."""
    written = [uniques[i] for i in order]
    if reading is None:
        return written, None, written
    dates = pd.DatetimeIndex(reading.dates[order])
    labels = written if reading.keep_labels else [cell_label(d) for d in dates]
    return labels, dates, written


def _refuse_duplicate(config_codes: np.ndarray, window_codes: np.ndarray, names: list[str], windows: list[str],
                      label: str) -> None:
    """Name the first row repeating an earlier row's (configuration, window) pair."""
    pair = config_codes.astype(np.int64) * (len(windows) + 1) + window_codes
    r = int(np.flatnonzero(pd.Series(pair).duplicated().to_numpy())[0])
    raise InputError(
        f"duplicate row for configuration {names[config_codes[r]]!r} and window {windows[window_codes[r]]!r}",
        path=label,
        row=r + 1,
    )


def long_matrix(frame: pd.DataFrame, label: str, window_col: str | None, opt: LoadOptions) -> Built:
    """The matrix of a long table (one row per configuration and window)."""
    value_col, params = _long_columns(frame, label, window_col, opt)
    values = numeric(frame[value_col], label, value_col)
    config_codes, names, single_id, first_rows = _configurations(frame, params, label)
    window_codes, window_uniques, order_key, reading, _ = _long_windows(frame, window_col, label, opt)
    order = np.argsort(order_key.to_numpy(), kind="stable")
    rank = np.empty_like(order)
    rank[order] = np.arange(len(order))
    matrix = np.full((len(window_uniques), len(names)), np.nan)
    # Each row fills its own cell (the values hold no NaN): fewer filled cells than rows means a
    # repeated (configuration, window) pair, named below.
    matrix.ravel()[rank[window_codes] * len(names) + config_codes] = values
    if matrix.size - np.count_nonzero(np.isnan(matrix)) != len(frame):
        _refuse_duplicate(config_codes, window_codes, names, window_uniques, label)
    window_labels, dates, written = _windows_in_order(order, window_uniques, reading)
    note = None
    if single_id:
        # An id column of names like "lookback=20, band=1.5" still gives a parameter table.
        table, note = parse_named_parameters(names)
        if table is None:
            table = pd.DataFrame(index=pd.Index(names, name="configuration"))
    else:
        table = frame[params].iloc[first_rows].reset_index(drop=True)
        table.index = pd.Index(names, name="configuration")
    built = Built(matrix, names, table, window_labels, dates, reading, [value_col] * len(names), first_rows.copy(),
                  value_column=value_col, parameter_columns=tuple(params), written=written, parameter_note=note)
    if opt.benchmark is not None:
        _benchmark_configuration(built, opt, label, first_rows)
        built.columns = [value_col] * len(built.names)
    return built


# ---------------------------------------------------------------------------------------------
# wide: one row per window, one column per configuration


def _wide_windows(frame: pd.DataFrame, label: str, window_col: str | None, opt: LoadOptions):
    """The row order (time order), the window labels and dates, and the configuration columns."""
    if window_col is None:
        order = np.arange(len(frame))
        labels = [str(i + 1) for i in order]
        return order, labels, None, None, labels, list(frame.columns)
    labels = frame[window_col]
    dup = labels.duplicated().to_numpy()
    if dup.any():
        r = int(np.flatnonzero(dup)[0])
        raise InputError(f"window {cell_label(labels.iloc[r])!r} appears twice", path=label, column=window_col, row=r + 1)
    order_key, reading = order_windows(labels, label, window_col, date_order=opt.date_order,
                                       date_format=opt.date_format)
    order = np.argsort(order_key.to_numpy(), kind="stable")
    window_labels, dates, written = _windows_in_order(order, [cell_label(v) for v in labels], reading)
    return order, window_labels, dates, reading, written, [c for c in frame.columns if c != window_col]


def _wide_values(frame: pd.DataFrame, label: str, config_cols: list[str], order: np.ndarray) -> np.ndarray:
    block = frame[config_cols]
    if all(pd.api.types.is_float_dtype(d) for d in block.dtypes):
        # Fast path for wide numeric files (a Parquet file of 100,000 configurations): one
        # conversion; the per-column check runs only on a column holding an infinite value.
        matrix = block.to_numpy(dtype=np.float64)
        bad = np.isinf(matrix).any(axis=0)
        if bad.any():
            c = config_cols[int(np.flatnonzero(bad)[0])]
            numeric(frame[c], label, c, allow_missing=True)
        return matrix[order]
    return np.column_stack([numeric(frame[c], label, c, allow_missing=True) for c in config_cols])[order]


def wide_matrix(frame: pd.DataFrame, label: str, window_col: str | None, opt: LoadOptions) -> Built:
    """The matrix of a wide table (one row per window, one column per configuration)."""
    order, window_labels, dates, reading, written, config_cols = _wide_windows(frame, label, window_col, opt)
    if opt.benchmark is not None:
        require_column(frame, opt.benchmark, label, "benchmark")
        if opt.benchmark not in config_cols:
            raise InputError(f"the benchmark column {opt.benchmark!r} is the window column", path=label)
    if not config_cols or (opt.benchmark is not None and len(config_cols) == 1):
        raise InputError("no configuration columns: a wide file needs one column per configuration", path=label)
    matrix = _wide_values(frame, label, config_cols, order)
    names = list(config_cols)
    built = Built(matrix, names, pd.DataFrame(), window_labels, dates, reading, names,
                  np.full(len(names), int(order[0]) if len(order) else 0), written=written)
    if opt.benchmark is not None:
        b = names.index(opt.benchmark)
        bench = matrix[:, b]
        if np.isnan(bench).any():
            r = int(order[np.flatnonzero(np.isnan(bench))[0]])
            raise InputError("missing benchmark value", path=label, column=opt.benchmark, row=r + 1)
        built.matrix = np.delete(matrix, b, axis=1)
        built.benchmark = bench.copy()
        built.benchmark_source = f"column {opt.benchmark!r}"
        built.benchmark_where = (label, opt.benchmark, int(order[0]))
        names.pop(b)
        built.rows = built.rows[1:]
    built.names = names
    built.columns = list(names)
    table, built.parameter_note = parse_named_parameters(names)
    built.parameters = table if table is not None else pd.DataFrame(index=pd.Index(names, name="configuration"))
    return built


# ---------------------------------------------------------------------------------------------
# a benchmark in its own file


def benchmark_from_file(built: Built, opt: LoadOptions) -> None:
    """The benchmark series of ``opt.benchmark_file``, matched to the windows by date (or label)."""
    frame, label, _ = read_table(opt.benchmark_file, opt)
    columns = list(frame.columns)
    wcol = find_column(columns, WINDOW_NAMES) or columns[0]
    vcols = [c for c in columns if c != wcol]
    if opt.value_column and opt.value_column in vcols:
        vcols = [opt.value_column]
    if len(vcols) != 1:
        raise InputError(
            f"a benchmark file needs a window column and one value column; got {', '.join(columns)}",
            path=label,
        )
    values = numeric(frame[vcols[0]], label, vcols[0])
    keys = frame[wcol]
    bdates = read_dates(keys, date_order=opt.date_order, date_format=opt.date_format, path=label, column=wcol)
    if built.dates is not None and bdates is not None:
        lookup = pd.Series(values, index=bdates.dates)
        wanted = built.dates
    else:
        lookup = pd.Series(values, index=keys.astype(object).map(cell_label).to_numpy())
        wanted = pd.Index(built.windows)
    if lookup.index.duplicated().any():
        r = int(np.flatnonzero(lookup.index.duplicated())[0])
        raise InputError("window appears twice", path=label, column=wcol, row=r + 1)
    aligned = lookup.reindex(wanted)
    if aligned.isna().any():
        t = int(np.flatnonzero(aligned.isna().to_numpy())[0])
        raise InputError(
            f"no benchmark value for window {built.windows[t]!r} ({int(aligned.isna().sum())} windows missing)",
            path=label,
            column=wcol,
        )
    positions = lookup.index.get_indexer(wanted)
    built.benchmark = aligned.to_numpy(dtype=np.float64)
    built.benchmark_source = f"file {label}"
    built.benchmark_where = (label, vcols[0], int(positions[0]))
