"""What the benchmarks share: the best of a few timed runs (README, "Benchmark")."""

from __future__ import annotations

import time


def timed(fn, repeat: int = 3):
    """(best wall time in seconds over ``repeat`` calls of ``fn``, the last result)."""
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out
