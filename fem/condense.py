"""Condensation of the stiffness onto the interface normal displacements.

The contact problem needs only the compliance C = Gᵀ K⁻¹ G between the normal
forces of the paired nodes.  Solving K once per contact node costs several
factorisations' worth of triangular solves, so instead:

1. rotate the displacements of every contact node into (normal, tangential)
   components, so that G touches only the normal components;
2. order those normal components last, everything else by a fill-reducing
   ordering (multiple minimum degree on AᵀA + A, docs/solver-notes.md);
3. factorise once without pivoting; the trailing block of the factors is the
   Schur complement S onto the normal components (K = LU with the last block
   giving S = L₂₂U₂₂), so C = Gₙᵀ S⁻¹ Gₙ is a small dense solve.

Measured at 1.3–1.8 × one linear solve (docs/solver-notes.md).  The same factors
then serve every solve with K.  If the matrix asks for pivoting, or a contact
node's dofs are held or shared, :func:`condense` returns None and the caller
falls back to one solve per contact force.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.linalg import cho_factor, cho_solve
from scipy.sparse.linalg import spilu, splu


class NormalCondensation:
    def __init__(self, lu, order, rotation, normal_slots, schur):
        self.lu = lu
        self.order = order              # factor position -> dof
        self.R = rotation               # old dofs <- (normal, tangential) dofs
        self.normal_slots = normal_slots
        self.schur = cho_factor(schur)

    def solve(self, b: np.ndarray) -> np.ndarray:
        rhs = self.R.T @ b
        x = np.empty_like(rhs)
        x[self.order] = self.lu.solve(rhs[self.order])
        return self.R @ x

    def compliance(self, G: sp.spmatrix) -> np.ndarray:
        """C = Gᵀ K⁻¹ G for a G whose rows lie on the contact nodes' normal components."""
        Gr = (self.R.T @ G).tocsr()
        Gn = Gr[self.normal_slots].toarray()
        keep = np.ones(Gr.shape[0], dtype=bool)
        keep[self.normal_slots] = False
        stray = Gr[keep]
        worst = np.abs(stray.data).max(initial=0.0)
        if worst > 1e-12 * max(np.abs(Gn).max(initial=0.0), 1e-300):
            raise ValueError("G has tangential components: normals do not match the rotation")
        C = Gn.T @ cho_solve(self.schur, Gn)
        return 0.5 * (C + C.T)


def _fill_reducing_order(K) -> np.ndarray:
    # SuperLU computes its minimum-degree ordering before factorising; an incomplete
    # factorisation that drops everything gets that ordering at a fraction of the cost
    ilu = spilu(K, drop_tol=1e30, fill_factor=1.0, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                options=dict(SymmetricMode=True))
    return np.argsort(ilu.perm_c)


def _rotation(n: int, node_dofs: np.ndarray, normals: np.ndarray) -> sp.csr_matrix:
    r_dof, z_dof = node_dofs[:, 0], node_dofs[:, 1]
    nr, nz = normals[:, 0], normals[:, 1]
    # slot of r carries u_n = n·u, slot of z carries u_t = t·u with t = (-n_z, n_r)
    rows = np.concatenate([r_dof, r_dof, z_dof, z_dof])
    cols = np.concatenate([r_dof, z_dof, r_dof, z_dof])
    vals = np.concatenate([nr, -nz, nz, nr])
    others = np.setdiff1d(np.arange(n), node_dofs.ravel())
    rows = np.concatenate([rows, others])
    cols = np.concatenate([cols, others])
    vals = np.concatenate([vals, np.ones(others.size)])
    return sp.csr_matrix((vals, (rows, cols)), shape=(n, n))


def condense(K, node_dofs: np.ndarray, normals: np.ndarray) -> NormalCondensation | None:
    """Factorise K (free dofs only) with the contact nodes' normal components last.

    ``node_dofs`` (k, 2): the r and z dof (indices into K) of every contact node;
    ``normals`` (k, 2): unit normal used for that node.  None if the fast path
    does not apply (the caller then uses an ordinary factorisation).
    """
    n = K.shape[0]
    if node_dofs.size == 0 or np.unique(node_dofs).size != node_dofs.size or (node_dofs < 0).any():
        return None
    R = _rotation(n, node_dofs, normals)
    Kr = (R.T @ K @ R).tocsc()
    slots = node_dofs[:, 0]
    is_normal = np.zeros(n, dtype=bool)
    is_normal[slots] = True
    mmd = _fill_reducing_order(Kr)
    order = np.concatenate([mmd[~is_normal[mmd]], slots])
    lu = splu(Kr[order][:, order].tocsc(), permc_spec="NATURAL", diag_pivot_thresh=0.0,
              options=dict(SymmetricMode=True))
    identity = np.arange(n)
    if not (np.array_equal(lu.perm_r, identity) and np.array_equal(lu.perm_c, identity)):
        return None
    m = slots.size
    L22 = lu.L[:, n - m:].tocsr()[n - m:].toarray()
    U22 = lu.U[:, n - m:].tocsr()[n - m:].toarray()
    schur = L22 @ U22
    try:
        return NormalCondensation(lu, order, R, slots, 0.5 * (schur + schur.T))
    except np.linalg.LinAlgError:
        return None
