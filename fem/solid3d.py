"""3D tetrahedral reference of an :class:`FeModel` (tests and benchmarks only).

The section is revolved into linear tetrahedra (geometry/revolve.py) and solved as a
full 3D elastic contact, independently of the harmonic model: its own assembly, a dense
compliance of every contact node pair and the exact complementarity solver of fem/lcp.py.
Nodal displacements are expressed in each node's cylindrical frame (u_r, u_θ, u_z), so a
rigid radial support fixes u_r and a contact normal (n_r, n_z) is the one of the section.

Rigid modes: every free body is held by six point constraints on three of its vertices
(3-2-1); its axial translation and, where free, its tilt come back as unknowns fixed by
the force and moment balance.  Held rigid motion of the pressed body is an initial gap.
Supported bodies get one u_θ constraint against spinning about the axis.  Loads reach the
nodes as the section's ring forces divided equally among the layers (exact totals).
Limits: rigid supports only (no spring beds), no vertex on the axis.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from skfem import Basis, BilinearForm, ElementTetP1, ElementVector, MeshTet, asm
from skfem.helpers import ddot, sym_grad, trace

from ..geometry.revolve import revolve
from .assembly import assemble
from .condense import condense
from .forms import lame
from .lcp import solve_lcp
from .model import FeModel
from .pairing import pair_face
from .tilted import GridInterface


@BilinearForm
def elasticity3d(u, v, w):
    lam, mu = lame(w.E, w.nu)
    return lam * trace(sym_grad(u)) * trace(sym_grad(v)) + 2.0 * mu * ddot(sym_grad(u), sym_grad(v))


@dataclass
class Solid3dResult:
    interfaces: list[GridInterface]
    approach: dict[str, float]
    dofs: int
    seconds: float
    displacement: np.ndarray | None = None     # (3, nodes) u_r, u_θ, u_z in each node's frame


class Solid3d:
    """Assemble, constrain and condense the revolved model once."""

    def __init__(self, model: FeModel, layers: int, pressed: str | None = None,
                 self_aligning: bool = False, contact: bool = True):
        t0 = time.perf_counter()
        if model.element_order != 1:
            raise ValueError("the 3D reference uses linear tetrahedra: give a model with element_order = 1")
        for s in model.supports:
            if any(k is not None and k > 0 for k in (s.axial_stiffness, s.radial_stiffness)):
                raise ValueError("the 3D reference takes rigid supports only")
        self.model, self.layers = model, layers
        self.system = system = assemble(model)       # section data: faces, ring loads, pairing
        self.rev = rev = revolve(model.points, model.triangles, layers)
        mesh = MeshTet(rev.points, rev.tets)
        self.basis = basis = Basis(mesh, ElementVector(ElementTetP1()))
        E = np.asarray(model.element_youngs_modulus, float)[rev.tet_triangle]
        nu = np.asarray(model.element_poissons_ratio, float)[rev.tet_triangle]
        nqp = basis.X.shape[1]
        K = asm(elasticity3d, basis, E=np.repeat(E[:, None], nqp, 1), nu=np.repeat(nu[:, None], nqp, 1))
        self.node_theta = np.repeat(rev.theta, rev.section_vertices)
        R = self._cylindrical(self.node_theta)
        self.K = (R.T @ K @ R).tocsr()
        n2 = rev.section_vertices
        vert = np.full(system.basis.N, -1, np.int64)
        for c in (0, 1):
            vert[system.basis.nodal_dofs[c]] = np.arange(n2)
        self._vert = vert
        self.dof = lambda v, j, c: basis.nodal_dofs[c, rev.node(v, j)]
        # loads: the section's ring forces shared equally by the layers
        f2 = system.f
        f = np.zeros(basis.N)
        for c, c3 in ((0, 0), (1, 2)):
            d2 = system.basis.nodal_dofs[c]
            for j in range(layers):
                f[self.dof(np.arange(n2), j, c3)] += f2[d2] / layers
        self.f = f
        body_of_vertex = np.full(n2, -1, np.int64)
        for c in range(3):
            body_of_vertex[np.asarray(model.triangles)[c]] = model.element_body
        self.body_of_vertex = body_of_vertex
        fixed = []
        held_bodies = set()
        for s in model.supports:
            verts = np.unique(system.mesh.facets[:, system.facets[s.face]])
            for c, k in ((0, s.radial_stiffness), (2, s.axial_stiffness)):
                if k is None:
                    fixed += [self.dof(verts, j, c) for j in range(layers)]
                    held_bodies.add(int(body_of_vertex[verts[0]]))
        for b in held_bodies:                  # spin about the axis
            v = int(np.flatnonzero(body_of_vertex == b)[0])
            fixed.append(np.array([self.dof(v, 0, 1)]))
        free = [j for j, flag in enumerate(model.body_axially_free) if flag]
        self.free = free
        self.pressed = model.body_names.index(pressed) if pressed else None
        modes, self.mode_body = [], []
        x, y, z = rev.points
        for b in free:
            verts = np.flatnonzero(body_of_vertex == b)
            on_face = np.unique(np.concatenate([np.ravel(p.vertex_pairs) for p in model.contacts] or [[]]))
            away = np.setdiff1d(verts, on_face)
            v = int(away[np.argmax(self.system.mesh.p[0, away])])
            a = [rev.node(v, 0), rev.node(v, layers // 3), rev.node(v, 2 * layers // 3)]
            # 3-2-1 in each node's frame: six constraints that stop all rigid motion
            fixed.append(np.array([basis.nodal_dofs[c, a[0]] for c in (0, 1, 2)] +
                                  [basis.nodal_dofs[c, a[1]] for c in (1, 2)] + [basis.nodal_dofs[2, a[2]]]))
            on = np.isin(np.arange(rev.points.shape[1]) % n2, verts)
            axial = np.zeros((3, x.size))
            axial[2, on] = 1.0
            modes.append(axial)
            self.mode_body.append((b, "axial"))
            if b != self.pressed or self_aligning:
                z0 = float(np.mean(z[on]))
                for about in ("y", "x"):
                    u = np.zeros((3, x.size))
                    if about == "y":
                        u[0, on], u[2, on] = (z[on] - z0), -x[on]
                    else:
                        u[1, on], u[2, on] = -(z[on] - z0), y[on]
                    modes.append(self._to_local(u))
                    self.mode_body.append((b, about))
        self.fixed = np.unique(np.concatenate(fixed)) if fixed else np.zeros(0, np.int64)
        self.modes = np.array([self._dof_vector(m) for m in modes]).T if modes else np.zeros((basis.N, 0))
        self.contact = contact
        if contact:
            self._condense()
        self.prepare_seconds = time.perf_counter() - t0

    def _dof_vector(self, u3):
        out = np.zeros(self.basis.N)
        for c in range(3):
            out[self.basis.nodal_dofs[c]] = u3[c]
        return out

    def _cylindrical(self, th):
        """u_xyz = R u_(r, θ, z) per node."""
        b = self.basis
        nd = b.nodal_dofs
        c, s = np.cos(th), np.sin(th)
        rows = np.concatenate([nd[0], nd[0], nd[1], nd[1], nd[2]])
        cols = np.concatenate([nd[0], nd[1], nd[0], nd[1], nd[2]])
        vals = np.concatenate([c, -s, s, c, np.ones(th.size)])
        return sp.csr_matrix((vals, (rows, cols)), shape=(b.N, b.N))

    def _to_local(self, u):
        c, s = np.cos(self.node_theta), np.sin(self.node_theta)
        return np.vstack([c * u[0] + s * u[1], -s * u[0] + c * u[1], u[2]])

    def _condense(self):
        system, L = self.system, self.layers
        self.faces = faces = [pair_face(system, p) for p in self.model.contacts]
        rows, cols, vals, g0 = [], [], [], []
        col = 0
        self.pairs = []
        for face in faces:
            n = np.asarray(face.pair.normal_a, float)
            n = n / np.linalg.norm(n)
            va, vb = self._vert[face.dofs_a[:, 0]], self._vert[face.dofs_b[:, 0]]
            for j in range(L):          # column order: slant node fastest, then layer
                cidx = col + j * va.size + np.arange(va.size)
                for v, sign in ((va, -1.0), (vb, 1.0)):
                    for c2, c3 in ((0, 0), (1, 2)):
                        rows.append(self.dof(v, j, c3))
                        cols.append(cidx)
                        vals.append(np.full(va.size, sign * n[c2]))
                g0.append(face.gap0)
            self.pairs.append((va, vb, n, col))
            col += L * va.size
        N = self.basis.N
        self.G = sp.csc_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(N, col))
        self.g0 = np.concatenate(g0)
        keep = np.ones(N, bool)
        keep[self.fixed] = False
        self.inner = inner = np.flatnonzero(keep)
        Ki = self.K[inner][:, inner].tocsc()
        Gi = self.G[inner]
        position = np.full(N, -1, np.int64)
        position[inner] = np.arange(inner.size)
        node_dofs, normals = [], []
        for va, vb, n, _ in self.pairs:
            for v in (va, vb):
                for j in range(L):
                    node_dofs.append(np.column_stack([position[self.dof(v, j, 0)], position[self.dof(v, j, 2)]]))
                    normals.append(np.tile(n, (v.size, 1)))
        fast = condense(Ki, np.vstack(node_dofs), np.vstack(normals))
        if fast is not None:
            self.C = fast.compliance(Gi)
            self.u_load = fast.solve(self.f[inner])
        else:                   # a contact node is held: one solve per contact force
            from scipy.sparse.linalg import splu
            lu = splu(Ki, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options=dict(SymmetricMode=True))
            X = lu.solve(np.column_stack([self.f[inner], Gi.toarray()]))
            self.u_load = X[:, 0]
            C = Gi.T @ X[:, 1:]
            self.C = 0.5 * (C + C.T)
        self.g_load = Gi.T @ self.u_load
        self.B = self.G.T @ self.modes
        e = []
        for b, kind in self.mode_body:
            e.append(float(self.modes[:, len(e)] @ self.f) if kind == "axial" else 0.0)
        self.e = np.array(e)

    def _face_area(self, va) -> np.ndarray:
        """(k, layers) lumped area of every node of a revolved face (a third of each flat
        triangle): its own tributary area, as the diagonals of the split differ from node to node."""
        mesh = self.basis.mesh
        nodes = self.rev.node(va[:, None], np.arange(self.layers)[None])        # (k, layers)
        on = np.zeros(mesh.p.shape[1], bool)
        on[nodes.ravel()] = True
        tri = mesh.facets[:, mesh.boundary_facets()]
        tri = tri[:, on[tri].all(axis=0)]
        x = mesh.p[:, tri]
        a = 0.5 * np.linalg.norm(np.cross(x[:, 1] - x[:, 0], x[:, 2] - x[:, 0], axis=0), axis=0)
        area = np.bincount(tri.ravel(), weights=np.repeat(a[None] / 3.0, 3, axis=0).ravel(),
                           minlength=mesh.p.shape[1])
        return area[nodes]

    def rigid_gap(self, tilt_deg: float, offset_mm: float, pivot_z: float) -> np.ndarray:
        """Gap change from a rigid rotation (about y through (0, 0, pivot_z)) and shift along x
        of the pressed body, as in fem/tilted.py."""
        phi = math.radians(tilt_deg)
        x, y, z = self.rev.points
        u = np.vstack([phi * (z - pivot_z) + offset_mm, 0.0 * x, -phi * x])
        on = np.isin(np.arange(x.size) % self.rev.section_vertices,
                     np.flatnonzero(self.body_of_vertex == self.pressed))
        return self.G.T @ self._dof_vector(self._to_local(u * on))

    def solve(self, tilt_deg=0.0, offset_mm=0.0, pivot_z=0.0) -> Solid3dResult:
        t0 = time.perf_counter()
        g = self.g0 + self.g_load + self.rigid_gap(tilt_deg, offset_mm, pivot_z)
        sol = solve_lcp(self.C, g, self.B, self.e)
        out = []
        for (va, vb, n, col), face in zip(self.pairs, self.faces):
            k = va.size
            lam = sol.lam[col:col + k * self.layers].reshape(self.layers, k).T
            gap = sol.gap[col:col + k * self.layers].reshape(self.layers, k).T
            cell = self._face_area(va)
            out.append(GridInterface(face.pair.name, face.xy[0].copy(), face.xy[1].copy(), self.rev.theta,
                                     lam / cell, lam, face.area.copy(), np.maximum(gap, 0.0), lam > 0))
        approach = {self.model.body_names[b]: float(d) for (b, kind), d in zip(self.mode_body, sol.delta)
                    if kind == "axial"}
        return Solid3dResult(out, approach, int(self.inner.size), self.prepare_seconds + time.perf_counter() - t0)

    def linear(self, f: np.ndarray) -> np.ndarray:
        """Displacements (3, nodes) in the node frames under nodal loads f (no contact, all
        constraints held; free bodies pinned), for load-pattern checks."""
        keep = np.ones(self.basis.N, bool)
        keep[self.fixed] = False
        inner = np.flatnonzero(keep)
        from scipy.sparse.linalg import spsolve
        u = np.zeros(self.basis.N)
        u[inner] = spsolve(self.K[inner][:, inner].tocsc(), f[inner])
        return u[self.basis.nodal_dofs]
