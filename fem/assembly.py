"""From an :class:`FeModel` to a stiffness matrix, load vector and constraints."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from skfem import (Basis, ElementTriP0, ElementTriP1, ElementTriP2, ElementVector,
                   FacetBasis, MeshTri, asm)

from .forms import axial_traction, elasticity, face_spring, normal_pressure, ring_area
from .model import FaceLoad, FacePressure, FeModel, RingLoad

RING_LOAD_TOLERANCE = 1e-6  # mm; the geometry stage puts a vertex on every load circle


@dataclass
class System:
    model: FeModel
    mesh: MeshTri
    basis: Basis                  # vector displacement basis
    facets: dict[str, np.ndarray]  # face name -> facet indices
    dof_body: np.ndarray          # body index of every dof
    K: object                     # sparse stiffness, all dofs
    f: np.ndarray                 # external loads, all dofs
    fixed: np.ndarray             # dofs held at zero by rigid supports
    body_load: np.ndarray         # axial external force on each body, N
    face_area: dict[str, float] = field(default_factory=dict)

    @property
    def order(self) -> int:
        return self.model.element_order


def element_for(order: int):
    if order == 1:
        return ElementTriP1()
    if order == 2:
        return ElementTriP2()
    raise ValueError(f"element_order must be 1 or 2, got {order}")


def build_mesh(model: FeModel) -> MeshTri:
    p = np.asarray(model.points, dtype=float)
    t = np.asarray(model.triangles, dtype=np.int64)
    if p.shape[0] != 2 or t.shape[0] != 3:
        raise ValueError("points must be (2, n) and triangles (3, m)")
    if np.any(p[0] < -1e-12):
        raise ValueError("all radii must be >= 0 (r is the distance from the axis)")
    return MeshTri(p, t)


def find_facets(mesh: MeshTri, faces: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
    lookup = {tuple(e): i for i, e in enumerate(np.sort(mesh.facets, axis=0).T)}
    boundary = set(mesh.boundary_facets().tolist())
    out = {}
    for name, pairs in faces.items():
        pairs = np.sort(np.asarray(pairs, dtype=np.int64).reshape(2, -1), axis=0)
        idx = []
        for a, b in pairs.T:
            i = lookup.get((int(a), int(b)))
            if i is None or i not in boundary:
                raise ValueError(f"face {name!r}: ({a}, {b}) is not a boundary edge of the mesh")
            idx.append(i)
        out[name] = np.array(idx, dtype=np.int64)
    return out


def facet_dofs(basis: Basis, mesh: MeshTri, facets: np.ndarray, comp: int) -> np.ndarray:
    """Component ``comp`` dofs on the given facets: vertices, then midpoints (P2)."""
    verts = np.unique(mesh.facets[:, facets])
    dofs = [basis.nodal_dofs[comp, verts]]
    if basis.facet_dofs.size:
        dofs.append(basis.facet_dofs[comp, facets])
    return np.concatenate(dofs)


def face_basis(mesh, elem, facets, intorder=None):
    return FacetBasis(mesh, elem, facets=facets, intorder=intorder)


def face_ring_area(mesh, facets) -> float:
    fb = face_basis(mesh, ElementTriP0(), facets)
    return float(np.sum(asm(ring_area, fb)))


def body_of_dofs(model: FeModel, basis: Basis) -> np.ndarray:
    body = np.full(basis.N, -1, dtype=np.int64)
    eb = np.asarray(model.element_body, dtype=np.int64)
    for j in range(len(model.body_names)):
        d = np.unique(basis.element_dofs[:, eb == j])
        if np.any((body[d] != -1) & (body[d] != j)):
            raise ValueError(f"body {model.body_names[j]!r} shares mesh vertices with another "
                             "body; bodies that touch must be meshed apart and joined by a contact")
        body[d] = j
    return body


def _face(system_facets, name, what):
    if name not in system_facets:
        raise ValueError(f"{what} refers to unknown face {name!r}")
    return system_facets[name]


def assemble(model: FeModel) -> System:
    mesh = build_mesh(model)
    elem = ElementVector(element_for(model.element_order))
    basis = Basis(mesh, elem)
    facets = find_facets(mesh, model.faces)
    nt = mesh.t.shape[1]
    E = np.asarray(model.element_youngs_modulus, dtype=float)
    nu = np.asarray(model.element_poissons_ratio, dtype=float)
    if E.shape != (nt,) or nu.shape != (nt,):
        raise ValueError("one Young's modulus and Poisson's ratio per triangle expected")
    if np.any(E <= 0) or np.any((nu <= -1) | (nu >= 0.5)):
        raise ValueError("need E > 0 and -1 < nu < 0.5 on every triangle")
    nqp = basis.X.shape[1]
    K = asm(elasticity, basis, E=np.repeat(E[:, None], nqp, 1), nu=np.repeat(nu[:, None], nqp, 1))

    dof_body = body_of_dofs(model, basis)
    f = np.zeros(basis.N)
    fixed = []
    areas = {}

    def area(name):
        if name not in areas:
            areas[name] = face_ring_area(mesh, _face(facets, name, "area"))
        return areas[name]

    for s in model.supports:
        fac = _face(facets, s.face, "support")
        for comp, k in ((0, s.radial_stiffness), (1, s.axial_stiffness)):
            if k is None:
                fixed.append(facet_dofs(basis, mesh, fac, comp))
            elif k < 0:
                raise ValueError(f"support on {s.face!r}: stiffness must be >= 0, got {k}")
            elif k > 0:
                fb = face_basis(mesh, elem, fac)
                K = K + asm(face_spring, fb, k_area=k / area(s.face), d=comp)

    for load in model.loads:
        fac = _face(facets, load.face, "load")
        if isinstance(load, FaceLoad):
            fb = face_basis(mesh, elem, fac)
            f += asm(axial_traction, fb, t=load.axial_force / area(load.face))
        elif isinstance(load, FacePressure):
            fb = face_basis(mesh, elem, fac)
            f += asm(normal_pressure, fb, p=load.pressure)
        elif isinstance(load, RingLoad):
            verts = np.unique(mesh.facets[:, fac])
            dist = np.abs(mesh.p[0, verts] - load.radius)
            i = int(np.argmin(dist))
            if dist[i] > RING_LOAD_TOLERANCE:
                raise ValueError(f"ring load on {load.face!r}: no vertex at r = {load.radius} mm "
                                 f"(nearest {mesh.p[0, verts[i]]:.6g} mm)")
            f[basis.nodal_dofs[1, verts[i]]] += load.axial_force
        else:
            raise ValueError(f"unknown load type {type(load).__name__}")

    fixed = np.unique(np.concatenate(fixed)) if fixed else np.zeros(0, dtype=np.int64)
    zdofs = _axial_dofs(basis)
    body_load = np.array([f[zdofs[dof_body[zdofs] == j]].sum()
                          for j in range(len(model.body_names))])
    return System(model, mesh, basis, facets, dof_body, K.tocsr(), f, fixed, body_load, areas)


def _axial_dofs(basis: Basis) -> np.ndarray:
    d = [basis.nodal_dofs[1]]
    if basis.facet_dofs.size:
        d.append(basis.facet_dofs[1])
    return np.concatenate(d)


def axial_dofs_of_body(system: System, j: int) -> np.ndarray:
    z = _axial_dofs(system.basis)
    return z[system.dof_body[z] == j]


def scalar_basis(system: System):
    return Basis(system.mesh, element_for(system.order))
