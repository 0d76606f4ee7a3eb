"""The benchmarks' shared yardstick: the median wall time of repeated runs (``time.perf_counter``)."""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable
from typing import Any


def median_seconds(fn: Callable[[], Any], repeats: int) -> float:
    """The median of ``repeats`` timed calls of ``fn``."""
    times = []
    for _ in range(repeats):
        started = time.perf_counter()
        fn()
        times.append(time.perf_counter() - started)
    return statistics.median(times)
