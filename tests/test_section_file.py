"""Sections read from files (geometry/section_file.py) against the drawings' own construction.

The demo files are drawn by examples/make_demo_sections.py from corner lists with fillet radii.
Areas and volumes of revolution are computed here from those lists alone: the sharp polygon by
the shoelace formula, minus (convex corner) or plus (concave corner) each fillet's spandrel, the
kite between the corner, the two tangent points and the arc's centre less the circular sector;
the sector's centroid lies 4 R sin(φ/2) / (3 φ) from its centre (∫∫ ρ cos θ ρ dρ dθ over the
sector divided by its area R² φ / 2).  Volumes by Pappus's centroid theorem, V = 2π ∫ r dA.
The reader replaces arcs by chords no farther than the chord tolerance from them, so the region
between an arc and its chords lies within that distance of the chords: its area is at most
tolerance × arc length (the bound used below), and its first moment at most that times the arc's
largest radius.
"""
import math
import re
import runpy

import numpy as np
import pytest

from clutchfe.case import case_from_dict
from clutchfe.geometry import GeometryError, build_section, mesh_section
from clutchfe.geometry.section_file import (Axis, BodySpec, FaceSpec, FrictionSpec, RegionSpec, Select,
                                            SectionFileSpec, read_section)

from tests.helpers.data import CONE, PLATE, ROOT

DEMO = runpy.run_path(str(ROOT / "examples" / "make_demo_sections.py"))
SECTIONS = ROOT / "cases" / "sections"
CONE_CUP, PRESSURE_PLATE = DEMO["CONE_CUP"], DEMO["PRESSURE_PLATE"]


def _cone_cup(path=SECTIONS / "cone_cup.dxf", **changes):
    spec = DEMO["cone_cup_spec"](path)
    return SectionFileSpec(**{**spec.__dict__, **changes})


def _plate(path=SECTIONS / "pressure_plate.dxf", **changes):
    spec = DEMO["pressure_plate_spec"](path)
    return SectionFileSpec(**{**spec.__dict__, **changes})


@pytest.fixture(scope="module")
def cone_cup():
    return read_section(_cone_cup(), axial_force=1800.0)


@pytest.fixture(scope="module")
def pressure_plate():
    return read_section(_plate(), axial_force=4200.0, ring_radius=DEMO["FULCRUM_R"])


# --- the construction's own areas (independent of the reader) ---------------------------------


def _shoelace(pts):
    pts = np.asarray(pts, float)
    r, z = pts[:, 0], pts[:, 1]
    rn, zn = np.roll(r, -1), np.roll(z, -1)
    cross = r * zn - rn * z
    return 0.5 * cross.sum(), (cross * (r + rn)).sum() / 6.0


def _fillets(corners):
    """Per filleted corner: (convex, centre, radius, swept angle φ, tangent points, spandrel area, moment)."""
    out = []
    n = len(corners)
    for k, (r, z, radius) in enumerate(corners):
        if not radius:
            continue
        p = np.array([r, z])
        a, b = np.array(corners[k - 1][:2]), np.array(corners[(k + 1) % n][:2])
        u, v = (a - p) / np.linalg.norm(a - p), (b - p) / np.linalg.norm(b - p)
        beta = math.acos(float(np.dot(u, v)))            # the angle between the corner's edges
        d = radius / math.tan(beta / 2)                  # corner to tangent point
        bis = (u + v) / np.linalg.norm(u + v)
        centre = p + bis * radius / math.sin(beta / 2)
        t1, t2 = p + d * u, p + d * v
        kite_area, kite_moment = _shoelace([p, t1, centre, t2])
        kite_area, kite_moment = abs(kite_area), kite_moment * np.sign(kite_area)     # either orientation
        assert kite_area == pytest.approx(radius * d, rel=1e-12)
        phi = math.pi - beta
        sector_area = 0.5 * radius**2 * phi
        towards = (p - centre) / np.linalg.norm(p - centre)
        sector_r = centre[0] + towards[0] * 4 * radius * math.sin(phi / 2) / (3 * phi)
        convex = (p - a)[0] * (b - p)[1] - (p - a)[1] * (b - p)[0] > 0
        out.append((convex, centre, radius, phi, (t1, t2), kite_area - sector_area,
                    kite_moment - sector_area * sector_r))
    return out


def _exact(corners):
    """Area (mm²) and first moment ∫ r dA (mm³) of a filleted outline, and the chord-error bounds."""
    area, moment = _shoelace([c[:2] for c in corners])
    bound_area = bound_moment = 0.0
    for convex, centre, radius, phi, _, sp_area, sp_moment in _fillets(corners):
        sign = -1.0 if convex else 1.0                 # a convex corner loses its spandrel, a concave one gains it
        area += sign * sp_area
        moment += sign * sp_moment
        bound_area += radius * phi
        bound_moment += radius * phi * (centre[0] + radius)
    return area, moment, bound_area, bound_moment


def _regions(design):
    return {layer: corners for layer, (_, corners) in design["regions"].items()}


CONE_CUP_REGIONS = {"cone": "CONE", "cone_lining": "LINING", "cup": "CUP"}
PLATE_REGIONS = {"flywheel": "FLYWHEEL", "disc_lining_bottom": "LINING_LOW", "disc": "CORE",
                 "disc_lining_top": "LINING_HIGH", "pressure_plate": "PLATE"}


@pytest.mark.parametrize("chord", [1e-2, 1e-3])
@pytest.mark.parametrize("demo", ["cone_cup", "pressure_plate"])
def test_region_areas_and_pappus_volumes_match_the_drawings_construction(demo, chord):
    spec = _cone_cup(chord_tolerance=chord) if demo == "cone_cup" else _plate(chord_tolerance=chord)
    section = read_section(spec, axial_force=1000.0)
    design, names = (CONE_CUP, CONE_CUP_REGIONS) if demo == "cone_cup" else (PRESSURE_PLATE, PLATE_REGIONS)
    corners = _regions(design)
    volumes = {}
    for region in section.regions:
        area, moment, bound_area, bound_moment = _exact(corners[names[region.name]])
        got_area, got_moment = section.region_area_and_moment(region)
        slack = 1e-12 * abs(area)
        assert abs(got_area - area) <= chord * bound_area + slack, region.name
        assert abs(got_moment - moment) <= chord * bound_moment + 1e-12 * abs(moment), region.name
        volumes.setdefault(region.body, [0.0, 0.0])
        volumes[region.body][0] += 2 * math.pi * moment
        volumes[region.body][1] += 2 * math.pi * chord * bound_moment
    for body, (volume, bound) in volumes.items():
        assert abs(section.body_volume(body) - volume) <= bound + 1e-12 * volume, body
    # a fillet matters far more than the chords: dropping the spandrels would fail the bounds above
    cup = corners["CUP" if demo == "cone_cup" else "PLATE"]
    spandrels = sum(abs(f[5]) for f in _fillets(cup))
    assert spandrels > 20 * chord * sum(f[2] * f[3] for f in _fillets(cup))


def test_straight_regions_match_closed_forms(cone_cup, pressure_plate):
    alpha = math.radians(15.0)
    r1, r2, t = 58.0, 72.0, 3.0
    slant = (r2 - r1) / math.sin(alpha)
    lining = next(r for r in cone_cup.regions if r.name == "cone_lining")
    area, moment = cone_cup.region_area_and_moment(lining)
    # a parallelogram t × slant whose centroid is half a thickness inside the face, t / (2 cos α) radially
    assert area == pytest.approx(t * slant, rel=1e-12)
    assert 2 * math.pi * moment == pytest.approx(2 * math.pi * ((r1 + r2) / 2 - t / (2 * math.cos(alpha))) * area,
                                                 rel=1e-12)
    # the disc: two annular pads (85 … 120 mm, 3.5 mm) on an annular core (70 … 120 mm, 1.8 mm): Pappus,
    # V = π (b² − a²) h for each annulus
    expected = math.pi * (2 * (120.0**2 - 85.0**2) * 3.5 + (120.0**2 - 70.0**2) * 1.8)
    assert pressure_plate.body_volume("disc") == pytest.approx(expected, rel=1e-12)


def test_arcs_become_the_fewest_chords_within_the_chord_tolerance(cone_cup):
    tol = 1e-2
    cup = next(r for r in cone_cup.regions if r.name == "cup")
    pts = np.array([cone_cup.points[p] for p in cup.loop])
    checked = 0
    for convex, centre, radius, phi, (t1, t2), *_ in _fillets(_regions(CONE_CUP)["CUP"]):
        on = pts[np.abs(np.linalg.norm(pts - centre, axis=1) - radius) <= 1e-9] - centre
        mid = (t1 + t2) / 2 - centre                     # angles measured from the arc's middle
        angles = np.sort(np.arctan2(on[:, 1] * mid[0] - on[:, 0] * mid[1], on @ mid))
        n = len(on) - 1
        assert np.ptp(angles) == pytest.approx(phi, abs=1e-9)
        chords = np.diff(angles)
        assert chords == pytest.approx(np.full(n, phi / n), abs=1e-9)            # equal chords
        assert radius * (1 - math.cos(phi / n / 2)) <= tol                        # sagitta within tolerance
        if n > max(1, math.ceil(phi / (math.pi / 2))):
            assert radius * (1 - math.cos(phi / (n - 1) / 2)) > tol               # and one chord fewer is not
        checked += 1
    assert checked == 13


# --- names, interfaces, shared points -----------------------------------------------------------


def test_named_faces_interfaces_and_bodies_of_the_cone_cup(cone_cup):
    assert cone_cup.face_names() == {"s1_cone_face", "s1_cup_face", "cone_back_face", "cup_hub_back", "cup_bore",
                                     "cup_ribs", "cup_outside"}
    (itf,) = cone_cup.interfaces
    alpha = math.radians(15.0)
    assert itf.start == pytest.approx((58.0, 0.0), abs=1e-12)
    assert itf.end == pytest.approx((72.0, 14.0 / math.tan(alpha)), abs=1e-12)
    assert itf.normal_a == pytest.approx((math.cos(alpha), -math.sin(alpha)), abs=1e-12)
    assert cone_cup.semi_cone_angle == pytest.approx(15.0, abs=1e-9)
    assert (itf.body_a, itf.body_b, itf.lining_body) == ("cone", "cup", "cone")
    lining = next(r for r in cone_cup.regions if r.name == "cone_lining")
    assert lining.lining_layers == 4 and len(lining.loop) == 4 and lining.edge_names[0] == "s1_cone_face"
    cone = next(r for r in cone_cup.regions if r.name == "cone")
    assert set(lining.loop[2:]) <= set(cone.loop)            # the bond's ends are the carrier's points
    assert [b.role for b in cone_cup.bodies] == ["pressed", "supported"]
    # the ribs group: both ribs, each two sides, a tip with two fillets, two root fillets
    cup = next(r for r in cone_cup.regions if r.name == "cup")
    rib_points = {p for k, p in enumerate(cup.loop) if cup.edge_names[k] == "cup_ribs"}
    rib_points |= {cup.loop[(k + 1) % len(cup.loop)] for k, n in enumerate(cup.edge_names) if n == "cup_ribs"}
    r_rib = sorted({round(cone_cup.points[p][0], 6) for p in rib_points})
    assert min(r_rib) == pytest.approx(36.5) and max(r_rib) == pytest.approx(53.5)


def test_pressure_plate_shares_points_within_a_body_and_has_its_ring(pressure_plate):
    regions = {r.name: r for r in pressure_plate.regions}
    core, low, high = regions["disc"], regions["disc_lining_bottom"], regions["disc_lining_top"]
    # the core was drawn as a plain rectangle: the pads' inner corners (85 mm) were put into its edges
    assert len(core.loop) == 6
    assert set(low.loop) & set(core.loop) == set(low.loop[2:])
    assert set(high.loop) & set(core.loop) == set(high.loop[2:])
    bodies = {}
    for region in pressure_plate.regions:
        bodies.setdefault(region.body, set()).update(region.loop)
    assert not bodies["flywheel"] & bodies["disc"] and not bodies["disc"] & bodies["pressure_plate"]
    s1, s2 = pressure_plate.interfaces
    assert (s1.body_a, s1.body_b, s1.normal_a, s1.lining_body) == ("flywheel", "disc", (0.0, 1.0), "disc")
    assert (s2.body_a, s2.body_b, s2.lining_body) == ("disc", "pressure_plate", "disc")
    assert s2.start == pytest.approx((85.0, 8.8), abs=1e-12) and s2.end == pytest.approx((120.0, 8.8), abs=1e-12)
    plate = regions["pressure_plate"]
    ring = [p for k, p in enumerate(plate.loop) if plate.edge_names[k] == "fulcrum"
            and pressure_plate.points[p][0] == DEMO["FULCRUM_R"]]
    assert len(ring) == 1 and pressure_plate.points[ring[0]][1] == pytest.approx(DEMO["FULCRUM_TOP"], abs=1e-9)
    assert pressure_plate.lining_end_shape == "normal_to_face"


@pytest.mark.parametrize("demo", ["cone_cup", "pressure_plate"])
def test_demo_meshes_have_coinciding_friction_nodes_and_the_polygons_area(demo, request):
    section = request.getfixturevalue(demo)
    mesh = mesh_section(section)
    for itf in section.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        assert len(pairs) >= 20
        assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-12
    p = mesh.points[mesh.triangles[:, :3]]
    area = 0.5 * ((p[:, 1, 0] - p[:, 0, 0]) * (p[:, 2, 1] - p[:, 0, 1]) - (p[:, 1, 1] - p[:, 0, 1]) * (p[:, 2, 0] - p[:, 0, 0]))
    polygons = sum(section.region_area_and_moment(r)[0] for r in section.regions)
    assert area.sum() == pytest.approx(polygons, rel=1e-12)        # straight-sided polygons, straight triangles
    assert set(section.face_names()) <= set(mesh.faces)


# --- the script and the committed files -----------------------------------------------------------


def test_the_script_writes_the_same_bytes_every_run_and_the_committed_files_read_the_same(tmp_path):
    first = DEMO["main"](tmp_path / "a")
    second = DEMO["main"](tmp_path / "b")
    for a, b in zip(first, second):
        assert a.read_bytes() == b.read_bytes()
    for path, (_, spec_of) in zip(first, DEMO["DEMOS"].values()):
        fresh = read_section(spec_of(path), axial_force=1.0)
        committed = read_section(spec_of(SECTIONS / path.name), axial_force=1.0)
        assert fresh.points == committed.points
        assert [r.edge_names for r in fresh.regions] == [r.edge_names for r in committed.regions]


# --- units and axis -------------------------------------------------------------------------------


@pytest.mark.parametrize("unit", ["m", "inch"])
def test_the_same_drawing_in_other_units_gives_the_same_section(tmp_path, pressure_plate, unit):
    path = DEMO["write_dxf"](PRESSURE_PLATE, tmp_path / f"plate_{unit}.dxf", unit=unit)
    other = read_section(_plate(path, units=unit), axial_force=4200.0, ring_radius=DEMO["FULCRUM_R"])
    assert np.allclose(other.points, pressure_plate.points, rtol=0, atol=1e-9)
    assert [r.edge_names for r in other.regions] == [r.edge_names for r in pressure_plate.regions]
    assert [r.loop for r in other.regions] == [r.loop for r in pressure_plate.regions]


def test_an_offset_axis_gives_the_same_section(tmp_path, cone_cup):
    origin = (250.0, -40.0)
    path = DEMO["write_dxf"](CONE_CUP, tmp_path / "shifted.dxf", origin=origin)
    shifted = read_section(DEMO["cone_cup_spec"](path, origin=origin), axial_force=1800.0)
    assert np.allclose(shifted.points, cone_cup.points, rtol=0, atol=1e-9)
    assert [r.edge_names for r in shifted.regions] == [r.edge_names for r in cone_cup.regions]


# --- round trip of the parametric sections --------------------------------------------------------


def _write_section_dxf(section, path):
    """Each region a closed LWPOLYLINE on a layer of its name, each named edge a LINE on a layer of its name."""
    import ezdxf
    doc = ezdxf.new("R2010", units=4)
    msp = doc.modelspace()
    for region in section.regions:
        pts = [section.points[p] for p in region.loop]
        msp.add_lwpolyline(pts, close=True, dxfattribs={"layer": region.name})
        for k, name in enumerate(region.edge_names):
            if name:
                msp.add_line(pts[k], pts[(k + 1) % len(pts)], dxfattribs={"layer": name})
    doc.saveas(path)
    return path


def _spec_of(section, path):
    by_layer = lambda name: Select(layer=name)          # noqa: E731
    named = {section.load_face, section.support_axial_face, section.support_radial_face}
    friction = {n for itf in section.interfaces for n in (itf.face_a, itf.face_b)}
    return SectionFileSpec(
        path=path, units="mm", axis=Axis(),
        bodies=tuple(BodySpec(b.name, b.role, b.label) for b in section.bodies),
        regions=tuple(RegionSpec(r.name, r.body, r.youngs_modulus, r.poissons_ratio, layer=r.name,
                                 lining_layers=r.lining_layers) for r in section.regions),
        friction=tuple(FrictionSpec(i.name, i.body_a, i.body_b, by_layer(i.face_a), by_layer(i.face_b),
                                    face_a=i.face_a, face_b=i.face_b) for i in section.interfaces),
        load=FaceSpec(section.load_face, by_layer(section.load_face)),
        support_axial=FaceSpec(section.support_axial_face, by_layer(section.support_axial_face)),
        support_radial=FaceSpec(section.support_radial_face, by_layer(section.support_radial_face)),
        faces=tuple(FaceSpec(n, by_layer(n)) for n in sorted(section.face_names() - named - friction)))


RING_CONE = {**CONE, "load": {"axial_force": 2500.0, "application": "ring", "ring_radius": 40.0}}


@pytest.mark.parametrize("data", [RING_CONE, PLATE], ids=["cone", "plate"])
def test_a_parametric_section_written_to_dxf_reads_back_the_same(tmp_path, data):
    case = case_from_dict(data)
    original = build_section(case)
    path = _write_section_dxf(original, tmp_path / "section.dxf")
    read = read_section(_spec_of(original, path), axial_force=original.axial_force, ring_radius=original.ring_radius)
    assert read.face_names() == original.face_names()
    assert [r.name for r in read.regions] == [r.name for r in original.regions]
    for a, b in zip(read.regions, original.regions):
        assert read.region_area_and_moment(a) == pytest.approx(original.region_area_and_moment(b), rel=1e-12)
        assert sorted(filter(None, a.edge_names)) == sorted(filter(None, b.edge_names))
        if b.lining_layers:
            assert a.edge_names[0] == b.edge_names[0]
    for a, b in zip(read.interfaces, original.interfaces):
        assert (a.face_a, a.face_b, a.body_a, a.body_b, a.lining_body) == \
            (b.face_a, b.face_b, b.body_a, b.body_b, b.lining_body)
        assert a.start == pytest.approx(b.start, abs=1e-12) and a.end == pytest.approx(b.end, abs=1e-12)
        assert a.normal_a == pytest.approx(b.normal_a, abs=1e-12)
    assert read.semi_cone_angle == pytest.approx(original.semi_cone_angle, abs=1e-9)
    for key in ("face_size", "edge_size", "body_size"):
        setattr(read, key, getattr(original, key))
    mesh, reference = mesh_section(read), mesh_section(original)
    for itf in read.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-12
        assert len(pairs) == len(reference.interface_pairs[itf.name])
    if original.ring_radius is not None:
        load_nodes = np.unique(mesh.faces[read.load_face])
        assert np.abs(mesh.points[load_nodes, 0] - original.ring_radius).min() <= 1e-12


# --- STEP / BREP through OpenCASCADE ------------------------------------------------------------


def _write_occ(design, path, names=None):
    """The design's outlines as planar faces in the xy plane (r = x, z = y), one face per region in order,
    written by gmsh's OpenCASCADE kernel; for STEP, ``names`` relabels the faces' products."""
    import gmsh
    gmsh.initialize(readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.add("demo")
        occ = gmsh.model.occ
        for _, corners in design["regions"].values():
            tags = {}

            def point(p):
                key = (round(p[0], 9), round(p[1], 9))
                if key not in tags:
                    tags[key] = occ.addPoint(p[0], p[1], 0.0)
                return tags[key]
            curves = []
            for seg in DEMO["outline_segments"](corners):
                if seg[0] == "line":
                    curves.append(occ.addLine(point(seg[1]), point(seg[2])))
                else:
                    _, p, q, centre, _, _ = seg
                    middle = occ.addPoint(*centre, 0.0)
                    curves.append(occ.addCircleArc(point(p), middle, point(q)))
                    occ.remove([(0, middle)])           # the centre is no part of the drawing
            occ.addPlaneSurface([occ.addCurveLoop(curves)])
        occ.synchronize()
        gmsh.write(str(path))
    finally:
        gmsh.finalize()
    if names:
        text = path.read_text()
        text = re.sub(r"'Open CASCADE STEP translator [\d.]+ 1\.(\d+)'", lambda m: f"'{names[int(m.group(1)) - 1]}'",
                      text)
        path.write_text(text)
    return path


def _cad_plate_spec(path, regions, units="mm"):
    spec = _plate(path)
    return SectionFileSpec(**{**spec.__dict__, "units": units, "axis": Axis(r="x", z="y"), "regions": regions,
                              "load": FaceSpec("fulcrum", Select(box=(105.0, DEMO["FULCRUM_TOP"] - 2.55, 111.0, 30.0)))})


@pytest.mark.parametrize("suffix", [".brep", ".step"])
def test_a_cad_file_of_the_pressure_plate_gives_the_dxf_section(tmp_path, pressure_plate, suffix):
    layers = list(PRESSURE_PLATE["regions"])
    names = [next(n for n, layer in PLATE_REGIONS.items() if layer == lay) for lay in layers]
    path = _write_occ(PRESSURE_PLATE, tmp_path / f"plate{suffix}", names=names if suffix == ".step" else None)
    base = {r.name: r for r in DEMO["pressure_plate_spec"](path).regions}
    if suffix == ".brep":       # faces by number
        regions = tuple(RegionSpec(**{**base[n].__dict__, "layer": None, "index": k + 1}) for k, n in enumerate(names))
    else:                       # faces by their product names
        regions = tuple(RegionSpec(**{**base[n].__dict__, "layer": None, "label": n}) for n in names)
    section = read_section(_cad_plate_spec(path, regions), axial_force=4200.0, ring_radius=DEMO["FULCRUM_R"])
    assert section.face_names() == pressure_plate.face_names()
    corners = _regions(PRESSURE_PLATE)
    for region in section.regions:
        area, moment, bound_area, bound_moment = _exact(corners[PLATE_REGIONS[region.name]])
        got_area, got_moment = section.region_area_and_moment(region)
        assert abs(got_area - area) <= 1e-2 * bound_area + 1e-9 * area, region.name
        assert abs(got_moment - moment) <= 1e-2 * bound_moment + 1e-9 * moment, region.name
    for a, b in zip(section.interfaces, pressure_plate.interfaces):
        assert a.start == pytest.approx(b.start, abs=1e-6) and a.end == pytest.approx(b.end, abs=1e-6)
    mesh = mesh_section(section)
    for itf in section.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-12


def test_a_step_file_in_mm_read_as_metres_is_refused(tmp_path):
    path = _write_occ(PRESSURE_PLATE, tmp_path / "plate.step")
    regions = tuple(RegionSpec(**{**r.__dict__, "layer": None, "index": k + 1})
                    for k, r in enumerate(DEMO["pressure_plate_spec"](path).regions))
    with pytest.raises(GeometryError, match=r"declares its lengths in mm, but units = 'm'"):
        read_section(_cad_plate_spec(path, regions, units="m"), axial_force=1.0)


# --- bad files: one message per problem, naming what was found where ------------------------------


def _problems(spec, **kw):
    with pytest.raises(GeometryError) as info:
        read_section(spec, axial_force=1000.0, **kw)
    return info.value.problems


def _drawn(tmp_path, design_changes, name="bad.dxf", design=CONE_CUP):
    regions = {**design["regions"], **design_changes}
    groups = {k: v for k, v in design["groups"].items()       # a group is of a layer drawn from LINEs and ARCs
              if v[0] not in design_changes or design_changes[v[0]][0] == "lines"}
    return DEMO["write_dxf"]({**design, "regions": regions, "groups": groups}, tmp_path / name)


def test_an_outline_that_does_not_close_names_the_gap(tmp_path):
    import ezdxf
    doc = ezdxf.readfile(SECTIONS / "cone_cup.dxf")
    msp = doc.modelspace()
    bore = next(e for e in msp.query("LINE[layer=='CUP']")
                if e.dxf.start.x == pytest.approx(18.0) and e.dxf.end.x == pytest.approx(18.0))
    bore.dxf.end = (18.0, bore.dxf.end.y + 0.5)          # shorten the bore by 0.5 mm at its lower end
    doc.saveas(tmp_path / "gap.dxf")
    (problem,) = _problems(_cone_cup(tmp_path / "gap.dxf"))
    assert "layer 'CUP'" in problem and "not closed" in problem and "gap of 0.5 mm" in problem
    assert "(18, -37.5)" in problem and "(18, -38)" in problem


def test_a_self_intersecting_outline_is_refused_with_its_crossing(tmp_path):
    bow = [(R, z, 0) for R, z in ((54.0, -10.0), (70.0, -10.0), (54.0, -30.0), (70.0, -30.0))]
    path = _drawn(tmp_path, {"CUP": ("lwpolyline", bow)})
    problems = _problems(_cone_cup(path))
    assert any("region 'cup'" in p and "crosses or touches itself at (r, z) = (62, -20)" in p for p in problems)


def test_a_region_past_the_axis_is_refused(tmp_path):
    spec = _cone_cup(axis=Axis(axis_at=20.0))            # the axis put 20 mm outwards: the bores sit at r < 0
    problems = _problems(spec)
    assert any("region 'cone'" in p and "crosses the axis" in p and "r = -4" in p and "axis_at = 20" in p
               for p in problems)
    assert any("region 'cup'" in p and "r = -2" in p for p in problems)


def test_wrong_units_are_suspected_from_the_size(cone_cup):
    (problem,) = _problems(_cone_cup(units="m"))
    r_max = max(r for r, _ in cone_cup.points) * 1000.0
    assert "wrong units suspected" in problem and "units = 'm'" in problem
    assert f"outermost radius at {r_max:.4g} mm" in problem and "$INSUNITS = 4 (millimetres)" in problem


def test_inches_read_as_millimetres_within_the_size_range_fail_at_the_selections():
    # 25.4 × the cup is still a possible clutch (an outer radius of 2 m): the size check cannot tell, but the
    # faces chosen by (r, z) points and boxes in mm are then not found, and each says how far off it is
    problems = _problems(_cone_cup(units="inch"))
    assert any("cup_bore" in p and "not found" in p and "the nearest is 446.7 mm away" in p for p in problems)


def test_a_drawing_in_metres_read_as_millimetres_is_too_small(tmp_path):
    path = DEMO["write_dxf"](PRESSURE_PLATE, tmp_path / "plate_m.dxf", unit="m")
    (problem,) = _problems(_plate(path))
    assert "outermost radius at 0.14 mm" in problem and "$INSUNITS = 6 (metres)" in problem


def test_a_named_face_that_is_missing_says_what_is_there():
    problems = _problems(_cone_cup(load=FaceSpec("cone_back_face", Select(layer="BACK"))))
    (problem,) = problems
    assert "load face 'cone_back_face' (layer 'BACK'): not found: no curve on that layer" in problem
    assert "'FRICTION'" in problem and "'LOAD'" in problem
    (problem,) = _problems(_cone_cup(faces=(FaceSpec("cooling", Select(name="fins")),)))
    assert "face 'cooling' (the curves named 'fins'): not found: no curve of that name in the file (names: 'ribs')" \
        in problem
    (problem,) = _problems(_cone_cup(support_axial=FaceSpec("cup_hub_back", Select(layer="LOAD"))))
    assert "its curves (LINE" in problem and "lie on body cone, not on cup" in problem


def test_a_face_found_twice_says_where_each_was_found(tmp_path):
    pads = {"PADS": [((85.0, 0.0), (120.0, 0.0)), ((85.0, 8.8), (120.0, 8.8))]}    # both pads' faces on one layer
    path = DEMO["write_dxf"]({**PRESSURE_PLATE, "markers": {**PRESSURE_PLATE["markers"], **pads}}, tmp_path / "p.dxf")
    spec = _plate(path, friction=(FrictionSpec("s1", "flywheel", "disc", Select(layer="PADS")),
                                  DEMO["pressure_plate_spec"](path).friction[1]))
    (problem,) = _problems(spec)
    assert "friction face 's1' on disc" in problem and "found 2 times" in problem
    assert "z 0 … 0 mm on region 'disc_lining_bottom'" in problem and "z 8.8 … 8.8 mm on region 'disc_lining_top'" \
        in problem
    corner = _cone_cup(support_radial=FaceSpec("cup_bore", Select(through=(18.0, -4.0))))
    (problem,) = _problems(corner)
    assert "found twice" in problem and "pick a point inside one curve" in problem


def test_a_friction_face_whose_mate_does_not_face_it_says_where_each_is():
    away = FrictionSpec("s1", "flywheel", "pressure_plate", Select(through=(100.0, 0.0)),
                        select_b=Select(through=(100.0, 8.8)))
    spec = _plate(friction=(away,), bodies=(BodySpec("flywheel", "supported"), BodySpec("disc", "floating"),
                                            BodySpec("pressure_plate", "pressed")))
    problems = _problems(spec)
    assert any("'s1': the face on flywheel" in p and "from (120, 0) to (85, 0) mm" in p
               and "its mate on pressure_plate" in p and "from (85, 8.8) to (120, 8.8) mm" in p
               and "do not face each other: they lie 8.8 mm apart" in p for p in problems)
    same = FrictionSpec("s1", "flywheel", "pressure_plate", Select(through=(100.0, 0.0)),
                        select_b=Select(through=(85.0, DEMO["Z_BACK"])))          # the plate's back faces +z too
    (problem,) = _problems(_plate(friction=(same,)))
    assert "do not face each other: both face the same way" in problem


def test_friction_faces_that_do_not_coincide_are_refused_until_non_matching_faces_come(tmp_path):
    cup = list(_regions(CONE_CUP)["CUP"])
    del cup[1]                                            # no corner on the cup at the lining's narrow end
    path = _drawn(tmp_path, {"CUP": ("lines", cup)})
    spec = _cone_cup(path, friction=(FrictionSpec("s1", "cone", "cup", Select(layer="FRICTION"),
                                                  select_b=Select(through=(65.0, 26.1))),))
    (problem,) = _problems(spec)
    assert "do not coincide at zero load" in problem and "non-matching faces come later" in problem
    assert "tolerance 0.001 mm" in problem and "its mate on cup" in problem


def test_a_region_layer_that_is_missing_or_empty_is_named(tmp_path):
    regions = list(_cone_cup().regions)
    regions[2] = RegionSpec(**{**regions[2].__dict__, "layer": "HOUSING"})
    (problem,) = _problems(_cone_cup(regions=tuple(regions)))
    assert "region 'cup': layer 'HOUSING' of cone_cup.dxf: no curve on that layer" in problem


def test_spec_mistakes_are_all_reported_in_one_round():
    bodies = (BodySpec("cone", "pushed"), BodySpec("cup", "supported"))
    problems = _problems(_cone_cup(units="cm", bodies=bodies, tolerance=0.0))
    assert any("units = 'cm'" in p for p in problems)
    assert any("role = 'pushed'" in p for p in problems)
    assert any("0 pressed bodies" in p for p in problems)
    assert any("tolerance = 0.0" in p for p in problems)


def test_a_file_that_is_not_dxf_is_named(tmp_path):
    path = tmp_path / "notes.dxf"
    path.write_text("this is not a drawing\n")
    (problem,) = _problems(_cone_cup(path))
    assert "notes.dxf" in problem and "DXF" in problem


# --- tolerances and the ring point ----------------------------------------------------------------


def test_a_mate_within_the_tolerance_is_put_exactly_onto_the_face(tmp_path):
    cup = list(_regions(CONE_CUP)["CUP"])
    r, z, fillet = cup[0]
    cup[0] = (r + 0.0006, z, fillet)                    # the cup's face end 0.6 µm off the lining's (tolerance 1 µm)
    path = _drawn(tmp_path, {"CUP": ("lines", cup)})
    section = read_section(_cone_cup(path), axial_force=1800.0)
    cup_region = next(reg for reg in section.regions if reg.name == "cup")
    k = cup_region.edge_names.index("s1_cup_face")
    ends = {section.points[cup_region.loop[k]], section.points[cup_region.loop[(k + 1) % len(cup_region.loop)]]}
    (itf,) = section.interfaces
    assert ends == {itf.start, itf.end}                  # exactly, not within 0.6 µm
    mesh = mesh_section(section)                         # pairs nodes within 1e-9 mm, or raises
    pairs = mesh.interface_pairs["s1"]
    assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() == 0.0


def test_a_ring_load_puts_a_corner_on_the_load_face_or_says_where_the_face_is():
    section = read_section(_cone_cup(), axial_force=1800.0, ring_radius=40.0)
    cone = next(reg for reg in section.regions if reg.name == "cone")
    ring = [p for k, p in enumerate(cone.loop) if cone.edge_names[k] == "cone_back_face"
            and section.points[p] == (40.0, DEMO["TOP"])]
    assert len(ring) == 1
    mesh = mesh_section(section)
    nodes = np.unique(mesh.faces["cone_back_face"])
    assert np.abs(mesh.points[nodes, 0] - 40.0).min() == 0.0
    (problem,) = _problems(_cone_cup(), ring_radius=70.0)
    assert "load.ring_radius = 70: the ring radius 70 mm is not on the section load face" in problem
    assert "(it spans r = 16 … 66.89 mm)" in problem


def test_two_outlines_on_one_layer_need_a_point_inside_each(tmp_path, pressure_plate):
    import ezdxf
    regions = dict(PRESSURE_PLATE["regions"])
    _, high = regions.pop("LINING_HIGH")
    path = DEMO["write_dxf"]({**PRESSURE_PLATE, "regions": regions}, tmp_path / "pads.dxf")
    doc = ezdxf.readfile(path)
    doc.modelspace().add_lwpolyline([(z, r) for r, z, _ in high], close=True, dxfattribs={"layer": "LINING_LOW"})
    doc.saveas(path)                                    # both pads on LINING_LOW (drawn r = y, z = x)
    specs = list(_plate(path).regions)
    specs[3] = RegionSpec(**{**specs[3].__dict__, "layer": "LINING_LOW"})
    (problem,) = _problems(_plate(path, regions=tuple(specs)))[:1]
    assert "region 'disc_lining_bottom': layer 'LINING_LOW' of pads.dxf: 2 closed outlines (r 85 … 120, z 0 … 3.5 mm; " \
           "r 85 … 120, z 5.3 … 8.8 mm); give inside" in problem
    specs[1] = RegionSpec(**{**specs[1].__dict__, "inside": (100.0, 1.0)})
    specs[3] = RegionSpec(**{**specs[3].__dict__, "inside": (100.0, 7.0)})
    section = read_section(_plate(path, regions=tuple(specs)), axial_force=4200.0, ring_radius=DEMO["FULCRUM_R"])
    assert np.allclose(section.points, pressure_plate.points, rtol=0, atol=1e-12)


def test_a_stray_curve_on_a_region_layer_is_named(tmp_path):
    import ezdxf
    doc = ezdxf.readfile(SECTIONS / "cone_cup.dxf")
    doc.modelspace().add_line((18.0, -20.0), (10.0, -20.0), dxfattribs={"layer": "CUP"})
    doc.saveas(tmp_path / "stray.dxf")
    (problem,) = _problems(_cone_cup(tmp_path / "stray.dxf"))
    assert "LINE #" in problem and "from (r, z) = (18, -20) to (10, -20) mm meets no other curve at either end" \
        in problem
