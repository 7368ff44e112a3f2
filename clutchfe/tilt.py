"""Non-axisymmetric stage: axis tilt and radial offset of the pressed part, pressure p(r, θ).

``solve_tilted`` runs the harmonic model (fem/harmonic.py, fem/fft_contact.py,
fem/tilted.py) for a case; ``add_tilt_to_run`` writes pressure.csv with theta_deg, a
polar map and a 3D picture of the pressure on the revolved face, and the summary keys.
The torque is μ ∫ p r dA over the whole face (design.md §5), from the θ-summed ring forces,
so the comparison stage is reused unchanged.
"""
from __future__ import annotations

import csv
import math
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

# θ grid and guidance, until the schema carries them (keys proposed to the schema owner)
DEFAULT_ANGULAR_DIVISIONS = 48      # 24 harmonics; torque converged to < 0.5 % (tests/test_tilt.py)
GUIDANCE_CHOICES = ("held", "self_aligning")


@dataclass
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
    fe: object                # fem.FeResult with θ-summed interfaces (for comparison and summary)
    result: dict              # comparison.compare(...) with the grid peak and contact fraction
    solver: object            # fem.tilted.TiltedContactSolver: re-solve other tilts cheaply


def case_options(case) -> tuple[int, str]:
    mis = case.misalignment
    divisions = int(getattr(getattr(case, "mesh", None), "angular_divisions", None) or DEFAULT_ANGULAR_DIVISIONS)
    guidance = getattr(mis, "guidance", None) or "held"
    if guidance not in GUIDANCE_CHOICES:
        raise ValueError(f"misalignment.guidance = {guidance!r}: allowed {', '.join(GUIDANCE_CHOICES)}")
    return divisions, guidance


def solver_for(case, section, mesh, divisions: int | None = None):
    from .fem.tilted import TiltedContactSolver
    from .pipeline import fe_model_of
    model = fe_model_of(case, section, mesh)
    pressed = next(b.name for b in section.bodies if b.role == "pressed")
    return TiltedContactSolver(model, pressed, grid=divisions or case_options(case)[0])


def solve_tilted(case, section=None, mesh=None, solver=None, tilt_deg=None, offset_mm=None,
                 guidance=None) -> TiltResult:
    """Tilted/offset contact of a case (misalignment keys unless given); raises
    pipeline.PhysicsError when the face cannot carry the load."""
    from . import fem
    from .comparison import compare
    from .geometry import mesh_section
    from .pipeline import PhysicsError, hand_of, section_of

    divisions, default_guidance = case_options(case)
    guidance = guidance or default_guidance
    tilt = case.misalignment.axis_tilt if tilt_deg is None else tilt_deg
    offset = case.misalignment.radial_offset if offset_mm is None else offset_mm
    section = section if section is not None else section_of(case)
    mesh = mesh if mesh is not None else mesh_section(section, order=1)
    try:
        solver = solver or solver_for(case, section, mesh, divisions)
        sol = solver.solve(tilt, offset, self_aligning=guidance == "self_aligning")
    except fem.ContactError as exc:
        raise PhysicsError(str(exc)) from None
    rings = [g.ring() for g in sol.interfaces]
    fe = fem.FeResult(displacement=np.zeros((2, 0)), stress={}, interfaces=rings, rigid_approach=sol.approach,
                      axial_force_balance_error=sol.axial_force_balance_error,
                      dofs=int(solver.base.system.basis.N + solver.hs.basis.N), timings=sol.timings,
                      contact_iterations=sol.sweeps)
    result = compare(rings, hand_of(case), case.requirement.required_torque, case.requirement.service_factor)
    at = max(range(len(sol.interfaces)), key=lambda i: sol.interfaces[i].pressure.max())
    g = sol.interfaces[at]
    i, j = np.unravel_index(int(np.argmax(g.pressure)), g.pressure.shape)
    cells = sum(float(np.sum(x.area)) for x in sol.interfaces)
    closed = sum(float(np.sum(x.area[:, None] / x.theta.size * x.in_contact)) for x in sol.interfaces)
    result.update(peak_pressure_MPa=float(g.pressure[i, j]), peak_pressure_radius_mm=float(g.r[i]),
                  peak_pressure_surface=g.name, contact_area_fraction=closed / cells,
                  peak_pressure_over_uniform_wear_peak=float(g.pressure[i, j]) / result["peak_pressure_uniform_wear_MPa"])
    pressed = solver.base.system.model.body_names[solver.pressed]
    self_tilt = sol.tilt.get(pressed, (0.0, 0.0))
    residual = math.degrees(math.hypot(math.radians(tilt) + self_tilt[0], self_tilt[1]))
    return TiltResult(
        case_name=case.name, interfaces=sol.interfaces, harmonics=sol.harmonics, axis_tilt_deg=tilt,
        radial_offset_mm=offset, guidance=guidance,
        tilt_moment_Nm=0.0 if guidance == "self_aligning" else math.hypot(*sol.moment) / 1000.0,
        residual_tilt_deg=residual, peak_pressure_MPa=float(g.pressure[i, j]), peak_pressure_r_mm=float(g.r[i]),
        peak_pressure_theta_deg=float(np.degrees(g.theta[j])), peak_pressure_surface=g.name,
        contact_area_fraction=closed / cells, approach_mm=sol.approach,
        floating_tilt_deg={k: math.degrees(math.hypot(*v)) for k, v in sol.tilt.items() if k != pressed},
        fe=fe, result=result, solver=solver)


def tilt_summary_keys(t: TiltResult) -> dict:
    """Keys the tilted solve adds to summary.json (design.md §4 keys come from summary_of)."""
    return {
        "peak_pressure_theta_deg": t.peak_pressure_theta_deg, "peak_pressure_r_mm": t.peak_pressure_r_mm,
        "tilt_moment_Nm": t.tilt_moment_Nm, "harmonics": t.harmonics,
        "angular_divisions": 2 * t.harmonics, "axis_tilt_deg": t.axis_tilt_deg,
        "radial_offset_mm": t.radial_offset_mm, "guidance": t.guidance,
        "residual_tilt_deg": t.residual_tilt_deg, "floating_tilt_deg": t.floating_tilt_deg,
        "open_area_fraction": 1.0 - t.contact_area_fraction,
    }


def add_tilt_to_run(t: TiltResult, summary: dict, folder: Path) -> None:
    """Write pressure.csv (with theta_deg), pressure_polar.png, pressure_3d.png; add summary keys."""
    folder = Path(folder)
    summary.update(tilt_summary_keys(t))
    write_grid_csv(folder / "pressure.csv", t.interfaces)
    polar_picture(folder / "pressure_polar.png", t)
    face_picture(folder / "pressure_3d.png", t)


def write_grid_csv(path: Path, interfaces) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        out = csv.writer(fh)
        out.writerow(["surface", "r_mm", "z_mm", "theta_deg", "pressure_MPa", "normal_force_N",
                      "cell_area_mm2", "gap_mm", "in_contact"])
        for g in interfaces:
            for i in range(g.r.size):
                for j, th in enumerate(g.theta):
                    out.writerow([g.name, f"{g.r[i]:.6f}", f"{g.z[i]:.6f}", f"{math.degrees(th):.4f}",
                                  f"{g.pressure[i, j]:.6g}", f"{g.normal_force[i, j]:.6g}",
                                  f"{g.area[i] / g.theta.size:.6g}", f"{g.gap[i, j]:.6g}", int(g.in_contact[i, j])])


def _closed_theta(theta):
    return np.append(theta, theta[0] + 2.0 * np.pi)


def polar_picture(path: Path, t: TiltResult) -> None:
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    n = len(t.interfaces)
    fig, axes = plt.subplots(1, n, subplot_kw={"projection": "polar"}, figsize=(4.6 * n, 4.6), squeeze=False)
    vmax = max(g.pressure.max() for g in t.interfaces)
    for ax, g in zip(axes[0], t.interfaces):
        th = _closed_theta(g.theta)
        p = np.hstack([g.pressure, g.pressure[:, :1]])
        mesh = ax.pcolormesh(th, g.r, p, shading="gouraud", vmin=0.0, vmax=vmax, cmap="viridis")
        ax.contour(th, g.r, np.hstack([g.in_contact, g.in_contact[:, :1]]).astype(float), levels=[0.5],
                   colors="w", linewidths=0.8)
        ax.set_rorigin(g.r.min() - 1.5 * (g.r.max() - g.r.min()))
        ax.set_ylim(g.r.min(), g.r.max())
        ax.set_title(f"surface {g.name}: pressure [MPa]\nr [mm] radial, θ [deg] around; white: contact edge",
                     fontsize=9)
        fig.colorbar(mesh, ax=ax, shrink=0.7, label="pressure [MPa]")
    fig.suptitle(f"{t.case_name}: tilt {t.axis_tilt_deg:g} deg, offset {t.radial_offset_mm:g} mm "
                 f"({t.guidance}); peak {t.peak_pressure_MPa:.3g} MPa at r = {t.peak_pressure_r_mm:.1f} mm, "
                 f"θ = {t.peak_pressure_theta_deg:.0f} deg", fontsize=9, wrap=True)
    fig.tight_layout()
    fig.savefig(path, dpi=110)
    plt.close(fig)


def face_picture(path: Path, t: TiltResult) -> None:
    """The friction faces revolved in 3D, coloured by pressure (pyvista, off-screen)."""
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    import pyvista as pv

    plotter = pv.Plotter(off_screen=True, window_size=(900, 700))
    for g in t.interfaces:
        th = _closed_theta(g.theta)
        R, TH = np.meshgrid(g.r, th, indexing="ij")
        Z = np.repeat(g.z[:, None], th.size, axis=1)
        grid = pv.StructuredGrid(R * np.cos(TH), R * np.sin(TH), Z)
        grid["pressure [MPa]"] = np.hstack([g.pressure, g.pressure[:, :1]]).ravel(order="F")
        plotter.add_mesh(grid, scalars="pressure [MPa]", cmap="viridis", show_edges=False,
                         scalar_bar_args={"title": "pressure [MPa]"})
    plotter.add_axes(xlabel="x [mm]", ylabel="y [mm]", zlabel="z [mm]")
    plotter.add_text(f"{t.case_name}: contact pressure on the friction faces, tilt {t.axis_tilt_deg:g} deg",
                     font_size=10)
    plotter.view_isometric()
    plotter.screenshot(str(path))
    plotter.close()
