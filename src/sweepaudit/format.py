"""The one number formatter: every number sweepaudit writes as text goes through one of these styles.

The verdict's reasons, the terminal, the JUnit file, the calibration output, the report and its
figures each use the style below that names their convention; no module formats numbers its own
way. Each style keeps the exact strings the output has always had (the JSON's reasons and the
example reports depend on them).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

__all__ = ["sig", "fmt", "figure", "prob", "pct", "pct_fixed", "level", "xml_number", "rate"]


def sig(x: float, digits: int = 4) -> str:
    """Significant digits and nothing else: the verdict's reasons (``0.0123``, ``1.5e-07``)."""
    return f"{x:.{digits}g}"


def fmt(x: Any, digits: int = 4) -> str:
    """A terminal figure: ``-`` when it could not be computed, whole numbers with separators."""
    if x is None:
        return "-"
    if isinstance(x, int):
        return f"{x:,}"
    return sig(x, digits)


def figure(value: Any, digits: int = 4) -> str:
    """A report figure: 4 significant digits; whole numbers with thousands separators.

    ``None`` and non-finite values (a figure the audit could not compute) become "n/a"; booleans
    become "yes" / "no"; zero is "0".
    """
    if value is None:
        return "n/a"
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, (int, np.integer)):
        return f"{int(value):,}"
    x = float(value)
    if not math.isfinite(x):
        return "n/a"
    if x == 0:
        return "0"
    return sig(x, digits)


def prob(x: float | None) -> str:
    """A probability or p-value, four decimals; ``-`` when absent."""
    return "-" if x is None else f"{x:.4f}"


def pct(x: float | None, digits: int = 3, *, missing: str = "-") -> str:
    """A fraction as a percentage with significant digits (``0.0123`` -> ``1.23%``)."""
    return missing if x is None else f"{100 * float(x):.{digits}g}%"


def pct_fixed(x: float, decimals: int = 1) -> str:
    """A fraction as a percentage with fixed decimals (``0.0412`` -> ``4.1%``)."""
    return f"{100 * x:.{decimals}f}%"


def level(x: float) -> str:
    """A confidence or significance level as a percentage, as short as exact (``0.95`` -> ``95%``)."""
    return f"{100 * x:g}%"


def xml_number(x: Any) -> str:
    """A check's value or threshold in JUnit text: ``null`` when absent, floats to 6 digits."""
    return "null" if x is None else f"{x:.6g}" if isinstance(x, float) else str(x)


def rate(value: float | None, standard_error: float | None) -> str:
    """A Monte Carlo rate with its standard error, one decimal (``4.0% ± 1.4%``); ``n/a`` when absent."""
    if value is None or standard_error is None:
        return "n/a"
    return f"{pct_fixed(value)} ± {pct_fixed(standard_error)}"
