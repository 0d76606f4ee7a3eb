"""The Sweep: a validated T x N matrix of per-window excess returns and what is known about it."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import pandas as pd

from .errors import DegenerateDataError, InputError

__all__ = ["Sweep", "Units", "UNIT_SCALE", "MIN_WINDOWS", "sweep_from_array"]

Units = Literal["fraction", "percent", "bps"]
# Divide the input by this to get fractions (0.01 = one percent).
UNIT_SCALE: dict[str, float] = {"fraction": 1.0, "percent": 100.0, "bps": 10_000.0}

# The floor below which no part of the audit means anything: the automatic block length and the
# moment estimates need a handful of windows. Methods with larger needs say so themselves.
MIN_WINDOWS = 8


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

    def __post_init__(self) -> None:
        r = self.returns
        if r.ndim != 2:
            raise InputError(f"returns must be a T x N matrix; got {r.ndim} dimensions")
        if r.shape[1] != len(self.configurations) or r.shape[0] != len(self.windows):
            raise InputError("returns, configurations and windows disagree in size")
        if not np.isfinite(r).all():
            raise InputError("returns must be finite")
        r.setflags(write=False)

    @property
    def n_windows(self) -> int:
        return self.returns.shape[0]

    @property
    def n_configurations(self) -> int:
        return self.returns.shape[1]

    def index_of(self, configuration: str) -> int:
        """Column of a configuration, by exact name."""
        try:
            return self.configurations.index(configuration)
        except ValueError:
            close = [c for c in self.configurations if configuration.lower() in c.lower()][:3]
            hint = f"; did you mean {', '.join(map(repr, close))}?" if close else ""
            raise InputError(f"no configuration named {configuration!r} in the sweep{hint}") from None

    def frame(self) -> pd.DataFrame:
        """The returns as a DataFrame (windows x configurations)."""
        return pd.DataFrame(self.returns, index=list(self.windows), columns=list(self.configurations))


def sweep_from_array(
    returns,
    *,
    periods_per_year: float | None = None,
    configurations: list[str] | None = None,
) -> Sweep:
    """Build a Sweep from an in-memory T x N array or DataFrame of fractional excess returns."""
    if isinstance(returns, pd.DataFrame):
        names = [str(c) for c in returns.columns]
        windows = [str(i) for i in returns.index]
        values = returns.to_numpy(dtype=np.float64)
    else:
        values = np.asarray(returns, dtype=np.float64)
        if values.ndim == 1:
            values = values[:, None]
        names = [f"config {k + 1}" for k in range(values.shape[1])]
        windows = [str(t + 1) for t in range(values.shape[0])]
    if configurations is not None:
        names = list(configurations)
    if values.ndim != 2 or values.size == 0:
        raise InputError("returns must be a non-empty T x N matrix")
    if values.shape[0] < MIN_WINDOWS:
        raise DegenerateDataError(
            f"the audit needs at least {MIN_WINDOWS} windows; got {values.shape[0]}"
        )
    return Sweep(
        returns=values.copy(),
        configurations=tuple(names),
        parameters=pd.DataFrame(index=pd.Index(names, name="configuration")),
        windows=tuple(windows),
        periods_per_year=periods_per_year,
        periods_source="given" if periods_per_year else "unknown",
    )
