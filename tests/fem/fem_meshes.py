"""Rectangular (r, z) sections meshed directly in scikit-fem for the FE tests."""
from __future__ import annotations

import numpy as np
from skfem import MeshTri

from clutchfe.fem import ContactPair, FeModel


def graded(start, fine_end, stop, h, growth=1.25):
    """Uniform spacing h on [start, fine_end], then geometric growth to stop."""
    x = list(np.linspace(start, fine_end, int(round((fine_end - start) / h)) + 1))
    step = h
    while x[-1] < stop:
        step *= growth
        x.append(min(x[-1] + step, stop))
    if stop - x[-2] < 0.5 * (x[-2] - x[-3]):
        del x[-2]
    return np.array(x)


class Section:
    """Several rectangular bodies in one mesh, each with its own vertices."""

    def __init__(self):
        self.points = np.zeros((2, 0))
        self.triangles = np.zeros((3, 0), dtype=np.int64)
        self.element_body = np.zeros(0, dtype=np.int64)
        self.faces = {}
        self.names = []

    def add_block(self, name, r, z):
        m = MeshTri.init_tensor(np.asarray(r, float), np.asarray(z, float))
        off = self.points.shape[1]
        self.points = np.hstack([self.points, m.p])
        self.triangles = np.hstack([self.triangles, m.t + off])
        self.element_body = np.concatenate([self.element_body,
                                            np.full(m.t.shape[1], len(self.names))])
        self.names.append(name)
        bf = m.facets[:, m.boundary_facets()]
        mid = m.p[:, bf].mean(axis=1)
        sides = {"bottom": (1, min(z)), "top": (1, max(z)), "inner": (0, min(r)),
                 "outer": (0, max(r))}
        for side, (axis, value) in sides.items():
            on = np.isclose(mid[axis], value)
            self.faces[f"{name}_{side}"] = bf[:, on] + off
        return self

    def vertices_on(self, face):
        return np.unique(self.faces[face])

    def pair(self, name, face_a, face_b, normal_a, gap=lambda r, z: 0.0 * r):
        va, vb = self.vertices_on(face_a), self.vertices_on(face_b)
        pa, pb = self.points[:, va], self.points[:, vb]
        d = np.hypot(pa[0][:, None] - pb[0][None], pa[1][:, None] - pb[1][None])
        match = d.argmin(axis=1)
        assert np.all(d[np.arange(va.size), match] < 1e-9), "interfaces must match"
        return ContactPair(name, face_a, face_b, normal_a, np.vstack([va, vb[match]]),
                           np.asarray(gap(pa[0], pa[1]), float))

    def model(self, E, nu, free, **kw):
        E = np.asarray(E, float)[self.element_body]
        nu = np.asarray(nu, float)[self.element_body]
        return FeModel(self.points, self.triangles, self.element_body, E, nu,
                       list(self.names), list(free), dict(self.faces), **kw)

    def vertex_at(self, r, z):
        return int(np.argmin(np.hypot(self.points[0] - r, self.points[1] - z)))
