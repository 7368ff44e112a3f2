"""Preparation of the tilted (harmonic) solver against one axisymmetric solve, on the tilted demo.

Prints, for 16, 48 and 96 angular divisions (harmonics 1 … M/2 on top of the axisymmetric model,
which is harmonic 0 and is not counted): the CPU time (time.process_time, best of the repeats) of
``TiltedContactSolver(model, pressed, grid=M, base=axisymmetric solver)`` and its ratio to one
axisymmetric contact solve of the same mesh (assembly, condensation, contact; docs/solver-notes.md
target: <= 5 x at 48 divisions), with the preparation's own phases.  Measured in this one run;
nothing is asserted.

    python3 -m tests.benchmarks.bench_tilt_prep [case.toml]     (from the repository root)
"""
from __future__ import annotations

import importlib
import sys
import time
import types
from pathlib import Path

from clutchfe.case import load_case
from clutchfe.solve import SolveService
from tests.benchmarks.timing import REPEATS, best

DEMO = Path(__file__).resolve().parents[2] / "cases" / "cone_capstan_tilted.toml"
DIVISIONS = (16, 48, 96)


def main(path=DEMO) -> None:
    cpu = types.SimpleNamespace(perf_counter=time.process_time)
    for name in ("clutchfe.fem.solve", "clutchfe.fem.tilted"):
        importlib.import_module(name).time = cpu          # the solvers' phase clocks on CPU time
    from clutchfe.fem import ContactSolver
    from clutchfe.fem.tilted import TiltedContactSolver

    case = load_case(path)
    prepared = SolveService().prepare(case)
    model = prepared.model
    pressed = next(b.name for b in prepared.section.bodies if b.role == "pressed")
    t_axi, axi = best(lambda: (lambda s: (s, s.solve(fields=False)))(ContactSolver(model)))
    solver = axi[0]
    print(f"{path.name}: {axi[1].dofs} dofs, {solver.g0.size} contact nodes; one axisymmetric solve "
          f"{t_axi:.3f} s CPU (best of {REPEATS})")
    print(f"{'divisions':>9} {'harmonics':>9} {'preparation s':>13} {'/ axisymmetric':>14}  phases (s)")
    for M in DIVISIONS:
        t_prep, tilted = best(lambda: TiltedContactSolver(model, pressed, grid=M, base=solver,
                                                          guide=case.misalignment.guided_at or "load_ring"))
        phases = ", ".join(f"{k} {v:.3f}" for k, v in tilted.timings.items())
        print(f"{M:>9} {M // 2:>9} {t_prep:>13.3f} {t_prep / t_axi:>14.1f}  {phases}")
        sys.stdout.flush()


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else DEMO)
