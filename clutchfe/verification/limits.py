"""Whole clutch cases with a known answer: the elastic-foundation limit, a linear gap and linearity.

The clutch is an invented cone (r1 = 60 mm, r2 = 75 mm, 14°, μ = 0.22, W = 2500 N) run through
the same pipeline as a user's case, so these rows check the mesher, the FE stage and the
comparison together.
"""
from __future__ import annotations

import math

import numpy as np

from ..case import case_from_dict, with_tables
from ..comparison import compare_solved
from ..solve import SolveService
from .checks import Check, absolute, relative

WINKLER_SOURCE = "Johnson 1985, §5.8 (elastic foundation)"
LINEAR_SOURCE = "linear elasticity (Timoshenko & Goodier 1970): zero-gap contact is homogeneous in W"
LINING_E = 400.0                 # MPa, a moulded lining (order of magnitude, from memory)
STIFF_BODIES = 1e5               # body modulus / lining modulus: numerically rigid bodies

TEST_CONE = {
    "kind": "cone", "name": "verification cone",
    "interface": {"inner_radius": 60.0, "outer_radius": 75.0, "semi_cone_angle": 14.0,
                  "friction_coefficient": 0.22, "friction_surfaces": 1},
    "load": {"axial_force": 2500.0},
}


def _rigid_bodies(data: dict) -> dict:
    stiff = {"youngs_modulus": STIFF_BODIES * LINING_E}
    return with_tables(data, lining={"youngs_modulus": LINING_E}, cone=stiff, cup=stiff)


class _Solved:
    """A solved case and its comparison (``result``), as these checks read them."""

    def __init__(self, case):
        self.solved = SolveService().solve(case)
        self.fe = self.solved.fe
        self.result = compare_solved(self.solved)


def _solve(data: dict):
    case = case_from_dict(data, limit_case=True)
    return case, _Solved(case)


def thin_lining_limit() -> list[Check]:
    """A lining 8 x thinner than the default between rigid bodies: p -> uniform, ξ -> 1."""
    data = _rigid_bodies(TEST_CONE)
    thin = case_from_dict(data, limit_case=True).lining.thickness / 8.0
    case, solved = _solve(with_tables(data, lining={"thickness": thin}))
    r = solved.result
    name = f"thin lining on rigid bodies (t = {thin:g} mm)"
    return [
        absolute(name, "capacity position ξ [-]", r["capacity_position"], 1.0, 0.02, WINKLER_SOURCE),
        relative(name, "effective radius [mm]", r["effective_radius_mm"], r["radius_uniform_pressure_mm"], 1e-3,
                 WINKLER_SOURCE + "; Shigley (uniform-pressure radius)"),
    ]


def linear_gap() -> list[Check]:
    """Rigid-backed 1 mm lining with a 0.02° cone-angle mismatch: p falls linearly along the slant."""
    data = with_tables(_rigid_bodies(TEST_CONE), lining={"thickness": 1.0}, misalignment={"cone_angle_mismatch": 0.02})
    case, solved = _solve(data)
    itf = solved.fe.interfaces[0]
    t = case.lining.thickness
    s = (itf.r - case.interface.inner_radius) / math.sin(math.radians(case.interface.semi_cone_angle))
    last_closed = s[itf.in_contact].max()
    window = itf.in_contact & (s > 2 * t) & (s < last_closed - 2 * t)     # away from the edge zones
    slope, intercept = np.polyfit(s[window], itf.pressure[window], 1)
    misfit = np.abs(itf.pressure[window] - (slope * s[window] + intercept)).max() / itf.pressure.max()
    E, nu = case.lining.youngs_modulus, case.lining.poissons_ratio
    # oedometric foundation modulus of a thin bonded layer: k = E (1-nu) / ((1+nu)(1-2nu) t)
    k = E * (1 - nu) / ((1 + nu) * (1 - 2 * nu) * t)
    gap_slope = math.sin(math.radians(0.02))          # normal gap per mm of slant
    name = "rigid-backed lining, 0.02° angle mismatch"
    return [
        relative(name, "pressure slope along the slant [MPa/mm]", slope, -k * gap_slope, 0.05, WINKLER_SOURCE),
        absolute(name, "deviation from a straight line [fraction of peak]", misfit, 0.0, 0.01, WINKLER_SOURCE),
    ]


def load_linearity() -> list[Check]:
    """The invented cone at W and 2W, and at μ and 2μ: T doubles, ξ stays."""
    _, ref = _solve(TEST_CONE)
    _, two_w = _solve(with_tables(TEST_CONE, load={"axial_force": 2 * TEST_CONE["load"]["axial_force"]}))
    mu = TEST_CONE["interface"]["friction_coefficient"]
    _, two_mu = _solve(with_tables(TEST_CONE, interface={"friction_coefficient": 2 * mu}))
    name = "conforming cone in full contact"
    t = ref.result["torque_fe_Nm"]
    return [
        relative(name, "torque at 2W [N·m]", two_w.result["torque_fe_Nm"], 2 * t, 1e-6, LINEAR_SOURCE),
        absolute(name, "capacity position ξ at 2W [-]", two_w.result["capacity_position"],
                 ref.result["capacity_position"], 1e-6, LINEAR_SOURCE),
        relative(name, "torque at 2μ [N·m]", two_mu.result["torque_fe_Nm"], 2 * t, 1e-9,
                 "T = n μ ∫ p r dA (Shigley's Mechanical Engineering Design, clutch chapter)"),
    ]
