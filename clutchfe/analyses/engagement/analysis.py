"""Hot engagement of a solved case: slip heat, thermal distortion and the hot torque capacity.

The case's [engagement] table asks for it. The FE stage (fem/engagement.py) follows the engagement in
time: at each step the pressure of the contact gives the frictional heat flux q = μ p v (v = ω r) on the
friction faces, transient conduction carries it into both bodies (shared through the interface by
conduction, not by a guessed partition factor, unless [engagement] heat_partition asks for one), the
thermal strain α ΔT distorts the section, the changed gap moves the pressure, iterated to convergence
within the step. Here every step is compared with the two hand methods (the comparison stage's
``compare``), and the instants a reviewer asks for are picked: the hottest, the end of slip, the
worst (least torque while slipping).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...comparison import CONSERVATIVE_WORDS, Comparison, HandCapacity, compare, conservative_methods
from ...errors import PhysicsError
from ...fem import ContactError
from ...fem.engagement import EngagementHistory, run_engagement
from .model import RPM, ThermalSetup, thermal_setup

THERMAL_CSV_COLUMNS = (
    "step", "time_s", "engagement", "slipping", "slip_speed_rpm", "torque_Nm", "capacity_position",
    "effective_radius_mm", "peak_pressure_MPa", "contact_area_fraction", "peak_temperature_C",
    "peak_temperature_radius_mm", "peak_temperature_z_mm", "peak_temperature_body", "heat_generated_J",
    "coupling_iterations", "coupling_residual")
ENERGY_TOLERANCE = 0.01         # the energy account must close within 1 % (issue's acceptance, common practice)


@dataclass(frozen=True)
class EngagementRun:
    """The hot engagement of one case: the FE history, the comparison of every step, the chosen instants."""

    history: EngagementHistory
    setup: ThermalSetup
    results: list[Comparison]       # one per step
    cold: Comparison                # the case's own (cold) comparison
    hottest: int                    # step index of the highest surface temperature
    end_of_slip: int                # last slipping step of the last engagement
    worst: int                      # slipping step of the least torque
    coning_mm: dict                 # body -> thermal coning at the end of slip, mm (see thermal_coning_mm)


def _torque_of(setup: ThermalSetup, mu: float):
    def torque(fe) -> float:        # N·mm: μ Σ f r on every modelled face, times the faces it stands for
        return setup.faces * mu * sum(float(np.sum(i.normal_force * i.r)) for i in fe.interfaces)
    return torque


def thermal_coning_mm(solved, history: EngagementHistory, step: int) -> dict:
    """Per body with a friction face: how much more its face's outer end (at r2) than its inner end (r1) has
    moved towards its mate, hot minus cold, mm (> 0: the face cones so that the pressure moves outwards)."""
    hot = history.displacement_at_vertices(step)
    cold = np.asarray(solved.fe.displacement)
    if cold.size == 0:          # solved without fields (a study sample): one back-substitution gives them
        cold = np.asarray(solved.solver.solve(list(solved.gaps), solved.load_scale, fields=True).displacement)
    points = np.asarray(solved.prepared.model.points, float)
    out = {}
    for itf in solved.section.interfaces:
        n_a = np.asarray(itf.normal_a, float) / np.linalg.norm(itf.normal_a)
        for face, body, towards in ((itf.face_a, itf.body_a, n_a), (itf.face_b, itf.body_b, -n_a)):
            verts = np.unique(np.asarray(solved.prepared.model.faces[face]))
            r = points[0, verts]
            inner, outer = verts[np.argmin(r)], verts[np.argmax(r)]
            move = (hot - cold).T @ towards
            out[f"{body} ({itf.name})"] = float(move[outer] - move[inner])
    return out


def engagement_of_case(solved, hand: HandCapacity, progress=None) -> EngagementRun:
    """The hot engagement of a solved case (``solve.SolvedCase``) with its [engagement] and [cooling] tables."""
    case = solved.case
    setup = thermal_setup(solved, case)
    eng = case.engagement
    try:
        history = run_engagement(solved.solver, setup.heat, setup.expansion, setup.heating, setup.duty,
                                 _torque_of(setup, case.interface.friction_coefficient), gaps=list(solved.gaps),
                                 load_scale=solved.load_scale, tolerance=eng.coupling_tolerance,
                                 max_iterations=eng.max_coupling_iterations, progress=progress)
    except ContactError as exc:
        raise PhysicsError(f"hot engagement: {exc}") from None
    req = case.requirement
    results = [compare(s.fe.interfaces, hand, req.required_torque, req.service_factor,
                       allowable_pressure_MPa=case.lining.allowable_pressure) for s in history.steps]
    cold = compare(solved.fe.interfaces, hand, req.required_torque, req.service_factor,
                   allowable_pressure_MPa=case.lining.allowable_pressure)
    steps = history.steps
    hottest = int(np.argmax([s.peak_rise for s in steps]))
    last = max(s.engagement for s in steps)
    slip = slip_phase(steps, setup.duty)
    end_of_slip = max(k for k in slip if steps[k].engagement == last)
    worst = min(slip, key=lambda k: results[k]["torque_fe_Nm"])
    return EngagementRun(history, setup, results, cold, hottest, end_of_slip, worst,
                         thermal_coning_mm(solved, history, end_of_slip))


def slip_phase(steps, duty) -> list[int]:
    """The steps of every engagement's slip, up to the one that ends it: with the "constant" and "linear"
    laws the first ``steps_per_engagement`` of each engagement (the last of them ends at ω = 0 with
    "linear", at ω0 with "constant"), with "inertia" up to the step that ends at lock-up (ω = 0)."""
    out, first = [], {}
    for k, s in enumerate(steps):
        start = first.setdefault(s.engagement, k)
        if duty.speed_law == "inertia":
            if s.slipping or k == start or steps[k - 1].slipping and k - 1 in out:
                out.append(k)
        elif k - start < duty.steps_per_engagement:
            out.append(k)
    return out


def thermal_rows(run: EngagementRun) -> list[dict]:
    """One row per time step (THERMAL_CSV_COLUMNS); step 0 is the cold state before slip."""
    ref = run.history.reference_temperature
    rows = [{"step": 0, "time_s": 0.0, "engagement": 1, "slipping": False,
             "slip_speed_rpm": run.setup.duty.slip_speed / RPM,
             "torque_Nm": run.cold["torque_fe_Nm"], "capacity_position": run.cold["capacity_position"],
             "effective_radius_mm": run.cold["effective_radius_mm"],
             "peak_pressure_MPa": run.cold["peak_pressure_MPa"],
             "contact_area_fraction": run.cold["contact_area_fraction"], "peak_temperature_C": ref,
             "peak_temperature_radius_mm": None, "peak_temperature_z_mm": None, "peak_temperature_body": "",
             "heat_generated_J": 0.0, "coupling_iterations": 0, "coupling_residual": 0.0}]
    for k, (s, res) in enumerate(zip(run.history.steps, run.results), start=1):
        rows.append({
            "step": k, "time_s": s.time, "engagement": s.engagement, "slipping": bool(s.slipping),
            "slip_speed_rpm": s.slip_speed / RPM, "torque_Nm": res["torque_fe_Nm"],
            "capacity_position": res["capacity_position"], "effective_radius_mm": res["effective_radius_mm"],
            "peak_pressure_MPa": res["peak_pressure_MPa"], "contact_area_fraction": res["contact_area_fraction"],
            "peak_temperature_C": ref + s.peak_rise, "peak_temperature_radius_mm": s.peak_r,
            "peak_temperature_z_mm": s.peak_z, "peak_temperature_body": s.peak_body,
            "heat_generated_J": s.heat_generated / 1000.0, "coupling_iterations": s.coupling_iterations,
            "coupling_residual": s.coupling_residual})
    return rows


def engagement_summary(run: EngagementRun, case) -> dict:
    """Summary keys of the hot engagement (units in the names); warnings in 'engagement_warnings' and
    failed criteria in 'engagement_failed'."""
    h, steps, res = run.history, run.history.steps, run.results
    ref = h.reference_temperature
    top, end, worst = steps[run.hottest], res[run.end_of_slip], res[run.worst]
    cold = run.cold
    energy = h.energy
    out = {
        "engagement_peak_temperature_C": ref + top.peak_rise, "engagement_peak_temperature_radius_mm": top.peak_r,
        "engagement_peak_temperature_z_mm": top.peak_z, "engagement_peak_temperature_time_s": top.time,
        "engagement_peak_temperature_body": top.peak_body,
        "torque_hot_end_of_slip_Nm": end["torque_fe_Nm"], "capacity_position_hot_end_of_slip": end["capacity_position"],
        "effective_radius_hot_end_of_slip_mm": end["effective_radius_mm"],
        "engagement_end_of_slip_time_s": steps[run.end_of_slip].time,
        "torque_hot_worst_Nm": worst["torque_fe_Nm"], "capacity_position_hot_worst": worst["capacity_position"],
        "effective_radius_hot_worst_mm": worst["effective_radius_mm"],
        "engagement_worst_time_s": steps[run.worst].time,
        "effective_radius_shift_end_of_slip_mm": end["effective_radius_mm"] - cold["effective_radius_mm"],
        "effective_radius_shift_worst_mm": worst["effective_radius_mm"] - cold["effective_radius_mm"],
        "peak_pressure_hot_MPa": max(r["peak_pressure_MPa"] for r in res),
        "contact_area_fraction_hot_min": min(r["contact_area_fraction"] for r in res),
        "thermal_coning_mm": run.coning_mm,
        "slip_energy_J": energy.heat_in / 1000.0,
        "engagement_energy_balance_error": energy.balance_error,
        "engagement_steps": len(steps), "engagement_time_s": steps[-1].time,
        "coupling_iterations_max": max(s.coupling_iterations for s in steps),
        "coupling_residual_max": max(s.coupling_residual for s in steps),
        "heat_factorisations": h.heat_factorisations,
        "coupling_fallback_steps": sum(s.coupling == "fixed-point" for s in steps),
        "peak_temperature_step_jump_K": _largest_jump(steps, slip_phase(steps, run.setup.duty)),
        "conservative_hand_method_cold": conservative_methods(cold["capacity_position"]),
        "conservative_hand_method_hot": conservative_methods(worst["capacity_position"]),
        "conservative_hand_method_hot_end_of_slip": conservative_methods(end["capacity_position"]),
    }
    if case.engagement.speed_law == "inertia":
        out["engagement_lock_up_time_s"] = steps[run.end_of_slip].time - _engagement_start(steps, run.end_of_slip)
    warnings, failed = [], []
    if out["conservative_hand_method_cold"] != out["conservative_hand_method_hot"]:
        warnings.append(
            "WARNING: THE HOT ENGAGEMENT CHANGES WHICH HAND FORMULA IS CONSERVATIVE: cold "
            f"{_words(out['conservative_hand_method_cold'])} (xi = {cold['capacity_position']:.3f}), hot "
            f"{_words(out['conservative_hand_method_hot'])} (xi = {worst['capacity_position']:.3f} at "
            f"t = {out['engagement_worst_time_s']:.3g} s).")
    allowable = case.lining.allowable_pressure
    if allowable and max(r["design_peak_pressure_MPa"] for r in res) > allowable:
        failed.append("allowable pressure (hot)")
    if min(r["contact_area_fraction"] for r in res) < 1.0 and cold["contact_area_fraction"] >= 1.0:
        failed.append("partial contact (hot)")
        warnings.append("WARNING: THE FRICTION FACE OPENS DURING THE ENGAGEMENT (thermal distortion): "
                        f"the least contact area fraction is {out['contact_area_fraction_hot_min']:.3f}.")
    margin = worst.get("capacity_margin_fe")
    if margin is not None and margin < 0.0:
        failed.append("required torque (hot)")
        warnings.append("WARNING: HOT, THE CLUTCH SLIPS: its FE capacity during the engagement falls below the "
                        "required torque times the service factor.")
    if not abs(energy.balance_error) <= ENERGY_TOLERANCE:
        failed.append("energy balance (hot engagement)")
        warnings.append(f"WARNING: THE HEAT ACCOUNT OF THE ENGAGEMENT DOES NOT CLOSE: balance error "
                        f"{100 * energy.balance_error:.2g} % (> 1 %): more time steps are needed.")
    if out["coupling_fallback_steps"]:
        warnings.append(
            f"{out['coupling_fallback_steps']} of {len(steps)} time steps had a cycling contact front (a node at the "
            "edge of the contact closes, conducts, and opens again), solved by the staggered iteration; the peak "
            f"temperature jumps by up to {out['peak_temperature_step_jump_K']:.3g} K from one step to the next "
            "there: compare a run with more engagement.steps_per_engagement before relying on the peak temperature.")
    out["engagement_warnings"], out["engagement_failed"] = warnings, failed
    return out


def _largest_jump(steps, slip: list[int]) -> float:
    """K: the largest departure of a slip step's peak rise from the mean of its two neighbours (both in the
    same slip): a smooth history has none beyond the step's curvature, a node flipping at the front has."""
    inside = set(slip)
    jumps = [abs(steps[k].peak_rise - 0.5 * (steps[k - 1].peak_rise + steps[k + 1].peak_rise))
             for k in slip if k - 1 in inside and k + 1 in inside
             and steps[k - 1].engagement == steps[k].engagement == steps[k + 1].engagement]
    return float(max(jumps, default=0.0))


def _engagement_start(steps, k: int) -> float:
    first = next(j for j, s in enumerate(steps) if s.engagement == steps[k].engagement)
    return steps[first].time - steps[first].dt


def _words(methods: str) -> str:
    return CONSERVATIVE_WORDS[methods]
