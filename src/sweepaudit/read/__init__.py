"""Files -> Sweep (T windows x N configurations): the only package that reads input files.

Two layouts are understood:

* **long**: one row per (configuration, window): a window column, one or more parameter columns (or
  one configuration-id column) and a value column;
* **wide**: one row per window, one column per configuration.

Every problem is an :class:`~sweepaudit.errors.InputError` naming the file, the column and the row.
Rows are counted as data rows, 1-based, the header not counted (row 1 is the line after the header).
Missing values are never filled.

Modules: ``formats`` (bytes -> table), ``layout`` (window column, long or wide), ``build`` (table ->
matrix), ``checks`` (the guards), ``dates`` (window order, periods per year), ``loader`` (the steps
in order), ``options`` (:class:`LoadOptions`).
"""

from .formats import read_table
from .loader import load_sweep
from .options import LoadOptions

__all__ = ["LoadOptions", "load_sweep", "read_table"]
