"""Spline drag in a plate pack: the closed form for rigid plates and the consistent FE solve.

Every plate of a pack but the end plate slides axially on splines (a disc on the hub, a separator or the
pressure plate in the basket).  While the pack closes, the plate transmits torque through its spline, so the
spline teeth carry a tangential force F_t = T / R_s (T the torque the plate passes on, R_s the spline's pitch
radius), and friction on the teeth's flanks opposes the plate's axial sliding with up to μ_s F_t.  Part of
the clamp force therefore stays in the splines and each further surface of the pack gets less.

Closed form for rigid plates (the load decay treated in "The Consequences of Spline Friction in Multiple Disk
Systems", ASME J. Lubrication Technology 90 (1968) 65; derived here from the plates' force balance).  Number
the n friction surfaces from the pressure plate, F_1 … F_n their axial forces, every surface with the same
effective radius R (uniform pressure on rigid plates: R = R_up).  The friction torque of surface k is
μ F_k R, all in one sense (the driving plates turn one way relative to the driven ones).

* The pressure plate, pushed with W, passes F_1 on and carries the torque μ F_1 R of its one face:
  W − F_1 − μ_s0 μ F_1 R / R_s0 = 0, so  F_1 = W / (1 + a_0)  with the gain  a_0 = μ_s0 μ R / R_s0.
* Plate j, between surfaces j and j + 1, carries the torque of both its faces, μ (F_j + F_{j+1}) R:
  F_j − F_{j+1} − a_j (F_j + F_{j+1}) = 0, so  F_{j+1} = F_j (1 − a_j) / (1 + a_j),  a_j = μ_sj μ R / R_sj.
* The end plate rests on the housing: its spline (if any) carries no sliding friction.

With one gain a for every plate, F_k = W q^(k−1) / (1 + a_0), q = (1 − a)/(1 + a); the pack's torque is
μ R Σ F_k = μ R W (1 − q^n) / ((1 − q)(1 + a_0)), and its efficiency against n μ W R is Σ F_k / (n W).
μ_s = 0 gives F_k = W on every surface, the pack without spline friction.  a ≥ 1 would hold back all the
force a plate passes on (a self-locking plate; the case check refuses it).

The FE solve (:func:`solve_with_spline_drag`) applies the drag of every plate as an axial force spread over
the edge its spline is cut on (the bore of an inner spline, the rim of an outer one), opposing the closing
motion (the apply stroke: on release the drag reverses, a hysteresis this version does not follow).  The drag
depends on the torque, the torque on the contact pressure: the two are iterated to a fixed point (Picard
iteration on the plates' drag forces, each step one condensed contact solve warm-started from the last closed
set).  The step maps a change δd of the drags to about a δd (the gain above), so it contracts by the largest
gain, a few per cent in a real pack: it stops when no drag changes by more than DRAG_TOLERANCE times the
clamp force.  With every μ_s = 0 the first step is the solve without drag, to the last bit.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import PhysicsError
from ...fem import ContactError, FeResult
from ...fem.extra_load import axial_face_load

# Picard steps stop when the largest change of a plate's drag is below this share of the clamp force: far
# below what the discretisation resolves (the mesh band is ~1e-3), above the contact solve's round-off.
DRAG_TOLERANCE = 1e-10
MAX_ITERATIONS = 200
# the spline keys of each kind of plate in [splines] (the body names of geometry.plates)
PLATE_KEYS = (("disc", "disc"), ("separator", "separator"), ("pressure_plate", "pressure_plate"))


@dataclass(frozen=True)
class SplinedPlate:
    """One plate that slides on splines: its spline and the face the drag acts on."""

    body: str
    label: str
    spline: str                     # "inner" (bore) or "outer" (rim)
    pitch_radius_mm: float
    friction_coefficient: float
    face: str                       # the named edge the spline is cut on


def splined_plates(case, section) -> list[SplinedPlate]:
    """Every axially free plate of the pack, from the pressure plate down (the order of the load path)."""
    sp = case.splines
    plates = []
    for body in reversed(section.bodies):
        if body.role == "supported":
            continue
        prefix = next(p for stem, p in PLATE_KEYS if body.name.startswith(stem))
        side = getattr(sp, f"{prefix}_spline")
        plates.append(SplinedPlate(body.name, body.label, side, float(getattr(sp, f"{prefix}_pitch_radius")),
                                   float(getattr(sp, f"{prefix}_friction_coefficient")),
                                   f"{body.name}_{'bore' if side == 'inner' else 'rim'}"))
    return plates


def rigid_pack_forces(clamp_force_N: float, gains) -> np.ndarray:
    """Axial force (N) on each surface of a pack of rigid plates, from the pressure plate down.

    ``gains``: a_0 of the pressure plate, then a_j of each plate down the pack (n − 1 of them for n
    surfaces), a = μ_s μ R / R_s (module docstring)."""
    a = np.asarray(gains, dtype=float)
    forces = [clamp_force_N / (1.0 + a[0])]
    for a_j in a[1:]:
        forces.append(forces[-1] * (1.0 - a_j) / (1.0 + a_j))
    return np.array(forces)


def plate_torques_Nmm(fe: FeResult, plates, faces_of: dict, mu: float) -> np.ndarray:
    """The friction torque (N·mm) each plate passes to its spline: μ Σ λ r over the nodes of its faces."""
    by_name = {itf.name: itf for itf in fe.interfaces}
    return np.array([mu * sum(float(np.sum(by_name[n].normal_force * by_name[n].r)) for n in faces_of[p.body])
                     for p in plates])


@dataclass(frozen=True)
class DragSolve:
    fe: FeResult
    drag_N: np.ndarray              # axial drag on each plate (N, opposing the closing motion)
    torque_Nmm: np.ndarray          # torque through each plate's spline
    iterations: int


def solve_with_spline_drag(solver, gaps, load_scale: float, plates, faces_of: dict, mu: float,
                           clamp_force_N: float, first_guess=None, fields: bool = True, layers=None) -> DragSolve:
    """The contact of the pack with the spline drag of every plate, iterated to the fixed point (module
    docstring).  ``faces_of``: body -> names of the friction interfaces it touches; ``first_guess``: the drag of
    every plate to start from (N; the rigid-plate closed form is close), zero by default; ``layers``: the
    compliant layer of every interface (a measured compression curve, ContactSolver.solve), None for none."""
    system = solver.system
    # the drag opposes the closing motion, the pressed plate's load direction (-z in geometry.plates)
    closing = np.sign(float(np.sum(solver.e))) or -1.0
    unit = [axial_face_load(system, p.face, -closing) if p.friction_coefficient > 0 else None for p in plates]
    gain = np.array([p.friction_coefficient / p.pitch_radius_mm for p in plates])
    drag = np.zeros(len(plates)) if first_guess is None else np.where(gain > 0, np.asarray(first_guess, float), 0.0)
    good, start, step, iteration = None, None, 1.0, 0
    while True:
        iteration += 1
        if iteration > MAX_ITERATIONS:
            raise PhysicsError(f"the spline drag did not settle in {MAX_ITERATIONS} steps: a plate is near locking "
                               "on its splines")
        load = _drag_load(system, unit, drag)
        try:
            fe = solver.solve(list(gaps), load_scale, fields=False, body_load=load, start=start, layers=layers)
        except ContactError as exc:
            # a step that asks more drag than the pack can hold back: go half as far from the last state that
            # could be solved (under-relaxation, Kelley 1995, Iterative Methods for Linear and Nonlinear
            # Equations, §4.1); without such a state the load itself cannot be carried
            if good is None or step < 1e-6:
                raise PhysicsError(f"with the spline drag: {exc}") from None
            step /= 2.0
            drag = good + step * (drag - good)
            continue
        new = gain * plate_torques_Nmm(fe, plates, faces_of, mu)
        if np.max(np.abs(new - drag), initial=0.0) <= DRAG_TOLERANCE * clamp_force_N:
            break
        good, start = drag, np.concatenate([itf.normal_force > 0 for itf in fe.interfaces])
        drag = good + step * (new - good)
    if fields:
        try:
            fe = solver.solve(list(gaps), load_scale, fields=True, body_load=load, start=start, layers=layers)
        except ContactError as exc:         # the same state as the last step, which was solved
            raise PhysicsError(f"with the spline drag: {exc}") from None
    return DragSolve(fe, drag, plate_torques_Nmm(fe, plates, faces_of, mu), iteration)


def _drag_load(system, unit, drag):
    if not np.any(drag):
        return None                 # no drag: the solve without it, bit for bit
    load = np.zeros(system.basis.N)
    for vec, d in zip(unit, drag):
        if vec is not None and d:
            load += d * vec
    return load
