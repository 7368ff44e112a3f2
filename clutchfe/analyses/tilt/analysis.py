"""Tilt analysis: axis tilt and radial offset of the pressed part, pressure p(r, θ).

The solve service runs the harmonic model (fem/harmonic.py, fem/fft_contact.py,
fem/tilted.py) for a case with a tilt or an offset; this module reads that solve: the
peak on the (r, θ) grid, the open area, the moment and the radial force on the guidance,
the pivot the tilt was taken about and the tilt left after self-aligning.  The torque is
μ ∫ p r dA over the whole face from the θ-summed ring forces,
so the comparison stage is reused unchanged.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from ...comparison import grid_contact_fraction, grid_peak


@dataclass(frozen=True)
class TiltResult:
    case_name: str
    interfaces: list          # fem.tilted.GridInterface per friction face: r, z, θ grid, p(r, θ) MPa, mask
    harmonics: int            # N: harmonics 0 … N, θ grid of 2N angles
    axis_tilt_deg: float
    radial_offset_mm: float
    guidance: str             # "held" or "self_aligning"
    tilt_moment_Nm: float     # moment the guidance carries (0 when self-aligning)
    residual_tilt_deg: float  # tilt of the pressed part after self-aligning (= imposed when held)
    peak_pressure_MPa: float
    peak_pressure_r_mm: float
    peak_pressure_theta_deg: float
    peak_pressure_surface: str
    contact_area_fraction: float
    approach_mm: dict         # free body -> axial rigid translation
    floating_tilt_deg: dict   # free-tilt body -> tilt (deg)
    tilt_pivot_offset_mm: float = 0.0     # pivot's axial distance from the middle of the friction face
    tilt_pivot_z_mm: float = math.nan     # the pivot's z in the section (pressure.csv z_mm)
    guided_at: str = "load_ring"          # where the guidance holds the part across the axis
    guidance_radial_force_N: float = 0.0  # force across the axis the guidance carries


def tilt_result(solved) -> TiltResult:
    """The tilt analysis of a solved tilted case (``solved.tilted`` is its (r, θ) solve)."""
    sol, case = solved.tilted, solved.case
    mis = case.misalignment
    names = solved.prepared.model.body_names
    pressed = next(b.name for b in solved.prepared.section.bodies if b.role == "pressed")
    own = sol.tilt.get(pressed, (0.0, 0.0))
    peak, r, surface, theta = grid_peak(sol.interfaces)
    return TiltResult(
        case_name=case.name, interfaces=sol.interfaces, harmonics=sol.harmonics, axis_tilt_deg=mis.axis_tilt,
        radial_offset_mm=mis.radial_offset, guidance=solved.guidance,
        tilt_moment_Nm=0.0 if solved.guidance == "self_aligning" else math.hypot(*sol.moment) / 1000.0,
        residual_tilt_deg=math.degrees(math.hypot(math.radians(mis.axis_tilt) + own[0], own[1])),
        peak_pressure_MPa=peak, peak_pressure_r_mm=r, peak_pressure_theta_deg=theta, peak_pressure_surface=surface,
        contact_area_fraction=grid_contact_fraction(sol.interfaces), approach_mm=sol.approach,
        floating_tilt_deg={k: math.degrees(math.hypot(*v)) for k, v in sol.tilt.items() if k != pressed and k in names},
        tilt_pivot_offset_mm=float(mis.tilt_pivot_offset or 0.0), tilt_pivot_z_mm=sol.pivot_z,
        guided_at=mis.guided_at or "load_ring", guidance_radial_force_N=math.hypot(*sol.radial_force))


def tilt_summary_keys(t: TiltResult) -> dict:
    """Keys the tilted solve adds to summary.json."""
    return {
        "peak_pressure_theta_deg": t.peak_pressure_theta_deg, "peak_pressure_r_mm": t.peak_pressure_r_mm,
        "tilt_moment_Nm": t.tilt_moment_Nm, "harmonics": t.harmonics,
        "angular_divisions": 2 * t.harmonics, "axis_tilt_deg": t.axis_tilt_deg,
        "radial_offset_mm": t.radial_offset_mm, "guidance": t.guidance,
        "residual_tilt_deg": t.residual_tilt_deg, "floating_tilt_deg": t.floating_tilt_deg,
        "open_area_fraction": 1.0 - t.contact_area_fraction,
        "tilt_pivot_offset_mm": t.tilt_pivot_offset_mm, "tilt_pivot_z_mm": t.tilt_pivot_z_mm,
        "guided_at": t.guided_at, "guidance_radial_force_N": t.guidance_radial_force_N,
    }
