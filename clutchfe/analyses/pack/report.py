"""The spline drag's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import data_uri, render

PICTURES = ("pack_load.png", "pressure_with_spline_drag.png")


def pack_section(s: dict, folder: Path, warnings: list[str]) -> str:
    """Per surface and per plate, the warnings and two pictures (templates/pack.html of clutchfe.output)."""
    folder = Path(folder)
    surfaces = [[f"{r['position_from_pressure_plate']} ({r['name']})", f"{r['axial_force_N']:.1f}",
                 f"{r['axial_force_without_drag_N']:.1f}", f"{r['axial_force_rigid_plates_N']:.1f}",
                 f"{r['torque_Nm']:.3f}", f"{r['torque_without_drag_Nm']:.3f}", f"{r['design_peak_pressure_MPa']:.4g}"]
                for r in s["pack_surfaces"]]
    plates = [[p["body"], p["spline"], f"{p['pitch_radius_mm']:g}", f"{p['spline_friction_coefficient']:g}",
               f"{p['torque_Nm']:.3f}", f"{p['spline_force_N']:.1f}", f"{p['spline_drag_N']:.2f}", f"{p['gain']:.4f}"]
              for p in s["spline_plates"]]
    return render("pack.html", s=s, surface_rows=surfaces, plate_rows=plates, warnings=warnings,
                  images={name: data_uri(folder / name) for name in PICTURES})
