"""The benchmarks' one timer: CPU seconds (time.process_time), best of a few repeats, so a ratio of two
such figures measured in one run does not depend on what else the 2-core machine is doing."""
import time

REPEATS = 3


def best(fn, repeats=REPEATS):
    """(least CPU seconds of ``repeats`` calls of fn, the last call's result)."""
    t_best, out = float("inf"), None
    for _ in range(repeats):
        t0 = time.process_time()
        out = fn()
        t_best = min(t_best, time.process_time() - t0)
    return t_best, out
