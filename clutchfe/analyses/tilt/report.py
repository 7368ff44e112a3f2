"""The tilt analysis's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import data_uri, render

PICTURES = ("pressure_polar.png", "pressure_3d.png")


def tilt_section(s: dict, folder: Path) -> str:
    """Tilt, offset, guidance, moment, the (r, θ) peak and the open area, with the polar and 3D pictures
    (templates/tilt.html of clutchfe.output)."""
    folder = Path(folder)
    return render("tilt.html", s=s, guidance=str(s.get("guidance", "held")).replace("_", " "),
                  images={name: data_uri(folder / name) for name in PICTURES})
