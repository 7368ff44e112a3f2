"""Waiting on other processes by their events, never by the wall clock."""
import subprocess
import time


def ended(p) -> bool:
    """A subprocess or thread that has finished."""
    return p.poll() is not None if isinstance(p, subprocess.Popen) else not p.is_alive()


def wait_until(predicate, what: str, needs=(), detail=lambda: ""):
    """Poll until predicate() holds, with no deadline: a slow machine only waits longer.  Fails at
    once when a process or thread in ``needs`` ends first, so a crash cannot leave the test hanging."""
    while not predicate():
        gone = [p for p in needs if ended(p)]
        if gone and not predicate():
            raise AssertionError(f"waiting for {what}: {gone[0]} ended first {detail()}")
        time.sleep(0.05)        # polling interval, not a limit


def read_until(proc: subprocess.Popen, marker: str) -> list[str]:
    """Lines the process prints on stdout, up to and including the first that starts with
    ``marker``; fails if the process ends before it says it."""
    lines = []
    for line in proc.stdout:
        lines.append(line.rstrip("\n"))
        if line.startswith(marker):
            return lines
    raise AssertionError(f"the process ended before {marker!r}: {lines[-5:]}")


__all__ = ["ended", "read_until", "wait_until"]
