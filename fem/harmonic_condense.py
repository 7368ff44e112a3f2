"""The contact-normal compliances of many harmonics of one pattern, from one elimination.

The harmonics n ≥ 2 of fem/harmonic.py (and n = 1 where no node lies on the axis) hold the same dofs,
so their stiffnesses K(n) = K_a + n K_b + n² K_c share one pattern, and each is needed only through
C(n) = Gᵀ K(n)⁻¹ G.  Factorising them one at a time with SuperLU was 80 % of the tilt preparation
(docs/solver-notes.md, "Tilt preparation").  Here the contact nodes' displacements are rotated into
(normal, tangential) components, as fem/condense.py does, so that G touches only the normals; the
three parts are rotated in place on their common pattern (no sparse products), and
:class:`fem.multifrontal.SharedElimination` gives the Schur complement S(n) onto the normals of
every harmonic at once, so C(n) = Gₙᵀ S(n)⁻¹ Gₙ body by body.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from .multifrontal import SharedElimination, concat_ranges


def _union_values(parts: list, n: int):
    """(indptr, indices) of the union of the parts' patterns (canonical CSR) and the parts' values on it
    (entries, parts); the largest pattern itself where it holds the others (the harmonic parts share one)."""
    csr = []
    for K in parts:
        K = sp.csr_matrix(K)
        K.sum_duplicates()
        csr.append(K)
    big = max(csr, key=lambda K: K.nnz)
    for attempt in range(2):
        key = np.repeat(np.arange(n, dtype=np.int64), np.diff(big.indptr)) * n + big.indices
        values = np.zeros((key.size, len(csr)))
        for i, K in enumerate(csr):
            if K.nnz == big.nnz and np.array_equal(K.indptr, big.indptr) and np.array_equal(K.indices, big.indices):
                values[:, i] = K.data
                continue
            kk = np.repeat(np.arange(n, dtype=np.int64), np.diff(K.indptr)) * n + K.indices
            at = np.minimum(np.searchsorted(key, kk), key.size - 1)
            if not np.array_equal(key[at], kk):
                break
            values[at, i] = K.data
        else:
            return big.indptr.astype(np.int64), big.indices.astype(np.int64), values
        big = sum(abs(K) for K in csr).tocsr()        # not inside the largest: the union (abs: no cancellation)
        big.sum_duplicates()
    raise AssertionError("the union holds every part")


def _rotated_values(values, indptr, indices, node_dofs, normals):
    """Rᵀ Kₖ R for every part on the same pattern, R the rotation of :func:`_rotation`; None where the
    pattern does not allow it in place (a contact node's r and z rows not alike, or not symmetric)."""
    n = indptr.size - 1
    r, z = node_dofs[:, 0], node_dofs[:, 1]
    count = indptr[r + 1] - indptr[r]
    if not np.array_equal(count, indptr[z + 1] - indptr[z]):
        return None
    ir, iz = concat_ranges(indptr[r], count), concat_ranges(indptr[z], count)
    if not np.array_equal(indices[ir], indices[iz]):
        return None
    # the same entries seen from the columns: (j, r) and (j, z) for every (r, j)
    key = np.repeat(np.arange(n, dtype=np.int64), np.diff(indptr)) * n + indices
    cr, cz = indices[ir] * n + np.repeat(r, count), indices[ir] * n + np.repeat(z, count)
    jr, jz = np.minimum(np.searchsorted(key, cr), key.size - 1), np.minimum(np.searchsorted(key, cz), key.size - 1)
    if not (np.array_equal(key[jr], cr) and np.array_equal(key[jz], cz)):
        return None
    nr, nz = np.repeat(normals[:, 0], count)[:, None], np.repeat(normals[:, 1], count)[:, None]
    v = values.copy()
    for i_r, i_z in ((ir, iz), (jr, jz)):                  # Rᵀ K on the rows, then K R on the columns
        a, b = v[i_r], v[i_z]
        v[i_r], v[i_z] = nr * a + nz * b, nr * b - nz * a
    return v


def _rotation(n: int, node_dofs: np.ndarray, normals: np.ndarray) -> sp.csr_matrix:
    """Old dofs <- (normal, tangential) dofs at the contact nodes: the slot of r carries u·n, the
    slot of z carries u·t with t = (−n_z, n_r) (as fem/condense.py)."""
    r, z = node_dofs[:, 0], node_dofs[:, 1]
    nr, nz = normals[:, 0], normals[:, 1]
    others = np.ones(n, dtype=bool)
    others[node_dofs.ravel()] = False
    others = np.flatnonzero(others)
    return sp.csr_matrix((np.concatenate([nr, -nz, nz, nr, np.ones(others.size)]),
                          (np.concatenate([r, r, z, z, others]), np.concatenate([r, z, r, z, others]))), shape=(n, n))


def normal_compliances(parts: list, coefficients, node: np.ndarray, G: sp.spmatrix, node_dofs: np.ndarray,
                       normals: np.ndarray) -> np.ndarray | None:
    """C = Gᵀ K⁻¹ G (sets, forces, forces) for K = Σ cₖ Kₖ and every row of ``coefficients``, from one
    :class:`fem.multifrontal.SharedElimination` onto the contact nodes' normal components.

    ``parts`` (free dofs only), ``node`` the mesh node of each free dof, ``G`` (free dofs × forces) the
    gap operator, ``node_dofs`` (m, 2) the r, z dofs of the contact nodes and ``normals`` (m, 2) their
    unit normals, as fem/condense.py.  None where this does not apply: a contact node's dofs held
    or shared, G with a tangential part, or a front that is not positive definite.
    """
    n = parts[0].shape[0]
    if not node_dofs.size or (node_dofs < 0).any() or np.unique(node_dofs).size != node_dofs.size:
        return None
    R = _rotation(n, node_dofs, normals)
    Gr = (R.T @ G).tocsr()
    slots = node_dofs[:, 0]
    off = np.ones(n, dtype=bool)
    off[slots] = False
    if np.abs(Gr[off].data).max(initial=0.0) > 1e-12 * max(np.abs(Gr[slots].data).max(initial=0.0), 1e-300):
        return None
    indptr, indices, values = _union_values(parts, n)
    rotated = _rotated_values(values, indptr, indices, node_dofs, normals)
    if rotated is None:                                   # the same by sparse products
        indptr, indices, rotated = _union_values([R.T @ K @ R for K in parts], n)
    try:
        blocks = SharedElimination(indptr, indices, rotated, node, slots).schur(coefficients)
    except np.linalg.LinAlgError:
        return None
    H, m = np.shape(coefficients)[0], G.shape[1]
    C = np.zeros((H, m, m))
    for kept, S in blocks:
        Gn = Gr[kept]
        forces = np.unique(Gn.indices)                     # the contact forces acting on this body
        Gn = Gn[:, forces].toarray()
        X = np.linalg.solve(S, np.broadcast_to(Gn, (H,) + Gn.shape))
        C[:, forces[:, None], forces[None, :]] += Gn.T @ X
    return 0.5 * (C + C.transpose(0, 2, 1))
