"""Revolve a triangulated (r, z) section about the z axis into tetrahedra (3D reference model).

Every triangle sweeps ``layers`` equal sectors into prisms; each prism is split into three
tetrahedra by the rule of Dompierre et al. (1999, "How to subdivide pyramids, prisms and
hexahedra into tetrahedra"): every quadrilateral face takes the diagonal through its
smallest global vertex number, so neighbouring prisms agree and the mesh is conforming.
Node (v, j) of section vertex v at angle θ_j = 2π j / layers has number j · n_vertices + v.

Why not a gmsh revolve (the issue's wording): this does what gmsh's layered
``revolve(..., numElements=[layers])`` followed by tetrahedral splitting does — same
structured prism layers, same conforming split — but on the FE stage's own triangles
(``FeModel.points``/``triangles``), which are not always a gmsh model (the tests' hand-built
blocks) and would otherwise need a second meshing of the section.  Keeping the section's
vertices unchanged is what the 3D contact needs: node (v, j) of a friction face lies exactly
on node (v', j) of its mate, so the 3D node pairs, ring loads and supports come from the
section's own pairing without any geometric search; a full 360° gmsh revolve has to be
split into sweeps below 180° and its seam nodes merged first.  Conformity is tested
(tests/test_tilt.py: every interior face shared by exactly two tetrahedra).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

# vertex permutations of a prism (0, 1, 2 bottom; 3, 4, 5 above them) that bring vertex i to 0
_ROTATE = np.array([[0, 1, 2, 3, 4, 5], [1, 2, 0, 4, 5, 3], [2, 0, 1, 5, 3, 4],
                    [3, 5, 4, 0, 2, 1], [4, 3, 5, 1, 0, 2], [5, 4, 3, 2, 1, 0]])


@dataclass
class RevolvedMesh:
    points: np.ndarray        # (3, n_vertices * layers) x, y, z in mm
    tets: np.ndarray          # (4, 3 * n_triangles * layers), positive volume
    tet_triangle: np.ndarray  # section triangle each tetrahedron came from
    layers: int
    section_vertices: int

    @property
    def theta(self) -> np.ndarray:
        return 2.0 * np.pi * np.arange(self.layers) / self.layers

    def node(self, vertex, layer):
        return np.asarray(layer) % self.layers * self.section_vertices + np.asarray(vertex)


def revolve(points: np.ndarray, triangles: np.ndarray, layers: int) -> RevolvedMesh:
    """``points`` (2, n) r, z; ``triangles`` (3, m). No vertex may lie on the axis."""
    p = np.asarray(points, float)
    t = np.asarray(triangles, np.int64)
    if np.any(p[0] <= 1e-9):
        raise ValueError("revolve: the section touches the axis (r = 0); the 3D reference needs a bore")
    if layers < 3:
        raise ValueError("revolve: at least three layers around the axis")
    n, m = p.shape[1], t.shape[1]
    th = 2.0 * np.pi * np.arange(layers) / layers
    pts = np.vstack([np.outer(np.cos(th), p[0]).ravel(), np.outer(np.sin(th), p[0]).ravel(),
                     np.tile(p[1], layers)])
    j = np.repeat(np.arange(layers), m)
    tri = np.tile(t, layers)
    prism = np.vstack([tri + j * n, tri + (j + 1) % layers * n])          # (6, m * layers)
    first = np.argmin(prism, axis=0)
    v = np.take_along_axis(prism, _ROTATE[first].T, axis=0)
    diag = np.minimum(v[1], v[5]) < np.minimum(v[2], v[4])
    a = np.where(diag, [[0], [1], [2], [5]], [[0], [1], [2], [4]])
    b = np.where(diag, [[0], [1], [5], [4]], [[0], [4], [2], [5]])
    c = np.array([[0], [4], [5], [3]]).repeat(v.shape[1], axis=1)
    tets = np.hstack([np.take_along_axis(v, k, axis=0) for k in (a, b, c)])
    source = np.tile(np.repeat(np.arange(m)[None], layers, axis=0).ravel(), 3)
    x = pts[:, tets]
    vol = np.einsum("ij,ij->j", np.cross(x[:, 1] - x[:, 0], x[:, 2] - x[:, 0], axis=0), x[:, 3] - x[:, 0])
    if np.any(np.abs(vol) < 1e-14 * np.abs(vol).max()):
        raise ValueError("revolve: degenerate tetrahedra (too few layers or a collapsed triangle)")
    flip = vol < 0
    tets[[2, 3]] = np.where(flip, tets[[3, 2]], tets[[2, 3]])
    return RevolvedMesh(pts, tets, source, layers, n)
