"""Files of the wear-in: wear.csv, worn_profile.csv, the wear pictures and the terminal table."""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
from rich.markup import escape
from rich.table import Table

from ...output.plots import RADIUS_LABEL, hand_curves_over, new_figure
from .analysis import PROFILE_CSV_COLUMNS, STAGE_FRACTIONS, WEAR_CSV_COLUMNS, WearRun, wear_rows

FILES = ("wear.csv", "worn_profile.csv", "wear_path.png", "wear_pressure.png", "worn_profile.png")


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
    fig = new_figure(9.0, 6.0)
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
    fig = new_figure(7.5, 4.5)
    ax = fig.add_subplot()
    colours = [str(c) for c in np.linspace(0.75, 0.0, len(stages))]
    for colour, k in zip(colours, stages):
        state = run.path.states[k]
        for s, itf in enumerate(state.interfaces):
            order = np.argsort(itf.r)
            ax.plot(itf.r[order], itf.pressure[order], color=colour if k != stages[-1] else "tab:red",
                    linewidth=1.2, label=(f"step {k}: V = {state.wear_volume_mm3:.4g} mm³ [MPa]" if s == 0 else None))
    hand_curves_over(ax, hand, "contact pressure from new to worn in", "uniform pressure (new)", "uniform wear (worn in)")
    fig.savefig(path, dpi=130)
    return fig


def worn_profile_plot(path: Path, run: WearRun, max_wear_depth_mm: float):
    """Wear depth along the lining at the end of the run, and its shape (depth above the
    shallowest point), which the uniform part of the wear would hide."""
    fig = new_figure(7.0, 5.6)
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


def write_wear_files(run: WearRun, case, hand, folder: Path) -> None:
    """wear.csv, worn_profile.csv, wear_path.png, wear_pressure.png, worn_profile.png."""
    folder = Path(folder)
    rows = wear_rows(run)
    write_wear_csv(folder / "wear.csv", rows)
    write_profile_csv(folder / "worn_profile.csv", run, case.lining.thickness)
    wear_path_plot(folder / "wear_path.png", rows, hand, run.rad_per_engagement is not None)
    stage_pressure_plot(folder / "wear_pressure.png", run, hand, chosen_stages(run))
    worn_profile_plot(folder / "worn_profile.png", run, case.wear.max_wear_depth)


def wear_table(summary: dict):
    """New and worn-in results side by side (a rich Table) for the terminal report."""
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
                     f"converged: {summary['worn_in_converged']} (departure from uniform wear "
                     f"{summary.get('uniform_wear_departure_worn_in', float('nan')):.2g}), "
                     f"wear volume {summary['wear_volume_mm3']:.4g} mm³, "
                     f"deepest wear {1000 * summary['wear_depth_max_mm']:.4g} µm")
    return table
