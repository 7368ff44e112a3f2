"""Cases at the edges of what ``clutchfe check`` accepts, each run end to end: CPU time and peak memory.

Every case ``check`` accepts must solve within bounded time and memory or be refused with the
reason (clutchfe/budget.py states the bounds: the finest mesh of a run at most 60 000
triangles, 20 000 on the (r, θ) grid).  This runs `clutchfe run` in a child process per case
(demo scenarios, invented) and prints its exit status, CPU seconds (user + system of the
child), peak resident memory and the largest mesh of the run, no asserts:

    python3 -m tests.benchmarks.bench_extremes [--quick]      (from the repository root)

``--quick`` leaves out the slowest (the largest meshes allowed).
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

from tests.helpers.data import CONE, PLATE, write_toml, with_tables

NO_STUDY = {"mesh_study": False}

EXTREMES = {
    "smallest plate (r 2–5 mm)": with_tables(PLATE, interface={"inner_radius": 2.0, "outer_radius": 5.0},
                                             load={"axial_force": 20.0}),
    "largest plate (r 2000–2500 mm)": with_tables(PLATE, interface={"inner_radius": 2000.0, "outer_radius": 2500.0},
                                                  load={"axial_force": 5.0e6}),
    "narrowest plate face (2 % of r2)": with_tables(PLATE, interface={"inner_radius": 117.6}, load={"axial_force": 500.0}),
    "cone of 2° (self-locking warning)": with_tables(CONE, interface={"semi_cone_angle": 2.0,
                                                                      "friction_coefficient": 0.04}),
    "cone of 80°": with_tables(CONE, interface={"semi_cone_angle": 80.0}),
    "thinnest lining (0.1 mm)": with_tables(PLATE, lining={"thickness": 0.1}, verification=NO_STUDY),
    "thickest lining (30 mm)": with_tables(CONE, interface={"outer_radius": 400.0, "inner_radius": 300.0},
                                           load={"axial_force": 60000.0}, lining={"thickness": 30.0}),
    "softest lining on the stiffest bodies": with_tables(PLATE, lining={"youngs_modulus": 1.0},
                                                         pressure_plate={"youngs_modulus": 7e5},
                                                         counter_plate={"youngs_modulus": 7e5},
                                                         disc={"youngs_modulus": 7e5}),
    "stiffest lining on the softest bodies": with_tables(PLATE, lining={"youngs_modulus": 1.5e5, "poissons_ratio": 0.45},
                                                         pressure_plate={"youngs_modulus": 1e4},
                                                         counter_plate={"youngs_modulus": 1e4},
                                                         disc={"youngs_modulus": 1e4}),
    "softest housing springs": with_tables(PLATE, support={"type": "springs", "axial_stiffness": 10.0,
                                                           "radial_stiffness": 10.0}),
    "highest mean pressure (20 MPa)": with_tables(PLATE, load={"axial_force": 20.0 * 3.14159 * (120**2 - 80**2)}),
    "40-face pack, no mesh study": with_tables(PLATE, interface={"friction_surfaces": 40}, verification=NO_STUDY),
    "largest tilt (2°)": with_tables(CONE, misalignment={"axis_tilt": 2.0}),
}
SLOW = {
    "largest axisymmetric mesh allowed": with_tables(PLATE, mesh={"refinement": 5.0}, verification=NO_STUDY),
    "largest tilt grid (256 angles)": with_tables(CONE, misalignment={"axis_tilt": 0.05},
                                                  mesh={"angular_divisions": 256}),
}


def run_one(label: str, data: dict, folder: Path) -> dict:
    case = write_toml(folder / "case.toml", {"name": "extreme", **data})
    out = folder / "out"
    with open(folder / "stderr.txt", "w+") as err:
        proc = subprocess.Popen([sys.executable, "-m", "clutchfe._cli", "run", str(case), "--out", str(out), "-q"],
                                stdout=subprocess.DEVNULL, stderr=err)
        _, status, usage = os.wait4(proc.pid, 0)        # this child's own CPU time and peak memory
        err.seek(0)
        stderr = err.read()
    code = os.waitstatus_to_exitcode(status)
    cpu = usage.ru_utime + usage.ru_stime
    largest = ""
    summary = out / "summary.json"
    if summary.exists():
        s = json.loads(summary.read_text())
        study = s.get("mesh_study") or {}
        meshes = study.get("meshes") or []
        largest = max((m.get("triangles", 0) for m in meshes), default=s.get("mesh", {}).get("triangles", ""))
    last = (stderr.strip().splitlines() or [""])[-1][:110]
    return {"label": label, "exit": code, "cpu_s": cpu, "peak_MB": usage.ru_maxrss / 1024,
            "largest_mesh": largest, "note": last if code else ""}


def main(argv: list[str]) -> int:
    cases = dict(EXTREMES) if "--quick" in argv else {**EXTREMES, **SLOW}
    print(f"{'case':42s} {'exit':>4s} {'CPU s':>7s} {'peak MB':>8s} {'largest mesh':>12s}  note")
    bad = 0
    for label, data in cases.items():
        with tempfile.TemporaryDirectory() as tmp:
            row = run_one(label, data, Path(tmp))
        bad += row["exit"] not in (0, 2, 3)
        print(f"{row['label']:42s} {row['exit']:4d} {row['cpu_s']:7.1f} {row['peak_MB']:8.0f} "
              f"{str(row['largest_mesh']):>12s}  {row['note']}", flush=True)
    print(f"{len(cases)} cases, {bad} ended other than 0 (ok), 2 (refused) or 3 (cannot solve)")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
