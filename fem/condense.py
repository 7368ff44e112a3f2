"""Condensation of the stiffness onto the interface normal displacements.

The contact problem needs only the compliance C = Gᵀ K⁻¹ G between the normal
forces of the paired nodes.  Solving K once per contact node costs several
factorisations' worth of triangular solves, so instead:

1. rotate the displacements of every contact node into (normal, tangential)
   components, so that G touches only the normal components;
2. join the normal components into one clique of explicit zeros in the matrix's
   pattern and let SuperLU order it as always (MMD on AᵀA + A,
   docs/solver-notes.md): minimum degree then eliminates the clique last, and the
   rest of the ordering is computed knowing that it stays to the end (the
   ordering of the plain matrix with the normals moved last afterwards gave more
   fill, and a separate pass to get it cost a third of a factorisation);
3. one factorisation without pivoting; the trailing block of the factors is the
   Schur complement S onto the normal components (K = LU with the last block
   giving S = L₂₂U₂₂), so C = Gₙᵀ S⁻¹ Gₙ is a few small dense solves.  Where
   minimum degree left some interior dofs after the first normal, the trailing
   block from the first normal on is the Schur complement onto them and the
   normals together, and S⁻¹ is the normals' block of its inverse (no second
   factorisation).  Bodies never share nodes, so K and S are block-diagonal by
   body: the entries of the trailing block between two bodies are exact zeros,
   and each body's block is solved alone.

The trailing block is read straight from SuperLU's supernodal storage
(:func:`_read_trailing`, no copy of the factors); where that storage is not laid
out as expected, from the public ``L``/``U`` copies (about the factors' size again,
kept on the factor object).  Either read is checked by one solve.  The same
factors then serve every solve with K.  If the matrix asks for pivoting, or a
contact node's dofs are held or shared, :func:`condense` returns None and the
caller falls back to one solve per contact force.  Measured in docs/solver-notes.md.
"""
from __future__ import annotations

import ctypes

import numpy as np
import scipy.sparse as sp
from scipy.linalg import solve_triangular
from scipy.sparse.csgraph import connected_components
from scipy.sparse.linalg import splu


# SuperLU without pivoting, in the symmetric mode that keeps the fill-reducing order (docs/solver-notes.md,
# "Sparse LU ordering"), with small relaxed supernodes and panels: relax = 1, panel_size = 4 factorised the
# condensation's matrices 20 % faster than scipy's defaults at 7k-80k dofs and 5 % at 500k (measured; the
# plain factorisation of fem/solve.py keeps the defaults)
SUPERLU = dict(diag_pivot_thresh=0.0, relax=1, panel_size=4, options=dict(SymmetricMode=True))


class NormalCondensation:
    def __init__(self, lu, rotation, blocks, order=None):
        self.lu = lu
        self.R = rotation               # old dofs <- (normal, tangential) dofs
        self.order = order              # factor position -> dof when the matrix was permuted by hand
        self.blocks = blocks            # [(a body's normal slots, S⁻¹ of that body on them)]
        self.normal_slots = np.concatenate([slots for slots, _ in blocks])

    def solve(self, b: np.ndarray) -> np.ndarray:
        rhs = self.R.T @ b
        if self.order is None:
            return self.R @ self.lu.solve(rhs)
        x = np.empty_like(rhs)
        x[self.order] = self.lu.solve(rhs[self.order])
        return self.R @ x

    def normal_rows(self, G: sp.spmatrix) -> list:
        """For each body: the columns of G (contact forces) acting on it and G's rows on its normal
        components, dense; checked to have no tangential part.  The same for every condensation
        of one :class:`Condenser`, so a loop over its coefficient sets computes it once."""
        Gr = (self.R.T @ G).tocsr()
        keep = np.ones(Gr.shape[0], dtype=bool)
        keep[self.normal_slots] = False
        worst = np.abs(Gr[keep].data).max(initial=0.0)
        if worst > 1e-12 * max(np.abs(Gr[self.normal_slots].data).max(initial=0.0), 1e-300):
            raise ValueError("G has tangential components: normals do not match the rotation")
        rows = []
        for slots, _ in self.blocks:
            Gn = Gr[slots]
            cols = np.unique(Gn.indices)          # the contact forces that act on this body
            rows.append((cols, Gn[:, cols].toarray()))
        return rows

    def compliance(self, G: sp.spmatrix, rows: list | None = None) -> np.ndarray:
        """C = Gᵀ K⁻¹ G for a G whose rows lie on the contact nodes' normal components
        (``rows``: :meth:`normal_rows` of G, when already at hand)."""
        rows = self.normal_rows(G) if rows is None else rows
        C = np.zeros((G.shape[1], G.shape[1]))
        for (cols, Gn), (_, Sinv) in zip(rows, self.blocks):
            if cols.size:
                C[np.ix_(cols, cols)] += Gn.T @ (Sinv @ Gn)
        return 0.5 * (C + C.T)


def _rotation(n: int, node_dofs: np.ndarray, normals: np.ndarray) -> sp.csr_matrix:
    r_dof, z_dof = node_dofs[:, 0], node_dofs[:, 1]
    nr, nz = normals[:, 0], normals[:, 1]
    # slot of r carries u_n = n·u, slot of z carries u_t = t·u with t = (-n_z, n_r)
    rows = np.concatenate([r_dof, r_dof, z_dof, z_dof])
    cols = np.concatenate([r_dof, z_dof, r_dof, z_dof])
    vals = np.concatenate([nr, -nz, nz, nr])
    others = np.ones(n, dtype=bool)
    others[node_dofs.ravel()] = False
    others = np.flatnonzero(others)
    rows = np.concatenate([rows, others])
    cols = np.concatenate([cols, others])
    vals = np.concatenate([vals, np.ones(others.size)])
    return sp.csr_matrix((vals, (rows, cols)), shape=(n, n))


def _with_clique(A: sp.csc_matrix, group: np.ndarray):
    """A (csc, sorted indices) with explicit zeros joining the indices ``group`` into a clique (the
    same matrix, a different pattern for the ordering), and the mask of its entries that were A's."""
    n, indptr, indices = A.shape[0], A.indptr, A.indices
    group = np.sort(group).astype(np.int64)
    # the entries A already has in the group's columns, as sorted keys column * n + row
    counts = np.diff(indptr)[group]
    at = np.repeat(indptr[group] - np.cumsum(counts) + counts, counts) + np.arange(counts.sum())
    col = np.repeat(group, counts)
    have = col * n + indices[at]
    want = (group[:, None] * n + group[None, :]).ravel()          # sorted: columns, then rows
    want = want[~np.isin(want, have, assume_unique=True)]
    if not want.size:
        return A, np.ones(A.nnz, dtype=bool)
    c = want // n
    # insertion point: the column's start plus its entries above the new row
    pos = indptr[c] + np.searchsorted(have, want) - np.searchsorted(have, c * n)
    dest = pos + np.arange(want.size)                              # where each new entry lands
    keep = np.ones(A.nnz + want.size, dtype=bool)
    keep[dest] = False
    data = np.zeros(A.nnz + want.size)
    data[keep] = A.data
    rows = np.empty(A.nnz + want.size, dtype=indices.dtype)
    rows[keep] = indices
    rows[dest] = want - c * n
    ptr = indptr.copy()
    ptr[1:] += np.cumsum(np.bincount(c, minlength=n)).astype(ptr.dtype)
    out = sp.csc_matrix((data, rows, ptr), shape=A.shape)
    out.has_sorted_indices = True
    return out, keep


def _on_pattern(M: sp.csc_matrix, U: sp.csc_matrix) -> np.ndarray:
    """M's values on U's entries (U canonical csc with M's pattern inside it), zero elsewhere."""
    n = U.shape[0]
    ucol = np.repeat(np.arange(U.shape[1], dtype=np.int64), np.diff(U.indptr))
    mcol = np.repeat(np.arange(M.shape[1], dtype=np.int64), np.diff(M.indptr))
    where = np.searchsorted(ucol * n + U.indices, mcol * n + M.indices)
    data = np.zeros(U.nnz)
    data[where] = M.data            # M canonical: no entry twice
    return data


def _applies(node_dofs: np.ndarray) -> bool:
    return node_dofs.size > 0 and np.unique(node_dofs).size == node_dofs.size and not (node_dofs < 0).any()


class Condenser:
    """Condensations onto the contact normals of K = Σₖ cₖ Kₖ for many coefficient sets c.

    The harmonics of fem/harmonic.py differ only in the coefficients of K(n) = K_a + n K_b + n² K_c:
    the rotation, the rotated pattern with its clique and the ordering that the first
    factorisation finds are kept, and each further set costs one factorisation in that order
    (no ordering, no product or copy of a sparse matrix: only the values are combined).
    """

    def __init__(self, rotated: list, R: sp.csr_matrix, slots: np.ndarray):
        """``rotated``: the parts Rᵀ Kₖ R (csc); ``R`` the rotation of :func:`_rotation`;
        ``slots`` the normal components (index of each contact node's r dof)."""
        self.R, self.slots = R, slots
        self.n, self.m = rotated[0].shape[0], slots.size
        for A in rotated:
            A.sort_indices()
        if len(rotated) == 1:
            U, _ = _with_clique(rotated[0], slots)
            self.datas = [U.data]
        else:
            U = abs(rotated[0])
            for A in rotated[1:]:
                U = U + abs(A)                  # the union of the patterns (no cancellation)
            U = U.tocsc()
            U.sort_indices()
            datas = [_on_pattern(A, U) for A in rotated]
            U, kept = _with_clique(U, slots)
            self.datas = [_spread(d, kept) for d in datas]
        self.indices, self.indptr = U.indices, U.indptr
        self.order = None               # factor position -> dof once known; None: SuperLU's own MMD
        self._permuted = None           # (indices, indptr, source entry) of the matrix in that order
        self._known = None              # how the first trailing block was read and split by body

    @classmethod
    def of(cls, parts: list, node_dofs: np.ndarray, normals: np.ndarray):
        """From the parts Kₖ (free dofs only) and the contact nodes (see :func:`condense`); None
        where the condensation does not apply."""
        if not _applies(node_dofs):
            return None
        R = _rotation(parts[0].shape[0], node_dofs, normals)
        return cls([(R.T @ K @ R).tocsc() for K in parts], R, node_dofs[:, 0])

    def condense(self, coefficients=(1.0,)) -> NormalCondensation | None:
        n, slots = self.n, self.slots
        data = self.datas[0] if tuple(coefficients) == (1.0,) and len(self.datas) == 1 else \
            sum(c * d for c, d in zip(coefficients, self.datas))
        if self.order is None:
            A = sp.csc_matrix((data, self.indices, self.indptr), shape=(n, n))
            lu = splu(A, permc_spec="MMD_AT_PLUS_A", **SUPERLU)
            del A
            position = np.asarray(lu.perm_c)
            if not np.array_equal(lu.perm_r, position):
                return None
            order = np.argsort(position)
            self.order = order                    # the next coefficient sets factorise in it
            out = self._condensation(lu, position, None)
            if out is not None:
                return out
            # minimum degree left too much after the first of the clique to reduce densely (or the
            # block did not check): the normals moved last by hand, one more factorisation
            is_normal = np.zeros(n, dtype=bool)
            is_normal[slots] = True
            self.order = np.concatenate([order[~is_normal[order]], order[is_normal[order]]])
            self._known = None
        if self._permuted is None:
            self._permuted = self._pattern_in_order()
        indices, indptr, source = self._permuted
        lu = splu(sp.csc_matrix((data[source], indices, indptr), shape=(n, n)), permc_spec="NATURAL", **SUPERLU)
        identity = np.arange(n)
        if not (np.array_equal(lu.perm_r, identity) and np.array_equal(lu.perm_c, identity)):
            return None
        position = np.empty(n, dtype=np.int64)
        position[self.order] = identity
        return self._condensation(lu, position, self.order)

    def _pattern_in_order(self):
        # the pattern in self.order, and which of the stored entries each of its entries is
        n, nnz, order = self.n, self.indices.size, self.order
        P = sp.csc_matrix((np.arange(1.0, nnz + 1.0), self.indices, self.indptr), shape=(n, n))[order][:, order]
        P = P.tocsc()
        P.sort_indices()
        return P.indices, P.indptr, P.data.astype(np.int64) - 1

    def _condensation(self, lu, position, order):
        n, m, slots = self.n, self.m, self.slots
        first = int(position[slots].min())
        if n - first > max(4 * m, m + 2000):
            return None
        # the trailing block from the first normal on: the normals and whatever minimum degree put among them
        tail = np.full(n - first, -1, dtype=np.int64)
        tail[position[slots] - first] = slots                   # trailing position -> normal slot (or -1)
        blocks, self._known = _checked_blocks(lu, tail, order, self._known)
        if blocks is None:
            return None
        return NormalCondensation(lu, self.R, blocks, order)


def _spread(values: np.ndarray, kept: np.ndarray) -> np.ndarray:
    out = np.zeros(kept.size)
    out[kept] = values
    return out


def condense(K, node_dofs: np.ndarray, normals: np.ndarray) -> NormalCondensation | None:
    """Factorise K (free dofs only) with the contact nodes' normal components last.

    ``node_dofs`` (k, 2): the r and z dof (indices into K) of every contact node;
    ``normals`` (k, 2): unit normal used for that node.  None if the fast path
    does not apply (the caller then uses an ordinary factorisation).
    """
    if not _applies(node_dofs):
        return None
    R = _rotation(K.shape[0], node_dofs, normals)
    A = (R.T @ K @ R).tocsc()
    del K                       # the caller's copy may go now (peak memory)
    condenser = Condenser([A], R, node_dofs[:, 0])
    del A
    return condenser.condense()


# SuperLU's storage as scipy's SuperLU object holds it (the object's C struct in scipy >= 1.10 and SuperLU's
# SuperMatrix, SCformat and NCformat structs): L is stored by supernodes, U by compressed columns.
class _SuperMatrix(ctypes.Structure):
    _fields_ = [("Stype", ctypes.c_int), ("Dtype", ctypes.c_int), ("Mtype", ctypes.c_int),
                ("nrow", ctypes.c_int), ("ncol", ctypes.c_int), ("Store", ctypes.c_void_p)]


class _SuperLUObject(ctypes.Structure):
    _fields_ = [("ob_refcnt", ctypes.c_ssize_t), ("ob_type", ctypes.c_void_p),
                ("m", ctypes.c_ssize_t), ("n", ctypes.c_ssize_t), ("L", _SuperMatrix), ("U", _SuperMatrix),
                ("perm_r", ctypes.c_void_p), ("perm_c", ctypes.c_void_p), ("cached_U", ctypes.c_void_p),
                ("cached_L", ctypes.c_void_p), ("py_csc_construct_func", ctypes.c_void_p), ("type", ctypes.c_int)]


class _SCformat(ctypes.Structure):
    _fields_ = [("nnz", ctypes.c_int), ("nsuper", ctypes.c_int), ("nzval", ctypes.c_void_p),
                ("nzval_colptr", ctypes.c_void_p), ("rowind", ctypes.c_void_p), ("rowind_colptr", ctypes.c_void_p),
                ("col_to_sup", ctypes.c_void_p), ("sup_to_col", ctypes.c_void_p)]


class _NCformat(ctypes.Structure):
    _fields_ = [("nnz", ctypes.c_int), ("nzval", ctypes.c_void_p), ("rowind", ctypes.c_void_p),
                ("colptr", ctypes.c_void_p)]


_SLU_NC, _SLU_SC, _SLU_D, _SLU_TRLU, _SLU_TRU = 0, 3, 1, 1, 4      # SuperLU's Stype/Dtype/Mtype codes


def _array(address, size, ctype):
    return np.ctypeslib.as_array(ctypes.cast(address, ctypes.POINTER(ctype)), shape=(size,))


def _read_trailing(lu, m):
    """The trailing m × m blocks (L₂₂, U₂₂) of the factors, read in place from SuperLU's storage;
    None where the object is not laid out as this reader expects (checked against its public
    shape, nnz and permutations before any pointer is followed).

    L is stored by supernodes: the columns f…l of a supernode share the row list
    rowind[rowind_colptr[f]:rowind_colptr[f + 1]] (its own rows f…l first, in order) and
    column j's values are nzval[nzval_colptr[j]:nzval_colptr[j + 1]]; a value on a row i ≤ j
    belongs to U (SuperLU keeps U's diagonal blocks there), i > j to L.  The rest of U is
    compressed by column.  It is the storage scipy converts in ``SuperLU.L`` and ``.U``.
    """
    n = lu.shape[0]
    if type(lu).__basicsize__ != ctypes.sizeof(_SuperLUObject) or np.dtype(lu.perm_c.dtype).itemsize != 4:
        return None
    obj = _SuperLUObject.from_address(id(lu))
    Lm, Um = obj.L, obj.U
    if ((obj.m, obj.n, Lm.nrow, Lm.ncol, Um.nrow, Um.ncol) != (n,) * 6
            or (Lm.Stype, Lm.Dtype, Lm.Mtype, Um.Stype, Um.Dtype, Um.Mtype)
            != (_SLU_SC, _SLU_D, _SLU_TRLU, _SLU_NC, _SLU_D, _SLU_TRU)
            or obj.perm_r != lu.perm_r.ctypes.data or obj.perm_c != lu.perm_c.ctypes.data
            or not Lm.Store or not Um.Store):
        return None
    Ls, Us = _SCformat.from_address(Lm.Store), _NCformat.from_address(Um.Store)
    if Ls.nnz + Us.nnz != lu.nnz or not 0 <= Ls.nsuper < n:
        return None
    sup_to_col = _array(Ls.sup_to_col, Ls.nsuper + 2, ctypes.c_int)
    col_to_sup = _array(Ls.col_to_sup, n, ctypes.c_int)
    nz_ptr = _array(Ls.nzval_colptr, n + 1, ctypes.c_int)
    row_ptr = _array(Ls.rowind_colptr, n + 1, ctypes.c_int)
    u_ptr = _array(Us.colptr, n + 1, ctypes.c_int)
    if sup_to_col[0] != 0 or sup_to_col[-1] != n:
        return None
    rowind = _array(Ls.rowind, int(row_ptr[n]), ctypes.c_int)
    nzval = _array(Ls.nzval, int(nz_ptr[n]), ctypes.c_double)
    u_row = _array(Us.rowind, int(u_ptr[n]), ctypes.c_int)
    u_val = _array(Us.nzval, int(u_ptr[n]), ctypes.c_double)
    s = n - m
    L, U = np.eye(m), np.zeros((m, m))
    for sup in range(col_to_sup[s], col_to_sup[n - 1] + 1):
        f, last = int(sup_to_col[sup]), int(sup_to_col[sup + 1])
        rows = rowind[row_ptr[f]:row_ptr[f + 1]]
        lo = max(f, s)
        vals = nzval[nz_ptr[lo]:nz_ptr[last]].reshape(last - lo, rows.size).T      # (rows, columns lo…last-1)
        inside = rows >= s
        r, block = rows[inside] - s, vals[inside]
        cols = np.arange(lo, last) - s
        upper = r[:, None] <= cols[None, :]
        U[np.ix_(r, cols)] = np.where(upper, block, 0.0)
        L[np.ix_(r, cols)] += np.where(upper, 0.0, block)
    counts = np.diff(u_ptr[s:])
    at = np.repeat(u_ptr[s:n] - np.cumsum(counts) + counts, counts) + np.arange(counts.sum())
    rows, cols = u_row[at], np.repeat(np.arange(m), counts)
    inside = rows >= s
    U[rows[inside] - s, cols[inside]] = u_val[at[inside]]
    return L, U


def _public_trailing(lu, m):
    # SuperLU.L / .U build (and keep, cached on the object) CSC copies of the whole factors
    n = lu.shape[0]
    return lu.L[n - m:, n - m:].toarray(), lu.U[n - m:, n - m:].toarray()


def _checked_blocks(lu, tail, order, known=None):
    """[(slots, S⁻¹)] of every body from the trailing block of the factors, and how they were found.

    ``tail``: the normal slot at each trailing position, −1 at an interior dof that minimum degree
    put among the normals.  With T the trailing positions, L_TT U_TT is the Schur complement onto T,
    and the normals' block of its inverse is S⁻¹, the inverse of the Schur complement onto the
    normals (block elimination): two triangular solves with the normals' unit columns.  Bodies
    are the parts of the trailing block that share no entry (the others are exact zeros).
    Checked by one solve: K⁻¹ b for a b that is zero off the normals is S⁻¹ b on them.  ``known``
    (reader, bodies) from an earlier call on a matrix of the same pattern and order skips the
    check and the search for the bodies."""
    t = tail.size
    if known is not None:
        read, parts = known
        LU = read(lu, t)
        if LU is not None:
            return [_inverse_on_normals(*LU, i, tail) for i in parts], known
    normal = tail >= 0
    z = np.random.default_rng(0).uniform(1.0, 2.0, int(normal.sum()))
    b = np.zeros(lu.shape[0])
    b[tail[normal]] = z
    x = lu.solve(b if order is None else b[order])
    x = x[tail[normal]] if order is None else x[-t:][normal]
    at = np.full(t, -1, dtype=np.int64)
    at[normal] = np.arange(z.size)                      # trailing position -> index into z, x
    for read in (_read_trailing, _public_trailing):
        LU = read(lu, t)
        if LU is None:
            continue
        L, U = LU
        linked = (L != 0) | (U != 0)
        count, part = connected_components(sp.csr_matrix(linked | linked.T), directed=False)
        parts = [i for i in (np.flatnonzero(part == p) for p in range(count)) if normal[i].any()]
        blocks = []
        for i in parts:
            slots, Sinv = _inverse_on_normals(L, U, i, tail)
            k = at[i[normal[i]]]
            # backward error of the solve: round-off is ~1e-16, a misread block is wrong at O(1)
            if np.linalg.norm(Sinv @ z[k] - x[k]) > 1e-10 * np.linalg.norm(Sinv) * np.linalg.norm(z[k]):
                break
            blocks.append((slots, Sinv))
        else:
            return blocks, (read, parts)
    return None, None


def _inverse_on_normals(L, U, i, tail):
    """(slots, S⁻¹) of the body on trailing positions ``i``: the normals' rows and columns of
    (L_ii U_ii)⁻¹ (restricted to increasing positions, L_ii and U_ii stay triangular)."""
    n_at = np.flatnonzero(tail[i] >= 0)
    E = np.zeros((i.size, n_at.size))
    E[n_at, np.arange(n_at.size)] = 1.0
    X = solve_triangular(U[np.ix_(i, i)], solve_triangular(L[np.ix_(i, i)], E, lower=True, unit_diagonal=True))
    Sinv = X[n_at]
    return tail[i][n_at], 0.5 * (Sinv + Sinv.T)
