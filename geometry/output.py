"""Write a section mesh as VTU and draw it with its named faces."""
from __future__ import annotations

import numpy as np

from .mesher import SectionMesh
from .section import Section


def write_mesh(mesh: SectionMesh, path) -> None:
    """VTU with the triangles (cell data ``region_id``) and the named faces as line cells
    (cell data ``face_id``); the id -> name tables go into field data."""
    import meshio       # here: ~0.1 s CPU to import, which `clutchfe check` (geometry, no files) need not pay

    tri_type, line_type = ("triangle6", "line3") if mesh.order == 2 else ("triangle", "line")
    names = sorted(mesh.faces)
    cells = [(tri_type, mesh.triangles)] + [(line_type, mesh.faces[n]) for n in names]
    region_id = [mesh.triangle_region.astype(np.int32)] + [np.full(len(mesh.faces[n]), -1, np.int32)
                                                            for n in names]
    face_id = [np.full(len(mesh.triangles), -1, np.int32)] + [np.full(len(mesh.faces[n]), k, np.int32)
                                                              for k, n in enumerate(names)]
    points = np.column_stack([mesh.points, np.zeros(len(mesh.points))])
    out = meshio.Mesh(points, cells, cell_data={"region_id": region_id, "face_id": face_id})
    meshio.write(str(path), out, file_format="vtu")
    # region / face names ride along in a small sidecar table, since VTU field data holds numbers only
    legend = "\n".join([f"region {k} {n}" for k, n in enumerate(mesh.region_names)] +
                       [f"face {k} {n}" for k, n in enumerate(names)])
    with open(str(path) + ".names.txt", "w", encoding="utf-8") as fh:
        fh.write(legend + "\n")


def section_picture(section: Section, mesh: SectionMesh, path, title: str = "") -> None:
    """PNG of the meshed section: regions shaded, named faces drawn thick and listed."""
    # here, not at the top: matplotlib costs ~0.5 s CPU to import, and `clutchfe check` needs geometry, not pictures
    from matplotlib import colormaps
    from matplotlib.collections import LineCollection
    from matplotlib.figure import Figure
    from matplotlib.tri import Triangulation

    tri = Triangulation(mesh.points[:, 0], mesh.points[:, 1], mesh.triangles[:, :3])
    r_span = np.ptp(mesh.points[:, 0])
    z_span = np.ptp(mesh.points[:, 1])
    height = 7.0
    width = float(np.clip(height * r_span / max(z_span, 1e-9) + 3.5, 6.0, 16.0))
    fig = Figure(figsize=(width, height))
    ax = fig.add_subplot()
    shades = colormaps["Pastel1"]
    ax.tripcolor(tri, facecolors=mesh.triangle_region % 9, cmap=shades, vmin=0, vmax=8, edgecolors="none")
    ax.triplot(tri, color="0.55", lw=0.25)
    strong = colormaps["tab10"]
    for k, name in enumerate(sorted(mesh.faces)):
        segs = mesh.faces[name][:, [0, -1]] if mesh.order == 1 else mesh.faces[name][:, :2]
        colour = strong(k % 10)
        # one artist per face (a line per segment cost ~0.1 s CPU); zorder 2 as a line, over the mesh edges
        ax.add_collection(LineCollection(mesh.points[segs], colors=[colour], linewidths=3.0, capstyle="butt",
                                         zorder=2))
        ax.plot([], [], color=colour, lw=3.0, label=name)
    for k, name in enumerate(mesh.region_names):
        centres = mesh.points[mesh.triangles[mesh.triangle_region == k, :3]].mean(axis=1)
        # label at the region's own triangle nearest its centroid (an L-shaped body's
        # centroid may lie outside it)
        centre = centres[np.argmin(np.linalg.norm(centres - centres.mean(axis=0), axis=1))]
        ax.annotate(name.replace("_", " "), centre, ha="center", va="center", fontsize=8,
                    bbox=dict(boxstyle="round,pad=0.2", fc="white", ec="0.6", alpha=0.8))
    _draw_load_and_supports(ax, section, mesh)
    ax.axvline(0.0, color="k", lw=0.8, ls="-.")
    ax.set_xlim(left=-0.02 * r_span)
    ax.set_aspect("equal")
    ax.set_xlabel("radius r [mm]")
    ax.set_ylabel("axial position z [mm]")
    ax.set_title(title or f"{section.kind} section: {len(mesh.triangles)} triangles, "
                 f"{len(mesh.points)} nodes")
    ax.legend(loc="center left", bbox_to_anchor=(1.01, 0.5), fontsize=8,
              title=f"named faces\n(lining ends: {lining_ends_words(section)})", title_fontsize=8)
    fig.tight_layout()
    fig.savefig(path, dpi=130)


def lining_ends_words(section: Section) -> str:
    """lining.end_shape in plain words, as the section picture shows it."""
    if section.semi_cone_angle == 90.0 and section.lining_end_shape != "chamfer":
        return "square to the face"              # a plate: normal to the axis = normal to the face
    return {"normal_to_axis": "normal to the axis", "normal_to_face": "normal to the face",
            "chamfer": "45° chamfer"}[section.lining_end_shape]


def _draw_load_and_supports(ax, section: Section, mesh: SectionMesh) -> None:
    """Arrows where the engagement force acts, triangles where the housing holds the part."""
    span = float(np.ptp(mesh.points, axis=0).max())
    length = 0.08 * span
    load_nodes = np.unique(mesh.faces[section.load_face][:, :2])
    r_load = mesh.points[load_nodes, 0]
    z_top = float(mesh.points[load_nodes, 1].max())
    if section.ring_radius is not None:
        radii, label = [section.ring_radius], f"W = {section.axial_force:g} N on a ring r = {section.ring_radius:g} mm"
    else:
        radii, label = np.linspace(r_load.min(), r_load.max(), 6), f"W = {section.axial_force:g} N, uniform"
    for r in radii:
        ax.annotate("", xy=(r, z_top), xytext=(r, z_top + length),
                    arrowprops=dict(arrowstyle="-|>", color="crimson", lw=1.6))
    ax.text(float(np.mean(radii)), z_top + 1.15 * length, label, color="crimson", ha="center", va="bottom",
            fontsize=8)
    ax.set_ylim(top=z_top + 1.6 * length)
    for face, marker in ((section.support_axial_face, "^"), (section.support_radial_face, ">")):
        nodes = np.unique(mesh.faces[face][:, :2])
        pts = mesh.points[nodes]
        step = max(1, len(pts) // 8)
        ax.plot(pts[::step, 0], pts[::step, 1], linestyle="none", marker=marker, color="k", markersize=6)
    ax.plot([], [], linestyle="none", marker="^", color="k", label="housing support")
