"""Rectangular (r, z) blocks meshed directly in scikit-fem for the verification cases.

Closed-form checks need meshes whose nodes sit exactly where the reference is evaluated
(the axis, the contact radius), which the clutch mesher does not promise; so these blocks
are tensor-product meshes built here, each body with its own vertices.
"""
from __future__ import annotations

import numpy as np
from skfem import MeshTri

from ..fem import ContactPair, FeModel


def graded(start: float, fine_end: float, stop: float, h: float, growth: float = 1.25) -> np.ndarray:
    """Uniform spacing h on [start, fine_end], then geometric growth up to stop."""
    x = list(np.linspace(start, fine_end, int(round((fine_end - start) / h)) + 1))
    step = h
    while x[-1] < stop:
        step *= growth
        x.append(min(x[-1] + step, stop))
    if stop - x[-2] < 0.5 * (x[-2] - x[-3]):
        del x[-2]         # no sliver at the far end
    return np.array(x)


class BlockSection:
    """Several rectangular bodies in one mesh; faces are named ``<body>_<bottom|top|inner|outer>``."""

    def __init__(self):
        self.points = np.zeros((2, 0))
        self.triangles = np.zeros((3, 0), dtype=np.int64)
        self.element_body = np.zeros(0, dtype=np.int64)
        self.faces: dict[str, np.ndarray] = {}
        self.names: list[str] = []

    def add_block(self, name: str, r, z) -> "BlockSection":
        m = MeshTri.init_tensor(np.asarray(r, float), np.asarray(z, float))
        off = self.points.shape[1]
        self.points = np.hstack([self.points, m.p])
        self.triangles = np.hstack([self.triangles, m.t + off])
        self.element_body = np.concatenate([self.element_body, np.full(m.t.shape[1], len(self.names))])
        self.names.append(name)
        bf = m.facets[:, m.boundary_facets()]
        mid = m.p[:, bf].mean(axis=1)
        sides = {"bottom": (1, min(z)), "top": (1, max(z)), "inner": (0, min(r)), "outer": (0, max(r))}
        for side, (axis, value) in sides.items():
            self.faces[f"{name}_{side}"] = bf[:, np.isclose(mid[axis], value)] + off
        return self

    def vertices_on(self, face: str) -> np.ndarray:
        return np.unique(self.faces[face])

    def pair(self, name, face_a, face_b, normal_a, gap=lambda r, z: 0.0 * r) -> ContactPair:
        va, vb = self.vertices_on(face_a), self.vertices_on(face_b)
        pa, pb = self.points[:, va], self.points[:, vb]
        d = np.hypot(pa[0][:, None] - pb[0][None], pa[1][:, None] - pb[1][None])
        match = d.argmin(axis=1)
        if np.any(d[np.arange(va.size), match] > 1e-9):
            raise ValueError(f"{face_a} and {face_b} have no matching nodes")
        return ContactPair(name, face_a, face_b, normal_a, np.vstack([va, vb[match]]),
                           np.asarray(gap(pa[0], pa[1]), float))

    def model(self, youngs_modulus, poissons_ratio, axially_free, **kw) -> FeModel:
        E = np.asarray(youngs_modulus, float)[self.element_body]
        nu = np.asarray(poissons_ratio, float)[self.element_body]
        return FeModel(self.points, self.triangles, self.element_body, E, nu, list(self.names),
                       list(axially_free), dict(self.faces), **kw)

    def vertex_at(self, r: float, z: float) -> int:
        return int(np.argmin(np.hypot(self.points[0] - r, self.points[1] - z)))
