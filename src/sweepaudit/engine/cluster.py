"""The Dask executor: the same block tasks on the workers of a dask.distributed cluster.

With a scheduler address (``--scheduler`` / ``SWEEPAUDIT_SCHEDULER``) the blocks go to that
cluster; with a number of workers (``--workers``) a local cluster of that many worker processes is
started for the audit and closed after it. Dask schedules; sweepaudit only submits one pure task per
block of configurations and combines the small summaries that come back, in block order:

* the client scatters each block's returns (``T x width`` float64) to the cluster and submits
  ``task(block, [moments,] start)``; the resamples travel as their definition (seed, count, kind,
  block length: a few bytes), and each worker regenerates their weights once and keeps them for
  every block it runs (:class:`~sweepaudit.engine.blocks.WeightTable`);
* at most a few blocks per worker are in flight, so the client's memory stays bounded as on the
  in-process path;
* workers must run the same sweepaudit version (the tasks are its functions, pickled by reference).

The workers of a local cluster run one thread each with single-threaded BLAS (Dask's default for
worker processes), so two workers use two cores, and without the ``MALLOC_TRIM_THRESHOLD_`` Dask
gives worker processes by default (it made every audit on a worker 1.8x slower: each array above
128 KiB mapped and unmapped again). Workers of a cluster of your own should be started without it
too: set ``distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_`` to null in their Dask
configuration.
"""

from __future__ import annotations

import logging
import os
from collections.abc import Callable, Iterator
from typing import Any

import numpy as np

from ..errors import InputError
from ..resample import Resamples
from .blocks import WeightTable, block_moments

__all__ = ["SCHEDULER_VARIABLE", "DaskCluster", "scheduler_from_environment"]

#: Environment variable naming a Dask scheduler address (e.g. ``tcp://10.0.0.5:8786``).
SCHEDULER_VARIABLE = "SWEEPAUDIT_SCHEDULER"
#: How long to wait for a named scheduler before giving up.
CONNECT_TIMEOUT = "20s"
#: Blocks in flight per worker.
IN_FLIGHT_PER_WORKER = 2
#: The Dask setting that gives worker processes MALLOC_TRIM_THRESHOLD_ (unset for local workers).
UNTRIMMED = "distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_"

# The weights a worker process keeps for the resamples it last saw (one audit at a time).
_KEPT: dict[str, WeightTable] = {}


def scheduler_from_environment() -> str | None:
    """The scheduler address in ``SWEEPAUDIT_SCHEDULER``, or None."""
    address = os.environ.get(SCHEDULER_VARIABLE, "").strip()
    return address or None


def _worker_weights(resamples: Resamples, keep: bool) -> WeightTable | None:
    if not keep or resamples.seed is None:  # replayed indices travel with the resamples
        return None
    table = _KEPT.get("table")
    if table is None or table.resamples != resamples:
        _KEPT.clear()
        table = _KEPT["table"] = WeightTable(resamples)
    return table


def run_block(block: np.ndarray, start: int, task: Callable[..., Any], resamples: Resamples | None, keep: bool) -> Any:
    """What a worker runs for one block: its moments from the regenerated resamples, then the task."""
    if resamples is None:
        return task(block, start)
    return task(block, block_moments(block, resamples, _worker_weights(resamples, keep)), start)


class DaskCluster:
    """Runs the block tasks on a Dask cluster: one at ``scheduler``, or a local one of ``workers``
    worker processes.

    Parameters
    ----------
    scheduler : str, optional
        Address of a running scheduler.
    workers : int, optional
        Worker processes of a local cluster started here (when no scheduler is named).
    """

    name = "dask"

    def __init__(self, *, scheduler: str | None = None, workers: int | None = None) -> None:
        try:
            from distributed import Client, LocalCluster
        except ImportError as error:  # pragma: no cover - a dependency
            raise InputError("the Dask executor needs dask.distributed: pip install 'dask[distributed]'") from error
        self._cluster = None
        if scheduler:
            try:
                self.client = Client(scheduler, timeout=CONNECT_TIMEOUT)
            except OSError as error:
                raise InputError(f"cannot reach the Dask scheduler at {scheduler!r}: {error}") from None
        else:
            count = max(1, int(workers or 1))
            # The scheduler's HTTP server on a free port: its default (8787) may be taken by another
            # cluster on the machine, and another audit's local cluster must not collide with it.
            # Dask starts worker processes with MALLOC_TRIM_THRESHOLD_ set, which turns off glibc's
            # adaptive mmap threshold: every array above 128 KiB is then mapped, faulted in and
            # unmapped again, and an audit of 200 x 500 ran 1.8x slower on a worker than in process
            # (docs/performance.md). Our local workers start without it.
            import dask

            with dask.config.set({UNTRIMMED: None}):
                self._cluster = LocalCluster(
                    n_workers=count, threads_per_worker=1, processes=True, dashboard_address=":0",
                    silence_logs=logging.ERROR,
                )
            self.client = Client(self._cluster)
        self.address = self.client.scheduler.address

    @property
    def workers(self) -> int:
        return max(1, len(self.client.scheduler_info()["workers"]))

    def each(self, function: Callable[..., Any], items, shared: Any = None) -> Iterator[Any]:
        """``function(item)`` for every item on the workers, in order, a few items per worker in flight;
        with ``shared``, ``function(item, shared)``, the shared object sent to every worker once."""
        if shared is None:
            yield from self._ordered(((function, item) for item in items),
                                     lambda f, item: self.client.submit(f, item, pure=False))
            return
        # A key of its own (hash=False): a second scatter of equal data must not share, and then
        # release, the first one's key. Held here until the last item is done.
        kept = self.client.scatter(shared, broadcast=True, hash=False)
        try:
            yield from self._ordered(((function, item) for item in items),
                                     lambda f, item: self.client.submit(f, item, kept, pure=False))
        finally:
            kept.release()

    def _ordered(self, work, submit_one) -> Iterator[Any]:
        """Results of ``submit_one(*piece)`` for every piece of ``work``, in order, with a bounded
        number in flight (Dask schedules them)."""
        from distributed import as_completed

        limit = IN_FLIGHT_PER_WORKER * self.workers
        pending = iter(work)
        running = as_completed()
        index_of: dict[str, int] = {}
        done: dict[int, Any] = {}
        submitted = emitted = 0

        def submit() -> bool:
            nonlocal submitted
            piece = next(pending, None)
            if piece is None:
                return False
            future = submit_one(*piece)
            index_of[future.key] = submitted
            running.add(future)
            submitted += 1
            return True

        while submitted - emitted - len(done) < limit and submit():
            pass
        for future in running:
            done[index_of.pop(future.key)] = future.result()  # a task's error is raised here, as in process
            future.release()
            submit()
            while emitted in done:
                yield done.pop(emitted)
                emitted += 1

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
        """Each block's summary, in block order, with a bounded number of blocks in flight."""

        def submit_one(start: int, stop: int):
            data = self.client.scatter(np.ascontiguousarray(matrix[:, start:stop]))
            return self.client.submit(run_block, data, start, task, resamples, keep_weights, pure=False)

        for (start, stop), summary in zip(blocks, self._ordered(blocks, submit_one)):
            yield summary
            if progress is not None:
                progress(stop)

    def kept_weights(self, resamples: Resamples) -> None:
        """None: the weights stay on the workers (the client draws them again when it needs them)."""
        return None

    def close(self) -> None:
        self.client.close()
        if self._cluster is not None:
            self._cluster.close()
