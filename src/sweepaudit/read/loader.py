"""Input -> Sweep: the steps of reading a sweep, in order, for files and for in-memory data alike.

1. the table: a file (:mod:`~sweepaudit.read.formats`) or in-memory data (:mod:`~sweepaudit.read.memory`);
2. the window column and the layout (:mod:`~sweepaudit.read.layout`);
3. the matrix, in the file's units, with the benchmark kept apart (:mod:`~sweepaudit.read.build`),
   the windows dated by the one date reader (:mod:`~sweepaudit.read.dates`);
4. coverage, then the guards no option bypasses: dates, counters, price levels and equity curves
   are never read as returns (:mod:`~sweepaudit.read.checks`);
5. units to fractions; the benchmark file; aggregation into windows
   (:mod:`~sweepaudit.read.aggregate`); the benchmark subtracted;
6. the matrix checks (enough windows, no constant configuration), hints (a configuration named like
   a benchmark, a parameter table that could not be built) and the periods per year.
"""

from __future__ import annotations

import os
import shlex
from typing import Any

import numpy as np
import pandas as pd

from ..errors import InputError
from ..sweep import UNIT_SCALE, Sweep
from .aggregate import aggregate_windows
from .blocks import read_wide_parquet
from .build import Built, benchmark_from_file, long_matrix, wide_matrix
from .checks import check_matrix, coverage, refuse_level_excess, refuse_levels, refuse_whole_number_columns
from .dates import periods_per_year
from .fastcsv import release_table_memory
from .formats import read_table
from .layout import BENCHMARK_NAME, layout_of, window_column
from .memory import InMemory, array_table, frame_table, with_index_label
from .options import WINDOW_RULES, LoadOptions, load_options

__all__ = ["load_sweep", "sweep_from_array"]


def load_sweep(
    source: Any,
    options: LoadOptions | None = None,
    *,
    dates: Any = None,
    configurations: Any = None,
    **option_fields: Any,
) -> Sweep:
    """Read a sweep into a validated :class:`~sweepaudit.sweep.Sweep`.

    Parameters
    ----------
    source : path, DataFrame or array
        A CSV, TSV or Parquet file (``"-"``: standard input); a wide DataFrame (a DatetimeIndex or a
        window column; plain column names or a MultiIndex of parameters on the columns) or a long
        one (named columns, detected as in files); a T x N numpy array (or list of rows).
    options : LoadOptions, optional
        How to read it; ``option_fields`` (any :class:`LoadOptions` field by keyword, e.g.
        ``benchmark="buy_and_hold"``) override it.
    dates : array-like, optional
        Arrays only: the T window dates (any form :mod:`sweepaudit.read.dates` reads).
    configurations : list of str, optional
        Arrays only: the N configuration names (``"lookback=20, band=1.5"`` gives a parameter table).

    Raises
    ------
    InputError
        Naming the file (or ``<DataFrame>`` / ``<array>``), the column and the 1-based data row
        (with its index label for in-memory data) of the first problem.
    DegenerateDataError
        Too few windows, or a constant configuration.
    """
    opt = load_options(options, option_fields)
    if isinstance(source, (str, os.PathLike)):
        if dates is not None or configurations is not None:
            raise InputError("dates and configurations go with an array; a file names its own")
        path = os.fspath(source)
        if path.lower().endswith((".parquet", ".pq")):
            sweep = read_wide_parquet(path, opt, _read)
            if sweep is not None:
                return sweep
        frame, label, digest = read_table(path, opt)
        sweep = _read(frame, label, digest, opt)
        del frame
        release_table_memory()
        return sweep
    if isinstance(source, pd.DataFrame):
        if dates is not None or configurations is not None:
            raise InputError("dates and configurations go with an array; a DataFrame names its own")
        table = frame_table(source)
    elif isinstance(source, Sweep):
        raise InputError("this is already a Sweep: pass it to audit() directly")
    else:
        table = array_table(source, dates, configurations)
        if opt.layout == "long":
            raise InputError("an array is one column per configuration: layout must be auto or wide")
    return _read_memory(table, opt)


def sweep_from_array(
    returns: Any,
    *,
    periods_per_year: float | None = None,
    configurations: Any = None,
    dates: Any = None,
    **option_fields: Any,
) -> Sweep:
    """A Sweep from an in-memory T x N array or wide DataFrame of excess returns (fractions unless
    ``units`` says otherwise), read with the same guards as a file: see :func:`load_sweep`."""
    if isinstance(returns, pd.DataFrame):
        return load_sweep(returns, periods_per_year=periods_per_year, **option_fields)
    return load_sweep(returns, periods_per_year=periods_per_year, dates=dates, configurations=configurations,
                      **option_fields)


def _read_memory(table: InMemory, opt: LoadOptions) -> Sweep:
    if table.window_column is not None and opt.window_column is None:
        opt = load_options(opt, {"window_column": table.window_column})
    if table.parameters is not None or table.kind == "array":
        opt = load_options(opt, {"layout": "wide"})
    try:
        sweep = _read(table.frame, table.label, None, opt, parameters=table.parameters)
    except InputError as exc:
        raise with_index_label(exc, table) from None
    return sweep


def _read(frame: pd.DataFrame, label: str, digest: str | None, opt: LoadOptions, parameters=None) -> Sweep:
    """The steps after the table, shared by files and in-memory data."""
    window_col = window_column(frame, label, opt)
    layout = layout_of(frame, window_col, opt)
    refuse_whole_number_columns(frame, label, window_col, layout, opt)
    notes: list[str] = []
    built = (long_matrix if layout == "long" else wide_matrix)(frame, label, window_col, opt)
    if parameters is not None:
        built.parameters = parameters.drop(index=[n for n in parameters.index if n not in built.names])
        built.parameter_note = None
    coverage(built, opt, label, notes)
    refuse_levels(built, label)
    scale = UNIT_SCALE[opt.units]
    built.matrix = built.matrix / scale
    if built.benchmark is not None:
        built.benchmark = built.benchmark / scale
    if opt.benchmark_file is not None:
        benchmark_from_file(built, opt)
        built.benchmark = built.benchmark / scale
    aggregation = aggregate_windows(built, opt.windows, label, notes) if opt.windows else None
    matrix = built.matrix
    if built.benchmark is not None:
        matrix = matrix - built.benchmark[:, None]
        refuse_level_excess(matrix, built.names, built, label)
        notes.append(f"excess returns computed against the benchmark {built.benchmark_source}")
    check_matrix(matrix, built.names, label, layout, built.columns)
    notes += _hints(built, opt)
    hint = (WINDOW_RULES[opt.windows][1], opt.windows) if opt.windows else (
        (built.reading.periods_per_year, built.reading.frequency)
        if built.reading is not None and built.reading.periods_per_year else None)
    ppy, source, freq = periods_per_year(opt.periods_per_year, built.dates, notes, hint=hint)
    return Sweep(
        returns=np.ascontiguousarray(matrix),
        configurations=tuple(built.names),
        parameters=built.parameters,
        windows=tuple(built.windows),
        dates=built.dates,
        periods_per_year=ppy,
        periods_source=source,
        frequency=freq,
        units=opt.units,
        layout="array" if label == "<array>" else layout,
        path=label,
        sha256=digest,
        notes=tuple(notes),
        reading=_reading(frame, built, layout, window_col, opt, aggregation, ppy, source, freq),
    )


def _hints(built: Built, opt: LoadOptions) -> list[str]:
    """What the user should know about the reading that is not an error."""
    hints = []
    if built.benchmark is None:
        named = [n for n in built.names if BENCHMARK_NAME.search(n)]
        if named:
            hints.append(
                f"configuration {named[0]!r} is named like a benchmark, index or buy-and-hold series, yet it "
                "is audited as one more configuration and every column is read as excess returns: if these "
                f"are raw strategy returns, subtract it with benchmark={named[0]!r} (command line: "
                f"--benchmark {shlex.quote(named[0])})"
            )
    if built.parameter_note:
        hints.append(built.parameter_note)
    return hints


def _reading(frame, built: Built, layout, window_col, opt: LoadOptions, aggregation, ppy, source, freq) -> dict:
    """How the input was read, for ``sweepaudit inspect`` and the Python inspection."""
    attrs = dict(frame.attrs.get("reading", {}))
    how = {
        "given": "given",
        "inferred": (f"from the aggregation into {opt.windows} windows" if opt.windows else
                     f"from the labels' form ({built.reading.form})" if built.reading and built.reading.periods_per_year
                     else f"from the median spacing of the window dates ({freq})"),
        "unknown": "unknown: no periods per year given and no dated windows" if built.dates is None
        else "unknown: the spacing of the window dates matches no calendar frequency",
    }[source]
    return {
        "source": attrs.get("kind"),
        "separator": attrs.get("separator"),
        "decimal": attrs.get("decimal"),
        "thousands": attrs.get("thousands"),
        "index_columns": attrs.get("index_columns", []),
        "rows": int(len(frame)),
        # "generated": config 1, config 2, ... (an array without names): the trial ledger counts such
        # a sweep by its data fingerprint, since the names say nothing about what was tried.
        "configuration_names": attrs.get("configuration_names", "given"),
        "layout": layout,
        "window_column": window_col,
        "window_form": built.reading.form if built.reading is not None else (
            "numbers, in numeric order" if window_col is not None and pd.api.types.is_numeric_dtype(frame[window_col])
            else "plain labels, in file order" if window_col is not None else "row order (no window column)"),
        "first_window_written": built.written[0] if built.written else None,
        "last_window_written": built.written[-1] if built.written else None,
        "date_order": opt.date_order,
        "date_format": opt.date_format,
        "value_column": built.value_column,
        "parameter_columns": list(built.parameter_columns),
        "units": opt.units,
        "benchmark": built.benchmark_source,
        "aggregation": aggregation,
        "periods_per_year": ppy,
        "periods_per_year_source": source,
        "periods_per_year_how": how,
        "frequency": freq,
    }
