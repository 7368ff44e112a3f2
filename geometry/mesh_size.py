"""How many triangles a section's mesh controls will give, estimated before meshing.

gmsh sizes the bodies from a background field (graded from the friction faces and the
lining ends to the body size, capped in thin parts: :mod:`geometry.mesher`).  The number
of triangles is the integral of the element density of that field over the section,
``∫ dA / (a h²)`` with ``a = √3/4`` the area of an equilateral triangle of side ``h``; the
linings are structured, so their count is exact.  The integral is taken on a sampling
grid of each region, plus one triangle per boundary edge (Euler's relation for a
triangulation).  Measured against gmsh on the demo cases at 0.4–2.25 × their mesh density
it is within −15 %/+5 % (tests/test_mesh_budget.py holds it to 20 %).
"""
from __future__ import annotations

import math

import numpy as np

from .mesher import face_node_count
from .section import Section

EQUILATERAL = math.sqrt(3.0) / 4.0
SAMPLES_PER_REGION = 4000
BOUNDARY_SAMPLES = 400


def estimate_triangles(section: Section) -> int:
    """Estimated triangles of ``mesh_section(section)`` (linear or quadratic: the same triangles)."""
    lengths = {itf.face_a: itf.slant_length for itf in section.interfaces}
    lengths.update({itf.face_b: itf.slant_length for itf in section.interfaces})
    segments = np.array([[*itf.start, *itf.end] for itf in section.interfaces], float)
    ends = np.array([section.points[p] for p in section.refine_points], float).reshape(-1, 2)
    total = 0.0
    for region in section.regions:
        if region.lining_layers:
            n, _ = face_node_count(lengths[region.edge_names[0]], section.face_size, section.edge_size)
            total += 2 * (n - 1) * region.lining_layers
            continue
        total += _body_triangles(section, region, segments, ends)
    return int(math.ceil(total))


def _inside(loop: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Which points lie inside the closed polygon ``loop`` (even-odd rule: a ray towards +r crosses
    its edges an odd number of times).  numpy only: ``clutchfe check`` runs this and must not
    import matplotlib for it."""
    r, z = points[:, 0], points[:, 1]
    inside = np.zeros(len(points), dtype=bool)
    for (r0, z0), (r1, z1) in zip(loop, np.roll(loop, -1, axis=0)):
        if z0 == z1:
            continue                                # a ray parallel to the edge never crosses it
        spans = (z0 > z) != (z1 > z)
        with np.errstate(over="ignore"):            # a nearly level edge: the crossing is far off, as it should be
            inside ^= spans & (r < r0 + (z - z0) * ((r1 - r0) / (z1 - z0)))
    return inside


def _body_triangles(section: Section, region, segments, ends) -> float:
    loop = np.array([section.points[p] for p in region.loop], float)
    area, _ = section.region_area_and_moment(region)
    perimeter = np.linalg.norm(np.roll(loop, -1, axis=0) - loop, axis=1).sum()
    cap = min(section.body_size, max(area / perimeter / section.refinement, section.edge_size))
    # a regular grid over the region's box, fine enough for ~SAMPLES_PER_REGION points in it
    lo, hi = loop.min(axis=0), loop.max(axis=0)
    step = math.sqrt(max(area, 1e-12) / SAMPLES_PER_REGION)
    nx, ny = (max(2, min(4000, int(math.ceil(d / step)))) for d in hi - lo)
    xs = lo[0] + (np.arange(nx) + 0.5) * (hi[0] - lo[0]) / nx
    ys = lo[1] + (np.arange(ny) + 0.5) * (hi[1] - lo[1]) / ny
    grid = np.stack(np.meshgrid(xs, ys), axis=-1).reshape(-1, 2)
    inside = _inside(loop, grid)
    if inside.sum() < 50:                        # a sliver the grid misses: its cap size throughout
        return area / (EQUILATERAL * cap * cap)
    # beyond its largest grading distance a face or a lining end no longer sets the size: only the
    # nearby ones count (in a pack of 40 faces a plate sees its own two)
    k = section.refinement
    reach = max(4.0 * k * section.body_size, 8.0 * k * section.face_size)
    lo_r, hi_r = lo - reach, hi + reach
    near = ((np.minimum(segments[:, :2], segments[:, 2:]) <= hi_r).all(axis=1)
            & (np.maximum(segments[:, :2], segments[:, 2:]) >= lo_r).all(axis=1)) if len(segments) else []
    segments = segments[near] if len(segments) else segments
    ends = ends[((ends >= lo_r) & (ends <= hi_r)).all(axis=1)] if len(ends) else ends
    h = _size(section, grid[inside], segments, ends, cap)
    # the sampled area differs from the exact one by the grid's boundary cells: scale to the exact area
    inner = (1.0 / (EQUILATERAL * h * h)).mean() * area
    # the boundary adds about one triangle per boundary edge (Euler: T = 2V_inner + V_boundary - 2)
    edges = np.roll(loop, -1, axis=0) - loop
    lengths = np.linalg.norm(edges, axis=1)
    t = (np.arange(BOUNDARY_SAMPLES) + 0.5) / BOUNDARY_SAMPLES * lengths.sum()
    which = np.minimum(np.searchsorted(np.cumsum(lengths), t), len(loop) - 1)
    start = np.concatenate([[0.0], np.cumsum(lengths)[:-1]])[which]
    along = loop[which] + edges[which] * ((t - start) / np.maximum(lengths[which], 1e-300))[:, None]
    boundary = (1.0 / _size(section, along, segments, ends, cap)).mean() * lengths.sum()
    return inner + boundary


def _size(section: Section, points, segments, ends, cap):
    """The background field's element size at ``points`` (see geometry.mesher._build)."""
    k = section.refinement
    h = np.minimum(_graded(_to_segments(points, segments), section.face_size, section.body_size,
                           k * section.face_size, 4.0 * k * section.body_size),
                   _graded(_to_points(points, ends), section.edge_size, section.body_size,
                           k * section.edge_size, 8.0 * k * section.face_size))
    return np.minimum(h, cap)


def _graded(d, size_min, size_max, dist_min, dist_max):
    """gmsh's Threshold field: size_min within dist_min, size_max beyond dist_max, linear between."""
    t = np.clip((d - dist_min) / max(dist_max - dist_min, 1e-300), 0.0, 1.0)
    return size_min + t * (size_max - size_min)


def _to_points(points, ends):
    if not len(ends):
        return np.full(len(points), np.inf)
    return np.min(np.linalg.norm(points[:, None, :] - ends[None, :, :], axis=2), axis=1)


def _to_segments(points, segments):
    if not len(segments):
        return np.full(len(points), np.inf)
    a, b = segments[:, :2], segments[:, 2:]
    ab = b - a
    t = np.einsum("pkj,kj->pk", points[:, None, :] - a[None], ab) / np.maximum((ab * ab).sum(1), 1e-300)
    closest = a[None] + np.clip(t, 0.0, 1.0)[..., None] * ab[None]
    return np.min(np.linalg.norm(points[:, None, :] - closest, axis=2), axis=1)
