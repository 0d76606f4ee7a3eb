"""The one number formatter: every number sweepaudit writes as text goes through this module.

The verdict's reasons, the terminal, the JUnit file, the calibration output, the report and its
figures all use these styles, so one figure reads the same wherever it appears:

========================  ==============================================  =========================
style                     rule                                            examples
========================  ==============================================  =========================
:func:`number`            4 significant digits, positional; whole numbers  ``0.3812``, ``12,870``
                          of 10,000 and more with separators
:func:`statistic`         a Sharpe ratio or test statistic: 3 significant  ``0.381``, ``1.50``
                          digits, trailing zeros kept
:func:`whole`             a count, with thousands separators              ``1,000``
:func:`percent`           a return (a fraction) as a percentage,          ``0.256%``, ``52.0%``,
                          3 significant digits (trailing zeros kept       ``20%``
                          unless the percentage is whole)
:func:`probability`       3 fixed decimals; ``< 0.001`` and ``> 0.999``   ``0.992``, ``0.200``
                          for what would round to 0 or 1
:func:`pvalue`            4 fixed decimals; the resampling floor          ``0.0123``, ``< 0.001``,
                          ``1/(B + 1)`` and anything below 0.0001 as       ``< 0.0001``
                          ``< ...``
:func:`interval`          an estimate and its interval, each as it reads   ``0.256% [-0.0818%, 0.585%]``,
                          alone: percent for returns, else a statistic     ``2.75 [1.50, 3.90]``
:func:`level`             a confidence or significance level              ``95%``, ``97.5%``
:func:`rate`              a Monte Carlo rate and its standard error       ``4.0% ± 1.4%``
========================  ==============================================  =========================

Common to all: a missing or non-finite figure is ``n/a``; a zero is never written ``-0``;
scientific notation only outside the ordinary range (below one millionth, or 10^15 and beyond).
:func:`figure` picks the style of a value of unknown kind (a parameter value, a count, a flag).
The older names (``sig``, ``fmt``, ``prob``, ``pct``, ``pct_fixed``, ``xml_number``) are kept as
the same styles under the names other modules already import.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

__all__ = [
    "MISSING",
    "number",
    "statistic",
    "whole",
    "percent",
    "probability",
    "pvalue",
    "pvalue_floor",
    "interval",
    "level",
    "rate",
    "figure",
    "styled",
    "listed",
    "p_is",
    "STYLES",
    # the same styles under their earlier names
    "sig",
    "fmt",
    "prob",
    "pct",
    "pct_fixed",
    "xml_number",
]

#: What a figure that could not be computed reads as, in every output.
MISSING = "n/a"

# Below this magnitude (and at 10^15 and beyond) positional notation stops being readable.
_TINY = 1e-6
_HUGE = 1e15


def _finite(x: Any) -> float | None:
    """``x`` as a float, or None when absent or not finite."""
    if x is None or isinstance(x, (bool, np.bool_)):
        return None
    try:
        f = float(x)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def _unsigned_zero(text: str) -> str:
    """``-0``, ``-0.000`` and ``-0.0%`` lose their sign: a zero has none."""
    if text.startswith("-") and not any(ch in "123456789" for ch in text):
        return text[1:]
    return text


def _decimals(magnitude: float, digits: int) -> int:
    """Decimals that give ``digits`` significant digits to a number of this magnitude (>= 0)."""
    if magnitude == 0:
        return 0
    return max(0, digits - 1 - math.floor(math.log10(magnitude)))


def _fixed(x: float, decimals: int) -> str:
    return _unsigned_zero(f"{x:,.{decimals}f}")


def _significant(x: float, digits: int, *, zeros: bool = False) -> str:
    """``digits`` significant digits in positional notation, trailing zeros dropped unless ``zeros``."""
    if x == 0:
        return "0"
    a = abs(x)
    if a < _TINY or a >= _HUGE:
        return _unsigned_zero(f"{x:.{digits}g}")
    decimals = _decimals(a, digits)
    text = f"{x:,.{decimals}f}"
    # rounding may add a digit (9.9996 -> 10.000): recount on the rounded value
    rounded = abs(float(text.replace(",", "")))
    if rounded and _decimals(rounded, digits) < decimals:
        text = f"{x:,.{_decimals(rounded, digits)}f}"
    if "." in text and not zeros:
        text = text.rstrip("0").rstrip(".")
    return _unsigned_zero(text)


def number(x: Any, digits: int = 4) -> str:
    """A statistic (Sharpe ratio, t-statistic, slope, windows): ``digits`` significant digits.

    Whole-valued magnitudes of 10^digits and more are written whole with separators (``12,870``).
    """
    f = _finite(x)
    if f is None:
        return MISSING
    if abs(f) >= 10**digits and abs(f) < _HUGE:
        return _fixed(f, 0)
    return _significant(f, digits)


def statistic(x: Any) -> str:
    """A Sharpe ratio or test statistic: three significant digits, trailing zeros kept (``1.50``)."""
    f = _finite(x)
    if f is None:
        return MISSING
    if abs(f) >= 1000 and abs(f) < _HUGE:
        return _fixed(f, 0)
    return _significant(f, 3, zeros=True)


def whole(n: Any) -> str:
    """A count with thousands separators (``1,000``)."""
    f = _finite(n)
    return MISSING if f is None else _fixed(round(f), 0)


def percent(x: Any, digits: int = 3) -> str:
    """A return or any other fraction as a percentage, ``digits`` significant digits (``0.0123`` -> ``1.23%``).

    Trailing zeros are kept (``0.52`` of a return measured as ``0.51998`` reads ``52.0%`` beside ``21.8%``)
    unless the percentage is whole (a policy's ``0.2`` reads ``20%``, ``1.0`` reads ``100%``).
    """
    f = _finite(x)
    if f is None:
        return MISSING
    p = 100 * f
    if abs(p) >= 10**digits or abs(p) < _TINY or p == round(p):
        return number(p, digits) + "%"
    return _significant(p, digits, zeros=True) + "%"


def probability(x: Any) -> str:
    """A probability, three fixed decimals; ``< 0.001`` / ``> 0.999`` when it would round to 0 or 1."""
    f = _finite(x)
    if f is None:
        return MISSING
    if 0 < f < 0.0005:
        return "< 0.001"
    if 0.9995 <= f < 1:
        return "> 0.999"
    return _fixed(f, 3)


def pvalue_floor(resamples: Any) -> float | None:
    """The smallest p-value ``resamples`` resamples can give: ``1/(B + 1)`` (the observed statistic counts)."""
    f = _finite(resamples)
    return None if f is None or f < 1 else 1.0 / (f + 1.0)


def pvalue(x: Any, floor: float | None = None) -> str:
    """A p-value, four fixed decimals.

    At the resampling floor ``1/(B + 1)`` (``floor``) the p-value is only known to be at most that,
    so it reads ``< 0.001`` (the floor rounded up to a power of ten); below 0.0001 it reads
    ``< 0.0001``.
    """
    f = _finite(x)
    if f is None:
        return MISSING
    if floor is not None and floor > 0 and f <= floor * (1 + 1e-9):
        bound = 10.0 ** math.ceil(math.log10(floor) + 1e-12)
        return f"< {_fixed(bound, max(0, -round(math.log10(bound))))}"
    if f < 0.0001:
        return "< 0.0001"
    return _fixed(f, 4)


def interval(estimate: Any, low: Any, high: Any, *, as_percent: bool = False, digits: int = 3) -> str:
    """An estimate and its interval, ``est [low, high]``, each to ``digits`` significant digits.

    Each number reads exactly as it does alone (:func:`statistic` or, for returns, :func:`percent`),
    so an interval's bound and the same figure quoted in a sentence never disagree:
    ``0.256% [-0.0818%, 0.585%]``, ``0.132 [-0.0205, 0.306]``.
    """
    one = (lambda v: percent(v, digits)) if as_percent else (statistic if digits == 3 else lambda v: number(v, digits))
    if all(_finite(v) is None for v in (estimate, low, high)):
        return MISSING
    return f"{one(estimate)} [{one(low)}, {one(high)}]"


def level(x: Any) -> str:
    """A confidence or significance level as a percentage, as short as exact (``0.95`` -> ``95%``)."""
    f = _finite(x)
    return MISSING if f is None else f"{_significant(100 * f, 6)}%"


def pct_fixed(x: Any, decimals: int = 1) -> str:
    """A fraction as a percentage with fixed decimals (``0.0412`` -> ``4.1%``): Monte Carlo rates."""
    f = _finite(x)
    return MISSING if f is None else _fixed(100 * f, decimals) + "%"


def rate(value: float | None, standard_error: float | None) -> str:
    """A Monte Carlo rate with its standard error, one decimal (``4.0% ± 1.4%``); ``n/a`` when absent."""
    if _finite(value) is None or _finite(standard_error) is None:
        return MISSING
    return f"{pct_fixed(value)} ± {pct_fixed(standard_error)}"


def figure(value: Any, digits: int = 4) -> str:
    """A value of unknown kind: flags as yes / no, counts whole, numbers as :func:`number`, text as is."""
    if value is None:
        return MISSING
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (int, np.integer)):
        return whole(value)
    if isinstance(value, str):
        return value
    return number(value, digits)


#: The styles a document names (a check's ``value_kind``) and the function that writes each.
STYLES = {
    "count": whole,
    "windows": number,
    "return": percent,
    "probability": probability,
    "pvalue": pvalue,
    "test_pvalue": pvalue,
    "statistic": statistic,
    "number": number,
}


def styled(value: Any, kind: str, *, floor: float | None = None, threshold: bool = False) -> str:
    """``value`` in the style of ``kind`` (a key of :data:`STYLES`); resampled p-values take their floor.

    ``pvalue`` is a p-value counted from resamples (at most as fine as ``floor``); ``test_pvalue``
    one read off a distribution (a t-test's), which has no resampling floor. A ``threshold`` of
    either is a significance level, written as a plain number (``0.05``).
    """
    if kind in ("pvalue", "test_pvalue"):
        return number(value) if threshold else pvalue(value, floor if kind == "pvalue" else None)
    return STYLES.get(kind, figure)(value)


# ---------------------------------------------------------------------------------------------
# the same styles under the names earlier code imports


def sig(x: Any, digits: int = 4) -> str:
    """:func:`number` (significant digits, positional)."""
    return number(x, digits)


def fmt(x: Any, digits: int = 4) -> str:
    """:func:`figure`: counts whole, numbers to ``digits`` significant digits."""
    return figure(x, digits)


def prob(x: Any) -> str:
    """:func:`probability`."""
    return probability(x)


def pct(x: Any, digits: int = 3, *, missing: str = MISSING) -> str:
    """:func:`percent`; ``missing`` replaces ``n/a`` where a caller needs another mark."""
    return missing if _finite(x) is None else percent(x, digits)


def xml_number(x: Any) -> str:
    """A figure in JUnit text: :func:`figure`."""
    return figure(x)


def listed(parts: list[str]) -> str:
    """Phrases joined as a sentence lists them: ``a``, ``a and b``, ``a, b and c``."""
    return parts[0] if len(parts) == 1 else ", ".join(parts[:-1]) + " and " + parts[-1]


def p_is(x: Any, floor: float | None = None) -> str:
    """A p-value after its letter: ``p = 0.0123``, or ``p < 0.001`` at the floor (:func:`pvalue`)."""
    text = pvalue(x, floor)
    return f"p {text}" if text.startswith(("<", ">")) else f"p = {text}"
