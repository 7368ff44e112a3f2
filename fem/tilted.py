"""Contact of an :class:`FeModel` whose pressed body is tilted or offset from its mate's axis.

Harmonic 0 is the axisymmetric model of fem/solve.py (supports, loads, free axial
bodies); harmonics 1 … M/2 come from fem/harmonic.py on the same mesh; the contact is
solved on an (s, θ) grid of every friction face by fem/fft_contact.py.

Rigid motion.  Harmonic 1 holds two rigid modes per free body (a shift across the axis
and a tilt, in each of the cos and sin sets).  They are removed from K(1) by holding
U_r, U_z of one vertex (the body's "guide ring") and come back as follows:
  * shift: held by the guidance (shaft, splines); the pressed body's radial offset is an
    imposed rigid shift, every other free body stays centred;
  * tilt of the pressed body: imposed (``self_aligning=False``: rotation φ about a
    diameter through the pivot (0, 0, z0) on the axis, by default at the middle of its
    friction face (``pivot_z``); the tilting moment the guidance carries is reported) or
    free (``self_aligning=True``: an unknown fixed by zero moment about the pivot, like
    the axial approach is fixed by the force balance);
  * tilt of floating bodies (plate-pack discs): always free, zero moment.
Rotation by φ about the y axis through (0, 0, z0): u_r = φ (z − z0) cos θ,
u_θ = −φ (z − z0) sin θ, u_z = −φ r cos θ; so a tilt about z0 is the tilt about z1 plus
the radial shift φ (z1 − z0) (small-rotation kinematics).  The guide ring of the pressed
body (``guide``): "load_ring", the vertex where its axial load enters (the ring-load
radius on the load face, or the middle of the load face), or "bore", the vertex at the
axial middle of its bore (its smallest radius); it is part of the condensation.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from threadpoolctl import ThreadpoolController, threadpool_limits

from .fft_contact import CirculantCompliance, solve_grid_contact
from .harmonic import HarmonicStiffness, harmonic_compliances
from .model import FeModel, InterfaceResult, RingLoad
from .solve import ContactSolver


@dataclass
class GridInterface:
    name: str
    r: np.ndarray             # (k,) mm, nodes along the face
    z: np.ndarray             # (k,) mm
    theta: np.ndarray         # (M,) rad
    pressure: np.ndarray      # (k, M) MPa
    normal_force: np.ndarray  # (k, M) N on the sector of each grid point
    area: np.ndarray          # (k,) mm² full-ring tributary area (a grid cell has area / M)
    gap: np.ndarray           # (k, M) mm after loading
    in_contact: np.ndarray    # (k, M) bool

    def ring(self) -> InterfaceResult:
        """The face summed over θ, as the axisymmetric result (torque and balance stay exact)."""
        f = self.normal_force.sum(axis=1)
        has = self.area > 0
        return InterfaceResult(self.name, self.r, self.z, np.where(has, f / np.where(has, self.area, 1), 0.0),
                               f, self.area, self.gap.min(axis=1), self.in_contact.any(axis=1))


@dataclass
class TiltedResult:
    interfaces: list[GridInterface]
    approach: dict[str, float]          # free body -> axial rigid translation, mm
    tilt: dict[str, tuple[float, float]]   # free-tilt body -> (about y, about x) rotation, rad
    moment: tuple[float, float]         # contact moment on the pressed body about its pivot, N·mm (y, x)
    harmonics: int
    axial_force_balance_error: float
    sweeps: int
    cg_iterations: int
    timings: dict[str, float] = field(default_factory=dict)
    grid: object = None                 # fft_contact.GridSolution, a start for a nearby tilt
    pivot_z: float = math.nan           # z of the pivot on the axis the pressed body tilted about, mm
    radial_force: tuple[float, float] = (0.0, 0.0)   # contact force across the axis on the pressed
    #                                     body, N (x, y): what its guidance carries (with opposite sign)


_threads = None


def _one_thread():
    """A BLAS limit of one thread (docs/solver-notes.md) from a controller found once: looking the
    libraries up again costs milliseconds, as much as a whole warm-started tilt."""
    global _threads
    if _threads is None:
        _threads = ThreadpoolController()
    return _threads.limit(limits=1)


GUIDES = ("load_ring", "bore")


def _bore_vertex(system, body: int) -> int:
    """The vertex of the body on its smallest radius (its bore) nearest the bore's axial middle."""
    mesh = system.mesh
    verts = np.unique(mesh.t[:, np.asarray(system.model.element_body) == body])
    r = mesh.p[0, verts]
    bore = verts[r <= r.min() + 1e-9 * r.max()]
    if r.min() <= 0.0:
        raise ValueError(f"body {system.model.body_names[body]!r} reaches the axis: it has no bore to be guided in")
    z = mesh.p[1, bore]
    return int(bore[np.argmin(np.abs(z - 0.5 * (z.min() + z.max())))])


def _ring_vertex(system, body: int, face: str | None, radius: float | None) -> int:
    """A vertex of the body where its guidance holds it (harmonics ≥ 1)."""
    mesh = system.mesh
    if face is not None:
        verts = np.unique(mesh.facets[:, system.facets[face]])
        target = radius if radius is not None else mesh.p[0, verts].mean()
        return int(verts[np.argmin(np.abs(mesh.p[0, verts] - target))])
    verts = np.unique(mesh.t[:, np.asarray(system.model.element_body) == body])
    verts = verts[mesh.p[0, verts] > 0]
    centre = mesh.p[:, verts].mean(axis=1, keepdims=True)
    return int(verts[np.argmin(np.linalg.norm(mesh.p[:, verts] - centre, axis=0))])


class TiltedContactSolver:
    """Condense harmonics 0 … M/2 once; :meth:`solve` any tilt, offset or load level."""

    def __init__(self, model: FeModel, pressed: str, grid: int = 48, base: ContactSolver | None = None,
                 guide: str = "load_ring"):
        """``base``: the axisymmetric solver of the same model, when one is at hand (it is
        harmonic 0; passing it saves its factorisation).  ``guide``: where the pressed body is
        held across the axis, one of :data:`GUIDES` (module docstring)."""
        if grid < 4 or grid % 2:
            raise ValueError(f"the θ grid needs an even number of angles >= 4, got {grid}")
        if guide not in GUIDES:
            raise ValueError(f"guide = {guide!r}: allowed {', '.join(GUIDES)}")
        self.guide_at = guide
        t0 = time.perf_counter()
        self.timings = {}
        self.base = base = base if base is not None else ContactSolver(model)
        system = base.system
        self.pressed = model.body_names.index(pressed)
        self.M = grid
        with threadpool_limits(limits=1):
            self.hs = hs = HarmonicStiffness(system)
            G = base.G.tocoo()
            self.G3 = sp.csc_matrix((G.data, (hs.dof3[G.row], G.col)), shape=(hs.basis.N, G.shape[1]))
            faces = base.faces
            node_dofs = hs.dof3[np.vstack([f.dofs_a for f in faces] + [f.dofs_b for f in faces])]
            normals = np.vstack([np.tile(_unit(f.pair.normal_a), (f.dofs_a.shape[0], 1)) for f in faces] * 2)
            load = next((ld for ld in model.loads if getattr(ld, "face", None)), None)
            self.guide = {}
            for j in base.prep.free_bodies:
                on_load = load is not None and j == self.pressed
                self.guide[j] = _bore_vertex(system, j) if guide == "bore" and j == self.pressed else \
                    _ring_vertex(system, j, load.face if on_load else None,
                                 load.radius if on_load and isinstance(load, RingLoad) else None)
            pins = np.concatenate([hs.basis.nodal_dofs[:2, v] for v in self.guide.values()]) \
                if self.guide else np.zeros(0, np.int64)
            self.timings["prepare_axisymmetric"] = time.perf_counter() - t0
            C = [base.C] + harmonic_compliances(hs, range(1, grid // 2 + 1), self.G3, pins, node_dofs, normals)
            self.op = CirculantCompliance(np.array(C))
        self.timings["prepare"] = time.perf_counter() - t0
        self.theta = 2.0 * np.pi * np.arange(grid) / grid
        nodes = [(f, s) for f in faces for s in range(f.gap0.size)]
        self.r = np.array([f.xy[0, s] for f, s in nodes])
        self.z = np.array([f.xy[1, s] for f, s in nodes])
        self.nr = np.array([_unit(f.pair.normal_a)[0] for f, _ in nodes])
        self.nz = np.array([_unit(f.pair.normal_a)[1] for f, _ in nodes])
        self.body_a = np.array([f.body_a for f, _ in nodes])
        self.body_b = np.array([f.body_b for f, _ in nodes])
        on_pressed = (self.body_a == self.pressed) | (self.body_b == self.pressed)
        if not on_pressed.any():
            raise ValueError(f"body {pressed!r} has no friction face")
        self.pivot_z = float(self.z[on_pressed].mean())     # the middle of the friction face: the default pivot

    def _side(self, j: int) -> np.ndarray:
        """+1 where body j is side B of the node's face, −1 where side A, 0 elsewhere."""
        return (self.body_b == j).astype(float) - (self.body_a == j).astype(float)

    def rotation_gap(self, j: int, z0: float) -> np.ndarray:
        """(k,) gap per unit rotation of body j about the y axis through (0, 0, z0), × cos θ."""
        return self._side(j) * (self.nr * (self.z - z0) - self.nz * self.r)

    def solve(self, tilt_deg: float = 0.0, offset_mm: float = 0.0, self_aligning: bool = False,
              load_scale: float = 1.0, start: TiltedResult | None = None,
              gaps: list[np.ndarray] | None = None, pivot_z: float | None = None) -> TiltedResult:
        """Contact at one tilt/offset/load level.  ``start``: a solution of a nearby problem
        (the previous value of a sweep) whose closed set and forces seed the active set; it
        saves sweeps, the answer is the same to the solver tolerance.  ``gaps``: axisymmetric
        initial gaps per interface node replacing the model's, as for :meth:`ContactSolver.solve`.
        ``pivot_z``: z (mm) of the point on the axis the pressed body tilts about (default
        :attr:`pivot_z`, the middle of its friction face)."""
        t0 = time.perf_counter()
        base, M = self.base, self.M
        cos, sin = np.cos(self.theta), np.sin(self.theta)
        phi = math.radians(tilt_deg)
        z0 = self.pivot_z if pivot_z is None else float(pivot_z)
        shift = self._side(self.pressed) * self.nr          # (k,) gap per unit shift across the axis, × cos θ
        imposed = phi * self.rotation_gap(self.pressed, z0) + offset_mm * shift
        g0 = base.g0 if gaps is None else np.concatenate([np.asarray(x, float) for x in gaps])
        g = (g0 + load_scale * base.g_load)[:, None] + imposed[:, None] * cos[None]
        cols = [np.repeat(base.B[:, c][:, None], M, axis=1) for c in range(base.B.shape[1])]
        e = list(load_scale * base.e)
        free_tilt = [j for j in base.prep.free_bodies if j != self.pressed or self_aligning]
        pivots = {j: (z0 if j == self.pressed else float(self.hs.basis.mesh.p[1, self.guide[j]]))
                  for j in free_tilt}
        for j in free_tilt:
            b = self.rotation_gap(j, pivots[j])
            cols += [b[:, None] * cos[None], b[:, None] * sin[None]]
            e += [0.0, 0.0]
        B = np.stack(cols, axis=2)
        with _one_thread():
            seed = start.grid if start is not None else None
            sol = solve_grid_contact(self.op, g, B, np.array(e), closed=None if seed is None else seed.closed,
                                     lam0=None if seed is None else seed.lam)
        nb = base.B.shape[1]
        names = base.system.model.body_names
        approach = {names[j]: float(sol.delta[c]) for c, j in enumerate(base.prep.free_bodies)}
        tilt = {names[j]: (float(sol.delta[nb + 2 * c]), float(sol.delta[nb + 2 * c + 1]))
                for c, j in enumerate(free_tilt)}
        bp = self.rotation_gap(self.pressed, z0)
        moment = (float(np.sum(sol.lam * bp[:, None] * cos[None])),
                  float(np.sum(sol.lam * bp[:, None] * sin[None])))
        radial = (float(np.sum(sol.lam * shift[:, None] * cos[None])),
                  float(np.sum(sol.lam * shift[:, None] * sin[None])))
        balance = 0.0
        for c in range(nb):
            part = B[:, :, c] * sol.lam
            scale = max(abs(e[c]), float(np.abs(part).sum()), 1e-300)
            balance = max(balance, abs(float(part.sum()) + e[c]) / scale)
        timings = dict(self.timings, contact=time.perf_counter() - t0)
        timings["total"] = timings["prepare"] + timings["contact"]
        return TiltedResult(self._interfaces(sol), approach, tilt, moment, M // 2, balance,
                            sol.iterations, sol.cg_iterations, timings, sol, z0, radial)

    def _interfaces(self, sol) -> list[GridInterface]:
        out, start = [], 0
        for face in self.base.faces:
            k = face.gap0.size
            lam, gap = sol.lam[start:start + k], sol.gap[start:start + k]
            start += k
            cell = face.area[:, None] / self.M
            has = face.area > 1e-12 * face.area.max()
            near = _nearest(has)
            p = np.where(has[:, None], lam / np.where(has[:, None], cell, 1.0), 0.0)[near]
            closed = (lam > 0)[near]
            out.append(GridInterface(face.pair.name, face.xy[0].copy(), face.xy[1].copy(), self.theta.copy(),
                                     np.maximum(p, 0.0), lam.copy(), face.area.copy(),
                                     np.where(closed, 0.0, np.maximum(gap, 0.0)), closed))
        return out


def _unit(n) -> np.ndarray:
    n = np.asarray(n, float)
    return n / np.linalg.norm(n)


def _nearest(has: np.ndarray) -> np.ndarray:
    idx = np.flatnonzero(has)
    near = np.arange(has.size)
    for i in np.flatnonzero(~has):
        near[i] = idx[np.argmin(np.abs(idx - i))]
    return near
