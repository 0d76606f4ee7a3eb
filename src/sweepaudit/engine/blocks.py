"""Blocks of configurations and the memory budget that sizes them; the resamples' weights kept drawn.

The memory budget bounds the audit's working memory beyond the sweep itself: the resampled moments
held at once, the weights kept drawn and one block's temporaries. When the ``B x N`` moments of the
whole sweep fit it, the audit computes them at once (the in-memory path); otherwise it streams over
blocks of configurations whose width the budget sets, keeping only small per-configuration
summaries (intervals, variances, the data-snooping maxima per resample), so its memory does not grow
with N beyond them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..resample import ResampledMoments, Resamples, moment_chunk, resampled_moments

__all__ = [
    "MEMORY_BUDGET",
    "BlockPlan",
    "plan_blocks",
    "budget_for_width",
    "WeightTable",
    "block_moments",
]

#: Default working-memory budget of an audit, bytes (beyond the sweep's own T x N returns).
MEMORY_BUDGET = 768 * 2**20
#: B x N float64 arrays alive at once on the in-memory path (means, second moments, Sharpe ratios
#: and the quantile and snooping temporaries).
IN_MEMORY_ARRAYS = 6
#: B x width float64 arrays alive at once in one block's task (the same, plus the snooping draws).
BLOCK_ARRAYS = 8


@dataclass(frozen=True)
class BlockPlan:
    """How an audit of ``configurations`` columns runs within its memory budget.

    Attributes
    ----------
    in_memory : bool
        The whole ``B x N`` moments fit the budget.
    width : int
        Configurations per block on the streamed path.
    keep_weights : bool
        The ``B x T`` weights are kept drawn (as small integers) instead of redrawn for each block
        (in memory: for the time structure's product, when they fit beside the moments).
    budget : int
        The budget in bytes.
    """

    in_memory: bool
    width: int
    keep_weights: bool
    budget: int

    def blocks(self, configurations: int) -> list[tuple[int, int]]:
        """``(start, stop)`` column ranges covering ``configurations`` in order."""
        return [(a, min(a + self.width, configurations)) for a in range(0, configurations, self.width)]


def plan_blocks(configurations: int, windows: int, resamples: int, budget: int | None = None) -> BlockPlan:
    """The plan for an audit of this shape within ``budget`` bytes (default :data:`MEMORY_BUDGET`)."""
    budget = MEMORY_BUDGET if budget is None else int(budget)
    n, t, b = int(configurations), int(windows), int(resamples)
    chunk_bytes = _chunk_bytes(t, b)
    in_memory = IN_MEMORY_ARRAYS * b * n * 8 + chunk_bytes <= budget
    table_bytes = WeightTable.bytes_for(b, t)
    # In memory, the kept weights serve the time structure's second product, within the budget.
    keep = table_bytes <= budget // 4 and (
        not in_memory or IN_MEMORY_ARRAYS * b * n * 8 + chunk_bytes + table_bytes <= budget)
    free = budget - chunk_bytes - (table_bytes if keep else 0)
    width = max(1, min(n, free // (BLOCK_ARRAYS * b * 8)))
    return BlockPlan(in_memory=in_memory, width=int(width), keep_weights=keep, budget=budget)


def _chunk_bytes(windows: int, resamples: int) -> int:
    """One chunk of float64 weights and the counts it is made from."""
    return 2 * min(moment_chunk(windows), resamples) * windows * 8


def budget_for_width(width: int, windows: int, resamples: int) -> int:
    """The smallest budget whose streamed blocks hold ``width`` configurations (for tests and
    benchmarks that want blocks of a given width); the weights are kept when that budget allows."""
    table = WeightTable.bytes_for(resamples, windows)
    plain = _chunk_bytes(windows, resamples) + int(width) * BLOCK_ARRAYS * int(resamples) * 8
    return plain + table if table <= (plain + table) // 4 else plain


class WeightTable:
    """Every resample's weights, drawn once and kept as the smallest unsigned integers that hold them.

    A weight counts how often a window is drawn in a resample (at most T), so ``uint8`` or
    ``uint16`` hold it exactly: ``B x T`` bytes or twice that, against 8 for float64. Each block of
    configurations reads the same weights instead of drawing them again.
    """

    def __init__(self, resamples: Resamples, *, lazy: bool = False) -> None:
        self.resamples = resamples
        dtype = self.dtype_for(resamples.windows)
        self.table = np.empty((resamples.count, resamples.windows), dtype=dtype)
        self._filled = False
        if not lazy:
            for _ in self._filling(moment_chunk(resamples.windows)):
                pass

    def _filling(self, chunk: int):
        """Draw the weights into the table, yielding each chunk as float64 as it is drawn."""
        done = 0
        for counts in self.resamples.count_chunks(chunk):
            self.table[done : done + counts.shape[0]] = counts
            done += counts.shape[0]
            yield counts
        self._filled = True

    @staticmethod
    def dtype_for(windows: int) -> type:
        return np.uint8 if windows < 256 else np.uint16 if windows < 65_536 else np.uint32

    @classmethod
    def bytes_for(cls, resamples: int, windows: int) -> int:
        return int(resamples) * int(windows) * np.dtype(cls.dtype_for(windows)).itemsize

    def chunks(self, chunk: int):
        """The weights as float64, ``chunk`` resamples at a time.

        A ``lazy`` table is drawn on its first reading, chunk by chunk as the reader takes them (so
        the drawing overlaps the reader's products), and read from the table afterwards: the same
        weights either way. One reader at a time: the streamed executors fill their tables eagerly.
        """
        if not self._filled:
            yield from self._filling(chunk)
            return
        for start in range(0, self.table.shape[0], chunk):
            yield self.table[start : start + chunk].astype(np.float64)


def block_moments(
    block: np.ndarray, resamples: Resamples, table: WeightTable | None = None, threads: int = 1
) -> ResampledMoments:
    """The resampled moments of one block of configurations, from kept weights when given, the
    chunks' products on ``threads`` threads (the same bits whatever the count)."""
    chunk = moment_chunk(resamples.windows)
    weights = None if table is None else table.chunks(chunk)
    return resampled_moments(block, resamples, chunk=chunk, weights=weights, threads=threads)
