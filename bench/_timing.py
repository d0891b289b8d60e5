"""Timing helpers for bench/run.py: median wall time of repeated calls."""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable
from typing import Any

__all__ = ["median_seconds"]


def median_seconds(fn: Callable[[], Any], repeats: int, *, warmup: int = 1) -> tuple[float, Any]:
    """Median wall time in seconds of ``repeats`` calls of ``fn`` after ``warmup`` calls.

    Returns the median and the last result (so the caller can report e.g. iterations).
    """
    result = None
    for _ in range(warmup):
        result = fn()
    times = []
    for _ in range(max(1, repeats)):
        t0 = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), result
