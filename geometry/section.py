"""The parametric (r, z) section as plain data, and its sanity checks.

A section is a set of polygons (regions) in the (r, z) half-plane, each a part
of one body (the steel of a plate, or the lining bonded to it).  Regions of one
body share points, so they are meshed conformingly (bonded); regions of
different bodies never share a point, so the bodies can separate.  Friction
faces are pairs of edges at the same place on two bodies.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import CaseError


class GeometryError(CaseError):
    """The parameters give an impossible section; one message per problem (invalid input, exit 2)."""


@dataclass
class Region:
    name: str                     # 2-D physical group, e.g. "cone", "cone_lining"
    body: str
    youngs_modulus: float         # MPa
    poissons_ratio: float
    loop: list[int]               # point indices, counter-clockwise
    edge_names: list[str | None]  # edge i runs loop[i] -> loop[i+1]
    lining_layers: int = 0        # > 0: structured lining; edge 0 is the friction face, edge 2 the bond
    keys: tuple[str, ...] = ()    # case keys that shape this region (for error messages)


@dataclass
class Body:
    name: str
    role: str                     # "supported", "pressed" (carries W) or "floating"
    label: str                    # plain words for pictures and reports


@dataclass
class FrictionInterface:
    name: str                     # "s1", "s2", …
    face_a: str                   # edge name on body_a (the one whose outward normal is normal_a)
    face_b: str
    body_a: str
    body_b: str
    normal_a: tuple[float, float]
    lining_body: str
    start: tuple[float, float]    # (r, z) at the inner radius r1
    end: tuple[float, float]      # (r, z) at the outer radius r2
    gap_start: float = 0.0        # initial normal gap (mm) at r1 and r2, linear in between
    gap_end: float = 0.0
    # False: face B is meshed with its own node count (node spacing face_b_spacing × face A's), so
    # the nodes of the two faces do not coincide and the FE stage pairs them by projection
    # (fem/projection.py); True: the same nodes on both faces, paired node to node
    matching_nodes: bool = True
    face_b_spacing: float = 1.4   # > 1: face B coarser, face A (the side that carries the results) finer

    @property
    def slant_length(self) -> float:
        return math.dist(self.start, self.end)

    def initial_gap(self, points_rz) -> np.ndarray:
        """Initial normal gap (mm) at (k, 2) points (r, z) on this face: linear from
        ``gap_start`` at r1 to ``gap_end`` at r2 (the one place the gap is defined)."""
        xy = np.asarray(points_rz, float).reshape(-1, 2)
        along = np.linalg.norm(xy - np.asarray(self.start, float), axis=1) / self.slant_length
        # round-off must not put a node a hair past r2 (a negative gap) or before r1
        along = np.clip(along, 0.0, 1.0)
        return self.gap_start + (self.gap_end - self.gap_start) * along


@dataclass
class Section:
    kind: str
    points: list[tuple[float, float]]
    regions: list[Region]
    bodies: list[Body]
    interfaces: list[FrictionInterface]
    load_face: str                # face of the pressed body that receives W
    axial_force: float            # N, along -z (the pressed body moves towards the supported one)
    ring_radius: float | None     # ring load radius (mm), None for a uniform load
    support_axial_face: str
    support_radial_face: str
    semi_cone_angle: float        # degrees
    refine_points: list[int] = field(default_factory=list)   # lining ends
    face_size: float = 1.0        # mm along the friction faces (mid-face)
    edge_size: float = 0.25       # mm at the lining ends
    body_size: float = 4.0        # mm, largest in the bodies
    refinement: float = 1.0       # thin parts get about 2 × refinement elements through their thickness
    element_order: int = 2
    lining_end_shape: str = "normal_to_axis"   # lining.end_shape, for the section picture

    def region_area_and_moment(self, region: Region) -> tuple[float, float]:
        """Exact area (mm²) and first moment about the axis ∫ r dA (mm³) of a polygon region."""
        pts = np.array([self.points[i] for i in region.loop])
        r, z = pts[:, 0], pts[:, 1]
        rn, zn = np.roll(r, -1), np.roll(z, -1)
        cross = r * zn - rn * z
        area = 0.5 * cross.sum()
        moment = (cross * (r + rn)).sum() / 6.0
        return float(area), float(moment)

    def body_volume(self, body: str) -> float:
        """Volume of revolution (mm³) of a body, by Pappus: V = 2π ∫ r dA."""
        return 2.0 * math.pi * sum(self.region_area_and_moment(reg)[1]
                                   for reg in self.regions if reg.body == body)

    def face_names(self) -> set[str]:
        return {n for reg in self.regions for n in reg.edge_names if n}


def check_section(section: Section) -> None:
    """Raise GeometryError if a region crosses itself or regions overlap."""
    problems = []
    polys = [np.array([section.points[i] for i in reg.loop]) for reg in section.regions]
    for reg, poly in zip(section.regions, polys):
        area, _ = section.region_area_and_moment(reg)
        if area <= 0.0 or _self_intersects(poly):
            problems.append(f"the {reg.name.replace('_', ' ')} section crosses itself or is empty; "
                            f"check {', '.join(reg.keys) or 'its dimensions'}")
        if poly[:, 0].min() < 0.0:
            problems.append(f"the {reg.name.replace('_', ' ')} section reaches past the axis (r < 0); "
                            f"check {', '.join(reg.keys) or 'its dimensions'}")
    # two regions whose boxes do not overlap cannot overlap: in a pack of 40 faces most pairs are
    # plates far apart along the axis, so the box test spares the quadratic edge-by-edge check
    lows, highs = np.array([p.min(axis=0) for p in polys]), np.array([p.max(axis=0) for p in polys])
    for i in range(len(polys)):
        for j in range(i + 1, len(polys)):
            if (lows[i] >= highs[j]).any() or (lows[j] >= highs[i]).any():
                continue
            hit = _overlap_point(polys[i], polys[j])
            if hit is not None:
                a, b = section.regions[i], section.regions[j]
                keys = sorted(set(a.keys) | set(b.keys))
                problems.append(f"bodies overlap: {a.name.replace('_', ' ')} and {b.name.replace('_', ' ')} "
                                f"near (r, z) = ({hit[0]:.2f}, {hit[1]:.2f}) mm; check {', '.join(keys)}")
    if problems:
        raise GeometryError(problems)


def _segments(poly):
    return [(poly[k], poly[(k + 1) % len(poly)]) for k in range(len(poly))]


def _cross(o, a, b):
    return (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])


def _proper_cross(p1, p2, q1, q2, eps):
    d1, d2 = _cross(q1, q2, p1), _cross(q1, q2, p2)
    d3, d4 = _cross(p1, p2, q1), _cross(p1, p2, q2)
    return (d1 > eps and d2 < -eps or d1 < -eps and d2 > eps) and \
        (d3 > eps and d4 < -eps or d3 < -eps and d4 > eps)


def _scale(*polys):
    return max(float(np.ptp(np.vstack(polys), axis=0).max()), 1e-12)


def _self_intersects(poly) -> bool:
    eps = 1e-12 * _scale(poly) ** 2
    segs = _segments(poly)
    n = len(segs)
    for i in range(n):
        for j in range(i + 2, n):
            if i == 0 and j == n - 1:
                continue
            if _proper_cross(*segs[i], *segs[j], eps):
                return True
    return False


def _inside(point, poly, tol) -> bool:
    """Strictly inside (farther than tol from the boundary)."""
    r, z = point
    inside = False
    for (r0, z0), (r1, z1) in _segments(poly):
        if (z0 > z) != (z1 > z):
            if r < r0 + (z - z0) * (r1 - r0) / (z1 - z0):
                inside = not inside
        seg = np.array([r1 - r0, z1 - z0])
        t = np.clip(np.dot([r - r0, z - z0], seg) / max(np.dot(seg, seg), 1e-300), 0.0, 1.0)
        if math.dist((r, z), (r0 + t * seg[0], z0 + t * seg[1])) <= tol:
            return False
    return inside


def _overlap_point(pa, pb):
    """A point where the interiors of two simple polygons overlap, or None (touching is fine)."""
    scale = _scale(pa, pb)
    eps, tol = 1e-12 * scale ** 2, 1e-9 * scale
    for p1, p2 in _segments(pa):
        for q1, q2 in _segments(pb):
            if _proper_cross(p1, p2, q1, q2, eps):
                return tuple((p1 + p2) / 2)
    for poly, other in ((pa, pb), (pb, pa)):
        # a point just inside each edge's midpoint too: two regions drawn on top of each other share
        # every corner and edge midpoint, and only a point off the boundary tells them apart
        turn = 1.0 if _signed_area(poly) > 0 else -1.0
        for p1, p2 in _segments(poly):
            edge = p2 - p1
            inward = turn * np.array([-edge[1], edge[0]]) / max(float(np.hypot(*edge)), 1e-300)
            for probe in (p1, 0.5 * (p1 + p2), 0.5 * (p1 + p2) + 1e-6 * scale * inward):
                if _inside(probe, other, tol):
                    return tuple(probe)
    return None


def _signed_area(poly) -> float:
    r, z = poly[:, 0], poly[:, 1]
    return 0.5 * float((r * np.roll(z, -1) - np.roll(r, -1) * z).sum())
