"""The argument validators: every public function checks its raw arguments through these.

Each validator takes the value and the name of the argument it came from, returns the value checked
and normalised (``float``, ``int``, an array), and otherwise raises :class:`~sweepaudit.errors.InputError`
(or :class:`~sweepaudit.errors.DegenerateDataError` for data that cannot support the statistics)
with one message shape: ``"<name> must <rule>; got <value>"``. The name is the caller's: a library
function passes its Python argument (``"periods_per_year"``); the command line passes its option
(``"--sweeps"``). No message here names a command-line option by itself.
"""

from __future__ import annotations

import math
import unicodedata
from collections.abc import Sequence
from typing import Any

import numpy as np

from .errors import DegenerateDataError, InputError

__all__ = [
    "finite_number",
    "positive_number",
    "non_negative_number",
    "at_least",
    "probability",
    "unit_interval",
    "whole_number",
    "periods_per_year",
    "choice",
    "label",
    "returns_matrix",
    "returns_series",
    "nonconstant",
    "column_index",
    "generator",
    "raw_moments",
]

# Relative tolerance on the moment bound kurtosis >= 1 + skewness**2 (Pearson 1916); lets moments
# computed from data, which satisfy it up to rounding, through.
MOMENT_BOUND_TOLERANCE = 1e-9


def _is_bool(value: Any) -> bool:
    return isinstance(value, (bool, np.bool_))


def _float(value: Any) -> float:
    """``value`` as a float; NaN for anything that is not a number (booleans included)."""
    if _is_bool(value):
        return math.nan
    try:
        return float(value)
    except (TypeError, ValueError):
        return math.nan


def finite_number(value: Any, name: str) -> float:
    """A real, finite number as ``float`` (booleans refused)."""
    number = _float(value)
    if not math.isfinite(number):
        raise InputError(f"{name} must be a finite number; got {value!r}")
    return number


def positive_number(value: Any, name: str) -> float:
    """A number ``> 0`` and finite."""
    number = _float(value)
    if not (math.isfinite(number) and number > 0):
        raise InputError(f"{name} must be positive and finite; got {value!r}")
    return number


def non_negative_number(value: Any, name: str) -> float:
    """A number ``>= 0`` and finite."""
    number = finite_number(value, name)
    if number < 0:
        raise InputError(f"{name} must be non-negative; got {value!r}")
    return number


def at_least(value: Any, name: str, minimum: float, *, what: str | None = None) -> float:
    """A finite number ``>= minimum``; ``what`` words the bound (default: the number itself)."""
    number = finite_number(value, name)
    if number < minimum:
        raise InputError(f"{name} must be at least {what or f'{minimum:g}'}; got {value!r}")
    return number


def probability(value: Any, name: str) -> float:
    """A level or probability strictly between 0 and 1."""
    number = _float(value)
    if not 0.0 < number < 1.0:
        raise InputError(f"{name} must lie strictly between 0 and 1; got {value!r}")
    return number


def unit_interval(value: Any, name: str) -> float:
    """A share in the closed interval [0, 1]."""
    if _is_bool(value) or not isinstance(value, (int, float, np.integer, np.floating)) or not 0 <= value <= 1:
        raise InputError(f"{name} must be a number in [0, 1]; got {value!r}")
    return float(value)


def whole_number(
    value: Any,
    name: str,
    *,
    minimum: int | None = None,
    maximum: int | None = None,
    what: str | None = None,
    accept_float: bool = False,
) -> int:
    """A whole number (an ``int``, or a whole ``float`` when ``accept_float``) within the bounds.

    ``what`` words the rule when the bounds need explaining (e.g. "an even number from 2 to 20").
    """
    whole = isinstance(value, (int, np.integer)) or (
        accept_float and isinstance(value, (float, np.floating)) and float(value).is_integer()
    )
    inside = whole and not _is_bool(value)
    if inside and minimum is not None and value < minimum:
        inside = False
    if inside and maximum is not None and value > maximum:
        inside = False
    if not inside:
        if what is None:
            if minimum is not None and maximum is not None:
                what = f"a whole number from {minimum} to {maximum}"
            elif minimum is not None:
                what = f"a whole number of at least {minimum}"
            else:
                what = "a whole number"
        raise InputError(f"{name} must be {what}; got {value!r}")
    return int(value)


def periods_per_year(value: Any, name: str = "periods_per_year") -> float | None:
    """Windows per year: a positive finite number, or None when unknown."""
    return None if value is None else positive_number(value, name)


def choice(value: Any, name: str, allowed: Sequence[str]) -> str:
    """One of the allowed option strings."""
    if not isinstance(value, str) or value not in allowed:
        raise InputError(f"{name} must be one of {', '.join(allowed)}; got {value!r}")
    return value


#: The longest label (a strategy's name) accepted.
LABEL_LIMIT = 100


def label(value: Any, name: str) -> str:
    """A short name (a strategy label): a string of 1 to :data:`LABEL_LIMIT` characters once stripped
    of surrounding white space, with no control, format or line-separator character (which could
    disguise one label as another or drive a terminal)."""
    if not isinstance(value, str) or not value.strip() or len(value.strip()) > LABEL_LIMIT:
        shown = repr(value) if not isinstance(value, str) or len(value) <= LABEL_LIMIT else repr(value[:40] + "...")
        raise InputError(f"{name} must be a name of 1 to {LABEL_LIMIT} characters; got {shown}")
    text = value.strip()
    bad = next((c for c in text if unicodedata.category(c) in ("Cc", "Cf", "Zl", "Zp")), None)
    if bad is not None:
        raise InputError(f"{name} must not contain control or format characters; got {text!r} (U+{ord(bad):04X})")
    return text


def _numeric_array(value: Any, name: str) -> np.ndarray:
    try:
        return np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError(
            f"{name} must be a numeric T x N matrix (windows x configurations); got {type(value).__name__}"
        ) from None


def _finite(array: np.ndarray, name: str) -> None:
    bad = ~np.isfinite(array)
    if bad.any():
        where = np.argwhere(bad)[0]
        place = f"window {where[0]}" + (f", configuration {where[1]}" if array.ndim == 2 else "")
        raise InputError(
            f"{name} must be finite; got {int(bad.sum())} NaN or infinite value(s), the first at {place} (0-based)"
        )


def returns_matrix(value: Any, name: str = "returns", *, min_windows: int = 2, min_configurations: int = 1) -> np.ndarray:
    """A finite float64 ``T x N`` matrix of excess returns (windows in rows).

    Raises
    ------
    InputError
        Not numeric, not 2-D, too few configurations, NaN or infinity.
    DegenerateDataError
        Fewer than ``min_windows`` windows.
    """
    array = _numeric_array(value, name)
    if array.ndim != 2:
        raise InputError(
            f"{name} must be a 2-D T x N matrix (windows x configurations); got shape {array.shape}"
            + (" (reshape a single configuration to (T, 1))" if array.ndim == 1 else "")
        )
    windows, configurations = array.shape
    if configurations < min_configurations:
        raise InputError(f"{name} must hold at least {min_configurations} configuration(s); got {configurations}")
    if windows < min_windows:
        raise DegenerateDataError(f"{name} must hold at least {min_windows} windows; got {windows}")
    _finite(array, name)
    return array


def returns_series(value: Any, name: str = "returns", *, min_windows: int = 2, matrix: bool = False) -> np.ndarray:
    """A finite float64 series of ``T`` windows (or, with ``matrix``, a series or a ``T x N`` matrix)."""
    array = _numeric_array(value, name)
    if array.ndim != 1 and not (matrix and array.ndim == 2):
        rule = "1-D (windows) or 2-D (windows x configurations)" if matrix else "1-D (windows)"
        raise InputError(f"{name} must be {rule}; got shape {array.shape}")
    if array.shape[0] < min_windows:
        raise DegenerateDataError(f"{name} must hold at least {min_windows} windows; got {array.shape[0]}")
    _finite(array, name)
    return array


def nonconstant(array: np.ndarray, spread: np.ndarray, name: str, *, undefined: str) -> None:
    """Refuse constant series: ``spread`` (a standard deviation per column) at rounding level.

    ``undefined`` says what a constant series leaves undefined ("Sharpe ratio is undefined", ...).
    """
    scale = np.max(np.abs(array), axis=0) if array.size else np.zeros(0)
    flat = np.atleast_1d(spread <= 1e-14 * np.maximum(np.atleast_1d(scale), 1e-300))
    if not flat.any():
        return
    if array.ndim == 1:
        raise DegenerateDataError(f"{name} is constant; its {undefined}")
    where = np.flatnonzero(flat)
    shown = ", ".join(str(i) for i in where[:10]) + (", ..." if where.size > 10 else "")
    raise DegenerateDataError(
        f"{name} has constant columns (0-based indices {shown}); their {undefined}: "
        "drop them before the audit"
    )


def column_index(value: Any, name: str, size: int) -> int:
    """A 0-based position among ``size`` configurations."""
    if _is_bool(value) or not isinstance(value, (int, np.integer)) or not 0 <= value < size:
        raise InputError(f"{name} must be a column index from 0 to {size - 1}; got {value!r}")
    return int(value)


def generator(value: Any, name: str = "rng") -> np.random.Generator:
    """A ``numpy.random.Generator`` (never the global random state)."""
    if not isinstance(value, np.random.Generator):
        raise InputError(
            f"{name} must be a numpy.random.Generator (numpy.random.default_rng(seed)); got {type(value).__name__}"
        )
    return value


def raw_moments(skewness: Any, kurtosis: Any) -> tuple[float, float]:
    """Skewness and RAW kurtosis (3 for a normal distribution) of one return series.

    Every distribution has raw kurtosis ``>= 1 + skewness**2`` (Pearson 1916); failing the bound
    usually means excess kurtosis (0 for a normal) was passed where raw kurtosis is expected.
    """
    g3 = finite_number(skewness, "skewness")
    g4 = finite_number(kurtosis, "kurtosis")
    if g4 < (1.0 + g3 * g3) * (1.0 - MOMENT_BOUND_TOLERANCE):
        raise InputError(
            "kurtosis must be raw kurtosis (3 for a normal distribution) and at least "
            f"1 + skewness**2 = {1.0 + g3 * g3:g}; got kurtosis={g4!r} with skewness={g3!r}"
            " (excess kurtosis passed by mistake?)"
        )
    return g3, g4
