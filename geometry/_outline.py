"""Plane polygon numerics for section files: arcs to chords, curves chained into closed outlines,
crossings and distances.  Everything here is in section coordinates (r, z) in mm, numpy only.

A file is read into a :class:`Drawing`: its closed outlines (one per region, polygon vertices
with, per edge, the drawing curve it comes from) and its other curves (the markers a face
layer or a named group draws over the edges it names).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

MAX_ARC_CHORDS = 4096


@dataclass
class Piece:
    """One curve of the drawing (a LINE, an ARC, one segment of a polyline, a CAD curve) as a polyline."""

    points: np.ndarray            # (k, 2) r, z in mm along the curve, k >= 2
    where: str                    # e.g. "ARC #2F on layer 'CUP'", for messages
    layer: str = ""
    names: tuple[str, ...] = ()   # DXF group names / CAD entity and physical names
    index: int | None = None      # CAD curve tag


@dataclass
class Outline:
    """One closed outline as read: its vertices and, per edge, the piece it comes from."""

    points: np.ndarray            # (n, 2) mm, the first point not repeated at the end
    pieces: list[int]             # edge k (points[k] -> points[k+1]) lies on Drawing.pieces[pieces[k]]
    where: str                    # e.g. "layer 'CUP'" or "face 2 ('Shapes/cup')"
    layer: str = ""
    names: tuple[str, ...] = ()   # CAD face names
    index: int | None = None      # CAD face tag


@dataclass
class Drawing:
    source: str                   # the file's name, for messages
    kind: str                     # "dxf" or "cad"
    outlines: list[Outline] = field(default_factory=list)
    pieces: list[Piece] = field(default_factory=list)
    markers: list[Piece] = field(default_factory=list)    # curves that belong to no outline
    layers: tuple[str, ...] = ()                          # every layer that holds a curve (DXF)
    file_units: str = ""          # what the file says about its length unit, for the units message


def fmt(p) -> str:
    """(r, z) in mm as a message shows it."""
    return f"({p[0]:.4g}, {p[1]:.4g})"


# --- arcs -------------------------------------------------------------------------------------


def arc_segments(radius: float, sweep: float, chord_tolerance: float) -> int:
    """Chords for an arc of ``sweep`` radians: the fewest equal chords whose largest distance to the
    arc (the sagitta R (1 − cos(φ/2)) of a chord of angle φ) is within ``chord_tolerance``, and at
    least one chord per quarter turn; at most MAX_ARC_CHORDS (an arc of a drawing read in the wrong
    units would otherwise become millions of chords before the size check could say so)."""
    sweep = abs(sweep)
    if sweep == 0.0:
        return 1
    per = math.pi if chord_tolerance >= radius else 2.0 * math.acos(1.0 - chord_tolerance / radius)
    n = max(1, math.ceil(sweep / per - 1e-9), math.ceil(sweep / (0.5 * math.pi) - 1e-9))
    return min(n, MAX_ARC_CHORDS)


def arc_points(centre, radius: float, start: float, sweep: float, chord_tolerance: float) -> np.ndarray:
    """Polygon points on a circular arc from angle ``start`` through signed ``sweep`` (radians, > 0
    counter-clockwise), equal chords (:func:`arc_segments`), both ends included."""
    n = arc_segments(radius, sweep, chord_tolerance)
    angle = start + sweep * np.arange(n + 1) / n
    return np.column_stack([centre[0] + radius * np.cos(angle), centre[1] + radius * np.sin(angle)])


def bulge_points(p0, p1, bulge: float, chord_tolerance: float) -> np.ndarray:
    """The arc of a polyline segment p0 -> p1 with DXF bulge b = tan(θ/4) (θ the included angle,
    > 0 counter-clockwise), as polygon points with both ends exactly p0 and p1."""
    p0, p1 = np.asarray(p0, float), np.asarray(p1, float)
    if bulge == 0.0 or np.allclose(p0, p1):
        return np.vstack([p0, p1])
    chord = p1 - p0
    sweep = 4.0 * math.atan(bulge)
    # the centre sits (1 − b²)/(4b) chord lengths to the left of the chord's midpoint
    centre = 0.5 * (p0 + p1) + (1.0 - bulge * bulge) / (4.0 * bulge) * np.array([-chord[1], chord[0]])
    radius = float(np.linalg.norm(p0 - centre))
    start = math.atan2(p0[1] - centre[1], p0[0] - centre[0])
    pts = arc_points(centre, radius, start, sweep, chord_tolerance)
    pts[0], pts[-1] = p0, p1
    return pts


# --- distances and crossings ------------------------------------------------------------------


def point_segment_distance(points, a, b) -> tuple[np.ndarray, np.ndarray]:
    """Distances (m, k) from m points to k segments a -> b, and the parameter t ∈ [0, 1] of the foot."""
    p = np.asarray(points, float).reshape(-1, 1, 2)
    a = np.asarray(a, float).reshape(1, -1, 2)
    b = np.asarray(b, float).reshape(1, -1, 2)
    d = b - a
    length2 = np.maximum((d * d).sum(axis=2), 1e-300)
    t = np.clip(((p - a) * d).sum(axis=2) / length2, 0.0, 1.0)
    foot = a + t[..., None] * d
    return np.linalg.norm(p - foot, axis=2), t


def polyline_distance(points, polyline) -> np.ndarray:
    """Distance from each of the points to a polyline (k, 2)."""
    poly = np.asarray(polyline, float)
    dist, _ = point_segment_distance(points, poly[:-1], poly[1:])
    return dist.min(axis=1)


def signed_area(poly) -> float:
    r, z = poly[:, 0], poly[:, 1]
    return 0.5 * float((r * np.roll(z, -1) - np.roll(r, -1) * z).sum())


def inside(point, poly) -> bool:
    """Even-odd rule: is the point inside the closed polygon?"""
    r, z = point
    hit = False
    for (r0, z0), (r1, z1) in zip(poly, np.roll(poly, -1, axis=0)):
        if (z0 > z) != (z1 > z) and r < r0 + (z - z0) * (r1 - r0) / (z1 - z0):
            hit = not hit
    return hit


def self_crossing(poly, tol: float):
    """Where a closed polygon crosses or touches itself: (point, edge i, edge j) or None.

    Two edges that are not neighbours must keep farther apart than ``tol`` (a crossing, a vertex
    on another edge, or an edge doubling back all count)."""
    n = len(poly)
    a, b = poly, np.roll(poly, -1, axis=0)
    for i in range(n - 2):
        js = np.arange(i + 2, n if i > 0 else n - 1)
        if js.size == 0:
            continue
        p, q = a[i], b[i]
        c, d = a[js], b[js]
        # proper crossing: the ends of each segment lie strictly on both sides of the other
        d1 = _cross(c, d, p)
        d2 = _cross(c, d, q)
        d3 = _cross(p, q, c)
        d4 = _cross(p, q, d)
        proper = (d1 * d2 < 0) & (d3 * d4 < 0)
        if proper.any():
            j = int(js[np.argmax(proper)])
            t = d1[np.argmax(proper)] / (d1[np.argmax(proper)] - d2[np.argmax(proper)])
            return p + t * (q - p), i, j
        # touching: an end of one within tol of the other
        to_other, _ = point_segment_distance(np.vstack([p, q]), c, d)          # (2, m)
        to_this = np.column_stack([point_segment_distance(c, p[None], q[None])[0][:, 0],
                                   point_segment_distance(d, p[None], q[None])[0][:, 0]])   # (m, 2)
        close = (to_other.min(axis=0) <= tol) | (to_this.min(axis=1) <= tol)
        if close.any():
            k = int(np.argmax(close))
            if to_other[:, k].min() <= tol:
                where = (p, q)[int(np.argmin(to_other[:, k]))]
            else:
                where = (c[k], d[k])[int(np.argmin(to_this[k]))]
            return np.asarray(where, float), i, int(js[k])
    return None


def _cross(o, a, b):
    o, a, b = np.asarray(o, float), np.asarray(a, float), np.asarray(b, float)
    return (a[..., 0] - o[..., 0]) * (b[..., 1] - o[..., 1]) - (a[..., 1] - o[..., 1]) * (b[..., 0] - o[..., 0])


# --- chaining curves into closed outlines -----------------------------------------------------


@dataclass
class Strand:
    """Consecutive pieces (a LINE, an ARC, an open polyline's segments), open at both ends."""

    pieces: list[int]             # indices into the drawing's pieces, in order
    reversed_: list[bool]         # per piece: run it backwards


def strand_ends(strand: Strand, pieces: list[Piece]) -> tuple[np.ndarray, np.ndarray]:
    first, last = pieces[strand.pieces[0]], pieces[strand.pieces[-1]]
    start = first.points[-1] if strand.reversed_[0] else first.points[0]
    end = last.points[0] if strand.reversed_[-1] else last.points[-1]
    return start, end


def outline_of(piece_ids, flips, pieces: list[Piece], where: str, **attrs) -> Outline:
    """The closed outline that runs through the pieces in order (each reversed where flips says)."""
    pts, owner = [], []
    for k, flip in zip(piece_ids, flips):
        line = pieces[k].points[::-1] if flip else pieces[k].points
        pts.extend(line[:-1])
        owner.extend([k] * (len(line) - 1))
    return Outline(points=np.array(pts, float), pieces=owner, where=where, **attrs)


def chain(strands: list[Strand], pieces: list[Piece], tol: float, where: str):
    """Join open strands end to end into closed loops.

    Returns ``(loops, problems)``: each loop a list of (piece, reversed) in order; one problem per
    gap (an end that meets no other within ``tol``, with the nearest free end and the distance) and
    per branch (three or more ends at one point)."""
    ends = []                                  # (strand, 0 = start / 1 = end, point)
    for s, strand in enumerate(strands):
        start, end = strand_ends(strand, pieces)
        ends += [(s, 0, start), (s, 1, end)]
    problems = []
    if not ends:
        return [], problems
    pts = np.array([e[2] for e in ends])
    cluster = np.full(len(ends), -1)
    for k in range(len(ends)):
        if cluster[k] < 0:
            near = (np.linalg.norm(pts - pts[k], axis=1) <= tol) & (cluster < 0)
            cluster[near] = k
    members: dict[int, list[int]] = {}
    for k, c in enumerate(cluster):
        members.setdefault(int(c), []).append(k)
    for c, ks in members.items():
        if len(ks) > 2:
            what = ", ".join(pieces[strands[ends[k][0]].pieces[0 if ends[k][1] == 0 else -1]].where for k in ks)
            problems.append(f"{where}: {len(ks)} curves meet at (r, z) = {fmt(pts[c])} mm ({what}); an outline "
                            f"is one closed loop, two curves meeting at each corner (a stray curve, a curve drawn twice, "
                            f"or two outlines of one layer sharing a corner: draw those on separate layers, or as "
                            f"closed polylines)")
    free = [ks[0] for ks in members.values() if len(ks) == 1]
    reported = set()
    for k in free:
        if k in reported:
            continue
        others = [m for m in free if m != k and m not in reported]
        piece = pieces[strands[ends[k][0]].pieces[0 if ends[k][1] == 0 else -1]]
        if others:
            m = min(others, key=lambda m: float(np.linalg.norm(pts[m] - pts[k])))
            if ends[m][0] == ends[k][0] and len(strands[ends[k][0]].pieces) == 1:
                problems.append(f"{where}: {piece.where} from (r, z) = {fmt(pts[k])} to {fmt(pts[m])} mm meets no "
                                f"other curve at either end; an outline is one closed loop (delete the stray curve "
                                f"or move it to a layer of its own)")
                reported |= {k, m}
                continue
            mate = pieces[strands[ends[m][0]].pieces[0 if ends[m][1] == 0 else -1]]
            gap = float(np.linalg.norm(pts[m] - pts[k]))
            problems.append(f"{where}: the outline is not closed: a gap of {gap:.4g} mm between (r, z) = "
                            f"{fmt(pts[k])} mm (end of {piece.where}) and {fmt(pts[m])} mm (end of {mate.where}); "
                            f"ends closer than the tolerance {tol:g} mm are joined")
            reported |= {k, m}
        else:
            problems.append(f"{where}: the outline is not closed: the end of {piece.where} at (r, z) = "
                            f"{fmt(pts[k])} mm meets no other curve")
            reported.add(k)
    if problems:
        return [], problems
    # every cluster has exactly two ends: walk the loops
    partner = {}
    for ks in members.values():
        a, b = ks
        partner[a], partner[b] = b, a
    used = [False] * len(strands)
    loops = []
    for s0 in range(len(strands)):
        if used[s0]:
            continue
        loop, s, forward = [], s0, True
        while not used[s]:
            used[s] = True
            strand = strands[s]
            order = range(len(strand.pieces)) if forward else range(len(strand.pieces) - 1, -1, -1)
            loop += [(strand.pieces[i], strand.reversed_[i] != (not forward)) for i in order]
            out = 2 * s + (1 if forward else 0)          # the end we leave by
            nxt = partner[out]
            s, forward = nxt // 2, nxt % 2 == 0
        loops.append(loop)
    return loops, problems
