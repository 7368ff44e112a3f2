"""The normal-component condensation against the plain definition C = Gᵀ K⁻¹ G."""
import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import spsolve

from clutchfe.case import case_from_dict
from clutchfe.fem.condense import condense
from clutchfe.fem.solve import _condensation

from tests.helpers.solving import CONDENSE_CONE, condensation_problem, model_of

def _system():
    prep, faces, Gi, _ = condensation_problem(model_of(case_from_dict(CONDENSE_CONE)))
    return prep, faces, Gi


def test_trailing_block_gives_the_compliance_and_the_solves():
    # Schur complement identity: with the normal components last, L22 U22 = K_cc - K_ci K_ii^-1 K_ic,
    # and G^T K^-1 G = G_n^T S^-1 G_n (block elimination; linear algebra, common practice)
    prep, faces, Gi = _system()
    fast = _condensation(prep, faces)
    assert fast is not None
    reference = Gi.T @ spsolve(prep.K.tocsc(), Gi.toarray())
    C = fast.compliance(Gi)
    assert np.abs(C - reference).max() <= 1e-9 * np.abs(reference).max()
    b = np.random.default_rng(1).standard_normal(prep.K.shape[0])
    x = fast.solve(b)
    assert np.linalg.norm(prep.K @ x - b) <= 1e-9 * np.linalg.norm(b)


def test_shared_or_missing_dofs_fall_back():
    prep, faces, Gi = _system()
    dofs = np.vstack([np.arange(4).reshape(2, 2), np.arange(4).reshape(2, 2)])   # the same node twice
    assert condense(prep.K, dofs, np.tile([1.0, 0.0], (4, 1))) is None
    assert condense(prep.K, np.array([[-1, 3]]), np.array([[1.0, 0.0]])) is None
    assert condense(sp.identity(4, format="csc"), np.zeros((0, 2), dtype=int), np.zeros((0, 2))) is None
