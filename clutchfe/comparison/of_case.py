"""The comparison stage applied to a case and its solve (axisymmetric or on the (r, θ) grid)."""
from __future__ import annotations

import numpy as np

from .compare import Comparison, compare
from .hand import HandCapacity, hand_capacity


def hand_of(case) -> HandCapacity:
    """The two hand methods at the case's interface and force."""
    itf = case.interface
    return hand_capacity(itf.inner_radius, itf.outer_radius, itf.semi_cone_angle, itf.friction_coefficient,
                         itf.friction_surfaces, case.load.axial_force)


def grid_peak(grid_interfaces) -> tuple[float, float, str, float]:
    """(peak pressure MPa, its radius mm, its surface, its angle deg) on the (r, θ) grid."""
    g = max(grid_interfaces, key=lambda x: float(x.pressure.max()))
    i, j = np.unravel_index(int(np.argmax(g.pressure)), g.pressure.shape)
    return float(g.pressure[i, j]), float(g.r[i]), g.name, float(np.degrees(g.theta[j]))


def grid_contact_fraction(grid_interfaces) -> float:
    """Share of the friction area in contact on the (r, θ) grid."""
    cells = sum(float(np.sum(x.area)) for x in grid_interfaces)
    closed = sum(float(np.sum(x.area[:, None] / x.theta.size * x.in_contact)) for x in grid_interfaces)
    return closed / cells


def compare_solved(solved, hand: HandCapacity | None = None) -> Comparison:
    """Compare a solved case (``solve.SolvedCase``); a tilted one gives its peak and contact on
    the (r, θ) grid, its torque from the θ-summed rings."""
    case = solved.case
    hand = hand if hand is not None else hand_of(case)
    req = case.requirement
    extra = {}
    if solved.tilted is not None:
        p, r, surface, _ = grid_peak(solved.tilted.interfaces)
        extra = {"peak": (p, r, surface), "contact_area_fraction": grid_contact_fraction(solved.tilted.interfaces)}
    return compare(solved.fe.interfaces, hand, req.required_torque, req.service_factor, **extra)
