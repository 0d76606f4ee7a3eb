"""The Sweep: a validated T x N matrix of per-window excess returns and what is known about it."""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Literal, Mapping

import numpy as np
import pandas as pd

from .errors import InputError
from .names import configuration_key, nearest_names

__all__ = ["Sweep", "Units", "UNIT_SCALE", "MIN_WINDOWS", "Plausibility"]

Units = Literal["fraction", "percent", "bps"]
# Divide the input by this to get fractions (0.01 = one percent).
UNIT_SCALE: dict[str, float] = {"fraction": 1.0, "percent": 100.0, "bps": 10_000.0}

# The floor below which no part of the audit means anything: the automatic block length and the
# moment estimates need a handful of windows. Methods with larger needs say so themselves.
MIN_WINDOWS = 8


@dataclass(frozen=True)
class Plausibility:
    """The figures that tell returns from something else: the largest move in one window and the
    largest annualized volatility (what the ``plausible_returns`` check of the verdict judges).

    Attributes
    ----------
    largest_window_return : float
        The largest absolute excess return (fraction) of any configuration in any window.
    largest_window_configuration, largest_window : str
        Where it is.
    largest_volatility_annualized : float or None
        The largest standard deviation of excess returns of any configuration, times the square
        root of the periods per year; None when the periods per year are unknown.
    largest_volatility_configuration : str
    """

    largest_window_return: float
    largest_window_configuration: str
    largest_window: str
    largest_volatility_annualized: float | None
    largest_volatility_configuration: str


@dataclass(frozen=True, eq=False)
class Sweep:
    """Per-window excess returns of every configuration of a parameter sweep.

    Attributes
    ----------
    returns : ndarray, shape (T, N)
        Excess returns (strategy minus benchmark) as fractions, windows in time order in rows,
        configurations in columns. Never contains NaN or infinity.
    configurations : tuple of str
        Configuration names, e.g. ``"lookback=20, band=1.5"``; unique.
    parameters : DataFrame
        One row per configuration (index = configuration name), one column per parameter; empty
        columns when the configurations carry no parameters.
    windows : tuple of str
        Window labels as strings (ISO dates when the windows are dated).
    dates : DatetimeIndex or None
        The window dates when the window column holds dates.
    periods_per_year : float or None
        Windows per year, from the user or inferred from the dates; None when unknown (figures are
        then per window only).
    periods_source : {"given", "inferred", "unknown"}
    frequency : str or None
        "daily", "weekly", ... when inferred from dates.
    units : {"fraction", "percent", "bps"}
        The units of the input file (``returns`` is always in fractions).
    layout : {"long", "wide", "array"}
    path : str
        Where the data came from ("<stdin>" for standard input, "<array>" for in-memory data).
    sha256 : str or None
        Fingerprint of the input bytes.
    notes : tuple of str
        What the loader did that the user should know (windows dropped, excess computed...).
    reading : mapping
        How the input was read (source kind, separator and decimal mark, window column and date
        form, value and parameter columns, benchmark, aggregation): what ``sweepaudit inspect`` shows.
    """

    returns: np.ndarray
    configurations: tuple[str, ...]
    parameters: pd.DataFrame
    windows: tuple[str, ...]
    dates: pd.DatetimeIndex | None = None
    periods_per_year: float | None = None
    periods_source: Literal["given", "inferred", "unknown"] = "unknown"
    frequency: str | None = None
    units: Units = "fraction"
    layout: Literal["long", "wide", "array"] = "array"
    path: str = "<array>"
    sha256: str | None = None
    notes: tuple[str, ...] = field(default=())
    reading: Mapping[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        r = self.returns
        if r.ndim != 2:
            raise InputError(f"returns must be a T x N matrix; got {r.ndim} dimensions")
        if r.shape[1] != len(self.configurations) or r.shape[0] != len(self.windows):
            raise InputError("returns, configurations and windows disagree in size")
        if not np.isfinite(r).all():
            raise InputError("returns must be finite")
        r.setflags(write=False)
        object.__setattr__(self, "reading", dict(self.reading))

    @property
    def n_windows(self) -> int:
        return self.returns.shape[0]

    @property
    def n_configurations(self) -> int:
        return self.returns.shape[1]

    @cached_property
    def _parameter_keys(self) -> tuple[str, ...]:
        """Each configuration's key from its parameter values (two may coincide)."""
        table = self.parameters
        tabled = (table is not None and len(table.columns) > 0 and table.index.is_unique
                  and set(table.index) == set(self.configurations))
        if not tabled:
            return tuple(configuration_key(n) for n in self.configurations)
        rows = table.reindex(list(self.configurations)).to_dict(orient="records")
        return tuple(configuration_key(n, r) for n, r in zip(self.configurations, rows))

    @cached_property
    def configuration_keys(self) -> tuple[str, ...]:
        """The key of each configuration (:func:`sweepaudit.names.configuration_key`): its parameter
        values from the parameter table, in any order and spacing, numbers as numbers.

        When two configurations of this sweep share a key (``lookback=20`` and ``lookback=20.0``),
        every configuration is keyed by its name instead, so a key always names one configuration.
        """
        keys = self._parameter_keys
        if len(set(keys)) == len(keys):
            return keys
        spaced = tuple(configuration_key(n, {}) for n in self.configurations)
        return spaced if len(set(spaced)) == len(spaced) else self.configurations

    def index_of(self, configuration: str) -> int:
        """Column of a configuration: by its exact name, or by its parameter values in any order and
        spacing, numbers compared as numbers (``"entry_z=1.50,train_days=21"`` finds
        ``"train_days=21, entry_z=1.5"``).

        Raises
        ------
        InputError
            When none matches, naming the nearest configurations.
        """
        if configuration in self.configurations:
            return self.configurations.index(configuration)
        if not isinstance(configuration, str):
            raise InputError(f"a configuration is named by a string; got {configuration!r}")
        key = configuration_key(configuration)
        hits = [k for k, c in enumerate(self._parameter_keys) if c == key]
        if len(hits) == 1:
            return hits[0]
        shown = ", ".join(repr(n if len(n) <= 80 else n[:77] + "...") for n in (
            [self.configurations[k] for k in hits][:5] or
            nearest_names(configuration, self.configurations, self._parameter_keys)))
        if hits:  # configurations named apart with the same values (lookback=20 and lookback=20.0)
            raise InputError(f"{configuration!r} matches {len(hits)} configurations by its values: {shown}; "
                             "give the exact name")
        raise InputError(
            f"no configuration named {configuration!r} in the sweep (parameter values match in any order, "
            f"numbers as numbers); nearest: {shown}"
        )

    @cached_property
    def plausibility(self) -> Plausibility:
        """The largest move in one window and the largest annualized volatility (computed once)."""
        r = self.returns
        # Column reductions only, a block of columns at a time: no T x N temporary for a large sweep.
        # The largest |value| is the first in row-major order, as numpy.argmax of |r| would find it.
        column_size = np.maximum(r.max(axis=0), -r.min(axis=0))
        largest = float(column_size.max())
        t, k = min((int(np.argmax(np.abs(r[:, c]) == largest)), int(c)) for c in np.flatnonzero(column_size == largest))
        if self.n_windows > 1:
            sd = np.concatenate([r[:, a:a + 4096].std(axis=0, ddof=1) for a in range(0, self.n_configurations, 4096)])
        else:
            sd = np.zeros(self.n_configurations)
        v = int(np.argmax(sd))
        vol = float(sd[v] * np.sqrt(self.periods_per_year)) if self.periods_per_year else None
        return Plausibility(largest, self.configurations[k], self.windows[t], vol, self.configurations[v])

    def frame(self) -> pd.DataFrame:
        """The returns as a DataFrame (windows x configurations)."""
        return pd.DataFrame(self.returns, index=list(self.windows), columns=list(self.configurations))
