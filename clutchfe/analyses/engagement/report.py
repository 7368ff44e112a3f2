"""The hot engagement's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import data_uri, render

PICTURES = ("temperature_hottest.png", "pressure_hot.png", "engagement_history.png")


def engagement_section(s: dict, folder: Path, warnings: list[str]) -> str:
    """Cold against hot, the peak temperature, the energy account, the coning of every face, the
    warnings of the engagement and its three pictures (templates/engagement.html of clutchfe.output)."""
    folder = Path(folder)
    coning = [[face, f"{mm:.4g}"] for face, mm in sorted((s.get("thermal_coning_mm") or {}).items())]
    return render("engagement.html", s=s, coning_rows=coning, warnings=warnings,
                  images={name: data_uri(folder / name) for name in PICTURES})
