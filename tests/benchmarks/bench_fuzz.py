"""`clutchfe check` on many generated case files: how many are accepted, refused, and how many get
an answer that is wrong (an internal error, an error line that names no key, NaN or infinity
printed for an accepted case, a stray line on standard error, exit 2 without a reason, a control
character from the file on the terminal).

The inputs come from the generators of tests/test_input_fuzz.py (the demo cases mutated in their
structure and byte by byte) and are judged as the tests there judge them.  Counts of this run, no
timing asserted; exits 1 when any internal error or printed NaN/inf was found, and shows the
smallest input of each kind of wrong answer:

    python3 -m tests.benchmarks.bench_fuzz [N [SEED]]      (from the repository root; N = 10000)
"""
from __future__ import annotations

import os
import random
import re
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")    # as the CLI and the tests

from hypothesis import HealthCheck, Phase, given, seed, settings  # noqa: E402

from tests.test_input_fuzz import CATEGORIES, case_inputs, check_bytes  # noqa: E402

SHOWN = 6           # kinds of message shown per kind of wrong answer, each by its smallest input


def signature(detail: str) -> str:
    """What a wrong answer says, without its numbers and keys: one entry per kind of message."""
    return re.sub(r"\[[^]]*\]|\d+", "#", detail.split(": ", 1)[-1])[:30]


def minimise(data: bytes, category: str, detail: str, folder: Path) -> bytes:
    """The input with every line left out whose absence keeps a wrong answer of this kind."""
    def wrong(candidate: bytes) -> bool:
        return any(c == category and signature(d) == signature(detail) for c, d in check_bytes(candidate, folder)[2])

    lines, changed = data.split(b"\n"), True
    while changed:
        changed, k = False, 0
        while k < len(lines):
            trial = lines[:k] + lines[k + 1:]
            if wrong(b"\n".join(trial)):
                lines, changed = trial, True
            else:
                k += 1
    return b"\n".join(lines)


def fuzz(n: int, rng_seed: int, folder: Path):
    counts: Counter = Counter()
    worst: dict[str, dict] = {c: {} for c in CATEGORIES}      # category -> signature -> smallest

    @seed(rng_seed)
    @settings(max_examples=n, database=None, deadline=None, phases=[Phase.generate],
              suppress_health_check=list(HealthCheck))
    @given(inp=case_inputs())
    def one(inp):
        path, outcome, found = check_bytes(inp.data, folder)
        counts["inputs"] += 1
        counts[f"exit {outcome.status}" if outcome.status in (0, 2, 3) else "exit other"] += 1
        for category in {c for c, _ in found}:
            counts[f"inputs with {category}"] += 1
        for category, detail in found:
            counts[category] += 1
            kept, sig = worst[category], signature(detail)
            if (sig in kept or len(kept) < SHOWN) and len(inp.data) < kept.get(sig, (1e99,))[0]:
                kept[sig] = (len(inp.data), inp, detail)

    one()
    return counts, worst


def main(argv: list[str]) -> int:
    n = int(argv[0]) if argv else 10000
    rng_seed = int(argv[1]) if len(argv) > 1 else random.randrange(2**32)
    with tempfile.TemporaryDirectory(prefix="bench_fuzz-") as scratch:
        t0 = time.process_time()
        counts, worst = fuzz(n, rng_seed, Path(scratch))
        cpu = time.process_time() - t0
        shown = {c: [(detail, inp, minimise(inp.data, c, detail, Path(scratch))) for _, inp, detail in kept.values()]
                 for c, kept in worst.items()}
    inputs = counts["inputs"]
    print(f"clutchfe check on generated case files (seed {rng_seed}: `python3 -m tests.benchmarks.bench_fuzz "
          f"{n} {rng_seed}` draws the same ones)")
    print(f"  inputs                        {inputs:7d}")
    for status in (0, 2, 3):
        k = counts[f"exit {status}"]
        print(f"  exit {status}                        {k:7d}   {100 * k / max(inputs, 1):5.1f} %")
    rows = (("internal errors (exit 1 or exceptions)", "internal"), ("error lines not naming a key", "unnamed"),
            ("NaN/inf printed (accepted cases)", "nonfinite"), ("stray lines on stderr", "stray line"),
            ("exit 2 without an error line", "silent"), ("control characters printed", "control"))
    for words, category in rows:
        print(f"  {words:<40} {counts[category]:7d}   (in {counts[f'inputs with {category}']} inputs)")
    print(f"  CPU seconds per input         {cpu / max(inputs, 1):7.4f}")
    for words, category in rows:
        for detail, inp, small in shown[category]:
            print(f"\n{words}: {detail}\n  from: {inp.label[:300]}\n  minimal input ({len(small)} bytes): {small!r}")
    return 1 if counts["internal"] or counts["nonfinite"] else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
