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
    """p(r, θ) of every friction face on a polar map: the open zone hatched inside its outline,
    each face's peak marked with its value, three radial ticks (r1, mid, r2) that stay readable."""
    n = len(t.interfaces)
    fig = Figure(figsize=(4.8 * n, 5.0))
    axes = fig.subplots(1, n, subplot_kw={"projection": "polar"}, squeeze=False)
    vmax = max(g.pressure.max() for g in t.interfaces)
    for ax, g in zip(axes[0], t.interfaces):
        th = _closed_theta(g.theta)
        p = np.hstack([g.pressure, g.pressure[:, :1]])
        closed = np.hstack([g.in_contact, g.in_contact[:, :1]]).astype(float)
        mesh = ax.pcolormesh(th, g.r, p, shading="gouraud", vmin=0.0, vmax=vmax, cmap="viridis")
        if closed.min() < 0.5:                  # part of the face is open: hatch it, outline its edge
            ax.contourf(th, g.r, 1.0 - closed, levels=[0.5, 1.5], colors="none", hatches=["////"]) \
                .set_edgecolor("0.85")
            ax.contour(th, g.r, closed, levels=[0.5], colors="w", linewidths=1.2)
        width = g.r.max() - g.r.min()
        ax.set_rorigin(g.r.min() - 1.5 * width)
        ax.set_ylim(g.r.min(), g.r.max())
        ticks = [g.r.min(), 0.5 * (g.r.min() + g.r.max()), g.r.max()]
        ax.set_rticks(ticks, [f"{r:.0f}" for r in ticks[:-1]] + [f"{ticks[-1]:.0f} mm"])
        ax.set_rlabel_position(67.5)
        ax.tick_params(axis="y", labelsize=7)
        for label in ax.get_yticklabels():
            label.set_bbox(dict(boxstyle="round,pad=0.15", fc="w", ec="none", alpha=0.8))
        i, j = np.unravel_index(np.argmax(g.pressure), g.pressure.shape)
        ax.plot([g.theta[j]], [g.r[i]], marker="*", ms=14, mfc="r", mec="k", clip_on=False, zorder=5)
        ax.annotate(f"peak {g.pressure[i, j]:.3g} MPa", (g.theta[j], g.r[i]), xytext=(0, -16),
                    textcoords="offset points", ha="center", fontsize=8, color="k", zorder=6,
                    bbox=dict(boxstyle="round,pad=0.2", fc="w", ec="r", alpha=0.9), annotation_clip=False)
        ax.set_title(f"surface {g.name}: pressure [MPa]\nr [mm] radial, θ [deg] around; "
                     "hatched: open (no contact)", fontsize=9)
        fig.colorbar(mesh, ax=ax, shrink=0.7, pad=0.12, label="pressure [MPa]")
    fig.suptitle(f"{t.case_name}: tilt {t.axis_tilt_deg:g} deg about a pivot {t.tilt_pivot_offset_mm:g} mm from "
                 f"the face middle, offset {t.radial_offset_mm:g} mm ({t.guidance}, guided at {t.guided_at}); "
                 f"peak {t.peak_pressure_MPa:.3g} MPa at r = {t.peak_pressure_r_mm:.1f} mm, "
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
