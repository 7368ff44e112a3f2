"""Tilted contact: harmonic model (FFT grid) against the 3D tetrahedral reference.

Prints, for a tilted lined plate and the coarse test cone of tests/test_tilt.py (part of the
face open): harmonic solve time, 3D reference time, their ratio (target >= 20x at equal
accuracy: the accuracy of each against the finest 3D model is printed beside it), and for
those and the demo cases the time of one extra tilt value reusing the condensed compliance
(target: milliseconds), cold and warm-started from the previous tilt.  Ratios from one run;
no asserts.  Run from the repository root: ``python3 -m tests.benchmarks.bench_tilt``.
"""
import time

import numpy as np

from clutchfe.fem.solid3d import Solid3d
from clutchfe.fem.tilted import TiltedContactSolver

from tests.helpers.data import ROOT
from tests.helpers.models import coarse_stiff_cone, lined_blocks


def torque(interfaces):
    return sum(float((g.normal_force.sum(axis=1) * g.r).sum()) for g in interfaces)


def extra_tilt(solver, tilt, repeat=5):
    """Median time of one more tilt value, cold (whole face closed at the start) and warm
    (started from the solution at the previous tilt)."""
    prev = solver.solve(tilt_deg=tilt)
    cold, warm = [], []
    for k in range(repeat):
        t_new = tilt * (1.0 + 0.05 * (k + 1))
        t0 = time.perf_counter()
        solver.solve(tilt_deg=t_new)
        cold.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        prev = solver.solve(tilt_deg=t_new, start=prev)
        warm.append(time.perf_counter() - t0)
    return 1000 * float(np.median(cold)), 1000 * float(np.median(warm))


def compare(label, model, pressed, tilt, layers):
    t0 = time.perf_counter()
    solver = TiltedContactSolver(model, pressed, grid=32)
    h = solver.solve(tilt_deg=tilt)
    t_h = time.perf_counter() - t0
    rows = []
    for n in layers:
        t0 = time.perf_counter()
        ref = Solid3d(model, n, pressed=pressed).solve(tilt_deg=tilt, pivot_z=solver.pivot_z)
        rows.append((n, time.perf_counter() - t0, ref))
    finest = rows[-1][2].interfaces

    def acc(its):
        return (f"torque {torque(its) / torque(finest) - 1:+.1e}, "
                f"peak {its[0].pressure.max() / finest[0].pressure.max() - 1:+.1e} vs finest 3D")

    print(f"{label}, tilt {tilt:g} deg, open {1 - h.interfaces[0].in_contact.mean():.0%} of the face")
    print(f"  harmonic model, 16 harmonics on a 32-angle grid: {t_h:.3f} s ({acc(h.interfaces)})")
    for n, t, ref in rows:
        print(f"  3D reference, {n} layers, {ref.dofs} dofs: {t:.2f} s, 3D / harmonic = {t / t_h:.0f} x"
              + (f" ({acc(ref.interfaces)})" if n != layers[-1] else " (finest)"))
    cold, warm = extra_tilt(solver, tilt)
    print(f"  one extra tilt value reusing the condensed compliance: {cold:.1f} ms cold, {warm:.1f} ms warm")


def demo(name, tilt=None):
    from dataclasses import replace

    from clutchfe.case import load_case
    from clutchfe.solve import SolveService
    case = load_case(ROOT / "cases" / name)
    if tilt is not None:
        case = replace(case, misalignment=replace(case.misalignment, axis_tilt=tilt))
    t0 = time.perf_counter()
    solved = SolveService().solve(case, fields=False)
    t_all = time.perf_counter() - t0
    solver = solved.prepared.tilted(int(case.mesh.angular_divisions))
    cold, warm = extra_tilt(solver, case.misalignment.axis_tilt)
    k, M = solver.op.shape
    print(f"demo {name} (tilt {case.misalignment.axis_tilt:g} deg, {k} x {M} grid): first solve incl. mesh and "
          f"condensation {t_all:.2f} s; extra tilt {cold:.1f} ms cold, {warm:.1f} ms warm")


def main():
    compare("lined plate (stiff pressed block)", lined_blocks(E_steel=2e5, order=1, nu_lining=0.25, E_top=2e8,
                                                             elements=5), "top", 0.05, (32, 64))
    model, _ = coarse_stiff_cone()
    compare("coarse test cone (stiff inner cone)", model, "cone", 0.06, (32, 48))
    demo("cone_capstan_tilted.toml")
    demo("plate_tractor.toml", tilt=0.05)


if __name__ == "__main__":
    main()
