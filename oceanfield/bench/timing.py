"""How the benchmark times: medians of repeated calls, two functions interleaved.

Knows nothing of formulas or of what it times: any callable.
"""

from __future__ import annotations

import statistics
import time
from typing import Callable

__all__ = ["time_call"]


def time_call(function: Callable[[], object], *, repeat: int, warmup: int = 1) -> float:
    """Median wall time in seconds of ``function()`` over ``repeat`` calls after ``warmup``."""
    for _ in range(warmup):
        function()
    samples = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        samples.append(time.perf_counter() - start)
    return statistics.median(samples)


def _timed_pair(first: Callable[[], object], second: Callable[[], object], repeat: int) -> tuple[float, ...]:
    """Median wall and process CPU seconds of ``first`` and ``second``, interleaved so
    drift in machine load hits both alike: (wall 1, wall 2, CPU 1, CPU 2)."""
    first()
    second()
    samples: list[list[float]] = [[], [], [], []]
    for _ in range(repeat):
        for index, function in enumerate((first, second)):
            wall, cpu = time.perf_counter(), time.process_time()
            function()
            samples[index].append(time.perf_counter() - wall)
            samples[2 + index].append(time.process_time() - cpu)
    return tuple(statistics.median(values) for values in samples)
