"""All harmonics in one elimination (fem/harmonic_condense.py, fem/multifrontal.py) against plain solves.

References: the compliance C(n) = Gᵀ K(n)⁻¹ G from scipy's spsolve, one solve per contact force, on
each harmonic's own matrix (its definition; Zienkiewicz & Taylor, "axisymmetric solids under
non-symmetric load", for the harmonic stiffness and the axis conditions); the Schur complement
S = K_kk − K_ki K_ii⁻¹ K_ik from dense linear algebra (block elimination; common practice).
"""
import numpy as np
import pytest
import scipy.sparse as sp

from clutchfe.fem import FaceLoad, FeModel, SpringSupport
from clutchfe.fem import harmonic as harmonic_module
from clutchfe.fem.harmonic import harmonic_compliances
from clutchfe.fem.multifrontal import SharedElimination
from clutchfe.fem.tilted import TiltedContactSolver

from tests.helpers.models import Section, lined_blocks
from tests.helpers.solving import harmonic_compliance_by_spsolve


def _on_the_axis(order=2):
    """A ring pressed on a solid disc: nodes on r = 0 (the first harmonic has its own tie), none in contact."""
    sec = Section()
    sec.add_block("base", np.linspace(0.0, 15.0, 7), np.linspace(-5.0, 0.0, 4))
    sec.add_block("top", np.linspace(5.0, 15.0, 5), np.linspace(0.0, 4.0, 3))
    pair = sec.pair("s1", "top_bottom", "base_top", (0.0, -1.0))
    nt = sec.triangles.shape[1]
    return FeModel(sec.points, sec.triangles, sec.element_body, np.full(nt, 2e5), np.full(nt, 0.3), ["base", "top"],
                   [False, True], dict(sec.faces), loads=[FaceLoad("top_top", -2000.0)], contacts=[pair],
                   supports=[SpringSupport("base_bottom", axial_stiffness=None, radial_stiffness=None)],
                   element_order=order)


def _inputs(solver):
    hs, faces = solver.hs, solver.base.faces
    node_dofs = hs.dof3[np.vstack([f.dofs_a for f in faces] + [f.dofs_b for f in faces])]
    normals = np.vstack([np.tile(f.pair.normal_a / np.linalg.norm(f.pair.normal_a), (f.dofs_a.shape[0], 1))
                         for f in faces] * 2)
    pins = np.concatenate([hs.basis.nodal_dofs[:2, v] for v in solver.guide.values()])
    return hs, solver.G3, pins, node_dofs, normals


def _worst(C, reference):
    return np.abs(C - reference).max() / np.abs(reference).max()


@pytest.fixture(scope="module")
def annulus():
    return _inputs(TiltedContactSolver(lined_blocks(E_steel=2e5), "top", grid=8))


def test_every_harmonic_at_once_is_one_solve_per_force(annulus, monkeypatch):
    # no node on the axis: n = 1 holds what n >= 2 hold, and all eight go through the one elimination
    def factorised(*args):
        raise AssertionError("a harmonic was factorised on its own")

    monkeypatch.setattr(harmonic_module, "_condensed", factorised)
    hs, G3, pins, node_dofs, normals = annulus
    harmonics = list(range(1, 9))
    for n, C in zip(harmonics, harmonic_compliances(hs, harmonics, G3, pins, node_dofs, normals)):
        assert _worst(C, harmonic_compliance_by_spsolve(hs, G3, pins, n)) <= 1e-10


def test_a_section_on_the_axis_factorises_only_the_first_harmonic(monkeypatch):
    # n = 1 ties U_θ to -U_r on the axis and holds other dofs: it is condensed on its own, n >= 2 at once
    solver = TiltedContactSolver(_on_the_axis(), "top", grid=8)
    hs, G3, pins, node_dofs, normals = _inputs(solver)
    assert hs.axis_nodes().size
    alone, real = [], harmonic_module._condensed

    def condensed(hs, group, *args):
        alone.append(list(group))
        return real(hs, group, *args)

    monkeypatch.setattr(harmonic_module, "_condensed", condensed)
    harmonics = [1, 2, 3, 4, 7]
    fast = harmonic_compliances(hs, harmonics, G3, pins, node_dofs, normals)
    assert alone == [[1]]
    for n, C in zip(harmonics, fast):
        assert _worst(C, harmonic_compliance_by_spsolve(hs, G3, pins, n)) <= 1e-10


def test_where_the_elimination_does_not_apply_each_harmonic_is_factorised(annulus, monkeypatch):
    # the fallback splits n = 1 (its own matrix) from the others again
    monkeypatch.setattr(harmonic_module, "normal_compliances", lambda *args: None)
    hs, G3, pins, node_dofs, normals = annulus
    harmonics = [1, 2, 3, 6]
    for n, C in zip(harmonics, harmonic_compliances(hs, harmonics, G3, pins, node_dofs, normals)):
        assert _worst(C, harmonic_compliance_by_spsolve(hs, G3, pins, n)) <= 1e-9


def _random_stack(rng, nodes=40, per_node=2):
    """Three symmetric parts on one node-blocked pattern (a random graph of two parts, the second
    without kept dofs), positive definite for positive coefficients; and the kept dofs."""
    edges = [(i, i + 1) for i in range(nodes - 1) if i != nodes // 2 - 1]
    edges += [tuple(rng.choice(nodes // 2, 2, replace=False)) for _ in range(nodes)]
    A = sp.coo_matrix((np.ones(len(edges)), tuple(np.array(edges).T)), shape=(nodes, nodes))
    pattern = ((A + A.T + sp.identity(nodes)) != 0).astype(float)
    block = sp.kron(pattern, np.ones((per_node, per_node))).tocsr()
    parts = []
    for _ in range(3):
        M = block.multiply(rng.uniform(-1.0, 1.0, block.shape))
        M = (M + M.T).tocsr()
        parts.append(M + sp.diags(abs(M).sum(axis=1).A1 + 1.0))       # diagonally dominant
    node = np.repeat(np.arange(nodes), per_node)
    keep = np.array([0, 3, 7, 8, 13])                                  # in the first part only
    return parts, node, keep


def _dense_schur(K, keep):
    rest = np.setdiff1d(np.arange(K.shape[0]), keep)
    return K[np.ix_(keep, keep)] - K[np.ix_(keep, rest)] @ np.linalg.solve(K[np.ix_(rest, rest)], K[np.ix_(rest, keep)])


def _elimination(parts, node, keep):
    U = sum(abs(K) for K in parts).tocsr()
    U.sort_indices()
    values = np.stack([np.asarray(K[U.nonzero()]).ravel() for K in parts], axis=1)
    return SharedElimination(U.indptr, U.indices, values, node, keep)


def test_the_schur_complement_of_every_set_in_the_stack():
    rng = np.random.default_rng(3)
    parts, node, keep = _random_stack(rng)
    coefficients = rng.uniform(0.2, 5.0, (4, 3))
    (kept, S), = _elimination(parts, node, keep).schur(coefficients)      # the part without kept dofs left out
    assert np.array_equal(np.sort(kept), keep)
    for c, Sc in zip(coefficients, S):
        K = sum(ci * Ki for ci, Ki in zip(c, parts)).toarray()
        reference = _dense_schur(K, kept)
        assert np.abs(Sc - reference).max() <= 1e-12 * np.abs(reference).max()


def test_a_wrong_node_map_is_refused_or_harmless():
    # dofs that do not share their pattern grouped as one node: the fronts' check refuses, or the answer
    # is still the Schur complement; never a wrong number
    rng = np.random.default_rng(5)
    parts, node, keep = _random_stack(rng)
    wrong = (np.arange(node.size) + 1) // 3
    coefficients = np.array([[1.0, 2.0, 4.0]])
    try:
        blocks = _elimination(parts, wrong, keep).schur(coefficients)
    except np.linalg.LinAlgError:
        return
    K = sum(ci * Ki for ci, Ki in zip(coefficients[0], parts)).toarray()
    for kept, S in blocks:
        reference = _dense_schur(K, kept)
        assert np.abs(S[0] - reference).max() <= 1e-12 * np.abs(reference).max()


def test_the_stack_in_parts_is_the_stack_at_once():
    # where the largest front of the whole stack would not fit the memory budget, the sets go through
    # in parts: the same Schur complements (common practice: the sets are independent)
    rng = np.random.default_rng(4)
    parts, node, keep = _random_stack(rng)
    coefficients = rng.uniform(0.2, 5.0, (5, 3))
    whole = _elimination(parts, node, keep)
    (_, S), = whole.schur(coefficients)
    whole.MEMORY = 1                       # one set at a time
    (_, S1), = whole.schur(coefficients)
    assert S1.shape == S.shape and np.abs(S1 - S).max() <= 1e-13 * np.abs(S).max()
