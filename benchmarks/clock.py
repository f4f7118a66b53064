"""Clocks for the benchmarks: CPU seconds of a process and its children, and interleaved timing rounds."""

import math
import resource
import time

ROUNDS = 7  # interleaved rounds; the best is kept
MIN_ROUND_S = 0.3  # each contender repeats its positions until a round lasts this long


def cpu_seconds():
    """User + system CPU seconds of this process and its finished children."""
    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


def race(contenders, n):
    """Seconds per position of each ``callable()`` (which evaluates all ``n`` positions),
    best of ``ROUNDS`` interleaved rounds."""
    repeats = {}
    for name, fn in contenders.items():
        start, reps = time.perf_counter(), 0
        while time.perf_counter() - start < MIN_ROUND_S:
            fn()
            reps += 1
        repeats[name] = reps
    best = dict.fromkeys(contenders, math.inf)
    for _ in range(ROUNDS):
        for name, fn in contenders.items():
            start = time.perf_counter()
            for _ in range(repeats[name]):
                fn()
            best[name] = min(best[name], (time.perf_counter() - start) / (repeats[name] * n))
    return best
