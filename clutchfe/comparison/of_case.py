"""The comparison stage applied to a case and its solve (axisymmetric or on the (r, θ) grid)."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from .compare import Comparison, compare
from .design_peak import design_peak
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


def grid_design_peak(grid_interfaces, hand: HandCapacity) -> tuple[float, float, str]:
    """The design peak (band mean along the face, see design_peak.py) at the worst angle of the grid."""
    best = (-1.0, 0.0, "")
    for g in grid_interfaces:
        for j in range(g.theta.size):
            value, r = design_peak(g.r, g.pressure[:, j], hand.inner_radius_mm, hand.outer_radius_mm,
                                   hand.semi_cone_angle_deg)
            if value > best[0]:
                best = (value, r, g.name)
    return best


def _grid_surfaces(comparison: Comparison, grid_interfaces, hand: HandCapacity) -> tuple:
    """Per-surface entries with the grid's peak, design peak and contact (one meaning per key:
    on a tilted face they are the (r, θ) values, like the top-level keys)."""
    out = []
    for entry, g in zip(comparison.surfaces, grid_interfaces):
        p, r, _, _ = grid_peak([g])
        d, dr, _ = grid_design_peak([g], hand)
        out.append({**entry, "peak_pressure_MPa": p, "design_peak_pressure_MPa": d, "design_peak_radius_mm": dr,
                    "contact_area_fraction": grid_contact_fraction([g])})
    return tuple(out)


def compare_solved(solved, hand: HandCapacity | None = None) -> Comparison:
    """Compare a solved case (``solve.SolvedCase``); a tilted one gives its peaks and contact on
    the (r, θ) grid, its torque from the θ-summed rings."""
    case = solved.case
    hand = hand if hand is not None else hand_of(case)
    req = case.requirement
    extra = {"allowable_pressure_MPa": case.lining.allowable_pressure}
    grid = solved.tilted.interfaces if solved.tilted is not None else None
    if grid is not None:
        p, r, surface, _ = grid_peak(grid)
        extra.update(peak=(p, r, surface), contact_area_fraction=grid_contact_fraction(grid),
                     design=grid_design_peak(grid, hand))
    result = compare(solved.fe.interfaces, hand, req.required_torque, req.service_factor, **extra)
    if grid is not None:
        result = replace(result, surfaces=_grid_surfaces(result, grid, hand))
    return result
