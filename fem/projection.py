"""Gap weights of a contact face whose nodes do not match the other face's: a dual mortar.

Face A is the slave: its nodes carry the contact forces and the gaps, as on matching faces, so
the results, tributary areas and initial gaps stay where the rest of the program reads them
(at face A's nodes).  The mesher makes face B the coarser by default (``face_b_spacing``), so
the finer side carries the pressure.  Each gap reads face B through weights:
gap_j = gap0_j + n·u_A,j − Σ_l w_jl n·u_B,l.

Why a mortar and not node-to-segment.  Collocating each A node on B (w_jl = N_l^B at the node)
fails the contact patch test (Taylor & Papadopoulos, "On a patch test for contact problems in
two dimensions", 1991; measured in docs/solver-notes.md): face B then receives the forces of
A's tributary areas at A's node positions, not the consistent loads of a uniform pressure.
The weighted gap ∫ ψ_j n·(u_A − u_B) dA with the *dual* basis ψ_j of face A (Wohlmuth, SIAM
J. Numer. Anal. 38 (2000) 989; ∫ ψ_j N_k dA = δ_jk ∫ N_k dA on every facet) passes it: Σ_j ψ_j = 1,
so B receives exactly ∫ p N_l^B dA.  Dual rather than standard multipliers keep one A node per
constraint, w_jl = ∫ ψ_j N_l^B dA / ∫ N_j^A dA, i.e. the nodal complementarity of fem/lcp.py and
the condensation onto normals unchanged; on coincident faces the weights are the identity, the
node-to-node pairing (which pairing.py keeps, bit for bit, wherever the nodes match).  Areas
carry the ring weight 2πr as everywhere in the FE stage, so ψ is dual in that measure.

Faces are straight (one normal per contact), so positions along the face are the arc length
s = t·x, and the integrals are exact Gauss sums over the pieces between the vertices of both
faces.  Where face B is shorter, a node of A whose support reaches past B's end is collocated
on B (node-to-segment), and a node beyond it is left out of the contact.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.spatial import cKDTree

# 4-point Gauss-Legendre on [0, 1]: exact to degree 7 (ψ N r is at most degree 5 for P2)
_X, _W = np.polynomial.legendre.leggauss(4)
GAUSS_X, GAUSS_W = 0.5 * (_X + 1.0), 0.5 * _W

MORTAR, PROJECTED, LEFT_OUT = 0, 1, 2       # how each node of face A is paired


@dataclass
class FaceChain:
    """The facets of one straight face, each oriented along +s."""

    nodes: np.ndarray      # (F, 2 or 3) node ids: end vertices (s0 end first), then the midpoint (P2)
    s0: np.ndarray         # (F,) arc length of the first end
    s1: np.ndarray         # (F,) arc length of the second end
    r0: np.ndarray         # (F,) radius of the first end
    r1: np.ndarray


@dataclass
class Weights:
    nodes_a: np.ndarray    # (k,) node ids on face A (vertex >= 0, -1 - facet for a P2 midpoint)
    status: np.ndarray     # (k,) MORTAR, PROJECTED or LEFT_OUT
    nodes_b: np.ndarray    # (m,) node ids on face B the weights refer to
    w: sp.csr_matrix       # (k, m), rows of LEFT_OUT nodes empty


def coincident_vertices(points: np.ndarray, vertices_a, vertices_b, tol: float = 1e-9) -> np.ndarray:
    """(2, k) vertex pairs for a ContactPair: each vertex of face A with the face-B vertex at the
    same place, or −1 where there is none (the FE stage then pairs the face by projection)."""
    va, vb = np.asarray(vertices_a, np.int64), np.asarray(vertices_b, np.int64)
    dist, near = cKDTree(points[:, vb].T).query(points[:, va].T)
    return np.vstack([va, np.where(dist <= tol, vb[near], -1)])


def shape(xi: np.ndarray, order: int) -> np.ndarray:
    """(nodes, points) 1-D Lagrange shape functions on [0, 1]: the traces of P1/P2 triangles on a
    straight edge (ends, then the midpoint)."""
    if order == 1:
        return np.stack([1.0 - xi, xi])
    return np.stack([(1.0 - xi) * (1.0 - 2.0 * xi), xi * (2.0 * xi - 1.0), 4.0 * xi * (1.0 - xi)])


def chain(p: np.ndarray, ends: np.ndarray, facets: np.ndarray, order: int, t: np.ndarray) -> FaceChain:
    """``ends`` (2, F): the facets' vertices; ``facets`` their indices (midpoint ids −1 − facet)."""
    s = np.tensordot(t, p[:, ends], axes=1)                  # (2, F)
    flip = s[0] > s[1]
    e = np.where(flip, ends[::-1], ends)
    nodes = [e[0], e[1]] + ([-1 - facets] if order == 2 else [])
    return FaceChain(np.stack(nodes, axis=1), s.min(axis=0), s.max(axis=0), p[0, e[0]], p[0, e[1]])


def _locate(face: FaceChain, s: np.ndarray, tol: float) -> np.ndarray:
    """Index of the facet of ``face`` holding each position s, −1 off the face."""
    order = np.argsort(face.s0)
    at = order[np.clip(np.searchsorted(face.s0[order], s + tol, side="right") - 1, 0, order.size - 1)]
    inside = (face.s0[at] - tol <= s) & (s <= face.s1[at] + tol)
    return np.where(inside, at, -1)


def dual_coefficients(face: FaceChain, order: int):
    """Per facet, the matrix A with ψ_j = Σ_k A_jk N_k (A = D M⁻¹, M the facet's ring-weighted mass
    matrix, D its row sums), and D itself: the node's share of the facet's ring area."""
    N = shape(GAUSS_X, order)                                            # (n, q)
    length = face.s1 - face.s0
    r = face.r0[:, None] + GAUSS_X[None] * (face.r1 - face.r0)[:, None]  # (F, q)
    wq = 2.0 * np.pi * r * GAUSS_W[None] * length[:, None]
    M = np.einsum("fq,iq,jq->fij", wq, N, N)
    d = M.sum(axis=2)
    return d[:, :, None] * np.linalg.inv(M), d


def mortar_weights(a: FaceChain, b: FaceChain, order: int, nodes_a: np.ndarray, s_a: np.ndarray,
                   tol: float) -> Weights:
    """Weights of the A nodes ``nodes_a`` (at arc lengths ``s_a``) on face B (see the module notes)."""
    coeff, d = dual_coefficients(a, order)
    # the pieces between consecutive vertices of both faces, each inside one facet of A and one of B
    # (slivers where a vertex of B lies a hair from one of A are kept: dropping one would leave a
    # gap in the integrals, and their quadrature is exact whatever their length)
    cuts = np.unique(np.clip(np.concatenate([a.s0, a.s1, b.s0, b.s1]), a.s0.min(), a.s1.max()))
    lo, hi = cuts[:-1], cuts[1:]
    mid = 0.5 * (lo + hi)
    ia, ib = _locate(a, mid, 0.0), _locate(b, mid, 0.0)
    if (ia < 0).any():
        raise ValueError("face A has a hole: its facets do not form one chain")
    # a piece off B's ends by less than the tolerance belongs to B's end facet (the faces' ends
    # are one point drawn twice)
    ib = np.where(ib >= 0, ib, _locate(b, mid, tol))
    covered = ib >= 0
    length_a = a.s1 - a.s0
    cover = np.bincount(ia[covered], weights=(hi - lo)[covered], minlength=length_a.size)
    full_facet = cover >= length_a - tol

    ia, ib, lo, hi = ia[covered], ib[covered], lo[covered], hi[covered]
    sq = lo[:, None] + GAUSS_X[None] * (hi - lo)[:, None]                  # (P, q)
    xa = (sq - a.s0[ia][:, None]) / length_a[ia][:, None]
    xb = (sq - b.s0[ib][:, None]) / (b.s1 - b.s0)[ib][:, None]
    r = a.r0[ia][:, None] + xa * (a.r1 - a.r0)[ia][:, None]
    wq = 2.0 * np.pi * r * GAUSS_W[None] * (hi - lo)[:, None]
    psi = np.einsum("pij,jpq->ipq", coeff[ia], shape(xa, order))          # (n, P, q)
    Nb = shape(xb, order)                                                   # (n, P, q)
    D = np.einsum("pq,ipq,lpq->pil", wq, psi, Nb)                           # (P, n, n)

    bnodes, col = np.unique(b.nodes.ravel(), return_inverse=True)
    col = col.reshape(b.nodes.shape)                                        # (F_B, n) column of each node
    sort = np.argsort(nodes_a)
    rows = sort[np.searchsorted(nodes_a[sort], a.nodes)]                    # (F, n) row of each node
    if not np.array_equal(nodes_a[rows], a.nodes):
        raise ValueError("internal: a node of face A's facets is not among its nodes")
    nloc = a.nodes.shape[1]
    k, m = nodes_a.size, bnodes.size
    Dm = sp.coo_matrix((D.ravel(), (np.repeat(rows[ia], nloc, axis=1).ravel(),
                                    np.tile(col[ib], (1, nloc)).ravel())), shape=(k, m)).tocsr()
    area = np.bincount(rows.ravel(), weights=d.ravel(), minlength=k)
    full = np.ones(k, dtype=bool)
    np.logical_and.at(full, rows.ravel(), np.repeat(full_facet, nloc))
    full &= area > 1e-12 * area.max(initial=0.0)

    status = np.full(k, LEFT_OUT)
    status[full] = MORTAR
    fb = _locate(b, s_a, tol)
    status[~full & (fb >= 0)] = PROJECTED
    W = sp.diags(np.where(full, 1.0 / np.where(full, area, 1.0), 0.0)) @ Dm
    proj = np.flatnonzero(status == PROJECTED)
    if proj.size:                      # node-to-segment on the facet of B under the node
        f = fb[proj]
        xi = np.clip((s_a[proj] - b.s0[f]) / (b.s1 - b.s0)[f], 0.0, 1.0)
        P = sp.coo_matrix((shape(xi, order).T.ravel(), (np.repeat(proj, nloc), col[f].ravel())), shape=(k, m))
        W = W + P.tocsr()
    W = W.tocsr()
    W.eliminate_zeros()
    used = np.unique(W.indices)             # the B nodes some gap reads
    W, bnodes = W[:, used], bnodes[used]
    sums = np.asarray(W.sum(axis=1)).ravel()
    if np.abs(sums[status != LEFT_OUT] - 1.0).max(initial=0.0) > 1e-8:
        raise ValueError("internal: the weights of a face node on face B do not sum to one")
    return Weights(nodes_a, status, bnodes, W)
