"""The pack with its spline drag: load and torque per surface, drag per plate, pack efficiency (drag.py).

The case's [splines] table asks for it.  One consistent FE solve of the pack with the drag of every splined
plate (drag.solve_with_spline_drag) next to the case's own solve without it, and the closed form of a pack of
rigid plates (drag.rigid_pack_forces) at the uniform-pressure radius for comparison.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...comparison import HandCapacity, capacity_margin, radius_gap_mm
from ...comparison.design_peak import design_peak
from ...fem import FeResult
from .drag import DragSolve, rigid_pack_forces, solve_with_spline_drag, splined_plates


@dataclass(frozen=True)
class PlateDrag:
    """One splined plate: what its spline carries (N, N·m)."""

    body: str
    label: str
    spline: str
    pitch_radius_mm: float
    friction_coefficient: float
    torque_Nm: float                # friction torque the plate passes to its spline
    spline_force_N: float           # tangential tooth force T / R_s
    spline_drag_N: float            # axial friction on the teeth, opposing the closing motion
    gain: float                     # μ_s μ R_up / R_s (drag.py's a)


@dataclass(frozen=True)
class PackSurface:
    """One friction surface, counted from the pressure plate (N, N·m, mm, MPa)."""

    name: str
    position: int                   # 1 = the pressure plate's face
    axial_force_N: float
    axial_force_without_drag_N: float
    axial_force_rigid_plates_N: float
    torque_Nm: float
    torque_without_drag_Nm: float
    effective_radius_mm: float
    design_peak_pressure_MPa: float


@dataclass(frozen=True)
class PackResult:
    fe: FeResult                    # the pack with spline drag (fields)
    plates: list[PlateDrag]
    surfaces: list[PackSurface]     # from the pressure plate down
    torque_Nm: float
    torque_without_drag_Nm: float
    efficiency_rigid_plates: float
    iterations: int
    effective_radius_mm: float      # Σ F_k R_k / Σ F_k of the surfaces with spline drag
    capacity_position: float        # ξ of that radius
    capacity_margin: float | None

    @property
    def efficiency(self) -> float:
        """The pack's torque with spline drag over n μ W R_e, R_e the FE effective radius without drag (the
        torque without drag): the share of the ideal pack's capacity that reaches the shaft."""
        return self.torque_Nm / self.torque_without_drag_Nm


def faces_of_bodies(section) -> dict:
    out: dict = {}
    for itf in section.interfaces:
        for body in (itf.body_a, itf.body_b):
            out.setdefault(body, []).append(itf.name)
    return out


def pack_of_case(solved, hand: HandCapacity) -> PackResult:
    """The solved case (``solve.SolvedCase``) with the spline drag of its [splines] table."""
    case, section = solved.case, solved.section
    mu, W = case.interface.friction_coefficient, case.load.axial_force
    plates = splined_plates(case, section)
    faces_of = faces_of_bodies(section)
    r_up = hand.radius_uniform_pressure_mm
    gains = [p.friction_coefficient * mu * r_up / p.pitch_radius_mm for p in plates]
    rigid = rigid_pack_forces(W, gains)
    # start from the rigid pack's drags (what each plate holds back there): the elastic answer is close
    guess = -np.diff(np.concatenate([[W], rigid]))
    # with a measured compression curve the pack carries it too (the case's own layer on every face)
    curves = solved.layer_curves
    layers = None if curves is None else [curves.face] * len(section.interfaces)
    run: DragSolve = solve_with_spline_drag(solved.solver, solved.gaps, solved.load_scale, plates, faces_of, mu, W,
                                            first_guess=guess, layers=layers)
    plate_rows = [PlateDrag(p.body, p.label, p.spline, p.pitch_radius_mm, p.friction_coefficient, t / 1000.0,
                            t / p.pitch_radius_mm, float(d), g)
                  for p, t, d, g in zip(plates, run.torque_Nmm, run.drag_N, gains)]
    free = {itf.name: itf for itf in solved.fe.interfaces}
    surfaces = []
    for k, itf in enumerate(reversed(run.fe.interfaces)):      # s_n (pressure plate) first
        f_free = free[itf.name].normal_force
        force, moment = float(np.sum(itf.normal_force)), float(np.sum(itf.normal_force * itf.r))
        peak, _ = design_peak(itf.r, itf.pressure, hand.inner_radius_mm, hand.outer_radius_mm,
                              hand.semi_cone_angle_deg)
        surfaces.append(PackSurface(itf.name, k + 1, force, float(np.sum(f_free)), float(rigid[k]),
                                    mu * moment / 1000.0, mu * float(np.sum(f_free * free[itf.name].r)) / 1000.0,
                                    moment / force, float(peak)))
    torque = sum(s.torque_Nm for s in surfaces)
    # the radius the pressure acts at: the torque over μ times the forces the surfaces really carry (the loss of
    # force is the efficiency, not a smaller radius)
    radius = 1000.0 * torque / (mu * sum(s.axial_force_N for s in surfaces))
    req = case.requirement
    return PackResult(run.fe, plate_rows, surfaces, torque, sum(s.torque_without_drag_Nm for s in surfaces),
                      float(np.sum(rigid) / (len(surfaces) * W)), run.iterations, radius,
                      (radius - hand.radius_uniform_wear_mm) / radius_gap_mm(hand.inner_radius_mm, hand.outer_radius_mm),
                      capacity_margin(torque, req.required_torque, req.service_factor)
                      if req.required_torque is not None else None)


def pack_summary(result: PackResult, case, hand: HandCapacity) -> dict:
    """Summary keys of the spline drag (units in the names); warnings and failed criteria."""
    last = result.surfaces[-1]
    out = {
        "torque_with_spline_drag_Nm": result.torque_Nm,
        "torque_without_spline_drag_Nm": result.torque_without_drag_Nm,
        "pack_efficiency": result.efficiency,
        "pack_efficiency_rigid_plates": result.efficiency_rigid_plates,
        "capacity_position_with_spline_drag": result.capacity_position,
        "effective_radius_with_spline_drag_mm": result.effective_radius_mm,
        "capacity_margin_with_spline_drag": result.capacity_margin,
        "last_surface_force_over_clamp_force": last.axial_force_N / case.load.axial_force,
        "spline_drag_iterations": result.iterations,
        "pack_surfaces": [{"name": s.name, "position_from_pressure_plate": s.position,
                           "axial_force_N": s.axial_force_N, "axial_force_without_drag_N": s.axial_force_without_drag_N,
                           "axial_force_rigid_plates_N": s.axial_force_rigid_plates_N, "torque_Nm": s.torque_Nm,
                           "torque_without_drag_Nm": s.torque_without_drag_Nm,
                           "effective_radius_mm": s.effective_radius_mm,
                           "design_peak_pressure_MPa": s.design_peak_pressure_MPa} for s in result.surfaces],
        "spline_plates": [{"body": p.body, "spline": p.spline, "pitch_radius_mm": p.pitch_radius_mm,
                           "spline_friction_coefficient": p.friction_coefficient, "torque_Nm": p.torque_Nm,
                           "spline_force_N": p.spline_force_N, "spline_drag_N": p.spline_drag_N, "gain": p.gain}
                          for p in result.plates],
    }
    warnings, failed = [], []
    loss = 1.0 - result.efficiency
    warnings.append(f"Spline drag costs {100 * loss:.3g} % of the pack's torque ({result.torque_without_drag_Nm:.4g} → "
                    f"{result.torque_Nm:.4g} N·m); the surface farthest from the pressure plate gets "
                    f"{100 * last.axial_force_N / case.load.axial_force:.4g} % of the clamp force.")
    if result.capacity_margin is not None and result.capacity_margin < 0.0:
        failed.append("required torque (with spline drag)")
        warnings.append("WARNING: WITH SPLINE DRAG THE CLUTCH SLIPS: the pack's FE capacity with the spline friction "
                        f"({result.torque_Nm:.4g} N·m) is below the required torque times the service factor.")
    allowable = case.lining.allowable_pressure
    worst = max(result.surfaces, key=lambda s: s.design_peak_pressure_MPa)
    if allowable and worst.design_peak_pressure_MPa > allowable:
        failed.append("allowable pressure (with spline drag)")
    out["pack_warnings"], out["pack_failed"] = warnings, failed
    return out
