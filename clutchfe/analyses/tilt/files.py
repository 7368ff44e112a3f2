"""Files of the tilt analysis: pressure.csv with θ, the polar map and the 3D face picture."""
from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from .analysis import TiltResult


FILES = ("pressure.csv", "pressure_polar.png", "pressure_3d.png")


def write_tilt_files(t: TiltResult, folder: Path) -> None:
    """pressure.csv (with theta_deg), pressure_polar.png, pressure_3d.png."""
    folder = Path(folder)
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
    n = len(t.interfaces)
    fig = Figure(figsize=(4.6 * n, 4.6))
    axes = fig.subplots(1, n, subplot_kw={"projection": "polar"}, squeeze=False)
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


def face_picture(path: Path, t: TiltResult) -> None:
    """The friction faces revolved in 3D, coloured by pressure (pyvista, off-screen)."""
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
