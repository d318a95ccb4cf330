"""Timing helpers shared by the benchmarks (best of a few repeats, same process)."""

import platform
import time

import numpy as np


def best_time(fn, repeats=3):
    """Best wall time of ``repeats`` calls (s); the first call is a warm-up (compilation)."""
    fn()
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def machine():
    import os

    return f"{platform.machine()} {platform.processor() or ''} {os.cpu_count()} cores".strip()
