"""Fourier harmonics of the axisymmetric model: non-axisymmetric loads on the same (r, z) mesh.

Harmonic n of the symmetric set (Zienkiewicz & Taylor, The Finite Element Method,
"axisymmetric solids under non-symmetric load"):

    u_r = U_r(r, z) cos nθ,   u_z = U_z(r, z) cos nθ,   u_θ = U_θ(r, z) sin nθ

so every (r, z) node carries three amplitudes.  The strains are linear in n,

    ε_rr = U_r,r   ε_zz = U_z,z   ε_θθ = (U_r + n U_θ)/r   γ_rz = U_r,z + U_z,r      (× cos nθ)
    γ_rθ = (U_θ,r − U_θ/r − n U_r/r)   γ_zθ = (U_θ,z − n U_z/r)                      (× sin nθ)

so K(n) = K_a + n K_b + n² K_c, whose three parts are assembled once (:func:`harmonic_parts`).
Weight: the θ integral of cos² is π for n ≥ 1; the forms carry 2π r (as fem/forms.py) so
that the nodal force of harmonic n is F_n = 2π Q_n for a line load Q_n cos nθ (N/rad),
the same convention as n = 0, where F_0 is the ring's total force.

Conditions on the axis (r = 0) keep the field single-valued: n = 0 U_r = U_θ = 0;
n = 1 U_z = 0 and U_r + U_θ = 0; n ≥ 2 all three zero.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu
from skfem import Basis, BilinearForm, ElementVector, asm

from .assembly import System, element_for, face_basis
from .condense import SUPERLU, Condenser
from .forms import lame
from .harmonic_condense import normal_compliances

AXIS_TOLERANCE = 1e-9       # mm
# below this many harmonics of one pattern, its one elimination costs more than a factorisation each
# (its symbolic analysis; measured on the tilted demo, docs/solver-notes.md)
SHARED_MIN = 3


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


def harmonic_parts(basis: Basis, model) -> tuple[sp.csr_matrix, sp.csr_matrix, sp.csr_matrix]:
    """K_a, K_b, K_c of :func:`harmonic_elasticity` (K(n) = K_a + n K_b + n² K_c) on the 3-component
    ``basis``, in one pass over the elements.

    The strains of harmonic n are B⁰ + n B¹ applied to the element's dofs (module docstring), so
    the element matrix ∫ Bᵀ D B 2π r is K_a = ∫ B⁰ᵀ D B⁰, K_b = ∫ (B⁰ᵀ D B¹ + B¹ᵀ D B⁰), K_c = ∫ B¹ᵀ D B¹;
    evaluated here as batched products of the scalar shape functions (the same quadrature as
    ``basis``) instead of three assemblies of the form at n = 0, 1, 2: measured in
    docs/solver-notes.md, checked against skfem's assembly of the form in tests/test_harmonic.py.
    """
    mesh = basis.mesh
    sb = Basis(mesh, basis.elem.elem, quadrature=basis.quadrature)
    vmap = np.empty((sb.N, 3), dtype=np.int64)
    for c in range(3):
        vmap[sb.nodal_dofs[0], c] = basis.nodal_dofs[c]
        if sb.facet_dofs.size:
            vmap[sb.facet_dofs[0], c] = basis.facet_dofs[c]
    nb = len(sb.basis)
    dofs = vmap[sb.element_dofs].transpose(1, 0, 2).reshape(-1, 3 * nb)      # (elements, local dof 3 i + c)
    lam, mu = lame(np.asarray(model.element_youngs_modulus, float), np.asarray(model.element_poissons_ratio, float))
    r = np.asarray(sb.global_coordinates())[0]
    w = 2.0 * np.pi * r * sb.dx                                                # (elements, points)
    parts = [[], [], []]
    for e0 in range(0, mesh.t.shape[1], 2048):                                  # bounded memory
        e = slice(e0, e0 + 2048)
        phi = np.array([np.asarray(f[0])[e] for f in sb.basis])                # (i, elements, points)
        grad = np.array([f[0].grad[:, e] for f in sb.basis])                   # (i, 2, elements, points)
        rr = r[e]
        # strains rr, zz, θθ, rz, rθ, zθ and their sum (the λ term), of component c of function i
        B0 = np.zeros((7, nb, 3) + phi.shape[1:])
        B1 = np.zeros_like(B0)
        B0[0, :, 0], B0[2, :, 0], B0[3, :, 0], B1[4, :, 0] = grad[:, 0], phi / rr, grad[:, 1], -phi / rr
        B0[1, :, 1], B0[3, :, 1], B1[5, :, 1] = grad[:, 1], grad[:, 0], -phi / rr
        B1[2, :, 2], B0[4, :, 2], B0[5, :, 2] = phi / rr, grad[:, 0] - phi / rr, grad[:, 1]
        B0[6], B1[6] = B0[0] + B0[1] + B0[2], B1[0] + B1[1] + B1[2]
        m, lm = mu[e][:, None] * w[e], lam[e][:, None] * w[e]
        weight = np.stack([2 * m, 2 * m, 2 * m, m, m, m, lm])                  # (7, elements, points)
        # (elements, local dofs, strains × points) for the batched products
        b0 = B0.reshape(7, 3 * nb, *phi.shape[1:]).transpose(2, 1, 0, 3).reshape(phi.shape[1], 3 * nb, -1)
        b1 = B1.reshape(7, 3 * nb, *phi.shape[1:]).transpose(2, 1, 0, 3).reshape(phi.shape[1], 3 * nb, -1)
        wt = weight.transpose(1, 0, 2).reshape(phi.shape[1], 1, -1)
        cross = b0 @ (b1 * wt).transpose(0, 2, 1)
        parts[0].append(b0 @ (b0 * wt).transpose(0, 2, 1))
        parts[1].append(cross + cross.transpose(0, 2, 1))
        parts[2].append(b1 @ (b1 * wt).transpose(0, 2, 1))
    L = 3 * nb
    rows = np.repeat(dofs, L, axis=1).ravel()
    cols = np.tile(dofs, (1, L)).ravel()
    shape = (basis.N, basis.N)
    Ka = sp.coo_matrix((np.concatenate(parts[0]).ravel(), (rows, cols)), shape=shape).tocsr()
    # K_b and K_c as the real and imaginary part of one matrix: one conversion sums both, and the three
    # share one pattern (every element entry, zeros kept), which fem/harmonic_condense.py reads directly
    bc = sp.coo_matrix((np.concatenate(parts[1]).ravel() + 1j * np.concatenate(parts[2]).ravel(), (rows, cols)),
                       shape=shape).tocsr()
    Kb = sp.csr_matrix((bc.data.real.copy(), bc.indices.copy(), bc.indptr.copy()), shape=shape)
    Kc = sp.csr_matrix((bc.data.imag.copy(), bc.indices, bc.indptr), shape=shape)
    return Ka, Kb, Kc


def _add_on_pattern(A: sp.csr_matrix, B: sp.csr_matrix) -> sp.csr_matrix:
    """A + B on A's pattern (its explicit zeros kept) where B's entries lie in it; else the sparse sum."""
    B = sp.csr_matrix(B)
    B.sum_duplicates()
    n = A.shape[1]
    key = np.repeat(np.arange(A.shape[0], dtype=np.int64), np.diff(A.indptr)) * n + A.indices
    kb = np.repeat(np.arange(B.shape[0], dtype=np.int64), np.diff(B.indptr)) * n + B.indices
    at = np.minimum(np.searchsorted(key, kb), max(key.size - 1, 0))
    if not (A.has_canonical_format and key.size and np.array_equal(key[at], kb)):
        return (A + B).tocsr()
    data = A.data.copy()
    data[at] += B.data
    return sp.csr_matrix((data, A.indices, A.indptr), shape=A.shape)


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
        Ka, self._b, self._c = harmonic_parts(self.basis, model)
        self._a = _add_on_pattern(Ka, self._springs())
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

    def dof_nodes(self) -> np.ndarray:
        """The node (vertex, then facet midpoint, as :meth:`axis_nodes`) of every harmonic dof."""
        b = self.basis
        node = np.empty(b.N, dtype=np.int64)
        nv = b.nodal_dofs.shape[1]
        for comp in range(3):
            node[b.nodal_dofs[comp]] = np.arange(nv)
            if b.facet_dofs.size:
                node[b.facet_dofs[comp]] = nv + np.arange(b.facet_dofs.shape[1])
        return node

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
        if n != 1:
            return sp.identity(N, format="csr")
        nodes = self.axis_nodes()
        r_dof, t_dof = self.node_dofs(nodes, 0), self.node_dofs(nodes, 2)
        rows = np.ones(N, dtype=bool)
        rows[t_dof] = False
        rows = np.flatnonzero(rows)
        return sp.csr_matrix((np.concatenate([np.ones(rows.size), -np.ones(t_dof.size)]),
                              (np.concatenate([rows, t_dof]), np.concatenate([rows, r_dof]))), shape=(N, N))


def _factor_solve(K, B):
    # same ordering choice as fem/solve.py (docs/solver-notes.md)
    lu = splu(sp.csc_matrix(K), permc_spec="MMD_AT_PLUS_A", **SUPERLU)
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
    return harmonic_compliances(hs, [n], G3, pins, node_dofs, normals)[0]


def harmonic_compliances(hs: HarmonicStiffness, harmonics, G3: sp.spmatrix, pins: np.ndarray,
                         node_dofs: np.ndarray, normals: np.ndarray) -> list[np.ndarray]:
    """:func:`harmonic_compliance` of every n in ``harmonics`` (all ≥ 1).

    The harmonics n ≥ 2 hold the same dofs, so their K(n) = K_a + n K_b + n² K_c share one
    pattern, and so does n = 1 where no node lies on the axis (no tie, the same held dofs): one
    elimination of that pattern gives all of them at once (fem/harmonic_condense.py,
    docs/solver-notes.md).  A harmonic alone, or a pattern where that elimination does not apply,
    goes through :class:`fem.condense.Condenser` (one factorisation each, the ordering kept).
    """
    harmonics = [int(n) for n in harmonics]
    if min(harmonics, default=1) < 1:
        raise ValueError("harmonics n >= 1 expected (n = 0 is the axisymmetric model)")
    first = [n for n in harmonics if n == 1]
    rest = sorted({n for n in harmonics if n >= 2})
    if first and rest and hs.axis_nodes().size == 0:
        first, rest = [], [1] + rest
    out = {}
    for group in (first, rest):
        fast = _shared(hs, group, G3, pins, node_dofs, normals) if len(group) >= SHARED_MIN else None
        if fast is None:        # n = 1 has its own matrix in the Condenser (the tie), the others share one
            fast = {}
            for kind in ([n for n in group if n == 1], [n for n in group if n >= 2]):
                fast.update(_condensed(hs, kind, G3, pins, node_dofs, normals) if kind else {})
        out.update(fast)
    return [out[n] for n in harmonics]


def _free_dofs(hs: HarmonicStiffness, n: int, pins: np.ndarray) -> np.ndarray:
    keep = np.ones(hs.basis.N, dtype=bool)
    keep[hs.held(n)] = False
    keep[pins] = False
    return np.flatnonzero(keep)


def _shared(hs, group, G3, pins, node_dofs, normals) -> dict | None:
    """The harmonics of one pattern without a tie (n ≥ 2, or n = 1 with no node on the axis) at once."""
    inner = _free_dofs(hs, group[0], pins)
    position = np.full(hs.basis.N, -1, dtype=np.int64)
    position[inner] = np.arange(inner.size)
    parts = [K[inner][:, inner] for K in (hs._a, hs._b, hs._c)]
    C = normal_compliances(parts, [(1.0, float(n), float(n * n)) for n in group], hs.dof_nodes()[inner],
                           sp.csc_matrix(G3)[inner], position[node_dofs], normals)
    return None if C is None else dict(zip(group, C))


def _condensed(hs, group, G3, pins, node_dofs, normals) -> dict:
    """One :class:`fem.condense.Condenser` for harmonics of one pattern: one factorisation each."""
    T = hs.axis_tie(group[0])
    inner = _free_dofs(hs, group[0], pins)
    if group[0] == 1:
        parts, coefficients = [(T.T @ hs.matrix(1) @ T).tocsr()], (lambda n: (1.0,))
        G = (T.T @ G3).tocsc()
    else:
        parts, coefficients = [hs._a, hs._b, hs._c], (lambda n: (1.0, float(n), float(n * n)))
        G = sp.csc_matrix(G3)
    parts = [K[inner][:, inner].tocsc() for K in parts]
    Gi = G[inner]
    position = np.full(hs.basis.N, -1, dtype=np.int64)
    position[inner] = np.arange(inner.size)
    condenser = Condenser.of(parts, position[node_dofs], normals) if node_dofs.size else None
    rows, out = None, {}
    for n in group:
        fast = condenser.condense(coefficients(n)) if condenser is not None else None
        if fast is not None:
            rows = fast.normal_rows(Gi) if rows is None else rows
            out[n] = fast.compliance(Gi, rows)
            continue
        Ki = sum(c * K for c, K in zip(coefficients(n), parts)).tocsc()
        C = Gi.T @ _factor_solve(Ki, Gi)
        out[n] = 0.5 * (C + C.T)
    return out


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
