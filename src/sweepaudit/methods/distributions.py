"""The normal and Student's t distribution functions the methods read, from ``scipy.special``.

These are the special functions ``scipy.stats.norm`` and ``scipy.stats.t`` evaluate (``ndtr``,
``ndtri``, ``stdtr``, ``stdtrit``) without the distribution objects' argument handling, so they give
the same bits (``tests/methods/test_distributions.py`` holds them to ``scipy.stats``) while an audit
never imports ``scipy.stats``, whose import costs about a second.
"""

from __future__ import annotations

import numpy as np
from scipy import special

__all__ = ["normal_cdf", "normal_sf", "normal_ppf", "normal_isf", "t_cdf", "t_sf", "t_ppf", "t_upper_log_sf"]


def normal_cdf(x):
    """Standard normal distribution function Phi(x) (``scipy.stats.norm.cdf``)."""
    return special.ndtr(x)


def normal_sf(x):
    """Standard normal upper tail 1 - Phi(x), computed as Phi(-x) (``scipy.stats.norm.sf``)."""
    return special.ndtr(-np.asarray(x, dtype=np.float64))


def normal_ppf(q):
    """Standard normal quantile Phi^-1(q) (``scipy.stats.norm.ppf``)."""
    return special.ndtri(q)


def normal_isf(q):
    """Standard normal upper quantile Phi^-1(1 - q), computed as -Phi^-1(q) (``scipy.stats.norm.isf``)."""
    return -special.ndtri(q)


def t_cdf(x, df):
    """Student's t distribution function with ``df`` degrees of freedom (``scipy.stats.t.cdf``)."""
    return special.stdtr(df, x)


def t_sf(x, df):
    """Student's t upper tail, computed as F(-x) (``scipy.stats.t.sf``)."""
    return special.stdtr(df, -np.asarray(x, dtype=np.float64))


def t_ppf(q, df):
    """Student's t quantile (``scipy.stats.t.ppf``)."""
    return special.stdtrit(df, q)


def t_upper_log_sf(x, df):
    """log(1 - F(x)) of Student's t for ``x >= 0``: the log of :func:`t_sf` (``scipy.stats.t.logsf``,
    which takes the same route there)."""
    with np.errstate(divide="ignore"):
        return np.log(t_sf(x, df))
