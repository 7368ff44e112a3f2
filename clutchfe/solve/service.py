"""The one solve service: every caller (run, mesh study, verify, wear-in, tilt, studies) solves here.

A case is solved in two steps.  :meth:`SolveService.prepare` meshes the section and
condenses the FE model once per *stiffness group*: every case key that changes the mesh
or the stiffness is in the group key; the keys that do not (the axial force, the
misalignment, μ, the requirement, the wear duty …) are not.  The prepared model is built at
:data:`REFERENCE_FORCE` with closed interfaces, so it does not depend on which case of its
group came first.  :meth:`SolveService.solve` then solves one case on it: the case's own
initial gaps (from its geometry: ``FrictionInterface.initial_gap``), its force as a load
scale, and its axis tilt and radial offset on the harmonic (r, θ) solver of the same model.
A study sample is therefore the same computation as ``clutchfe run`` of that sample's case.
"""
from __future__ import annotations

import hashlib
import json
import threading
from collections import OrderedDict
from dataclasses import dataclass, field, replace

import numpy as np

from ..budget import check_mesh_budget
from ..case import Case
from ..errors import PhysicsError
from ..fem import ContactError, ContactSolver, FeModel, FeResult
from ..fem.tilted import TiltedContactSolver, TiltedResult
from ..geometry import Section, SectionMesh, build_section, mesh_section
from .model import LayerCurves, carrier_modulus_of, fe_model_of, layer_curves_of

# The prepared model's force: any positive value serves (the solve is linear in the load
# at fixed contact); a fixed one keeps results independent of the order samples come in.
REFERENCE_FORCE = 1000.0        # N
# Case keys (or whole tables, ending in "."; or a key of every table, starting with "*.") that change
# neither the mesh nor the stiffness.  The hot engagement's tables and the thermal properties of every
# material are read by its own heat model on the prepared mesh, never by the stiffness; the speed analysis's
# table and the strengths likewise (its centrifugal load is a load on the prepared model, the strengths are
# read against its stresses).
SOLVE_PARAMETERS = ("name", "description", "interface.friction_coefficient", "load.axial_force",
                    "lining.allowable_pressure", "misalignment.", "requirement.", "wear.", "verification.",
                    "engagement.", "cooling.", "splines.", "lining_curve.", "cushion.", "*.thermal_conductivity", "*.density", "*.specific_heat",
                    "*.expansion_coefficient", "speed.", "*.yield_strength", "*.tensile_strength")
# Prepared models kept; one of the default demo is a few MB (a tilted one tens of MB).
CACHE_SIZE = 4
GUIDANCE_CHOICES = ("held", "self_aligning")


def stiffness_key(case: Case) -> str:
    """Cases with the same key share a mesh and a stiffness: one prepared model serves them."""
    fixed = {k: v for k, v in case.flat().items() if not any(_solve_parameter(k, p) for p in SOLVE_PARAMETERS)}
    # a measured lining curve makes the meshed lining a carrier whose modulus follows the curve's steepest stiffness
    # (solve/model.py); the rest of the points do not matter
    fixed["lining curve carrier"] = carrier_modulus_of(case)
    return hashlib.sha256(json.dumps(fixed, sort_keys=True, default=str).encode()).hexdigest()[:16]


def _solve_parameter(key: str, pattern: str) -> bool:
    if pattern.startswith("*."):
        return key.rpartition(".")[2] == pattern[2:]
    return key == pattern or (pattern.endswith(".") and key.startswith(pattern))


def reference_case(case: Case) -> Case:
    """The case the group's model is built from: the reference force, no misalignment."""
    mis = case.misalignment
    return replace(case, load=replace(case.load, axial_force=REFERENCE_FORCE),
                   misalignment=replace(mis, cone_angle_mismatch=0.0, coning=0.0, axis_tilt=0.0, radial_offset=0.0))


def is_tilted(case: Case) -> bool:
    """True when the case needs the non-axisymmetric (r, θ) solve."""
    return bool(case.misalignment.axis_tilt or case.misalignment.radial_offset)


@dataclass
class PreparedCase:
    """One stiffness group's mesh and condensed solvers (at the reference force, closed faces)."""

    key: str
    section: Section
    mesh: SectionMesh
    model: FeModel
    solver: ContactSolver
    # (angular divisions, guide ring) -> TiltedContactSolver: misalignment.guided_at is a
    # misalignment key, so not in the stiffness key, but it changes the harmonic condensation
    tilted_solvers: dict = field(default_factory=dict)

    def tilted(self, divisions: int, guided_at: str = "load_ring") -> TiltedContactSolver:
        """The harmonic solver on ``divisions`` angles with the pressed part held across the axis at
        ``guided_at`` (fem.tilted.GUIDES), built on first use (harmonic 0 is ``solver``)."""
        key = (divisions, guided_at)
        if key not in self.tilted_solvers:
            pressed = next(b.name for b in self.section.bodies if b.role == "pressed")
            self.tilted_solvers[key] = TiltedContactSolver(self.model, pressed, grid=divisions,
                                                           base=self.solver, guide=guided_at)
        return self.tilted_solvers[key]


@dataclass(frozen=True)
class SolvedCase:
    """The FE answer for one case: what the comparison stage and the analyses start from."""

    case: Case
    section: Section                # the case's own section (its gaps, its force)
    prepared: PreparedCase
    gaps: tuple                     # initial normal gap (mm) at the nodes of every interface
    load_scale: float               # the case's force over the reference force
    fe: FeResult                    # axisymmetric result; for a tilted case the θ-summed rings
    tilted: TiltedResult | None = None      # the (r, θ) result of a tilted or offset case
    guidance: str = "held"
    # the measured compression curves the solve carried (a layer on every face), None without one
    layer_curves: LayerCurves | None = None

    @property
    def mesh(self) -> SectionMesh:
        return self.prepared.mesh

    @property
    def solver(self) -> ContactSolver:
        return self.prepared.solver


class SolveService:
    """Prepares each stiffness group once and solves any number of cases on it.

    Thread-safe (a study worker runs several tasks in threads); keeps the last
    ``cache_size`` prepared models.
    """

    def __init__(self, cache_size: int = CACHE_SIZE):
        self.cache_size = cache_size
        self._cache: OrderedDict[str, PreparedCase] = OrderedDict()
        self._lock = threading.RLock()
        self.preparations = 0
        self.solves = 0

    def clear(self) -> None:
        with self._lock:
            self._cache.clear()

    def prepare(self, case: Case, mesh: SectionMesh | None = None) -> PreparedCase:
        """The prepared model of the case's stiffness group (meshed unless ``mesh`` is given)."""
        key = stiffness_key(case)
        with self._lock:
            if key in self._cache:
                self._cache.move_to_end(key)
                return self._cache[key]
            ref = reference_case(case)
            section = build_section(ref)
            if mesh is None:
                check_mesh_budget(case, section, with_mesh_study=False)     # before gmsh, not after
                mesh = mesh_section(section, order=1)
            model = fe_model_of(ref, section, mesh, gaps=False)
            try:
                solver = ContactSolver(model)
            except ContactError as exc:
                raise PhysicsError(str(exc)) from None
            prepared = PreparedCase(key, section, mesh, model, solver)
            self.preparations += 1
            self._cache[key] = prepared
            while len(self._cache) > self.cache_size:
                self._cache.popitem(last=False)
            return prepared

    def initial_gaps(self, case: Case, prepared: PreparedCase, section: Section | None = None) -> list[np.ndarray]:
        """The case's initial normal gap at every interface node, as its geometry defines it."""
        section = section if section is not None else build_section(case)
        return [itf.initial_gap(xy.T) for itf, xy in zip(section.interfaces, prepared.solver.interface_nodes)]

    def solve(self, case: Case, mesh: SectionMesh | None = None, fields: bool = True,
              on_grid: bool | None = None) -> SolvedCase:
        """Solve ``case`` (axisymmetric, or on the (r, θ) grid when it has a tilt or offset).

        ``fields=False`` skips the displacement and stress fields (a study needs only the
        interface); ``on_grid=True`` takes the (r, θ) path even without a tilt (to check the
        harmonic model against the axisymmetric one).  Raises PhysicsError when the
        interface cannot carry the load.
        """
        prepared = self.prepare(case, mesh)
        section = build_section(case)
        gaps = self.initial_gaps(case, prepared, section)
        scale = case.load.axial_force / REFERENCE_FORCE
        try:
            if is_tilted(case) if on_grid is None else on_grid:
                return self._solve_tilted(case, section, prepared, gaps, scale)
            curves = layer_curves_of(case)
            # every friction face carries one lining (the parametric sections), so one layer each
            layers = None if curves is None else [curves.face] * len(section.interfaces)
            fe = prepared.solver.solve(gaps=gaps, load_scale=scale, fields=fields, layers=layers)
        except ContactError as exc:
            raise PhysicsError(str(exc)) from None
        self.solves += 1
        return SolvedCase(case, section, prepared, tuple(gaps), scale, fe, layer_curves=curves)

    def _solve_tilted(self, case, section, prepared, gaps, scale) -> SolvedCase:
        mis = case.misalignment
        guidance = mis.guidance or "held"
        if guidance not in GUIDANCE_CHOICES:
            raise ValueError(f"misalignment.guidance = {guidance!r}: allowed {', '.join(GUIDANCE_CHOICES)}")
        with self._lock:                            # built once, on first use
            solver = prepared.tilted(int(case.mesh.angular_divisions), mis.guided_at or "load_ring")
        pivot = solver.pivot_z + (mis.tilt_pivot_offset or 0.0)    # from the middle of the friction face
        sol = solver.solve(mis.axis_tilt, mis.radial_offset, self_aligning=guidance == "self_aligning",
                           load_scale=scale, gaps=gaps, pivot_z=pivot)
        fe = FeResult(displacement=np.zeros((2, 0)), stress={}, interfaces=[g.ring() for g in sol.interfaces],
                      rigid_approach=sol.approach, axial_force_balance_error=sol.axial_force_balance_error,
                      dofs=int(solver.base.system.basis.N + solver.hs.basis.N), timings=sol.timings,
                      contact_iterations=sol.sweeps)
        self.solves += 1
        return SolvedCase(case, section, prepared, tuple(gaps), scale, fe, tilted=sol, guidance=guidance)

