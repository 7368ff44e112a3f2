"""Unilateral contact against closed forms: Hertz sphere on flat, rigid flat punch."""
from __future__ import annotations

import numpy as np
from scipy.integrate import quad

from ..fem import FaceLoad, SpringSupport, solve
from .checks import Check, relative
from .meshes import BlockSection, graded
from .solids import STEEL_E, STEEL_NU

HERTZ_SOURCE = "Johnson, Contact Mechanics 1985, §4.2 (Hertz)"
PUNCH_SOURCE = "Johnson 1985, §3.8; Sneddon 1965 (flat punch)"
RIGID_BASE = SpringSupport("low_bottom", axial_stiffness=None, radial_stiffness=0.0)


def e_star(E1: float, nu1: float, E2: float, nu2: float) -> float:
    # 1/E* = (1-nu1^2)/E1 + (1-nu2^2)/E2  (Johnson 1985, §4.2)
    return 1.0 / ((1 - nu1**2) / E1 + (1 - nu2**2) / E2)


def axis_settlement_half_space(depth: float, p0: float, a: float, E: float, nu: float) -> float:
    """Axial displacement at ``depth`` on the axis under Hertz pressure, integrating
    eps_z = (s_z - 2 nu s_r)/E from depth to infinity with the axis stresses
    s_z = -p0/(1+x^2), s_r = p0(-(1+nu)(1 - x atan(1/x)) + 1/(2(1+x^2))), x = z/a
    (Johnson 1985, §3.4; at depth 0 this gives the surface value (1-nu^2) pi p0 a / 2E)."""
    def strain(z):
        x = z / a
        sz = -p0 / (1 + x * x)
        sr = (p0 * (-(1 + nu) * (1 - x * np.arctan(1 / x)) + 0.5 / (1 + x * x)) if x > 0
              else -p0 * (1 + 2 * nu) / 2)
        return (sz - 2 * nu * sr) / E
    return -quad(strain, depth, np.inf, limit=200)[0]


# Hertz set-up: sphere radius, target contact radius, block size (40 a), node spacing, and the
# depth of the axis points between which the approach is read
HERTZ_R, HERTZ_A, HERTZ_BLOCK, HERTZ_H, HERTZ_DEPTH = 100.0, 1.0, 40.0, 0.05, 1.0


def hertz_model():
    """Two steel blocks with the gap r²/2R of a sphere on a flat: (blocks, FeModel, P, E*)."""
    R = HERTZ_R
    Es = e_star(STEEL_E, STEEL_NU, STEEL_E, STEEL_NU)
    P = 4 * Es * HERTZ_A**3 / (3 * R)
    r = graded(0.0, 1.5, HERTZ_BLOCK, HERTZ_H)
    s = BlockSection().add_block("low", r, -r[::-1]).add_block("up", r, r)
    pair = s.pair("hertz", "low_top", "up_bottom", (0.0, 1.0))
    # the gap r^2/2R as a function so that P2 mid-nodes see the parabola, not its chord
    pair.initial_gap_function = lambda rr, zz: rr**2 / (2 * R)
    model = s.model([STEEL_E, STEEL_E], [STEEL_NU, STEEL_NU], [False, True], supports=[RIGID_BASE],
                    loads=[FaceLoad("up_top", -P)], contacts=[pair])
    return s, model, P, Es


def punch_model(a: float = 1.0, force: float = 1000.0):
    """A numerically rigid punch (10^4 x stiffer) of radius a on a steel block of 40 a: (blocks, FeModel)."""
    block = graded(0.0, 1.5, 40.0 * a, 0.025 * a)
    s = BlockSection().add_block("low", block, -block[::-1])
    s.add_block("punch", block[block <= a + 1e-12], np.linspace(0.0, 0.5 * a, 11))
    top = s.faces["low_top"]
    s.faces["low_top_centre"] = top[:, s.points[0, top].max(axis=0) <= a + 1e-12]
    pair = s.pair("punch", "punch_bottom", "low_top_centre", (0.0, -1.0))
    model = s.model([STEEL_E, 1e4 * STEEL_E], [STEEL_NU, STEEL_NU], [False, True], supports=[RIGID_BASE],
                    loads=[FaceLoad("punch_top", -force)], contacts=[pair])
    return s, model


def hertz_sphere_on_flat() -> list[Check]:
    """Sphere R = 100 mm on a flat, both steel, loaded to a contact radius of 1 mm (P2 blocks of 40 a)."""
    R, depth = HERTZ_R, HERTZ_DEPTH
    s, model, P, Es = hertz_model()
    res = solve(model)
    a = (3 * P * R / (4 * Es)) ** (1 / 3)          # a^3 = 3PR/4E*
    p0 = 3 * P / (2 * np.pi * a**2)                 # p0 = 3P/(2 pi a^2)
    it = res.interfaces[0]
    # p^2 is linear in r^2 inside the contact: the fit reads a independently of node positions
    inner = it.r < 0.8 * a
    slope, intercept = np.polyfit(it.r[inner] ** 2, it.pressure[inner] ** 2, 1)
    # the blocks add a bulk compliance of order a/L to the rigid approach, so the approach is
    # read locally between axis points one contact radius deep (see axis_settlement_half_space)
    local = a**2 / R - 2 * axis_settlement_half_space(depth, p0, a, STEEL_E, STEEL_NU)
    fe_local = res.displacement[1, s.vertex_at(0.0, -depth)] - res.displacement[1, s.vertex_at(0.0, depth)]
    name = "Hertz sphere on flat"
    return [
        relative(name, "peak contact pressure p0 [MPa]", float(np.max(it.pressure)), p0, 1e-2, HERTZ_SOURCE),
        relative(name, "contact radius a (fit of p² against r²) [mm]", np.sqrt(-intercept / slope), a, 1e-2,
                 HERTZ_SOURCE),
        relative(name, "approach between axis points 1 mm deep [mm]", fe_local, local, 2e-2,
                 HERTZ_SOURCE + ", §3.4"),
        relative(name, "sum of contact forces [N]", float(np.sum(it.normal_force)), P, 1e-9,
                 "statics: force balance (Timoshenko & Goodier 1970)"),
    ]


def rigid_flat_punch() -> list[Check]:
    """Numerically rigid cylindrical punch (a = 1 mm, 10^4 x stiffer) on a steel block of 40 a."""
    a, P = 1.0, 1000.0
    s, model = punch_model(a, P)
    res = solve(model)
    # the free surface sinks by (2 delta/pi) asin(a/r), so the settlement of the punch relative
    # to the surface at r1 = 2a is delta (1 - (2/pi) asin(a/r1)): local, free of bulk compliance
    r1 = 2.0 * a
    centre = [i for i in s.vertices_on("punch_bottom") if s.points[0, i] == 0.0][0]
    settle = res.displacement[1, s.vertex_at(r1, 0.0)] - res.displacement[1, centre]
    delta = settle / (1 - 2 / np.pi * np.arcsin(a / r1))
    stiffness = 2 * a * e_star(STEEL_E, STEEL_NU, 1e4 * STEEL_E, STEEL_NU)      # P/delta = 2 a E*
    it = res.interfaces[0]
    name = "rigid flat punch"
    return [
        relative(name, "punch stiffness P/δ [N/mm]", P / delta, stiffness, 2e-2, PUNCH_SOURCE),
        relative(name, "face in contact [fraction of nodes]", float(np.mean(it.in_contact)), 1.0, 0.0,
                 PUNCH_SOURCE),
    ]
