"""Contact solve of an :class:`FeModel`: one factorisation, condensation onto the
interface normal forces, exact solution of the small contact problem."""
from __future__ import annotations

import functools
import time
from contextlib import contextmanager

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu
from skfem import Basis, asm
from ._threads import one_blas_thread

from .assembly import System, assemble, axial_dofs_of_body
from .compliant_layer import NodeLayers, solve_layered_contact
from .condense import condense
from .forms import axial_moment
from .lcp import ContactError, LcpSolution, solve_lcp
from .model import FeModel, FeResult, InterfaceResult
from .pairing import PairedFace, gap_operator, pair_face
from .stress import vertex_stress


@contextmanager
def _clock(timings, key):
    t = time.perf_counter()
    yield
    timings[key] = timings.get(key, 0.0) + time.perf_counter() - t


def factorise(K):
    # MMD on A^T + A with symmetric mode keeps the fill-reducing order through
    # pivoting; docs/solver-notes.md: COLAMD measured 2x and unsymmetric pivoting 10x slower
    return splu(sp.csc_matrix(K), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                options=dict(SymmetricMode=True))


def _face_body(system: System, face: str) -> int:
    verts = np.unique(system.mesh.facets[:, system.facets[face]])
    return int(np.bincount(system.dof_body[system.basis.nodal_dofs[1, verts]]).argmax())


def restraints(system: System) -> tuple[list[int], np.ndarray]:
    """Free bodies and one pinned axial dof per free body.

    The pin only removes the zero-energy axial translation from K; the
    translation itself comes back as an unknown fixed by the body's balance.
    """
    model = system.model
    nb = len(model.body_names)
    if len(model.body_axially_free) != nb:
        raise ValueError("one body_axially_free flag per body expected")
    held = np.zeros(nb, dtype=bool)
    for s in model.supports:
        if s.axial_stiffness is None or s.axial_stiffness > 0:
            held[_face_body(system, s.face)] = True
    free, pins = [], []
    fixed = set(system.fixed.tolist())
    on_faces = _contact_face_dofs(system)
    for j, name in enumerate(model.body_names):
        if model.body_axially_free[j] and held[j]:
            raise ValueError(f"body {name!r} is marked axially free but also has an axial "
                             "support; drop one of the two")
        if not model.body_axially_free[j] and not held[j]:
            raise ValueError(f"body {name!r} has no axial support and is not marked axially "
                             "free: its axial position is undetermined")
        if model.body_axially_free[j]:
            z = [d for d in axial_dofs_of_body(system, j) if d not in fixed]
            if not z:
                raise ValueError(f"body {name!r} has no elements")
            # a pin off the contact faces keeps every contact node's two dofs, which the
            # normal-component condensation needs (fem/condense.py)
            off_faces = [d for d in z if d not in on_faces]
            free.append(j)
            pins.append((off_faces or z)[0])
    return free, np.array(pins, dtype=np.int64)


def _contact_face_dofs(system: System) -> set[int]:
    dofs: set[int] = set()
    for pair in system.model.contacts:
        for face in (pair.face_a, pair.face_b):
            if face in system.facets:
                dofs.update(system.basis.get_dofs(system.facets[face]).flatten().tolist())
    return dofs


class Prepared:
    """Factorised stiffness with supports and pins removed."""

    def __init__(self, system: System, timings: dict, factor: bool = True):
        self.system = system
        self.free_bodies, pins = restraints(system)
        N = system.basis.N
        keep = np.ones(N, dtype=bool)
        keep[system.fixed] = False
        keep[pins] = False
        self.inner = np.flatnonzero(keep)
        self.lu = None
        if factor:
            with _clock(timings, "factorisation"):
                self.lu = factorise(self.K)
        T = np.zeros((N, len(self.free_bodies)))
        for c, j in enumerate(self.free_bodies):
            T[axial_dofs_of_body(system, j), c] = 1.0
        self.T = T                                   # rigid axial translation of free bodies

    @functools.cached_property
    def K(self):
        """The stiffness on the free dofs (built when first asked for: the condensation builds its
        own rotated copy and never needs this one, docs/solver-notes.md)."""
        return self.free_stiffness()

    def free_stiffness(self):
        return self.system.K[self.inner][:, self.inner].tocsc()

    def expand(self, u_inner, delta):
        u = np.zeros(self.system.basis.N)
        u[self.inner] = u_inner
        return u + self.T @ delta


def linear_solve(model: FeModel) -> tuple[np.ndarray, dict]:
    """One linear elastic solve of the model's mesh (contacts ignored, free
    bodies pinned), as the timing yardstick for :func:`solve`."""
    timings = {}
    t0 = time.perf_counter()
    with one_blas_thread():
        with _clock(timings, "assembly"):
            system = assemble(model)
        prep = Prepared(system, timings)
        with _clock(timings, "solve"):
            u = prep.expand(prep.lu.solve(system.f[prep.inner]), np.zeros(len(prep.free_bodies)))
    timings["total"] = time.perf_counter() - t0
    return u, timings


class ContactSolver:
    """Assemble and condense once; solve the contact for many gaps and load levels.

    Everything that does not change when only the initial gap (misalignment, wear)
    or the size of the load changes is done here once: assembly, one factorisation,
    the compliance C between the contact normal forces, and the response to the
    model's loads.  :meth:`solve` then costs one small complementarity problem
    (plus one back-substitution when displacement and stress fields are wanted).
    """

    def __init__(self, model: FeModel):
        self.timings: dict[str, float] = {}
        t0 = time.perf_counter()
        timings = self.timings
        with one_blas_thread():
            with _clock(timings, "assembly"):
                self.system = system = assemble(model)
                self.faces = faces = [pair_face(system, p) for p in model.contacts]
                self.G, self.g0 = gap_operator(system, faces)
            self.prep = prep = Prepared(system, timings, factor=False)
            self.f_inner = system.f[prep.inner]
            self.Gi = self.G[prep.inner]
            with _clock(timings, "factorisation"):
                fast = _condensation(prep, faces)
                if fast is None:
                    prep.lu = factorise(prep.K)
            with _clock(timings, "condensation"):
                if fast is not None:
                    self.u_load = fast.solve(self.f_inner)
                    self.C = fast.compliance(self.Gi)
                    self._solve_K = fast.solve
                else:                       # one solve per contact force
                    X = prep.lu.solve(np.column_stack([self.f_inner, self.Gi.toarray()]))
                    self.u_load = X[:, 0]
                    C = self.Gi.T @ X[:, 1:]
                    self.C = 0.5 * (C + C.T)
                    self._solve_K = prep.lu.solve
                self.g_load = self.Gi.T @ self.u_load
                # stored entries of the factors kept for the solves (benchmarks print their size)
                self.factor_nonzeros = int((fast.lu if fast is not None else prep.lu).nnz)
                nb = len(prep.free_bodies)
                self.B = (self.G.T @ prep.T) if nb else np.zeros((self.g0.size, 0))
                self.e = system.body_load[prep.free_bodies]
            _check_free_bodies(system, faces, prep.free_bodies)
        timings["prepare"] = time.perf_counter() - t0

    @property
    def interface_nodes(self) -> list[np.ndarray]:
        """(2, k) r, z of the FE nodes of every interface, in the order of the results."""
        return [face.xy for face in self.faces]

    @property
    def initial_gaps(self) -> list[np.ndarray]:
        return [face.gap0.copy() for face in self.faces]

    def extra_gap(self, extra_load: np.ndarray) -> np.ndarray:
        """Giᵀ K⁻¹ f: the change of every contact gap (mm) that an extra nodal load f (N, every
        dof) makes with the contacts open; one back-substitution with the stored factor."""
        return self.Gi.T @ self._solve_K(self._extra_inner(extra_load))

    def gap_response(self, load_matrix) -> np.ndarray:
        """Giᵀ K⁻¹ B (contact nodes × columns of B) for a load operator B (every dof × m), e.g.
        fem.thermal_strain.thermal_load_matrix: the gap change of any load B x is then the product
        (Giᵀ K⁻¹ B) x, at the cost of one block back-substitution of K⁻¹ Gi (K is symmetric)."""
        B = sp.csr_matrix(load_matrix)
        if B.shape[0] != self.system.basis.N:
            raise ValueError(f"load operator: one row per dof ({self.system.basis.N}) expected, "
                             f"got {B.shape[0]}")
        with one_blas_thread():
            X = self._solve_K(self.Gi.toarray()) if self.g0.size else np.zeros((self.prep.inner.size, 0))
        return np.asarray((B[self.prep.inner].T @ X).T)

    def displacement_of(self, lam: np.ndarray, delta, load_scale: float = 1.0,
                        extra_load: np.ndarray | None = None) -> np.ndarray:
        """u (every dof, mm) of a contact state: contact forces ``lam`` (N, one per contact node),
        free bodies' translations ``delta`` (mm), the model's loads × ``load_scale`` and an extra
        load; one back-substitution."""
        rhs = load_scale * self.f_inner + self.Gi @ np.asarray(lam, dtype=float)
        if extra_load is not None:
            rhs = rhs + self._extra_inner(extra_load)
        return self.prep.expand(self._solve_K(rhs), np.asarray(delta, dtype=float))

    def displacement_of_state(self, fe: FeResult, load_scale: float = 1.0,
                              extra_load: np.ndarray | None = None) -> np.ndarray:
        """u (every dof, mm) of a solved contact state ``fe`` (its contact forces and free bodies'
        translations) under the model's loads × ``load_scale`` and the extra load it was solved with."""
        lam = np.concatenate([f.normal_force for f in fe.interfaces]) if fe.interfaces else np.zeros(0)
        names = self.system.model.body_names
        delta = [fe.rigid_approach[names[j]] for j in self.prep.free_bodies]
        return self.displacement_of(lam, delta, load_scale, extra_load)

    def _extra_inner(self, extra_load) -> np.ndarray:
        return self._extra_full(extra_load)[self.prep.inner]

    def _extra_full(self, extra_load) -> np.ndarray:
        f = np.asarray(extra_load, dtype=float)
        if f.shape != (self.system.basis.N,) or not np.all(np.isfinite(f)):
            raise ValueError(f"extra_load: one finite value per dof ({self.system.basis.N}) expected, "
                             f"got shape {f.shape}")
        return f

    def solve(self, gaps: list[np.ndarray] | None = None, load_scale: float = 1.0,
              fields: bool = True, extra_load: np.ndarray | None = None, start=None,
              body_load: np.ndarray | None = None, layers: list | None = None) -> FeResult:
        """Contact under ``load_scale`` times the model's loads.

        ``gaps``: initial normal gap (mm) at every FE node of each interface, replacing
        the model's (e.g. with wear depth added); ``fields=False`` skips displacement
        and stress fields (interface results only, for loops over many states).
        ``extra_load``: a nodal load (N, every dof) added to the model's loads, not scaled by
        ``load_scale`` (e.g. the thermal load B θ); it changes the gaps by Giᵀ K⁻¹ f (one
        back-substitution, no new factorisation) and enters the displacement field.  It must
        have no axial resultant on a free body (the thermal and centrifugal loads have none):
        the free bodies' balance ``e`` is the model's loads alone.  The stress field is
        ``vertex_stress`` of the total displacement (σ = C ε, no thermal strain subtracted).
        ``start``: closed flags (one per contact node, the interfaces in order, e.g. a nearby
        state's ``lam > 0``) to warm-start the active set from; the answer does not depend on it.
        ``body_load``: a nodal load (N, every dof, not scaled) that may push a free body along the
        axis (e.g. the friction of a plate's splines): its gap change as ``extra_load``'s, and its
        axial resultant on each free body joins that body's balance.
        ``layers``: one :class:`~fem.compliant_layer.CompressionCurve` (or None) per interface, a compliant layer
        with that compression curve between the condensed bodies (a lining or cushion given by its measured
        curve); solved by damped Newton steps of the small problem (fem/compliant_layer.py), the factor untouched.
        """
        timings = {k: v for k, v in self.timings.items() if k != "prepare"}
        t0 = time.perf_counter()
        prep, system = self.prep, self.system
        g0 = self.g0 if gaps is None else np.concatenate([np.asarray(g, float) for g in gaps])
        if g0.shape != self.g0.shape or not np.all(np.isfinite(g0)):
            raise ValueError("one finite gap per interface node expected")
        # a thermal (or centrifugal) load is self-equilibrated body by body, so e stays the model's
        e = load_scale * self.e
        if body_load is not None:
            extra_load = body_load if extra_load is None else np.asarray(extra_load, float) + body_load
            e = e + self.prep.T.T @ self._extra_full(body_load)
        with one_blas_thread():
            with _clock(timings, "contact"):
                g = g0 + load_scale * self.g_load
                if extra_load is not None:
                    g = g + self.extra_gap(extra_load)
                deflection = None
                if layers is not None and any(curve is not None for curve in layers) and g.size:
                    out = solve_layered_contact(self.C, g, self.B, e,
                                                NodeLayers(list(layers), [f.area for f in self.faces]), start)
                    sol, deflection = out.solution, out.deflection
                else:
                    sol = solve_lcp(self.C, g, self.B, e, start) if g.size else LcpSolution(
                        np.zeros(0), np.zeros(0), np.zeros(0), 0, "no contact")
            interfaces = _interfaces(self.faces, sol, deflection)
            if fields:
                with _clock(timings, "stress"):
                    u = self.displacement_of(sol.lam, sol.delta, load_scale, extra_load)
                    stress = vertex_stress(system, u)
                displacement = u[system.basis.nodal_dofs]
                approach = {system.model.body_names[j]: mean_axial_displacement(system, u, j)
                            for j in prep.free_bodies}
            else:
                displacement, stress = np.zeros((2, 0)), {}
                approach = {system.model.body_names[j]: float(d) for j, d in
                            zip(prep.free_bodies, np.atleast_1d(sol.delta))}
        timings["total"] = self.timings["prepare"] + time.perf_counter() - t0
        return FeResult(
            displacement=displacement, stress=stress, interfaces=interfaces, rigid_approach=approach,
            axial_force_balance_error=_balance_error(self.G, sol.lam, prep, e),
            dofs=int(system.basis.N), timings=timings, contact_iterations=sol.iterations)


def solve(model: FeModel) -> FeResult:
    """Axisymmetric elastic contact solve; raises :class:`ContactError` when the
    interface cannot carry the load, ValueError for an ill-posed model."""
    return ContactSolver(model).solve()


def _condensation(prep: Prepared, faces: list[PairedFace]):
    """Normal-component condensation (fem/condense.py), or None where it does not apply."""
    if not faces:
        return None
    position = np.full(prep.system.basis.N, -1, dtype=np.int64)
    position[prep.inner] = np.arange(prep.inner.size)
    # every B node a gap reads is rotated with the face's normal too: on faces paired by projection
    # a column of G has several B nodes, all on their normal components (fem/pairing.py)
    node_dofs = np.vstack([position[f.dofs_a] for f in faces] + [position[f.b_dofs] for f in faces])
    normals = np.vstack([np.tile(_unit_normal(f), (f.dofs_a.shape[0], 1)) for f in faces]
                        + [np.tile(_unit_normal(f), (f.b_dofs.shape[0], 1)) for f in faces])
    # a copy of its own that condense can drop once it has rotated it (peak memory)
    return condense(prep.free_stiffness(), node_dofs, normals)


def _unit_normal(face: PairedFace) -> np.ndarray:
    n = np.asarray(face.pair.normal_a, dtype=float)
    return n / np.linalg.norm(n)


def mean_axial_displacement(system: System, u: np.ndarray, j: int) -> float:
    """Volume average of u_z over body j: its rigid axial translation in a
    sense that does not depend on where the solver pinned it."""
    elements = np.flatnonzero(np.asarray(system.model.element_body) == j)
    w = asm(axial_moment, Basis(system.mesh, system.basis.elem, elements=elements))
    return float((w @ u) / (w @ _axial_indicator(system, j)))


def _axial_indicator(system: System, j: int) -> np.ndarray:
    t = np.zeros(system.basis.N)
    t[axial_dofs_of_body(system, j)] = 1.0
    return t


def _check_free_bodies(system, faces: list[PairedFace], free_bodies):
    touched = {f.body_a for f in faces} | {f.body_b for f in faces}
    for j in free_bodies:
        if j not in touched:
            raise ContactError(f"body {system.model.body_names[j]!r} is axially free but has "
                               "no contact face to rest on")


def _interfaces(faces, sol, deflection=None) -> list[InterfaceResult]:
    out, start = [], 0
    deflection = np.zeros(sol.lam.size) if deflection is None else deflection
    for face in faces:
        k = face.gap0.size
        lam = sol.lam[start:start + k]
        gap = np.maximum(sol.gap[start:start + k], 0.0)
        layer = deflection[start:start + k].copy()
        start += k
        closed = lam > 0
        if not np.any(closed):
            raise ContactError(f"interface {face.pair.name!r} does not close under the load")
        # a node without ring area (P2 vertex on the axis) carries no force, so
        # its status and pressure are read from its neighbour along the face
        has_area = face.area > 1e-12 * max(face.area.max(initial=0.0), 1e-300)
        near = _nearest_with_area(has_area)
        pressure = np.where(has_area, lam / np.where(has_area, face.area, 1.0), 0.0)[near]
        closed = closed[near]
        out.append(InterfaceResult(
            name=face.pair.name, r=face.xy[0].copy(), z=face.xy[1].copy(),
            pressure=np.maximum(pressure, 0.0), normal_force=lam.copy(),
            tributary_area=face.area.copy(), gap=np.where(closed, 0.0, gap),
            in_contact=closed, left_out=face.left_out.copy(), layer_deflection=layer))
    return out


def _nearest_with_area(has_area):
    idx = np.flatnonzero(has_area)
    near = np.arange(has_area.size)
    if idx.size:
        for i in np.flatnonzero(~has_area):
            near[i] = idx[np.argmin(np.abs(idx - i))]
    return near


def _balance_error(G, lam, prep: Prepared, e) -> float:
    if not prep.free_bodies:
        return 0.0
    f_contact = G @ lam
    err = 0.0
    for c, _ in enumerate(prep.free_bodies):
        on_body = prep.T[:, c] @ f_contact
        scale = max(abs(e[c]), np.abs(prep.T[:, c] * f_contact).sum(), 1e-300)
        err = max(err, abs(on_body + e[c]) / scale)
    return float(err)
