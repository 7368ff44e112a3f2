"""Files of the hot engagement: thermal.csv, the VTU time series with its PVD index, the pictures and
the terminal table."""
from __future__ import annotations

import csv
from pathlib import Path
from xml.sax.saxutils import quoteattr

import meshio
import numpy as np
from matplotlib.tri import Triangulation
from rich.markup import escape
from rich.table import Table

from ...output.plots import RADIUS_LABEL, hand_curves_over, new_figure
from .analysis import THERMAL_CSV_COLUMNS, EngagementRun, slip_phase, thermal_rows

FILES = ("thermal.csv", "thermal_series.pvd", "temperature_hottest.png", "pressure_hot.png",
         "engagement_history.png")
SERIES_FOLDER = "thermal_series"        # the VTU frames the PVD file lists


def write_thermal_csv(path: Path, rows: list[dict]) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=THERMAL_CSV_COLUMNS)
        writer.writeheader()
        writer.writerows({k: ("" if v is None else v) for k, v in row.items()} for row in rows)


def snapshot_steps(run: EngagementRun, frames: int) -> list[int]:
    """``frames`` steps evenly spread over the run, with the hottest instant, the end of slip and the worst."""
    n = len(run.history.steps)
    even = np.unique(np.round(np.linspace(0, n - 1, max(1, min(frames, n)))).astype(int))
    return sorted(set(even.tolist()) | {run.hottest, run.end_of_slip, run.worst})


def write_series(folder: Path, run: EngagementRun, mesh, frames: int) -> list[int]:
    """thermal_series.pvd and one VTU per chosen step (temperature °C, rise K, displacement mm) for ParaView
    or pyvista; returns the steps written."""
    folder = Path(folder)
    (folder / SERIES_FOLDER).mkdir()
    h = run.history
    points = np.column_stack([mesh.points, np.zeros(len(mesh.points))])
    cells = [("triangle", mesh.triangles[:, :3])]
    steps = snapshot_steps(run, frames)
    entries = []
    for k in steps:
        rise = h.rise_at_vertices(k)
        u = h.displacement_at_vertices(k)
        name = f"{SERIES_FOLDER}/step_{k + 1:05d}.vtu"
        data = {"temperature_C": h.reference_temperature + rise, "temperature_rise_K": rise,
                "displacement_mm": np.column_stack([u.T, np.zeros(u.shape[1])])}
        meshio.write(str(folder / name), meshio.Mesh(points, cells, point_data=data), file_format="vtu")
        entries.append(f'    <DataSet timestep="{h.steps[k].time:.9g}" part="0" file={quoteattr(name)}/>')
    pvd = ('<?xml version="1.0"?>\n<VTKFile type="Collection" version="0.1">\n  <Collection>\n'
           + "\n".join(entries) + "\n  </Collection>\n</VTKFile>\n")
    (folder / "thermal_series.pvd").write_text(pvd, encoding="utf-8")
    return steps


def temperature_picture(path: Path, run: EngagementRun, mesh, title: str):
    """The temperature field of the section at the hottest instant (a filled contour plot)."""
    h, k = run.history, run.hottest
    temperature = h.reference_temperature + h.rise_at_vertices(k)
    fig = new_figure(7.5, 5.0)
    ax = fig.add_subplot()
    tri = Triangulation(mesh.points[:, 0], mesh.points[:, 1], mesh.triangles[:, :3])
    shown = ax.tripcolor(tri, temperature, shading="gouraud", cmap="inferno")
    fig.colorbar(shown, ax=ax, label="temperature [°C]")
    step = h.steps[k]
    ax.plot([step.peak_r], [step.peak_z], marker="x", color="tab:cyan", markersize=8,
            label=f"peak {h.reference_temperature + step.peak_rise:.1f} °C in {step.peak_body}")
    ax.set_aspect("equal")
    ax.set_xlabel(RADIUS_LABEL)
    ax.set_ylabel("axial position z [mm]")
    ax.legend(fontsize="small", loc="best")
    ax.set_title(f"{title}: temperature at t = {step.time:.3g} s (hottest instant)", fontsize="medium")
    fig.savefig(path, dpi=120)
    return fig


def pressure_instants(run: EngagementRun, count: int) -> list[int]:
    """``count`` slipping steps of the last engagement, evenly spread, with the worst and the hottest."""
    steps = run.history.steps
    last = steps[run.end_of_slip].engagement
    slipping = [k for k, s in enumerate(steps) if s.slipping and s.engagement == last] or [run.end_of_slip]
    picks = np.unique(np.round(np.linspace(0, len(slipping) - 1, max(1, count))).astype(int))
    return sorted({slipping[i] for i in picks} | {run.worst})


def hot_pressure_picture(path: Path, run: EngagementRun, hand, count: int):
    """p(r) cold and at chosen instants of the engagement, over both hand curves at the same force."""
    fig = new_figure(7.5, 4.6)
    ax = fig.add_subplot()
    cold = run.history.cold
    for s, itf in enumerate(cold.interfaces):
        order = np.argsort(itf.r)
        ax.plot(itf.r[order], itf.pressure[order], color="tab:blue", linewidth=1.6,
                label="cold (before slip) [MPa]" if s == 0 else None)
    instants = pressure_instants(run, count)
    colours = [str(c) for c in np.linspace(0.7, 0.1, len(instants))]
    for colour, k in zip(colours, instants):
        step = run.history.steps[k]
        for s, itf in enumerate(step.fe.interfaces):
            order = np.argsort(itf.r)
            ax.plot(itf.r[order], itf.pressure[order], color="tab:red" if k == run.worst else colour,
                    linewidth=1.2, label=(f"t = {step.time:.3g} s, xi = {run.results[k]['capacity_position']:.3f}"
                                          f"{' (least torque)' if k == run.worst else ''} [MPa]" if s == 0 else None))
    hand_curves_over(ax, hand, "contact pressure during the engagement (last engagement)")
    fig.savefig(path, dpi=130)
    return fig


def slip_intervals(run: EngagementRun) -> list[tuple[float, float]]:
    """(start, end) s of every engagement's slip."""
    steps, out = run.history.steps, {}
    for k in slip_phase(steps, run.setup.duty):
        start, _ = out.get(steps[k].engagement, (steps[k].time - steps[k].dt, 0.0))
        out[steps[k].engagement] = (start, steps[k].time)
    return list(out.values())


def history_picture(path: Path, rows: list[dict], hand, slips: list[tuple[float, float]]):
    """Peak temperature, torque capacity and capacity position against time, the slips shaded."""
    fig = new_figure(8.0, 6.4)
    temp_ax, torque_ax, xi_ax = fig.subplots(3, 1, sharex=True)
    t = [r["time_s"] for r in rows]
    temp_ax.plot(t, [r["peak_temperature_C"] for r in rows], color="tab:red", linewidth=1.3)
    temp_ax.set_ylabel("peak temperature [°C]")
    torque_ax.plot(t, [r["torque_Nm"] for r in rows], color="tab:blue", linewidth=1.3, label="FE (hot)")
    torque_ax.axhline(hand.torque_uniform_pressure_Nm, color="k", linestyle="--", linewidth=1.0,
                      label="uniform pressure")
    torque_ax.axhline(hand.torque_uniform_wear_Nm, color="k", linestyle=":", linewidth=1.4, label="uniform wear")
    torque_ax.set_ylabel("torque capacity [N·m]")
    torque_ax.legend(fontsize="x-small", loc="best")
    xi_ax.plot(t, [r["capacity_position"] for r in rows], color="tab:purple", linewidth=1.3)
    for level, style in ((1.0, "--"), (0.0, ":")):
        xi_ax.axhline(level, color="k", linestyle=style, linewidth=1.0)
    xi_ax.set_ylabel("capacity position xi [-]")
    xi_ax.set_xlabel("time [s]")
    for ax in (temp_ax, torque_ax, xi_ax):
        ax.grid(True, linewidth=0.4, alpha=0.6)
        for start, end in slips:
            ax.axvspan(start, end, color="0.9", zorder=0)
    temp_ax.set_title("hot engagement: temperature and capacity against time (shaded: slipping)",
                      fontsize="medium")
    fig.savefig(path, dpi=130)
    return fig


def write_engagement_files(run: EngagementRun, case, hand, mesh, folder: Path) -> None:
    """thermal.csv, thermal_series.pvd (+ its VTU frames), temperature_hottest.png, pressure_hot.png,
    engagement_history.png."""
    folder = Path(folder)
    rows = thermal_rows(run)
    write_thermal_csv(folder / "thermal.csv", rows)
    write_series(folder, run, mesh, case.engagement.snapshots)
    temperature_picture(folder / "temperature_hottest.png", run, mesh, case.name)
    hot_pressure_picture(folder / "pressure_hot.png", run, hand, case.engagement.pressure_curves)
    history_picture(folder / "engagement_history.png", rows, hand, slip_intervals(run))


def engagement_table(summary: dict):
    """Cold against hot (a rich Table) for the terminal report."""
    table = Table(title="cold and hot (engagement)")
    for col in ("quantity", "cold", "hot, end of slip", "hot, least torque"):
        table.add_column(col, justify="left" if col == "quantity" else "right")
    s = summary
    table.add_row(escape("torque [N·m]"), f"{s['torque_fe_Nm']:.2f}", f"{s['torque_hot_end_of_slip_Nm']:.2f}",
                  f"{s['torque_hot_worst_Nm']:.2f}")
    table.add_row("capacity position xi", f"{s['capacity_position']:.3f}",
                  f"{s['capacity_position_hot_end_of_slip']:.3f}", f"{s['capacity_position_hot_worst']:.3f}")
    table.add_row(escape("effective radius [mm]"), f"{s['effective_radius_mm']:.3f}",
                  f"{s['effective_radius_hot_end_of_slip_mm']:.3f}", f"{s['effective_radius_hot_worst_mm']:.3f}")
    table.add_row("conservative hand formula", s["conservative_hand_method_cold"],
                  s["conservative_hand_method_hot_end_of_slip"], s["conservative_hand_method_hot"])
    table.caption = (f"peak {s['engagement_peak_temperature_C']:.1f} °C in {s['engagement_peak_temperature_body']} "
                     f"at r = {s['engagement_peak_temperature_radius_mm']:.1f} mm, t = "
                     f"{s['engagement_peak_temperature_time_s']:.3g} s; slip energy {s['slip_energy_J']:.4g} J, "
                     f"energy balance {100 * s['engagement_energy_balance_error']:.2g} %; "
                     f"{s['engagement_steps']} steps, at most {s['coupling_iterations_max']} coupling iterations")
    return table
