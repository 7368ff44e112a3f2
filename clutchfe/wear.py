"""Wear-in of a solved case: from the new interface to the worn-in one, with files and pictures.

Archard's law (Archard, J. Appl. Phys. 1953) on the condensed contact of the run
(clutchfe.fem.wear does the stepping).  The case's [wear] table asks for it and gives the
duty: engagements x slip speed x slip time (speed falling linearly to zero within each
engagement, the clamp force constant), or a target wear volume, or neither (wear until
steady state).  Published wear coefficients scatter widely, so the wear volume and the
engagement counts are relative; the worn-in pressure and torque do not depend on k.
"""
from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .comparison import compare, faces_per_modelled_surface
from .plots import PRESSURE_LABEL, RADIUS_LABEL, _new_figure

WEAR_CSV_COLUMNS = ("step", "sliding_rad", "engagements", "wear_volume_mm3", "wear_depth_max_mm",
                    "torque_Nm", "capacity_position", "effective_radius_mm", "peak_pressure_MPa",
                    "contact_area_fraction", "p_r_change_per_step", "p_r_change_per_approach",
                    "elastic_approach_mm")
PROFILE_CSV_COLUMNS = ("surface", "r_mm", "z_mm", "tributary_area_mm2", "wear_depth_mm", "lining_left_mm",
                       "pressure_new_MPa", "pressure_worn_MPa")
# wear volumes (fractions of the way to the first steady state, or to the end) whose pressure is drawn
STAGE_FRACTIONS = (0.0, 0.05, 0.2, 0.5, 1.0)


def sliding_per_engagement_rad(slip_speed_rpm: float, slip_time_s: float) -> float:
    """Relative rotation of one engagement: the speed falls linearly to zero, so half of
    the start speed times the slip time."""
    return slip_speed_rpm * 2.0 * math.pi / 60.0 * slip_time_s / 2.0


@dataclass
class WearRun:
    path: object                    # fem.wear.WearPath
    results: list[dict]             # comparison.compare(...) of every state of the path
    rad_per_engagement: float | None
    faces: int                      # faces each modelled interface stands for


def wear_in_case(solved) -> WearRun:
    """Archard wear-in of a solved case with the duty and step control of its [wear] table."""
    from .fem.wear import wear_in

    case, wear = solved.case, solved.case.wear
    per_engagement, sliding_limit = None, None
    if wear.engagements is not None:
        per_engagement = sliding_per_engagement_rad(wear.slip_speed, wear.slip_time)
        sliding_limit = wear.engagements * per_engagement
    faces = faces_per_modelled_surface(len(solved.fe.interfaces), case.interface.friction_surfaces)
    path = wear_in(solved.solver, wear.wear_coefficient, step_cap=wear.step_cap,
                   steady_tolerance=wear.steady_tolerance, max_wear_depth=wear.max_wear_depth,
                   max_steps=wear.max_steps, sliding_limit_rad=sliding_limit,
                   volume_limit_mm3=wear.target_wear_volume, faces_per_interface=faces)
    req = case.requirement
    results = [compare(s.interfaces, solved.hand, req.required_torque, req.service_factor) for s in path.states]
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
            "p_r_change_per_approach": state.change_per_approach if k else "",
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
        "wear_coefficient_mm3_per_N_m": case.wear.wear_coefficient,
        "wear_volume_mm3": last.wear_volume_mm3,
        "wear_depth_max_mm": max(float(d.max()) for d in last.depth_mm),
        "wear_sliding_rad": last.sliding_rad,
        "wear_engagements": last.sliding_rad / run.rad_per_engagement if run.rad_per_engagement else None,
        "capacity_margin_fe_worn_in": worn.get("capacity_margin_fe"),
    }
    if path.steady_step is not None:
        steady = path.states[path.steady_step]
        out["steady_wear_volume_mm3"] = steady.wear_volume_mm3
        out["steady_engagements"] = (steady.sliding_rad / run.rad_per_engagement if run.rad_per_engagement
                                     else None)
    out["wear_warnings"] = _wear_warnings(path, case, worn)
    return out


def _wear_warnings(path, case, worn: dict) -> list[str]:
    warnings = []
    if path.stop_reason == "depth limit":
        warnings.append(f"WARNING: THE LINING IS WORN TO ITS LIMIT ({case.wear.max_wear_depth:g} mm of wear) "
                        + ("after the interface wore in." if path.converged else
                           "BEFORE THE INTERFACE WORE IN: the worn-in keys describe the lining at its limit."))
    elif not path.converged:
        why = {"sliding": "the engagement duty ended", "volume": "the target wear volume was reached",
               "step limit": f"wear.max_steps = {case.wear.max_steps} steps were used"}[path.stop_reason]
        warnings.append(f"The interface had not worn in when {why}: the worn-in keys describe that state, "
                        "not the steady uniform-wear state.")
    if worn.get("capacity_margin_fe") is not None and worn["capacity_margin_fe"] < 0.0:
        warnings.append("WARNING: WORN IN, THE CLUTCH SLIPS: its FE capacity falls below the required torque "
                        "times the service factor.")
    return warnings


def write_wear_csv(path: Path, rows: list[dict]) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=WEAR_CSV_COLUMNS)
        writer.writeheader()
        writer.writerows(rows)


def write_profile_csv(path: Path, run: WearRun, lining_thickness_mm: float) -> None:
    """Worn profile of the lining: wear depth and lining left at every interface node."""
    first, last = run.path.states[0], run.path.states[-1]
    with open(path, "w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(PROFILE_CSV_COLUMNS)
        for new, worn, depth in zip(first.interfaces, last.interfaces, last.depth_mm):
            for j in range(new.r.size):
                writer.writerow([worn.name, new.r[j], new.z[j], new.tributary_area[j], depth[j],
                                 lining_thickness_mm - depth[j], new.pressure[j], worn.pressure[j]])


def chosen_stages(run: WearRun) -> list[int]:
    """States at STAGE_FRACTIONS of the wear volume to the first steady state (or the end)."""
    path = run.path
    end = path.steady_step if path.steady_step is not None else path.steps
    volumes = np.array([s.wear_volume_mm3 for s in path.states[:end + 1]])
    picks = [int(np.argmin(np.abs(volumes - f * volumes[-1]))) for f in STAGE_FRACTIONS]
    return sorted(set(picks) | {path.steps})


def wear_path_plot(path: Path, rows: list[dict], hand, duty: bool):
    """Torque, xi, R_eff and peak pressure against the wear volume (and engagements)."""
    fig = _new_figure(9.0, 6.0)
    axes = fig.subplots(2, 2, sharex=True)
    volume = [r["wear_volume_mm3"] for r in rows]
    panels = (("torque_Nm", "torque [N·m]", (hand.torque_uniform_pressure_Nm, hand.torque_uniform_wear_Nm)),
              ("capacity_position", "capacity position xi [-]", (1.0, 0.0)),
              ("effective_radius_mm", "effective radius [mm]",
               (hand.radius_uniform_pressure_mm, hand.radius_uniform_wear_mm)),
              ("peak_pressure_MPa", "peak pressure [MPa]",
               (hand.uniform_pressure_MPa, hand.peak_pressure_uniform_wear_MPa)))
    for ax, (key, label, (up, uw)) in zip(axes.flat, panels):
        ax.plot(volume, [r[key] for r in rows], "o-", markersize=2.5, linewidth=1.2, color="tab:red", label="FE")
        ax.axhline(up, color="k", linestyle="--", linewidth=1.0, label="uniform pressure")
        ax.axhline(uw, color="k", linestyle=":", linewidth=1.4, label="uniform wear")
        ax.set_ylabel(label)
        ax.grid(True, linewidth=0.4, alpha=0.6)
    for ax in axes[1]:
        ax.set_xlabel("wear volume [mm³]")
    if duty and rows[-1]["wear_volume_mm3"] > 0:
        # engagements are proportional to the volume only piecewise: label them from the path itself
        top = axes[0, 0].secondary_xaxis("top", functions=(
            lambda v: np.interp(v, volume, [r["engagements"] for r in rows]),
            lambda e: np.interp(e, [r["engagements"] for r in rows], volume)))
        top.set_xlabel("engagements [-]")
    axes[0, 1].legend(fontsize="small", loc="best")
    fig.suptitle("wear-in path (Archard): capacity against wear")
    fig.savefig(path, dpi=130)
    return fig


def stage_pressure_plot(path: Path, run: WearRun, hand, stages: list[int]):
    """Pressure at the chosen stages over the uniform-pressure (new) and uniform-wear (worn-in) curves."""
    fig = _new_figure(7.5, 4.5)
    ax = fig.add_subplot()
    colours = [str(c) for c in np.linspace(0.75, 0.0, len(stages))]
    for colour, k in zip(colours, stages):
        state = run.path.states[k]
        for s, itf in enumerate(state.interfaces):
            order = np.argsort(itf.r)
            ax.plot(itf.r[order], itf.pressure[order], color=colour if k != stages[-1] else "tab:red",
                    linewidth=1.2, label=(f"step {k}: V = {state.wear_volume_mm3:.4g} mm³ [MPa]" if s == 0 else None))
    curves = hand.pressure_curves()
    ax.plot(curves["r_mm"], curves["uniform_pressure_MPa"], "k--", linewidth=1.0, label="uniform pressure (new) [MPa]")
    ax.plot(curves["r_mm"], curves["uniform_wear_MPa"], "k:", linewidth=1.6, label="uniform wear (worn in) [MPa]")
    ax.set_xlabel(RADIUS_LABEL)
    ax.set_ylabel(PRESSURE_LABEL)
    ax.set_ylim(bottom=0.0)
    ax.grid(True, linewidth=0.4, alpha=0.6)
    ax.legend(fontsize="x-small", loc="best")
    ax.set_title("contact pressure from new to worn in")
    fig.savefig(path, dpi=130)
    return fig


def worn_profile_plot(path: Path, run: WearRun, max_wear_depth_mm: float):
    """Wear depth along the lining at the end of the run, and its shape (depth above the
    shallowest point), which the uniform part of the wear would hide."""
    fig = _new_figure(7.0, 5.6)
    top_ax, shape_ax = fig.subplots(2, 1, sharex=True)
    last = run.path.states[-1]
    for itf, depth in zip(last.interfaces, last.depth_mm):
        order = np.argsort(itf.r)
        top_ax.plot(itf.r[order], 1000.0 * depth[order], linewidth=1.4, label=f"{itf.name} [µm]")
        shape_ax.plot(itf.r[order], 1000.0 * (depth - depth.min())[order], linewidth=1.4,
                      label=f"{itf.name} [µm]")
    deepest = max(float(d.max()) for d in last.depth_mm)
    if deepest > 0.5 * max_wear_depth_mm:
        top_ax.axhline(1000.0 * max_wear_depth_mm, color="tab:red", linestyle="--", linewidth=1.0,
                       label=f"wear limit {1000.0 * max_wear_depth_mm:.4g} µm")
    top_ax.set_ylim(bottom=0.0)
    top_ax.set_ylabel("wear depth [µm]")
    shape_ax.set_ylabel("depth above shallowest [µm]")
    shape_ax.set_xlabel(RADIUS_LABEL)
    for ax in (top_ax, shape_ax):
        ax.grid(True, linewidth=0.4, alpha=0.6)
        ax.legend(fontsize="small", loc="best")
    top_ax.set_title(f"worn profile of the lining, end of run (volume {last.wear_volume_mm3:.4g} mm³, "
                     f"limit {1000.0 * max_wear_depth_mm:.4g} µm)", fontsize="medium")
    fig.savefig(path, dpi=130)
    return fig


def add_wear_to_run(solved, summary: dict, folder: Path) -> None:
    """Pipeline analysis: wear-in when the case has a [wear] table (summary keys, wear.csv,
    worn_profile.csv, wear_path.png, wear_pressure.png, worn_profile.png)."""
    case = solved.case
    if "wear" not in case.tables_given:
        return
    folder = Path(folder)
    run = wear_in_case(solved)
    rows = wear_rows(run)
    keys = wear_summary(run, case)
    summary["warnings"] = list(summary.get("warnings", [])) + keys.pop("wear_warnings")
    summary.update(keys)
    write_wear_csv(folder / "wear.csv", rows)
    write_profile_csv(folder / "worn_profile.csv", run, case.lining.thickness)
    wear_path_plot(folder / "wear_path.png", rows, solved.hand, run.rad_per_engagement is not None)
    stage_pressure_plot(folder / "wear_pressure.png", run, solved.hand, chosen_stages(run))
    worn_profile_plot(folder / "worn_profile.png", run, case.wear.max_wear_depth)


def wear_table(summary: dict):
    """New and worn-in results side by side (a rich Table) for the terminal report."""
    from rich.markup import escape
    from rich.table import Table

    table = Table(title="new and worn in (Archard wear-in)")
    for col in ("quantity", "new", "worn in"):
        table.add_column(col, justify="left" if col == "quantity" else "right")
    table.add_row(escape("torque [N·m]"), f"{summary['torque_fe_Nm']:.2f}", f"{summary['torque_worn_in_Nm']:.2f}")
    table.add_row("capacity position xi", f"{summary['capacity_position']:.3f}",
                  f"{summary['capacity_position_worn_in']:.3f}")
    table.add_row(escape("effective radius [mm]"), f"{summary['effective_radius_mm']:.3f}",
                  f"{summary['effective_radius_worn_in_mm']:.3f}")
    table.add_row(escape("peak pressure [MPa]"), f"{summary['peak_pressure_MPa']:.4f}",
                  f"{summary['peak_pressure_worn_in_MPa']:.4f}")
    table.caption = (f"{summary['wear_steps']} wear steps, stop: {summary['wear_stop_reason']}, "
                     f"converged: {summary['worn_in_converged']}, wear volume {summary['wear_volume_mm3']:.4g} mm³, "
                     f"deepest wear {1000 * summary['wear_depth_max_mm']:.4g} µm")
    return table
