"""Block-bootstrap confidence intervals for mean excess return and Sharpe ratio.

The resampled means and second moments come from the shared engine
(:func:`sweepaudit.resample.resampled_moments`); this module only turns them into intervals.

References
----------
Efron, B. and Tibshirani, R. (1993). An Introduction to the Bootstrap. Chapman & Hall, ch. 13
    (percentile interval).
Davison, A. C. and Hinkley, D. V. (1997). Bootstrap Methods and their Application. Cambridge
    University Press, section 5.2, eq. (5.6) (basic interval) and section 8.2 (block resampling).
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
"""

from __future__ import annotations

from typing import get_args

import numpy as np

from .. import validate
from ..errors import InputError
from ..resample import ResampledMoments
from ..results import BootstrapIntervals, Interval, IntervalMethod

__all__ = ["INTERVAL_METHODS", "bootstrap_intervals", "interval", "at_level"]

INTERVAL_METHODS: tuple[str, ...] = get_args(IntervalMethod)


def interval(
    estimate: float,
    distribution: np.ndarray,
    *,
    confidence: float,
    method: IntervalMethod = "percentile",
) -> Interval:
    """Two-sided bootstrap interval from a bootstrap distribution.

    Percentile (Efron and Tibshirani 1993, eq. 13.5): the alpha/2 and 1 - alpha/2 quantiles of the
    resampled statistic. Basic (Davison and Hinkley 1997, eq. 5.6): ``2*estimate - q(1 - alpha/2)``
    and ``2*estimate - q(alpha/2)``; it reflects the bootstrap error distribution around the estimate,
    which corrects the bias of a skewed statistic such as the Sharpe ratio of a short record.
    Non-finite resamples (zero-variance draws) are dropped.
    """
    d = np.asarray(distribution, dtype=np.float64)
    d = d[np.isfinite(d)]
    if d.size == 0:
        return Interval(float(estimate), float("nan"), float("nan"))
    alpha = 1.0 - confidence
    lo, hi = np.quantile(d, [alpha / 2, 1 - alpha / 2])
    if method == "basic":
        lo, hi = 2 * estimate - hi, 2 * estimate - lo
    return Interval(float(estimate), float(lo), float(hi))


def _intervals(means, sharpes, mean_dist, sharpe_dist, confidence, method) -> BootstrapIntervals:
    validate.probability(confidence, "confidence")
    validate.choice(method, "method", INTERVAL_METHODS)
    alpha = 1.0 - confidence
    q = [alpha / 2, 1 - alpha / 2]
    mq = np.quantile(mean_dist, q, axis=0)
    # Sharpe: drop zero-variance draws column by column (rare; only for tiny T or lumpy data).
    finite = np.isfinite(sharpe_dist)
    if finite.all():
        sq = np.quantile(sharpe_dist, q, axis=0)
    else:
        sq = np.nanquantile(np.where(finite, sharpe_dist, np.nan), q, axis=0)
    if method == "basic":
        mq = np.stack([2 * means - mq[1], 2 * means - mq[0]])
        sq = np.stack([2 * sharpes - sq[1], 2 * sharpes - sq[0]])
    return BootstrapIntervals(
        mean=tuple(Interval(float(e), float(lo), float(hi)) for e, lo, hi in zip(means, mq[0], mq[1])),
        sharpe=tuple(Interval(float(e), float(lo), float(hi)) for e, lo, hi in zip(sharpes, sq[0], sq[1])),
        mean_distribution=mean_dist,
        sharpe_distribution=sharpe_dist,
        confidence=float(confidence),
        method=method,
        degenerate_resamples=int((~finite).any(axis=1).sum()),
    )


def bootstrap_intervals(
    returns: np.ndarray,
    moments: ResampledMoments,
    *,
    confidence: float = 0.95,
    method: IntervalMethod = "percentile",
) -> BootstrapIntervals:
    """Block-bootstrap intervals for the mean excess return and Sharpe ratio of every configuration.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Excess returns (fractions), windows in rows.
    moments : ResampledMoments
        Resampled means and second moments of the same matrix from the shared engine.
    confidence : float
        Two-sided confidence level, default 0.95.
    method : {"percentile", "basic"}
        Percentile (Efron and Tibshirani 1993) or basic (Davison and Hinkley 1997, eq. 5.6).

    Notes
    -----
    The Sharpe ratio is mean / standard deviation (ddof = 1) per window. Under dependence the block
    bootstrap keeps the serial correlation inside blocks, so its percentile interval covers where the
    iid bootstrap under-covers (Politis and Romano 1994; Davison and Hinkley 1997, section 8.2).
    """
    x = np.asarray(returns, dtype=np.float64)
    if x.ndim != 2 or moments.mean.shape[1] != x.shape[1] or moments.windows != x.shape[0]:
        raise InputError("returns and resampled moments disagree in shape")
    means = x.mean(axis=0)
    sd = x.std(axis=0, ddof=1)
    sharpes = means / sd
    return _intervals(means, sharpes, moments.mean, moments.sharpe(), confidence, method)


def at_level(
    intervals: BootstrapIntervals, confidence: float, method: IntervalMethod | None = None
) -> BootstrapIntervals:
    """The same intervals at another level or method, read off the kept bootstrap distributions.

    No resampling: the distributions of ``intervals`` are reused (Efron and Tibshirani 1993, ch. 13).
    """
    if intervals.distribution_columns is not None:
        raise InputError(
            "these intervals kept the bootstrap distributions of the selected configuration only (a streamed "
            "audit); audit again with a larger memory_budget to re-level every configuration"
        )
    return _intervals(
        intervals.mean_estimates,
        intervals.sharpe_estimates,
        intervals.mean_distribution,
        intervals.sharpe_distribution,
        confidence,
        method or intervals.method,
    )
