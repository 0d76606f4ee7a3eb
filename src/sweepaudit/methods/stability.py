"""Is the edge still alive? The selected configuration's record over time, and a test for decay.

Every full-sample figure is symmetric in time: an edge that lives only in the second half of the
sample and the same edge reversed in time (one that has died) get the same mean, Sharpe ratio and
data-snooping p-values. Someone about to fund a configuration needs to know which of the two they
are looking at. :func:`edge_stability` reports the record cut into thirds, a rolling window, the
recent period against the windows before it, and a test for a fall in the mean:

    D = mean(recent) - mean(early),   SE = omega * sqrt(1 / n_early + 1 / n_recent),

with omega^2 the long-run variance (:func:`~sweepaudit.methods.longrun.long_run_variance`, the
prewhitened Bartlett estimator of Andrews and Monahan 1992) of the record demeaned within each
period, so that a change in the mean does not inflate the variance it is judged by. ``D / SE`` is
read against Student's t with the long-run estimate's equivalent degrees of freedom; the p-value
is one-sided (a recent mean below the early one). This is the two-sample comparison of means
before and after a known date (the Chow 1960 form for a mean, with a long-run variance in the
spirit of Andrews 1993 for dependent data).

Selecting the configuration on its full-sample Sharpe ratio does not tilt the test: the difference
of the two periods' means is uncorrelated with the full-sample mean (for serially uncorrelated
windows of equal variance, ``Cov(sum of all, mean_recent - mean_early) = sigma^2 - sigma^2 = 0``
whatever the split), so picking the best full-sample record leaves D centred at zero when the edge
is constant.

References
----------
Chow, G. C. (1960). Tests of equality between sets of coefficients in two linear regressions.
    Econometrica 28(3), 591-605.
Andrews, D. W. K. (1993). Tests for parameter instability and structural change with unknown change
    point. Econometrica 61(4), 821-856.
Andrews, D. W. K. and Monahan, J. C. (1992). An improved heteroskedasticity and autocorrelation
    consistent covariance matrix estimator. Econometrica 60(4), 953-966.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from .. import validate
from ..errors import InputError
from ..results import EdgeStability, SubPeriod
from .longrun import long_run_variance

__all__ = ["MIN_PERIOD", "default_rolling_windows", "sub_period", "thirds", "edge_stability"]

#: Fewest windows in any period cut from the record (the long-run variance needs 8).
MIN_PERIOD = 8


def default_rolling_windows(windows: int, periods_per_year: float | None) -> int:
    """The rolling window's length: one year of windows when the periods per year are known and a
    year is at most a third of the record, else a sixth of the windows; at least :data:`MIN_PERIOD`."""
    t = validate.whole_number(windows, "windows", minimum=1)
    year = round(periods_per_year) if periods_per_year else None
    length = year if year is not None and year <= t / 3 else t // 6
    return int(min(max(length, MIN_PERIOD), t))


def _long_run_ratio(values: np.ndarray) -> tuple[float, float, float]:
    """Long-run variance, equivalent degrees of freedom and omega^2 / sigma^2 of a series (NaN if constant)."""
    if np.ptp(values) == 0:
        return math.nan, math.nan, math.nan
    estimate = long_run_variance(values[:, None])
    return float(estimate.variance[0]), float(estimate.degrees_of_freedom[0]), float(estimate.ratio[0])


def sub_period(series, start: int, stop: int) -> SubPeriod:
    """Mean, Sharpe ratio and long-run t-ratio of windows ``start`` to ``stop - 1`` of a series."""
    x = validate.returns_series(series, "series")
    if not 0 <= start < stop <= x.size or stop - start < MIN_PERIOD:
        raise InputError(
            f"a sub-period must be at least {MIN_PERIOD} windows inside 0..{x.size}; got {start}..{stop}"
        )
    part = x[start:stop]
    mean, sd = float(part.mean()), float(part.std(ddof=1))
    variance, nu, _ = _long_run_ratio(part)
    ratio = mean / math.sqrt(variance / part.size) if variance > 0 else math.nan
    return SubPeriod(start, stop, mean, mean / sd if sd > 0 else math.nan, ratio, nu)


def thirds(windows: int) -> tuple[tuple[int, int], ...]:
    """Three contiguous (start, stop) stretches; the first ``T mod 3`` get one window more (as CSCV's blocks)."""
    t = validate.whole_number(windows, "windows", minimum=3)
    sizes = [t // 3 + (i < t % 3) for i in range(3)]
    edges = np.concatenate([[0], np.cumsum(sizes)])
    return tuple((int(edges[i]), int(edges[i + 1])) for i in range(3))


def _rolling(x: np.ndarray, length: int) -> tuple[np.ndarray, np.ndarray]:
    """Trailing means and Sharpe ratios (ddof = 1) of every run of ``length`` windows, by cumulative sums."""
    centred = x - x.mean()
    sums = np.concatenate([[0.0], np.cumsum(x)])
    squares = np.concatenate([[0.0], np.cumsum(centred * centred)])
    mean = (sums[length:] - sums[:-length]) / length
    shift = mean - x.mean()
    variance = np.maximum((squares[length:] - squares[:-length] - length * shift * shift) / (length - 1), 0.0)
    flat = variance <= 1e-12 * max(float(np.mean(centred * centred)), 1e-300)
    with np.errstate(divide="ignore", invalid="ignore"):
        sharpe = np.where(flat, np.nan, mean / np.sqrt(np.where(flat, 1.0, variance)))
    return mean, sharpe


def edge_stability(series, *, recent_share: float = 0.5, rolling_windows: int | None = None) -> EdgeStability:
    """The edge of one configuration over time: thirds, a rolling window, recent against early.

    Parameters
    ----------
    series : array_like, shape (T,)
        The configuration's per-window excess returns, in time order (at least 3 x :data:`MIN_PERIOD`).
    recent_share : float
        Share of the windows, at the end, that form the recent period (strictly between 0 and 1; each
        period keeps at least :data:`MIN_PERIOD` windows). Half by default: the even split is the
        most powerful against a change in the middle of the record.
    rolling_windows : int, optional
        Length of the trailing window (default :func:`default_rolling_windows` without periods per year).

    Returns
    -------
    EdgeStability
        Without intervals (the audit adds the two periods' from its shared resamples).
    """
    x = validate.returns_series(series, "series", min_windows=3 * MIN_PERIOD)
    t = x.size
    share = validate.probability(recent_share, "recent_share")
    length = default_rolling_windows(t, None) if rolling_windows is None else validate.whole_number(
        rolling_windows, "rolling_windows", minimum=2, maximum=t)
    recent = min(max(round(t * share), MIN_PERIOD), t - MIN_PERIOD)
    split = t - recent
    early, late = x[:split], x[split:]
    difference = float(late.mean() - early.mean())
    residual = np.concatenate([early - early.mean(), late - late.mean()])
    variance, nu, ratio = _long_run_ratio(residual)
    error = math.sqrt(variance * (1.0 / split + 1.0 / recent)) if variance > 0 else math.nan
    statistic = difference / error if error > 0 else math.nan
    pvalue = float(stats.t.cdf(statistic, nu)) if math.isfinite(statistic) else 1.0
    rolling_mean, rolling_sharpe = _rolling(x, length)
    defined = rolling_sharpe[np.isfinite(rolling_sharpe)]
    return EdgeStability(
        thirds=tuple(sub_period(x, a, b) for a, b in thirds(t)),
        early=sub_period(x, 0, split),
        recent=sub_period(x, split, t),
        recent_share=share,
        difference=difference,
        standard_error=error,
        statistic=statistic,
        degrees_of_freedom=nu,
        pvalue=pvalue,
        long_run_ratio=ratio,
        rolling_windows=length,
        rolling_mean=rolling_mean,
        rolling_sharpe=rolling_sharpe,
        rolling_lowest=float(defined.min()) if defined.size else math.nan,
        rolling_highest=float(defined.max()) if defined.size else math.nan,
        rolling_share_positive=float(np.mean(defined > 0)) if defined.size else math.nan,
    )
