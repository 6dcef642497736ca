"""Timing helper shared by the benchmark scripts."""

import time


def best(fun, repeat):
    """Shortest wall time of ``repeat`` calls of ``fun`` (seconds)."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fun()
        times.append(time.perf_counter() - t0)
    return min(times)
