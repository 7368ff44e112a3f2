"""The compression curves' section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import data_uri, render

PICTURES = ("compression_curve.png",)


def compression_section(s: dict, folder: Path, warnings: list[str]) -> str:
    """The operating point per face, the warnings and the picture (templates/compression.html of clutchfe.output)."""
    folder = Path(folder)
    rows = [[f["interface"], f"{f['mean_pressure_MPa']:.4g}", f"{f['least_pressure_MPa']:.4g}",
             f"{f['peak_pressure_MPa']:.4g}", f"{1000 * f['mean_deflection_mm']:.4g}",
             f"{1000 * f['peak_deflection_mm']:.4g}", f"{f['tangent_stiffness_MPa_per_mm']:.4g}",
             f"{100 * f['closed_share']:.1f}"] for f in s["curve_faces"]]
    return render("compression.html", s=s, face_rows=rows, warnings=warnings,
                  images={name: data_uri(folder / name) for name in PICTURES})
