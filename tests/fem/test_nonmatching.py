"""Contact faces whose nodes do not match: the dual mortar pairing of fem/projection.py.

Each check runs on meshes whose two faces have different node spacings, against the same
closed forms and tolerances as the matching-mesh tests of test_contact.py.
"""
import dataclasses

import numpy as np
import pytest

from clutchfe.case import load_case
from clutchfe.fem import ContactPair, ContactSolver, FaceLoad, FacePressure, SpringSupport, assemble, solve
from clutchfe.fem.pairing import gap_operator, pair_face
from clutchfe.fem.projection import MORTAR, chain, coincident_vertices, mortar_weights
from clutchfe.fem.solve import _condensation
from clutchfe.geometry import GeometryError, build_section, mesh_section
from clutchfe.verification.contact import (HERTZ_A, HERTZ_BLOCK, HERTZ_DEPTH, HERTZ_H, HERTZ_R, RIGID_BASE,
                                          axis_settlement_half_space, e_star)
from clutchfe.verification.meshes import BlockSection, graded
from clutchfe.verification.solids import STEEL_E, STEEL_NU

from tests.helpers.data import ROOT
from tests.helpers.solving import assert_hertz_pressure, condensation_problem, solved_case

E, NU = 210000.0, 0.3


def _pair(s, name, face_a, face_b, normal_a, gap=None):
    va, vb = s.vertices_on(face_a), s.vertices_on(face_b)
    vp = coincident_vertices(s.points, va, vb)          # −1 where face B has no vertex at the place
    return ContactPair(name, face_a, face_b, normal_a, vp, np.zeros(va.size) if gap is None else gap(s.points[:, va]))


# ------------------------------------------------------------- the pairing itself ----
def _blocks(r_a, r_b, order=2, z_top=2.0):
    s = BlockSection().add_block("low", r_b, np.linspace(-2.0, 0.0, 5)).add_block("up", r_a, np.linspace(0.0, z_top, 5))
    pair = _pair(s, "c", "up_bottom", "low_top", (0.0, -1.0))
    model = s.model([E, 0.5 * E], [NU, 0.2], [False, True], supports=[RIGID_BASE], loads=[FaceLoad("up_top", -2000.0)],
                    contacts=[pair], element_order=order)
    return s, model, pair


@pytest.mark.parametrize("order", [1, 2])
def test_dual_weights_on_coincident_faces_are_the_identity(order):
    # the dual basis satisfies ∫ψ_j N_k = δ_jk ∫N_k (Wohlmuth, SIAM J. Numer. Anal. 38 (2000) 989),
    # so on coincident faces the mortar is node-to-node pairing
    r = np.array([0.0, 0.4, 1.1, 1.5, 2.6, 3.0, 4.2, 5.0])
    _, model, pair = _blocks(r, r, order)
    system = assemble(model)
    t = np.array([1.0, 0.0])
    fa, fb = system.facets["up_bottom"], system.facets["low_top"]
    a = chain(system.mesh.p, system.mesh.facets[:, fa], fa, order, t)
    b = chain(system.mesh.p, system.mesh.facets[:, fb], fb, order, t)
    nodes = np.concatenate([np.unique(system.mesh.facets[:, fa])] + ([-1 - fa] if order == 2 else []))
    pa = _positions(system, nodes)
    w = mortar_weights(a, b, order, nodes, pa, 1e-9)
    # each A node's weight sits on the B node at its place
    pb = _positions(system, w.nodes_b)
    dense = w.w.toarray()
    at = np.argmin(np.abs(pa[:, None] - pb[None]), axis=1)
    expected = np.zeros_like(dense)
    expected[np.arange(nodes.size), at] = 1.0
    mortar = w.status == MORTAR
    assert mortar.sum() >= nodes.size - 1         # all but the P2 vertex on the axis (no ring area)
    assert np.abs(dense - expected).max() <= 1e-12


def _positions(system, nodes):
    mesh = system.mesh
    v, m = nodes[nodes >= 0], -1 - nodes[nodes < 0]
    out = np.empty(nodes.size)
    out[nodes >= 0] = mesh.p[0, v]
    out[nodes < 0] = mesh.p[0, mesh.facets[:, m]].mean(axis=0)
    return out


def test_faces_that_match_keep_the_node_to_node_path_bit_for_bit():
    # given without partners, coincident faces are found to match: the same G as with explicit pairs
    r = np.linspace(0.0, 5.0, 11)
    s, model, pair = _blocks(r, r)
    system = assemble(model)
    explicit = s.pair("c", "up_bottom", "low_top", (0.0, -1.0))
    unknown = dataclasses.replace(pair, vertex_pairs=np.vstack([pair.vertex_pairs[0], -np.ones_like(pair.vertex_pairs[0])]))
    f1, f2 = pair_face(system, explicit), pair_face(system, unknown)
    assert f1.matching and f2.matching
    G1, G2 = gap_operator(system, [f1])[0], gap_operator(system, [f2])[0]
    assert (G1 != G2).nnz == 0


def test_face_b_shorter_leaves_the_nodes_beyond_it_out():
    # common practice: a slave node that projects outside the master face has nothing to touch
    s = BlockSection().add_block("low", np.linspace(0.0, 3.7, 9), np.linspace(-2.0, 0.0, 5))
    s.add_block("up", np.linspace(0.0, 5.0, 11), np.linspace(0.0, 2.0, 5))
    pair = _pair(s, "c", "up_bottom", "low_top", (0.0, -1.0))
    model = s.model([E, E], [NU, NU], [False, True], supports=[RIGID_BASE], loads=[FaceLoad("up_top", -2000.0)],
                    contacts=[pair])
    solver = ContactSolver(model)
    face = solver.faces[0]
    assert not face.matching
    assert face.xy[0].max() <= 3.7 + 1e-9
    assert np.allclose(face.left_out[0], [3.75, 4.0, 4.25, 4.5, 4.75, 5.0])        # P2: midpoints too
    assert face.projected >= 1             # the node at 3.5 (its support reaches past 3.7) is collocated
    res = solver.solve()
    it = res.interfaces[0]
    assert np.allclose(it.left_out, face.left_out)
    assert np.sum(it.normal_force) == pytest.approx(2000.0, rel=1e-10)
    assert res.axial_force_balance_error < 1e-10
    with pytest.raises(ValueError, match="do not match"):
        face.dofs_b             # analyses that need a partner node per node refuse such faces


def test_faces_off_one_line_are_refused():
    s, model, pair = _blocks(np.linspace(0.0, 5.0, 8), np.linspace(0.0, 5.0, 11))
    model.points = model.points.copy()
    model.points[1, s.vertices_on("low_top")[3]] -= 0.01
    with pytest.raises(ValueError, match="one straight line"):
        solve(model)


# ------------------------------------------------------------------- patch tests ----
# Contact patch test (Taylor & Papadopoulos, "On a patch test for contact problems in two
# dimensions", 1991): a
# uniform stress state must pass a non-matching interface exactly.  A linear displacement
# field is in the P1 and P2 spaces, so the exact solution is the discrete one and only
# round-off remains (~1e-13 measured; 1e-10 leaves room for the factorisation's).
GRIDS = {"coarser": np.linspace(0.0, 5.0, 8), "irregular": np.array([0.0, 0.3, 1.1, 1.7, 2.9, 3.3, 4.4, 5.0]),
         "finer": np.linspace(0.0, 5.0, 16)}


@pytest.mark.parametrize("order", [1, 2])
@pytest.mark.parametrize("grid", list(GRIDS))
def test_patch_flat_interface_uniaxial(order, grid):
    # two blocks of different materials under a uniform axial load: sigma_zz = -W/A everywhere,
    # the other stresses zero (uniaxial stress; Timoshenko & Goodier 1970)
    _, model, _ = _blocks(GRIDS[grid], np.linspace(0.0, 5.0, 11), order)
    res = solve(model)
    p = 2000.0 / (np.pi * 25.0)
    it = res.interfaces[0]
    assert np.all(it.in_contact)
    assert np.abs(it.pressure / p - 1.0).max() <= 1e-10
    st = res.stress
    assert np.abs(st["zz"] + p).max() <= 1e-10 * p
    assert max(np.abs(st[k]).max() for k in ("rr", "tt", "rz")) <= 1e-10 * p


@pytest.mark.parametrize("order", [1, 2])
@pytest.mark.parametrize("grid", list(GRIDS))
def test_patch_conical_interface_hydrostatic(order, grid):
    # a conical interface z = c (r - 1) under pressure p on every free face: sigma = -p I in both
    # bodies (hydrostatic stress, u linear; Timoshenko & Goodier 1970), the traction on the cone
    # purely normal, so frictionless contact passes it; the face normal is not along an axis
    c, p = 0.4, 7.0
    r_a = 1.0 + 0.8 * GRIDS[grid]
    s = BlockSection().add_block("low", np.linspace(1.0, 5.0, 9), np.linspace(-2.0, 0.0, 5))
    s.add_block("up", r_a, np.linspace(0.0, 2.0, 5))
    z = s.points[1]
    s.points[1] = z + c * (s.points[0] - 1.0) * (1.0 - np.abs(z) / 2.0)     # flat top and bottom kept
    n = np.array([c, -1.0]) / np.hypot(c, 1.0)
    pair = _pair(s, "c", "up_bottom", "low_top", tuple(n))
    loads = [FacePressure(f, p) for f in ("up_top", "up_outer", "up_inner", "low_outer", "low_inner")]
    model = s.model([E, 0.4 * E], [NU, 0.2], [False, True], supports=[SpringSupport("low_bottom", None, 0.0)],
                    loads=loads, contacts=[pair], element_order=order)
    res = solve(model)
    it = res.interfaces[0]
    assert np.all(it.in_contact)
    assert np.abs(it.pressure / p - 1.0).max() <= 1e-10
    st = res.stress
    assert max(np.abs(st[k] + p).max() for k in ("rr", "zz", "tt")) <= 1e-10 * p
    assert np.abs(st["rz"]).max() <= 1e-10 * p


def test_condensation_with_several_b_nodes_per_force():
    # C = Gᵀ K⁻¹ G by the normal-component condensation against one sparse solve per force
    # (Schur complement identity; linear algebra, common practice)
    _, model, _ = _blocks(GRIDS["irregular"], np.linspace(0.0, 5.0, 11))
    prep, faces, Gi, reference = condensation_problem(model)
    assert not faces[0].matching and faces[0].weights.getnnz(axis=1).max() > 1
    fast = _condensation(prep, faces)
    assert fast is not None
    C = fast.compliance(Gi)
    assert np.abs(C - reference).max() <= 1e-9 * np.abs(reference).max()


# ------------------------------------------------------------------------- Hertz ----
def _hertz(h_b):
    """The verify suite's Hertz blocks (clutchfe/verification/contact.py) with the upper block's
    radial node spacing h_b instead of HERTZ_H (face A, the lower block's, keeps HERTZ_H)."""
    Es = e_star(STEEL_E, STEEL_NU, STEEL_E, STEEL_NU)
    P = 4 * Es * HERTZ_A**3 / (3 * HERTZ_R)
    r = graded(0.0, 1.5, HERTZ_BLOCK, HERTZ_H)
    s = BlockSection().add_block("low", r, -r[::-1]).add_block("up", graded(0.0, 1.5, HERTZ_BLOCK, h_b), r)
    pair = _pair(s, "hertz", "low_top", "up_bottom", (0.0, 1.0))
    pair.initial_gap_function = lambda rr, zz: rr**2 / (2 * HERTZ_R)
    model = s.model([STEEL_E, STEEL_E], [STEEL_NU, STEEL_NU], [False, True], supports=[RIGID_BASE],
                    loads=[FaceLoad("up_top", -P)], contacts=[pair])
    solver = ContactSolver(model)
    assert not solver.faces[0].matching
    return s, solver.solve(), P, Es


@pytest.fixture(scope="module", params=[1.5 / 22, 1.5 / 41], ids=["B coarser", "B finer"])
def hertz(request):
    return _hertz(request.param)


def test_hertz_non_matching(hertz):
    # a^3 = 3PR/(4E*), p0 = 3P/(2 pi a^2), approach a^2/R (Johnson, Contact Mechanics 1985, §4.2);
    # the tolerances of test_contact.py's matching-mesh checks
    s, res, P, Es = hertz
    R = HERTZ_R
    a, p0 = assert_hertz_pressure(res.interfaces[0], P, Es, R, HERTZ_H)
    it = res.interfaces[0]
    local = a**2 / R - 2 * axis_settlement_half_space(HERTZ_DEPTH, p0, a, E, NU)
    fe = res.displacement[1, s.vertex_at(0.0, -HERTZ_DEPTH)] - res.displacement[1, s.vertex_at(0.0, HERTZ_DEPTH)]
    assert fe == pytest.approx(local, rel=2e-2)
    assert np.sum(it.normal_force) == pytest.approx(P, rel=1e-10)
    assert res.axial_force_balance_error < 1e-10
    assert np.all(it.pressure >= 0) and np.all(it.gap >= 0)


# -------------------------------------------------------------------- flat punch ----
@pytest.mark.parametrize("n_punch", [32, 53], ids=["punch coarser", "punch finer"])
def test_rigid_flat_punch_non_matching(n_punch):
    # P / delta = 2 a E* (Johnson 1985 §3.8; Sneddon 1965), read as in test_contact.py; the punch
    # face (face A) has n_punch nodes on [0, a] against the block's 41
    a, P = 1.0, 1000.0
    block = graded(0.0, 1.5, 40.0 * a, 0.025 * a)
    s = BlockSection().add_block("low", block, -block[::-1])
    s.add_block("punch", np.linspace(0.0, a, n_punch), np.linspace(0.0, 0.5 * a, 11))
    top = s.faces["low_top"]
    s.faces["low_top_centre"] = top[:, s.points[0, top].max(axis=0) <= a + 1e-12]
    pair = _pair(s, "punch", "punch_bottom", "low_top_centre", (0.0, -1.0))
    model = s.model([STEEL_E, 1e4 * STEEL_E], [STEEL_NU, STEEL_NU], [False, True], supports=[RIGID_BASE],
                    loads=[FaceLoad("punch_top", -P)], contacts=[pair])
    solver = ContactSolver(model)
    assert not solver.faces[0].matching
    res = solver.solve()
    r1 = 2.0 * a
    centre = [i for i in s.vertices_on("punch_bottom") if s.points[0, i] == 0.0][0]
    settle = res.displacement[1, s.vertex_at(r1, 0.0)] - res.displacement[1, centre]
    delta = settle / (1 - 2 / np.pi * np.arcsin(a / r1))
    assert P / delta == pytest.approx(2 * a * e_star(STEEL_E, STEEL_NU, 1e4 * STEEL_E, STEEL_NU), rel=2e-2)
    it = res.interfaces[0]
    assert np.all(it.in_contact) and np.all(it.pressure >= 0)
    assert np.sum(it.normal_force) == pytest.approx(P, rel=1e-10)


# ------------------------------------------------------------------ the mesher ----
def _cone_section(**interface):
    case = load_case(ROOT / "cases" / "cone_capstan.toml")
    section = build_section(case)
    section.interfaces = [dataclasses.replace(i, **interface) for i in section.interfaces]
    return case, section


def test_mesher_default_keeps_matching_nodes():
    _, section = _cone_section()
    mesh = mesh_section(section)
    pairs = mesh.interface_pairs["s1"]
    a, b = mesh.interface_sides["s1"]
    assert np.array_equal(pairs[:, 0], a) and np.array_equal(pairs[:, 1], b)
    assert np.abs(mesh.points[a] - mesh.points[b]).max() <= 1e-9


@pytest.mark.parametrize("spacing", [1.4, 0.7])
def test_mesher_non_matching_faces(spacing):
    _, section = _cone_section(matching_nodes=False, face_b_spacing=spacing)
    mesh = mesh_section(section)
    a, b = mesh.interface_sides["s1"]
    assert (len(b) < len(a)) if spacing > 1 else (len(b) > len(a))
    pairs = mesh.interface_pairs["s1"]
    assert np.array_equal(pairs[:, 0], a)
    found = pairs[:, 1] >= 0
    assert found[0] and found[-1]                    # the face ends are one point on both faces
    assert found.sum() < len(a) // 2
    assert np.abs(mesh.points[pairs[found, 0]] - mesh.points[pairs[found, 1]]).max() <= 1e-9


def test_mesher_refuses_a_bad_spacing():
    _, section = _cone_section(matching_nodes=False, face_b_spacing=0.0)
    with pytest.raises(GeometryError, match="face_b_spacing"):
        mesh_section(section)


# --------------------------------------------------------------- the demo cone ----
def test_demo_cone_non_matching_against_matching():
    # cases/cone_capstan.toml through the pipeline's own model (tests/helpers/solving.py), face B
    # (the cup) meshed 1.4 x coarser than the lining.  The pairing must not move the results by
    # more than a fifth of the mesh's own error: refining the matching mesh 2 x moves xi by 5e-3
    # and the effective radius by 2e-5 (measured, docs/solver-notes.md), so 1e-3 and 4e-6
    # (measured here: 6e-5 and 2.5e-7).  Common practice for a change of discretisation.
    case, section = _cone_section()
    matching = solved_case(case, mesh=mesh_section(section))
    _, section = _cone_section(matching_nodes=False, face_b_spacing=1.4)
    other = solved_case(case, mesh=mesh_section(section))
    assert matching.solver.faces[0].matching and not other.solver.faces[0].matching
    ref, res = matching.result, other.result
    assert res["capacity_position"] == pytest.approx(ref["capacity_position"], rel=1e-3)
    assert res["effective_radius_mm"] == pytest.approx(ref["effective_radius_mm"], rel=4e-6)
    assert res["torque_fe_Nm"] == pytest.approx(ref["torque_fe_Nm"], rel=4e-6)
    assert other.fe.axial_force_balance_error < 1e-10
