"""Input -> Sweep (T windows x N configurations): the only package that reads input files and data.

Two layouts are understood:

* **long**: one row per (configuration, window): a window column, one or more parameter columns (or
  one configuration-id column) and a value column;
* **wide**: one row per window, one column per configuration.

Every problem is an :class:`~sweepaudit.errors.InputError` naming the file, the column and the row.
Rows are counted as data rows, 1-based, the header not counted (row 1 is the line after the header).
Missing values are never filled.

In-memory data (a wide or long DataFrame, a numpy array with optional dates) is read by the same
steps; messages then name ``<DataFrame>`` or ``<array>``, the column and the row with its index label.

Modules: ``formats`` (bytes -> table: separators, decimal marks, Parquet index columns), ``memory``
(DataFrames and arrays -> table), ``layout`` (window column, long or wide), ``build`` (table ->
matrix), ``checks`` (the guards), ``dates`` (the one date reader, periods per year), ``aggregate``
(finer returns compounded into windows), ``loader`` (the steps in order), ``options``
(:class:`LoadOptions`).
"""

from .formats import read_table
from .loader import load_sweep, sweep_from_array
from .options import LoadOptions

__all__ = ["LoadOptions", "load_sweep", "read_table", "sweep_from_array"]
