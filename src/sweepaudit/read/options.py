"""How to read a sweep: the options every reader step consults."""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Any, Literal

from .. import validate
from ..errors import InputError

__all__ = ["Layout", "LoadOptions", "WINDOW_RULES", "SEPARATORS", "DECIMALS", "THOUSANDS", "load_options"]

Layout = Literal["auto", "long", "wide"]

#: Aggregation of finer returns into windows: rule -> (pandas period, windows per year).
WINDOW_RULES: dict[str, tuple[str, float]] = {"weekly": ("W-FRI", 52.0), "monthly": ("M", 12.0), "quarterly": ("Q", 4.0)}
SEPARATORS = (",", ";", "\t", "|")
DECIMALS = (".", ",")
THOUSANDS = (",", ".", "'", " ", "_")


@dataclass(frozen=True)
class LoadOptions:
    """How to read a sweep; every field overrides detection when set.

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
    date_order : {"auto", "day-first", "month-first"}
        How to read ``DD/MM/YYYY``-shaped window labels (:mod:`sweepaudit.read.dates`).
    date_format : str or None
        A ``strptime`` format every window label must match (e.g. ``"%d.%m.%Y"``).
    windows : {"weekly", "monthly", "quarterly"} or None
        Compound finer (e.g. daily) returns into these windows (:mod:`sweepaudit.read.aggregate`).
    separator : {",", ";", "\\t", "|"} or None
        Text files: the field separator (detected from the header when None).
    decimal : {".", ","} or None
        Text files: the decimal mark (a comma detected with ``;`` or tab separators when None).
    thousands : {",", ".", "'", " ", "_"} or None
        Text files: the thousands separator; numbers written with one are refused without it.
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
    date_order: str = "auto"
    date_format: str | None = None
    windows: str | None = None
    separator: str | None = None
    decimal: str | None = None
    thousands: str | None = None

    def __post_init__(self) -> None:
        validate.choice(self.layout, "layout", ("auto", "long", "wide"))
        validate.choice(self.units, "units", ("fraction", "percent", "bps"))
        validate.choice(self.date_order, "date_order", ("auto", "day-first", "month-first"))
        if self.periods_per_year is not None:
            validate.periods_per_year(self.periods_per_year, "periods per year")
        for name, allowed in (("windows", tuple(WINDOW_RULES)), ("separator", SEPARATORS), ("decimal", DECIMALS),
                              ("thousands", THOUSANDS)):
            value = getattr(self, name)
            if value is not None and value not in allowed:
                # repr: a tab or a space must be visible in the message.
                raise InputError(f"{name} must be one of {', '.join(map(repr, allowed))}; got {value!r}")
        if self.decimal is not None and self.decimal == self.thousands:
            raise InputError(f"decimal and thousands must differ; both are {self.decimal!r}")
        if self.decimal == "," and self.separator == ",":
            raise InputError("a decimal comma needs another separator (';' or tab)")
        if isinstance(self.parameter_columns, str):
            object.__setattr__(self, "parameter_columns", tuple(c.strip() for c in self.parameter_columns.split(",")))
        elif self.parameter_columns is not None:
            object.__setattr__(self, "parameter_columns", tuple(self.parameter_columns))


_FIELDS = tuple(f.name for f in fields(LoadOptions))


def load_options(options: LoadOptions | None = None, overrides: dict[str, Any] | None = None) -> LoadOptions:
    """``options`` (default ``LoadOptions()``) with the keyword ``overrides``; an unknown keyword is
    an error naming it and the known ones."""
    overrides = dict(overrides or {})
    unknown = [k for k in overrides if k not in _FIELDS]
    if unknown:
        raise InputError(f"unknown input option {unknown[0]!r}; input options are {', '.join(_FIELDS)}")
    base = options or LoadOptions()
    if not overrides:
        return base
    return LoadOptions(**{**{name: getattr(base, name) for name in _FIELDS}, **overrides})
