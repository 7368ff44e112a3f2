"""The tilt analysis's section of report.html."""
from __future__ import annotations

from pathlib import Path

from ...output.report_html import esc, num, picture, table


def tilt_section(s: dict, folder: Path) -> str:
    """Tilt, offset, guidance, moment, the (r, θ) peak and the open area, with the polar and 3D pictures."""
    folder = Path(folder)
    rows = [
        ["axis tilt [deg]", num("axis_tilt_deg", s.get("axis_tilt_deg"), 4)],
        ["radial offset [mm]", num("radial_offset_mm", s.get("radial_offset_mm"), 4)],
        ["tilting moment on the guidance [N·m]", num("tilt_moment_Nm", s.get("tilt_moment_Nm"), 3)],
        ["tilt left after self-aligning [deg]", num("residual_tilt_deg", s.get("residual_tilt_deg"), 4)],
        ["peak pressure on the (r, θ) grid [MPa]", num("peak_pressure_MPa", s.get("peak_pressure_MPa"), 4)],
        ["  at radius [mm]", num("peak_pressure_r_mm", s.get("peak_pressure_r_mm"), 2)],
        ["  at angle θ [deg]", num("peak_pressure_theta_deg", s.get("peak_pressure_theta_deg"), 1)],
        ["design peak (band mean, worst angle) [MPa]", num("design_peak_pressure_MPa",
                                                           s.get("design_peak_pressure_MPa"), 4)],
        ["open share of the friction face [%]", num("open_area_fraction", s.get("open_area_fraction"), 2, 100)],
        ["harmonics / angles around the axis [-]", num("harmonics", s.get("harmonics"), 0) + " / "
         + num("angular_divisions", s.get("angular_divisions"), 0)],
    ]
    return "\n".join([
        "<h2>Axis tilt and radial offset</h2>",
        f"<p>The pressed part is {esc(str(s.get('guidance', 'held')).replace('_', ' '))}; the pressure varies "
        "around the circumference, so the peak, the design peak and the contact share above are those of the "
        "(r, θ) grid, and the torque is μ ∫ p r dA over the whole face.</p>",
        table(["quantity", "value"], rows),
        picture(folder / "pressure_polar.png", "contact pressure around the circumference",
                "Contact pressure p(r, θ) [MPa] on each friction face: radius outwards, angle around; the white "
                "line is the edge of the contact (open inside it)."),
        picture(folder / "pressure_3d.png", "contact pressure on the revolved faces",
                "The friction faces revolved in 3D, coloured by contact pressure [MPa]."),
    ])
