"""Files of the speed analysis: speed_stresses.csv (per body), stress_at_speed.png (the section at speed
coloured by von Mises), pressure_at_speed.png (p(r) at rest and at speed over both hand curves) and the
terminal table."""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
from rich.markup import escape
from rich.table import Table

from ...output.files import deformed_picture
from ...output.plots import hand_curves_over, new_figure
from .analysis import SpeedResult

FILES = ("speed_stresses.csv", "stress_at_speed.png", "pressure_at_speed.png")
STRESS_COLUMNS = ("body", "max_von_mises_MPa", "max_von_mises_r_mm", "max_von_mises_z_mm", "max_hoop_stress_MPa",
                  "yield_strength_MPa", "yield_margin", "mean_hoop_stress_spin_MPa", "tensile_strength_MPa",
                  "burst_speed_rpm")


def write_stress_csv(path: Path, result: SpeedResult) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(STRESS_COLUMNS)
        for b in result.bodies:
            writer.writerow([b.body, b.max_von_mises_MPa, *b.max_von_mises_at_mm, b.max_hoop_MPa,
                             "" if b.yield_strength_MPa is None else b.yield_strength_MPa,
                             "" if b.yield_margin is None else b.yield_margin, b.mean_hoop_spin_MPa, b.tensile_strength_MPa,
                             "" if b.burst_speed_rpm is None else b.burst_speed_rpm])


def pressure_at_speed_picture(path: Path, result: SpeedResult, cold_fe, hand):
    fig = new_figure(7.0, 4.2)
    ax = fig.add_subplot()
    for s, (rest, spin) in enumerate(zip(cold_fe.interfaces, result.fe.interfaces)):
        for itf, style, what in ((rest, "-", "at rest"), (spin, "-", f"at {result.running_speed_rpm:g} rpm")):
            order = np.argsort(itf.r)
            ax.plot(itf.r[order], itf.pressure[order], style, linewidth=1.2,
                    color="tab:blue" if itf is rest else "tab:red", alpha=1.0 if s == 0 else 0.6,
                    label=f"FE {what} [MPa]" if s == 0 else None)
    hand_curves_over(ax, hand, f"contact pressure at rest and at {result.running_speed_rpm:g} rpm")
    fig.savefig(path, dpi=130)
    return fig


def write_speed_files(result: SpeedResult, case, hand, mesh, cold_fe, folder: Path) -> None:
    folder = Path(folder)
    write_stress_csv(folder / "speed_stresses.csv", result)
    deformed_picture(folder / "stress_at_speed.png", mesh, result.fe, f"{case.name} at {result.running_speed_rpm:g} rpm")
    pressure_at_speed_picture(folder / "pressure_at_speed.png", result, cold_fe, hand)


def speed_table(summary: dict):
    """At rest against at speed, and the stresses of every body (a rich Table)."""
    s = summary
    table = Table(title=f"at rest and at {s['running_speed_rpm']:g} rpm")
    for col in ("quantity", "at rest", "at speed"):
        table.add_column(col, justify="left" if col == "quantity" else "right")
    table.add_row(escape("torque [N·m]"), f"{s['torque_fe_Nm']:.2f}", f"{s['torque_at_speed_Nm']:.2f}")
    table.add_row("capacity position xi", f"{s['capacity_position']:.3f}", f"{s['capacity_position_at_speed']:.3f}")
    table.add_row(escape("effective radius [mm]"), f"{s['effective_radius_mm']:.3f}",
                  f"{s['effective_radius_at_speed_mm']:.3f}")
    table.add_row(escape("peak pressure [MPa]"), f"{s['peak_pressure_MPa']:.4g}", f"{s['peak_pressure_at_speed_MPa']:.4g}")
    table.add_row("contact area fraction", f"{s['contact_area_fraction']:.3f}",
                  f"{s['contact_area_fraction_at_speed']:.3f}")
    for body, vm in s["max_von_mises_at_speed_MPa"].items():
        burst = s["burst_speed_rpm"][body]
        margin = s["yield_margin_at_speed"][body]
        table.add_row(escape(f"{body}: von Mises [MPa] / yield margin / burst [rpm]"), "",
                      f"{vm:.4g} / " + ("-" if margin is None else f"{100 * margin:+.0f} %") + " / "
                      + ("none" if burst is None else f"{burst:.0f}"))
    margin = s["speed_burst_margin"]
    table.caption = ("burst margin " + ("none (no tensile mean hoop stress)" if margin is None else f"{100 * margin:+.0f} %")
                     + " on the running speed (mean hoop stress of the spin against the tensile strength)")
    return table
