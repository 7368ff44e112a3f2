"""Meshed sections against the analytic section: areas, Pappus volumes, named faces, node pairs."""
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from clutchfe.case import case_from_dict, load_case
from clutchfe.geometry import build_section, mesh_section
from clutchfe.plan import section_of

from tests.helpers.data import CASES, CONE, PLATE, write_toml


def _cross2(u, v):
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _mesh(data_or_path, order=1):
    case = load_case(data_or_path) if not isinstance(data_or_path, dict) else case_from_dict(data_or_path)
    section = build_section(case)
    return case, section, mesh_section(section, order=order)


# Straight-sided sections meshed with straight-sided triangles: areas and Pappus volumes agree to
# round-off (measured, HEAD 0f9d85f: at most 1e-15 relative), hence rel=1e-13 below.


def _meshed_area_and_volume(mesh, body):
    """Area and Pappus volume 2π∫r dA of the triangles of one body (exact for straight-sided triangles)."""
    regions = [k for k, b in enumerate(mesh.region_body) if b == body]
    tri = mesh.triangles[np.isin(mesh.triangle_region, regions), :3]
    p = mesh.points[tri]
    area = 0.5 * _cross2(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    assert (area > 0).all(), "every triangle counter-clockwise and non-degenerate"
    return area.sum(), 2 * math.pi * (area * p[:, :, 0].mean(axis=1)).sum()


def test_plate_bodies_match_closed_form_area_and_pappus_volume():
    case, section, mesh = _mesh(PLATE)
    r1, r2, t = case.interface.inner_radius, case.interface.outer_radius, case.lining.thickness
    d, pp, cp = case.disc, case.pressure_plate, case.counter_plate
    # annulus of inner radius a, outer b, thickness h: area (b - a) h, volume π (b² - a²) h (Pappus)
    expected = {
        "disc1": ((d.core_outer_radius - d.core_inner_radius) * d.core_thickness + 2 * (r2 - r1) * t,
                  math.pi * ((d.core_outer_radius**2 - d.core_inner_radius**2) * d.core_thickness
                             + 2 * (r2**2 - r1**2) * t)),
        "pressure_plate": ((pp.outer_radius - pp.inner_radius) * pp.thickness,
                           math.pi * (pp.outer_radius**2 - pp.inner_radius**2) * pp.thickness),
        "counter_plate": ((cp.outer_radius - cp.inner_radius) * cp.thickness,
                          math.pi * (cp.outer_radius**2 - cp.inner_radius**2) * cp.thickness),
    }
    for body, (area, volume) in expected.items():
        got_area, got_volume = _meshed_area_and_volume(mesh, body)
        assert got_area == pytest.approx(area, rel=1e-13)
        assert got_volume == pytest.approx(volume, rel=1e-13)
        assert section.body_volume(body) == pytest.approx(volume, rel=1e-12)


def test_cone_lining_matches_closed_form_and_bodies_match_their_polygons():
    case, section, mesh = _mesh(CONE)
    r1, r2, t = case.interface.inner_radius, case.interface.outer_radius, case.lining.thickness
    alpha = math.radians(case.interface.semi_cone_angle)
    slant = (r2 - r1) / math.sin(alpha)
    # the lining is a parallelogram: area = thickness x slant length; its centroid sits half a
    # thickness inside the face, i.e. t / (2 cos α) radially, at mid-height (Pappus: V = 2π r̄ A)
    area = t * slant
    volume = 2 * math.pi * ((r1 + r2) / 2 - t / (2 * math.cos(alpha))) * area
    k = mesh.region_names.index("cone_lining")
    tri = mesh.triangles[mesh.triangle_region == k]
    p = mesh.points[tri]
    a = 0.5 * _cross2(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    assert a.sum() == pytest.approx(area, rel=1e-13)
    assert 2 * math.pi * (a * p[:, :, 0].mean(axis=1)).sum() == pytest.approx(volume, rel=1e-13)
    for body in ("cone", "cup"):        # exact polygon of the parametric section (shoelace)
        polygon_area = sum(section.region_area_and_moment(r)[0] for r in section.regions if r.body == body)
        got_area, got_volume = _meshed_area_and_volume(mesh, body)
        assert got_area == pytest.approx(polygon_area, rel=1e-13)
        assert got_volume == pytest.approx(section.body_volume(body), rel=1e-13)


@pytest.mark.parametrize("path", CASES, ids=[p.stem for p in CASES])
def test_named_groups_exist_and_interface_nodes_coincide(path):
    case, section, mesh = _mesh(path)
    assert set(section.face_names()) <= set(mesh.faces)
    for name in section.face_names():
        assert len(mesh.faces[name]) > 0, name
    for k, name in enumerate(mesh.region_names):
        assert (mesh.triangle_region == k).any(), name
    for face in (section.load_face, section.support_axial_face, section.support_radial_face):
        assert len(mesh.faces[face]) > 0
    assert len(section.interfaces) == case.interface.friction_surfaces
    for itf in section.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        assert len(pairs) >= 5
        assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-9
        assert (pairs[:, 0] != pairs[:, 1]).all()        # distinct nodes: the bodies can separate
        # the two sides belong to different bodies
        for side, body in ((0, itf.body_a), (1, itf.body_b)):
            owners = {mesh.region_body[mesh.triangle_region[t]]
                      for t in np.nonzero(np.isin(mesh.triangles, pairs[:, side]).any(axis=1))[0]}
            assert owners == {body}


@pytest.mark.parametrize("angle", [8.0, 12.5, 20.0, 35.0])
def test_semi_cone_angle_measured_from_the_mesh(angle):
    data = {**CONE, "interface": {**CONE["interface"], "semi_cone_angle": angle}}
    case, section, mesh = _mesh(data)
    for face in ("s1_cone_face", "s1_cup_face"):
        nodes = np.unique(mesh.faces[face])
        r, z = mesh.points[nodes].T
        # least-squares line r = r0 + z tan(alpha); every node lies on it
        tan_alpha, r0 = np.polyfit(z, r, 1)
        assert abs(math.atan(tan_alpha) - math.radians(angle)) <= 1e-6
        assert np.abs(r - (r0 + z * tan_alpha)).max() <= 1e-9


def test_nodes_cluster_at_the_lining_ends():
    case, section, mesh = _mesh(CONE)
    pairs = mesh.interface_pairs["s1"]
    s = np.linalg.norm(mesh.points[pairs[:, 0]] - mesh.points[pairs[0, 0]], axis=1)
    h = np.diff(s)
    assert h[0] < 0.6 * h[len(h) // 2] and h[-1] < 0.6 * h[len(h) // 2]
    assert h[0] <= case.mesh.edge_element_size * 1.5
    assert h.max() <= case.mesh.interface_element_size * 1.5


def test_second_order_mesh_keeps_names_and_puts_mid_nodes_on_straight_edges():
    _, section, mesh = _mesh(CONE, order=2)
    assert mesh.triangles.shape[1] == 6
    p = mesh.points[mesh.triangles]
    for mid, (a, b) in zip((3, 4, 5), ((0, 1), (1, 2), (2, 0))):
        assert np.abs(p[:, mid] - 0.5 * (p[:, a] + p[:, b])).max() < 1e-9
    for name in section.face_names():
        assert mesh.faces[name].shape[1] == 3
    pairs = mesh.interface_pairs["s1"]
    assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-9


def test_lining_has_the_requested_layers():
    data = {**CONE, "mesh": {"lining_layers": 3}}
    case, section, mesh = _mesh(data)
    k = mesh.region_names.index("cone_lining")
    n_face = len(mesh.interface_pairs["s1"])
    # structured: (n_face - 1) intervals x layers quads, two triangles each
    assert (mesh.triangle_region == k).sum() == 2 * (n_face - 1) * 3


def test_meshing_is_deterministic():
    _, _, m1 = _mesh(PLATE)
    _, _, m2 = _mesh(PLATE)
    assert np.array_equal(m1.points, m2.points) and np.array_equal(m1.triangles, m2.triangles)


def test_multiplate_pack_stacks_discs_and_separators():
    data = {**PLATE, "interface": {**PLATE["interface"], "friction_surfaces": 6}}
    case, section, mesh = _mesh(data)
    roles = {b.name: b.role for b in section.bodies}
    assert roles == {"counter_plate": "supported", "disc1": "floating", "separator1": "floating",
                     "disc2": "floating", "separator2": "floating", "disc3": "floating",
                     "pressure_plate": "pressed"}
    z = [itf.start[1] for itf in section.interfaces]
    assert z == sorted(z) and len(set(z)) == 6


def test_lining_on_the_mating_body():
    cone = {**CONE, "lining": {"bonded_to": "cup"}}
    _, section, mesh = _mesh(cone)
    assert "cup_lining" in mesh.region_names and "cone_lining" not in mesh.region_names
    plate = {**PLATE, "lining": {"bonded_to": "plates"}}
    _, section, mesh = _mesh(plate)
    assert {"counter_plate_lining_top", "pressure_plate_lining_bottom"} <= set(mesh.region_names)


def test_ring_load_puts_a_vertex_at_the_ring_radius():
    data = {**PLATE, "load": {"axial_force": 4000.0, "application": "ring", "ring_radius": 101.3}}
    _, section, mesh = _mesh(data)
    nodes = np.unique(mesh.faces["pressure_plate_back"])
    assert np.abs(mesh.points[nodes, 0] - 101.3).min() < 1e-9


@settings(max_examples=12, deadline=None)
@given(r1=st.floats(20, 150), width=st.floats(5, 60), angle=st.floats(6, 60), t=st.floats(0.5, 4),
       ends=st.sampled_from(("normal_to_axis", "normal_to_face", "chamfer")), on=st.sampled_from(("cone", "cup")))
def test_random_valid_cones_mesh_with_matching_faces(r1, width, angle, t, ends, on):
    data = {**CONE, "interface": {**CONE["interface"], "inner_radius": r1, "outer_radius": r1 + width,
                                  "semi_cone_angle": angle},
            "lining": {"thickness": t, "end_shape": ends, "bonded_to": on}}
    try:
        case = case_from_dict(data)
        section = section_of(case)
    except Exception as exc:          # a rejected input must be a clean input error
        from clutchfe.case import CaseError
        assert isinstance(exc, CaseError)
        return
    mesh = mesh_section(section)
    pairs = mesh.interface_pairs["s1"]
    assert np.abs(mesh.points[pairs[:, 0]] - mesh.points[pairs[:, 1]]).max() <= 1e-9


def test_mesh_command_writes_a_readable_vtu_and_a_picture(tmp_path, capsys):
    import json

    import meshio

    from clutchfe._cli import main

    path = write_toml(tmp_path / "pack.toml", {**PLATE, "interface": {**PLATE["interface"], "friction_surfaces": 4}})
    out = tmp_path / "m"
    assert main(["mesh", str(path), "--out", str(out)]) == 0
    vtu = meshio.read(out / "mesh.vtu")
    assert "triangle6" in vtu.cells_dict                       # second order by default
    info = json.loads((out / "mesh.json").read_text())
    assert info["triangles"] == len(vtu.cells_dict["triangle6"])
    assert set(info["interface_node_pairs"]) == {"s1", "s2", "s3", "s4"}
    names = (out / "mesh.vtu.names.txt").read_text()
    assert "s4_pressure_plate_face" in names and "counter_plate_back" in names
    assert (out / "section.png").stat().st_size > 20_000


def _squares_section(*corners):
    """Unit squares with lower-left corners at ``corners`` (r, z), one region each."""
    from clutchfe.geometry import Region, Section
    points, regions = [], []
    for k, (r, z) in enumerate(corners):
        base = len(points)
        points += [(r, z), (r + 1.0, z), (r + 1.0, z + 1.0), (r, z + 1.0)]
        regions.append(Region(f"part{k}", f"part{k}", 2e5, 0.3, [base, base + 1, base + 2, base + 3], [None] * 4))
    return Section(kind="plate", points=points, regions=regions, bodies=[], interfaces=[], load_face="",
                   axial_force=1.0, ring_radius=None, support_axial_face="", support_radial_face="",
                   semi_cone_angle=90.0)


def test_overlapping_regions_are_refused_touching_ones_are_not():
    # two unit squares: apart, sharing an edge, sharing a corner (fine), overlapping by half (refused)
    from clutchfe.geometry import GeometryError, check_section
    for corners in [((5, 0), (7, 0)), ((5, 0), (6, 0)), ((5, 0), (6, 1))]:
        check_section(_squares_section(*corners))
    with pytest.raises(GeometryError) as exc:
        check_section(_squares_section((5, 0), (5.5, 0.25)))
    assert "bodies overlap: part0 and part1" in exc.value.problems[0]
    # the same square twice: no edge crosses another, the overlap is found by the inside probes
    with pytest.raises(GeometryError):
        check_section(_squares_section((5, 0), (5, 0)))
