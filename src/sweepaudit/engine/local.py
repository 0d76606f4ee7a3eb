"""The in-process executor of the block pipeline: the shared resampled moments and the intervals.

Every bootstrap-based method of an audit consumes one :class:`~sweepaudit.resample.ResampledMoments`
computed here, ``weights @ returns / T`` chunk by chunk (Politis and Romano 1994 for the stationary
bootstrap's weights). When the ``B x N`` moments fit ``memory_budget`` they are computed for all
configurations at once; otherwise the configurations are streamed in blocks: each block's moments
(the same resamples, regenerated from the seed) give that block's statistics exactly as in memory,
and only small per-block summaries are kept: the resampled means in float64 (the data-snooping tests
need only them, reduced over configurations block by block) and the resampled Sharpe ratios in
float32 (relative rounding 6e-8, far below bootstrap noise; they only serve re-levelling intervals
and plots). The per-block statistic is a pure function passed in, so another executor (a later
Dask one) can run the same tasks on blocks elsewhere.

References
----------
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from ..resample import ResampledMoments, Resamples, moment_chunk, resampled_moments
from ..results import BootstrapIntervals

__all__ = ["MEMORY_BUDGET", "BLOCK_BUDGET", "IntervalFunction", "moments_and_intervals"]

# Above this many bytes for the B x N resampled means, second moments and Sharpe ratios held at
# once in float64, the audit streams over blocks of configurations instead.
MEMORY_BUDGET = 4 * 2**30
# Bytes of float64 B x n temporaries one block of configurations may use in the streamed path.
BLOCK_BUDGET = 1_500 * 2**20

#: The per-block statistic: ``intervals(returns_block, moments_block) -> BootstrapIntervals``.
IntervalFunction = Callable[[np.ndarray, ResampledMoments], BootstrapIntervals]
Progress = Callable[[int, int], None]


def moments_and_intervals(
    returns: np.ndarray,
    resamples: Resamples,
    *,
    intervals: IntervalFunction,
    memory_budget: int | None = None,
    progress: Progress | None = None,
) -> tuple[ResampledMoments, BootstrapIntervals]:
    """The shared resampled moments of every configuration and the intervals computed from them.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Excess returns, windows in rows.
    resamples : Resamples
        The audit's resamples (drawn once).
    intervals : callable
        The intervals of a block of configurations from its moments (pure; see module docstring).
    memory_budget : int, optional
        Bytes the full ``B x N`` moments may take before streaming (default :data:`MEMORY_BUDGET`).
    progress : callable, optional
        ``progress(done, total)`` in resamples.

    Returns
    -------
    (ResampledMoments, BootstrapIntervals)
        In the streamed case the moments keep only the means (``second`` is None).
    """
    budget = MEMORY_BUDGET if memory_budget is None else memory_budget
    t, n = returns.shape
    b = resamples.count
    if 3 * b * n * 8 <= budget:
        moments = resampled_moments(
            returns, resamples, chunk=moment_chunk(t), progress=(lambda done: progress(done, b)) if progress else None
        )
        return moments, intervals(returns, moments)
    return _streamed(returns, resamples, intervals, progress)


def _streamed(returns, resamples, intervals: IntervalFunction, progress: Progress | None):
    """Configurations in blocks of at most BLOCK_BUDGET bytes of float64 temporaries."""
    t, n = returns.shape
    b = resamples.count
    width = max(1, min(n, BLOCK_BUDGET // (5 * 8 * b)))
    mean = np.empty((b, n), dtype=np.float64)
    sharpe = np.empty((b, n), dtype=np.float32)
    degenerate = np.zeros(b, dtype=bool)
    mean_iv: list = []
    sharpe_iv: list = []
    scales: list[list[np.ndarray]] = [[], [], []]
    block_iv = None
    for start in range(0, n, width):
        cols = slice(start, min(n, start + width))
        block = resampled_moments(returns[:, cols], resamples, chunk=moment_chunk(t))
        block_iv = intervals(returns[:, cols], block)
        mean[:, cols] = block_iv.mean_distribution
        sharpe[:, cols] = block_iv.sharpe_distribution
        degenerate |= ~np.isfinite(block_iv.sharpe_distribution).all(axis=1)
        mean_iv += block_iv.mean
        sharpe_iv += block_iv.sharpe
        for kept, part in zip(scales, (block_iv.mean_standard_error, block_iv.sharpe_standard_error,
                                       block_iv.degrees_of_freedom)):
            if part is not None:
                kept.append(part)
        del block
        if progress is not None:
            progress(round(b * cols.stop / n), b)
    combined = BootstrapIntervals(
        mean=tuple(mean_iv),
        sharpe=tuple(sharpe_iv),
        mean_distribution=mean,
        sharpe_distribution=sharpe,
        confidence=block_iv.confidence,
        method=block_iv.method,
        degenerate_resamples=int(degenerate.sum()),
        mean_standard_error=np.concatenate(scales[0]) if scales[0] else None,
        sharpe_standard_error=np.concatenate(scales[1]) if scales[1] else None,
        degrees_of_freedom=np.concatenate(scales[2]) if scales[2] else None,
    )
    return ResampledMoments(mean=mean, second=None, windows=t), combined
