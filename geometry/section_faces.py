"""Named faces of a section read from a file: which outline edges a :class:`Select` means, and what
was found where when it means none, or more than one curve.

A face layer's (or DXF group's) curves name the outline edges that lie on them (both ends and the
middle within tolerance + 2 × chord tolerance, so an arc drawn over a fillet names the fillet's
chords); a CAD curve name or number names that curve's own edges; a box the edges wholly inside
it; a point the one curve nearest to it.  Only boundary edges of the bodies can be named (an edge
two regions of one body share is inside the body).
"""
from __future__ import annotations

from collections import Counter

import numpy as np

from ._outline import Drawing, fmt, point_segment_distance, polyline_distance
from .section import GeometryError
from .section_spec import FaceSpec, FrictionSpec, Select, SectionFileSpec


class Faces:
    def __init__(self, spec: SectionFileSpec, drawing: Drawing, points: np.ndarray, works: list):
        self.spec, self.drawing, self.points, self.works = spec, drawing, points, works
        self.names: dict[tuple[int, int, int], str] = {}      # (region, a, b) in loop direction -> face name
        self.problems: list[str] = []
        self.tol = spec.tolerance

    def raise_problems(self) -> None:
        if self.problems:
            raise GeometryError(self.problems)

    # --- selecting edges ----------------------------------------------------------------------

    def boundary_edges(self) -> list[tuple[int, int]]:
        count = Counter(frozenset(e) for w in self.works for e in w.edges())
        return [(i, k) for i, w in enumerate(self.works) for k, e in enumerate(w.edges()) if count[frozenset(e)] == 1]

    def _ends(self, edge) -> tuple[np.ndarray, np.ndarray]:
        i, k = edge
        loop = self.works[i].loop
        return self.points[loop[k]], self.points[loop[(k + 1) % len(loop)]]

    def _on_curves(self, edges, curves) -> list:
        near = self.tol + 2.0 * self.spec.chord_tolerance
        out = []
        for edge in edges:
            p, q = self._ends(edge)
            probe = np.vstack([p, q, 0.5 * (p + q)])
            if any(polyline_distance(probe, c.points).max() <= near for c in curves):
                out.append(edge)
        return out

    def _why_not(self, curves, edges, bodies) -> str:
        """Why curves that exist name no edge of the allowed bodies: they lie on another body, or how
        far the nearest allowed edge is."""
        others = self._on_curves([e for e in self.boundary_edges() if self.works[e[0]].body not in bodies], curves)
        found = "; ".join(f"{c.where} from {fmt(c.points[0])} to {fmt(c.points[-1])} mm" for c in curves[:3])
        if others:
            on = sorted({self.works[i].body for i, _ in others})
            return f"its curves ({found}) lie on body {', '.join(on)}, not on {', '.join(sorted(bodies))}"
        if not edges:
            return f"its curves ({found}) lie on no edge"
        best, where = np.inf, None
        for edge in edges:
            p, q = self._ends(edge)
            for c in curves:
                d = point_segment_distance(c.points, p, q)[0].min()
                if d < best:
                    best, where = float(d), 0.5 * (p + q)
        return (f"its curves ({found}) lie on no edge of body {', '.join(sorted(bodies))}; the nearest edge is "
                f"{best:.4g} mm away, near (r, z) = {fmt(where)} mm")

    def select(self, sel: Select, bodies: set[str]) -> tuple[list[tuple[int, int]], str]:
        """The boundary edges of ``bodies`` that ``sel`` means, or [] and what was found instead."""
        if sel.body is not None:
            bodies = bodies & {sel.body}
        edges = [e for e in self.boundary_edges() if self.works[e[0]].body in bodies]
        drawing = self.drawing
        if sel.layer is not None:
            curves = [m for m in drawing.markers if m.layer.casefold() == sel.layer.casefold()]
            if not curves:
                if any(r.layer and r.layer.casefold() == sel.layer.casefold() for r in self.spec.regions):
                    return [], ("that layer holds a region's outline; a face layer holds curves drawn over the "
                                "outline edges it names")
                return [], (f"no curve on that layer (layers with curves: "
                            f"{', '.join(map(repr, drawing.layers)) or 'none'})")
            hit = self._on_curves(edges, curves)
            return hit, "" if hit else self._why_not(curves, edges, bodies)
        if sel.name is not None or sel.index is not None:
            if sel.name is not None:
                ids = {k for k, p in enumerate(drawing.pieces)
                       if any(sel.name == n or sel.name in n.split("/") for n in p.names)}
                curves = [m for m in drawing.markers if sel.name in m.names]
            else:
                ids = {k for k, p in enumerate(drawing.pieces) if p.index == sel.index}
                curves = []
            if not ids and not curves:
                named = sorted({n for p in [*drawing.pieces, *drawing.markers] for n in p.names})
                what = "no curve of that name" if sel.name is not None else "no curve of that number"
                return [], f"{what} in the file" + (f" (names: {', '.join(map(repr, named))})" if named else "")
            hit = [e for e in edges if self.works[e[0]].piece[e[1]] in ids] + self._on_curves(edges, curves)
            if hit:
                return sorted(set(hit)), ""
            pieces = [drawing.pieces[k] for k in sorted(ids)]
            return [], self._why_not(pieces + curves, edges, bodies)
        if sel.box is not None:
            r0, z0, r1, z1 = sel.box
            t = self.tol
            hit = [e for e in edges if all(r0 - t <= p[0] <= r1 + t and z0 - t <= p[1] <= z1 + t
                                           for p in self._ends(e))]
            return hit, "" if hit else f"no edge of body {', '.join(sorted(bodies))} lies wholly inside the box"
        return self._through(sel.through, edges, bodies)

    def _through(self, point, edges, bodies):
        by_piece: dict[int, list] = {}
        for e in edges:
            by_piece.setdefault(self.works[e[0]].piece[e[1]], []).append(e)
        ranked = []
        for piece, members in by_piece.items():
            d = min(float(point_segment_distance(np.asarray(point), *self._ends(e))[0][0, 0]) for e in members)
            ranked.append((d, piece))
        ranked.sort()
        if not ranked or ranked[0][0] > self.spec.pick_distance:
            nearest = f"; the nearest is {ranked[0][0]:.4g} mm away" if ranked else ""
            return [], (f"no curve of body {', '.join(sorted(bodies))} passes within the pick distance "
                        f"{self.spec.pick_distance:g} mm{nearest}")
        if len(ranked) > 1 and ranked[1][0] <= ranked[0][0] + self.tol:
            a, b = (self.drawing.pieces[p].where for _, p in ranked[:2])
            return [], (f"found twice: {a} and {b} both pass {ranked[0][0]:.4g} mm from it (a corner?); pick a "
                        f"point inside one curve" + ("" if len(bodies) == 1 else ", or give body"))
        return by_piece[ranked[0][1]], ""

    # --- chains of edges ----------------------------------------------------------------------

    def chains(self, edges) -> list[list[tuple[int, int]]]:
        """Connected groups of edges (through shared points)."""
        parent: dict[int, int] = {}

        def root(p):
            while parent.setdefault(p, p) != p:
                p = parent[p]
            return p

        ends = {}
        for e in edges:
            i, k = e
            loop = self.works[i].loop
            a, b = loop[k], loop[(k + 1) % len(loop)]
            ends[e] = (a, b)
            parent[root(a)] = root(b)
        groups: dict[int, list] = {}
        for e in edges:
            groups.setdefault(root(ends[e][0]), []).append(e)
        return list(groups.values())

    def _describe_chain(self, chain) -> str:
        pts = np.vstack([np.vstack(self._ends(e)) for e in chain])
        regions = sorted({self.works[i].spec.name for i, _ in chain})
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        return f"r {lo[0]:.4g} … {hi[0]:.4g}, z {lo[1]:.4g} … {hi[1]:.4g} mm on region {', '.join(map(repr, regions))}"

    def _name(self, edge, name) -> None:
        i, k = edge
        loop = self.works[i].loop
        key = (i, loop[k], loop[(k + 1) % len(loop)])
        old = self.names.get(key)
        if old is not None and old != name:
            p, q = self._ends(edge)
            self.problems.append(f"section faces {old!r} and {name!r}: both name the edge {fmt(p)}–{fmt(q)} mm of "
                                 f"region {self.works[i].spec.name!r}; an edge has one name")
        self.names[key] = name

    # --- the faces ----------------------------------------------------------------------------

    def friction_side(self, fr: FrictionSpec, sel: Select, body: str, name: str):
        """The one straight edge ``sel`` means on ``body``, its interior corners removed: (region, a, b)."""
        head = f"section friction face {fr.name!r} on {body} ({sel.describe()})"
        edges, note = self.select(sel, {body})
        if not edges:
            self.problems.append(f"{head}: not found: {note}")
            return None
        groups = self.chains(edges)
        if len(groups) > 1:
            where = "; ".join(self._describe_chain(g) for g in groups)
            self.problems.append(f"{head}: found {len(groups)} times ({where}); a friction face is one curve")
            return None
        regions = sorted({i for i, _ in edges})
        if len(regions) > 1:
            self.problems.append(f"{head}: made of edges of {len(regions)} regions "
                                 f"({', '.join(repr(self.works[i].spec.name) for i in regions)}); a friction face is "
                                 f"one edge of one region")
            return None
        i = regions[0]
        work = self.works[i]
        n = len(work.loop)
        chosen = {k for _, k in edges}
        start = next(k for k in chosen if (k - 1) % n not in chosen) if len(chosen) < n else 0
        work.loop = work.loop[start:] + work.loop[:start]
        work.piece = work.piece[start:] + work.piece[:start]
        m = len(chosen)
        run = work.loop[:m + 1]
        p0, p1 = self.points[run[0]], self.points[run[-1]]
        d = p1 - p0
        normal = np.array([-d[1], d[0]]) / np.linalg.norm(d)
        bend = np.abs((self.points[run] - p0) @ normal)
        if bend.max() > self.tol:
            k = int(np.argmax(bend))
            self.problems.append(f"{head}: not straight: it runs {bend[k]:.4g} mm off the line through its ends at "
                                 f"(r, z) = {fmt(self.points[run[k]])} mm; a friction face is one straight line (a "
                                 f"cone or a plane) in this version")
            return None
        for p in run[1:-1]:
            other = [w.spec.name for w in self.works if w is not work and p in w.loop]
            if other:
                self.problems.append(f"{head}: a corner of region {other[0]!r} at (r, z) = {fmt(self.points[p])} mm "
                                     f"lies on it; a friction face is one edge, so no other region may meet it "
                                     f"between its ends")
                return None
        work.loop = [run[0]] + work.loop[m:]
        work.piece = [work.piece[0]] + work.piece[m:]
        self._name((i, 0), name)
        return i, run[0], run[-1]

    def name_face(self, face: FaceSpec, role: str | None) -> None:
        sel = face.select
        if role is not None:
            body = next(b.name for b in self.spec.bodies if b.role == role)
            label = {"pressed": "load face", "supported": "support face"}[role]
            if sel.body is not None and sel.body != body:
                self.problems.append(f"section {label} {face.name!r}: body = {sel.body!r}, but it belongs on the "
                                     f"{role} body {body!r}")
                return
            bodies = {body}
        else:
            label, bodies = "face", {b.name for b in self.spec.bodies}
        head = f"section {label} {face.name!r} ({sel.describe()})"
        edges, note = self.select(sel, bodies)
        if not edges:
            self.problems.append(f"{head}: not found: {note}")
            return
        groups = self.chains(edges)
        if role is not None and len(groups) > 1:
            where = "; ".join(self._describe_chain(g) for g in groups)
            self.problems.append(f"{head}: found {len(groups)} times ({where}); a {label} is one connected curve")
            return
        for e in edges:
            self._name(e, face.name)

    def split_at_radius(self, name: str, radius: float) -> None:
        """Put a corner on the named face at r = radius (a ring load needs a vertex there)."""
        keys = [k for k, v in self.names.items() if v == name]
        corners, inner = set(), []
        for key in keys:
            _, a, b = key
            ra, rb = self.points[a][0], self.points[b][0]
            on = {p for p in (a, b) if abs(self.points[p][0] - radius) <= self.tol}
            corners |= on
            if not on and (ra - radius) * (rb - radius) < 0.0:
                inner.append(key)
        if not corners and not inner:
            span = [self.points[p][0] for k in keys for p in k[1:]]
            self.problems.append(f"load.ring_radius = {radius:g}: the ring radius {radius:g} mm is not on the section "
                                 f"load face {name!r} (it spans r = {min(span):.4g} … {max(span):.4g} mm); allowed: a "
                                 "radius on that face")
            return
        if len(corners) + len(inner) > 1:
            self.problems.append(f"section load face {name!r}: crosses r = {radius:g} mm at "
                                 f"{len(corners) + len(inner)} places; a ring load needs one")
            return
        for p in corners:
            self.points[p][0] = radius                 # within the tolerance: exactly on the ring
        if inner:
            i, a, b = inner[0]
            pa, pb = self.points[a], self.points[b]
            t = (radius - pa[0]) / (pb[0] - pa[0])
            new = len(self.points)
            self.points = np.vstack([self.points, [radius, pa[1] + t * (pb[1] - pa[1])]])
            work = self.works[i]
            k = next(k for k, e in enumerate(work.edges()) if e == (a, b))
            work.loop.insert(k + 1, new)
            work.piece.insert(k + 1, work.piece[k])
            del self.names[inner[0]]
            self.names[(i, a, new)] = self.names[(i, new, b)] = name

    def make_lining(self, work) -> list[int]:
        """Check a lining region (four corners, one friction face) and make its friction face edge 0;
        returns the bond's two ends (the mesher refines there)."""
        i = self.works.index(work)
        friction = {n for fr in self.spec.friction for n in fr.face_names}
        head = f"section region {work.spec.name!r} ({work.where}), a lining,"
        # corners where the outline runs straight on and no other region meets are not corners
        keep = []
        n = len(work.loop)
        for k, p in enumerate(work.loop):
            prev, nxt = self.points[work.loop[k - 1]], self.points[work.loop[(k + 1) % n]]
            d = nxt - prev
            off = abs(float(np.dot(self.points[p] - prev, [-d[1], d[0]]))) / max(float(np.linalg.norm(d)), 1e-300)
            shared = any(p in w.loop for w in self.works if w is not work)
            named = {self.names.get((i, work.loop[k - 1], p)), self.names.get((i, p, work.loop[(k + 1) % n]))}
            if off > self.tol or shared or len(named) > 1:
                keep.append(k)
        old_names = {p: self.names.get((i, p, work.loop[(k + 1) % n])) for k, p in enumerate(work.loop)}
        work.loop = [work.loop[k] for k in keep]
        work.piece = [work.piece[k] for k in keep]
        for a, b in work.edges():                     # a merged edge keeps the name its parts had
            if old_names[a] is not None:
                self.names[(i, a, b)] = old_names[a]
        faces = [k for k, e in enumerate(work.edges()) if self.names.get((i, *e)) in friction]
        if len(work.loop) != 4:
            corners = ", ".join(fmt(self.points[p]) for p in work.loop)
            self.problems.append(f"{head} has {len(work.loop)} corners ({corners}); a lining is a four-sided strip "
                                 f"(friction face, end, bond, end), meshed with lining_layers elements through it")
            return []
        if len(faces) != 1:
            self.problems.append(f"{head} carries {len(faces)} friction faces; a lining carries exactly one")
            return []
        k = faces[0]
        work.loop = work.loop[k:] + work.loop[:k]
        work.piece = work.piece[k:] + work.piece[:k]
        return [work.loop[2], work.loop[3]]
