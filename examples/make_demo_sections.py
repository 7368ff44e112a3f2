"""Write the two demo section files (invented parts, plausible clutch dimensions) with ezdxf.

* ``cases/sections/cone_cup.dxf``: a cone clutch, axis along the drawing's y axis (r = x, z = y):
  an inner cone (LWPOLYLINE with fillet bulges) with a moulded lining (LWPOLYLINE), pushed into a
  cast-iron cup drawn from LINE and ARC entities, whose back web carries two stiffening ribs with
  root and tip fillets.  Face layers FRICTION, LOAD and SUPPORT_AXIAL hold lines drawn over the
  edges they name; the DXF group ``ribs`` holds the ribs' own curves.
* ``cases/sections/pressure_plate.dxf``: a single-disc dry clutch drawn with its axis horizontal
  (r = y, z = x): flywheel (POLYLINE with bulges), friction disc (a steel core from four LINEs and
  two linings) and a pressure plate (LWPOLYLINE) with a round-topped fulcrum ring and a cooling
  groove on its back; the face layer FULCRUM holds an arc over the ring's top.

Every outline is a list of corners (r, z) in mm, counter-clockwise, each with its fillet radius
(0: sharp); the tests compute the areas from these lists on their own.  The output is the same
bytes on every run (ezdxf's fixed metadata).  Run: ``python3 examples/make_demo_sections.py [folder]``.
"""
from __future__ import annotations

import math
import sys
from pathlib import Path

from clutchfe.geometry.section_file import (Axis, BodySpec, FaceSpec, FrictionSpec, RegionSpec, Select,
                                            SectionFileSpec)

ROOT = Path(__file__).resolve().parents[1]
UNIT_CODES = {"mm": 4, "m": 6, "inch": 1}          # DXF $INSUNITS
MM_PER_UNIT = {"mm": 1.0, "m": 1000.0, "inch": 25.4}

# --- the cone cup (invented): face from (R1, 0) to (R2, H) at semi-cone angle ALPHA -------------
ALPHA = math.radians(15.0)
R1, R2 = 58.0, 72.0
H = (R2 - R1) / math.tan(ALPHA)
LINING = 3.0 / math.cos(ALPHA)                   # 3 mm normal to the face, as a radial offset
RIM = 6.0 / math.cos(ALPHA)
WALL = 7.0 / math.cos(ALPHA)
TOP = H + 8.0                                    # the cone's web is 8 mm thick
HUB_BOTTOM = TOP - 40.0
OVERRUN = 4.0                                    # the cup's face runs on 4 mm (axially) past r1
WEB_BACK = -OVERRUN - 12.0
CUP_BASE = -OVERRUN - 34.0
OUTER_AT_BACK = R2 + WALL - (H - WEB_BACK) * math.tan(ALPHA)

CONE_CUP = {
    "axis": ("x", "y"),
    "regions": {
        "CONE": ("lwpolyline", [
            (R1 - LINING, 0.0, 0), (R2 - LINING, H, 0), (R2 - LINING, TOP, 2.0), (16.0, TOP, 0),
            (16.0, HUB_BOTTOM, 0), (26.0, HUB_BOTTOM, 1.5), (26.0, H, 4.0), (R2 - LINING - RIM, H, 4.0),
            (R1 - LINING - RIM, 0.0, 1.5)]),
        "LINING": ("lwpolyline", [(R1, 0.0, 0), (R2, H, 0), (R2 - LINING, H, 0), (R1 - LINING, 0.0, 0)]),
        "CUP": ("lines", [
            (R2, H, 0), (R1, 0.0, 0), (R1 - OVERRUN * math.tan(ALPHA), -OVERRUN, 2.0), (18.0, -OVERRUN, 0),
            (18.0, CUP_BASE, 0), (30.0, CUP_BASE, 1.5), (30.0, WEB_BACK, 3.0),
            (38.0, WEB_BACK, 1.5), (38.0, WEB_BACK - 6.0, 1.0), (42.0, WEB_BACK - 6.0, 1.0), (42.0, WEB_BACK, 1.5),
            (48.0, WEB_BACK, 1.5), (48.0, WEB_BACK - 6.0, 1.0), (52.0, WEB_BACK - 6.0, 1.0), (52.0, WEB_BACK, 1.5),
            (OUTER_AT_BACK, WEB_BACK, 4.0), (R2 + WALL, H, 1.5)]),
    },
    "markers": {"FRICTION": [((R1, 0.0), (R2, H))], "LOAD": [((16.0, TOP), (R2 - LINING, TOP))],
                "SUPPORT_AXIAL": [((18.0, CUP_BASE), (30.0, CUP_BASE))]},
    # the group holds the cup's own curves of both ribs (between the web-back radii 36 and 54 mm)
    "groups": {"ribs": ("CUP", (36.0, 54.0), WEB_BACK + 1e-6)},
}

# --- the pressure plate stack (invented): lining r1 = 85 … r2 = 120 mm ---------------------------
Z_DISC, CORE, PAD = 0.0, 1.8, 3.5                  # lining pads 3.5 mm on a 1.8 mm steel core
Z_PLATE = Z_DISC + 2 * PAD + CORE
Z_BACK = Z_PLATE + 16.0
FULCRUM_R, FULCRUM_TOP = 108.0, Z_BACK + 4.0       # a 5 mm wide ring, its top a full round of R 2.5

PRESSURE_PLATE = {
    "axis": ("y", "x"),
    "regions": {
        "FLYWHEEL": ("polyline2d", [
            (60.0, -22.0, 0), (140.0, -22.0, 3.0), (140.0, 0.0, 1.0), (120.0, 0.0, 0), (85.0, 0.0, 0),
            (78.0, 0.0, 0), (78.0, -1.5, 1.0), (60.0, -1.5, 0)]),
        "LINING_LOW": ("lwpolyline", [(85.0, 0.0, 0), (120.0, 0.0, 0), (120.0, PAD, 0), (85.0, PAD, 0)]),
        "CORE": ("lines", [(70.0, PAD, 0), (120.0, PAD, 0), (120.0, PAD + CORE, 0), (70.0, PAD + CORE, 0)]),
        "LINING_HIGH": ("lwpolyline", [(85.0, PAD + CORE, 0), (120.0, PAD + CORE, 0), (120.0, Z_PLATE, 0),
                                       (85.0, Z_PLATE, 0)]),
        "PLATE": ("lwpolyline", [
            (80.0, Z_PLATE, 0), (85.0, Z_PLATE, 0), (120.0, Z_PLATE, 0), (126.0, Z_PLATE, 1.0),
            (126.0, Z_BACK, 3.0), (FULCRUM_R + 2.5, Z_BACK, 1.0), (FULCRUM_R + 2.5, FULCRUM_TOP, 2.5),
            (FULCRUM_R - 2.5, FULCRUM_TOP, 2.5), (FULCRUM_R - 2.5, Z_BACK, 1.0), (96.0, Z_BACK, 0.5),
            (96.0, Z_BACK - 4.0, 1.5), (90.0, Z_BACK - 4.0, 1.5), (90.0, Z_BACK, 0.5), (80.0, Z_BACK, 0)]),
    },
    "markers": {"FULCRUM": [("arc", (FULCRUM_R, FULCRUM_TOP - 2.5), 2.5, 0.0, 180.0)]},
    "groups": {},
}


# --- drawing ------------------------------------------------------------------------------------


def _unit(v):
    n = math.hypot(*v)
    return (v[0] / n, v[1] / n)


def outline_segments(corners):
    """The outline as ("line", p, q) and ("arc", p, q, centre, radius, ccw) pieces in order: each
    filleted corner replaced by the arc tangent to both of its edges."""
    n = len(corners)
    cut = []
    for k, (r, z, radius) in enumerate(corners):
        if not radius:
            cut.append(((r, z), (r, z), None))
            continue
        a, b = corners[k - 1], corners[(k + 1) % n]
        u, v = _unit((a[0] - r, a[1] - z)), _unit((b[0] - r, b[1] - z))
        beta = math.acos(max(-1.0, min(1.0, u[0] * v[0] + u[1] * v[1])))
        d = radius / math.tan(beta / 2)
        bis = _unit((u[0] + v[0], u[1] + v[1]))
        centre = (r + bis[0] * radius / math.sin(beta / 2), z + bis[1] * radius / math.sin(beta / 2))
        ccw = (r - a[0]) * (b[1] - z) - (z - a[1]) * (b[0] - r) > 0        # a left turn: a convex corner
        cut.append(((r + d * u[0], z + d * u[1]), (r + d * v[0], z + d * v[1]), (centre, radius, ccw)))
    segments = []
    for k, (t1, t2, arc) in enumerate(cut):
        if arc is not None:
            segments.append(("arc", t1, t2, *arc))
        nxt = cut[(k + 1) % n][0]
        if math.dist(t2, nxt) > 1e-12:
            segments.append(("line", t2, nxt))
    return segments


class _Sheet:
    """Section coordinates (r, z) mm -> drawing coordinates, for one axis layout, unit and origin."""

    def __init__(self, msp, axis, unit, origin):
        self.msp, self.axis, self.f, self.origin = msp, axis, MM_PER_UNIT[unit], origin
        self.mirror = axis == ("y", "x")            # r along y, z along x: the drawing is the mirror image

    def xy(self, p):
        r, z = p[0] / self.f, p[1] / self.f
        u, v = (z, r) if self.mirror else (r, z)
        return (self.origin[0] + u, self.origin[1] + v)

    def line(self, p, q, layer):
        return self.msp.add_line(self.xy(p), self.xy(q), dxfattribs={"layer": layer})

    def arc(self, p, q, centre, radius, ccw, layer):
        c = self.xy(centre)
        a0 = math.degrees(math.atan2(self.xy(p)[1] - c[1], self.xy(p)[0] - c[0]))
        a1 = math.degrees(math.atan2(self.xy(q)[1] - c[1], self.xy(q)[0] - c[0]))
        if ccw == self.mirror:                      # drawn clockwise: an ARC always runs counter-clockwise
            a0, a1 = a1, a0
        return self.msp.add_arc(c, radius / self.f, a0 % 360.0, a1 % 360.0, dxfattribs={"layer": layer})

    def polyline(self, segments, layer, kind):
        vertices = []
        for seg in segments:
            bulge = 0.0
            if seg[0] == "arc":
                _, p, q, centre, radius, ccw = seg
                a0 = math.atan2(p[1] - centre[1], p[0] - centre[0])
                a1 = math.atan2(q[1] - centre[1], q[0] - centre[0])
                sweep = (a1 - a0) % (2 * math.pi) if ccw else -((a0 - a1) % (2 * math.pi))
                bulge = math.tan(sweep / 4) * (-1.0 if self.mirror else 1.0)
            vertices.append((*self.xy(seg[1]), bulge))
        add = self.msp.add_lwpolyline if kind == "lwpolyline" else self.msp.add_polyline2d
        return add(vertices, format="xyb", close=True, dxfattribs={"layer": layer})


def write_dxf(design: dict, path, unit: str = "mm", origin=(0.0, 0.0)) -> Path:
    """Draw a design into a DXF file; ``unit`` is what one drawing unit is, ``origin`` the drawing
    coordinates (in that unit) of the point r = 0, z = 0."""
    import ezdxf      # only the script and the reader need ezdxf

    fixed = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True      # fixed dates and GUIDs: the same bytes every run
    try:
        doc = ezdxf.new("R2010", units=UNIT_CODES[unit])
        msp = doc.modelspace()
        sheet = _Sheet(msp, design["axis"], unit, origin)
        for k, layer in enumerate([*design["regions"], *design["markers"], "AXIS", "NOTES"]):
            doc.layers.add(layer, color=k % 7 + 1)
        drawn = {}
        for layer, (kind, corners) in design["regions"].items():
            segments = outline_segments(corners)
            if kind == "lines":
                drawn[layer] = [(seg, sheet.line(*seg[1:3], layer) if seg[0] == "line" else sheet.arc(*seg[1:], layer))
                                for seg in segments]
            else:
                sheet.polyline(segments, layer, kind)
        for layer, curves in design["markers"].items():
            for curve in curves:
                if curve[0] == "arc":
                    _, centre, radius, a0, a1 = curve
                    p = (centre[0] + radius * math.cos(math.radians(a0)), centre[1] + radius * math.sin(math.radians(a0)))
                    q = (centre[0] + radius * math.cos(math.radians(a1)), centre[1] + radius * math.sin(math.radians(a1)))
                    sheet.arc(p, q, centre, radius, True, layer)
                else:
                    sheet.line(*curve, layer)
        for name, (layer, (r_lo, r_hi), z_max) in design["groups"].items():
            members = [e for seg, e in drawn[layer]
                       if all(r_lo <= p[0] <= r_hi and p[1] <= z_max for p in seg[1:3])]
            doc.groups.new(name).extend(members)
        every = [(r, z) for _, corners in design["regions"].values() for r, z, _ in corners]
        z_lo, z_hi = min(z for _, z in every) - 5.0, max(z for _, z in every) + 5.0
        sheet.line((0.0, z_lo), (0.0, z_hi), "AXIS")
        msp.add_text("invented demo part (clutchfe), section (r, z); axis on layer AXIS", height=2.5 / sheet.f,
                     dxfattribs={"layer": "NOTES", "insert": sheet.xy((10.0, z_hi + 3.0))})
        path = Path(path)
        path.parent.mkdir(parents=True, exist_ok=True)
        doc.saveas(path)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = fixed
    return path


# --- how a case would read them -------------------------------------------------------------------


def _axis(design, origin):
    r, z = design["axis"]
    return Axis(r=r, z=z, axis_at=origin[0] if r == "x" else origin[1], z_at=origin[1] if z == "y" else origin[0])


def cone_cup_spec(path, units: str = "mm", origin=(0.0, 0.0)) -> SectionFileSpec:
    steel, iron, lining = (210000.0, 0.3), (110000.0, 0.26), (450.0, 0.25)
    return SectionFileSpec(
        path=path, units=units, axis=_axis(CONE_CUP, origin),
        bodies=(BodySpec("cone", "pressed", "inner cone"), BodySpec("cup", "supported", "outer cup")),
        regions=(RegionSpec("cone", "cone", *steel, layer="CONE"),
                 RegionSpec("cone_lining", "cone", *lining, layer="LINING", lining_layers=4),
                 RegionSpec("cup", "cup", *iron, layer="CUP")),
        friction=(FrictionSpec("s1", "cone", "cup", Select(layer="FRICTION")),),
        load=FaceSpec("cone_back_face", Select(layer="LOAD")),
        support_axial=FaceSpec("cup_hub_back", Select(layer="SUPPORT_AXIAL")),
        support_radial=FaceSpec("cup_bore", Select(through=(18.0, -20.0))),
        faces=(FaceSpec("cup_ribs", Select(name="ribs")),
               FaceSpec("cup_outside", Select(box=(60.0, -17.0, 80.0, 53.0), body="cup"))))


def pressure_plate_spec(path, units: str = "mm", origin=(0.0, 0.0)) -> SectionFileSpec:
    steel, iron, lining = (210000.0, 0.3), (115000.0, 0.26), (300.0, 0.25)
    return SectionFileSpec(
        path=path, units=units, axis=_axis(PRESSURE_PLATE, origin),
        bodies=(BodySpec("flywheel", "supported"), BodySpec("disc", "floating", "friction disc"),
                BodySpec("pressure_plate", "pressed", "pressure plate")),
        regions=(RegionSpec("flywheel", "flywheel", *iron, layer="FLYWHEEL"),
                 RegionSpec("disc_lining_bottom", "disc", *lining, layer="LINING_LOW", lining_layers=4),
                 RegionSpec("disc", "disc", *steel, layer="CORE"),
                 RegionSpec("disc_lining_top", "disc", *lining, layer="LINING_HIGH", lining_layers=4),
                 RegionSpec("pressure_plate", "pressure_plate", *iron, layer="PLATE")),
        friction=(FrictionSpec("s1", "flywheel", "disc", Select(through=(100.0, 0.0))),
                  FrictionSpec("s2", "disc", "pressure_plate", Select(box=(84.0, Z_PLATE - 0.1, 121.0, Z_PLATE + 0.1)))),
        load=FaceSpec("fulcrum", Select(layer="FULCRUM")),
        support_axial=FaceSpec("flywheel_back", Select(box=(59.0, -22.1, 141.0, -21.9))),
        support_radial=FaceSpec("flywheel_bore", Select(through=(60.0, -11.0))),
        faces=(FaceSpec("plate_back", Select(box=(79.0, Z_BACK - 5.0, 127.0, Z_BACK + 0.2), body="pressure_plate")),))


DEMOS = {"cone_cup.dxf": (CONE_CUP, cone_cup_spec), "pressure_plate.dxf": (PRESSURE_PLATE, pressure_plate_spec)}


def main(folder=ROOT / "cases" / "sections") -> list[Path]:
    return [write_dxf(design, Path(folder) / name) for name, (design, _) in DEMOS.items()]


if __name__ == "__main__":
    for written in main(*sys.argv[1:2]):
        print(f"wrote {written}")
