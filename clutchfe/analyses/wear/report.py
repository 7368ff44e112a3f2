"""The wear-in's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import data_uri, render

PICTURES = ("wear_path.png", "wear_pressure.png", "worn_profile.png")


def wear_section(s: dict, folder: Path, worn_verdict: str) -> str:
    """New against worn in, how the wear-in ended, its verdict and its three pictures
    (templates/wear.html of clutchfe.output)."""
    folder = Path(folder)
    return render("wear.html", s=s, worn_verdict=worn_verdict,
                  images={name: data_uri(folder / name) for name in PICTURES})
