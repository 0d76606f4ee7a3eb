"""The thread policy: BLAS threads for the big products only, sized to the cores actually free.

Only the ``weights @ returns`` products gain from a second core. Every other BLAS call of an audit
(small products, the eigenvalues of the effective-trials step, least squares) runs on one thread:
OpenBLAS threads spin while they wait for a core, so on a busy machine a multi-threaded small call
can run tens of times slower than a single-threaded one (measured: the effective-trials eigenvalue
step of 1,000 configurations 4.5 s on two threads against 0.47 s on one with 4 busy loops on two
cores, ``benchmarks/blas_threads_load.py``; see ``docs/performance.md``).

The products get ``free_cores()`` threads: the cores this process may run on
(``os.sched_getaffinity``) less the load the rest of the machine puts on them (the one-minute load
average less this process's own running thread, rounded), at least one. ``SWEEPAUDIT_THREADS``
overrides the count. Each thread multiplies its own chunk of resamples with single-threaded BLAS
(:func:`sweepaudit.resample.resampled_moments`): a multi-threaded OpenBLAS product may split a
matrix so that its last bits depend on the thread count, while a row of a product never depends on
the other rows, so the audit's figures are the same bits whatever the load.
"""

from __future__ import annotations

import contextlib
import os
import threading
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import Future
from typing import Any, TypeVar

__all__ = ["THREADS_VARIABLE", "free_cores", "blas_threads", "meanwhile", "side_by_side", "single_threaded"]

T = TypeVar("T")

#: Environment variable that fixes the BLAS threads of the products (a whole number >= 1).
THREADS_VARIABLE = "SWEEPAUDIT_THREADS"


def _cores() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not on Linux
        return max(1, os.cpu_count() or 1)


def free_cores(load: float | None = None) -> int:
    """Cores free for this process: its allowed cores less the machine's load, at least one.

    Parameters
    ----------
    load : float, optional
        The load to subtract (default: the one-minute load average).
    """
    fixed = os.environ.get(THREADS_VARIABLE, "").strip()
    if fixed.isdigit() and int(fixed) >= 1:
        return int(fixed)
    cores = _cores()
    if load is None:
        try:
            load = os.getloadavg()[0]
        except OSError:
            load = 0.0
    # The load average counts this process's own running thread: the others' load is one less.
    return max(1, min(cores, cores - int(round(max(0.0, load - 1.0)))))


@contextlib.contextmanager
def blas_threads(threads: int) -> Iterator[None]:
    """BLAS (OpenBLAS, MKL, BLIS) limited to ``threads`` threads inside the block."""
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=max(1, int(threads)), user_api="blas"):
        yield


def single_threaded() -> contextlib.AbstractContextManager[None]:
    """BLAS on one thread: everything of an audit but the big products."""
    return blas_threads(1)


def side_by_side(calls: Sequence[Callable[[], T]], threads: int | None = None) -> list[T]:
    """Independent calls on up to ``threads`` threads (default :func:`free_cores`), results in call order.

    For numpy-heavy work that releases the GIL (the sensitivity block's alternatives). BLAS stays on
    one thread for the whole run, so each call's figures are the same bits on any number of threads;
    on a busy machine (one free core) the calls run one after another in this thread.
    """
    count = min(len(calls), threads or free_cores())
    if count <= 1:
        return [call() for call in calls]
    from concurrent.futures import ThreadPoolExecutor

    with single_threaded(), ThreadPoolExecutor(max_workers=count) as pool:
        return list(pool.map(lambda call: call(), calls))


def meanwhile(call: Callable[[], T], threads: int | None = None) -> Future:
    """Start ``call`` on a thread of its own when a second core is free (else run it now); its
    result, or its exception, from the returned future's ``result()``.

    The caller keeps BLAS on one thread while the call runs (an audit does, throughout), and the
    call must not emit warnings the caller records in order (return them instead).
    """
    if (threads or free_cores()) > 1:
        thread = _Thread(call)
        thread.start()
        return thread.future
    future: Future = Future()
    try:
        future.set_result(call())
    except BaseException as error:  # handed to result(), as a thread's would be
        future.set_exception(error)
    return future


class _Thread(threading.Thread):
    """A daemon thread that runs one call into a future."""

    def __init__(self, call: Callable[[], Any]) -> None:
        super().__init__(daemon=True, name="sweepaudit-meanwhile")
        self.call = call
        self.future: Future = Future()

    def run(self) -> None:
        try:
            self.future.set_result(self.call())
        except BaseException as error:
            self.future.set_exception(error)
