"""The block pipeline over configurations: the shared resampled moments and intervals of an audit.

``engine.local`` runs it in this process, in memory or streamed over blocks of configurations when
the ``B x N`` moments exceed the memory budget.
"""

from .local import BLOCK_BUDGET, MEMORY_BUDGET, IntervalFunction, moments_and_intervals

__all__ = ["BLOCK_BUDGET", "MEMORY_BUDGET", "IntervalFunction", "moments_and_intervals"]
