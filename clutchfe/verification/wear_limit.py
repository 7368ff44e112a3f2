"""Uniform-wear limit: a lining worn in by Archard's law carries p·r = const, T -> T_uw.

A thin lining between numerically rigid plates is a Winkler foundation (Johnson 1985, §5.8);
worn in under constant force, Archard wear (Archard, J. Appl. Phys. 1953) is uniform only when
p·r is constant, which is the uniform-wear pressure p = W / (2π (r2 − r1) r) of the machine-design
texts (Shigley's clutch chapter).  The invented plate: r1 = 80 mm, r2 = 120 mm, W = 4000 N.
"""
from __future__ import annotations

import math

import numpy as np

from ..case import case_from_dict
from ..comparison import compare, hand_of
from ..fem.wear import wear_in
from ..solve import SolveService
from .checks import Check, relative

SOURCE = "Archard 1953 + uniform-wear method (Shigley, clutch chapter)"
PLATE = {
    "kind": "plate", "name": "verification plate",
    "interface": {"inner_radius": 80.0, "outer_radius": 120.0, "friction_coefficient": 0.3,
                  "friction_surfaces": 2},
    "load": {"axial_force": 4000.0},
    "lining": {"youngs_modulus": 400.0, "thickness": 1.0},
    "pressure_plate": {"youngs_modulus": 4e7}, "disc": {"youngs_modulus": 4e7},
    "counter_plate": {"youngs_modulus": 4e7},
}
WEAR_COEFFICIENT = 2e-6          # mm³/(N·m); the worn-in state does not depend on it


def uniform_wear_limit() -> list[Check]:
    case = case_from_dict(PLATE, limit_case=True)
    solved = SolveService().solve(case, fields=False)
    path = wear_in(solved.solver, WEAR_COEFFICIENT, max_steps=1000, gaps=list(solved.gaps),
                   load_scale=solved.load_scale)
    final = path.states[-1].interfaces
    r1, r2, force = 80.0, 120.0, 4000.0
    worst = 0.0
    for itf in final:
        on = itf.tributary_area > 0
        exact = force / (2 * math.pi * (r2 - r1) * itf.r[on])
        worst = max(worst, float(np.max(np.abs(itf.pressure[on] / exact - 1))))
    result = compare(final, hand_of(case))
    name = f"Winkler plate worn in ({path.steps} steps, {path.stop_reason})"
    return [
        Check(name, "largest |p / (W/(2π(r2−r1)r)) − 1| [-]", worst, 0.0, worst, "absolute", 0.01, SOURCE),
        relative(name, "worn-in torque / uniform-wear torque [N·m]", result["torque_fe_Nm"],
                 result["torque_uniform_wear_Nm"], 1e-3, SOURCE),
    ]
