"""Mesh a :class:`Section` with the gmsh Python API and read it back through meshio.

* Friction faces on both bodies get the same transfinite node distribution, so
  their nodes coincide at zero load (the contact stage pairs them node to node);
  an interface with ``matching_nodes`` False gives face B a node count of its own
  (the contact stage then pairs the faces by projection, fem/projection.py).
* Linings are structured (transfinite) with ``lining_layers`` elements through
  the thickness; nodes cluster towards the lining ends, where the pressure
  changes fastest, and the bodies grade from the face size to the body size.
* The mesh handed on is linear unless order 2 is asked for (gmsh loses named
  boundaries of second-order meshes on the way to scikit-fem, so the FE stage
  builds P2 fields on the linear mesh).
"""
from __future__ import annotations

import contextlib
import io
import math
import tempfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from .section import GeometryError, Section

if TYPE_CHECKING:                  # the annotation only: meshio is imported where meshes are read
    import meshio

PAIR_TOLERANCE_MM = 1e-9


@dataclass
class SectionMesh:
    points: np.ndarray                  # (n, 2) r, z in mm
    triangles: np.ndarray               # (m, 3) or (m, 6) node indices, counter-clockwise
    triangle_region: np.ndarray         # (m,) index into region_names
    region_names: list[str]
    region_body: list[str]
    faces: dict[str, np.ndarray]        # face name -> (k, 2) or (k, 3) boundary segments
    # interface name -> (k, 2) [node on face_a, node on face_b], one row per node of face_a sorted
    # along the face; −1 in column 1 where face B has no node at that place (matching_nodes False)
    interface_pairs: dict[str, np.ndarray]
    order: int
    # interface name -> (nodes of face_a, nodes of face_b), each sorted along the face
    interface_sides: dict[str, tuple[np.ndarray, np.ndarray]] = field(default_factory=dict)

    @property
    def vertex_count(self) -> int:
        return int(np.unique(self.triangles[:, :3]).size)


def _cross2(u, v):
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def face_node_count(length: float, face_size: float, edge_size: float) -> tuple[int, float]:
    """Nodes along a friction face and gmsh's 'Bump' coefficient (≈ end size / mid size).

    The 0.27 exponent is an empirical fit of the mean spacing of gmsh's bump
    distribution against its mid spacing (checked for coefficients 0.05–0.5).
    """
    coef = min(edge_size / face_size, 1.0)
    intervals = max(4, math.ceil(length / face_size * coef ** -0.27))
    return intervals + 1, coef


def face_node_counts(section: Section) -> dict[str, tuple[int, float]]:
    """Nodes and bump coefficient of every friction face, by face name: both faces of an interface
    alike, except face B of one with ``matching_nodes`` False (spacing ``face_b_spacing`` times)."""
    counts = {}
    for itf in section.interfaces:
        n, coef = face_node_count(itf.slant_length, section.face_size, section.edge_size)
        counts[itf.face_a] = counts[itf.face_b] = (n, coef)
        if not itf.matching_nodes:
            ratio = itf.face_b_spacing
            if not (math.isfinite(ratio) and ratio > 0.0):
                raise GeometryError([f"interface {itf.name}: face_b_spacing must be a positive number, got {ratio}"])
            nb, _ = face_node_count(itf.slant_length, ratio * section.face_size, ratio * section.edge_size)
            if nb == n:         # the counts must differ, or the nodes would coincide again
                nb = n + 1 if ratio < 1.0 or n <= 5 else n - 1
            counts[itf.face_b] = (nb, coef)
    return counts


def mesh_section(section: Section, order: int | None = None) -> SectionMesh:
    """Mesh a section with gmsh (triangles; matching nodes on both sides of every friction face
    whose ``matching_nodes`` is set, the default).

    Parameters
    ----------
    section : Section
        From :func:`build_section`, with the case's mesh controls attached.
    order : int, optional
        1 (default: the FE stage builds P2 fields on the linear mesh) or 2 (for output only).

    Returns
    -------
    SectionMesh
        Points, triangles, region and face groups, the node pairs of each friction face and the
        nodes of its two sides.
    """
    import gmsh   # imported late: gmsh starts a C++ runtime
    import meshio  # and meshio costs ~0.1 s CPU, which `clutchfe check` need not pay

    order = order or 1
    gmsh.initialize(readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.option.setNumber("General.NumThreads", 1)     # same input, same mesh
        gmsh.model.add("section")
        _build(gmsh, section)
        gmsh.model.mesh.generate(2)
        if order == 2:
            gmsh.model.mesh.setOrder(2)
        with tempfile.TemporaryDirectory() as tmp:
            path = Path(tmp) / "section.msh"
            gmsh.write(str(path))
            with contextlib.redirect_stdout(io.StringIO()):     # meshio's gmsh reader prints a blank line
                raw = meshio.read(path)
    finally:
        gmsh.finalize()
    return _to_section_mesh(raw, section, order)


def _build(gmsh, section: Section) -> None:
    geo = gmsh.model.geo
    used = sorted({p for reg in section.regions for p in reg.loop})
    tag = {p: geo.addPoint(*section.points[p], 0.0) for p in used}
    lines: dict[tuple[int, int], int] = {}
    loops = []
    for reg in section.regions:
        signed = []
        for k, a in enumerate(reg.loop):
            b = reg.loop[(k + 1) % len(reg.loop)]
            # orient every line from its lexicographically smaller end, so that two friction
            # faces on different bodies get the same parametrisation and the same nodes
            lo, hi = sorted((a, b), key=lambda p: section.points[p])
            if (lo, hi) not in lines:
                lines[(lo, hi)] = geo.addLine(tag[lo], tag[hi])
            signed.append(lines[(lo, hi)] if (a, b) == (lo, hi) else -lines[(lo, hi)])
        loops.append(signed)
    surfaces = [geo.addPlaneSurface([geo.addCurveLoop(s)]) for s in loops]

    counts = face_node_counts(section)
    face_lines = []
    for reg, signed, surf in zip(section.regions, loops, surfaces):
        for k, name in enumerate(reg.edge_names):
            if name in counts:
                n, coef = counts[name]
                geo.mesh.setTransfiniteCurve(abs(signed[k]), n, "Bump", coef)
                face_lines.append(abs(signed[k]))
        if reg.lining_layers:
            n, coef = counts[reg.edge_names[0]]       # the bond gets the friction face's nodes
            geo.mesh.setTransfiniteCurve(abs(signed[2]), n, "Bump", coef)
            for k in (1, 3):
                geo.mesh.setTransfiniteCurve(abs(signed[k]), reg.lining_layers + 1)
            geo.mesh.setTransfiniteSurface(surf, "Alternate", [tag[p] for p in reg.loop])
            face_lines.append(abs(signed[2]))
    geo.synchronize()

    for name in dict.fromkeys(reg.name for reg in section.regions):
        members = [s for reg, s in zip(section.regions, surfaces) if reg.name == name]
        gmsh.model.addPhysicalGroup(2, members, name=name)      # one group per name: see docs/solver-notes.md
    named: dict[str, list[int]] = {}
    for reg, signed in zip(section.regions, loops):
        for k, name in enumerate(reg.edge_names):
            if name:
                named.setdefault(name, []).append(abs(signed[k]))
    for name, members in named.items():
        gmsh.model.addPhysicalGroup(1, sorted(set(members)), name=name)

    field = gmsh.model.mesh.field
    near_face = field.add("Distance")
    field.setNumbers(near_face, "CurvesList", face_lines)
    field.setNumber(near_face, "Sampling", 200)
    near_ends = field.add("Distance")
    field.setNumbers(near_ends, "PointsList", [tag[p] for p in section.refine_points])
    # the graded zones are fixed lengths (the sizes of the unrefined mesh), so that meshes of
    # different mesh.refinement are geometrically similar: the same zones, finer elements
    k = section.refinement
    grade_face = _grade(field, near_face, section.face_size, section.body_size,
                        k * section.face_size, 4.0 * k * section.body_size)
    grade_ends = _grade(field, near_ends, section.edge_size, section.body_size,
                        k * section.edge_size, 8.0 * k * section.face_size)
    # thin parts (disc cores, separators, rims) get at least about two elements through
    # their thickness (times the refinement); 2·area/perimeter is the thickness of a long strip
    caps = []
    for reg, surf in zip(section.regions, surfaces):
        if reg.lining_layers:
            continue
        area, _ = section.region_area_and_moment(reg)
        loop = np.array([section.points[p] for p in reg.loop])
        perimeter = np.linalg.norm(np.roll(loop, -1, axis=0) - loop, axis=1).sum()
        cap = field.add("Constant")
        field.setNumber(cap, "VIn", min(section.body_size, max(area / perimeter / section.refinement,
                                                               section.edge_size)))
        field.setNumber(cap, "VOut", 1e22)
        field.setNumbers(cap, "SurfacesList", [surf])
        caps.append(cap)
    smallest = field.add("Min")
    field.setNumbers(smallest, "FieldsList", [grade_face, grade_ends, *caps])
    field.setAsBackgroundMesh(smallest)
    for option, value in (("Mesh.MeshSizeExtendFromBoundary", 0), ("Mesh.MeshSizeFromPoints", 0),
                          ("Mesh.MeshSizeFromCurvature", 0), ("Mesh.Algorithm", 6),
                          ("Mesh.MeshSizeMax", section.body_size)):
        gmsh.option.setNumber(option, value)


def _grade(field, distance, size_min, size_max, dist_min, dist_max) -> int:
    """Element size growing from size_min (within dist_min) to size_max (beyond dist_max)."""
    tag = field.add("Threshold")
    for key, value in (("InField", distance), ("SizeMin", size_min), ("SizeMax", size_max),
                       ("DistMin", dist_min), ("DistMax", dist_max)):
        field.setNumber(tag, key, value)
    return tag


def _to_section_mesh(raw: meshio.Mesh, section: Section, order: int) -> SectionMesh:
    tri_type, line_type = ("triangle6", "line3") if order == 2 else ("triangle", "line")
    blocks = {t: np.vstack([c.data for c in raw.cells if c.type == t]) for t in (tri_type, line_type)
              if any(c.type == t for c in raw.cells)}
    sets = {name: s for name, s in raw.cell_sets_dict.items() if not name.startswith("gmsh:")}
    triangles = blocks[tri_type]
    region_names = list(dict.fromkeys(reg.name for reg in section.regions))
    triangle_region = np.full(len(triangles), -1, dtype=int)
    for k, name in enumerate(region_names):
        triangle_region[sets[name][tri_type]] = k
    if (triangle_region < 0).any():
        raise GeometryError(["internal: some triangles belong to no region"])
    # keep only the nodes the triangles use, numbered in order of first use
    used, inverse = np.unique(triangles, return_inverse=True)
    points = raw.points[used, :2]
    triangles = inverse.reshape(triangles.shape)
    renumber = np.full(raw.points.shape[0], -1, dtype=int)
    renumber[used] = np.arange(len(used))
    faces = {name: renumber[blocks[line_type][s[line_type]]] for name, s in sets.items() if line_type in s}
    # orient triangles counter-clockwise in (r, z)
    p = points[triangles[:, :3]]
    signed = _cross2(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    flip = signed < 0
    if flip.any():
        swap = [0, 2, 1, 5, 4, 3] if order == 2 else [0, 2, 1]
        triangles[flip] = triangles[flip][:, swap]
    region_body = [next(reg.body for reg in section.regions if reg.name == n) for n in region_names]
    sides = {itf.name: _sides(points, faces, itf) for itf in section.interfaces}
    pairs = {itf.name: _pair_nodes(points, *sides[itf.name], itf) for itf in section.interfaces}
    return SectionMesh(points=points, triangles=triangles, triangle_region=triangle_region,
                       region_names=region_names, region_body=region_body, faces=faces,
                       interface_pairs=pairs, order=order, interface_sides=sides)


def _sides(points, faces, itf) -> tuple[np.ndarray, np.ndarray]:
    direction = np.subtract(itf.end, itf.start)
    direction = direction / np.linalg.norm(direction)
    sides = []
    for name in (itf.face_a, itf.face_b):
        nodes = np.unique(faces[name])
        s = (points[nodes] - itf.start) @ direction
        sides.append(nodes[np.argsort(s)])
    return sides[0], sides[1]


def _pair_nodes(points, a, b, itf) -> np.ndarray:
    if itf.matching_nodes:
        if len(a) != len(b) or np.abs(points[a] - points[b]).max() > PAIR_TOLERANCE_MM:
            raise GeometryError([f"internal: the nodes of {itf.face_a} and {itf.face_b} do not coincide"])
        return np.column_stack([a, b])
    # each node of face A with the node of face B at its place, if there is one (the face ends):
    # the nearer of B's two nodes around it along the face
    direction = np.subtract(itf.end, itf.start)
    s_a, s_b = [(points[nodes] - itf.start) @ direction for nodes in (a, b)]
    i = np.clip(np.searchsorted(s_b, s_a), 1, len(b) - 1)
    near = np.where(np.abs(s_a - s_b[i - 1]) <= np.abs(s_b[i] - s_a), i - 1, i)
    apart = np.abs(points[a] - points[b[near]]).max(axis=1)
    return np.column_stack([a, np.where(apart <= PAIR_TOLERANCE_MM, b[near], -1)])
