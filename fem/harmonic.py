"""Fourier harmonics of the axisymmetric model: non-axisymmetric loads on the same (r, z) mesh.

Harmonic n of the symmetric set (Zienkiewicz & Taylor, The Finite Element Method,
"axisymmetric solids under non-symmetric load"):

    u_r = U_r(r, z) cos nθ,   u_z = U_z(r, z) cos nθ,   u_θ = U_θ(r, z) sin nθ

so every (r, z) node carries three amplitudes.  The strains are linear in n,

    ε_rr = U_r,r   ε_zz = U_z,z   ε_θθ = (U_r + n U_θ)/r   γ_rz = U_r,z + U_z,r      (× cos nθ)
    γ_rθ = (U_θ,r − U_θ/r − n U_r/r)   γ_zθ = (U_θ,z − n U_z/r)                      (× sin nθ)

so K(n) = K_a + n K_b + n² K_c is assembled once from three sample harmonics.
Weight: the θ integral of cos² is π for n ≥ 1; the forms carry 2π r (as fem/forms.py) so
that the nodal force of harmonic n is F_n = 2π Q_n for a line load Q_n cos nθ (N/rad),
the same convention as n = 0, where F_0 is the ring's total force.

Conditions on the axis (r = 0) keep the field single-valued: n = 0 U_r = U_θ = 0;
n = 1 U_z = 0 and U_r + U_θ = 0; n ≥ 2 all three zero.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from skfem import Basis, BilinearForm, ElementVector, asm

from .assembly import System, element_for, face_basis
from .forms import lame

AXIS_TOLERANCE = 1e-9       # mm


def harmonic_strain(u, r, n):
    """(cos-part: rr, zz, θθ, rz; sin-part: rθ, zθ) engineering strains of harmonic n."""
    du = u.grad
    return (du[0, 0], du[1, 1], (u[0] + n * u[2]) / r, du[0, 1] + du[1, 0],
            du[2, 0] - u[2] / r - n * u[0] / r, du[2, 1] - n * u[1] / r)


@BilinearForm
def harmonic_elasticity(u, v, w):
    r, n = w.x[0], w.n
    lam, mu = lame(w.E, w.nu)
    e, d = harmonic_strain(u, r, n), harmonic_strain(v, r, n)
    tr = e[0] + e[1] + e[2]
    normal = sum((lam * tr + 2.0 * mu * e[i]) * d[i] for i in range(3))
    shear = mu * (e[3] * d[3] + e[4] * d[4] + e[5] * d[5])
    return 2.0 * np.pi * r * (normal + shear)


@BilinearForm
def harmonic_face_spring(u, v, w):
    """Spring bed on one displacement component (total stiffness k of a uniform motion)."""
    return w.k_area * u[w.d] * v[w.d] * 2.0 * np.pi * w.x[0]


class HarmonicStiffness:
    """K(n) = K_a + n K_b + n² K_c of the model's bodies and spring supports, 3 dofs a node.

    ``system`` is the n = 0 :class:`System` of the same model (fem.assemble); the harmonic
    basis reuses its mesh, facets and face areas, and ``dof3[d]`` maps each of its dofs
    (r or z component) to the harmonic basis.
    """

    def __init__(self, system: System):
        self.system = system
        mesh, model = system.mesh, system.model
        self.basis = Basis(mesh, ElementVector(element_for(model.element_order), dim=3))
        nqp = self.basis.X.shape[1]
        E = np.repeat(np.asarray(model.element_youngs_modulus, float)[:, None], nqp, 1)
        nu = np.repeat(np.asarray(model.element_poissons_ratio, float)[:, None], nqp, 1)
        K0, K1, K2 = (asm(harmonic_elasticity, self.basis, E=E, nu=nu, n=float(n)) for n in (0, 1, 2))
        springs = self._springs()
        self._c = 0.5 * (K2 - 2.0 * K1 + K0)
        self._b = K1 - K0 - self._c
        self._a = (K0 + springs).tocsr()
        b2 = system.basis
        self.dof3 = np.full(b2.N, -1, dtype=np.int64)
        for comp in (0, 1):
            self.dof3[b2.nodal_dofs[comp]] = self.basis.nodal_dofs[comp]
            if b2.facet_dofs.size:
                self.dof3[b2.facet_dofs[comp]] = self.basis.facet_dofs[comp]
        self.dof_body = np.full(self.basis.N, -1, dtype=np.int64)
        self.dof_body[self.dof3] = system.dof_body
        for r2, t3 in zip(self._dofs(b2, 0), self._dofs(self.basis, 2)):
            self.dof_body[t3] = system.dof_body[r2]

    @staticmethod
    def _dofs(basis, comp):
        return (basis.nodal_dofs[comp],
                basis.facet_dofs[comp] if basis.facet_dofs.size else np.zeros(0, np.int64))

    def _springs(self):
        system = self.system
        total = sp.csr_matrix((self.basis.N, self.basis.N))
        for s in system.model.supports:
            for comp, k in ((0, s.radial_stiffness), (1, s.axial_stiffness)):
                if k is not None and k > 0:
                    fb = face_basis(system.mesh, self.basis.elem, system.facets[s.face])
                    total = total + asm(harmonic_face_spring, fb, k_area=k / system.face_area[s.face], d=comp)
        return total

    def matrix(self, n: int):
        return (self._a + n * self._b + (n * n) * self._c).tocsr()

    def held(self, n: int) -> np.ndarray:
        """Dofs held at zero in harmonic n: rigid supports (their component) and the axis."""
        system = self.system
        held = [self.dof3[system.fixed]]
        on_axis = self.axis_nodes()
        for comp in self.axis_components(n):
            held.append(self.node_dofs(on_axis, comp))
        return np.unique(np.concatenate(held))

    @staticmethod
    def axis_components(n: int) -> tuple[int, ...]:
        # n = 1: U_z = 0, and U_θ, tied to −U_r by :meth:`axis_tie`, leaves the unknowns
        return {0: (0, 2), 1: (1, 2)}.get(n, (0, 1, 2))

    def axis_nodes(self) -> np.ndarray:
        """Global node numbers (vertices, then facet midpoints) on r = 0."""
        b = self.basis
        locs = b.doflocs[:, b.nodal_dofs[0]]
        verts = np.flatnonzero(np.abs(locs[0]) < AXIS_TOLERANCE)
        mids = np.zeros(0, np.int64)
        if b.facet_dofs.size:
            mlocs = b.doflocs[:, b.facet_dofs[0]]
            mids = np.flatnonzero(np.abs(mlocs[0]) < AXIS_TOLERANCE) + b.nodal_dofs.shape[1]
        return np.concatenate([verts, mids])

    def node_dofs(self, nodes: np.ndarray, comp: int) -> np.ndarray:
        b = self.basis
        nv = b.nodal_dofs.shape[1]
        v, m = nodes[nodes < nv], nodes[nodes >= nv] - nv
        return np.concatenate([b.nodal_dofs[comp, v], b.facet_dofs[comp, m] if m.size else np.zeros(0, np.int64)])

    def axis_tie(self, n: int) -> sp.csr_matrix:
        """Map u = T u' that eliminates U_θ on the axis for n = 1 (U_θ = −U_r there)."""
        N = self.basis.N
        T = sp.identity(N, format="lil")
        if n == 1:
            nodes = self.axis_nodes()
            for r_dof, t_dof in zip(self.node_dofs(nodes, 0), self.node_dofs(nodes, 2)):
                T[t_dof, t_dof] = 0.0
                T[t_dof, r_dof] = -1.0
        return T.tocsr()


def _factor_solve(K, B):
    from scipy.sparse.linalg import splu
    # same ordering choice as fem/solve.py (docs/solver-notes.md)
    lu = splu(sp.csc_matrix(K), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
              options=dict(SymmetricMode=True))
    return lu.solve(np.asarray(B.toarray() if sp.issparse(B) else B))


def harmonic_compliance(hs: HarmonicStiffness, n: int, G3: sp.spmatrix, pins: np.ndarray,
                        node_dofs: np.ndarray, normals: np.ndarray) -> np.ndarray:
    """C_n = Gᵀ K(n)⁻¹ G on the contact normal forces, n ≥ 1.

    ``G3`` (harmonic dofs × contact nodes) is the gap operator of fem/pairing.py in the
    harmonic numbering; ``pins`` are extra held dofs that remove the rigid modes of free
    bodies (they come back as unknowns of the contact problem); ``node_dofs`` (m, 2) and
    ``normals`` (m, 2) list the contact nodes' r, z dofs for the trailing-block condensation
    of fem/condense.py, with one solve per contact force where it does not apply.
    """
    from .condense import condense

    T = hs.axis_tie(n)
    K = (T.T @ hs.matrix(n) @ T).tocsr()
    G = (T.T @ G3).tocsc()
    keep = np.ones(hs.basis.N, dtype=bool)
    keep[hs.held(n)] = False
    keep[pins] = False
    inner = np.flatnonzero(keep)
    Ki = K[inner][:, inner].tocsc()
    Gi = G[inner]
    position = np.full(hs.basis.N, -1, dtype=np.int64)
    position[inner] = np.arange(inner.size)
    fast = condense(Ki, position[node_dofs], normals) if node_dofs.size else None
    if fast is not None:
        return fast.compliance(Gi)
    C = Gi.T @ _factor_solve(Ki, Gi)
    return 0.5 * (C + C.T)


def harmonic_solve(hs: HarmonicStiffness, n: int, f: np.ndarray, pins: np.ndarray | None = None) -> np.ndarray:
    """Amplitudes U (harmonic dofs) of harmonic n under nodal forces F_n (2π × line-load amplitude)."""
    T = hs.axis_tie(n)
    K = (T.T @ hs.matrix(n) @ T).tocsr()
    keep = np.ones(hs.basis.N, dtype=bool)
    keep[hs.held(n)] = False
    if pins is not None:
        keep[pins] = False
    inner = np.flatnonzero(keep)
    u = np.zeros(hs.basis.N)
    u[inner] = _factor_solve(K[inner][:, inner], (T.T @ f)[inner][:, None])[:, 0]
    return T @ u
