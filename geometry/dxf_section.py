"""Read a DXF drawing (model space) into a :class:`~geometry._outline.Drawing` with ezdxf.

The curves on a region's layer make its outlines: closed LWPOLYLINE/POLYLINE/CIRCLE/SPLINE/ELLIPSE
entities as they are, and LINE/ARC/open polylines chained end to end (ends closer than the
tolerance join).  Arcs (ARC, CIRCLE, polyline bulges) become equal chords within the chord
tolerance (:func:`~geometry._outline.arc_segments`); splines and ellipses are flattened by ezdxf
to the same tolerance.  Curves on every other layer are markers: a face layer or a DXF group names
the outline edges its curves lie on.  Blocks (INSERT) are not expanded.
"""
from __future__ import annotations

import math

import numpy as np

from ._outline import Drawing, Piece, Strand, bulge_points, chain, arc_points, outline_of
from .section import GeometryError
from .section_spec import SectionFileSpec

CURVES = ("LINE", "ARC", "CIRCLE", "LWPOLYLINE", "POLYLINE", "SPLINE", "ELLIPSE")
INSUNITS = {1: "inches", 2: "feet", 4: "millimetres", 5: "centimetres", 6: "metres", 14: "decimetres"}


def read_dxf(spec: SectionFileSpec) -> Drawing:
    import ezdxf      # here: ezdxf costs ~0.3 s CPU to import, which a parametric case never needs

    source = spec.path.name
    try:
        doc = ezdxf.readfile(str(spec.path))
    except (OSError, UnicodeError) as exc:
        raise GeometryError([f"section file {source}: cannot be read as DXF ({exc})"]) from None
    except ezdxf.DXFStructureError as exc:
        raise GeometryError([f"section file {source}: not a valid DXF file ({exc})"]) from None
    code = doc.header.get("$INSUNITS", 0)
    drawing = Drawing(source=source, kind="dxf",
                      file_units=f"$INSUNITS = {code} ({INSUNITS[code]})" if code in INSUNITS else "")
    groups: dict[str, list[str]] = {}
    for name, group in doc.groups:
        for entity in group:
            groups.setdefault(entity.dxf.handle, []).append(name)
    region_layers = {r.layer.casefold() for r in spec.regions if r.layer}
    chord = spec.chord_tolerance / spec.scale          # in drawing units
    flat_tol = spec.tolerance / spec.scale
    problems, strands, layers = [], {}, {}
    for entity in doc.modelspace():
        kind = entity.dxftype()
        layer = entity.dxf.layer
        on_region = layer.casefold() in region_layers
        what = f"{kind} #{entity.dxf.handle} on layer {layer!r}"
        if kind == "INSERT" and on_region:
            problems.append(f"{source}: {what} is a block reference; blocks are not read: explode it so that "
                            f"the outline's own curves are in model space")
            continue
        if kind not in CURVES:
            continue
        try:
            parts, closed = _curve_parts(entity, kind, chord)
        except ValueError as exc:
            problems.append(f"{source}: {what}: {exc}")
            continue
        layers.setdefault(layer.casefold(), layer)
        ids = []
        for k, wcs in enumerate(parts):
            if np.ptp(wcs[:, 2]) > flat_tol:
                problems.append(f"{source}: {what} is not drawn in the XY plane (its z runs "
                                f"{wcs[:, 2].min():.4g} … {wcs[:, 2].max():.4g}); draw the section in the XY plane")
                break
            label = what if len(parts) == 1 else f"segment {k + 1} of {what}"
            piece = Piece(points=spec.to_section(wcs), where=label, layer=layer,
                          names=tuple(groups.get(entity.dxf.handle, ())))
            if on_region:
                drawing.pieces.append(piece)
                ids.append(len(drawing.pieces) - 1)
            else:
                drawing.markers.append(piece)
        else:
            if on_region and ids:
                if closed:
                    drawing.outlines.append(outline_of(ids, [False] * len(ids), drawing.pieces,
                                                       f"layer {layer!r} of {source}", layer=layer))
                else:
                    strands.setdefault(layer.casefold(), []).append(Strand(ids, [False] * len(ids)))
    for key, found in strands.items():
        loops, chain_problems = chain(found, drawing.pieces, spec.tolerance, f"layer {layers[key]!r} of {source}")
        problems += chain_problems
        for loop in loops:
            drawing.outlines.append(outline_of([p for p, _ in loop], [f for _, f in loop], drawing.pieces,
                                               f"layer {layers[key]!r} of {source}", layer=layers[key]))
    if problems:
        raise GeometryError(problems)
    drawing.layers = tuple(layers.values())
    return drawing


def _curve_parts(entity, kind, chord) -> tuple[list[np.ndarray], bool]:
    """The entity as polylines in WCS drawing coordinates (k, 3): one per polyline segment, else one;
    and whether it closes on itself."""
    if kind == "LINE":
        return [np.array([entity.dxf.start, entity.dxf.end], float)], False
    if kind in ("ARC", "CIRCLE"):
        centre = entity.dxf.center
        radius = float(entity.dxf.radius)
        if kind == "CIRCLE":
            start, sweep = 0.0, 2.0 * math.pi
        else:
            start = math.radians(entity.dxf.start_angle)
            sweep = math.radians((entity.dxf.end_angle - entity.dxf.start_angle) % 360.0) or 2.0 * math.pi
        pts = arc_points((centre.x, centre.y), radius, start, sweep, chord)
        if kind == "CIRCLE":
            pts[-1] = pts[0]
        return [_ocs_to_wcs(entity, pts, centre.z)], kind == "CIRCLE"
    if kind == "LWPOLYLINE":
        vertices = [(float(x), float(y), float(b)) for x, y, b in entity.get_points("xyb")]
        return _polyline_parts(entity, vertices, bool(entity.closed), float(entity.dxf.elevation), chord)
    if kind == "POLYLINE":
        if entity.is_2d_polyline:
            vertices = [(v.dxf.location.x, v.dxf.location.y, float(v.dxf.bulge)) for v in entity.vertices]
            return _polyline_parts(entity, vertices, bool(entity.is_closed), float(entity.dxf.elevation.z), chord)
        if entity.is_3d_polyline:
            pts = np.array([tuple(v.dxf.location) for v in entity.vertices], float)
            if entity.is_closed:
                pts = np.vstack([pts, pts[:1]])
            return [pts[k:k + 2] for k in range(len(pts) - 1)], bool(entity.is_closed)
        raise ValueError("a polygon mesh or polyface is not an outline")
    # SPLINE, ELLIPSE: flattened by ezdxf to the chord tolerance (WCS)
    pts = np.array([tuple(v) for v in entity.flattening(chord)], float)
    if len(pts) < 2:
        raise ValueError("too short to be a curve")
    closed = bool(np.allclose(pts[0], pts[-1]))
    return [pts], closed


def _polyline_parts(entity, vertices, closed, elevation, chord):
    if len(vertices) < 2:
        raise ValueError("a polyline needs at least two vertices")
    if not closed and math.dist(vertices[0][:2], vertices[-1][:2]) == 0.0 and len(vertices) > 2:
        vertices, closed = vertices[:-1], True
    n = len(vertices)
    parts = []
    for k in range(n if closed else n - 1):
        x0, y0, bulge = vertices[k]
        x1, y1, _ = vertices[(k + 1) % n]
        if (x0, y0) == (x1, y1):
            continue                                  # a repeated vertex
        parts.append(_ocs_to_wcs(entity, bulge_points((x0, y0), (x1, y1), bulge, chord), elevation))
    if not parts:
        raise ValueError("all its vertices coincide")
    return parts, closed


def _ocs_to_wcs(entity, pts2: np.ndarray, elevation: float) -> np.ndarray:
    pts = np.column_stack([pts2, np.full(len(pts2), elevation)])
    extrusion = tuple(entity.dxf.get("extrusion", (0.0, 0.0, 1.0)))
    if np.allclose(extrusion, (0.0, 0.0, 1.0)):
        return pts
    ocs = entity.ocs()
    return np.array([tuple(v) for v in ocs.points_to_wcs(pts.tolist())], float)
