"""Wear-in of a solved case: from the new interface to the worn-in one, with files and pictures.

Archard's law (Archard, J. Appl. Phys. 1953) on the condensed contact of the run
(clutchfe.fem.wear does the stepping).  The case's [wear] table asks for it and gives the
duty: engagements x slip speed x slip time (speed falling linearly to zero within each
engagement, the clamp force constant), or a target wear volume, or neither (wear until
steady state).  Steady ("worn in"): the departure of the pack's p r from uniform wear,
relative to that of uniform pressure (fem.wear.uniform_wear_departure; wear.csv column
uniform_wear_departure), at or below wear.steady_tolerance; the steady step is the first
row of wear.csv that meets it.  Published wear coefficients scatter widely, so the wear
volume and the engagement counts are relative; the worn-in pressure and torque do not
depend on k.
"""
from __future__ import annotations

import math
from dataclasses import dataclass


from ...comparison import Comparison, HandCapacity, compare, faces_per_modelled_surface
from ...fem.wear import WearPath, wear_in

WEAR_CSV_COLUMNS = ("step", "sliding_rad", "engagements", "wear_volume_mm3", "wear_depth_max_mm",
                    "torque_Nm", "capacity_position", "effective_radius_mm", "peak_pressure_MPa",
                    "contact_area_fraction", "p_r_change_per_step", "uniform_wear_departure",
                    "elastic_approach_mm")
PROFILE_CSV_COLUMNS = ("surface", "r_mm", "z_mm", "tributary_area_mm2", "wear_depth_mm", "lining_left_mm",
                       "pressure_new_MPa", "pressure_worn_MPa")
# wear volumes (fractions of the way to the first steady state, or to the end) whose pressure is drawn
STAGE_FRACTIONS = (0.0, 0.05, 0.2, 0.5, 1.0)


def sliding_per_engagement_rad(slip_speed_rpm: float, slip_time_s: float) -> float:
    """Relative rotation of one engagement: the speed falls linearly to zero, so half of
    the start speed times the slip time."""
    return slip_speed_rpm * 2.0 * math.pi / 60.0 * slip_time_s / 2.0


@dataclass(frozen=True)
class WearRun:
    """The wear-in of one case: the path of states and the comparison of every state."""

    path: WearPath
    results: list[Comparison]       # comparison of every state of the path (0 = new)
    rad_per_engagement: float | None
    faces: int                      # faces each modelled interface stands for


def wear_in_case(solved, hand: HandCapacity) -> WearRun:
    """Archard wear-in of a solved case (a ``solve.SolvedCase``) with the duty and step
    control of its [wear] table, from the case's own initial gaps and load level."""
    case, wear = solved.case, solved.case.wear
    per_engagement, sliding_limit = None, None
    if wear.engagements is not None:
        per_engagement = sliding_per_engagement_rad(wear.slip_speed, wear.slip_time)
        sliding_limit = wear.engagements * per_engagement
    faces = faces_per_modelled_surface(len(solved.fe.interfaces), case.interface.friction_surfaces)
    path = wear_in(solved.solver, wear.wear_coefficient, step_cap=wear.step_cap,
                   steady_tolerance=wear.steady_tolerance, max_wear_depth=wear.max_wear_depth,
                   max_steps=wear.max_steps, sliding_limit_rad=sliding_limit,
                   volume_limit_mm3=wear.target_wear_volume, faces_per_interface=faces,
                   gaps=list(solved.gaps), load_scale=solved.load_scale)
    req = case.requirement
    results = [compare(s.interfaces, hand, req.required_torque, req.service_factor,
                       allowable_pressure_MPa=case.lining.allowable_pressure) for s in path.states]
    return WearRun(path, results, per_engagement, faces)


def wear_rows(run: WearRun) -> list[dict]:
    """One row per state of the path (step 0 = new), columns WEAR_CSV_COLUMNS."""
    rows = []
    for k, (state, res) in enumerate(zip(run.path.states, run.results)):
        rows.append({
            "step": k, "sliding_rad": state.sliding_rad,
            "engagements": state.sliding_rad / run.rad_per_engagement if run.rad_per_engagement else "",
            "wear_volume_mm3": state.wear_volume_mm3,
            "wear_depth_max_mm": max(float(d.max()) for d in state.depth_mm),
            "torque_Nm": res["torque_fe_Nm"], "capacity_position": res["capacity_position"],
            "effective_radius_mm": res["effective_radius_mm"], "peak_pressure_MPa": res["peak_pressure_MPa"],
            "contact_area_fraction": res["contact_area_fraction"],
            # step 0 has no step: blank rather than an infinity
            "p_r_change_per_step": state.step_change if k else "",
            "uniform_wear_departure": state.departure,
            "elastic_approach_mm": state.elastic_approach_mm,
        })
    return rows


def wear_summary(run: WearRun, case) -> dict:
    """Summary keys of the wear-in (units in the names); warnings in 'wear_warnings'."""
    path, new, worn = run.path, run.results[0], run.results[-1]
    last = path.states[-1]
    pr = [i.pressure[i.in_contact] * i.r[i.in_contact] for i in last.interfaces]
    spread = max(float((p.max() - p.min()) / p.mean()) for p in pr)
    out = {
        "torque_worn_in_Nm": worn["torque_fe_Nm"], "capacity_position_worn_in": worn["capacity_position"],
        "effective_radius_worn_in_mm": worn["effective_radius_mm"],
        "peak_pressure_worn_in_MPa": worn["peak_pressure_MPa"],
        "worn_in_converged": bool(path.converged), "wear_steps": path.steps,
        "wear_stop_reason": path.stop_reason,
        "torque_change_worn_in_percent": 100.0 * (worn["torque_fe_Nm"] / new["torque_fe_Nm"] - 1.0),
        "contact_area_fraction_worn_in": worn["contact_area_fraction"],
        "p_r_spread_worn_in": spread,
        "uniform_wear_departure_worn_in": last.departure,
        "wear_coefficient_mm3_per_N_m": case.wear.wear_coefficient,
        "wear_volume_mm3": last.wear_volume_mm3,
        "wear_depth_max_mm": max(float(d.max()) for d in last.depth_mm),
        "wear_sliding_rad": last.sliding_rad,
        "wear_engagements": last.sliding_rad / run.rad_per_engagement if run.rad_per_engagement else None,
        "capacity_margin_fe_worn_in": worn.get("capacity_margin_fe"),
    }
    if path.steady_step is not None:
        steady = path.states[path.steady_step]
        out["wear_steady_step"] = path.steady_step
        out["steady_wear_volume_mm3"] = steady.wear_volume_mm3
        out["steady_engagements"] = (steady.sliding_rad / run.rad_per_engagement if run.rad_per_engagement
                                     else None)
    out["wear_warnings"] = _wear_warnings(path, case, worn)
    return out


def _wear_warnings(path, case, worn: dict) -> list[str]:
    warnings = []
    # worn in: any state of the path met the steady test (the limit state included)
    worn_in = any(s.departure <= path.steady_tolerance for s in path.states)
    if path.stop_reason == "depth limit":
        warnings.append(f"WARNING: THE LINING IS WORN TO ITS LIMIT ({case.wear.max_wear_depth:g} mm of wear) "
                        + ("after the interface wore in." if worn_in else
                           "BEFORE THE INTERFACE WORE IN: the worn-in keys describe the lining at its limit."))
    elif not worn_in:
        why = {"sliding": "the engagement duty ended", "volume": "the target wear volume was reached",
               "step limit": f"wear.max_steps = {case.wear.max_steps} steps were used"}[path.stop_reason]
        warnings.append(f"The interface had not worn in when {why}: the worn-in keys describe that state, "
                        "not the steady uniform-wear state.")
    if worn.get("capacity_margin_fe") is not None and worn["capacity_margin_fe"] < 0.0:
        warnings.append("WARNING: WORN IN, THE CLUTCH SLIPS: its FE capacity falls below the required torque "
                        "times the service factor.")
    return warnings


