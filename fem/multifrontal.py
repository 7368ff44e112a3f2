"""Schur complements of K = Σₖ cₖ Kₖ onto kept dofs, for a stack of coefficient sets in one elimination.

The harmonics of fem/harmonic.py share one pattern, K(n) = K_a + n K_b + n² K_c, and each is needed
only through its Schur complement onto the contact normals (fem/harmonic_condense.py).  One symbolic
analysis of the pattern serves every coefficient set, and the numeric elimination runs once for the
whole stack: a multifrontal elimination (Duff & Reid, ACM TOMS 9, 1983; Liu, SIAM Review 34, 1992)
whose dense fronts carry the stack as their last axis, so every numpy call works on all the sets.

1. The dofs of one mesh node share their pattern, so the ordering and the elimination tree come from
   the node graph (three times smaller).  Every kept dof is a node of its own, and the kept dofs of
   each connected part (body) are joined into a clique, so that minimum degree (SuperLU's MMD on
   AᵀA + A, as fem/condense.py) orders them at the end.  Parts without a kept dof do not touch the
   Schur complement and are left out.
2. In each body, the nodes from its first kept one on form its root front; every other node belongs
   to a front of the supernodal elimination tree (fundamental supernodes: consecutive columns with
   nested structure, read off the node graph's factor), and a child joins its parent where the cost
   model of :meth:`SharedElimination._amalgamate` says so (relaxed supernodes, Ashcraft & Grimes,
   ACM TOMS 15, 1989).
3. A front is a dense array (rows, rows, sets): its original entries Σ cₖ Kₖ, its children's update
   matrices added in, its pivots eliminated (:func:`_eliminate`) and its update matrix
   F₂₂ − F₂₁ F₁₁⁻¹ F₁₂ passed on.  What is left of a root is the Schur complement onto its kept dofs
   (block elimination: the same up to round-off in any order).

No pivoting across fronts: K is positive definite (the harmonic stiffness with its held dofs); a front
that is not raises ``numpy.linalg.LinAlgError``, and so does a structure the node graph got wrong
(checked for every entry and update): the caller then factorises each set on its own.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.linalg import blas
from scipy.sparse.csgraph import connected_components
from scipy.sparse.linalg import splu


def concat_ranges(starts: np.ndarray, counts: np.ndarray) -> np.ndarray:
    """Concatenation of arange(s, s + c) for every (s, c)."""
    total = int(counts.sum())
    offsets = np.repeat(np.cumsum(counts) - counts, counts)
    return np.repeat(np.asarray(starts, np.int64), counts) + np.arange(total) - offsets


class SharedElimination:
    """Symbolic analysis of K = Σₖ cₖ Kₖ with the dofs ``keep`` kept; :meth:`schur` eliminates the rest
    for a stack of coefficient sets.

    ``indptr``, ``indices``: one symmetric pattern (canonical CSR, n × n) that holds every Kₖ;
    ``values`` (entries, parts): the Kₖ on it; ``node`` (n,): the mesh node of every dof (the dofs of
    a node share their pattern, which makes the node graph's fill a bound on the dof graph's).
    """

    # cost model of a front of k rows, p pivots, for the amalgamation (seconds per coefficient set, measured
    # on the tilted demo in docs/solver-notes.md): a fixed part (numpy calls), the memory passes over its
    # k² entries, and its arithmetic
    PER_FRONT, PER_ENTRY, PER_FLOP = 2.0e-6, 6.0e-9, 2.5e-10
    MEMORY = 2 ** 28        # bytes: the stack goes through in parts where the largest front would need more

    def __init__(self, indptr: np.ndarray, indices: np.ndarray, values: np.ndarray, node: np.ndarray,
                 keep: np.ndarray):
        n = indptr.size - 1
        rows = np.repeat(np.arange(n, dtype=np.int64), np.diff(indptr))
        indices = np.asarray(indices, np.int64)
        keep = np.asarray(keep, np.int64)
        _, node = np.unique(np.asarray(node, np.int64), return_inverse=True)
        node = node.ravel().copy()
        nn = int(node.max()) + 1
        node[keep] = nn + np.arange(keep.size)              # every kept dof a node of its own
        nn += keep.size
        # the node graph from one dof of each node (the dofs of a node share their pattern; were it not
        # so, a missing row shows in the check of every front in _plan, and the caller falls back)
        first = np.zeros(n, bool)
        first[np.unique(node, return_index=True)[1]] = True
        both = first[rows] & first[indices]
        A = sp.csr_matrix((np.ones(int(both.sum())), (node[rows[both]], node[indices[both]])), shape=(nn, nn))
        ncomp, comp = connected_components(A, directed=False)
        with_kept = np.zeros(ncomp, bool)
        with_kept[comp[node[keep]]] = True
        used = with_kept[comp]
        self.dofs = np.arange(n)                            # problem dof -> dof of the matrix
        if not used.all():                                  # parts without a kept dof leave the problem
            self.dofs = np.flatnonzero(used[node])
            local = np.full(n, -1, np.int64)
            local[self.dofs] = np.arange(self.dofs.size)
            inside = used[node[rows]] & used[node[indices]]
            rows, indices, values = local[rows[inside]], local[indices[inside]], values[inside]
            node, keep = (np.cumsum(used) - 1)[node[self.dofs]], local[keep]
            A, comp, nn = A[used][:, used], comp[used], int(used.sum())
        kept_node = node[keep]
        groups = [kept_node[comp[kept_node] == c] for c in np.unique(comp[kept_node])]
        ci = np.concatenate([np.repeat(g, g.size) for g in groups])
        cj = np.concatenate([np.tile(g, g.size) for g in groups])
        B = (A + sp.csr_matrix((np.ones(ci.size), (ci, cj)), shape=(nn, nn))).tocsc()
        B.data[:] = -1.0
        B = (B + sp.diags(np.diff(B.indptr) + 1.0)).tocsc()  # diagonally dominant: SuperLU does not pivot
        lu = splu(B, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, relax=1, panel_size=4,
                  options=dict(SymmetricMode=True))
        position = np.asarray(lu.perm_c, np.int64)          # node -> elimination position
        if not np.array_equal(np.asarray(lu.perm_r), position):
            raise np.linalg.LinAlgError("the ordering of the node graph pivoted")
        L = lu.L.tocsc()
        L.sort_indices()
        del lu, B, A
        self._plan(L, position, node, comp, groups, keep, rows, indices, values)

    def _plan(self, L, position, node, comp, groups, keep, rows, cols, values):
        nn, n = L.shape[0], node.size
        count = np.diff(L.indptr)
        parent = np.full(nn, -1, np.int64)
        has = count > 1
        parent[has] = L.indices[L.indptr[:-1][has] + 1]     # first entry below the diagonal
        pcomp = comp[np.argsort(position)]
        root_of = np.full(nn, -1, np.int64)                 # position -> the root front of its body
        for r, g in enumerate(groups):
            root_of[(pcomp == comp[g[0]]) & (np.arange(nn) >= position[g].min())] = r
        nroot = len(groups)
        inner = root_of < 0
        # fundamental supernodes of the positions outside the roots
        start = inner.copy()
        start[1:] &= ~(inner[:-1] & (parent[:-1] == np.arange(1, nn)) & (count[:-1] == count[1:] + 1))
        firsts = np.flatnonzero(start)
        outside = np.flatnonzero(~inner)
        ends = np.minimum(np.append(firsts[1:], nn), np.append(outside, nn)[np.searchsorted(outside, firsts)])
        nsup = firsts.size
        at = np.full(nn, -1, np.int64)
        at[concat_ranges(firsts, ends - firsts)] = np.repeat(np.arange(nsup), ends - firsts)
        at[~inner] = nsup + root_of[~inner]
        last_parent = parent[ends - 1]
        fparent = np.concatenate([np.where(last_parent >= 0, at[np.maximum(last_parent, 0)], -1), np.full(nroot, -1)])
        # dofs by elimination rank: node position, the kept dofs after all others
        is_kept = np.zeros(n, bool)
        is_kept[keep] = True
        free = np.flatnonzero(~is_kept)
        free = free[np.argsort(position[node[free]], kind="stable")]
        rank = np.empty(n, np.int64)
        rank[np.concatenate([free, keep[np.argsort(position[node[keep]])]])] = np.arange(n)
        dptr = np.searchsorted(position[node[free]], np.arange(nn + 1))   # free dofs of each position
        width = np.diff(dptr)
        struct = [L.indices[L.indptr[a]:L.indptr[a + 1]] for a in firsts]
        struct = [s[s >= b] for s, b in zip(struct, ends)]
        piv = [np.arange(a, b) for a, b in zip(firsts, ends)]
        kept_pos = np.full(nn, -1, np.int64)
        kept_pos[position[node[keep]]] = keep
        into = self._amalgamate(piv, struct, fparent, width + (kept_pos >= 0))
        alive = np.flatnonzero([p is not None for p in piv])
        renumber = np.full(nsup + nroot, -1, np.int64)
        renumber[alive] = np.arange(alive.size)
        renumber[nsup:] = alive.size + np.arange(nroot)
        fparent = np.concatenate([renumber[into[alive]], np.full(nroot, -1)])
        nsup, nf = alive.size, alive.size + nroot
        # every front's rows, sorted by rank: its pivots first, then the rest (kept dofs last)
        # positions of every front (pivots and structure; a root: its body's positions), then their dofs
        root_pos = [np.flatnonzero(root_of == r) for r in range(nroot)]
        fpos = [np.concatenate([piv[i], struct[i]]) for i in alive] + root_pos
        npos = np.array([x.size for x in fpos])
        fpos = np.concatenate(fpos)
        fid = np.repeat(np.arange(nf), npos)
        kp = kept_pos[fpos]
        kept_root = root_of[position[node[keep]]]
        rows_of = np.concatenate([free[concat_ranges(dptr[fpos], width[fpos])], kp[kp >= 0]])
        fid = np.concatenate([np.repeat(fid, width[fpos]), fid[kp >= 0]])
        order = np.lexsort((rank[rows_of], fid))
        flat_rows, fid = rows_of[order], fid[order]
        sizes = np.bincount(fid, minlength=nf)
        offset = np.cumsum(sizes) - sizes
        pivots = [int(width[piv[i]].sum()) for i in alive] + [int(width[x].sum()) for x in root_pos]
        home = np.empty(n, np.int64)                         # the front that eliminates (or keeps) each dof
        home[flat_rows[concat_ranges(offset, np.asarray(pivots))]] = np.repeat(np.arange(nf), pivots)
        home[keep] = nsup + kept_root
        self.kept = [flat_rows[offset[f] + pivots[f]:offset[f] + sizes[f]] for f in range(nsup, nf)]
        post = self._postorder(fparent, nsup, nf)
        place = np.empty(nf, np.int64)
        place[post] = np.arange(nf)
        # an entry goes to the front of whichever of its dofs comes first: that front holds both; entries
        # grouped by front in processing order (a counting sort through scipy's CSR construction)
        ef = place[home[np.where(rank[rows] <= rank[cols], rows, cols)]]
        by = sp.csr_matrix((np.ones(ef.size), (ef, np.arange(ef.size))), shape=(nf, ef.size))
        bounds, by = by.indptr, by.indices
        self.values = values
        children = [[] for _ in range(nf)]
        for c in range(nsup):
            children[fparent[c]].append(c)
        loc = np.zeros(n, np.int64)
        self.steps = []
        for f in post:
            k, p = int(sizes[f]), pivots[f]
            mine = flat_rows[offset[f]:offset[f] + k]
            loc[mine] = np.arange(k)
            e = by[bounds[place[f]]:bounds[place[f] + 1]]
            i, j = loc[rows[e]], loc[cols[e]]
            adds, ok = [], np.array_equal(mine[i], rows[e]) and np.array_equal(mine[j], cols[e])
            for c in children[f]:
                theirs = flat_rows[offset[c] + pivots[c]:offset[c] + sizes[c]]
                rel = loc[theirs]
                ok = ok and np.array_equal(mine[rel], theirs)
                adds.append((c, (rel[:, None] * k + rel).ravel()))
            if not ok:      # a row the node graph's structure missed: never a wrong answer, the caller falls back
                raise np.linalg.LinAlgError("front structure incomplete")
            self.steps.append((f, k, p, e, i * k + j, adds, f - nsup if f >= nsup else -1))

    @staticmethod
    def _postorder(fparent, nsup, nf):
        """Fronts with every child before its parent, one subtree at a time (few updates alive at once)."""
        children = [[] for _ in range(nf)]
        for c in range(nsup - 1, -1, -1):
            children[fparent[c]].append(c)
        post, stack = [], [(r, False) for r in range(nf - 1, nsup - 1, -1)]
        while stack:
            f, done = stack.pop()
            if done:
                post.append(f)
                continue
            stack.append((f, True))
            stack.extend((c, False) for c in children[f])
        return post

    def _amalgamate(self, piv, struct, fparent, wide):
        """Relaxed supernodes: a child joins its parent front where the cost model says the merged
        front is cheaper than the two (fewer numpy calls and passes against explicit zeros in the
        arithmetic).  Edits ``piv`` (None: merged) and returns every front's parent after the merges;
        ``wide``: the dofs at each position."""
        nsup = len(piv)
        cum = np.concatenate([[0], np.cumsum(wide)])
        npiv = (cum[[c[-1] + 1 for c in piv]] - cum[[c[0] for c in piv]]).tolist() + [0] * (fparent.size - nsup)
        nrow = [a + int(wide[s].sum()) for a, s in zip(npiv, struct)] + [0] * (fparent.size - nsup)
        parent = fparent.tolist()
        into = list(range(fparent.size))
        a, b, g = self.PER_FRONT, self.PER_ENTRY, self.PER_FLOP / 3

        def cost(k, p):
            return a + b * k * k + g * (k ** 3 - (k - p) ** 3)

        def find(f):
            while into[f] != f:
                into[f] = into[into[f]]
                f = into[f]
            return f

        for s in range(nsup):
            p = find(parent[s])
            if p >= nsup:
                continue
            if cost(nrow[p] + npiv[s], npiv[p] + npiv[s]) <= cost(nrow[s], npiv[s]) + cost(nrow[p], npiv[p]):
                piv[p] = np.concatenate([piv[s], piv[p]])
                piv[s] = None
                nrow[p] += npiv[s]
                npiv[p] += npiv[s]
                into[s] = p
        return np.array([find(f) if f >= 0 else -1 for f in parent])

    def schur(self, coefficients) -> list:
        """[(kept dofs of a body, S (sets, m, m))]: the Schur complement of Σ cₖ Kₖ onto each body's kept
        dofs for every row of ``coefficients`` (sets × parts); the dofs index the matrix's rows."""
        c = np.ascontiguousarray(np.asarray(coefficients, float).T)     # (parts, sets)
        largest = max(k for _, k, *_ in self.steps)
        chunk = max(1, int(self.MEMORY // (3 * 8 * largest * largest)))   # the front, its copy, its update
        pieces = [self._schur(c[:, a:a + chunk]) for a in range(0, c.shape[1], chunk)]
        return [(self.dofs[kept], np.concatenate([p[r] for p in pieces])) for r, kept in enumerate(self.kept)]

    def _schur(self, c: np.ndarray) -> list:
        H = c.shape[1]
        updates, out = {}, [None] * len(self.kept)
        # one buffer for every front (a front is done with once its update is out): no fresh pages each time
        work = np.empty(max(k for _, k, *_ in self.steps) ** 2 * H)
        for f, k, p, entries, flat, adds, root in self.steps:
            F = work[:k * k * H].reshape(k * k, H)
            F.fill(0.0)
            F[flat] = self.values[entries] @ c
            for child, where in adds:
                F[where] += updates.pop(child)
            S = _eliminate(F.reshape(k, k, H), p)
            if root >= 0:
                out[root] = np.ascontiguousarray(S.transpose(2, 0, 1))
            else:
                updates[f] = S.reshape(-1, H)
        return out


def _eliminate(F: np.ndarray, p: int) -> np.ndarray:
    """F₂₂ − F₂₁ F₁₁⁻¹ F₁₂ of the front F (rows, rows, sets) with its first p rows the pivots."""
    if p == 0:
        return F.copy()                                                # F is the shared buffer
    Y = np.ascontiguousarray(F[:p, p:].transpose(2, 0, 1))             # F₁₂ (sets, p, q); F₂₁ = F₁₂ᵀ
    if p < FEW_PIVOTS:
        P = Y.transpose(0, 2, 1) @ (np.linalg.inv(F[:p, :p].transpose(2, 0, 1)) @ Y)
    else:
        # F₁₁ = L Lᵀ for the whole stack, then Y = L⁻¹ F₁₂ set by set (numpy has no batched triangular
        # solve; the transposed views are Fortran-ordered, so BLAS works in place) and P = Yᵀ Y
        L = np.linalg.cholesky(F[:p, :p].transpose(2, 0, 1))
        for h in range(Y.shape[0]):
            Y[h] = blas.dtrsm(1.0, L[h].T, Y[h].T, side=1, lower=0, overwrite_b=1).T
        P = np.ascontiguousarray(Y.transpose(0, 2, 1)) @ Y
    return F[p:, p:] - P.transpose(1, 2, 0)


# below this many pivots the batched inverse beats Cholesky plus one triangular solve per set (numpy's
# per-matrix calls against Python's per-set loop; measured in docs/solver-notes.md)
FEW_PIVOTS = 10
