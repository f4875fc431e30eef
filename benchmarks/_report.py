"""Shared pieces of the benchmarks: timing, and one line format for results (read by run_all.py)."""

from __future__ import annotations

import statistics
import time


def ratio_line(name: str, ours: str, reference: str, ratio: float, target: str, met: bool) -> None:
    """Print one result as ``RESULT|name|ours|reference|ratio|target|met``."""
    print(f"RESULT|{name}|{ours}|{reference}|{ratio:.3g}|{target}|{'yes' if met else 'NO'}")


def median_time(fn, repeat: int) -> float:
    """Median wall time of ``fn()`` over ``repeat`` calls, in s."""
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)
