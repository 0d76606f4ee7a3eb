"""In-memory data -> a table the reader reads like a file: a wide or long DataFrame (a DatetimeIndex
or a window column; plain column names or a MultiIndex of parameters on the columns) or a numpy
array with optional dates and configuration names.

The table then goes through the same steps as a file (:mod:`sweepaudit.read.loader`): the same
guards, the same date reader, the same messages, which name the column and the row with its index
label instead of a file.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError
from .dates import cell_label

__all__ = ["FRAME_LABEL", "ARRAY_LABEL", "InMemory", "frame_table", "array_table", "with_index_label"]

FRAME_LABEL = "<DataFrame>"
ARRAY_LABEL = "<array>"


class InMemory:
    """A table made from in-memory data, and what the reader must know about it.

    Attributes
    ----------
    frame : DataFrame
        Windows as a column (when there are any), configurations or long columns as the rest.
    label : str
        ``"<DataFrame>"`` or ``"<array>"``, named in messages.
    window_column : str or None
        The column made from the index or the dates (None: none given).
    parameters : DataFrame or None
        The parameter table from a MultiIndex on the columns.
    index_labels : list or None
        The original row index labels, for messages.
    """

    def __init__(self, frame, label, window_column=None, parameters=None, index_labels=None, kind="DataFrame"):
        self.frame, self.label, self.window_column = frame, label, window_column
        self.parameters, self.index_labels, self.kind = parameters, index_labels, kind


def _flatten_columns(columns: pd.MultiIndex) -> tuple[list[str], pd.DataFrame]:
    """``lookback=20, band=1.5`` names and the parameter table of a MultiIndex of parameters."""
    levels = [str(n) if n is not None else f"level_{i + 1}" for i, n in enumerate(columns.names)]
    if len(set(levels)) != len(levels):
        raise InputError(f"the column MultiIndex repeats a level name; levels are {', '.join(levels)}", path=FRAME_LABEL)
    names = [", ".join(f"{p}={cell_label(v)}" for p, v in zip(levels, combo)) for combo in columns]
    table = pd.DataFrame(list(columns), columns=levels, index=pd.Index(names, name="configuration"))
    for c in table.columns:
        num = pd.to_numeric(table[c], errors="coerce")
        if num.notna().all():
            table[c] = num
    return names, table


def frame_table(data: pd.DataFrame) -> InMemory:
    """A DataFrame as the reader's table: a meaningful index becomes the window column."""
    frame = data.copy(deep=False)
    # Columns 0, 1, 2, ... (a DataFrame made from an array) name no configuration.
    generated = isinstance(frame.columns, pd.RangeIndex)
    parameters = None
    if isinstance(frame.columns, pd.MultiIndex):
        names, parameters = _flatten_columns(frame.columns)
        frame.columns = names
    else:
        frame.columns = [str(c).strip() for c in frame.columns]
    index = frame.index
    index_labels = [cell_label(v) for v in index]
    window = None
    if isinstance(index, pd.PeriodIndex):
        frame.index = index.to_timestamp(how="end").normalize()
        index = frame.index
    if not (isinstance(index, pd.RangeIndex) and index.name is None):
        if isinstance(index, pd.MultiIndex):
            raise InputError("a row MultiIndex is not a window index; reset it to columns first", path=FRAME_LABEL)
        window = str(index.name) if index.name is not None else ("date" if isinstance(index, pd.DatetimeIndex) else "window")
        if window in frame.columns:
            raise InputError(f"the index is named {window!r} like a column; rename one", path=FRAME_LABEL, column=window)
        frame = frame.rename_axis(window).reset_index()  # rename_axis: the caller's index keeps its name
    else:
        frame = frame.reset_index(drop=True)
    dupes = frame.columns[frame.columns.duplicated()].tolist()
    if dupes:
        raise InputError("two columns share this name", path=FRAME_LABEL, column=dupes[0])
    frame.attrs = {"reading": {"kind": "DataFrame", "index_columns": [window] if window else [],
                               "configuration_names": "generated" if generated else "given"}}
    return InMemory(frame, FRAME_LABEL, window, parameters, index_labels)


def array_table(values, dates=None, configurations=None) -> InMemory:
    """A T x N array (or a length-T vector), optional dates and configuration names, as a table."""
    try:
        matrix = np.asarray(values, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError(
            f"returns must be a numeric T x N array (windows x configurations); got {type(values).__name__}",
            path=ARRAY_LABEL,
        ) from None
    if matrix.ndim == 1:
        matrix = matrix[:, None]
    if matrix.ndim != 2 or matrix.size == 0:
        raise InputError(f"returns must be a non-empty T x N array; got shape {matrix.shape}", path=ARRAY_LABEL)
    t, n = matrix.shape
    names = [f"config {k + 1}" for k in range(n)] if configurations is None else [str(c) for c in configurations]
    if len(names) != n:
        raise InputError(f"configurations names {len(names)} configurations; the array has {n} columns", path=ARRAY_LABEL)
    frame = pd.DataFrame(matrix, columns=names)
    window = None
    if dates is not None:
        dates = pd.Index(dates) if not isinstance(dates, pd.Index) else dates
        if len(dates) != t:
            raise InputError(f"dates has {len(dates)} entries; the array has {t} windows (rows)", path=ARRAY_LABEL)
        window = "window" if "window" not in names else "dates"
        frame.insert(0, window, dates.to_numpy())
    dupes = frame.columns[frame.columns.duplicated()].tolist()
    if dupes:
        raise InputError("two configurations share this name", path=ARRAY_LABEL, column=dupes[0])
    frame.attrs = {"reading": {"kind": "array", "index_columns": [],
                               "configuration_names": "generated" if configurations is None else "given"}}
    labels = [cell_label(v) for v in dates] if dates is not None else None
    return InMemory(frame, ARRAY_LABEL, window, None, labels, kind="array")


def with_index_label(exc: InputError, source: InMemory) -> InputError:
    """The same error with the row's index label beside the row number."""
    if exc.row is None or source.index_labels is None or not 1 <= exc.row <= len(source.index_labels):
        return exc
    return type(exc)(exc.detail, path=exc.path, column=exc.column, row=exc.row,
                     index=source.index_labels[exc.row - 1])
