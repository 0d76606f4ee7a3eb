"""The in-process executor of the block pipeline, and the in-memory moments of a small audit.

Every bootstrap-based method of an audit consumes one :class:`~sweepaudit.resample.ResampledMoments`
computed here, ``weights @ returns / T`` chunk by chunk (Politis and Romano 1994 for the stationary
bootstrap's weights). When the ``B x N`` moments fit the memory budget,
:func:`moments_and_intervals` computes them for all configurations at once. Otherwise the audit
streams: :class:`InProcess` runs a pure per-block task on each block of configurations in turn, the
block's moments computed from the same resamples (their weights drawn once and kept), and the caller
combines the tasks' small summaries. :class:`~sweepaudit.engine.cluster.DaskCluster` runs the same
tasks on Dask workers.

References
----------
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from typing import Any

import numpy as np

from ..resample import ResampledMoments, Resamples, moment_chunk, resampled_moments
from ..results import BootstrapIntervals
from .blocks import WeightTable, block_moments
from .threads import free_cores, single_threaded

__all__ = ["IntervalFunction", "InProcess", "moments_and_intervals"]

#: The per-block statistic: ``intervals(returns_block, moments_block) -> BootstrapIntervals``.
IntervalFunction = Callable[[np.ndarray, ResampledMoments], BootstrapIntervals]
Progress = Callable[[int, int], None]


def moments_and_intervals(
    returns: np.ndarray,
    resamples: Resamples,
    *,
    intervals: IntervalFunction,
    progress: Progress | None = None,
    threads: int | None = None,
) -> tuple[ResampledMoments, BootstrapIntervals]:
    """The shared resampled moments of every configuration at once and the intervals from them.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Excess returns, windows in rows.
    resamples : Resamples
        The audit's resamples (drawn once).
    intervals : callable
        The intervals of the configurations from their moments.
    progress : callable, optional
        ``progress(done, total)`` in resamples.
    threads : int, optional
        Threads for the products, each running single-threaded BLAS on its own chunk of resamples
        (default: :func:`~sweepaudit.engine.threads.free_cores`; the figures do not depend on it).
    """
    b = resamples.count
    with single_threaded():
        moments = resampled_moments(
            returns, resamples, chunk=moment_chunk(returns.shape[0]), threads=threads or free_cores(),
            progress=(lambda done: progress(done, b)) if progress else None,
        )
    return moments, intervals(returns, moments)


class InProcess:
    """Runs the block tasks in this process, one block after another (the default executor).

    A task is ``task(block, start)`` or, with resamples, ``task(block, moments, start)``: a pure
    function of the block's returns (and their resampled moments) to a small summary.
    """

    name = "in-process"

    def __init__(self, *, threads: int | None = None) -> None:
        self.threads = threads
        self._table: WeightTable | None = None

    def _weights(self, resamples: Resamples, keep: bool) -> WeightTable | None:
        if not keep:
            return None
        if self._table is None or self._table.resamples != resamples or self._table.resamples.seed is None:
            self._table = WeightTable(resamples)
        return self._table

    def map(
        self,
        matrix: np.ndarray,
        blocks: list[tuple[int, int]],
        task: Callable[..., Any],
        *,
        resamples: Resamples | None = None,
        keep_weights: bool = True,
        progress: Callable[[int], None] | None = None,
    ) -> Iterator[Any]:
        """Each block's summary, in block order; ``progress(columns done)`` after each block."""
        table = self._weights(resamples, keep_weights) if resamples is not None else None
        threads = self.threads or free_cores()
        for start, stop in blocks:
            block = matrix[:, start:stop]
            if resamples is None:
                yield task(block, start)
            else:
                with single_threaded():
                    moments = block_moments(block, resamples, table, threads)
                yield task(block, moments, start)
            if progress is not None:
                progress(stop)

    def each(self, function: Callable[[Any], Any], items) -> Iterator[Any]:
        """``function(item)`` for every item, in order (for independent work such as the audits of
        a calibration)."""
        for item in items:
            yield function(item)

    def close(self) -> None:
        self._table = None
