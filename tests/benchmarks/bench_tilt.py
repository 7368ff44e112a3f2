"""Tilted contact: harmonic model (FFT grid) against the 3D tetrahedral reference.

Prints, for one tilted plate (lining on a steel base, stiff pressed block, part of the face
open): harmonic solve time, 3D reference time, their ratio (target >= 20x at equal accuracy),
the accuracy of both against the finest 3D model, and the time of one extra tilt value
reusing the condensed compliance (target: milliseconds). Ratios from one run; no asserts.
"""
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "fem"))
from test_harmonic import lined_blocks  # noqa: E402

from clutchfe.fem.solid3d import Solid3d  # noqa: E402
from clutchfe.fem.tilted import TiltedContactSolver  # noqa: E402

TILT = 0.05   # deg


def torque(interfaces):
    return sum(float((g.normal_force.sum(axis=1) * g.r).sum()) for g in interfaces)


def main():
    model = lined_blocks(E_steel=2e5, order=1, nu_lining=0.25, E_top=2e8, elements=5)
    t0 = time.perf_counter()
    solver = TiltedContactSolver(model, "top", grid=32)
    h = solver.solve(tilt_deg=TILT)
    t_h = time.perf_counter() - t0
    t0 = time.perf_counter()
    solver.solve(tilt_deg=1.3 * TILT)
    t_extra = time.perf_counter() - t0
    rows = []
    for layers in (32, 64):
        t0 = time.perf_counter()
        ref = Solid3d(model, layers, pressed="top").solve(tilt_deg=TILT, pivot_z=solver.pivot_z)
        rows.append((layers, time.perf_counter() - t0, ref))
    finest = rows[-1][2].interfaces
    print(f"harmonic model, 16 harmonics on a 32-angle grid: {t_h:.3f} s "
          f"(torque {torque(h.interfaces) / torque(finest) - 1:+.2e}, "
          f"peak {h.interfaces[0].pressure.max() / finest[0].pressure.max() - 1:+.2e} vs finest 3D)")
    for layers, t, ref in rows:
        print(f"3D reference, {layers} layers, {ref.dofs} dofs: {t:.3f} s, ratio 3D/harmonic = {t / t_h:.1f} x")
    print(f"one extra tilt value reusing the condensed compliance: {1000 * t_extra:.1f} ms")


if __name__ == "__main__":
    main()
