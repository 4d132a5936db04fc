"""Timing helpers shared by the benchmark sections (figures, never pass or fail)."""

from __future__ import annotations

import statistics
import time


def best(fn, repeat: int) -> float:
    """The shortest of ``repeat`` runs of ``fn()``, seconds."""
    out = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        out = min(out, time.perf_counter() - t)
    return out


def median_time(fn, args) -> float:
    """The median time of ``fn(a)`` over ``args``, seconds."""
    times = []
    for a in args:
        t = time.perf_counter()
        fn(a)
        times.append(time.perf_counter() - t)
    return statistics.median(times)
