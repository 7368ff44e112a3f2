"""The speed analysis's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import data_uri, render

PICTURES = ("stress_at_speed.png", "pressure_at_speed.png")


def speed_section(s: dict, folder: Path, warnings: list[str]) -> str:
    """At rest against at speed, the stresses and burst speed of every body, the warnings and two pictures
    (templates/speed.html of clutchfe.output)."""
    folder = Path(folder)
    bodies = [[body, f"{s['max_von_mises_at_speed_MPa'][body]:.4g}", f"{s['max_hoop_stress_at_speed_MPa'][body]:.4g}",
               "-" if s["yield_margin_at_speed"][body] is None else f"{100 * s['yield_margin_at_speed'][body]:+.1f}",
               f"{s['mean_hoop_stress_spin_MPa'][body]:.4g}",
               "none" if s["burst_speed_rpm"][body] is None else f"{s['burst_speed_rpm'][body]:.0f}"]
              for body in s["max_von_mises_at_speed_MPa"]]
    return render("speed.html", s=s, body_rows=bodies, warnings=warnings,
                  images={name: data_uri(folder / name) for name in PICTURES})
