"""How to read a sweep file: the options every reader step consults."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = ["Layout", "LoadOptions"]

Layout = Literal["auto", "long", "wide"]


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
