"""The coupled thermo-elastic engagement: contact pressure → friction heat → thermal distortion.

Each time step is implicit with end-of-step values, like the heat scheme (fem/heat.py): the slip
speed ω at the end of the step, the frictional flux q = μ p ω r (p in MPa, ω r in mm/s: mW/mm²)
on the slipping faces' nodes, the heat step (``Transient.trial``, the interface's closed nodes from
the contact state), the thermal load B θ (fem/thermal_strain.py's ``thermal_load_matrix``) and the
contact solve with it.  The pressure and the temperature are iterated in turn (a staggered, fixed-
point iteration) until the interface pressures change by at most ``tolerance``:

    max |p_(m) − p_(m−1)| / max p_(m)  ≤ tolerance

over every node of every interface, then the heat step is accepted.  The thermal load enters the
contact only through the gaps, Giᵀ K⁻¹ B θ, so the map Z = Giᵀ K⁻¹ B (contact nodes × heat nodes)
is computed once (``ContactSolver.gap_response``: one block back-substitution of K⁻¹ Gi).

The fixed point is not iterated but solved (``_Coupling.coupled``): for a fixed set of closed
interface nodes the heat step is linear in the flux and the flux linear in the contact forces λ,
so θ = θ_h + ω H λ (θ_h the step without friction heat, H = ``LoadResponse`` of fem/heat.py) and
the gaps are g + Z θ_h + ω (Z H) λ: the step's contact problem with the compliance C + ω Z H
(non-symmetric, a small dense change), solved by the active set of fem/lcp.py.  The heat step is
then taken with that flux and the contact solved again with its temperature: the residual above
between this contact state and the forces that made the heat step is the staggered definition's
(round-off when the closed set holds), and the step is accepted when it is within ``tolerance``
and the closed nodes have not changed; otherwise it is taken again with the new closed set (the
first iterate of a step is one staggered iterate from the extrapolated forces, which settles
the closed set).  A step whose contact front cycles (no closed set is consistent, so the set held
depends on the path) and a coupled problem that defeats the active set fall back to the staggered
iteration (``EngagementStep.coupling`` "fixed-point").  ``coupling_iterations`` counts the
contact solves of a step: 3 for a slipping step whose closed set holds, 1 without slip.  The
measured costs are in docs/thermal.md.

Speed laws (``SlipDuty.speed_law``): "constant" ω0 over the slip time; "linear" ω0 (1 − t/t_s);
"inertia" I dω/dt = −(T − T_drag) with T = ``torque_of`` of the step's contact state, taken
implicitly, ω_(n+1) = ω_n − Δt (T_(n+1) − T_drag)/I, so with a constant torque the speed falls
exactly linearly; the step that would cross ω = 0 is shortened to end at lock-up.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ._threads import one_blas_thread
from .engagement_coupling import _Coupling, _forces, _key, _pressures
from .engagement_duty import SPEED_LAWS, FrictionHeating, SlipDuty
from .heat import EnergyAccount, HeatModel, LoadResponse, Transient
from .model import FeResult
from .solve import ContactSolver
from .thermal_strain import vertex_thermal_stress

__all__ = ["CouplingError", "EngagementHistory", "EngagementStep", "FrictionHeating", "SPEED_LAWS",
           "SlipDuty", "run_engagement"]

MIN_STEP_FRACTION = 1e-9     # a lock-up step shorter than this part of a step is not taken


class CouplingError(RuntimeError):
    """The staggered pressure–temperature iteration of a step did not converge."""


@dataclass(frozen=True)
class EngagementStep:
    time: float                 # s, end of the step
    dt: float                   # s
    engagement: int             # 1-based engagement the step belongs to (a dwell: the one before)
    slipping: bool
    slip_speed: float           # rad/s at the end of the step
    fe: FeResult                # the contact state (interfaces only: fields=False)
    torque: float               # N·mm, torque_of(fe) (the capacity of the state, slipping or not)
    heat_generated: float       # mJ put in during the step
    peak_rise: float            # K, max of θ = T − T_ref over all heat nodes at the end of the step
    peak_r: float               # mm, where
    peak_z: float               # mm
    peak_body: str              # body name there
    coupling_iterations: int
    coupling_residual: float    # the max|Δp|/max p of the last iteration
    scheme: str = "bdf2"        # the heat scheme this step used ('bdf2' or 'backward_euler')
    coupling: str = "direct"    # 'direct' (the coupled contact problem) or 'fixed-point' (its fallback)


@dataclass
class EngagementHistory:
    steps: list[EngagementStep]
    cold: FeResult              # the contact state at t = 0 (no heat): solver.solve(gaps, load_scale, fields=False)
    energy: EnergyAccount       # fem.heat's account at the end
    reference_temperature: float
    heat_factorisations: int
    vertices: np.ndarray        # (2, nv) r, z of the mesh vertices, mm
    _solver: ContactSolver = field(repr=False, default=None)
    _load: object = field(repr=False, default=None)               # B, every dof × heat nodes
    _expansion: object = field(repr=False, default=None)
    _rises: list = field(repr=False, default_factory=list)        # θ at every heat node, per step
    _load_scale: float = field(repr=False, default=1.0)

    def rise_at_vertices(self, i: int) -> np.ndarray:
        """(nv,) θ = T − T_ref (K) at the mesh vertices at the end of step i (−1: the last)."""
        return self._rises[i][:self.vertices.shape[1]].copy()

    def _displacement(self, i: int) -> np.ndarray:
        return self._solver.displacement_of_state(self.steps[i].fe, self._load_scale, self._load @ self._rises[i])

    def displacement_at_vertices(self, i: int) -> np.ndarray:
        """(2, nv) u_r, u_z (mm), mechanical + thermal, at the end of step i (one back-substitution)."""
        return self._displacement(i)[self._solver.system.basis.nodal_dofs]

    def thermal_stress_at_vertices(self, i: int) -> dict:
        """'rr', 'zz', 'tt', 'rz', 'von_mises' (MPa) at the vertices, σ = C(ε − ε_th), at step i."""
        return vertex_thermal_stress(self._solver.system, self._displacement(i), self._rises[i],
                                     self._expansion)


def run_engagement(solver: ContactSolver, heat: HeatModel, expansion, heating: list[FrictionHeating],
                   duty: SlipDuty, torque_of: Callable[[FeResult], float], gaps=None, load_scale=1.0,
                   tolerance=1e-6, max_iterations=30, scheme="bdf2", progress=None) -> EngagementHistory:
    """Step the engagements of ``duty`` with the pressure–temperature coupling of every step.

    ``heat.model`` is the FeModel ``solver`` was built from; ``expansion`` α (1/K) per body or per
    triangle; ``gaps`` and ``load_scale`` as :meth:`ContactSolver.solve`; ``torque_of(fe)`` the
    friction torque (N·mm) of a contact state; ``progress(done, total)`` after each accepted step
    (total: the planned step count, estimated for the "inertia" law).  Raises ValueError for bad
    input, :class:`CouplingError` when a step does not converge in ``max_iterations``.
    """
    if not isinstance(duty, SlipDuty):
        raise ValueError(f"duty: a SlipDuty expected, got {type(duty).__name__}")
    if not (np.isfinite(tolerance) and tolerance > 0):
        raise ValueError(f"tolerance = {tolerance!r}: must be a finite number > 0")
    if not (isinstance(max_iterations, int) and max_iterations >= 1):
        raise ValueError(f"max_iterations = {max_iterations!r}: must be a whole number >= 1")
    c = _Coupling(solver, heat, expansion, heating, gaps, load_scale)
    cold = solver.solve(gaps, load_scale, fields=False)
    run = Transient(c.system, scheme, temperature=c.system.reference + float(duty.initial_rise))
    response = LoadResponse(run, c.L, c.Z, c.R)
    names = solver.system.model.body_names
    locs = c.system.basis.doflocs
    steps: list[EngagementStep] = []
    rises: list[np.ndarray] = []
    state = {"fe": cold, "omega": 0.0, "jump": False}

    if duty.speed_law == "inertia":
        t_cold = float(torque_of(cold))
        if not t_cold > duty.drag_torque:
            raise ValueError(f"speed_law 'inertia': the cold torque {t_cold:g} N·mm does not exceed "
                             f"drag_torque = {duty.drag_torque:g} N·mm; the clutch cannot lock")
        dt_slip = duty.inertia * duty.slip_speed / (t_cold - duty.drag_torque) / duty.steps_per_engagement
    else:
        dt_slip = duty.slip_time / duty.steps_per_engagement
    n_cool = duty.dwell_steps if duty.cool_down_time > 0 else 0
    total = (duty.engagements * duty.steps_per_engagement
             + (duty.engagements - 1) * (duty.dwell_steps if duty.dwell_time > 0 else 0) + n_cool)

    def fail(dt, engagement, residual, what="pressure–temperature iteration"):
        return CouplingError(f"step ending at t = {run.time + dt:.6g} s (engagement {engagement}): the "
                             f"{what} did not converge in max_iterations = {max_iterations} (last "
                             f"max|Δp|/max p = {residual:.3g}, tolerance = {tolerance:g})")

    def fixed_point(dt: float, engagement: int, speed_of: Callable[[FeResult], float], restart: bool,
                    done: int = 0, resume=None):
        """The staggered iteration (the direct path's fallback); ``done``: contact solves spent;
        ``resume`` = (contact state, closed set, seen sets) after its first iteration (the direct
        path's first iteration is the same), to go on from there."""
        fe = state["fe"]
        lams, p_old, closed = _forces(fe), _pressures(fe), c.closed(fe)
        guess = state.get("guess")
        if guess is not None and not restart and dt == state.get("dt"):
            lams, p_old = guess               # extrapolated from the last two steps of this slip
        seen, first = {_key(closed)}, 1
        if resume is not None:
            fe, closed, seen = resume
            lams, p_old, first, done = _forces(fe), _pressures(fe), 2, done - 1
        for it in range(first, max_iterations + 1):
            omega = float(speed_of(fe))
            hs = run.trial(dt, c.fluxes(lams, omega), closed, restart)
            fe = solver.solve(c.gaps(hs.rise), load_scale, fields=False)
            p_new, lams = _pressures(fe), _forces(fe)
            residual = float(np.max(np.abs(p_new - p_old)) / max(np.max(p_new), 1e-300))
            p_old = p_new
            if residual <= tolerance:
                break
            # a node at the contact front can flip open/closed from one iteration to the next (a
            # closed node conducts, which moves the front back): the interface state is updated
            # until it repeats an earlier one, then held, and the pressures converge with it
            new = c.closed(fe)
            if _key(new) not in seen:
                closed = new
                seen.add(_key(new))
        else:
            raise fail(dt, engagement, residual)
        return hs, fe, omega, done + it, residual, "fixed-point"

    def step(dt: float, engagement: int, speed_of: Callable[[FeResult], float], restart: bool,
             follows: bool = False):
        """One step: a staggered iteration from the guess (it settles the closed set), then the
        coupled contact problem, the heat step with its forces and the contact with that heat
        step.  ``follows``: the speed depends on the contact state (the inertia law), so the
        state it is taken from must agree with the final one too."""
        fe = state["fe"]
        lam_g, p_ref = np.concatenate(_forces(fe)), _pressures(fe)
        guess = state.get("guess")
        if guess is not None and not restart and dt == state.get("dt"):
            lam_g, p_ref = np.concatenate(guess[0]), guess[1]   # extrapolated from the last two steps
        closed = c.closed(fe)
        seen, held = {_key(closed)}, [False]

        def update(new) -> bool:
            """Take the closed set ``new`` (True if it changes the step's).  The contact front can
            cycle (a node that closes conducts heat, which opens it again): a set met before is
            not taken again, the step's is held from then on, and the step converges with it
            (as in ``fixed_point``; on a two-set cycle both hold the same set)."""
            nonlocal closed
            if held[0] or _key(new) == _key(closed):
                return False
            if _key(new) in seen:
                held[0] = True
                return False
            closed = new
            seen.add(_key(new))
            return True

        def cycling():
            """A cycling front has no consistent closed set; which one a step holds depends on the
            path, so the step is handed to the staggered iteration (from its second iterate: its
            first is the predictor here), whose path sets it as before (measured: docs/thermal.md)."""
            return fixed_point(dt, engagement, speed_of, restart, solves, tuple(first))

        omega = float(speed_of(fe))
        hs = run.trial(dt, c.fluxes(np.split(lam_g, c.sizes), omega), closed, restart)
        base = (hs.rise, omega * lam_g, _key(closed))
        ref, fe = fe, solver.solve(c.gaps(hs.rise), load_scale, fields=False, start=lam_g > 0)
        solves, p = 1, _pressures(fe)
        first = [fe, None, None]            # the staggered iteration's state after this iterate
        # without slip no pressure enters the heat step: a repeat would give this state again
        residual = (float(np.max(np.abs(p - p_ref)) / max(np.max(p), 1e-300))
                    if omega > 0.0 or follows else 0.0)
        while True:
            if not update(c.closed(fe)) and residual <= tolerance:
                return hs, fe, omega, solves, residual, "direct"
            if first[1] is None:
                first[1:] = [closed, set(seen)]
            if held[0]:         # a cycling front: the staggered iteration's path picks the set
                return cycling()
            ref = fe
            omega = float(speed_of(ref))
            start, p_ref, lam = np.concatenate(_forces(ref)) > 0, None, np.zeros(0)
            while omega > 0.0:
                if solves + 2 > max_iterations:
                    raise fail(dt, engagement, residual)
                if base[2] != _key(closed):          # a heat step of this closed set to start from
                    base = (run.trial(dt, None, closed, restart).rise, np.zeros_like(lam_g), _key(closed))
                lam = c.coupled(response.matrix(dt, closed, restart), omega, base[:2], start)
                solves += 1
                if lam is None:
                    return fixed_point(dt, engagement, speed_of, restart, solves)
                start, p_ref = lam > 0, c.pressure_of(lam)
                if not update(c.closed_of(lam)):      # else solved again before the heat step
                    if held[0]:
                        return cycling()
                    break
            if solves + 1 > max_iterations:
                raise fail(dt, engagement, residual)
            hs = run.trial(dt, c.fluxes(np.split(lam, c.sizes), omega) if lam.size else None, closed,
                           restart)
            base = (hs.rise, omega * lam if lam.size else np.zeros_like(lam_g), _key(closed))
            fe = solver.solve(c.gaps(hs.rise), load_scale, fields=False, start=start)
            solves += 1
            p = _pressures(fe)
            scale = max(np.max(p), 1e-300)
            residual = 0.0 if p_ref is None else float(np.max(np.abs(p - p_ref)) / scale)
            if residual > tolerance and not follows:
                # the solved forces do not reproduce themselves (round-off aside they must): hand
                # the step to the staggered iteration
                return fixed_point(dt, engagement, speed_of, restart, solves)
            if follows:
                residual = max(residual, float(np.max(np.abs(p - _pressures(ref))) / scale))

    def record(hs, fe, omega, it, residual, method, engagement):
        run.accept(hs)
        i = int(np.argmax(hs.rise))
        steps.append(EngagementStep(
            hs.time, hs.dt, engagement, omega > 0.0, omega, fe, float(torque_of(fe)), hs.heat_in,
            float(hs.rise[i]), float(locs[0, i]), float(locs[1, i]), names[int(c.system.dof_body[i])],
            it, residual, hs.scheme, method))
        rises.append(hs.rise)
        last = state["fe"]
        # the next step's first iterate: the forces extrapolated linearly in time (same step size)
        guess = None
        if len(steps) > 1 and hs.dt == state.get("dt"):
            guess = ([np.maximum(2 * a - b, 0.0) for a, b in zip(_forces(fe), _forces(last))],
                     np.maximum(2 * _pressures(fe) - _pressures(last), 0.0))
        state.update(fe=fe, omega=omega, dt=hs.dt, guess=guess)
        if progress is not None:
            progress(len(steps), max(total, len(steps)))

    def idle(duration: float, engagement: int):
        dt = duration / duty.dwell_steps
        for n in range(duty.dwell_steps):
            restart = n == 0 and state["omega"] > 0.0       # the slip stopped with a jump of the flux
            record(*step(dt, engagement, lambda fe: 0.0, restart), engagement)

    # the small dense solves of every step with one BLAS thread (fem/_threads.py: many threads made
    # them 15 x slower), entered once for the run
    with one_blas_thread():
        for e in range(1, duty.engagements + 1):
            restart = bool(steps)                               # slip starts with a jump of the flux
            if duty.speed_law == "inertia":
                _inertia_slip(duty, dt_slip, e, step, record, state, restart, torque_of)
            else:
                for n in range(1, duty.steps_per_engagement + 1):
                    w = duty.speed(n / duty.steps_per_engagement)
                    record(*step(dt_slip, e, lambda fe, w=w: w, restart and n == 1), e)
            if e < duty.engagements and duty.dwell_time > 0:
                idle(duty.dwell_time, e)
        if duty.cool_down_time > 0:
            idle(duty.cool_down_time, duty.engagements)
    return EngagementHistory(steps, cold, run.energy(), c.system.reference, run.factorisations,
                             np.asarray(solver.system.mesh.p, dtype=float).copy(), solver, c.B, expansion,
                             rises, float(load_scale))


def _inertia_slip(duty: SlipDuty, dt: float, engagement: int, step, record, state, restart, torque_of):
    """One slip under I dω/dt = −(T − T_drag), implicit; the crossing step is shortened so that ω
    ends at 0 exactly at lock-up (taken again with that step, its speed then 0 by definition)."""
    inertia, drag = float(duty.inertia), float(duty.drag_torque)
    t_slip, omega_n = 0.0, float(duty.slip_speed)
    first = True
    while omega_n > 0.0:
        if t_slip >= duty.slip_time * (1.0 - 1e-12):
            raise ValueError(f"speed_law 'inertia': the clutch has not locked after slip_time = "
                             f"{duty.slip_time:g} s (slip speed still {omega_n:.4g} rad/s); allow a "
                             "longer slip_time or give more torque")

        def speed(fe, dt_=dt, w=omega_n):
            return max(w - dt_ * (float(torque_of(fe)) - drag) / inertia, 0.0)
        hs, fe, omega, it, res, how = step(dt, engagement, speed, restart and first, True)
        if omega <= 0.0:                # crosses lock-up within this step: shorten it
            net = float(torque_of(fe)) - drag
            short = inertia * omega_n / net if net > 0 else dt
            if short < MIN_STEP_FRACTION * dt:
                break
            if short < dt:
                hs, fe, omega, it, res, how = step(short, engagement, lambda fe: 0.0, restart and first)
            omega = 0.0
        record(hs, fe, omega, it, res, how, engagement)
        t_slip += hs.dt
        omega_n = omega
        first = False
