"""Timing shared by the benchmarks (imported as ``timing``: each bench runs as a script)."""

from __future__ import annotations

import time


def best(fn, repeat: int = 5, number: int = 1) -> float:
    """Best mean wall time of ``number`` calls over ``repeat`` runs (seconds per call)."""
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        for _ in range(number):
            fn()
        times.append((time.perf_counter() - start) / number)
    return min(times)
