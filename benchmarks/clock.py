"""Clocks for the benchmarks: CPU seconds, a timed run of a config, and interleaved timing rounds."""

import json
import math
import resource
import time

from planetfit import pipeline

ROUNDS = 7  # interleaved rounds; the best is kept
MIN_ROUND_S = 0.3  # each contender repeats its positions until a round lasts this long


def cpu_seconds():
    """User + system CPU seconds of this process and its finished children."""
    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


def timed_run(config_path, **options):
    """``pipeline.run(config_path, quiet=True, **options)``: its summary.json (as users' scripts read it), wall and
    CPU seconds."""
    wall, cpu = time.perf_counter(), cpu_seconds()
    run_dir = pipeline.run(config_path, quiet=True, **options).path
    wall, cpu = time.perf_counter() - wall, cpu_seconds() - cpu
    return json.loads((run_dir / "summary.json").read_text()), wall, cpu


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
