"""What a command costs as a whole process: `clutchfe check`, the default demo `clutchfe run` and
`import clutchfe`, each in a child process, CPU seconds (user + sys of the child and its threads,
from ``os.wait4``) against the targets of issue 16: check < 0.5 s, the demo run < 3 s (with the
stored verification table, which the run only reads).

The table is stored first by one `clutchfe verify` in a scratch cache (CLUTCHFE_CACHE_DIR, so the
user's own cache is never touched); its cost is printed too.  Each command runs REPEAT times; the
minimum and every figure are printed (other work on the machine only ever adds to them).  Figures
of this one run, no asserts:

    python3 -m tests.benchmarks.bench_startup [case.toml]      (from the repository root)
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

CASE = Path(__file__).resolve().parents[2] / "cases" / "cone_capstan.toml"
REPEAT = 3
TARGETS = {"check": 0.5, "run": 3.0}        # CPU seconds, issue 16
# what `check` must leave alone (tests/test_cli.py holds it; printed here for the figures' sake)
HEAVY = ("matplotlib", "pyvista", "vtk", "dask", "distributed", "scipy.optimize", "scipy.stats", "skfem")


def child_cpu(argv: list[str], cwd: Path, env: dict) -> tuple[float, int]:
    """CPU seconds (user + sys) of one child process run to its end, and its exit status."""
    pid = os.fork()
    if pid == 0:                                             # the child: quiet, then the command
        try:
            os.chdir(cwd)
            null = os.open(os.devnull, os.O_WRONLY)
            os.dup2(null, 1)
            os.dup2(null, 2)
            os.execve(argv[0], argv, env)
        finally:
            os._exit(127)
    _, status, usage = os.wait4(pid, 0)
    return usage.ru_utime + usage.ru_stime, os.waitstatus_to_exitcode(status)


def measured(name: str, argv: list[str], cwd: Path, env: dict, target: float | None = None) -> float:
    figures = []
    for _ in range(REPEAT):
        seconds, status = child_cpu(argv, cwd, env)
        if status != 0:
            raise SystemExit(f"{name}: exit {status} ({' '.join(argv)})")
        figures.append(seconds)
    best = min(figures)
    against = f"   target < {target:g} s: {'met' if best < target else 'NOT met'}" if target else ""
    print(f"  {name:<22} {best:6.2f} CPU s  (all: {', '.join(f'{f:.2f}' for f in figures)}){against}")
    return best


def main(argv: list[str]) -> None:
    case = Path(argv[0]).resolve() if argv else CASE
    python = sys.executable
    cli = [python, "-m", "clutchfe._cli"]
    with tempfile.TemporaryDirectory(prefix="bench_startup-") as scratch:
        scratch = Path(scratch)
        env = {**os.environ, "CLUTCHFE_CACHE_DIR": str(scratch / "cache")}      # never the user's cache
        env.pop("CLUTCHFE_DEBUG", None)
        seconds, status = child_cpu([*cli, "verify"], scratch, env)
        print(f"clutchfe verify (once, to store the table the runs read): {seconds:.2f} CPU s, exit {status}")
        if status != 0:
            raise SystemExit("the verification suite failed: no stored table to run with")

        print(f"\n{case.name}: whole processes, minimum of {REPEAT}")
        measured("import clutchfe", [python, "-c", "import clutchfe"], scratch, env)
        measured("clutchfe check", [*cli, "check", str(case)], scratch, env, TARGETS["check"])
        out = scratch / "run"
        measured("clutchfe run", [*cli, "run", str(case), "--out", str(out)], scratch, env, TARGETS["run"])

        summary = json.loads((out / "summary.json").read_text(encoding="utf-8"))
        print(f"\nthe run read the verification table: {summary['verification']['state']} "
              f"(FE torque {summary['torque_fe_Nm']:.4f} N·m, xi {summary['capacity_position']:.4f})")
        probe = (f"import sys; from clutchfe._cli import main; main(['-q', 'check', {str(case)!r}]); "
                 f"print(' '.join(m for m in {HEAVY!r} if m in sys.modules) or 'none')")
        heavy = subprocess.run([python, "-c", probe], capture_output=True, text=True, cwd=scratch, env=env)
        said = heavy.stdout.strip().splitlines()
        print(f"heavy libraries `check` imports: {said[-1] if said else heavy.stderr.strip()}")


if __name__ == "__main__":
    main(sys.argv[1:])
