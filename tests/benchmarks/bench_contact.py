"""Contact solve against one linear elastic solve of the same mesh, on the cone demo.

For the default mesh and meshes refined geometrically (``mesh.refinement``) up to about 80k,
400k and 500k DOFs it prints: DOFs, contact nodes, CPU seconds (time.process_time, best of the
repeats, the two kinds run alternately in one process so that both see the same load on the shared
cores) of one linear elastic solve (assembly, factorisation, one solve) and of the contact solve (assembly with the
face pairing, factorisation with the condensation onto the contact normals, the small contact
problem), their ratio with and without assembly (docs/solver-notes.md target: contact <= 1.2 x
linear at >= 80k DOF), the displacement and stress fields of the contact solve apart, and peak
resident memory of each kind in a process of its own against the size of its factors (8 bytes a
stored entry; target <= 2 GB at about 500k DOF).  Everything is measured in this one run; nothing is asserted.

    python3 -m tests.benchmarks.bench_contact [refinement ...]     (from the repository root)
"""
from __future__ import annotations

import dataclasses
import importlib
import multiprocessing
import resource
import sys
import tempfile
import time
import types
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

from clutchfe.case import load_case

DEMO = Path(__file__).resolve().parents[2] / "cases" / "cone_capstan.toml"
# refinement of the demo's mesh -> about 5k, 19k, 82k, 408k, 493k DOFs
LEVELS = (1.0, 2.0, 4.4, 10.0, 11.0)
REPEATS = 3


def refined_model(refinement: float):
    """The demo's FE model with every mesh size divided by ``refinement`` (the run's own budget
    check is skipped: these meshes are larger than a run may use)."""
    from clutchfe.geometry import build_section, mesh_section
    from clutchfe.solve import fe_model_of
    case = load_case(DEMO)
    case = dataclasses.replace(case, mesh=dataclasses.replace(case.mesh, refinement=refinement))
    section = build_section(case)
    mesh = mesh_section(section)
    return fe_model_of(case, section, mesh), len(mesh.triangles)


def _cpu_clock():
    # the solver's phase clock on CPU time, as the totals (2 shared cores: wall time says little)
    fem_solve = importlib.import_module("clutchfe.fem.solve")
    fem_solve.time = types.SimpleNamespace(perf_counter=time.process_time)
    return fem_solve


def _timings(model, repeats: int) -> dict:
    """In a fresh process: the linear and the contact solve alternately ``repeats`` times (so that
    both see the same load on the shared cores), the best CPU time of each and its phases."""
    fem_solve = _cpu_clock()
    out = {"linear": (float("inf"), {}), "contact": (float("inf"), {})}
    fields = float("inf")
    for _ in range(repeats):
        t0 = time.process_time()
        _, timings = fem_solve.linear_solve(model)
        out["linear"] = min(out["linear"], (time.process_time() - t0, timings), key=lambda x: x[0])
        t0 = time.process_time()
        solver = fem_solve.ContactSolver(model)
        timings = solver.solve(fields=False).timings
        out["contact"] = min(out["contact"], (time.process_time() - t0, timings), key=lambda x: x[0])
        t0 = time.process_time()
        solver.solve(fields=True)
        fields = min(fields, time.process_time() - t0)
        del solver
    return {"linear": out["linear"], "contact": out["contact"], "fields": fields}


def _memory(model, kind: str) -> dict:
    """In a fresh process: one solve of one kind, its peak resident memory and its factors' size."""
    from threadpoolctl import threadpool_limits
    fem_solve = _cpu_clock()

    def peak():
        return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024          # KiB on Linux

    if kind == "linear":
        with threadpool_limits(limits=1):
            prep = fem_solve.Prepared(fem_solve.assemble(model), {})
            prep.lu.solve(prep.system.f[prep.inner])
        return {"peak_mib": peak(), "factor_nonzeros": int(prep.lu.nnz), "dofs": int(prep.system.basis.N)}
    solver = fem_solve.ContactSolver(model)
    res = solver.solve(fields=False)
    out = {"peak_mib": peak(), "factor_nonzeros": solver.factor_nonzeros, "dofs": res.dofs,
           "contact_nodes": int(solver.g0.size)}
    solver.solve(fields=True)
    out["peak_fields_mib"] = peak()
    return out


def in_fresh_process(fn, *args):
    with ProcessPoolExecutor(max_workers=1, mp_context=multiprocessing.get_context("spawn")) as pool:
        return pool.submit(fn, *args).result()


def main(levels=LEVELS) -> None:
    print(f"cone demo; CPU s, best of {REPEATS} run alternately in one process; memory of each solve in a "
          "process of its own")
    print(f"{'refine':>6} {'triangles':>9} {'dofs':>7} {'contact nodes':>13} {'linear s':>9} {'contact s':>9} "
          f"{'ratio':>6} {'w/o assembly':>12} {'fields s':>8} {'peak MiB lin/con (+fields)':>26} "
          f"{'factor MiB lin/con':>18} {'peak/factor lin/con':>19}")
    for level in levels:
        model, triangles = refined_model(level)
        times = in_fresh_process(_timings, model, REPEATS)
        lin, con = in_fresh_process(_memory, model, "linear"), in_fresh_process(_memory, model, "contact")
        (t_lin, p_lin), (t_con, p_con) = times["linear"], times["contact"]
        factor = [r["factor_nonzeros"] * 8 / 2 ** 20 for r in (lin, con)]
        core = (t_con - p_con["assembly"]) / (t_lin - p_lin["assembly"])
        print(f"{level:>6g} {triangles:>9} {con['dofs']:>7} {con['contact_nodes']:>13} {t_lin:>9.2f} {t_con:>9.2f} "
              f"{t_con / t_lin:>6.2f} {core:>12.2f} {times['fields']:>8.2f} "
              f"{lin['peak_mib']:>10.0f}/{con['peak_mib']:.0f} ({con['peak_fields_mib']:.0f}){'':>4} "
              f"{factor[0]:>9.0f}/{factor[1]:<8.0f} {lin['peak_mib'] / factor[0]:>10.2f}/{con['peak_mib'] / factor[1]:<8.2f}")
        for name, phases in (("linear", p_lin), ("contact", p_con)):
            print(f"{'':>6} {name}: " + ", ".join(f"{k} {v:.2f} s" for k, v in phases.items() if k != "total"))
        sys.stdout.flush()

    t0 = time.process_time()
    from clutchfe._cli import main as cli
    with tempfile.TemporaryDirectory() as tmp:
        cli(["run", str(DEMO), "--out", tmp + "/demo"])
    print(f"default demo end to end (mesh, solve, pictures, files): {time.process_time() - t0:.1f} s CPU "
          "(this process)")


if __name__ == "__main__":
    main(tuple(float(a) for a in sys.argv[1:]) or LEVELS)
