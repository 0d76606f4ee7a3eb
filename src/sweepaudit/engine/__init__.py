"""The block pipeline over configurations: the shared resampled moments, in memory or over blocks.

``engine.blocks`` sizes the blocks from the memory budget and keeps the resamples' weights drawn;
``engine.local`` runs the in-memory moments and the in-process executor; ``engine.cluster`` runs the
same block tasks on Dask (dask.distributed); ``engine.threads`` is the BLAS thread policy.
"""

from .blocks import MEMORY_BUDGET, BlockPlan, WeightTable, block_moments, budget_for_width, plan_blocks
from .local import InProcess, IntervalFunction, moments_and_intervals
from .threads import blas_threads, free_cores, meanwhile, side_by_side, single_threaded

__all__ = [
    "MEMORY_BUDGET",
    "BlockPlan",
    "InProcess",
    "IntervalFunction",
    "WeightTable",
    "blas_threads",
    "block_moments",
    "budget_for_width",
    "executor_for",
    "free_cores",
    "meanwhile",
    "moments_and_intervals",
    "plan_blocks",
    "side_by_side",
    "single_threaded",
]


def executor_for(scheduler: str | None = None, workers: int | None = None):
    """The executor an audit runs its blocks on: Dask at ``scheduler`` (or the address in
    ``SWEEPAUDIT_SCHEDULER``), a local Dask cluster of ``workers`` processes, or in process."""
    from .cluster import scheduler_from_environment

    address = scheduler or scheduler_from_environment()
    if address or workers:
        from .cluster import DaskCluster

        return DaskCluster(scheduler=address, workers=workers)
    return InProcess()
