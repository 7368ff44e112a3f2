"""Pairing of the two faces of a contact and their gap operator.

Where every vertex of face A has a coincident vertex on face B the faces are paired node to
node (the meshes the clutch mesher makes by default).  Otherwise face A's nodes are paired by a
dual mortar projection onto face B (fem/projection.py): face A is the slave side, whose nodes
carry the forces, gaps and results in both cases.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from scipy.spatial import cKDTree
from skfem import FacetBasis, asm

from .assembly import System, element_for
from .forms import ring_area
from .model import ContactPair
from .projection import LEFT_OUT, PROJECTED, chain, mortar_weights


@dataclass
class PairedFace:
    """Paired nodes of one contact, sorted along face A.

    ``b_dofs`` are the face-B nodes the gaps read: on matching faces the partner of each A node
    (``weights`` None, the identity); otherwise the nodes of B under face A, and row i of
    ``weights`` (k, m) gives gap_i = gap0_i + n·u_A,i − Σ_l weights_il n·u_B,l.
    """

    pair: ContactPair
    dofs_a: np.ndarray     # (k, 2) r and z dofs of the node on A
    b_dofs: np.ndarray     # (m, 2) same on B
    xy: np.ndarray         # (2, k) node coordinates, r and z
    gap0: np.ndarray       # (k,) initial normal gap
    area: np.ndarray       # (k,) tributary ring area on face A, mm^2
    body_a: int
    body_b: int
    weights: sp.csr_matrix | None = None
    # (2, q) r, z of the face-A nodes beyond the ends of face B, left out of the contact
    left_out: np.ndarray = field(default_factory=lambda: np.zeros((2, 0)))
    projected: int = 0     # A nodes near B's ends collocated on B instead of the mortar

    @property
    def matching(self) -> bool:
        return self.weights is None

    @property
    def dofs_b(self) -> np.ndarray:
        """(k, 2) the partner node of every A node; only matching faces have one."""
        if self.weights is not None:
            raise ValueError(f"contact {self.pair.name!r}: the faces' nodes do not match (paired by "
                             "projection); this analysis needs coincident nodes on both faces")
        return self.b_dofs


def _unit(normal) -> np.ndarray:
    n = np.asarray(normal, dtype=float)
    length = np.hypot(*n)
    if not np.isfinite(length) or length == 0.0:
        raise ValueError(f"contact normal {normal} has no direction")
    return n / length


def pair_face(system: System, pair: ContactPair) -> PairedFace:
    mesh, basis = system.mesh, system.basis
    for face in (pair.face_a, pair.face_b):
        if face not in system.facets:
            raise ValueError(f"contact {pair.name!r} refers to unknown face {face!r}")
    vp = np.asarray(pair.vertex_pairs, dtype=np.int64).reshape(2, -1)
    g0v = np.asarray(pair.initial_gap, dtype=float).reshape(-1)
    if g0v.shape[0] != vp.shape[1]:
        raise ValueError(f"contact {pair.name!r}: one initial gap per vertex pair expected")
    if np.any(g0v < 0) or not np.all(np.isfinite(g0v)):
        raise ValueError(f"contact {pair.name!r}: initial gaps must be finite and >= 0")
    fa, fb = system.facets[pair.face_a], system.facets[pair.face_b]
    on_a = np.unique(mesh.facets[:, fa])
    if set(on_a.tolist()) != set(vp[0].tolist()) or on_a.size != vp.shape[1]:
        raise ValueError(f"contact {pair.name!r}: vertex pairs must cover face {pair.face_a!r}")
    tol = 1e-6 * (1.0 + np.abs(mesh.p).max())
    if (vp[1] < 0).any():
        vp = _coincident(mesh, vp, fb, tol)
        if (vp[1] < 0).any():
            return _projected_face(system, pair, vp[0], g0v, fa, fb, tol)
    if np.max(np.abs(mesh.p[:, vp[0]] - mesh.p[:, vp[1]])) > tol:
        raise ValueError(f"contact {pair.name!r}: paired vertices do not coincide")
    to_b = dict(zip(vp[0].tolist(), vp[1].tolist()))
    gap_at = dict(zip(vp[0].tolist(), g0v.tolist()))

    nodes_a, nodes_b, gaps = [vp[0]], [vp[1]], [g0v]
    scalar_a = [vp[0]]          # scalar P1/P2 dof of each node, for the areas
    if basis.facet_dofs.size:   # P2: facet midpoints pair through their end vertices
        lookup_b = {tuple(sorted(mesh.facets[:, i])): i for i in fb}
        mid_b = []
        for i in fa:
            v0, v1 = mesh.facets[:, i]
            key = tuple(sorted((to_b[int(v0)], to_b[int(v1)])))
            if key not in lookup_b:
                raise ValueError(f"contact {pair.name!r}: facet meshes of the two faces differ")
            mid_b.append(lookup_b[key])
            gaps.append([0.5 * (gap_at[int(v0)] + gap_at[int(v1)])])
        nodes_a.append(-1 - fa)      # negative marks a facet midpoint
        nodes_b.append(-1 - np.array(mid_b, dtype=np.int64))
        scalar_a.append(mesh.nvertices + fa)
        gaps = [g0v, np.concatenate(gaps[1:])]

    na, nb = np.concatenate(nodes_a), np.concatenate(nodes_b)
    dofs_a, dofs_b = _node_dofs(basis, na), _node_dofs(basis, nb)
    xy = basis.doflocs[:, dofs_a[:, 0]]
    area = _tributary_area(system, fa)[np.concatenate(scalar_a)]

    tangent = _tangent(_unit(pair.normal_a))
    gap0 = _gap_function(pair, xy, np.concatenate(gaps))
    order = np.argsort(tangent @ xy, kind="stable")
    body_a = _single_body(system, dofs_a, pair.face_a)
    body_b = _single_body(system, dofs_b, pair.face_b)
    if body_a == body_b:
        raise ValueError(f"contact {pair.name!r}: both faces belong to one body")
    return PairedFace(pair, dofs_a[order], dofs_b[order], xy[:, order],
                      gap0[order], area[order], body_a, body_b)


def _coincident(mesh, vp: np.ndarray, fb: np.ndarray, tol: float) -> np.ndarray:
    """``vp`` with its −1 entries filled by coincident face-B vertices where every A vertex has one
    and they are all of face B's vertices (node to node applies); otherwise ``vp`` as given."""
    on_b = np.unique(mesh.facets[:, fb])
    open_ = vp[1] < 0
    if on_b.size != vp.shape[1]:
        return vp
    dist, near = cKDTree(mesh.p[:, on_b].T).query(mesh.p[:, vp[0, open_]].T)
    if (dist > tol).any():
        return vp
    filled = vp.copy()
    filled[1, open_] = on_b[near]
    if not np.array_equal(np.unique(filled[1]), on_b):
        return vp
    return filled


def _projected_face(system: System, pair: ContactPair, verts_a, g0v, fa, fb, tol) -> PairedFace:
    """Face A's nodes paired with face B by the dual mortar of fem/projection.py."""
    mesh, basis = system.mesh, system.basis
    n = _unit(pair.normal_a)
    tangent = _tangent(n)
    offset = n @ mesh.p[:, np.unique(mesh.facets[:, np.concatenate([fa, fb])])]
    if offset.max() - offset.min() > tol:
        raise ValueError(f"contact {pair.name!r}: faces {pair.face_a!r} and {pair.face_b!r} do not lie on "
                         f"one straight line normal to {tuple(n)} (apart by {offset.max() - offset.min():.3g} mm)")
    nodes, gaps, scalar = [verts_a], [g0v], [verts_a]
    if basis.facet_dofs.size:   # P2: the midpoints' gaps interpolate their end vertices' linearly
        at = np.zeros(mesh.nvertices)
        at[verts_a] = g0v
        nodes.append(-1 - fa)
        gaps.append(0.5 * (at[mesh.facets[0, fa]] + at[mesh.facets[1, fa]]))
        scalar.append(mesh.nvertices + fa)
    na = np.concatenate(nodes)
    dofs_a = _node_dofs(basis, na)
    xy = basis.doflocs[:, dofs_a[:, 0]]
    a = chain(mesh.p, mesh.facets[:, fa], fa, system.order, tangent)
    b = chain(mesh.p, mesh.facets[:, fb], fb, system.order, tangent)
    w = mortar_weights(a, b, system.order, na, tangent @ xy, tol)
    keep = w.status != LEFT_OUT
    if not keep.any():
        raise ValueError(f"contact {pair.name!r}: face {pair.face_b!r} reaches no node of face {pair.face_a!r}")
    area = _tributary_area(system, fa)[np.concatenate(scalar)]
    gap0 = _gap_function(pair, xy, np.concatenate(gaps))
    along = tangent @ xy
    idx = np.flatnonzero(keep)[np.argsort(along[keep], kind="stable")]
    out = np.flatnonzero(~keep)[np.argsort(along[~keep], kind="stable")]
    b_dofs = _node_dofs(basis, w.nodes_b)
    body_a = _single_body(system, dofs_a, pair.face_a)
    body_b = _single_body(system, b_dofs, pair.face_b)
    if body_a == body_b:
        raise ValueError(f"contact {pair.name!r}: both faces belong to one body")
    return PairedFace(pair, dofs_a[idx], b_dofs, xy[:, idx], gap0[idx], area[idx], body_a, body_b,
                      weights=w.w[idx], left_out=xy[:, out], projected=int((w.status == PROJECTED).sum()))


def _node_dofs(basis, nodes: np.ndarray) -> np.ndarray:
    # node ids: a vertex (>= 0) or −1 − facet for a P2 facet midpoint
    d = np.empty((nodes.size, 2), dtype=np.int64)
    v, m = nodes >= 0, nodes < 0
    d[v] = basis.nodal_dofs[:, nodes[v]].T
    if m.any():
        d[m] = basis.facet_dofs[:, -1 - nodes[m]].T
    return d


def _tangent(n: np.ndarray) -> np.ndarray:
    # along the face, towards larger r (towards larger z on a face normal to r)
    tangent = np.array([n[1], -n[0]])
    if tangent[0] < 0 or (tangent[0] == 0 and tangent[1] < 0):
        tangent = -tangent
    return tangent


def _gap_function(pair: ContactPair, xy: np.ndarray, gap0: np.ndarray) -> np.ndarray:
    if pair.initial_gap_function is None:
        return gap0
    gap0 = np.broadcast_to(np.asarray(pair.initial_gap_function(xy[0], xy[1]), float), gap0.shape).copy()
    if np.any(gap0 < 0) or not np.all(np.isfinite(gap0)):
        raise ValueError(f"contact {pair.name!r}: initial gaps must be finite and >= 0")
    return gap0


def _tributary_area(system: System, facets: np.ndarray) -> np.ndarray:
    # scalar dof numbering of P1/P2 on a triangle mesh: vertices, then facets
    fb = FacetBasis(system.mesh, element_for(system.order), facets=facets)
    return asm(ring_area, fb)


def _single_body(system: System, dofs: np.ndarray, face: str) -> int:
    bodies = np.unique(system.dof_body[dofs])
    if bodies.size != 1:
        raise ValueError(f"contact face {face!r} spans several bodies")
    return int(bodies[0])


def gap_operator(system: System, faces: list[PairedFace]) -> tuple[sp.csc_matrix, np.ndarray]:
    """G with gap = gap0 + G^T u; G lambda is the nodal force of compressive
    normal forces lambda (pushing A along -n, B along +n).  A column has one node on A and,
    on faces paired by projection, the several B nodes of its weights."""
    rows, cols, vals, g0 = [], [], [], []
    col = 0
    for face in faces:
        n = _unit(face.pair.normal_a)
        k = face.gap0.size
        c = np.arange(col, col + k)
        if face.weights is None:
            sides = ((face.dofs_a, c, np.full(k, -1.0)), (face.b_dofs, c, np.full(k, 1.0)))
        else:
            w = face.weights.tocoo()
            sides = ((face.dofs_a, c, np.full(k, -1.0)), (face.b_dofs[w.col], col + w.row, w.data))
        for d, cc, weight in sides:
            for comp in (0, 1):
                rows.append(d[:, comp])
                cols.append(cc)
                vals.append(weight * n[comp])
        g0.append(face.gap0)
        col += k
    N = system.basis.N
    if col == 0:
        return sp.csc_matrix((N, 0)), np.zeros(0)
    G = sp.csc_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                      shape=(N, col))
    return G, np.concatenate(g0)
