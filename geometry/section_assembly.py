"""From a read drawing and its spec to the :class:`Section` plain data the parametric builders make.

Order: outlines to regions (checked: closed, simple, r >= 0, plausible size); points of one body
merged within the tolerance and every point of a body that lies on another region's edge put into
that edge (so regions of one body meet conformingly and are bonded); then the named faces
(friction faces first: each must be one straight edge per side, coinciding with its mate within
the tolerance, the mate's ends then set exactly onto the face's); the ring-load point; the linings
(four corners, the friction face made edge 0); the interfaces; and :func:`check_section`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._outline import Drawing, fmt, inside, point_segment_distance, polyline_distance, self_crossing, signed_area
from .section import Body, FrictionInterface, GeometryError, Region, Section, check_section
from .section_faces import Faces
from .section_spec import FrictionSpec, RegionSpec, SectionFileSpec

# the outermost radius of a clutch section: the case's radius ranges (clutchfe/schema.py, common practice)
SMALLEST_RADIUS_MM, LARGEST_SIZE_MM = 2.0, 3000.0


@dataclass
class Work:
    """A region while it is assembled: its loop of global point indices and, per edge, its piece."""

    spec: RegionSpec
    loop: list[int]
    piece: list[int]
    where: str

    @property
    def body(self) -> str:
        return self.spec.body

    def edges(self):
        n = len(self.loop)
        return [(self.loop[k], self.loop[(k + 1) % n]) for k in range(n)]


def assemble(spec: SectionFileSpec, drawing: Drawing, axial_force: float, ring_radius: float | None) -> Section:
    chosen = _map_regions(spec, drawing)
    outlines = _checked_outlines(spec, drawing, chosen)
    points, works = _merge_bodies(spec, outlines)
    faces = Faces(spec, drawing, points, works)
    interfaces = [_interface(spec, faces, fr) for fr in spec.friction]
    faces.raise_problems()
    faces.name_face(spec.load, role="pressed")
    faces.name_face(spec.support_axial, role="supported")
    faces.name_face(spec.support_radial, role="supported")
    for face in spec.faces:
        faces.name_face(face, role=None)
    faces.raise_problems()
    if ring_radius is not None:
        faces.split_at_radius(spec.load.name, ring_radius)
    refine = [p for itf in interfaces for p in itf.pop("ends")]
    for work in works:
        if work.spec.lining_layers:
            refine += faces.make_lining(work)
    faces.raise_problems()
    for itf in interfaces:
        itf["lining_body"] = _lining_body(spec, faces, itf)
    angles = [itf.pop("angle") for itf in interfaces]
    for itf, angle in zip(interfaces[1:], angles[1:]):
        if abs(angle - angles[0]) > 1e-6:
            faces.problems.append(f"section friction face {itf['name']!r}: semi-cone angle {angle:.6g}°, but "
                                  f"{interfaces[0]['name']!r} has {angles[0]:.6g}°; the friction faces of one "
                                  f"section share one angle in this version (the hand methods use one)")
    faces.raise_problems()
    used = sorted({p for w in works for p in w.loop})
    index = {p: k for k, p in enumerate(used)}
    regions = [Region(name=w.spec.name, body=w.body, youngs_modulus=w.spec.youngs_modulus,
                      poissons_ratio=w.spec.poissons_ratio, loop=[index[p] for p in w.loop],
                      edge_names=[faces.names.get((i, a, b)) for a, b in w.edges()],
                      lining_layers=w.spec.lining_layers, keys=(w.where,)) for i, w in enumerate(works)]
    section = Section(
        kind="file", points=[tuple(map(float, faces.points[p])) for p in used], regions=regions,
        bodies=[Body(b.name, b.role, b.label or b.name.replace("_", " ")) for b in spec.bodies],
        interfaces=[FrictionInterface(**itf) for itf in interfaces], load_face=spec.load.name,
        axial_force=float(axial_force), ring_radius=ring_radius, support_axial_face=spec.support_axial.name,
        support_radial_face=spec.support_radial.name, semi_cone_angle=angles[0] if angles else 90.0,
        refine_points=sorted({index[p] for p in refine}), lining_end_shape=_lining_end_shape(faces, works))
    check_section(section)
    return section


# --- outlines to regions ----------------------------------------------------------------------


def extent(poly) -> str:
    lo, hi = poly.min(axis=0), poly.max(axis=0)
    return f"r {lo[0]:.4g} … {hi[0]:.4g}, z {lo[1]:.4g} … {hi[1]:.4g} mm"


def _label_matches(label: str, names) -> bool:
    return any(label == n or label in n.split("/") for n in names)


def _map_regions(spec: SectionFileSpec, drawing: Drawing) -> list[tuple[RegionSpec, int]]:
    problems, chosen, claimed = [], [], {}
    outlines = drawing.outlines
    for rs in spec.regions:
        if drawing.kind == "dxf":
            candidates = [k for k, o in enumerate(outlines) if o.layer.casefold() == rs.layer.casefold()]
            how = f"layer {rs.layer!r}"
        else:
            candidates = list(range(len(outlines)))
            how = "the faces"
            if rs.label is not None:
                candidates = [k for k in candidates if _label_matches(rs.label, outlines[k].names)]
                how = f"the faces named {rs.label!r}"
            if rs.index is not None:
                candidates = [k for k in candidates if outlines[k].index == rs.index]
                how = f"face {rs.index}" if rs.label is None else how + f" numbered {rs.index}"
        before = candidates
        if rs.inside is not None:
            candidates = [k for k in candidates if inside(rs.inside, outlines[k].points)]
        where = f"section region {rs.name!r}: {how} of {drawing.source}"
        if not candidates:
            if before and rs.inside is not None:
                found = "; ".join(extent(outlines[k].points) for k in before)
                problems.append(f"{where}: no outline there lies around (r, z) = {fmt(rs.inside)} mm (found: {found})")
            elif drawing.kind == "dxf" and rs.layer.casefold() not in {n.casefold() for n in drawing.layers}:
                problems.append(f"{where}: no curve on that layer (layers with curves: "
                                f"{', '.join(map(repr, drawing.layers)) or 'none'})")
            else:
                names = "; ".join(f"face {o.index} {o.names[0] if o.names else '(no name)'}" for o in outlines)
                problems.append(f"{where}: no closed outline" + (f" (the file's faces: {names})"
                                                                 if drawing.kind == "cad" else ""))
        elif len(candidates) > 1:
            claimed.update({k: None for k in candidates if k not in claimed})     # said here, not again below
            found = "; ".join(extent(outlines[k].points) for k in candidates)
            problems.append(f"{where}: {len(candidates)} closed outlines ({found}); give inside = (r, z), a point "
                            f"in the one that is this region")
        else:
            k = candidates[0]
            if claimed.get(k) is not None:
                problems.append(f"{where}: the outline ({extent(outlines[k].points)}) is region {claimed[k]!r} "
                                f"already; two regions cannot be one outline")
            claimed[k] = rs.name
            chosen.append((rs, k))
    region_layers = {rs.layer.casefold() for rs in spec.regions if rs.layer}
    for k, o in enumerate(outlines):
        if k not in claimed and (drawing.kind == "cad" or o.layer.casefold() in region_layers):
            problems.append(f"section file {drawing.source}: the outline on {o.where} ({extent(o.points)}) is no "
                            f"region's; map it to a region (a layer or face of its own, or inside = (r, z))")
    if problems:
        raise GeometryError(problems)
    return chosen


def _dedupe(points: np.ndarray, pieces: list[int], tol: float) -> tuple[np.ndarray, list[int]]:
    """Drop vertices within tol of the one kept before them (edges shorter than the tolerance)."""
    keep_pts, keep_pieces = [points[0]], [pieces[0]]
    for k in range(1, len(points)):
        if np.linalg.norm(points[k] - keep_pts[-1]) <= tol:
            keep_pieces[-1] = pieces[k]
        else:
            keep_pts.append(points[k])
            keep_pieces.append(pieces[k])
    while len(keep_pts) > 1 and np.linalg.norm(keep_pts[-1] - keep_pts[0]) <= tol:
        keep_pts.pop()
        keep_pieces.pop()
    return np.array(keep_pts), keep_pieces


def _checked_outlines(spec, drawing, chosen):
    """The section's size against a clutch's (units) first, then each chosen outline deduplicated,
    checked (simple, encloses area, r >= 0) and made counter-clockwise."""
    tol, problems, out = spec.tolerance, [], []
    every = np.vstack([drawing.outlines[k].points for _, k in chosen])
    r_max, span = float(every[:, 0].max()), np.ptp(every, axis=0)
    if r_max < SMALLEST_RADIUS_MM or span.max() > LARGEST_SIZE_MM:
        hint = f"; the file says {drawing.file_units}" if drawing.file_units else ""
        raise GeometryError([f"section file {drawing.source}: with units = {spec.units!r} the section is "
                             f"{span[0]:.4g} × {span[1]:.4g} mm (r × z) with its outermost radius at {r_max:.4g} mm; "
                             f"a clutch section's outermost radius is {SMALLEST_RADIUS_MM:g}–{LARGEST_SIZE_MM:g} mm "
                             f"(the case's radius ranges, common practice): wrong units suspected{hint}"])
    for rs, k in chosen:
        o = drawing.outlines[k]
        pts, pieces = _dedupe(o.points, o.pieces, tol)
        where = f"section region {rs.name!r} ({o.where})"
        hit = self_crossing(pts, tol) if len(pts) >= 3 else None
        if hit is not None:
            point, i, j = hit
            problems.append(f"{where}: the outline crosses or touches itself at (r, z) = {fmt(point)} mm "
                            f"({drawing.pieces[pieces[i]].where} and {drawing.pieces[pieces[j]].where})")
        elif len(pts) < 3 or abs(signed_area(pts)) <= tol * np.linalg.norm(np.ptp(pts, axis=0)):
            problems.append(f"{where}: the outline encloses no area ({extent(o.points)})")
            continue
        low = int(np.argmin(pts[:, 0]))
        if pts[low, 0] < -tol:
            problems.append(f"{where}: the outline crosses the axis: it reaches r = {pts[low, 0]:.4g} mm at (r, z) = "
                            f"{fmt(pts[low])} mm; check the axis position (axis r = {spec.axis.r!r}, axis_at = "
                            f"{spec.axis.axis_at:g} drawing units) and which side of the axis the part is drawn on")
        if signed_area(pts) < 0.0:
            n = len(pts)
            pts, pieces = pts[::-1].copy(), [pieces[(n - 2 - i) % n] for i in range(n)]
        pts[:, 0] = np.maximum(pts[:, 0], 0.0)          # within the tolerance of the axis: on it
        out.append((rs, o, pts, pieces))
    if problems:
        raise GeometryError(problems)
    return out


def _merge_bodies(spec, outlines):
    """Global points (bodies never share one) and the regions' loops on them: points of one body within
    the tolerance merged, and each point of a body lying inside another region's edge put into it."""
    tol = spec.tolerance
    coords, works, problems = [], [], []
    for body in [b.name for b in spec.bodies]:
        mine = [(rs, o, pts, pieces) for rs, o, pts, pieces in outlines if rs.body == body]
        first = len(coords)
        loops = []
        for rs, o, pts, pieces in mine:
            loop = []
            for p in pts:
                near = [k for k in range(first, len(coords)) if abs(coords[k][0] - p[0]) <= tol
                        and abs(coords[k][1] - p[1]) <= tol and math.dist(coords[k], p) <= tol]
                if near:
                    loop.append(near[0])
                else:
                    coords.append((float(p[0]), float(p[1])))
                    loop.append(len(coords) - 1)
            loops.append(loop)
        body_points = np.array(coords[first:], float).reshape(-1, 2)
        for (rs, o, pts, pieces), loop in zip(mine, loops):
            kept = [k for k in range(len(loop)) if loop[k] != loop[(k + 1) % len(loop)]]   # merged onto one point
            loop, pieces = [loop[k] for k in kept], [pieces[k] for k in kept]
            new_loop, new_pieces = [], []
            n = len(loop)
            for k in range(n):
                a, b = loop[k], loop[(k + 1) % n]
                new_loop.append(a)
                new_pieces.append(pieces[k])
                pa, pb = np.array(coords[a]), np.array(coords[b])
                length = float(np.linalg.norm(pb - pa))
                dist, t = point_segment_distance(body_points, pa, pb)
                dist, t = dist[:, 0], t[:, 0]
                on = np.nonzero((dist <= tol) & (t * length > tol) & ((1 - t) * length > tol))[0]
                on = [first + int(i) for i in on[np.argsort(t[on])] if first + int(i) not in (a, b)]
                if on and rs.lining_layers:
                    problems.append(f"section region {rs.name!r} ({o.where}): a lining is a structured strip "
                                    f"meeting its carrier at its own corners, but the corner {fmt(coords[on[0]])} mm "
                                    f"of another region of body {body} lies inside its edge {fmt(pa)}–{fmt(pb)}")
                    continue
                new_loop += on
                new_pieces += [pieces[k]] * len(on)
            works.append(Work(rs, new_loop, new_pieces, o.where))
        problems += _conformity_problems(spec, coords, [w for w in works if w.body == body])
    if problems:
        raise GeometryError(problems)
    return np.array(coords, float), works


def _conformity_problems(spec, coords, works) -> list[str]:
    """Regions of one body must share their common boundary edge for edge, and touch each other."""
    out = []
    pts = np.asarray(coords, float)
    near = spec.tolerance + 2.0 * spec.chord_tolerance
    edge_sets = [{frozenset(e) for e in w.edges()} for w in works]
    for i, wa in enumerate(works):
        shares = False
        for j, wb in enumerate(works):
            if i == j:
                continue
            shared = edge_sets[i] & edge_sets[j]
            shares = shares or bool(shared)
            loop_b = pts[wb.loop + wb.loop[:1]]
            for a, b in wa.edges():
                if frozenset((a, b)) in shared:
                    continue
                mid = 0.5 * (pts[a] + pts[b])
                if polyline_distance(mid[None], loop_b)[0] <= near and \
                        polyline_distance(pts[[a, b]], loop_b).max() <= near and i < j:
                    out.append(f"section regions {wa.spec.name!r} and {wb.spec.name!r} of body {wa.body} meet along "
                               f"a curve drawn differently in each outline near (r, z) = {fmt(mid)} mm; draw the "
                               f"shared curve with the same corners (or arc) in both")
                    break
        if len(works) > 1 and not shares:
            out.append(f"section region {wa.spec.name!r} ({wa.where}) shares no edge with the other regions of body "
                       f"{wa.body}; regions of one body are bonded along common edges")
    return out


# --- friction interfaces ----------------------------------------------------------------------


def _interface(spec, faces: Faces, fr: FrictionSpec) -> dict:
    """The FrictionInterface fields of one pair (as a dict; lining_body is settled after the linings)."""
    name_a, name_b = fr.face_names
    side_a = faces.friction_side(fr, fr.select, fr.body_a, name_a)
    side_b = faces.friction_side(fr, fr.select_b or fr.select, fr.body_b, name_b)
    if side_a is None or side_b is None:
        return {}
    (ra, a0, a1), (rb, b0, b1) = side_a, side_b
    pts = faces.points
    tol = spec.tolerance
    pa0, pa1, pb0, pb1 = pts[a0], pts[a1], pts[b0], pts[b1]
    da, db = pa1 - pa0, pb1 - pb0
    na = np.array([da[1], -da[0]]) / np.linalg.norm(da)          # outward: the regions run counter-clockwise
    nb = np.array([db[1], -db[0]]) / np.linalg.norm(db)
    where_a = f"on {fr.body_a} ({faces.works[ra].where}) from {fmt(pa0)} to {fmt(pa1)} mm"
    where_b = f"on {fr.body_b} ({faces.works[rb].where}) from {fmt(pb0)} to {fmt(pb1)} mm"
    head = f"section friction face {fr.name!r}: the face {where_a} and its mate {where_b}"
    ends = max(np.linalg.norm(pb0 - pa1), np.linalg.norm(pb1 - pa0))
    if ends > tol:
        length = float(np.linalg.norm(da))
        offset = abs(float(np.dot(0.5 * (pb0 + pb1) - pa0, na)))
        along = sorted(float(np.dot(p - pa0, da) / length) for p in (pb0, pb1))
        overlap = min(along[1], length) - max(along[0], 0.0)
        angle = math.degrees(math.acos(np.clip(-float(np.dot(na, nb)), -1.0, 1.0)))
        if float(np.dot(na, nb)) > 0.0:
            faces.problems.append(f"{head} do not face each other: both face the same way (outward normals "
                                  f"{fmt(na)} and {fmt(nb)})")
        elif angle > 1.0 or offset > max(10 * tol, 0.01 * length) or overlap <= tol:
            why = (f"they are {angle:.3g}° out of parallel" if angle > 1.0 else
                   f"they lie {offset:.4g} mm apart" if offset > max(10 * tol, 0.01 * length) else
                   "they do not overlap along the face")
            faces.problems.append(f"{head} do not face each other: {why}")
        else:
            faces.problems.append(f"{head} do not coincide at zero load: their ends are "
                                  f"{np.linalg.norm(pb1 - pa0):.4g} and {np.linalg.norm(pb0 - pa1):.4g} mm apart "
                                  f"(tolerance {tol:g} mm). This version pairs friction faces node to node, so the "
                                  f"two curves must coincide: put a corner on each outline at the ends of the "
                                  f"contact; non-matching faces come later")
        return {}
    faces.points[b0], faces.points[b1] = pa1, pa0           # the mate's ends exactly onto the face's
    start, end = (pa0, pa1) if pa0[0] < pa1[0] else (pa1, pa0)
    if abs(da[0]) <= tol:
        faces.problems.append(f"section friction face {fr.name!r}: the face {where_a} is a cylinder (parallel to "
                              f"the axis); a friction face is a cone or a plane (0 < semi-cone angle <= 90°)")
        return {}
    return dict(name=fr.name, face_a=name_a, face_b=name_b, body_a=fr.body_a, body_b=fr.body_b,
                normal_a=(float(na[0]), float(na[1])), lining_body="", start=tuple(map(float, start)),
                end=tuple(map(float, end)), ends=[a0, a1, b0, b1], sides=(ra, rb),
                angle=math.degrees(math.atan2(abs(da[0]), abs(da[1]))))


def _lining_body(spec, faces: Faces, itf: dict) -> str:
    fr = next(f for f in spec.friction if f.name == itf["name"])
    ra, rb = itf.pop("sides")
    lined = [w.body for w in (faces.works[ra], faces.works[rb]) if w.spec.lining_layers]
    if fr.lining_body is not None:
        return fr.lining_body
    if len(lined) == 1:
        return lined[0]
    faces.problems.append(f"section friction face {fr.name!r}: {'both sides are' if lined else 'neither side is'} a "
                          f"lining region; say lining_body (the body whose face is the friction material)")
    return ""


def _lining_end_shape(faces: Faces, works) -> str:
    """lining.end_shape's word for the drawn linings' ends, for the section picture."""
    for w in works:
        if not w.spec.lining_layers:
            continue
        p = faces.points[w.loop]
        face = p[1] - p[0]
        end = p[2] - p[1]
        cos = abs(float(np.dot(face, end))) / (np.linalg.norm(face) * np.linalg.norm(end))
        if abs(end[1]) <= 1e-9 * np.linalg.norm(end):
            return "normal_to_axis"
        if cos <= 1e-6:
            return "normal_to_face"
        if abs(cos - math.sqrt(0.5)) <= 1e-6:
            return "chamfer"
    return "normal_to_axis"
