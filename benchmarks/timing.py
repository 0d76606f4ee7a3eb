"""The benchmarks' shared yardsticks: the median wall time of repeated runs (``time.perf_counter``),
and busy loops that load the machine for a measurement under load."""

from __future__ import annotations

import contextlib
import multiprocessing
import statistics
import time
from collections.abc import Callable, Iterator
from typing import Any


def median_seconds(fn: Callable[[], Any], repeats: int) -> float:
    """The median of ``repeats`` timed calls of ``fn``."""
    times = []
    for _ in range(repeats):
        started = time.perf_counter()
        fn()
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def _spin(stop_at: float) -> None:
    while time.time() < stop_at:
        pass


@contextlib.contextmanager
def busy_loops(count: int, settle: float = 20.0) -> Iterator[None]:
    """``count`` single-process busy loops for the block, then ended by this process (by their own
    process objects, never by name); waits ``settle`` seconds so the one-minute load average sees them."""
    loops = [multiprocessing.Process(target=_spin, args=(time.time() + 3600,)) for _ in range(count)]
    for p in loops:
        p.start()
    try:
        time.sleep(settle)
        yield
    finally:
        for p in loops:
            p.terminate()
            p.join()
