"""Files -> Sweep: the steps of reading a sweep file, in order."""

from __future__ import annotations

import numpy as np

from .. import validate
from ..sweep import UNIT_SCALE, Sweep
from .build import long_matrix, subtract_benchmark_file, wide_matrix
from .checks import check_matrix, refuse_whole_number_columns
from .dates import periods_per_year
from .formats import read_table
from .layout import layout_of, window_column
from .options import LoadOptions

__all__ = ["load_sweep"]


def load_sweep(path: str, options: LoadOptions | None = None) -> Sweep:
    """Read a sweep file into a validated :class:`~sweepaudit.sweep.Sweep`.

    Parameters
    ----------
    path : str
        CSV, TSV or Parquet file, or ``-`` for CSV on standard input.
    options : LoadOptions, optional
        Overrides for layout and column detection, units, periods per year and benchmark.

    Raises
    ------
    InputError
        Naming the file, the column and the (1-based data) row of the first problem.
    DegenerateDataError
        Too few windows, or a constant configuration.
    """
    opt = options or LoadOptions()
    validate.choice(opt.units, "units", tuple(UNIT_SCALE))
    if opt.periods_per_year is not None:
        validate.periods_per_year(opt.periods_per_year, "periods per year")
    frame, label, digest = read_table(path)
    window_col = window_column(frame, label, opt)
    layout = layout_of(frame, window_col, opt)
    refuse_whole_number_columns(frame, label, window_col, layout, opt)
    notes: list[str] = []
    build = long_matrix if layout == "long" else wide_matrix
    matrix, names, params, window_labels, dates = build(frame, label, window_col, opt, notes)
    if opt.benchmark_file is not None:
        matrix = subtract_benchmark_file(matrix, window_labels, dates, opt, notes)
    matrix = matrix / UNIT_SCALE[opt.units]
    check_matrix(matrix, names, label, layout, opt.units, notes)
    ppy, source, freq = periods_per_year(opt.periods_per_year, dates, notes)
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
