"""The thread policy: BLAS threads for the big products only, sized to the cores actually free.

Only the ``weights @ returns`` products gain from a second core. Every other BLAS call of an audit
(small products, the eigenvalues of the effective-trials step, least squares) runs on one thread:
OpenBLAS threads spin while they wait for a core, so on a busy machine a multi-threaded small call
can run tens of times slower than a single-threaded one (measured: the eigenvalue step 40-75x
slower at a load of 4 on two cores; see ``docs/performance.md``).

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
from collections.abc import Iterator

__all__ = ["THREADS_VARIABLE", "free_cores", "blas_threads", "single_threaded"]

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
