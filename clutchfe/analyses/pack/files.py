"""Files of the spline drag: pack_surfaces.csv (per surface), spline_plates.csv (per plate), pack_load.png
(axial force and torque per surface along the pack, with and without drag and the rigid-plate closed form),
pressure_with_spline_drag.png (p(r) of every surface) and the terminal table."""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
from rich.markup import escape
from rich.table import Table

from ...output.plots import hand_curves_over, new_figure
from .analysis import PackResult

FILES = ("pack_surfaces.csv", "spline_plates.csv", "pack_load.png", "pressure_with_spline_drag.png")
SURFACE_COLUMNS = ("surface", "position_from_pressure_plate", "axial_force_N", "axial_force_without_drag_N",
                   "axial_force_rigid_plates_N", "torque_Nm", "torque_without_drag_Nm", "effective_radius_mm",
                   "design_peak_pressure_MPa")
PLATE_COLUMNS = ("plate", "spline", "pitch_radius_mm", "spline_friction_coefficient", "torque_Nm", "spline_force_N",
                 "spline_drag_N", "gain")


def write_pack_csvs(folder: Path, result: PackResult) -> None:
    with open(folder / "pack_surfaces.csv", "w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(SURFACE_COLUMNS)
        for s in result.surfaces:
            writer.writerow([s.name, s.position, s.axial_force_N, s.axial_force_without_drag_N,
                             s.axial_force_rigid_plates_N, s.torque_Nm, s.torque_without_drag_Nm, s.effective_radius_mm,
                             s.design_peak_pressure_MPa])
    with open(folder / "spline_plates.csv", "w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(PLATE_COLUMNS)
        for p in result.plates:
            writer.writerow([p.body, p.spline, p.pitch_radius_mm, p.friction_coefficient, p.torque_Nm,
                             p.spline_force_N, p.spline_drag_N, p.gain])


def pack_load_picture(path: Path, result: PackResult, clamp_force_N: float):
    """Axial force and torque of each surface along the pack (1 = the pressure plate's face)."""
    fig = new_figure(8.0, 3.8)
    pos = np.array([s.position for s in result.surfaces])
    w = 0.38
    ax_f, ax_t = fig.subplots(1, 2)
    ax_f.bar(pos - w / 2, [s.axial_force_without_drag_N for s in result.surfaces], w, color="tab:gray",
             label="FE, no spline drag")
    ax_f.bar(pos + w / 2, [s.axial_force_N for s in result.surfaces], w, color="tab:red", label="FE, spline drag")
    ax_f.plot(pos + w / 2, [s.axial_force_rigid_plates_N for s in result.surfaces], "k_", markersize=14, mew=2,
              label="rigid plates, closed form")
    ax_f.axhline(clamp_force_N, color="k", linewidth=0.8, linestyle=":")
    ax_f.set_xlabel("friction surface, from the pressure plate")
    ax_f.set_ylabel("axial force [N]")
    ax_f.set_title("axial force per surface")
    ax_t.bar(pos - w / 2, [s.torque_without_drag_Nm for s in result.surfaces], w, color="tab:gray",
             label="FE, no spline drag")
    ax_t.bar(pos + w / 2, [s.torque_Nm for s in result.surfaces], w, color="tab:red", label="FE, spline drag")
    ax_t.set_xlabel("friction surface, from the pressure plate")
    ax_t.set_ylabel("torque [N·m]")
    ax_t.set_title("torque per surface")
    fig.suptitle(f"spline drag along the pack: pack efficiency {100 * result.efficiency:.1f} %", fontsize=10)
    for ax in (ax_f, ax_t):
        ax.set_xticks(pos)
        ax.legend(fontsize=7, loc="lower left")
        lo = min(min(b.get_height() for b in ax.patches), *(ax.get_ylim()[1:]))
        ax.set_ylim(0.8 * lo, None)            # the decay is a few per cent: do not start the bars at zero
    fig.savefig(path, dpi=130)
    return fig


def pressure_with_drag_picture(path: Path, result: PackResult, hand):
    fig = new_figure(7.0, 4.2)
    ax = fig.add_subplot()
    cmap = fig.colormaps["viridis"] if hasattr(fig, "colormaps") else None
    by_name = {itf.name: itf for itf in result.fe.interfaces}
    n = len(result.surfaces)
    for k, s in enumerate(result.surfaces):
        itf = by_name[s.name]
        order = np.argsort(itf.r)
        colour = cmap(k / max(n - 1, 1)) if cmap is not None else None
        ax.plot(itf.r[order], itf.pressure[order], linewidth=1.2, color=colour,
                label=f"surface {s.position} ({s.name}) [MPa]")
    hand_curves_over(ax, hand, "contact pressure of every surface with spline drag (1 = at the pressure plate)")
    fig.savefig(path, dpi=130)
    return fig


def write_pack_files(result: PackResult, case, hand, folder: Path) -> None:
    folder = Path(folder)
    write_pack_csvs(folder, result)
    pack_load_picture(folder / "pack_load.png", result, case.load.axial_force)
    pressure_with_drag_picture(folder / "pressure_with_spline_drag.png", result, hand)


def pack_table(summary: dict):
    """Per surface with and without spline drag, and the drag of every plate (a rich Table)."""
    s = summary
    table = Table(title=f"spline drag: pack efficiency {100 * s['pack_efficiency']:.2f} % "
                        f"(rigid plates {100 * s['pack_efficiency_rigid_plates']:.2f} %)")
    for col in ("surface (from the pressure plate)", "axial force [N]", "no drag [N]", "rigid plates [N]",
                "torque [N·m]"):
        table.add_column(escape(col), justify="left" if col.startswith("surface") else "right")
    for row in s["pack_surfaces"]:
        table.add_row(f"{row['position_from_pressure_plate']} ({row['name']})", f"{row['axial_force_N']:.1f}",
                      f"{row['axial_force_without_drag_N']:.1f}", f"{row['axial_force_rigid_plates_N']:.1f}",
                      f"{row['torque_Nm']:.3f}")
    table.caption = escape(f"torque {s['torque_without_spline_drag_Nm']:.2f} → {s['torque_with_spline_drag_Nm']:.2f} N·m "
                           "with spline drag; drag per plate [N]: " + ", ".join(
                               f"{p['body']} {p['spline_drag_N']:.1f}" for p in s["spline_plates"]))
    return table
