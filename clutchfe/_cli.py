"""The ``clutchfe`` command.

Exit status: 0 ok; 2 invalid input (one line per problem: key, value, allowed
range); 3 the physics cannot be solved as asked (reason given); 1 a bug.
"""
from __future__ import annotations

import argparse
import atexit
import gc
import json
import os
import sys
import time
from pathlib import Path

from rich import box
from rich.console import Console
from rich.markup import escape
from rich.table import Table

from . import plan
from .case import load_case
from .schema import reference_markdown
from .errors import (EXIT_BUG, EXIT_INPUT, EXIT_INTERRUPTED, EXIT_OK, EXIT_PHYSICS, CaseError, OutputFolderError,
                     PhysicsError, exit_status)
from .output.compare_runs import (RUNS_FILES, RunRow, compare_html, compare_summaries, read_run_folder,
                                  shown, shown_difference, write_compare_html, write_runs_table)
from .output.folders import MARKER, atomic_folder, check_output_folder, folder_lock, write_marker
from .provenance import CAUTION, __version__
from .starting_case import KINDS, write_starting_case

err = Console(stderr=True, highlight=False, soft_wrap=True)
out = Console(highlight=False)


def _parser() -> argparse.ArgumentParser:
    # -q/-v are accepted before or after the command (SUPPRESS: a command's parser never resets them)
    talk = argparse.ArgumentParser(add_help=False)
    level = talk.add_mutually_exclusive_group()
    level.add_argument("-q", "--quiet", action="store_true", default=argparse.SUPPRESS,
                       help="print only the one-line result (per case), the caution and errors")
    level.add_argument("-v", "--verbose", action="store_true", default=argparse.SUPPRESS,
                       help="also print each step's time and the model size (run), the verdicts and "
                            "warnings of both folders (compare)")
    p = argparse.ArgumentParser(prog="clutchfe", parents=[talk], description="Finite-element contact check of "
                                "a friction clutch's torque capacity against the uniform-pressure and "
                                "uniform-wear hand formulas.")
    p.add_argument("--version", action="version", version=f"clutchfe {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    c = sub.add_parser("check", parents=[talk], help="validate a case file")
    c.add_argument("case", type=Path)
    m = sub.add_parser("mesh", parents=[talk], help="mesh a case and draw its section with the named faces")
    m.add_argument("case", type=Path)
    m.add_argument("--out", type=Path, help="output folder (default results/<case name>)")
    r = sub.add_parser("run", parents=[talk], help="solve one or more cases and compare their capacity with "
                       "the hand formulas")
    r.add_argument("cases", type=Path, nargs="+", metavar="CASE")
    r.add_argument("--out", type=Path, help="one case: its results folder; several cases (or --table): a "
                   "folder holding one results folder per case and runs.csv, runs.md (default: "
                   "results/<case name> each, the table in results/runs)")
    r.add_argument("--table", action="store_true", help="write runs.csv and runs.md also for one case")
    i = sub.add_parser("init", parents=[talk], help="write a commented starting case file")
    i.add_argument("kind", choices=KINDS, metavar="KIND", help="cone or plate")
    i.add_argument("path", type=Path, nargs="?", metavar="PATH", help="the new case file (default KIND.toml)")
    i.add_argument("--replace", action="store_true", help="write over an existing file")
    k = sub.add_parser("compare", parents=[talk], help="put two results folders side by side")
    k.add_argument("a", type=Path, metavar="A", help="results folder of a run")
    k.add_argument("b", type=Path, metavar="B", help="results folder of another run")
    k.add_argument("--html", type=Path, metavar="FILE", help="also write the comparison as one HTML page")
    sub.add_parser("keys", parents=[talk], help="print the case-file and study-file keys (Markdown)")
    s = sub.add_parser("study", parents=[talk], help="parameter sweep or tolerance Monte Carlo over case keys")
    s.add_argument("study", type=Path)
    s.add_argument("--workers", type=int, help="local worker processes (default: sized to the machine)")
    s.add_argument("--scheduler", help="address of a running dask scheduler, e.g. tcp://host:8786")
    s.add_argument("--out", type=Path, help="output folder (default results/<study name>)")
    v = sub.add_parser("verify", parents=[talk], help="run the solver's verification suite against published closed forms")
    v.add_argument("--out", type=Path, help="also write verification.json and verification.csv here")
    return p


def main(argv: list[str] | None = None) -> int:
    # the process's global state is the command's to set, not the library's: pictures are
    # drawn off-screen (VTK through EGL: no X server needed, and the X window class warns)
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    # at the process's exit, freeze the heap first: the interpreter's last garbage collections then skip
    # the scipy/matplotlib objects it is dropping anyway (0.3-0.4 s CPU after a run; DEVELOPERS.md, "Start-up")
    atexit.unregister(gc.freeze)
    atexit.register(gc.freeze)
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:        # argparse prints its own usage line; usage errors are input errors
        return EXIT_INPUT if exc.code else EXIT_OK
    try:
        return _dispatch(args)
    except CaseError as exc:
        for problem in exc.problems:
            err.print(f"clutchfe: error: {problem}", markup=False)
        return exit_status(exc)
    except KeyboardInterrupt as exc:
        if getattr(args, "command", "") == "study":
            err.print("clutchfe: interrupted; finished samples are kept: run the same command again to "
                      "continue", markup=False)
        else:
            err.print("clutchfe: interrupted; nothing was written", markup=False)
        return exit_status(exc)
    except PhysicsError as exc:
        err.print(f"clutchfe: cannot solve: {exc}", markup=False)
        return exit_status(exc)
    except Exception as exc:  # noqa: BLE001 - the last line of defence: no traceback for users
        if os.environ.get("CLUTCHFE_DEBUG"):
            raise
        err.print(f"clutchfe: internal error (a bug, please report it with the case file): "
                  f"{type(exc).__name__}: {exc}", markup=False)
        return exit_status(exc)


QUIET, NORMAL, VERBOSE = 0, 1, 2
# the worst status of several cases is the overall one: a bug, then invalid input, then physics
_SEVERITY = {EXIT_OK: 0, EXIT_PHYSICS: 1, EXIT_INPUT: 2, EXIT_BUG: 3}
RUNS_KIND = "runs"          # marker kind of a folder holding several runs and their table
# what such a folder may hold besides its listed entries: the lock and scratch files of its runs
RUNS_ENTRIES = (*RUNS_FILES, ".*.lock", ".*.writing-*", ".*.old-*")


def _level(args) -> int:
    quiet, verbose = getattr(args, "quiet", False), getattr(args, "verbose", False)
    if quiet and verbose:
        raise CaseError(["-q/--quiet and -v/--verbose: both given; allowed: one of them"])
    return QUIET if quiet else VERBOSE if verbose else NORMAL


def _say(text: str, console: Console | None = None) -> None:
    (console or out).print(text, markup=False, highlight=False, soft_wrap=True)


def keys_text() -> str:
    """What `clutchfe keys` prints: plain Markdown (no rich rendering, so no wrapped lines)."""
    from .study.spec import study_reference_markdown      # start-up: the study package imports scipy.stats

    return ("# clutchfe keys\n\n"
            "## Case file (`clutchfe check|mesh|run CASE.toml`)\n\n" + reference_markdown() + "\n\n"
            "## Study file (`clutchfe study STUDY.toml`)\n\n"
            "Top-level keys, then the keys of each `[[vary]]` table and of the `[limit]` table.\n\n"
            + study_reference_markdown() + "\n")


def _dispatch(args) -> int:
    level = _level(args)
    quiet_console = Console(quiet=True)
    if args.command == "keys":
        sys.stdout.write(keys_text())
        sys.stdout.flush()
        return EXIT_OK
    if args.command == "init":
        return _init(args)
    if args.command == "compare":
        return _compare(args, level)
    if args.command == "study":
        from .study import run_study        # start-up: scipy.stats and the Dask runner, for this command only

        summary = run_study(args.study, workers=args.workers, scheduler=args.scheduler,
                            console=quiet_console if level == QUIET else out, out=args.out)
        if level == QUIET:
            _say(f"study {summary['study_name']!r}: {summary['samples_done']} done, {summary['samples_failed']} "
                 f"failed, {summary['samples_missing']} missing of {summary['samples_planned']} planned")
            _say(f"caution: {CAUTION}")
        return EXIT_OK
    if args.command == "verify":
        from .verification import print_verification, run_verification     # start-up: the FE stack

        rows, passed = run_verification(args.out)
        print_verification(rows, passed, quiet_console if level == QUIET else out)
        if level == QUIET:
            failed = sum(not r.passed for r in rows)
            _say(f"verification: {len(rows) - failed} passed, {failed} failed")
        return EXIT_OK if passed else EXIT_BUG      # a failed check means the solver is wrong
    if args.command == "run":
        return _run(args, level)
    case = load_case(args.case)
    for warning in case.warnings:
        err.print(f"clutchfe: warning: {warning}", markup=False)
    section = plan.section_of(case)
    if args.command == "check":
        if level == QUIET:
            _say(f"case {case.name!r} ({case.kind}) is valid")
        else:
            plan.print_check(case, section, out)
        return EXIT_OK
    folder = args.out or Path("results") / case.name
    check_output_folder(folder)     # before any work: never a long solve that cannot be written
    plan.mesh_case(case, section, folder, out)
    return EXIT_OK


def _init(args) -> int:
    path = args.path if args.path is not None else Path(f"{args.kind}.toml")
    write_starting_case(args.kind, path, replace=args.replace)
    _say(f"wrote {path}: a starting {args.kind} case (invented values, every key commented); "
         f"`clutchfe check {path}` validates it")
    return EXIT_OK


# --------------------------------------------------------------------------- clutchfe run


class _StepLines:
    """Listener of a run's steps: a plain line per step when the bar cannot be seen (output piped),
    and the start time of each step for -v."""

    def __init__(self, label: str, plain: bool):
        self.label, self.plain, self.starts = label, plain, []

    def __call__(self, step: str) -> None:
        self.starts.append((step, time.perf_counter()))
        if self.plain and step != "done":
            _say(f"clutchfe: {self.label}{step}")

    def durations(self) -> list[tuple[str, float]]:
        return [(step, t1 - t0) for (step, t0), (_, t1) in zip(self.starts, self.starts[1:])]


def _marker_kind(folder: Path) -> str | None:
    try:
        data = json.loads((folder / MARKER).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return data.get("kind") if isinstance(data, dict) else None


def _check_runs_folder(folder: Path, option: str) -> None:
    """A folder for several runs: new, empty, or one an earlier `clutchfe run` of several cases wrote."""
    check_output_folder(folder)
    if folder.is_dir() and any(folder.iterdir()) and _marker_kind(folder) != RUNS_KIND:
        raise OutputFolderError([f"{option} = {str(folder)!r}: is a clutchfe {_marker_kind(folder)} folder, not a "
                                 "folder of several runs; allowed: a new or empty folder, or one `clutchfe run` "
                                 "wrote for several cases"])


def _status_words(status: int) -> str:
    return {EXIT_INPUT: "invalid input", EXIT_PHYSICS: "cannot be solved as asked",
            EXIT_BUG: "internal error (a bug)"}.get(status, "")


def _problem(label: str, status: int, text: str) -> str:
    head = "error" if status == EXIT_INPUT else "cannot solve" if status == EXIT_PHYSICS else \
        "internal error (a bug, please report it with the case file)"
    err.print(f"clutchfe: {head}: {label}{text}", markup=False)
    return text


def _run(args, level: int) -> int:
    paths = list(args.cases)
    several = len(paths) > 1
    grouped = several or args.table                # one folder per case under a parent, and the table
    parent = args.out if grouped and args.out is not None else None
    table_folder = parent if parent is not None else (Path("results") / "runs" if grouped else None)
    if table_folder is not None:                    # before any work: the table must be writable
        _check_runs_folder(table_folder, "--out" if parent is not None else "table folder")
    rows: list[RunRow | None] = [None] * len(paths)
    todo, folders = [], {}
    for k, path in enumerate(paths):                # every case checked before the first solve
        label = f"{path}: " if several else ""
        try:
            case = load_case(path)
            for warning in case.warnings:
                err.print(f"clutchfe: warning: {label}{warning}", markup=False)
            plan.section_of(case)
            if parent is not None:
                folder = parent / case.name
                if case.name in RUNS_FILES:
                    raise CaseError([f"name = {case.name!r}: the folder would be the runs table; allowed: "
                                     "another case name"])
            elif args.out is not None:
                folder = args.out
            else:
                folder = Path("results") / case.name
                if table_folder is not None and folder == table_folder:
                    raise CaseError([f"name = {case.name!r}: results/{case.name} is where the runs table goes; "
                                     "allowed: another case name, or --out DIR"])
            if folder in folders:
                raise CaseError([f"name = {case.name!r}: {folders[folder]} has the same name, so both would "
                                 f"write {folder}; allowed: a name key of its own in each case"])
            check_output_folder(folder)
        except CaseError as exc:
            text = "; ".join(_problem(label, EXIT_INPUT, p) for p in exc.problems)
            rows[k] = RunRow(path.stem, str(path), EXIT_INPUT, problem=text)
            continue
        folders[folder] = path
        todo.append((k, path, case, folder))
    interrupted = False
    try:
        if parent is not None:
            with folder_lock(parent):
                parent.mkdir(parents=True, exist_ok=True)
                write_marker(parent, RUNS_KIND, extra=RUNS_ENTRIES)
                try:
                    interrupted = _solve_all(todo, rows, several, level)
                    if not interrupted:
                        write_runs_table([r for r in rows if r is not None], parent)
                finally:
                    write_marker(parent, RUNS_KIND, extra=RUNS_ENTRIES)
        else:
            interrupted = _solve_all(todo, rows, several, level)
            if table_folder is not None and not interrupted:
                with atomic_folder(table_folder, kind=RUNS_KIND) as tmp:
                    write_runs_table([r for r in rows if r is not None], tmp)
    except KeyboardInterrupt:
        interrupted = True
    done = [r for r in rows if r is not None]
    _print_run_lines(done, several or level == QUIET)
    if interrupted:
        kept = [r.folder for r in done if r.exit_status == EXIT_OK]
        words = f"the finished cases are kept ({', '.join(kept)})" if kept else "no case finished"
        if table_folder is not None:
            words += "; no runs table was written"
        err.print(f"clutchfe: interrupted; {words}", markup=False)
        return EXIT_INTERRUPTED
    if table_folder is not None and level != QUIET:
        _say(f"runs table: {table_folder}/runs.csv, {table_folder}/runs.md")
    return max((r.exit_status for r in done), key=_SEVERITY.get, default=EXIT_OK)


def _solve_all(todo: list, rows: list, several: bool, level: int) -> bool:
    """Run every checked case in turn; a case's failure is its row, not the end of the others.
    Returns True when interrupted (the cases finished before are kept)."""
    console = Console(quiet=True) if level == QUIET else out
    for k, path, case, folder in todo:
        label = f"{case.name}: " if several else ""
        steps = _StepLines(label, plain=level != QUIET and not out.is_terminal)
        try:
            summary = plan.run_case(case, folder, console, on_step=steps)
        except KeyboardInterrupt:
            return True
        except CaseError as exc:
            text = "; ".join(_problem(label, EXIT_INPUT, p) for p in exc.problems)
            rows[k] = RunRow(case.name, str(path), EXIT_INPUT, problem=text)
            continue
        except PhysicsError as exc:
            rows[k] = RunRow(case.name, str(path), EXIT_PHYSICS, problem=_problem(label, EXIT_PHYSICS, str(exc)))
            continue
        except Exception as exc:  # noqa: BLE001 - one case's bug must not lose the others' results
            if os.environ.get("CLUTCHFE_DEBUG"):
                raise
            rows[k] = RunRow(case.name, str(path), EXIT_BUG,
                             problem=_problem(label, EXIT_BUG, f"{type(exc).__name__}: {exc}"))
            continue
        rows[k] = RunRow(case.name, str(path), EXIT_OK, summary, folder=str(folder))
        if level == VERBOSE:
            times = ", ".join(f"{step} {seconds:.2f} s" for step, seconds in steps.durations())
            total = sum(seconds for _, seconds in steps.durations())
            _say(f"{case.name}: step times: {times} (total {total:.2f} s)")
            mesh = summary.get("mesh", {})
            _say(f"{case.name}: model: {summary.get('dofs')} unknowns, {mesh.get('nodes')} nodes, "
                 f"{mesh.get('triangles')} triangles (order {mesh.get('element_order')}), "
                 f"{summary.get('contact_iterations')} contact iterations, FE solve {summary.get('solve_seconds')} s")
    return False


def run_line(row: RunRow) -> str:
    """The one-line result of one case of `clutchfe run`."""
    if row.summary is None:
        return f"{row.case}: {_status_words(row.exit_status)}, exit {row.exit_status}"
    s = row.summary
    return (f"{row.case}: FE torque {s['torque_fe_Nm']:.2f} N·m, xi {s['capacity_position']:.3f}, "
            f"R_eff {s['effective_radius_mm']:.3f} mm, {'failed: ' if row.criteria != 'ok' else ''}{row.criteria}, "
            f"exit {row.exit_status}")


def _print_run_lines(rows: list[RunRow], with_caution: bool) -> None:
    for row in rows:
        _say(run_line(row))
    if with_caution and any(r.summary is not None for r in rows):
        _say(f"caution: {CAUTION}")


# --------------------------------------------------------------------------- clutchfe compare


def _short(text: str, most: int = 16) -> str:
    """A long text value (a SHA-256) cut for the terminal; the HTML page shows it whole."""
    return text if len(text) <= most else text[:most - 1] + "…"


def _compare(args, level: int) -> int:
    a, b = read_run_folder(args.a, "A"), read_run_folder(args.b, "B")
    rows = compare_summaries(a, b)
    if args.html is not None:
        html_path = write_compare_html(args.html, compare_html(rows, str(args.a), str(args.b), a, b))
    torque = next(r for r in rows if r.key == "torque_fe_Nm")
    diff, rel = shown_difference(torque)
    line = (f"FE torque: A {shown(torque.a)} N·m, B {shown(torque.b)} N·m, B − A {diff} N·m ({rel} %)")
    if level == QUIET:
        _say(line)
    else:
        table = Table(title=f"compare: A = {args.a} ({a.get('case_name')}), B = {args.b} ({b.get('case_name')})")
        table = Table(title=table.title, box=box.SIMPLE_HEAD, pad_edge=False)
        table.add_column(escape("key [unit]"), overflow="fold", min_width=24)   # the names fold, never the numbers
        for name, width in (("A", 10), ("B", 10), ("B − A", 9), ("rel. [%]", 8)):      # rel.: (B − A)/|A|
            table.add_column(escape(name), justify="right", no_wrap=True, min_width=width)
        for row in rows:
            d, r = shown_difference(row, digits=3)
            key = f"{row.key} [{row.unit}]" if row.unit else row.key
            table.add_row(*(escape(c) for c in (key, _short(shown(row.a, 5), 10), _short(shown(row.b, 5), 10), d, r)),
                          style="bold" if row.difference not in (0, 0.0, "same") else None)
        out.print(table)
        _say(line)
        if level == VERBOSE:
            for label, summary in (("A", a), ("B", b)):
                _say(f"{label} verdict: {summary.get('verdict', '')}")
                for warning in summary.get("warnings", []):
                    _say(f"{label} warning: {warning}")
    if args.html is not None:
        _say(f"comparison page: {html_path}")
    _say(f"caution: {CAUTION}")
    return EXIT_OK

if __name__ == "__main__":      # pragma: no cover
    sys.exit(main())
