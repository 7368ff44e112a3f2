"""The wear-in's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import esc, num, picture, table


def wear_section(s: dict, folder: Path, worn_verdict: str) -> str:
    """New against worn in, how the wear-in ended, its verdict and its three pictures."""
    folder = Path(folder)
    rows = [
        ["torque [N·m]", num("torque_fe_Nm", s["torque_fe_Nm"], 3), num("torque_worn_in_Nm", s.get("torque_worn_in_Nm"), 3)],
        ["capacity position ξ [-]", num("capacity_position", s["capacity_position"], 4),
         num("capacity_position_worn_in", s.get("capacity_position_worn_in"), 4)],
        ["effective radius [mm]", num("effective_radius_mm", s["effective_radius_mm"], 3),
         num("effective_radius_worn_in_mm", s.get("effective_radius_worn_in_mm"), 3)],
        ["peak pressure [MPa]", num("peak_pressure_MPa", s["peak_pressure_MPa"], 4),
         num("peak_pressure_worn_in_MPa", s.get("peak_pressure_worn_in_MPa"), 4)],
        ["contact [%]", num("contact_area_fraction", s["contact_area_fraction"], 2, 100),
         num("contact_area_fraction_worn_in", s.get("contact_area_fraction_worn_in"), 2, 100)],
    ]
    ended = ("worn in (p·r steady)" if s.get("worn_in_converged") else "NOT worn in") + \
        f", stopped by: {esc(s.get('wear_stop_reason', ''))}"
    return "\n".join([
        "<h2>Wear-in (Archard): new and worn-in interface</h2>",
        table(["quantity", "new", "worn in"], rows),
        f"<p>{num('wear_steps', s.get('wear_steps'), 0)} wear steps, {ended}; wear volume "
        f"{num('wear_volume_mm3', s.get('wear_volume_mm3'), 4)} mm³, deepest wear "
        f"{num('wear_depth_max_mm', s.get('wear_depth_max_mm'), 4)} mm; torque change "
        f"{num('torque_change_worn_in_percent', s.get('torque_change_worn_in_percent'), 3)} %.</p>",
        f'<p class="verdict">Worn in: {esc(worn_verdict)}</p>',
        picture(folder / "wear_path.png", "capacity against wear", "Torque, ξ, R_eff and peak pressure against "
                "the wear volume [mm³], with both hand values."),
        picture(folder / "wear_pressure.png", "pressure from new to worn in", "Contact pressure [MPa] against "
                "radius [mm] at stages of the wear-in, over the uniform-pressure and uniform-wear curves."),
        picture(folder / "worn_profile.png", "worn profile of the lining", "Wear depth [µm] along the lining at "
                "the end of the run, and its shape above the shallowest point."),
    ])
