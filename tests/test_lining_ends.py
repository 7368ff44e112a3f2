"""lining.end_shape: the three ways the lining's ends are cut, for the cone and the plate sections."""
import hashlib
import re
import math

import numpy as np
import pytest

import clutchfe
from clutchfe._cli import main
from clutchfe.case import case_from_dict
from clutchfe.geometry import build_section, check_section, face_node_count, mesh_section, section_picture
from clutchfe.geometry.output import lining_ends_words
from clutchfe.schema import SCHEMA

from tests.helpers.data import CONE, PLATE, with_tables, write_toml

SHAPES = SCHEMA["lining"]["end_shape"].choices

# Carriers wide enough for a chamfered plate lining (its bond runs one thickness past r1 and r2).
WIDE_DISC = {"core_outer_radius": 125.0}
WIDE_PLATES = {"pressure_plate": {"inner_radius": 70.0, "outer_radius": 130.0},
               "separator_plate": {"inner_radius": 70.0}}
BASES = {
    "cone": CONE,
    "cup": with_tables(CONE, lining={"bonded_to": "cup"}),
    "disc": with_tables(PLATE, disc=WIDE_DISC),
    "plates": with_tables(PLATE, interface={**PLATE["interface"], "friction_surfaces": 4},
                          lining={"bonded_to": "plates"}, **WIDE_PLATES),
}


def _case(base, shape=None, **tables):
    data = BASES[base] if shape is None else with_tables(BASES[base], lining={"end_shape": shape})
    return case_from_dict(with_tables(data, **tables) if tables else data)


def _cross2(u, v):
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _fingerprint(section):
    # the plates' rim and bore were named later (the edges a spline drag acts on): unnamed before
    def before(name):
        return None if name and re.fullmatch(r"(disc|separator|pressure_plate)\w*_(rim|bore)|counter_plate_rim", name) else name
    text = repr((section.points, [(r.name, r.loop, type(r.edge_names)(before(n) for n in r.edge_names)) for r in section.regions],
                 section.refine_points))
    return hashlib.sha256(text.encode()).hexdigest()[:16]


# --------------------------------------------------------------------- the default is today's section

# Fingerprints of the sections as drawn before lining.end_shape existed (measured on HEAD 3cd0944,
# whose geometry/ had the one fixed end shape): points, region loops, edge names, refined points.
BEFORE = {"cone": ("c84feca6fc7c4116", CONE), "cup": ("1e03e692ed1712e6", BASES["cup"]),
          "plate": ("52eb59e778a12a67", PLATE),
          "plates": ("d764c6bcab3f3c5e", with_tables(PLATE, lining={"bonded_to": "plates"})),
          "pack6": ("6c0a3f23e118f27c", with_tables(PLATE, interface={**PLATE["interface"], "friction_surfaces": 6}))}


@pytest.mark.parametrize("name", list(BEFORE))
def test_default_end_shape_draws_the_section_of_before_point_for_point(name):
    fingerprint, data = BEFORE[name]
    default = build_section(case_from_dict(data))
    assert _fingerprint(default) == fingerprint
    explicit = build_section(case_from_dict(with_tables(data, lining={"end_shape": "normal_to_axis"})))
    assert explicit.points == default.points
    if data["kind"] == "plate":     # faces normal to the axis: the two names are the same square end
        square = build_section(case_from_dict(with_tables(data, lining={"end_shape": "normal_to_face"})))
        assert square.points == default.points
        assert [r.loop for r in square.regions] == [r.loop for r in default.regions]


def test_default_cone_lining_is_the_parallelogram_with_ends_normal_to_the_axis():
    case = _case("cone")
    r1, r2, t = case.interface.inner_radius, case.interface.outer_radius, case.lining.thickness
    alpha = math.radians(case.interface.semi_cone_angle)
    height = (r2 - r1) / math.tan(alpha)
    section = build_section(case)
    lining = next(r for r in section.regions if r.name == "cone_lining")
    # the expressions of the original section, compared exactly
    shift = t / math.cos(alpha)
    assert [section.points[p] for p in lining.loop] == [(r1, 0.0), (r2, height), (r2 - shift, height),
                                                        (r1 - shift, 0.0)]


# --------------------------------------------------------------------- every shape, cone and plate

def _lining_polygons(section):
    return [(reg, np.array([section.points[p] for p in reg.loop])) for reg in section.regions if reg.lining_layers]


def _closed_form_lining(shape, face_length, t):
    """Area (mm²) of the drawn lining, and where its centroid lies on the way from the middle of the
    friction face to the middle of the bond (fraction).

    Parallelogram and rectangle: base × height, centroid halfway; trapezoid of parallel sides a (face)
    and b = a + 2t (bond), height t: area (a + b) t / 2, centroid t (a + 2b) / (3 (a + b)) from side a
    (common practice, plane geometry).
    """
    if shape == "chamfer":
        a, b = face_length, face_length + 2 * t
        return (a + b) * t / 2, (a + 2 * b) / (3 * (a + b))
    return face_length * t, 0.5


def _end_angles_deg(poly):
    """Angles (deg) of the two end edges against the friction face, and of the end edges against r."""
    d = poly[1] - poly[0]
    ends = [poly[2] - poly[1], poly[0] - poly[3]]
    to_face = [math.degrees(math.acos(abs(e @ d) / np.linalg.norm(e) / np.linalg.norm(d))) for e in ends]
    to_r = [math.degrees(math.atan2(abs(e[1]), abs(e[0]))) for e in ends]
    return to_face, to_r


@pytest.mark.parametrize("shape", SHAPES)
@pytest.mark.parametrize("base", list(BASES))
def test_every_end_shape_meshes_with_the_closed_form_lining(base, shape):
    case = _case(base, shape)
    section = build_section(case)
    check_section(section)
    mesh = mesh_section(section)
    r1, r2, t = case.interface.inner_radius, case.interface.outer_radius, case.lining.thickness
    alpha = math.radians(case.interface.semi_cone_angle)
    slant = (r2 - r1) / math.sin(alpha)
    area, fraction = _closed_form_lining(shape, slant, t)
    linings = _lining_polygons(section)
    assert len(linings) == (1 if case.kind == "cone" else case.interface.friction_surfaces)
    for reg, poly in linings:
        face = poly[[0, 1]]
        # the friction face (edge 0) is still r1 … r2, on the interface
        assert sorted(face[:, 0]) == pytest.approx([r1, r2], abs=1e-12)
        assert len(poly) == 4
        to_face, to_r = _end_angles_deg(poly)
        if shape == "chamfer":
            assert to_face == pytest.approx([45.0, 45.0], abs=1e-9)
            assert np.linalg.norm(poly[2] - poly[3]) == pytest.approx(slant + 2 * t, rel=1e-12)
        elif shape == "normal_to_face" or case.kind == "plate":
            assert to_face == pytest.approx([90.0, 90.0], abs=1e-9)
        else:
            assert to_r == pytest.approx([0.0, 0.0], abs=1e-9)          # in planes z = const
        k = mesh.region_names.index(reg.name)
        p = mesh.points[mesh.triangles[mesh.triangle_region == k]]
        a = 0.5 * _cross2(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
        assert (a > 0).all()
        # structured: (n_face − 1) intervals × layers quads, two triangles each
        n_face = face_node_count(slant, section.face_size, section.edge_size)[0]
        assert len(a) == 2 * (n_face - 1) * case.mesh.lining_layers
        # a region's triangles: its area and Pappus volume 2π r̄ A (Pappus) against the closed form
        assert a.sum() == pytest.approx(area, rel=1e-12)
        assert section.region_area_and_moment(reg)[0] == pytest.approx(area, rel=1e-12)
        into = (poly[2] + poly[3]) / 2 - face.mean(axis=0)          # face middle -> bond middle
        r_bar = face[:, 0].mean() + fraction * into[0]
        volume = 2 * math.pi * (a * p[:, :, 0].mean(axis=1)).sum()
        assert volume == pytest.approx(2 * math.pi * r_bar * area, rel=1e-12)
    for itf in section.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-9
        assert (pairs[:, 0] != pairs[:, 1]).all()
    # every body's triangles fill its polygons (the carrier's face follows the bond)
    for body in {reg.body for reg in section.regions}:
        regions = [k for k, b in enumerate(mesh.region_body) if b == body]
        p = mesh.points[mesh.triangles[np.isin(mesh.triangle_region, regions), :3]]
        got = (0.5 * _cross2(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])).sum()
        assert got == pytest.approx(sum(section.region_area_and_moment(r)[0] for r in section.regions
                                        if r.body == body), rel=1e-12)


def _distribution(points, start, end):
    """Sorted positions (fraction of the length) of the points lying on the segment start -> end."""
    d = np.subtract(end, start)
    s = (points - start) @ d / (d @ d)
    off = np.abs(_cross2(points - start, np.broadcast_to(d, points.shape))) / np.linalg.norm(d)
    on = (off < 1e-9) & (s > -1e-12) & (s < 1 + 1e-12)
    return np.sort(s[on])


@pytest.mark.parametrize("base", ["cone", "cup", "disc"])
def test_face_and_bond_keep_the_node_distribution_of_the_default(base):
    reference = None
    for shape in SHAPES:
        section = build_section(_case(base, shape))
        mesh = mesh_section(section)
        reg, poly = _lining_polygons(section)[0]
        k = mesh.region_names.index(reg.name)
        nodes = mesh.points[np.unique(mesh.triangles[mesh.triangle_region == k])]
        face = _distribution(nodes, poly[0], poly[1])
        bond = _distribution(nodes, poly[3], poly[2])        # same direction as the face
        assert np.abs(bond - face).max() < 1e-9              # the bond: the face's distribution, stretched
        if reference is None:
            reference = face
        assert len(face) == len(reference) and np.abs(face - reference).max() < 1e-12


# --------------------------------------------------------------------- input errors, picture

def test_an_unknown_end_shape_exits_2_naming_the_key_value_and_choices(tmp_path, capsys):
    path = write_toml(tmp_path / "case.toml", with_tables(CONE, lining={"end_shape": "rounded"}))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "lining.end_shape" in err and "'rounded'" in err
    assert all(f"'{c}'" in err for c in SHAPES)


def test_a_chamfer_past_the_carrier_exits_2_naming_the_carrier_and_the_shape(tmp_path, capsys):
    # the default disc core ends at r2: a chamfered lining's bond would overhang it
    path = write_toml(tmp_path / "case.toml", with_tables(PLATE, lining={"end_shape": "chamfer"}))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "disc.core_outer_radius" in err and "lining.end_shape = 'chamfer'" in err
    # a cone whose web is thinner than the chamfer's rise past the wide end
    path = write_toml(tmp_path / "cone.toml", with_tables(CONE, lining={"end_shape": "chamfer"},
                                                          cone={"web_thickness": 2.0}))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "lining.end_shape = 'chamfer'" in err and "cone.web_thickness" in err
    ok = write_toml(tmp_path / "ok.toml", with_tables(CONE, lining={"end_shape": "chamfer"}))
    assert main(["check", str(ok)]) == 0


def test_the_section_picture_names_the_end_shape(tmp_path):
    words = {(base, shape): lining_ends_words(build_section(_case(base, shape))) for base in ("cone", "disc")
             for shape in SHAPES}
    assert words[("cone", "normal_to_axis")] == "normal to the axis"
    assert words[("cone", "normal_to_face")] == "normal to the face"
    assert words[("cone", "chamfer")] == words[("disc", "chamfer")] == "45° chamfer"
    assert words[("disc", "normal_to_axis")] == words[("disc", "normal_to_face")] == "square to the face"
    section = build_section(_case("cup", "chamfer"))
    section_picture(section, mesh_section(section), tmp_path / "section.png")
    assert (tmp_path / "section.png").stat().st_size > 20_000


# --------------------------------------------------------------------- the end shape moves the answer

STIFF = 1e5          # body modulus / lining modulus, as clutchfe/verification/limits.py (rigid bodies)


def _stiff_cone(bonded_to, shape):
    stiff = {"youngs_modulus": STIFF * 400.0}
    data = with_tables(CONE, lining={"youngs_modulus": 400.0, "bonded_to": bonded_to, "end_shape": shape},
                       cone=stiff, cup=stiff)
    return clutchfe.analyse(case_from_dict(data, limit_case=True), fields=False).comparison.capacity_position


def test_end_shape_moves_the_capacity_position_of_a_stiff_body_cone():
    xi = {(b, s): _stiff_cone(b, s) for b in ("cone", "cup") for s in SHAPES}
    # Measured with this code (not a published value), lining on the cone / on the cup:
    #   normal_to_axis 0.576 / 1.376, normal_to_face 0.990 / 0.976, chamfer 1.045 / 1.035.
    # Direction (common practice): the end of a parallelogram lining whose face corner is acute
    # is softer than the obtuse one, so the pressure moves away from it; on the cone the acute face
    # corner is at r2 (pressure towards r1, ξ < 1), on the cup at r1 (towards r2, ξ > 1).  Square
    # ends are the same at both ends (ξ near 1 on either body), and 135° chamfered corners stiffen both.
    assert xi[("cone", "normal_to_axis")] < xi[("cone", "normal_to_face")] - 0.25
    assert xi[("cup", "normal_to_axis")] > xi[("cup", "normal_to_face")] + 0.25
    for body in ("cone", "cup"):
        assert xi[(body, "normal_to_face")] < xi[(body, "chamfer")] - 0.02
    assert abs(xi[("cone", "normal_to_face")] - xi[("cup", "normal_to_face")]) < 0.05
