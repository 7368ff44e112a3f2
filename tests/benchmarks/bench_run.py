"""One default demo run end to end, in-process, with the stored verification table present.

Calls the run plan's stages one by one as ``plan.run_case`` does and prints the CPU seconds
(``time.process_time``: this process, all its threads) of meshing, solving (FE model,
condensation, contact solve, comparison), the mesh study (two coarser meshes, meshed and
solved), pictures and files, and the rest: loading the case, reading the stored verification
table, summary.json's assembly and writing, report.html (and report.pdf when WeasyPrint is
there), the result table on the terminal and the folder's atomic rename.  Target: the rest
below 20 % of the run.  Then one ``plan.run_case`` of the same case as a whole, on a fresh
solve service, as a cross-check of the staged sum.

Before the table was stored, every run also ran the verification suite; the suite is run
here once, to store the table in a scratch cache folder (CLUTCHFE_CACHE_DIR, so the user's
own cache is never touched), and its cost is printed against the run's.  Figures of this one
run, no asserts:

    python3 -m tests.benchmarks.bench_run [case.toml]      (from the repository root)
"""
from __future__ import annotations

import io
import os
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")    # pictures off-screen, as the CLI
_T0 = time.process_time()

from rich.console import Console  # noqa: E402

from clutchfe import plan  # noqa: E402
from clutchfe.case import load_case  # noqa: E402
from clutchfe.geometry import build_section, mesh_section  # noqa: E402
from clutchfe.output import atomic_folder, print_table, write_json  # noqa: E402
from clutchfe.output.report import write_report  # noqa: E402
from clutchfe.solve import SolveService  # noqa: E402
from clutchfe.solve.service import reference_case  # noqa: E402
from clutchfe.verification import load_table, run_verification  # noqa: E402
from clutchfe.verification.mesh_study import mesh_study  # noqa: E402

IMPORTS = time.process_time() - _T0         # the package and its libraries, paid once per process

CASE = Path("cases/cone_capstan.toml")


class Clock:
    """CPU seconds per stage."""

    def __init__(self):
        self.spent: dict[str, float] = {}

    def stage(self, name: str):
        clock = self

        class _Stage:
            def __enter__(self):
                self.start = time.process_time()

            def __exit__(self, *exc):
                clock.spent[name] = clock.spent.get(name, 0.0) + time.process_time() - self.start

        return _Stage()


def staged_run(path: Path, folder: Path) -> tuple[dict[str, float], dict]:
    """The stages of plan.run_case, called here one by one (same order, same calls): CPU seconds
    per stage and the summary written."""
    clock, console = Clock(), Console(file=io.StringIO())
    with clock.stage("rest"):
        case = load_case(path)
        service = SolveService()
    with clock.stage("meshing"):
        mesh = mesh_section(build_section(reference_case(case)), order=1)      # what service.prepare meshes
    with clock.stage("solving"):
        service.prepare(case, mesh=mesh)
        result = plan.analyse(case, service)
    with clock.stage("mesh study"):
        study = mesh_study(result.solved, result.comparison, service)
    with clock.stage("rest"):
        rows, passed = load_table()
        if rows.origin.state != "stored":                           # the benchmark is of a run with its table
            raise SystemExit(f"no stored verification table: {rows.origin.reason}")
        evidence = plan.Evidence(study, rows, passed)
        summary = plan.summary_of(result, evidence)
    with atomic_folder(folder) as tmp:
        with clock.stage("pictures and files"):
            plan.write_case_files(result, tmp)
        with clock.stage("rest"):
            summary["report_pdf"] = write_report(case, summary, tmp, rows, passed)
            write_json(tmp / "summary.json", summary)
        inside = time.process_time()
    clock.spent["rest"] += time.process_time() - inside                       # the rename
    with clock.stage("rest"):
        print_table(console, case, summary, folder)
    return clock.spent, summary


def main(argv: list[str]) -> None:
    path = Path(argv[0]) if argv else CASE
    with tempfile.TemporaryDirectory(prefix="bench_run-") as scratch:
        scratch = Path(scratch)
        os.environ["CLUTCHFE_CACHE_DIR"] = str(scratch / "cache")        # never the user's cache
        t = time.process_time()
        rows, passed = run_verification(store=True)
        suite = time.process_time() - t
        print(f"verification suite (run once here to store the table; every run ran it before): "
              f"{suite:.2f} CPU s, {len(rows)} rows, all passed: {passed}")

        spent, summary = staged_run(path, scratch / "staged")
        stages = ("meshing", "solving", "mesh study", "pictures and files", "rest")
        total = sum(spent[s] for s in stages)
        print(f"\n{path}: one run with the stored table (the first in this process: the pictures pay their "
              f"libraries' start-up, as a command-line run does), CPU seconds by stage")
        for name in stages:
            print(f"  {name:<20} {spent[name]:7.2f} s   {100 * spent[name] / total:5.1f} %")
        print(f"  {'total':<20} {total:7.2f} s")
        print(f"the rest (case, stored table read, summary, report, summary.json, terminal table, rename): "
              f"{100 * spent['rest'] / total:.1f} % of the run (target < 20 %); report.pdf: {summary['report_pdf']}")
        print(f"imports before the run (once per process, not in the stages): {IMPORTS:.2f} CPU s")

        t = time.process_time()
        plan.run_case(load_case(path), scratch / "whole", Console(file=io.StringIO()))
        whole = time.process_time() - t
        print(f"\nplan.run_case as a whole (second run in this process, fresh solve service): {whole:.2f} CPU s "
              f"(staged sum {total:.2f} s, ratio {whole / total:.2f})")
        print(f"the same run carrying the suite, as before: {whole + suite:.2f} CPU s; "
              f"now / before = {whole / (whole + suite):.2f}")


if __name__ == "__main__":
    main(sys.argv[1:])
