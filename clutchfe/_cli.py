"""The ``clutchfe`` command.

Exit status: 0 ok; 2 invalid input (one line per problem: key, value, allowed
range); 3 the physics cannot be solved as asked (reason given); 1 a bug.
"""
from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from rich.console import Console

from . import plan
from .case import load_case
from .schema import reference_markdown
from .study import run_study
from .verification import print_verification, run_verification
from .errors import EXIT_BUG, EXIT_INPUT, EXIT_OK, CaseError, PhysicsError, exit_status
from .output.folders import check_output_folder

err = Console(stderr=True, highlight=False, soft_wrap=True)
out = Console(highlight=False)


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="clutchfe", description="Finite-element contact check of a friction "
                                "clutch's torque capacity against the uniform-pressure and uniform-wear "
                                "hand formulas.")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    c = sub.add_parser("check", help="validate a case file")
    c.add_argument("case", type=Path)
    m = sub.add_parser("mesh", help="mesh a case and draw its section with the named faces")
    m.add_argument("case", type=Path)
    m.add_argument("--out", type=Path, help="output folder (default results/<case name>)")
    r = sub.add_parser("run", help="solve a case and compare its capacity with the hand formulas")
    r.add_argument("case", type=Path)
    r.add_argument("--out", type=Path, help="output folder (default results/<case name>)")
    sub.add_parser("keys", help="print the case-file reference")
    s = sub.add_parser("study", help="parameter sweep or tolerance Monte Carlo over case keys")
    s.add_argument("study", type=Path)
    s.add_argument("--workers", type=int, help="local worker processes (default: sized to the machine)")
    s.add_argument("--scheduler", help="address of a running dask scheduler, e.g. tcp://host:8786")
    s.add_argument("--out", type=Path, help="output folder (default results/<study name>)")
    v = sub.add_parser("verify", help="run the solver's verification suite against published closed forms")
    v.add_argument("--out", type=Path, help="also write verification.json and verification.csv here")
    return p


def main(argv: list[str] | None = None) -> int:
    # the process's global state is the command's to set, not the library's: pictures are
    # drawn off-screen (VTK through EGL: no X server needed, and the X window class warns)
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
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


def _dispatch(args) -> int:
    if args.command == "keys":
        out.print(reference_markdown(), markup=False)
        return EXIT_OK
    if args.command == "study":
        run_study(args.study, workers=args.workers, scheduler=args.scheduler, console=out, out=args.out)
        return EXIT_OK
    if args.command == "verify":
        rows, passed = run_verification(args.out)
        print_verification(rows, passed, out)
        return EXIT_OK if passed else EXIT_BUG      # a failed check means the solver is wrong
    case = load_case(args.case)
    for warning in case.warnings:
        err.print(f"clutchfe: warning: {warning}", markup=False)
    section = plan.section_of(case)
    if args.command == "check":
        plan.print_check(case, section, out)
        return EXIT_OK
    folder = args.out or Path("results") / case.name
    check_output_folder(folder)     # before any work: never a long solve that cannot be written
    if args.command == "mesh":
        plan.mesh_case(case, section, folder, out)
        return EXIT_OK
    plan.run_case(case, folder, out)
    return EXIT_OK

if __name__ == "__main__":      # pragma: no cover
    sys.exit(main())
