"""Full Archard wear-in of the cone demo versus one contact solve of it (issue 5 target:
the whole wear-in <= 20 contact solves' worth, thanks to the condensation done once).
Prints times and ratios measured in this run; run with
``python3 -m tests.benchmarks.bench_wear [case.toml]`` from the
repository root."""
import sys
import timeit
from pathlib import Path

from clutchfe import fem
from clutchfe.case import load_case
from clutchfe.fem.wear import wear_in
from clutchfe.solve import fe_model_of
from clutchfe.plan import section_of
from clutchfe.geometry import mesh_section

ROOT = Path(__file__).resolve().parents[2]


def best_of(fn, n=3):
    """(least seconds of n runs, the last run's result)."""
    seconds = min(timeit.repeat(fn, number=1, repeat=n))
    return seconds, fn()


if __name__ == "__main__":
    path = Path(sys.argv[1]) if len(sys.argv) > 1 else ROOT / "cases" / "cone_capstan_wearin.toml"
    case = load_case(path)
    model = fe_model_of(case, section := section_of(case), mesh_section(section, order=1))
    t_solve, fe = best_of(lambda: fem.solve(model))          # assembly + factorisation + contact
    solver = fem.ContactSolver(model)
    t_resolve, _ = best_of(lambda: solver.solve(fields=False))
    w = case.wear
    # to steady state (no duty): the wear-in proper
    t_wear, wear_path = best_of(lambda: wear_in(solver, w.wear_coefficient, step_cap=w.step_cap,
                                                steady_tolerance=w.steady_tolerance,
                                                max_wear_depth=w.max_wear_depth, max_steps=w.max_steps))
    steps = wear_path.steps
    print(f"{case.name}: {fe.dofs} dofs, {sum(i.r.size for i in fe.interfaces)} contact nodes")
    print(f"one contact solve (assembly, factorisation, contact): {t_solve:.3f} s")
    print(f"one re-solve for new gaps (solver.solve, no fields):  {t_resolve * 1000:.2f} ms")
    print(f"wear-in to steady state: {steps} steps ({wear_path.stop_reason}) in {t_wear:.3f} s, "
          f"{t_wear / steps * 1000:.2f} ms per step")
    print(f"wear-in / one contact solve = {t_wear / t_solve:.2f}  (target <= 20)")
    print(f"wear-in + one contact solve / one contact solve = {(t_wear + t_solve) / t_solve:.2f}")
