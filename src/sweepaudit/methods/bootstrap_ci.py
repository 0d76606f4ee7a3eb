"""Block-bootstrap confidence intervals for mean excess return and Sharpe ratio.

The resampled means and second moments come from the shared engine
(:func:`sweepaudit.resample.resampled_moments`); this module only turns them into intervals.

Three methods. *Percentile* and *basic* read the interval off the resampled statistic: their width
is the block bootstrap's own variance of the statistic, which a block bootstrap of T windows
understates under persistent dependence (its variance of the mean weights autocovariance j by a
kernel below one and loses the mean's own share; at phi = 0.7 and T = 208 the audit's blocks keep
about 60% of the long-run variance). *Studentized* (the audit's default) is the bootstrap-t
interval (Hall 1988; for blocks, Gotze and Kunsch 1996) with a long-run studentizer: the resampled
statistic is standardised by its bootstrap standard deviation, its quantiles are read on the
t-scale with the long-run estimate's equivalent degrees of freedom
(:func:`sweepaudit.methods.longrun.long_run_variance`), and scaled by the long-run standard error
of the statistic. The bootstrap gives the shape (skew, tails), the long-run variance the width.

References
----------
Efron, B. and Tibshirani, R. (1993). An Introduction to the Bootstrap. Chapman & Hall, ch. 13
    (percentile interval).
Davison, A. C. and Hinkley, D. V. (1997). Bootstrap Methods and their Application. Cambridge
    University Press, section 5.2, eq. (5.6) (basic interval) and section 8.2 (block resampling).
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
Hall, P. (1988). Theoretical comparison of bootstrap confidence intervals. Annals of Statistics
    16(3), 927-953 (the bootstrap-t, "studentized" interval).
Gotze, F. and Kunsch, H. R. (1996). Second-order correctness of the blockwise bootstrap for
    stationary observations. Annals of Statistics 24(5), 1914-1933.
"""

from __future__ import annotations

from typing import get_args

import numpy as np

from .. import validate
from ..errors import InputError
from ..resample import ResampledMoments
from ..results import BootstrapIntervals, Interval, IntervalMethod, LongRunVariance
from .distributions import normal_cdf, t_ppf
from .longrun import long_run_variance
from .sharpe import variance_numerator

__all__ = [
    "INTERVAL_METHODS",
    "bootstrap_intervals",
    "column_quantiles",
    "interval",
    "at_level",
    "long_run_standard_errors",
    "part_columns",
    "part_intervals",
]

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


def _quantiles(distribution: np.ndarray, q: list[float]) -> np.ndarray:
    """Column quantiles, leaving out non-finite draws (zero-variance resamples of a Sharpe ratio)."""
    finite = np.isfinite(distribution)
    if finite.all():
        return column_quantiles(distribution, q)
    return np.nanquantile(np.where(finite, distribution, np.nan), q, axis=0)


def _order_statistics(a: np.ndarray, q) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The two order statistics each column's linear quantile interpolates between, and the weight."""
    n = a.shape[0]
    virtual = (n - 1) * np.asarray(q, dtype=np.float64)
    below = np.floor(virtual).astype(np.intp)
    above = np.minimum(below + 1, n - 1)
    # Partitioning rows of a transposed copy is faster than partitioning along axis 0 (always a copy:
    # the caller's draws are kept, and a single column's transpose is already contiguous).
    rows = a.T.copy(order="C")
    rows.partition(np.unique(np.concatenate([below, above])), axis=1)
    return rows[:, below].T, rows[:, above].T, (virtual - below)[:, None]


def _interpolate(low: np.ndarray, high: np.ndarray, gamma: np.ndarray) -> np.ndarray:
    """numpy's linear interpolation between order statistics, term for term (``numpy.quantile``)."""
    diff = high - low
    out = low + diff * gamma
    np.subtract(high, diff * (1 - gamma), out=out, where=gamma >= 0.5)
    return out


def column_quantiles(a: np.ndarray, q) -> np.ndarray:
    """``numpy.quantile(a, q, axis=0)`` (the default linear method) of a finite 2-D array, the same
    values, found with one partition of two order statistics per level instead of numpy's four
    (it also places the minimum and maximum, to detect NaN)."""
    return _interpolate(*_order_statistics(np.asarray(a, dtype=np.float64), q))


def _studentized(estimates, distribution, standard_error, degrees_of_freedom, q) -> np.ndarray:
    """Bootstrap-t bounds: the standardised draws' quantiles on the t-scale, times the long-run SE."""
    if np.isfinite(distribution).all():
        # Without non-finite draws the nan-aware reductions are the plain ones (the same bits; the
        # column-by-column nanquantile costs a Python call per configuration).
        spread = np.std(distribution, axis=0)
        if (spread > 0).all():
            # The standardisation is monotone in each column, so the standardised draws' order
            # statistics are the raw ones standardised: partition the raw draws, standardise four
            # values per column (the same figures as standardising every draw first).
            low, high, gamma = _order_statistics(distribution, q)
            zq = _interpolate((low - estimates) / spread, (high - estimates) / spread, gamma)
        else:
            with np.errstate(invalid="ignore", divide="ignore"):
                z = (distribution - estimates) / spread
            zq = np.quantile(z, q, axis=0) if np.isfinite(z).all() else np.nanquantile(z, q, axis=0)
    else:
        draws = np.where(np.isfinite(distribution), distribution, np.nan)
        with np.errstate(invalid="ignore", divide="ignore"):
            z = (draws - estimates) / np.nanstd(draws, axis=0)
        zq = np.nanquantile(z, q, axis=0)
    tq = t_ppf(normal_cdf(zq), degrees_of_freedom)
    return np.stack([estimates - tq[1] * standard_error, estimates - tq[0] * standard_error])


def _intervals(means, sharpes, mean_dist, sharpe_dist, confidence, method, scale=None) -> BootstrapIntervals:
    validate.probability(confidence, "confidence")
    validate.choice(method, "method", INTERVAL_METHODS)
    alpha = 1.0 - confidence
    q = [alpha / 2, 1 - alpha / 2]
    if method == "studentized":
        if scale is None:
            raise InputError("method='studentized' needs the long-run standard errors; these intervals kept none")
        mean_se, sharpe_se, nu = scale
        mq = _studentized(means, mean_dist, mean_se, nu, q)
        sq = _studentized(sharpes, sharpe_dist, sharpe_se, nu, q)
    else:
        mq = column_quantiles(mean_dist, q)
        sq = _quantiles(sharpe_dist, q)
        if method == "basic":
            mq = np.stack([2 * means - mq[1], 2 * means - mq[0]])
            sq = np.stack([2 * sharpes - sq[1], 2 * sharpes - sq[0]])
    mean_se, sharpe_se, nu = scale if scale is not None else (None, None, None)
    return BootstrapIntervals(
        mean=tuple(Interval(float(e), float(lo), float(hi)) for e, lo, hi in zip(means, mq[0], mq[1])),
        sharpe=tuple(Interval(float(e), float(lo), float(hi)) for e, lo, hi in zip(sharpes, sq[0], sq[1])),
        mean_distribution=mean_dist,
        sharpe_distribution=sharpe_dist,
        confidence=float(confidence),
        method=method,
        degenerate_resamples=int((~np.isfinite(sharpe_dist)).any(axis=1).sum()),
        mean_standard_error=mean_se,
        sharpe_standard_error=sharpe_se,
        degrees_of_freedom=nu,
    )


def long_run_standard_errors(returns: np.ndarray, long_run: LongRunVariance | None = None):
    """Long-run standard errors of each column's mean and Sharpe ratio, and their degrees of freedom.

    Mean: ``omega / sqrt(T)``. Sharpe ratio: ``sqrt([q - g3 SR + (g4 - 1)/4 SR^2] / (T - 1))`` with
    ``q = omega^2 / sigma^2`` (:func:`sweepaudit.methods.sharpe.variance_numerator`). The degrees of
    freedom are the long-run estimate's (:func:`sweepaudit.methods.longrun.long_run_variance`).
    """
    x = np.asarray(returns, dtype=np.float64)
    t = x.shape[0]
    estimate = long_run if long_run is not None else long_run_variance(x)
    centred = x - x.mean(axis=0)
    square = centred * centred  # products, not ``**3`` and ``**4``: numpy's general power is many times slower
    m2 = np.mean(square, axis=0)
    skewness = np.mean(square * centred, axis=0) / m2**1.5
    kurtosis = np.mean(square * square, axis=0) / m2**2
    sharpe = x.mean(axis=0) / np.sqrt(m2 * t / (t - 1))
    numerator = np.maximum(variance_numerator(sharpe, skewness, kurtosis, estimate.ratio), 1e-12)
    return np.sqrt(estimate.variance / t), np.sqrt(numerator / (t - 1)), estimate.degrees_of_freedom


def bootstrap_intervals(
    returns: np.ndarray,
    moments: ResampledMoments,
    *,
    confidence: float = 0.95,
    method: IntervalMethod = "studentized",
    long_run: LongRunVariance | None = None,
    standard_errors: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
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
    method : {"studentized", "percentile", "basic"}
        Bootstrap-t with the long-run studentizer (default; module notes), percentile (Efron and
        Tibshirani 1993) or basic (Davison and Hinkley 1997, eq. 5.6).
    long_run : LongRunVariance, optional
        Precomputed long-run variance of ``returns`` for ``"studentized"`` (computed when absent).
    standard_errors : tuple of ndarray, optional
        Precomputed :func:`long_run_standard_errors` of ``returns`` (they read only the returns, so
        one set serves every resampling of the same matrix).

    Notes
    -----
    The Sharpe ratio is mean / standard deviation (ddof = 1) per window. The long-run standard
    errors are always computed and kept, so :func:`at_level` can switch to ``"studentized"``.
    """
    x = np.asarray(returns, dtype=np.float64)
    if x.ndim != 2 or moments.mean.shape[1] != x.shape[1] or moments.windows != x.shape[0]:
        raise InputError("returns and resampled moments disagree in shape")
    means = x.mean(axis=0)
    sd = x.std(axis=0, ddof=1)
    sharpes = means / sd
    scale = standard_errors if standard_errors is not None else long_run_standard_errors(x, long_run)
    return _intervals(means, sharpes, moments.mean, moments.sharpe(), confidence, method, scale)


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
    scale = None
    if intervals.mean_standard_error is not None:
        scale = (intervals.mean_standard_error, intervals.sharpe_standard_error, intervals.degrees_of_freedom)
    return _intervals(
        intervals.mean_estimates,
        intervals.sharpe_estimates,
        intervals.mean_distribution,
        intervals.sharpe_distribution,
        confidence,
        method or intervals.method,
        scale,
    )


def part_columns(parts) -> np.ndarray:
    """The ``T x 2k`` matrix ``[y_1 m_1, m_1, y_2 m_2, m_2, ...]`` for parts ``(y_j, m_j)``: a series and
    a mask of the windows that belong to the part.

    The audit's shared resamples (:func:`sweepaudit.resample.resampled_moments`) turn it into every
    part's resampled moments at the cost of ``2k`` more columns (see :func:`part_intervals`).
    """
    columns = []
    for series, mask in parts:
        y = validate.returns_series(series, "series")
        m = np.asarray(mask, dtype=bool)
        if m.shape != y.shape:
            raise InputError(f"mask must have the series' {y.size} windows; got shape {m.shape}")
        columns += [np.where(m, y, 0.0), m.astype(np.float64)]
    return np.column_stack(columns)


def part_intervals(parts, moments: ResampledMoments, *, confidence: float = 0.95,
                   method: IntervalMethod = "studentized") -> tuple[BootstrapIntervals, ...]:
    """Intervals for the mean and Sharpe ratio of each part of a series, from resampled moments of
    :func:`part_columns`.

    In resample b the windows drawn inside part j give its resampled mean
    ``mean*_b(y m) / mean*_b(m)`` and second moment ``mean*_b(y^2 m) / mean*_b(m)`` (the block
    bootstrap restricted to the part: a random number of windows, in blocks cut at the part's ends).
    The intervals then follow :func:`bootstrap_intervals` on the part's own windows (for
    ``"studentized"``, the part's own long-run standard errors). Resamples that drew fewer than two
    of the part's windows are left out.

    Parameters
    ----------
    parts : sequence of (series, mask)
        As given to :func:`part_columns`.
    moments : ResampledMoments
        Resampled moments of ``part_columns(parts)``, with second moments.
    confidence, method
        As for :func:`bootstrap_intervals`.

    Returns
    -------
    tuple of BootstrapIntervals
        One per part, each for a single column.
    """
    if moments.second is None:
        raise InputError("part_intervals needs resampled second moments")
    out = []
    t = moments.windows
    for j, (series, mask) in enumerate(parts):
        m = np.asarray(mask, dtype=bool)
        share = moments.mean[:, 2 * j + 1]
        kept = share * t >= 2.0
        denominator = share[kept]
        part = ResampledMoments(
            mean=(moments.mean[kept, 2 * j] / denominator)[:, None],
            second=(moments.second[kept, 2 * j] / denominator)[:, None],
            windows=int(m.sum()),
        )
        values = np.asarray(series, dtype=np.float64)[m][:, None]
        out.append(bootstrap_intervals(values, part, confidence=confidence, method=method))
    return tuple(out)
