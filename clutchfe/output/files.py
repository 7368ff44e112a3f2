"""The files of a results folder and the terminal table."""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
from rich.markup import escape
from rich.table import Table

from ..geometry import section_picture, write_mesh


def write_all(folder: Path, case, section, mesh, fe, result, axisymmetric: bool = True) -> None:
    """The standard files and pictures (summary.json is the run plan's, written last).  A tilted
    solve has no (r, z) displacement field and its pressure.csv (with theta) comes from the
    tilt analysis, so those are left to it."""
    # the pictures' libraries are imported here, not at the top: `clutchfe check` imports this module
    # (through the run plan) and must not pay for matplotlib
    from .plots import effective_radius_bar, pressure_plot

    if axisymmetric:
        write_pressure_csv(folder / "pressure.csv", fe)
        write_solution_vtu(folder / "solution.vtu", mesh, fe)
        deformed_picture(folder / "deformed.png", mesh, fe, case.name)
    write_mesh(mesh, folder / "mesh.vtu")
    section_picture(section, mesh, folder / "section.png",
                    title=f"{case.name}: {len(mesh.triangles)} triangles, {len(mesh.points)} nodes")
    # a tilted solve's rings are θ-summed: the picture says it shows the average around the axis
    title = case.name if axisymmetric else f"{case.name}, averaged around the axis (see pressure_polar.png)"
    pressure_plot(folder / "pressure.png", fe.interfaces, result, result["capacity_position"],
                  result["effective_radius_mm"], title)
    effective_radius_bar(folder / "effective_radius.png", case.interface.inner_radius,
                         case.interface.outer_radius, result["radius_uniform_pressure_mm"],
                         result["radius_uniform_wear_mm"], result["effective_radius_mm"])


def write_pressure_csv(path: Path, fe) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        out = csv.writer(fh)
        out.writerow(["surface", "r_mm", "z_mm", "pressure_MPa", "normal_force_N", "tributary_area_mm2",
                      "gap_mm", "in_contact"])
        for itf in fe.interfaces:
            for k in range(len(itf.r)):
                out.writerow([itf.name, f"{itf.r[k]:.6f}", f"{itf.z[k]:.6f}", f"{itf.pressure[k]:.6g}",
                              f"{itf.normal_force[k]:.6g}", f"{itf.tributary_area[k]:.6g}",
                              f"{itf.gap[k]:.6g}", int(bool(itf.in_contact[k]))])


def contact_pressure_at_vertices(mesh, fe) -> np.ndarray:
    """Interface pressure put back on the mesh vertices (both sides of each face), 0 elsewhere."""
    p = np.zeros(len(mesh.points))
    for itf in fe.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        # each side's own nodes: without matching nodes face B has nodes of its own (−1 in pairs)
        sides = mesh.interface_sides.get(itf.name) or (pairs[:, 0], pairs[:, 1])
        for nodes in sides:
            nodes = np.asarray(nodes)
            nodes = nodes[nodes >= 0]
            # interface nodes include P2 mid-nodes; keep the values that sit on vertices (nearest result point)
            for node, (r, z) in zip(nodes, mesh.points[nodes]):
                k = np.argmin((itf.r - r) ** 2 + (itf.z - z) ** 2)
                p[node] = itf.pressure[k]
    return p


def write_solution_vtu(path: Path, mesh, fe) -> None:
    import meshio

    points = np.column_stack([mesh.points, np.zeros(len(mesh.points))])
    u = np.column_stack([fe.displacement.T, np.zeros(len(mesh.points))])
    data = {"displacement_mm": u, "contact_pressure_MPa": contact_pressure_at_vertices(mesh, fe)}
    names = {"rr": "stress_rr_MPa", "zz": "stress_zz_MPa", "tt": "stress_hoop_MPa", "rz": "stress_rz_MPa",
             "von_mises": "von_mises_MPa"}
    for key, label in names.items():
        data[label] = np.asarray(fe.stress[key])
    out = meshio.Mesh(points, [("triangle", mesh.triangles[:, :3])], point_data=data,
                      cell_data={"region_id": [mesh.triangle_region.astype(np.int32)]})
    meshio.write(str(path), out, file_format="vtu")


def deformed_picture(path: Path, mesh, fe, title: str):
    """Deformed section (displacements magnified) coloured by von Mises stress; returns the figure."""
    from .plots import deformed_figure      # here: matplotlib costs ~0.5 s CPU to import (see write_all)

    fig = deformed_figure(mesh.points, mesh.triangles, fe.displacement.T, fe.stress["von_mises"], title)
    fig.savefig(path, dpi=100)
    return fig


def surface_table(surfaces: list[dict]) -> Table:
    """Load and torque per friction surface: in series for the clamp force, in parallel for the torque."""
    table = Table(title="per friction surface (each carries the clamp force W; the torques add)")
    for col in ("surface", "axial force / W", "torque [N·m]", "torque share [%]", "R_eff [mm]", "design peak [MPa]"):
        table.add_column(escape(col), justify="left" if col == "surface" else "right")
    for x in surfaces:
        table.add_row(escape(x["name"]), f"{x['axial_force_over_clamp_force']:.4f}", f"{x['torque_Nm']:.3f}",
                      f"{100 * x['torque_share']:.2f}", f"{x['effective_radius_mm']:.3f}",
                      f"{x['design_peak_pressure_MPa']:.4f}")
    return table


def print_table(console, case, summary: dict, folder: Path, extra_tables=()) -> None:
    table = Table(title=f"{case.name}: torque capacity (FE contact vs hand formulas)")
    table.add_column("quantity", no_wrap=True)
    table.add_column("FE", justify="right")
    table.add_column("uniform pressure", justify="right")
    table.add_column("uniform wear", justify="right")
    table.add_row(escape("torque [N·m]"), f"{summary['torque_fe_Nm']:.2f}", f"{summary['torque_uniform_pressure_Nm']:.2f}",
                  f"{summary['torque_uniform_wear_Nm']:.2f}")
    table.add_row(escape("effective radius [mm]"), f"{summary['effective_radius_mm']:.3f}",
                  f"{summary['radius_uniform_pressure_mm']:.3f}", f"{summary['radius_uniform_wear_mm']:.3f}")
    table.add_row(escape("peak pressure, nodal (edge) [MPa]"), f"{summary['peak_pressure_MPa']:.4f}",
                  f"{summary['mean_pressure_MPa']:.4f}", f"{summary['peak_pressure_uniform_wear_MPa']:.4f}")
    table.add_row(escape(f"design peak, {summary['design_peak_band_mm']:.3g} mm band [MPa]"),
                  f"{summary['design_peak_pressure_MPa']:.4f}", "", "")
    if summary.get("required_torque_Nm"):
        table.add_row(escape("capacity margin [%]"), f"{100 * summary['capacity_margin_fe']:+.1f}",
                      f"{100 * summary['capacity_margin_uniform_pressure']:+.1f}",
                      f"{100 * summary['capacity_margin_uniform_wear']:+.1f}")
    console.print(table)
    if len(summary.get("surfaces", [])) > 1:
        console.print(surface_table(summary["surfaces"]))
    for extra in extra_tables:          # the analyses' own tables (wear-in: new against worn in)
        console.print(extra)
    console.print(f"capacity position xi = {summary['capacity_position']:.3f} (1 = uniform pressure, "
                  f"0 = uniform wear); contact over {100 * summary['contact_area_fraction']:.1f} % of the face; "
                  f"axial balance error {summary['axial_force_balance_error']:.1e}")
    console.print(summary["verdict"], markup=False)
    for warning in summary.get("warnings", []):
        console.print(f"warning: {warning}", markup=False, style="bold red")
    if summary.get("failed_criteria"):
        console.print("FAILED: " + ", ".join(summary["failed_criteria"]), markup=False, style="bold red")
    if "tilt_moment_Nm" in summary:
        console.print(f"tilt {summary['axis_tilt_deg']:g} deg, offset {summary['radial_offset_mm']:g} mm "
                      f"({summary['guidance']}): peak {summary['peak_pressure_MPa']:.4f} MPa at "
                      f"r = {summary['peak_pressure_r_mm']:.2f} mm, theta = {summary['peak_pressure_theta_deg']:.1f} deg; "
                      f"tilting moment on the guidance {summary['tilt_moment_Nm']:.2f} N·m, "
                      f"radial force {summary['guidance_radial_force_N']:.1f} N", markup=False)
    files = sorted(p.name for p in Path(folder).iterdir() if p.is_file() and not p.name.startswith(".")) if Path(folder).is_dir() else []
    console.print(f"results: {folder}/ ({', '.join(files)})", markup=False)
    console.print(f"caution: {summary['caution']}", markup=False, style="italic")
