"""Contact solve against one linear elastic solve of the same mesh, on the cone demo.

Prints, for the default mesh and for about 4x the elements: DOFs, assembly time,
one linear elastic solve, the whole contact solve, their ratio (docs/solver-notes.md
target <= 1.5) and peak memory.  Ratios are measured in this one run; nothing is asserted.

    python3 -m tests.benchmarks.bench_contact      (from the repository root)
"""
from __future__ import annotations

import resource
import time
import tomllib
from pathlib import Path

from clutchfe.case import case_from_dict, load_case
from clutchfe.fem import linear_solve, solve
from clutchfe.geometry import mesh_section
from clutchfe.solve import fe_model_of
from clutchfe.plan import section_of

DEMO = Path(__file__).resolve().parents[2] / "cases" / "cone_capstan.toml"


def refined_case(factor: float):
    base = load_case(DEMO)
    data = tomllib.loads(DEMO.read_text())
    data["mesh"] = {"interface_element_size": base.mesh.interface_element_size / factor,
                    "edge_element_size": base.mesh.edge_element_size / factor,
                    "element_size": base.mesh.element_size / factor}
    return case_from_dict(data, default_name=base.name)


def best_of(fn, repeats=3):
    best, out = float("inf"), None
    for _ in range(repeats):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def main() -> None:
    print(f"{'mesh':>8} {'triangles':>9} {'dofs':>7} {'assembly s':>10} {'linear s':>9} {'contact s':>9} "
          f"{'ratio':>6} {'factor+solves ratio':>19}")
    for factor in (1.0, 2.0):        # element size / 2 -> about 4x the elements
        case = refined_case(factor)
        section = section_of(case)
        mesh = mesh_section(section)
        model = fe_model_of(case, section, mesh)
        t_lin, (_, lin) = best_of(lambda: linear_solve(model))
        t_con, res = best_of(lambda: solve(model))
        core_lin = lin["factorisation"] + lin["solve"]
        core_con = res.timings["factorisation"] + res.timings["condensation"] + res.timings["contact"]
        print(f"{'x' + format(factor ** 2, 'g'):>8} {len(mesh.triangles):>9} {res.dofs:>7} "
              f"{res.timings['assembly']:>10.3f} {t_lin:>9.3f} {t_con:>9.3f} {t_con / t_lin:>6.2f} "
              f"{core_con / core_lin:>19.2f}")
        print(f"{'':>8} contact solve: " + ", ".join(f"{k} {v:.3f} s" for k, v in res.timings.items()))
    peak_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak memory (resident, whole run): {peak_mib:.0f} MiB")

    t0 = time.perf_counter()
    from clutchfe._cli import main as cli
    import tempfile
    with tempfile.TemporaryDirectory() as tmp:
        cli(["run", str(DEMO), "--out", tmp + "/demo"])
    print(f"default demo end to end (mesh, solve, pictures, files): {time.perf_counter() - t0:.1f} s")


if __name__ == "__main__":
    main()
