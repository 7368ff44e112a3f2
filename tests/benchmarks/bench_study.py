"""Study throughput (docs/solver-notes.md, speed targets; issue: 1000 misalignment/load samples on one geometry in under a
minute on 2 cores, and >= 1.7x from 1 to 2 workers on a study that varies stiffness).

Prints figures measured in this run, no asserts:  ``python3 -m tests.benchmarks.bench_study``
(from the repository root).
Times are wall clock of run_study, cluster start-up included (printed separately as the
time of an empty study, so the solve share can be read off).
"""
import os
import tempfile
import time
from pathlib import Path

import tomli_w
from rich.console import Console

from clutchfe.study import run_study

CASES = Path(__file__).resolve().parents[2] / "cases"
QUIET = Console(file=open(os.devnull, "w"))


def study_file(folder: Path, name: str, body: dict) -> Path:
    path = folder / f"{name}.study.toml"
    path.write_text(tomli_w.dumps({"name": name, "base_case": str(CASES / "cone_capstan.toml"), **body}))
    return path


MONTE_CARLO = {"samples": 1000, "seed": 1, "vary": [
    {"key": "interface.friction_coefficient", "distribution": "normal", "mean": 0.25, "std_dev": 0.02},
    {"key": "load.axial_force", "distribution": "normal", "mean": 1800.0, "std_dev": 45.0},
    {"key": "misalignment.cone_angle_mismatch", "distribution": "uniform", "low": -0.1, "high": 0.1}]}
# the capstan base case has a rigid housing: vary the cup's modulus instead (one mesh and one
# factorisation each).  Enough work (48 values on a twice-refined mesh) that the cluster start-up
# does not hide the parallel part.
STIFFNESS_STEPS = 48
STIFFNESS = {"vary": [{"key": "cup.youngs_modulus", "start": 8.0e4, "stop": 1.6e5, "steps": STIFFNESS_STEPS}]}


def refined_base(folder: Path) -> Path:
    """cone_capstan with every mesh size halved (about 4x the elements)."""
    import tomllib

    from clutchfe.case import load_case
    case = load_case(CASES / "cone_capstan.toml")
    data = tomllib.loads((CASES / "cone_capstan.toml").read_text())
    data["mesh"] = {"interface_element_size": case.mesh.interface_element_size / 2,
                    "edge_element_size": case.mesh.edge_element_size / 2,
                    "element_size": case.mesh.element_size / 2}
    path = folder / "cone_capstan_fine.toml"
    path.write_text(tomli_w.dumps(data))
    return path
EMPTY_ISH = {"vary": [{"key": "interface.friction_coefficient", "values": [0.25]}]}


def timed(path: Path, out: Path, workers: int) -> tuple[float, dict]:
    t = time.perf_counter()
    summary = run_study(path, workers=workers, console=QUIET, out=out)
    return time.perf_counter() - t, summary


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        base_t, _ = timed(study_file(tmp, "one", EMPTY_ISH), tmp / "one", 2)
        print(f"one-sample study, 2 workers (cluster start, mesh, one factorisation): {base_t:.1f} s")
        mc_t, mc = timed(study_file(tmp, "mc", MONTE_CARLO), tmp / "mc", 2)
        print(f"1000-sample misalignment/load Monte Carlo, one geometry, 2 workers: {mc_t:.1f} s wall "
              f"({1000 / mc_t:.0f} samples/s; {mc['samples_done']} done, {mc['samples_failed']} failed; "
              f"solver groups {mc['run']['solver_groups']}; target < 60 s)")
        path = study_file(tmp, "stiff", {**STIFFNESS, "base_case": str(refined_base(tmp))})
        t1, s1 = timed(path, tmp / "stiff1", 1)
        t2, s2 = timed(path, tmp / "stiff2", 2)
        print(f"{STIFFNESS_STEPS}-stiffness study (a mesh and a factorisation per sample): 1 worker {t1:.1f} s, "
              f"2 workers {t2:.1f} s -> speed-up {t1 / t2:.2f}x (target >= 1.7x); without the start-up of "
              f"the one-sample study: {(t1 - base_t) / max(t2 - base_t, 1e-9):.2f}x")
        if not s1["samples_done"] == s2["samples_done"] == STIFFNESS_STEPS:
            print(f"WARNING: samples done {s1['samples_done']} and {s2['samples_done']} of {STIFFNESS_STEPS}")


if __name__ == "__main__":
    main()
