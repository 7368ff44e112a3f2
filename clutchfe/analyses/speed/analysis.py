"""The clutch at its running speed: centrifugal load, the pressure and capacity at speed, stresses, burst margin.

The case's [speed] table asks for it. Every body turns at ``speed.running_speed``: the centrifugal body force
ρ ω² r (fem/centrifugal.py) enters the elastic contact as an extra load on the condensed solver (one
back-substitution, no new factorisation: it changes the gaps by Giᵀ K⁻¹ f), so the pressure, the torque, ξ
and R_eff at speed follow from one more contact solve at the case's own clamp force. Reported per body: the
largest von Mises and hoop stress at speed (clamp and spin together) against the yield strength of its table,
and the speed at which the mean hoop stress of the spin alone reaches the tensile strength, the rim-burst
estimate ω_b = ω √(σ_uts / σ̄_θ) (fem.centrifugal.burst_speed, which names its criterion), as a margin
on the running speed.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from skfem import asm

from ...comparison import CONSERVATIVE_WORDS, Comparison, HandCapacity, compare, conservative_methods
from ...errors import PhysicsError
from ...fem import ContactError, FeResult
from ...fem.centrifugal import BodySpeedStress, body_stresses, burst_speed, centrifugal_force, rad_per_s, tonne_per_mm3
from ...fem.stress import quadrature_stress, von_mises
from ..materials import material_table, triangle_values

RPM = 2.0 * math.pi / 60.0          # rad/s per rpm


@dataclass(frozen=True)
class BodyAtSpeed:
    """One body at the running speed (MPa, rpm; a margin is the strength over the stress, less 1)."""

    body: str
    max_von_mises_MPa: float            # clamp and spin together, at the vertices
    max_von_mises_at_mm: tuple[float, float]
    max_hoop_MPa: float
    yield_strength_MPa: float | None    # None for a lining (judged on its tensile strength only)
    yield_margin: float | None
    mean_hoop_spin_MPa: float           # spin alone: ∫ σ_θ dA / A over the body's section
    tensile_strength_MPa: float
    burst_speed_rpm: float | None       # None: the mean hoop stress is not tensile (no burst by this criterion)


@dataclass(frozen=True)
class SpeedResult:
    """The case at its running speed next to the same case at rest."""

    running_speed_rpm: float
    fe: FeResult                        # contact at speed, with fields
    displacement: np.ndarray            # (2, vertices) mm at speed
    comparison: Comparison              # at speed
    cold: Comparison                    # at rest (the case's own)
    bodies: list[BodyAtSpeed]

    @property
    def burst_margin(self) -> float | None:
        """Least burst speed over the running speed, less 1 (None when no body can burst by the criterion)."""
        speeds = [b.burst_speed_rpm for b in self.bodies if b.burst_speed_rpm is not None]
        return min(speeds) / self.running_speed_rpm - 1.0 if speeds else None


def centrifugal_load_of_case(solved, omega: float) -> np.ndarray:
    """The centrifugal load (N, every dof) of the whole section at ω rad/s, each triangle with the density of
    its region's material (a lining its [lining] density)."""
    system = solved.solver.system
    rho = tonne_per_mm3(1.0) * triangle_values(solved.case, solved.section, solved.mesh, ("density",))[:, 0]
    nqp = system.basis.X.shape[1]
    return asm(centrifugal_force, system.basis, rho=np.repeat(rho[:, None], nqp, 1), omega=float(omega))


def _strength(case, solved, body: str, key: str) -> float:
    """The strength ``key`` of a body: its core material's table (the first non-lining region of the body)."""
    region = next(reg for reg in solved.section.regions if reg.body == body and not reg.lining_layers)
    return float(getattr(material_table(case, region), key))


def speed_of_case(solved, hand: HandCapacity) -> SpeedResult:
    """The solved case (``solve.SolvedCase``) at its [speed] running speed."""
    case, solver = solved.case, solved.solver
    rpm = float(case.speed.running_speed)
    omega = rad_per_s(rpm)
    load = centrifugal_load_of_case(solved, omega)
    try:
        fe = solver.solve(list(solved.gaps), solved.load_scale, fields=True, extra_load=load)
    except ContactError as exc:
        raise PhysicsError(f"at the running speed {rpm:g} rpm: {exc}") from None
    req = case.requirement
    at_speed = compare(fe.interfaces, hand, req.required_torque, req.service_factor,
                       allowable_pressure_MPa=case.lining.allowable_pressure)
    cold = compare(solved.fe.interfaces, hand, req.required_torque, req.service_factor,
                   allowable_pressure_MPa=case.lining.allowable_pressure)
    system = solver.system
    u = solver.displacement_of_state(fe, solved.load_scale, load)
    clamped = body_stresses(system, u, fields=fe.stress)
    # the spin alone (no clamp, no contact force): the stress the burst estimate is defined on
    u_spin = solver.displacement_of(np.zeros(solver.g0.size), np.zeros(len(solver.prep.free_bodies)), 0.0, load)
    free = {s.body: s for s in body_stresses(system, u_spin)}
    bodies = [_body(case, solved, s, free[s.body], omega) for s in clamped]
    bodies += _linings(case, solved, system, u, u_spin, omega)
    return SpeedResult(rpm, fe, np.asarray(fe.displacement), at_speed, cold, bodies)


def _linings(case, solved, system, u, u_spin, omega: float) -> list[BodyAtSpeed]:
    """Each lining region as its own entry: a bonded facing bursts by its own tensile strength (the hoop stress
    its carrier's growth and its own spin give it), whatever its carrier can take."""
    names = np.asarray(solved.mesh.region_names)[np.asarray(solved.mesh.triangle_region)]
    dx = system.basis.dx
    clamped = quadrature_stress(system, u)          # once: every lining region reads it
    tt_spin = quadrature_stress(system, u_spin)[2]
    field = von_mises(*clamped)
    out = []
    for reg in solved.section.regions:
        if not reg.lining_layers:
            continue
        on = names == reg.name
        area = float(np.sum(dx[on]))
        mean_spin = float(np.sum(tt_spin[on] * dx[on]) / area)
        uts = float(case.lining.tensile_strength)
        burst = burst_speed(omega, mean_spin, uts)
        at = np.unravel_index(int(np.argmax(np.where(on[:, None], field, -np.inf))), field.shape)
        xy = np.asarray(system.basis.global_coordinates())[:, at[0], at[1]]
        out.append(BodyAtSpeed(f"{reg.body} lining", float(field[at]), (float(xy[0]), float(xy[1])),
                               float(np.max(clamped[2][on])), None, None, mean_spin, uts,
                               burst / RPM if math.isfinite(burst) else None))
    return out


def _body(case, solved, s: BodySpeedStress, spin: BodySpeedStress, omega: float) -> BodyAtSpeed:
    yield_mpa = _strength(case, solved, s.body, "yield_strength")
    uts = _strength(case, solved, s.body, "tensile_strength")
    burst = burst_speed(omega, spin.mean_hoop, uts)
    return BodyAtSpeed(s.body, s.max_von_mises, s.max_von_mises_at, s.max_hoop, yield_mpa,
                       yield_mpa / s.max_von_mises - 1.0 if s.max_von_mises > 0 else math.inf,
                       spin.mean_hoop, uts, burst / RPM if math.isfinite(burst) else None)


def speed_summary(result: SpeedResult, case) -> dict:
    """Summary keys of the speed analysis (units in the names); warnings and failed criteria."""
    c, cold = result.comparison, result.cold
    out = {
        "running_speed_rpm": result.running_speed_rpm,
        "torque_at_speed_Nm": c["torque_fe_Nm"],
        "capacity_position_at_speed": c["capacity_position"],
        "effective_radius_at_speed_mm": c["effective_radius_mm"],
        "effective_radius_shift_at_speed_mm": c["effective_radius_mm"] - cold["effective_radius_mm"],
        "peak_pressure_at_speed_MPa": c["peak_pressure_MPa"],
        "design_peak_pressure_at_speed_MPa": c["design_peak_pressure_MPa"],
        "contact_area_fraction_at_speed": c["contact_area_fraction"],
        "max_von_mises_at_speed_MPa": {b.body: b.max_von_mises_MPa for b in result.bodies},
        "max_hoop_stress_at_speed_MPa": {b.body: b.max_hoop_MPa for b in result.bodies},
        "yield_margin_at_speed": {b.body: b.yield_margin for b in result.bodies},
        "mean_hoop_stress_spin_MPa": {b.body: b.mean_hoop_spin_MPa for b in result.bodies},
        "burst_speed_rpm": {b.body: b.burst_speed_rpm for b in result.bodies},
        "speed_burst_margin": result.burst_margin,
        "conservative_hand_method_at_speed": conservative_methods(c["capacity_position"]),
    }
    warnings, failed = [], []
    weakest = min((b for b in result.bodies if b.yield_margin is not None), key=lambda b: b.yield_margin)
    if weakest.yield_margin < 0.0:
        failed.append("yield strength (at speed)")
        warnings.append(f"WARNING: AT {result.running_speed_rpm:g} RPM THE {weakest.body.upper()} YIELDS: von Mises "
                        f"{weakest.max_von_mises_MPa:.4g} MPa against a yield strength of "
                        f"{weakest.yield_strength_MPa:.4g} MPa (at r = {weakest.max_von_mises_at_mm[0]:.1f} mm).")
    at_rest = conservative_methods(cold["capacity_position"])
    if at_rest != out["conservative_hand_method_at_speed"]:
        warnings.append(
            f"WARNING: AT SPEED THE CONSERVATIVE HAND FORMULA CHANGES: at rest {CONSERVATIVE_WORDS[at_rest]} "
            f"(xi = {cold['capacity_position']:.3f}), at {result.running_speed_rpm:g} rpm "
            f"{CONSERVATIVE_WORDS[out['conservative_hand_method_at_speed']]} (xi = {c['capacity_position']:.3f}).")
    margin = result.burst_margin
    if margin is not None and margin < 0.0:
        failed.append("burst speed")
        warnings.append(f"WARNING: THE RUNNING SPEED IS ABOVE THE BURST ESTIMATE: burst margin {100 * margin:.3g} %.")
    if c["contact_area_fraction"] < 1.0 <= cold["contact_area_fraction"]:
        failed.append("partial contact (at speed)")
        warnings.append(f"WARNING: AT SPEED THE FRICTION FACE OPENS: contact over "
                        f"{100 * c['contact_area_fraction']:.1f} % of it.")
    allowable = case.lining.allowable_pressure
    if allowable and c["design_peak_pressure_MPa"] > allowable:
        failed.append("allowable pressure (at speed)")
    if c.get("capacity_margin_fe") is not None and c["capacity_margin_fe"] < 0.0:
        failed.append("required torque (at speed)")
        warnings.append("WARNING: AT SPEED THE CLUTCH SLIPS: its FE capacity falls below the required torque times "
                        "the service factor.")
    out["speed_warnings"], out["speed_failed"] = warnings, failed
    return out
