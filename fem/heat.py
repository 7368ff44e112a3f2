"""Transient axisymmetric heat conduction on the FE stage's triangle meshes.

The temperature T(r, z, t) of every body of an :class:`FeModel` solves

    ρc ∂T/∂t = (1/r) ∂/∂r (k r ∂T/∂r) + ∂/∂z (k ∂T/∂z)

(Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed. 1959, the equation of conduction in
cylindrical coordinates with axial symmetry), with on named faces a surface heat flux q into
the body, convection −h (T − T_ambient), or a fixed temperature; every other face is
insulated.  The weak forms below carry the ring weight 2π r like fem/forms.py, so a load
vector holds heat flows of the full revolution and a mass vector full-ring volumes.

**Units.**  The FE stage's mm, N, s, plus the kelvin (a temperature *difference*; T itself may
be in °C or K as long as every temperature of a model uses the same one).  Energy is then
N·mm = mJ and power N·mm/s = mW:

=========================  ==============  ===================================
quantity                   unit here        from SI
=========================  ==============  ===================================
conductivity k             mW/(mm·K)        1 W/(m·K) = 1 mW/(mm·K)   (× 1)
heat capacity ρc           mJ/(mm³·K)       kg/m³ × J/(kg·K) × 1e-6
specific heat c            mJ/(t·K)         J/(kg·K) × 1e6 (with ρ in t/mm³)
film coefficient h         mW/(mm²·K)       W/(m²·K) × 1e-3
heat flux q                mW/mm²           W/m² × 1e-3 (1 MW/m² = 1000 mW/mm²)
diffusivity κ = k / ρc     mm²/s            m²/s × 1e6
=========================  ==============  ===================================

(the converters ``*_from_si``).  The frictional flux μ p v of the contact solve, with p in MPa
and v in mm/s, is already in mW/mm².

**Element.**  P1 by default (``HeatModel.order``; P2 is offered).  The reasons: (1) the
thermal strain α ΔT of a P1 temperature is linear on each triangle, the same degree as the
strain of the P2 displacement it loads, so the thermal stress σ = C(ε − α ΔT) has no
higher-order part the displacement cannot balance; (2) with P1 the mass matrix may be lumped
(``lumped_mass``), with which backward Euler keeps the temperature from dipping below its start
under a sudden surface flux (the onset of slip) on a mesh of non-obtuse triangles; (3) a time step is one
back-substitution of a scalar P1 matrix, a small fraction of the P2 elastic solve.  The
measured accuracy of both orders is in docs/thermal.md.

**Time stepping.**  Implicit: BDF2 (default) or backward Euler.  Both are L-stable, so the
jumps of the flux at the start and the end of slip leave no oscillation; Crank–Nicolson is
only A-stable and rings after such a jump when the step is large against h²/κ (Thomée,
Galerkin Finite Element Methods for Parabolic Problems, 2nd ed. 2006, time discretisation
with nonsmooth data).  BDF2 is second order; its first step, a step after ``restart=True``
(a jump of the load) and a step whose size grows by more than 1 + √2 over the last are taken
by backward Euler (the variable-step BDF2 is zero-stable only below that ratio: Hairer, Nørsett
& Wanner, Solving Ordinary Differential Equations I, 2nd ed. 1993, variable-step BDF; from
memory).  With step ratio ω = Δt_n / Δt_(n−1):

    BDF2:  ((1+2ω)/(1+ω) θ_(n+1) − (1+ω) θ_n + ω²/(1+ω) θ_(n−1)) M / Δt_n + A θ_(n+1) = F_(n+1)
    BE:    (θ_(n+1) − θ_n) M / Δt_n + A θ_(n+1) = F_(n+1)

with A = conduction + convection and F the flux and ambient loads at the end of the step.
The matrix a0 M / Δt + A of each distinct (a0 / Δt) is factorised once and kept.

The unknown is the rise θ = T − T_ref above the model's reference temperature (the
stress-free state of the elastic model): with no flux and every ambient and initial
temperature at T_ref, every right-hand side is exactly zero and θ stays exactly 0.

**Interfaces.**  The paired nodes of a friction interface (fem/pairing.py, the same pairs and
order as the contact solver's) exchange heat through a nodal conductance h_i A_i (T_a − T_b)
with A_i the tributary ring area of the node, or are tied to one temperature (h_i = ∞): per
node, a closed node gets ``ThermalContact.conductance`` (None: tied) and an open node
``gap_conductance`` (0: insulated).  The tied and conducting nodes are enforced by interface
multipliers ν (the heat flow from A to B at each node, mW) on the factorised matrix:

    (a0 M/Δt + A) θ + Dᵀ ν = b,    D θ = ν / (h A)   (D θ = 0 where tied)

so a new contact state costs one small dense solve, not a new factorisation.  Heat generated
at a tied interface may be put on either face (the tie makes the split irrelevant).

**Energy account** (:class:`EnergyAccount`): heat in ∫∫ q dA dt, heat through fixed faces,
heat convected ∫∫ h (T − T_amb) dA dt, and heat stored ∫ ρc (T − T_0) dV from the field.  The
time integrals follow each step's scheme: the end-of-step rate × Δt for a backward-Euler step
(so a backward-Euler run balances to round-off: a check of conservation, not of time accuracy)
and the trapezoid rule for a BDF2 step (second order like the scheme, so the balance error
measures whether the steps are fine enough).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Callable, Mapping, Sequence, Union

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components
from skfem import Basis, BilinearForm, ElementVector, FacetBasis, LinearForm, MeshTri, asm

from ._threads import one_blas_thread
from .assembly import System, body_of_dofs, build_mesh, element_for, find_facets
from .model import FeModel
from .pairing import pair_face
from .solve import factorise

SCHEMES = ("bdf2", "backward_euler")
BDF2_MAX_RATIO = 1.0 + math.sqrt(2.0)   # variable-step BDF2 zero-stability bound (see above)

# a face flux: one value (mW/mm²) for the whole face, one value per heat dof (interpolated on
# the face), or q(r, z) evaluated at the face's quadrature points
Flux = Union[float, np.ndarray, Callable[[np.ndarray, np.ndarray], np.ndarray]]


# ---------------------------------------------------------------- units (see the table above)

def conductivity_from_si(w_per_m_k: float) -> float:
    """k in mW/(mm·K) from W/(m·K): 1 W/(m·K) = 1e3 mW / (1e3 mm · K), the same number."""
    return float(w_per_m_k)


def heat_capacity_from_si(kg_per_m3: float, j_per_kg_k: float) -> float:
    """ρc in mJ/(mm³·K) from the density in kg/m³ and the specific heat in J/(kg·K):
    1 J/(m³·K) = 1e3 mJ / (1e9 mm³ · K).  Steel 7850 × 460 → 3.611."""
    return float(kg_per_m3) * float(j_per_kg_k) * 1e-6


def specific_heat_from_si(j_per_kg_k: float) -> float:
    """c in mJ/(t·K) from J/(kg·K) (1 J/kg = 1e3 mJ / 1e-3 t), for densities in t/mm³
    (fem/centrifugal.py's unit): ρc = ρ[t/mm³] × c[mJ/(t·K)] in mJ/(mm³·K)."""
    return float(j_per_kg_k) * 1e6


def film_coefficient_from_si(w_per_m2_k: float) -> float:
    """h in mW/(mm²·K) from W/(m²·K): 1 W/(m²·K) = 1e3 mW / (1e6 mm² · K)."""
    return float(w_per_m2_k) * 1e-3


def heat_flux_from_si(w_per_m2: float) -> float:
    """q in mW/mm² from W/m² (1 MW/m² = 1000 mW/mm²)."""
    return float(w_per_m2) * 1e-3


def to_joule(mj: float) -> float:
    """Energy in J from the FE stage's mJ (N·mm)."""
    return float(mj) * 1e-3


def to_watt(mw: float) -> float:
    """Power in W from the FE stage's mW (N·mm/s)."""
    return float(mw) * 1e-3


# ---------------------------------------------------------------- weak forms (ring weight 2π r)

@BilinearForm
def conduction(u, v, w):
    """∫ k ∇T · ∇v 2π r dA."""
    return w.k * (u.grad[0] * v.grad[0] + u.grad[1] * v.grad[1]) * 2.0 * np.pi * w.x[0]


@BilinearForm
def capacity(u, v, w):
    """∫ ρc T v 2π r dA: the heat capacity (mass) matrix."""
    return w.rho_c * u * v * 2.0 * np.pi * w.x[0]


@BilinearForm
def film(u, v, w):
    """∮ h T v 2π r ds on a convection face."""
    return w.h * u * v * 2.0 * np.pi * w.x[0]


@LinearForm
def surface_heat(v, w):
    """∮ q v 2π r ds: a flux q into the body (also h T_ambient on a convection face)."""
    return w.q * v * 2.0 * np.pi * w.x[0]


# ---------------------------------------------------------------- model

@dataclass(frozen=True)
class Convection:
    """Heat loss h (T − ambient) on a named face; h in mW/(mm²·K) (``film_coefficient_from_si``)."""

    face: str
    coefficient: float
    ambient: float


@dataclass(frozen=True)
class FixedTemperature:
    """A named face held at ``temperature`` (a large body at oil or housing temperature)."""

    face: str
    temperature: float


@dataclass(frozen=True)
class ThermalContact:
    """Heat across one contact pair of the FE model (``ContactPair.name``).

    At a closed node: ``conductance`` h_c in mW/(mm²·K), or None for one temperature on both
    sides (a tie); at an open node: ``gap_conductance`` (0 = no heat crosses).
    """

    pair: str
    conductance: float | None = None
    gap_conductance: float = 0.0


@dataclass
class HeatModel:
    """The thermal data of an :class:`FeModel` (whose mesh, faces and contact pairs it uses).

    ``conductivity`` (mW/(mm·K)) and ``heat_capacity`` (ρc, mJ/(mm³·K)): one value per body
    (``model.body_names`` order) or one per triangle (a lining region of a body).
    ``reference_temperature``: the stress-free temperature, the default initial temperature
    and the zero of the rise θ = T − T_ref the solver works with.
    """

    model: FeModel
    conductivity: Sequence[float]
    heat_capacity: Sequence[float]
    reference_temperature: float = 20.0
    convection: list[Convection] = field(default_factory=list)
    fixed: list[FixedTemperature] = field(default_factory=list)
    contacts: list[ThermalContact] = field(default_factory=list)
    order: int = 1
    lumped_mass: bool = False


def element_values(model: FeModel, values, what: str, positive: bool = True) -> np.ndarray:
    """One value per triangle from one per body (``model.body_names`` order) or one per triangle."""
    v = np.asarray(values, dtype=float).reshape(-1)
    nb, nt = len(model.body_names), np.asarray(model.triangles).shape[1]
    if nb == nt and nb > 1:
        raise ValueError(f"{what}: as many bodies as triangles ({nb}); per body or per triangle "
                         "is ambiguous")
    if v.shape == (nb,):
        v = v[np.asarray(model.element_body, dtype=np.int64)]
    elif v.shape != (nt,):
        raise ValueError(f"{what}: one value per body ({nb}: {', '.join(model.body_names)}) or "
                         f"per triangle ({nt}) expected, got {v.size}")
    if not np.all(np.isfinite(v)) or (np.any(v <= 0) if positive else False):
        raise ValueError(f"{what} must be finite{' and > 0' if positive else ''}")
    return v


@dataclass
class ThermalInterface:
    """The paired heat dofs of one thermal contact, sorted along face A like the contact solver's."""

    contact: ThermalContact
    dofs_a: np.ndarray      # (k,) heat dofs on face A
    dofs_b: np.ndarray      # (k,) partner dofs on face B
    xy: np.ndarray          # (2, k) r, z of the nodes, mm
    area: np.ndarray        # (k,) tributary ring area on face A, mm²
    body_a: int
    body_b: int

    @property
    def name(self) -> str:
        return self.contact.pair

    def coefficient(self, closed: np.ndarray | None = None) -> np.ndarray:
        """h at each node, mW/(mm²·K); inf where tied."""
        k = self.dofs_a.size
        closed = np.ones(k, dtype=bool) if closed is None else np.asarray(closed, dtype=bool)
        if closed.shape != (k,):
            raise ValueError(f"thermal contact {self.name!r}: one closed flag per node ({k}) expected")
        c = self.contact
        on = math.inf if c.conductance is None else float(c.conductance)
        return np.where(closed, on, float(c.gap_conductance))


@dataclass
class HeatSystem:
    heat: HeatModel
    mesh: MeshTri
    basis: Basis                    # scalar P1 or P2
    facets: dict[str, np.ndarray]
    dof_body: np.ndarray            # body of every heat dof
    M: sp.csr_matrix                # capacity (lumped or consistent)
    K: sp.csr_matrix                # conduction
    H: sp.csr_matrix                # convection (all faces)
    f_ambient: np.ndarray           # ∮ h θ_ambient v (mW), all faces
    film_faces: list[tuple[str, np.ndarray, float]]   # per convection: name, 1ᵀH_j, 1ᵀf_j
    fixed: np.ndarray               # dofs at a fixed temperature
    fixed_rise: np.ndarray          # their θ
    fixed_face: list[str]           # the (first) fixed face of each of those dofs
    interfaces: list[ThermalInterface]
    D: sp.csr_matrix                # (n interface nodes, N): e_a − e_b per node
    weights: np.ndarray             # ∫ ρc φ_i dV (row sums of M): stored energy = weights · θ
    _unit_flux: dict = field(default_factory=dict, repr=False)
    _face_bases: dict = field(default_factory=dict, repr=False)
    _node_area: np.ndarray | None = field(default=None, repr=False)

    @property
    def N(self) -> int:
        return int(self.basis.N)

    @property
    def reference(self) -> float:
        return float(self.heat.reference_temperature)

    def interface(self, name: str) -> ThermalInterface:
        for i in self.interfaces:
            if i.name == name:
                return i
        raise ValueError(f"no thermal contact {name!r}")

    def vertex_values(self, field_: np.ndarray) -> np.ndarray:
        """Values of a heat field at the mesh vertices (P1 and P2 number vertices first)."""
        return np.asarray(field_)[:self.mesh.nvertices]

    def face_basis(self, name: str) -> FacetBasis:
        if name not in self.facets:
            raise ValueError(f"unknown face {name!r}")
        if name not in self._face_bases:
            self._face_bases[name] = FacetBasis(self.mesh, self.basis.elem, facets=self.facets[name],
                                                intorder=2 * self.heat.order + 1)
        return self._face_bases[name]

    def flux_load(self, face: str, q: Flux) -> np.ndarray:
        """∮ q v 2π r ds on ``face`` (mW per dof) for a flux q (mW/mm²) into the body."""
        if callable(q):
            fb = self.face_basis(face)
            x = np.asarray(fb.global_coordinates())
            return asm(surface_heat, fb, q=np.broadcast_to(np.asarray(q(x[0], x[1]), dtype=float),
                                                            x[0].shape))
        a = np.asarray(q, dtype=float)
        if a.ndim == 0:
            if face not in self._unit_flux:
                self._unit_flux[face] = asm(surface_heat, self.face_basis(face), q=1.0)
            return float(a) * self._unit_flux[face]
        if a.shape != (self.N,):
            raise ValueError(f"flux on {face!r}: a value, q(r, z) or one value per heat dof "
                             f"({self.N}) expected, got shape {a.shape}")
        fb = self.face_basis(face)
        return asm(surface_heat, fb, q=fb.interpolate(a))

    def flux_vector(self, fluxes: Mapping[str, Flux] | None) -> np.ndarray:
        f = np.zeros(self.N)
        for face, q in (fluxes or {}).items():
            f += self.flux_load(face, q)
        if not np.all(np.isfinite(f)):
            raise ValueError("face fluxes must be finite")
        return f

    def coefficients(self, closed: Mapping[str, np.ndarray] | None) -> np.ndarray:
        """Per interface node (all interfaces, in order): h, inf where tied."""
        closed = dict(closed or {})
        unknown = set(closed) - {i.name for i in self.interfaces}
        if unknown:
            raise ValueError(f"closed state for unknown thermal contact(s) {sorted(unknown)}")
        parts = [i.coefficient(closed.get(i.name)) for i in self.interfaces]
        return np.concatenate(parts) if parts else np.zeros(0)

    def node_area(self) -> np.ndarray:
        if self._node_area is None:     # every solve asks; the interfaces are fixed once assembled
            parts = [i.area for i in self.interfaces]
            self._node_area = np.concatenate(parts) if parts else np.zeros(0)
        return self._node_area

    def stored_by_body(self, rise_change: np.ndarray) -> dict[str, float]:
        """∫ ρc Δθ dV of each body, mJ."""
        names = self.heat.model.body_names
        return {n: float(self.weights[self.dof_body == j] @ rise_change[self.dof_body == j])
                for j, n in enumerate(names)}


def assemble_heat(heat: HeatModel) -> HeatSystem:
    model = heat.model
    if heat.order not in (1, 2):
        raise ValueError(f"heat element order must be 1 or 2, got {heat.order}")
    if heat.lumped_mass and heat.order != 1:
        raise ValueError("a lumped heat capacity needs P1 (P2 row sums vanish at the vertices)")
    if not math.isfinite(heat.reference_temperature):
        raise ValueError("the reference temperature must be finite")
    mesh = build_mesh(model)
    elem = element_for(heat.order)
    basis = Basis(mesh, elem, intorder=2 * heat.order + 1)
    if not (np.array_equal(basis.nodal_dofs[0], np.arange(mesh.nvertices))
            and (heat.order == 1 or np.array_equal(basis.facet_dofs[0],
                                                   mesh.nvertices + np.arange(mesh.nfacets)))):
        raise RuntimeError("unexpected scalar dof numbering (vertices, then facets)")
    facets = find_facets(mesh, model.faces)
    nqp = basis.X.shape[1]
    k = element_values(model, heat.conductivity, "conductivity")
    rc = element_values(model, heat.heat_capacity, "heat capacity")
    K = asm(conduction, basis, k=np.repeat(k[:, None], nqp, 1)).tocsr()
    M = asm(capacity, basis, rho_c=np.repeat(rc[:, None], nqp, 1)).tocsr()
    weights = np.asarray(M.sum(axis=1)).ravel()
    if heat.lumped_mass:
        M = sp.diags(weights).tocsr()

    system = HeatSystem(heat, mesh, basis, facets, np.zeros(0, dtype=np.int64), M, K,
                        sp.csr_matrix((basis.N, basis.N)), np.zeros(basis.N), [], np.zeros(0, np.int64),
                        np.zeros(0), [], [], sp.csr_matrix((0, basis.N)), weights)
    system.dof_body = _scalar_dof_body(model, mesh, heat.order)

    H = sp.csr_matrix((basis.N, basis.N))
    f_amb = np.zeros(basis.N)
    for c in heat.convection:
        if not (math.isfinite(c.coefficient) and c.coefficient >= 0 and math.isfinite(c.ambient)):
            raise ValueError(f"convection on {c.face!r}: need a finite h >= 0 and ambient temperature")
        fb = system.face_basis(c.face)
        Hj = asm(film, fb, h=float(c.coefficient))
        fj = asm(surface_heat, fb, q=float(c.coefficient) * (c.ambient - heat.reference_temperature))
        H = H + Hj
        f_amb += fj
        system.film_faces.append((c.face, np.asarray(Hj.sum(axis=0)).ravel(), float(fj.sum())))
    system.H, system.f_ambient = H.tocsr(), f_amb

    value: dict[int, float] = {}
    owner: dict[int, str] = {}
    for fx in heat.fixed:
        if not math.isfinite(fx.temperature):
            raise ValueError(f"fixed temperature on {fx.face!r} must be finite")
        if fx.face not in facets:
            raise ValueError(f"fixed temperature refers to unknown face {fx.face!r}")
        for d in basis.get_dofs(facets[fx.face]).flatten().tolist():
            t = fx.temperature - heat.reference_temperature
            if d in value and value[d] != t:
                raise ValueError(f"fixed temperatures disagree at a node of face {fx.face!r}")
            value[d] = t
            owner.setdefault(d, fx.face)
    system.fixed = np.array(sorted(value), dtype=np.int64)
    system.fixed_rise = np.array([value[d] for d in system.fixed.tolist()], dtype=float)
    system.fixed_face = [owner[d] for d in system.fixed.tolist()]

    system.interfaces = _thermal_interfaces(heat, mesh, facets)
    rows, cols, vals, row = [], [], [], 0
    for i in system.interfaces:
        n = i.dofs_a.size
        r = np.arange(row, row + n)
        rows += [r, r]
        cols += [i.dofs_a, i.dofs_b]
        vals += [np.ones(n), -np.ones(n)]
        row += n
    system.D = (sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                              shape=(row, basis.N)) if row else sp.csr_matrix((0, basis.N)))
    return system


def _scalar_dof_body(model: FeModel, mesh: MeshTri, order: int) -> np.ndarray:
    basis = Basis(mesh, ElementVector(element_for(order)))
    vec = body_of_dofs(model, basis)                      # also refuses bodies sharing vertices
    n = mesh.nvertices + (mesh.nfacets if order == 2 else 0)
    out = np.empty(n, dtype=np.int64)
    out[:mesh.nvertices] = vec[basis.nodal_dofs[0]]
    if order == 2:
        out[mesh.nvertices:] = vec[basis.facet_dofs[0]]
    return out


def _thermal_interfaces(heat: HeatModel, mesh: MeshTri, facets) -> list[ThermalInterface]:
    """Pair the nodes of each thermal contact with fem/pairing.py (the contact solver's pairs)."""
    if not heat.contacts:
        return []
    model = replace(heat.model, element_order=heat.order)
    vbasis = Basis(mesh, ElementVector(element_for(heat.order)))
    light = System(model, mesh, vbasis, facets, body_of_dofs(model, vbasis), None, None,
                   np.zeros(0, dtype=np.int64), np.zeros(len(model.body_names)))
    scalar = np.full(vbasis.N, -1, dtype=np.int64)
    scalar[vbasis.nodal_dofs[0]] = np.arange(mesh.nvertices)
    if heat.order == 2:
        scalar[vbasis.facet_dofs[0]] = mesh.nvertices + np.arange(mesh.nfacets)
    pairs = {p.name: p for p in model.contacts}
    out, seen = [], set()
    for c in heat.contacts:
        if c.pair not in pairs:
            raise ValueError(f"thermal contact refers to unknown contact pair {c.pair!r}")
        if c.pair in seen:
            raise ValueError(f"thermal contact {c.pair!r} given twice")
        seen.add(c.pair)
        for name, h in (("conductance", c.conductance), ("gap conductance", c.gap_conductance)):
            if h is not None and not (math.isfinite(h) and h >= 0):
                raise ValueError(f"thermal contact {c.pair!r}: {name} must be finite and >= 0")
        face = pair_face(light, pairs[c.pair])
        out.append(ThermalInterface(c, scalar[face.dofs_a[:, 0]], scalar[face.dofs_b[:, 0]],
                                    face.xy.copy(), face.area.copy(), face.body_a, face.body_b))
    return out


def values_at_nodes(interface: ThermalInterface, r: np.ndarray, z: np.ndarray,
                    values: np.ndarray, tol: float = 1e-6) -> np.ndarray:
    """Values given at interface points (r, z) (e.g. an ``InterfaceResult``'s pressure or
    ``in_contact``) picked at this interface's nodes, which must be among the points."""
    r, z, values = np.asarray(r, float), np.asarray(z, float), np.asarray(values)
    d = np.hypot(interface.xy[0][:, None] - r[None], interface.xy[1][:, None] - z[None])
    i = d.argmin(axis=1)
    if np.any(d[np.arange(i.size), i] > tol):
        raise ValueError(f"thermal contact {interface.name!r}: not every node is among the points")
    return values[i]


# ---------------------------------------------------------------- results

@dataclass(frozen=True)
class HeatStep:
    """One time step (trial or accepted).  Energies over the step in mJ, rates in mW."""

    start: float                      # s, time at the start of the step
    dt: float                         # s
    scheme: str                       # 'bdf2' or 'backward_euler' (the scheme this step used)
    rise: np.ndarray                  # θ = T − T_ref at the end of the step, every heat dof (K)
    reference: float
    heat_in: float                    # face fluxes
    convected: dict[str, float]       # per convection face, heat lost
    through_fixed: dict[str, float]   # per fixed-temperature face, heat into the bodies
    interface_flow: dict[str, np.ndarray]   # mW from A to B at each node, end of the step
    rates: tuple = field(repr=False, default=())  # (Q_in, {face: Q_conv}, {face: Q_fixed}) at the end
    token: int = field(repr=False, default=-1)

    @property
    def time(self) -> float:
        return self.start + self.dt

    @property
    def temperature(self) -> np.ndarray:
        return self.reference + self.rise

    @property
    def rate_in(self) -> float:
        """Heat flow in through the face fluxes at the end of the step, mW."""
        return self.rates[0]

    @property
    def rate_convected(self) -> dict[str, float]:
        return dict(self.rates[1])

    @property
    def rate_through_fixed(self) -> dict[str, float]:
        return dict(self.rates[2])


@dataclass(frozen=True)
class SteadyState:
    """A steady solution; rates in mW."""

    rise: np.ndarray
    reference: float
    heat_in: float
    convected: dict[str, float]
    through_fixed: dict[str, float]         # per fixed face, into the bodies
    interface_flow: dict[str, np.ndarray]   # mW A → B per node (NaN where a tie's flow is not read)

    @property
    def temperature(self) -> np.ndarray:
        return self.reference + self.rise

    @property
    def balance_error(self) -> float:
        """(in + through fixed − convected) / (sum of the absolute flows in and out)."""
        terms = [self.heat_in, *self.through_fixed.values(), *(-v for v in self.convected.values())]
        return sum(terms) / max(sum(abs(t) for t in terms), 1e-300)


@dataclass(frozen=True)
class EnergyAccount:
    """Since the start of a transient, mJ."""

    heat_in: float
    through_fixed: dict[str, float]
    convected: dict[str, float]
    stored: float
    stored_by_body: dict[str, float]

    @property
    def convected_total(self) -> float:
        return float(sum(self.convected.values()))

    @property
    def fixed_total(self) -> float:
        return float(sum(self.through_fixed.values()))

    @property
    def balance_error(self) -> float:
        """(in + through fixed − stored − convected) / (the sum of their absolute values)."""
        terms = [self.heat_in, self.fixed_total, -self.stored, -self.convected_total]
        return sum(terms) / max(sum(abs(t) for t in terms), 1e-300)


# ---------------------------------------------------------------- solves

# the interface response A⁻¹ D_Iᵀ is kept dense (it replaces a back-substitution per solve) up to
# this many entries (16 MB); above, each solve back-substitutes the interface flows instead
MAX_RESPONSE_ENTRIES = 2_000_000


class _Factor:
    """One factorised step matrix c0 M + A on the free dofs, and its interface compliance."""

    def __init__(self, system: HeatSystem, c0: float):
        self.A = (c0 * system.M + system.K + system.H).tocsr()
        N = system.N
        keep = np.ones(N, dtype=bool)
        keep[system.fixed] = False
        self.inner = np.flatnonzero(keep)
        self.A_ii = self.A[self.inner][:, self.inner].tocsc()
        self.A_if = self.A[self.inner][:, system.fixed].tocsr()
        self.lu = factorise(self.A_ii)
        self.D_i = system.D[:, self.inner].tocsc()
        self.D_f = system.D[:, system.fixed].tocsr()
        self.Dt_i = self.D_i.T.tocsr()
        # the rows of the fixed dofs' balance, for their heat flows (A θ + Dᵀ ν − b at them)
        self.A_f = self.A[system.fixed].tocsr()
        self.Dt_f = system.D.T.tocsr()[system.fixed]
        self.free_row = np.asarray(abs(self.D_i).sum(axis=1)).ravel() > 0
        self._S = None
        self._W = None
        self._states: dict[bytes, tuple] = {}

    def interface_state(self, system: HeatSystem, h: np.ndarray) -> tuple[np.ndarray, np.ndarray | None]:
        """The interface nodes whose flow is an unknown (tied or conducting, not both sides fixed)
        and the inverse of their matrix S_aa + diag(1/(h A)), (empty, None) if there are none;
        kept for the last few interface states (a loop over time steps meets the same closed set
        again and again).  A pseudo-inverse where dependent ties (a closed loop of pairs) make
        the matrix singular."""
        key = h.tobytes()
        if key not in self._states:
            area = system.node_area()
            a = np.flatnonzero((np.isinf(h) | (h * area > 0)) & self.free_row)
            inverse = None
            if a.size:
                c = np.zeros(a.size)
                finite = ~np.isinf(h[a])
                c[finite] = 1.0 / (h[a][finite] * area[a][finite])
                Saa = self.compliance()[np.ix_(a, a)]
                Saa[np.diag_indices(a.size)] += c
                try:
                    inverse = np.linalg.inv(Saa)
                except np.linalg.LinAlgError:
                    inverse = np.linalg.pinv(Saa)
            if len(self._states) >= 16:
                self._states.pop(next(iter(self._states)))
            self._states[key] = (a, inverse)
        return self._states[key]

    def interface_response(self):
        """W = A_II⁻¹ D_Iᵀ (dense, free dofs × interface nodes) or None when larger than
        MAX_RESPONSE_ENTRIES; computed with the compliance."""
        self.compliance()
        return self._W

    def compliance(self) -> np.ndarray:
        """S = D_I A_II⁻¹ D_Iᵀ (dense, interface nodes²), in column blocks."""
        if self._S is None:
            k = self.D_i.shape[0]
            keep = self.inner.size * k <= MAX_RESPONSE_ENTRIES
            W = np.empty((self.inner.size, k)) if keep else None
            S = np.empty((k, k))
            Dt = self.D_i.T.tocsc()
            for j in range(0, k, 64):
                X = self.lu.solve(Dt[:, j:j + 64].toarray())
                S[:, j:j + 64] = self.D_i @ X
                if keep:
                    W[:, j:j + 64] = X
            self._S, self._W = 0.5 * (S + S.T), W
        return self._S


def _solve_with_interfaces(system: HeatSystem, fac: _Factor, b: np.ndarray,
                           h: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """θ (all dofs) and the interface flows ν (mW, A → B) of (fac.A) θ + Dᵀ ν = b."""
    theta_f = system.fixed_rise
    rhs = b[fac.inner] - fac.A_if @ theta_f
    theta_i = fac.lu.solve(rhs)
    nu = np.zeros(system.D.shape[0])
    if nu.size:
        with one_blas_thread():
            a, inverse = fac.interface_state(system, h)
            if a.size:
                g0 = fac.D_i @ theta_i + fac.D_f @ theta_f
                nu[a] = inverse @ g0[a]
                W = fac.interface_response()
                # A⁻¹ Dᵀ ν from the kept response: a product instead of a back-substitution
                theta_i = theta_i - (W @ nu if W is not None else fac.lu.solve(fac.Dt_i @ nu))
    theta = np.empty(system.N)
    theta[fac.inner] = theta_i
    theta[system.fixed] = theta_f
    return theta, nu


def _split_flows(system: HeatSystem, nu: np.ndarray) -> dict[str, np.ndarray]:
    out, start = {}, 0
    for i in system.interfaces:
        out[i.name] = nu[start:start + i.dofs_a.size].copy()
        start += i.dofs_a.size
    return out


def _fixed_rates(system: HeatSystem, reaction: np.ndarray, faces: list[str]) -> dict[str, float]:
    """Heat flow (mW) into the bodies through each fixed-temperature face."""
    out = {fx.face: 0.0 for fx in system.heat.fixed}
    for face, value in zip(faces, reaction.tolist()):
        out[face] += value
    return out


def _film_rates(system: HeatSystem, theta: np.ndarray) -> dict[str, float]:
    rates: dict[str, float] = {}
    for name, row, s in system.film_faces:
        rates[name] = rates.get(name, 0.0) + float(row @ theta - s)
    return rates


class Transient:
    """A transient heat solution, stepped in time.

    ``temperature``: the initial field (None: the reference temperature everywhere; a number:
    uniform; an array: one value per heat dof); fixed-temperature faces take their value from
    the start.  :meth:`trial` solves one step without changing the state (for an iteration
    with the contact solve), :meth:`accept` makes a trial the new state, :meth:`advance` does
    both.  Every distinct step matrix is factorised once (``factorisations`` counts them).
    """

    def __init__(self, system: HeatSystem, scheme: str = "bdf2",
                 temperature: float | np.ndarray | None = None):
        if scheme not in SCHEMES:
            raise ValueError(f"scheme must be one of {SCHEMES}, got {scheme!r}")
        self.system, self.scheme = system, scheme
        if temperature is None:
            theta = np.zeros(system.N)
        else:
            t = np.asarray(temperature, dtype=float)
            if t.ndim == 0:
                theta = np.full(system.N, float(t) - system.reference)
            elif t.shape == (system.N,):
                theta = t - system.reference
            else:
                raise ValueError(f"initial temperature: a value or one per heat dof ({system.N})")
            if not np.all(np.isfinite(theta)):
                raise ValueError("initial temperature must be finite")
        theta[system.fixed] = system.fixed_rise
        self.time = 0.0
        self._theta0 = theta.copy()
        self._theta, self._previous, self._dt_previous = theta, None, None
        self._rates = None
        self._factors: dict[float, _Factor] = {}
        self._token = 0
        self._in = 0.0
        self._conv = {name: 0.0 for name, _, _ in system.film_faces}
        self._fixed = {fx.face: 0.0 for fx in system.heat.fixed}

    @property
    def rise(self) -> np.ndarray:
        return self._theta.copy()

    @property
    def temperature(self) -> np.ndarray:
        return self.system.reference + self._theta

    @property
    def factorisations(self) -> int:
        return len(self._factors)

    def _factor(self, c0: float) -> _Factor:
        if c0 not in self._factors:
            self._factors[c0] = _Factor(self.system, c0)
        return self._factors[c0]

    def trial(self, dt: float, fluxes: Mapping[str, Flux] | None = None,
              closed: Mapping[str, np.ndarray] | None = None, restart: bool = False) -> HeatStep:
        """One step of ``dt`` s with the face fluxes (mW/mm²) and interface state at its end.

        ``closed``: per thermal contact, one bool per interface node (default: all closed);
        ``restart``: take the step by backward Euler (after a jump of the load).
        """
        bdf2, a0, history = self._scheme(dt, restart)
        dt = float(dt)
        s = self.system
        fq = s.flux_vector(fluxes)
        b = fq + s.f_ambient - history / dt
        fac = self._factor(a0 / dt)
        theta, nu = _solve_with_interfaces(s, fac, b, s.coefficients(closed))
        q_in = float(fq.sum())
        q_conv = _film_rates(s, theta)
        q_fixed = _fixed_rates(s, fac.A_f @ theta + fac.Dt_f @ nu - b[s.fixed], s.fixed_face)
        if bdf2:                                   # trapezoid rule, like the scheme's order
            p_in, p_conv, p_fixed = self._rates
            e_in = 0.5 * dt * (p_in + q_in)
            e_conv = {k: 0.5 * dt * (p_conv[k] + v) for k, v in q_conv.items()}
            e_fixed = {k: 0.5 * dt * (p_fixed[k] + v) for k, v in q_fixed.items()}
        else:                                      # the end-of-step rate, as the scheme applies it
            e_in = dt * q_in
            e_conv = {k: dt * v for k, v in q_conv.items()}
            e_fixed = {k: dt * v for k, v in q_fixed.items()}
        return HeatStep(self.time, dt, "bdf2" if bdf2 else "backward_euler", theta, s.reference,
                        e_in, e_conv, e_fixed, _split_flows(s, nu), (q_in, q_conv, q_fixed),
                        self._token)

    def _scheme(self, dt: float, restart: bool) -> tuple[bool, float, np.ndarray]:
        """Whether a step of ``dt`` is BDF2, its a0 and its history term M (a1 θ_n + a2 θ_(n−1))."""
        dt = float(dt)
        if not (math.isfinite(dt) and dt > 0):
            raise ValueError(f"time step must be > 0 s, got {dt}")
        s = self.system
        bdf2 = (self.scheme == "bdf2" and not restart and self._previous is not None
                and dt / self._dt_previous <= BDF2_MAX_RATIO)
        if bdf2:
            w = dt / self._dt_previous
            a0, a1, a2 = (1 + 2 * w) / (1 + w), -(1 + w), w * w / (1 + w)
            return True, a0, s.M @ (a1 * self._theta + a2 * self._previous)
        return False, 1.0, -(s.M @ self._theta)

    def accept(self, step: HeatStep) -> None:
        if step.token != self._token or step.start != self.time:
            raise ValueError("this step was not solved from the current state")
        self._previous, self._theta, self._dt_previous = self._theta, step.rise.copy(), step.dt
        self.time = step.time
        self._rates = step.rates
        self._in += step.heat_in
        for k, v in step.through_fixed.items():
            self._fixed[k] += v
        for k, v in step.convected.items():
            self._conv[k] += v
        self._token += 1

    def advance(self, dt: float, fluxes: Mapping[str, Flux] | None = None,
                closed: Mapping[str, np.ndarray] | None = None, restart: bool = False) -> HeatStep:
        step = self.trial(dt, fluxes, closed, restart)
        self.accept(step)
        return step

    def energy(self) -> EnergyAccount:
        change = self._theta - self._theta0
        by_body = self.system.stored_by_body(change)
        return EnergyAccount(self._in, dict(self._fixed), dict(self._conv),
                             float(self.system.weights @ change), by_body)


class LoadResponse:
    """The linear response of a step's end rise to heat loads: for loads F x (F: heat flow per dof
    and per unknown, mW, N × m; or F R with ``right`` R) added to a step's right-hand side,
    θ = θ(x = 0) + H x with

        H = (I − W_a (S_aa + diag(1/(h A)))⁻¹ D_a) A⁻¹ F,     W = A⁻¹ Dᵀ

    for the step's matrix A and interface state (fem/engagement.py's coupled solve uses O H for an
    observation O, n × N, its gap map).  Per distinct step matrix O A⁻¹ F, O W and D A⁻¹ F are one
    block back-substitution of F's columns (kept); per interface state O H is a small dense solve
    (kept too, the last ``MAX_STATES`` of them)."""

    MAX_STATES = 64

    def __init__(self, run: Transient, loads, observe: np.ndarray, right=None):
        self.run, self.F = run, sp.csc_matrix(loads, dtype=float)
        self.O = np.asarray(observe, dtype=float)
        # loads given as a product F R (R: m' × m) back-substitute only F's m' columns
        self.R = None if right is None else np.asarray(sp.csr_matrix(right).toarray())
        if self.F.shape[0] != run.system.N or self.O.shape[1] != run.system.N:
            raise ValueError(f"loads (N × m) and observe (n × N) with N = {run.system.N} heat dofs expected")
        self._factors: dict[float, tuple] = {}
        self._states: dict[tuple, np.ndarray] = {}

    def matrix(self, dt: float, closed: Mapping[str, np.ndarray] | None = None,
               restart: bool = False) -> np.ndarray:
        """O H (n × m) of the step ``trial(dt, …, closed, restart)`` would take."""
        run = self.run
        _, a0, _ = run._scheme(dt, restart)
        c0 = a0 / float(dt)
        h = run.system.coefficients(closed)
        key = (c0, h.tobytes())
        if key not in self._states:
            fac = run._factor(c0)
            if c0 not in self._factors:
                self._factors[c0] = self._blocks(fac)
            OY, OW, DY = self._factors[c0]
            a, inverse = fac.interface_state(run.system, h) if DY.shape[0] else (np.zeros(0, int), None)
            out = OY
            if a.size:
                with one_blas_thread():
                    out = OY - OW[:, a] @ (inverse @ DY[a])
            if self.R is not None:
                out = out @ self.R
            if len(self._states) >= self.MAX_STATES:
                self._states.pop(next(iter(self._states)))
            self._states[key] = out
        return self._states[key]

    def _blocks(self, fac: _Factor, width: int = 64) -> tuple:
        """O A⁻¹ F, O A⁻¹ Dᵀ, D A⁻¹ F, back-substituted in column blocks (only the small products
        are kept, so the memory is that of the results)."""
        O_i, F_i = self.O[:, fac.inner], self.F[fac.inner]
        m, k = F_i.shape[1], fac.D_i.shape[0]
        OY, DY, OW = np.empty((O_i.shape[0], m)), np.empty((k, m)), np.empty((O_i.shape[0], k))
        with one_blas_thread():
            for j in range(0, m, width):
                Y = fac.lu.solve(F_i[:, j:j + width].toarray())
                OY[:, j:j + width], DY[:, j:j + width] = O_i @ Y, fac.D_i @ Y
            W = fac.interface_response() if k else None
            if W is not None:
                OW[:] = O_i @ W
            else:
                Dt = fac.Dt_i.tocsc()
                for j in range(0, k, width):
                    OW[:, j:j + width] = O_i @ fac.lu.solve(Dt[:, j:j + width].toarray())
        return OY, OW, DY


def steady_state(system: HeatSystem, fluxes: Mapping[str, Flux] | None = None,
                 closed: Mapping[str, np.ndarray] | None = None) -> SteadyState:
    """The steady temperature: conduction, convection, conductances and ties assembled into one
    matrix (ties by merging the paired dofs).  Needs every body to reach a fixed temperature or
    a convection face, through conducting interfaces if need be."""
    s = system
    N = s.N
    h = s.coefficients(closed)
    area = s.node_area()
    A = (s.K + s.H).tocsr()
    cond = np.isfinite(h) & (h * area > 0)
    if np.any(cond):
        W = sp.diags(np.where(cond, h * area, 0.0))
        A = (A + s.D.T @ W @ s.D).tocsr()
    # ties: merge the B dof into the A dof (union-find for chains)
    parent = np.arange(N)

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    tied = np.isinf(h)
    D = s.D.tocoo()
    a_of = np.zeros(D.shape[0], dtype=np.int64)
    b_of = np.zeros(D.shape[0], dtype=np.int64)
    a_of[D.row[D.data > 0]] = D.col[D.data > 0]
    b_of[D.row[D.data < 0]] = D.col[D.data < 0]
    for i in np.flatnonzero(tied):
        ra, rb = root(int(a_of[i])), root(int(b_of[i]))
        if ra != rb:
            parent[max(ra, rb)] = min(ra, rb)
    reps = np.array([root(i) for i in range(N)])
    uniq, red = np.unique(reps, return_inverse=True)
    P = sp.csr_matrix((np.ones(N), (np.arange(N), red)), shape=(N, uniq.size))
    Ar = (P.T @ A @ P).tocsr()
    F = s.flux_vector(fluxes) + s.f_ambient
    Fr = P.T @ F
    value: dict[int, float] = {}
    owner: dict[int, str] = {}
    for d, t, face in zip(s.fixed.tolist(), s.fixed_rise.tolist(), s.fixed_face):
        rd = int(red[d])
        if rd in value and value[rd] != t:
            raise ValueError("two nodes tied across an interface are held at different temperatures")
        value[rd] = t
        owner.setdefault(rd, face)
    fixed_r = np.array(sorted(value), dtype=np.int64)
    _check_anchored(s, Ar, fixed_r, red)
    keep = np.ones(uniq.size, dtype=bool)
    keep[fixed_r] = False
    inner = np.flatnonzero(keep)
    theta_r = np.zeros(uniq.size)
    theta_r[fixed_r] = [value[d] for d in fixed_r.tolist()]
    rhs = Fr[inner] - Ar[inner][:, fixed_r] @ theta_r[fixed_r]
    theta_r[inner] = factorise(Ar[inner][:, inner]).solve(rhs)
    theta = P @ theta_r
    residual = A @ theta - F
    through_fixed = _fixed_rates(s, (P.T @ residual)[fixed_r], [owner[d] for d in fixed_r.tolist()])
    nu = np.where(cond, h * area, 0.0) * (s.D @ theta)
    # a tie's flow is read from the row of its B node when that node has no other pair or support
    counts = np.bincount(np.concatenate([a_of, b_of]), minlength=N) if D.shape[0] else np.zeros(N)
    fixed_set = np.zeros(N, dtype=bool)
    fixed_set[s.fixed] = True
    for i in np.flatnonzero(tied):
        b = int(b_of[i])
        nu[i] = residual[b] if counts[b] == 1 and not fixed_set[b] else np.nan
    return SteadyState(theta, s.reference, float(s.flux_vector(fluxes).sum()), _film_rates(s, theta),
                       through_fixed, _split_flows(s, nu))


def _check_anchored(system: HeatSystem, Ar: sp.csr_matrix, fixed_r: np.ndarray, red: np.ndarray):
    n, labels = connected_components(Ar, directed=False)
    rowsum = np.asarray(Ar.sum(axis=1)).ravel()
    scale = np.asarray(abs(Ar).sum(axis=1)).ravel()
    anchored = np.zeros(n, dtype=bool)
    anchored[labels[fixed_r]] = True
    anchored[labels[rowsum > 1e-9 * scale]] = True       # a convection face
    if not anchored.all():
        loose = np.flatnonzero(~anchored[labels[red]])
        bodies = sorted({system.heat.model.body_names[j] for j in system.dof_body[loose]})
        raise ValueError("no steady state: body(ies) " + ", ".join(repr(b) for b in bodies)
                         + " reach no fixed temperature or convection face")
