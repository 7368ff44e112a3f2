"""The normal-component condensation (fem/condense.py) against the plain definition C = Gᵀ K⁻¹ G.

Reference: the compliance computed by one sparse solve per contact force on the same stiffness
(scipy's spsolve), independent of the ordering, the trailing-block reading and the body blocks the
condensation uses (block elimination: with the normal components last, the trailing block of the
factors is the Schur complement; linear algebra, common practice).
"""
import dataclasses

import numpy as np
import pytest

from clutchfe.case import case_from_dict, load_case
from clutchfe.fem import condense as cm
from clutchfe.fem.solve import _condensation

from tests.helpers.data import ROOT
from tests.helpers.models import Section, graded
from tests.helpers.solving import CONDENSE_CONE, condensation_problem, model_of

def _multiplate():
    # four lined discs between separators: nine bodies, eight faces, floating bodies (coarser mesh)
    case = load_case(ROOT / "cases" / "multiplate_gearbox.toml")
    return dataclasses.replace(case, mesh=dataclasses.replace(case.mesh, refinement=0.7))


def _problem(case):
    return condensation_problem(model_of(case))


@pytest.fixture(scope="module", params=["cone", pytest.param("multiplate", marks=pytest.mark.slow)])
def problem(request):
    if request.param == "cone":
        # refined so that the trailing block spans several supernodes (part of U22 then sits in
        # SuperLU's compressed U, not in the supernodes)
        case = case_from_dict(CONDENSE_CONE)
        return _problem(dataclasses.replace(case, mesh=dataclasses.replace(case.mesh, refinement=2.0))) + (1e-9,)
    # soft 0.8 mm linings between steel plates: K is ill-conditioned enough that two exact methods
    # differ by about 1e-9 of the largest entry (measured: the condensation before this change against
    # spsolve 1.6e-9, this one 0.7e-9, by hand 1.4e-9), so 1e-8 here; the cone is held to 1e-9
    return _problem(_multiplate()) + (1e-8,)


def _relative(C, reference):
    return np.abs(C - reference).max() / np.abs(reference).max()


def test_compliance_and_solves_equal_plain_solves(problem):
    prep, faces, Gi, reference, tol = problem
    fast = _condensation(prep, faces)
    assert fast is not None and fast.order is None          # one pass: SuperLU's ordering kept the normals last
    assert len(fast.blocks) == len({f.body_a for f in faces} | {f.body_b for f in faces})   # one block per body
    assert _relative(fast.compliance(Gi), reference) <= tol
    b = np.random.default_rng(1).standard_normal(prep.K.shape[0])
    assert np.linalg.norm(prep.K @ fast.solve(b) - b) <= 1e-9 * np.linalg.norm(b)


def test_in_place_read_equals_the_public_factors(problem):
    # the trailing block read from SuperLU's storage is the one scipy's L and U copies hold, bit for bit
    prep, faces, _, _, _ = problem
    fast = _condensation(prep, faces)
    m = fast.normal_slots.size
    read = cm._read_trailing(fast.lu, m)
    assert read is not None
    public = cm._public_trailing(fast.lu, m)
    assert np.array_equal(read[0], public[0]) and np.array_equal(read[1], public[1])


def test_normals_placed_last_by_hand_give_the_same_compliance(problem, monkeypatch):
    # without the clique, minimum degree leaves normals inside the order: the by-hand path runs
    prep, faces, Gi, reference, tol = problem
    monkeypatch.setattr(cm, "_with_clique", lambda A, group: (A, np.ones(A.nnz, dtype=bool)))
    fast = _condensation(prep, faces)
    assert fast is not None and fast.order is not None
    assert _relative(fast.compliance(Gi), reference) <= tol
    b = np.random.default_rng(2).standard_normal(prep.K.shape[0])
    assert np.linalg.norm(prep.K @ fast.solve(b) - b) <= 1e-9 * np.linalg.norm(b)


def test_a_misread_block_is_caught_and_read_again(problem, monkeypatch):
    # the check solve rejects a wrong trailing block; the public copies then give the right one
    prep, faces, Gi, reference, tol = problem
    real = cm._read_trailing
    monkeypatch.setattr(cm, "_read_trailing", lambda lu, m: tuple(1.01 * x for x in real(lu, m)))
    fast = _condensation(prep, faces)
    assert _relative(fast.compliance(Gi), reference) <= tol
    monkeypatch.setattr(cm, "_public_trailing", lambda lu, m: tuple(1.01 * x for x in real(lu, m)))
    assert _condensation(prep, faces) is None          # nothing trustworthy: the caller solves per force


def test_interior_dofs_left_among_the_normals_are_eliminated_densely():
    # two blocks pressed on a small face (a Hertz-like model): minimum degree leaves interior dofs
    # after the first normal; they are eliminated from the trailing block, with no second factorisation
    from clutchfe.fem import FaceLoad, SpringSupport
    r = graded(0.0, 1.5, 40.0, 0.1)
    s = Section().add_block("low", r, -r[::-1]).add_block("up", r, r)
    pair = s.pair("hertz", "low_top", "up_bottom", (0.0, 1.0))
    model = s.model([210000.0, 210000.0], [0.3, 0.3], [False, True], supports=[SpringSupport("low_bottom", None, 0.0)],
                    loads=[FaceLoad("up_top", -1500.0)], contacts=[pair])
    prep, faces, Gi, reference = condensation_problem(model)
    fast = _condensation(prep, faces)
    n, m = prep.K.shape[0], fast.normal_slots.size
    assert fast.order is None and np.asarray(fast.lu.perm_c)[fast.normal_slots].min() < n - m
    # the floating upper block, pinned at one dof, leaves round-off of ~2e-9 of the largest entry
    # between two exact methods (measured: spsolve with COLAMD against MMD 1.8e-9), so 1e-8 as for the
    # multiplate pack
    assert _relative(fast.compliance(Gi), reference) <= 1e-8
