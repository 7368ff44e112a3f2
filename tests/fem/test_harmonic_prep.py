"""The tilt preparation's shortcuts (fem/harmonic.py) against the plain computations they replace.

References: skfem's assembly of the harmonic bilinear form ``harmonic_elasticity`` at each n (the
form is the definition; Zienkiewicz & Taylor, "axisymmetric solids under non-symmetric load"), the
axis tie built entry by entry as its docstring states it, and the harmonic compliance Gᵀ K(n)⁻¹ G
from one sparse solve per contact force (scipy's spsolve) on each harmonic's own matrix.
"""
from dataclasses import replace

import numpy as np
import pytest
import scipy.sparse as sp
from skfem import asm

from clutchfe.fem import FeModel, SpringSupport, assemble
from clutchfe.fem.harmonic import HarmonicStiffness, harmonic_compliances, harmonic_elasticity, harmonic_parts
from clutchfe.fem.pairing import gap_operator, pair_face
from clutchfe.fem.tilted import TiltedContactSolver

from tests.helpers.models import Section, coarse_stiff_cone, lined_blocks
from tests.helpers.solving import harmonic_compliance_by_spsolve


@pytest.fixture(scope="module")
def cone():
    model, _ = coarse_stiff_cone()
    return model


@pytest.mark.parametrize("order", [1, 2])
def test_parts_equal_the_assembled_form_at_every_harmonic(order):
    model = lined_blocks(E_steel=2e5, order=order, nu_lining=0.25, elements=6)
    hs = HarmonicStiffness(assemble(model))
    Ka, Kb, Kc = harmonic_parts(hs.basis, model)
    nqp = hs.basis.X.shape[1]
    E = np.repeat(np.asarray(model.element_youngs_modulus, float)[:, None], nqp, 1)
    nu = np.repeat(np.asarray(model.element_poissons_ratio, float)[:, None], nqp, 1)
    for n in (0, 1, 2, 5, 24):
        reference = asm(harmonic_elasticity, hs.basis, E=E, nu=nu, n=float(n))
        assert abs(Ka + n * Kb + n * n * Kc - reference).max() <= 1e-12 * abs(reference).max()


def test_spring_supports_join_the_first_part_on_its_pattern():
    # K_a holds the spring beds (the plain sparse sum of the parts), on the pattern K_b and K_c share
    model = replace(lined_blocks(E_steel=2e5), supports=[SpringSupport("base_bottom", axial_stiffness=3e5,
                                                                        radial_stiffness=1e5)])
    hs = HarmonicStiffness(assemble(model))
    Ka, Kb, Kc = harmonic_parts(hs.basis, model)
    reference = Ka + hs._springs()
    assert abs(hs._springs()).max() > 0 and abs(hs._a - reference).max() <= 1e-15 * abs(reference).max()
    for K in (hs._a, hs._c):
        assert np.array_equal(K.indptr, hs._b.indptr) and np.array_equal(K.indices, hs._b.indices)


def test_axis_tie_is_the_stated_map():
    # a solid disc: P2 nodes on the axis (vertices and midpoints)
    sec = Section().add_block("disc", np.linspace(0.0, 10.0, 6), np.linspace(0.0, 4.0, 5))
    nt = sec.triangles.shape[1]
    model = FeModel(sec.points, sec.triangles, sec.element_body, np.full(nt, 2e5), np.full(nt, 0.3), ["disc"],
                    [False], dict(sec.faces), supports=[SpringSupport("disc_bottom")], element_order=2)
    hs = HarmonicStiffness(assemble(model))
    N = hs.basis.N
    reference = sp.identity(N, format="lil")
    nodes = hs.axis_nodes()
    for r_dof, t_dof in zip(hs.node_dofs(nodes, 0), hs.node_dofs(nodes, 2)):
        reference[t_dof, t_dof] = 0.0
        reference[t_dof, r_dof] = -1.0
    assert nodes.size and abs(hs.axis_tie(1) - reference.tocsr()).max() == 0.0
    assert abs(hs.axis_tie(3) - sp.identity(N)).max() == 0.0


def test_compliances_equal_one_solve_per_force(cone):
    # the harmonics of one pattern are eliminated together (fem/harmonic_condense.py): each must still
    # be the compliance of its own matrix
    solver = TiltedContactSolver(cone, "cone", grid=8)
    hs, G3 = solver.hs, solver.G3
    faces = solver.base.faces
    node_dofs = hs.dof3[np.vstack([f.dofs_a for f in faces] + [f.dofs_b for f in faces])]
    normals = np.vstack([np.tile(f.pair.normal_a / np.linalg.norm(f.pair.normal_a), (f.dofs_a.shape[0], 1))
                         for f in faces] * 2)
    pins = np.concatenate([hs.basis.nodal_dofs[:2, v] for v in solver.guide.values()])
    harmonics = [1, 2, 3, 4, 9]
    fast = harmonic_compliances(hs, harmonics, G3, pins, node_dofs, normals)
    for n, C in zip(harmonics, fast):
        reference = harmonic_compliance_by_spsolve(hs, G3, pins, n)
        assert np.abs(C - reference).max() <= 1e-9 * np.abs(reference).max()
    # the grid solver holds these compliances (harmonics 1 … 4 of its 8 angles); its stack was another,
    # and a matrix product over a stack may round the last bit by the stack's width
    assert all(np.abs(solver.op.C[n] - C).max() <= 1e-13 * np.abs(C).max() for n, C in zip(harmonics[:4], fast[:4]))


def test_the_prepared_grid_solver_is_unchanged_by_the_shortcuts(cone, monkeypatch):
    # the same tilted contact when every harmonic is condensed on its own (one SuperLU factorisation each,
    # no pattern, ordering or elimination shared)
    import clutchfe.fem.harmonic as harmonic
    shared = TiltedContactSolver(cone, "cone", grid=8).solve(tilt_deg=0.06)

    def one_at_a_time(hs, ns, *args):
        return [c for n in ns for c in real(hs, [n], *args)]

    real = harmonic.harmonic_compliances
    monkeypatch.setattr("clutchfe.fem.tilted.harmonic_compliances", one_at_a_time)
    alone = TiltedContactSolver(cone, "cone", grid=8).solve(tilt_deg=0.06)
    p, q = shared.interfaces[0].pressure, alone.interfaces[0].pressure
    assert np.abs(p - q).max() <= 1e-9 * np.abs(q).max()
    assert 0 < shared.interfaces[0].in_contact.mean() < 1          # part of the face open: a real test
