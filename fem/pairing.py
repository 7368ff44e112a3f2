"""Node-to-node pairing of the matching contact faces and their gap operator."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from skfem import FacetBasis, asm

from .assembly import System, element_for
from .forms import ring_area
from .model import ContactPair


@dataclass
class PairedFace:
    """Paired nodes of one contact, sorted along face A."""

    pair: ContactPair
    dofs_a: np.ndarray     # (k, 2) r and z dofs of the node on A
    dofs_b: np.ndarray     # (k, 2) same on B
    xy: np.ndarray         # (2, k) node coordinates, r and z
    gap0: np.ndarray       # (k,) initial normal gap
    area: np.ndarray       # (k,) tributary ring area on face A, mm^2
    body_a: int
    body_b: int


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
    if set(on_a.tolist()) != set(vp[0].tolist()):
        raise ValueError(f"contact {pair.name!r}: vertex pairs must cover face {pair.face_a!r}")
    if np.max(np.abs(mesh.p[:, vp[0]] - mesh.p[:, vp[1]])) > 1e-6 * (1.0 + np.abs(mesh.p).max()):
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

    def dofs(nodes):
        d = np.empty((nodes.size, 2), dtype=np.int64)
        v, m = nodes >= 0, nodes < 0
        d[v] = basis.nodal_dofs[:, nodes[v]].T
        if m.any():
            d[m] = basis.facet_dofs[:, -1 - nodes[m]].T
        return d

    na, nb = np.concatenate(nodes_a), np.concatenate(nodes_b)
    dofs_a, dofs_b = dofs(na), dofs(nb)
    xy = basis.doflocs[:, dofs_a[:, 0]]
    area = _tributary_area(system, fa)[np.concatenate(scalar_a)]

    n = _unit(pair.normal_a)
    tangent = np.array([n[1], -n[0]])
    if tangent[0] < 0 or (tangent[0] == 0 and tangent[1] < 0):
        tangent = -tangent
    gap0 = np.concatenate(gaps)
    if pair.initial_gap_function is not None:
        gap0 = np.broadcast_to(np.asarray(pair.initial_gap_function(xy[0], xy[1]), float),
                               gap0.shape).copy()
        if np.any(gap0 < 0) or not np.all(np.isfinite(gap0)):
            raise ValueError(f"contact {pair.name!r}: initial gaps must be finite and >= 0")
    order = np.argsort(tangent @ xy, kind="stable")
    body_a = _single_body(system, dofs_a, pair.face_a)
    body_b = _single_body(system, dofs_b, pair.face_b)
    if body_a == body_b:
        raise ValueError(f"contact {pair.name!r}: both faces belong to one body")
    return PairedFace(pair, dofs_a[order], dofs_b[order], xy[:, order],
                      gap0[order], area[order], body_a, body_b)


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
    normal forces lambda (pushing A along -n, B along +n)."""
    rows, cols, vals, g0 = [], [], [], []
    col = 0
    for face in faces:
        n = _unit(face.pair.normal_a)
        k = face.gap0.size
        c = np.arange(col, col + k)
        for d, sign in ((face.dofs_a, -1.0), (face.dofs_b, 1.0)):
            for comp in (0, 1):
                rows.append(d[:, comp])
                cols.append(c)
                vals.append(np.full(k, sign * n[comp]))
        g0.append(face.gap0)
        col += k
    N = system.basis.N
    if col == 0:
        return sp.csc_matrix((N, 0)), np.zeros(0)
    G = sp.csc_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                      shape=(N, col))
    return G, np.concatenate(g0)
