"""Waiting on other processes by their events, never by the wall clock."""
import subprocess
import sys
import time
from pathlib import Path


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


def stored_samples(folder: Path) -> int:
    """Samples in a study folder's store (0 while it does not exist yet)."""
    from clutchfe.study import read_store
    try:
        return len(read_store(Path(folder) / "samples.sqlite"))
    except Exception:  # noqa: BLE001 - not created yet
        return 0


STUDY_CHILD = "import sys; from clutchfe.study import run_study; run_study(sys.argv[1], workers=1, out=sys.argv[2])"


def stop_study(path: Path, out: Path, signal_number: int, after: int, log: Path) -> int:
    """Run a study in a child process, send it ``signal_number`` once ``after`` samples are stored,
    and return how many samples it kept.  The child's stderr goes to ``log`` (a file, not a pipe
    nobody reads while waiting: a full pipe would stall the child)."""
    with open(log, "wb") as err:
        proc = subprocess.Popen([sys.executable, "-c", STUDY_CHILD, str(path), str(out)],
                                stdout=subprocess.DEVNULL, stderr=err)
    try:
        wait_until(lambda: stored_samples(out) >= after, f"{after} stored samples", needs=[proc],
                   detail=lambda: Path(log).read_text(errors="replace")[-2000:])
        proc.send_signal(signal_number)
        proc.wait()
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    return stored_samples(out)


__all__ = ["ended", "read_until", "stop_study", "stored_samples", "wait_until"]
