"""Axis tilt (non-axisymmetric contact): the harmonic model against the elastic-foundation
closed form and against an independent 3D tetrahedral solve.

The section is a lined annulus (r1 = 60 mm, r2 = 75 mm) on a steel base, pressed by a steel
ring along the axis whose tilt its guidance holds; both checks run in about a second.
"""
from __future__ import annotations

import math

import numpy as np

from ..fem import FaceLoad, FeModel, SpringSupport
from .checks import Check, absolute, relative
from .meshes import BlockSection

WINKLER_TILT_SOURCE = "Johnson 1985, §5.8 (elastic foundation): p = k (δ0 + φ r cos θ)"
SOLID_SOURCE = ("independent 3D tetrahedral FE solve of the revolved section "
                "(Zienkiewicz & Taylor, The Finite Element Method)")
R1, R2, LINING_T, LINING_E, W = 60.0, 75.0, 0.5, 10.0, 2000.0


def lined_annulus(E_base: float, E_top: float, nu_lining: float, elements: int, order: int):
    """Base block with a bonded lining (its top is the friction face) and a pressed ring above."""
    r = np.linspace(R1, R2, elements + 1)
    sec = BlockSection()
    z_base = np.concatenate([np.linspace(-5.0, 0.0, 3), np.linspace(0.0, LINING_T, 3)[1:]])
    sec.add_block("base", r, z_base)
    sec.add_block("top", r, np.linspace(LINING_T, LINING_T + 5.0, 3))
    pair = sec.pair("s1", "base_top", "top_bottom", (0.0, 1.0))
    mid_z = sec.points[1][sec.triangles].mean(axis=0)
    lining = (sec.element_body == 0) & (mid_z > 0.0)
    E = np.where(lining, LINING_E, np.where(sec.element_body == 1, E_top, E_base))
    nu = np.where(lining, nu_lining, 0.3)
    return FeModel(sec.points, sec.triangles, sec.element_body, E, nu, ["base", "top"], [False, True],
                   dict(sec.faces), supports=[SpringSupport("base_bottom", axial_stiffness=None, radial_stiffness=None)],
                   loads=[FaceLoad("top_top", -W)], contacts=[pair], element_order=order)


def winkler_small_tilt() -> list[Check]:
    """Lining (ν = 0) between numerically rigid steel, tilted by half the tilt that would open
    the face: p = k (δ0 + φ r cos θ) with k = E / t, and the tilting moment k φ π (r2⁴ − r1⁴) / 4."""
    from ..fem.tilted import TiltedContactSolver

    solver = TiltedContactSolver(lined_annulus(2e8, 2e8, 0.0, 15, 2), "top", grid=16)
    k = LINING_E / LINING_T
    delta0 = W / (k * math.pi * (R2 ** 2 - R1 ** 2))
    phi = 0.5 * delta0 / R2
    res = solver.solve(tilt_deg=math.degrees(phi))
    g = res.interfaces[0]
    expected = k * (delta0 + phi * g.r[:, None] * np.cos(g.theta)[None])
    inner = (g.r > R1 + 2 * LINING_T) & (g.r < R2 - 2 * LINING_T)        # away from the free lining ends
    misfit = float(np.abs(g.pressure[inner] - expected[inner]).max() / expected.max())
    moment = k * phi * math.pi * (R2 ** 4 - R1 ** 4) / 4
    name = f"Winkler lining under a small tilt ({math.degrees(phi):.2g}°)"
    return [
        absolute(name, "largest deviation from k (δ0 + φ r cos θ) [fraction of peak]", misfit, 0.0, 0.01,
                 WINKLER_TILT_SOURCE),
        relative(name, "peak pressure [MPa]", float(g.pressure[inner].max()), float(expected[inner].max()), 0.01,
                 WINKLER_TILT_SOURCE),
        relative(name, "tilting moment [N·mm]", abs(res.moment[0]), moment, 0.02,
                 WINKLER_TILT_SOURCE + "; moment k φ π (r2⁴ − r1⁴)/4"),
        absolute(name, "closed fraction of the face [-]", float(g.in_contact.mean()), 1.0, 0.0,
                 WINKLER_TILT_SOURCE + " (tilt below the opening tilt δ0 / r2)"),
    ]


def harmonic_vs_solid() -> list[Check]:
    """A tilt that opens part of a lined plate face: harmonics on a 32-angle grid against a 3D
    tetrahedral model of the same section revolved in 32 layers (torque 3 %, peak 10 %, open
    angle within one grid cell, as tests/test_tilt.py asks on finer pairs)."""
    from ..fem.solid3d import Solid3d
    from ..fem.tilted import TiltedContactSolver

    tilt, grid = 0.05, 32
    model = lined_annulus(2e5, 2e8, 0.25, 5, 1)
    solver = TiltedContactSolver(model, "top", grid=grid)
    h = solver.solve(tilt_deg=tilt)
    ref = Solid3d(model, grid, pressed="top").solve(tilt_deg=tilt, pivot_z=solver.pivot_z)
    gh, g3 = h.interfaces[0], ref.interfaces[0]

    def torque(g):
        return float((g.normal_force.sum(axis=1) * g.r).sum()) / 1000.0

    def open_angle(g):
        return 360.0 * (1.0 - g.in_contact.any(axis=0).mean())

    name = f"harmonics vs 3D, lined plate tilted {tilt:g}°"
    cell = 360.0 / grid
    return [
        relative(name, "torque per unit μ [N·m]", torque(gh), torque(g3), 0.03, SOLID_SOURCE),
        relative(name, "peak pressure [MPa]", float(gh.pressure.max()), float(g3.pressure.max()), 0.10,
                 SOLID_SOURCE),
        absolute(name, "open angle of the face [deg]", open_angle(gh), open_angle(g3), cell + 1e-9,
                 SOLID_SOURCE + f"; within one grid cell ({cell:g}°)"),
    ]
