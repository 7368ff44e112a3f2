"""Archard wear-in of the friction faces on a condensed contact solver.

Archard's law (Archard, J. Appl. Phys. 24, 1953): wear depth rate = k p v, with the
sliding speed v = omega r.  The path variable is the relative rotation Theta (rad) the
faces have slipped through, so the sliding distance at radius r is r Theta and

    dh = k p r dTheta / 1000          (h mm, k mm^3/(N m), p MPa, r mm; /1000: mm -> m)

The wear depth adds to the initial normal gap of the face and the contact is re-solved
on the compliance condensed once by :class:`ContactSolver` (no new factorisation).

Steps are implicit: with dh = D lam, D_i = k r_i / (1000 A_i), a step ending at the
pressure lam of its end state is the contact problem with the compliance C + beta dTheta D
on the gap g + h*, so one step is one complementarity solve and complementarity holds at
every state with its own wear.  The steps are the variable-step two-step BDF (BDF2:
h* = h_n + w^2/(1+2w) (h_n - h_n-1), beta = (1+w)/(1+2w), w the ratio of this step to
the last; Hairer, Norsett & Wanner, Solving ODEs I, §III.5), second order and, like
backward Euler, A-stable, so damping the stiff nodal modes (45-80 x stiffer than the
face's tilt mode on the demo clutches, which rules out explicit steps; Hairer & Wanner,
Solving ODEs II, §IV.2 and §V.1).  The first step, and any step in which a node opens, is backward Euler
(h* = h_n, beta = 1), so a node that carries no load at the end of a step does not wear
in it.  Step ratios are at most 2 (variable-step BDF2 is zero-stable below 1 + sqrt 2,
ibid., from memory).

Step size: the largest wear increment of a step is capped at ``step_cap`` times the
current elastic approach, the wear depth over which the present departure from uniform
wear would wear off at the rate of the last step (on a Winkler lining p/k, its
compression); the faster of two departures sets it: the largest of the faces' own p r
and the pack's (:func:`uniform_wear_departure`).  It starts from the stiffness of the face
against a linear gap change (a probe solve) and grows at most 2 x per step.  Accuracy
(tests/test_wear.py, against the exact path of a Winkler lining): at the default cap
0.05 the sliding to a departure of 10 %, 1 % and 0.1 % is within 0.06 % of the exact one,
at 0.025 within 0.015 %; backward-Euler steps were 2.4 % late at 0.05 (first order, error
about cap / 2).

Steady state ("worn in"): :func:`uniform_wear_departure` rho at or below
``steady_tolerance`` (default 1e-3), at the first state that meets it.  Why that measure
and that value: the departure d = P r - C of the pack's p r from uniform wear is
orthogonal to 1/r in the area-weighted product (both carry the force), and the capacity
position is xi = <1, d> / <1, d_up> on the mesh, so by Cauchy-Schwarz |xi| <= kappa rho
with kappa = |1 without its 1/r part| |d_up| / <1, d_up> = 1.005 at r1/r2 = 2/3, 1.016 at
1/2, 1.09 at 1/6.  At 1e-3 the torque is within 0.1 % of the gap between the uniform-
pressure and uniform-wear torques (0.4-1.7 % of the torque on the demos) from its worn-in
value, so within 2e-5 of it, and xi reads 0.001 or less; the rms departure of the pack's
p r is a thousandth of the new interface's.  A tighter value mostly follows slow modes
that move little torque (on the multi-plate demo the faces' bending modes, which the sum
over the faces cancels: 1e-4 takes 2.7 x the wear depth of 1e-3).  The old test, a change
of p r per step over an approach estimate that grew 60 x with the wear, called that demo
steady only at 72 % of its lining.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from threadpoolctl import threadpool_limits

from .lcp import solve_lcp
from .model import InterfaceResult
from .solve import ContactSolver, _interfaces

# m of sliding per mm of radius and rad of rotation
_MM_TO_M = 1e-3
# largest growth of the step from one step to the next (the path stays smooth)
_GROWTH = 2.0
# probe gap for the face stiffness: a linear ramp this many mm end to end; small enough
# not to change the contact set, large against round-off of the dense solves
_PROBE_MM = 1e-6
# attempts to land a step exactly on a limit (duty, volume, depth)
_LANDING_TRIES = 8
# a step's end state may wear up to this much faster than its start predicts
_SAFETY = 1.5


@dataclass
class WearState:
    """The face after some sliding: everything per interface is in result order."""

    sliding_rad: float                      # relative rotation slipped so far, rad
    wear_volume_mm3: float                  # worn off all modelled faces (times faces_per_interface)
    depth_mm: list[np.ndarray]              # wear depth at every interface node, mm
    interfaces: list[InterfaceResult]
    step_change: float                      # max relative change of p r over the contact in the step
    elastic_approach_mm: float              # approach the step was capped against, mm
    departure: float                        # uniform_wear_departure: the steady-state measure


@dataclass
class WearPath:
    states: list[WearState] = field(default_factory=list)
    stop_reason: str = ""                   # steady | sliding | volume | depth limit | step limit
    converged: bool = False                 # steady state reached
    steady_step: int | None = None          # index of the first state with departure <= tolerance
    steady_tolerance: float = 0.0           # the tolerance it was judged against

    @property
    def steps(self) -> int:
        return len(self.states) - 1


def pressure_times_radius(itf: InterfaceResult) -> np.ndarray:
    """p r at every node (MPa mm): constant along the face once the wear is uniform."""
    return itf.pressure * itf.r


def _carrying(itf: InterfaceResult) -> np.ndarray:
    return itf.in_contact & (itf.tributary_area > 1e-12 * itf.tributary_area.max())


def p_r_departure(itf: InterfaceResult) -> float:
    """Force-weighted rms departure of p r from its mean over the contact, relative."""
    on = _carrying(itf)
    pr, w = pressure_times_radius(itf)[on], itf.normal_force[on]
    mean = np.sum(w * pr) / np.sum(w)
    return float(np.sqrt(np.sum(w * (pr - mean) ** 2) / np.sum(w)) / mean)


def uniform_wear_departure(interfaces: list[InterfaceResult]) -> float:
    """How far the interface is from worn in: 1 at uniform pressure, 0 at uniform wear.

    Worn in, Archard wear is uniform, so p r is constant (Archard 1953).  The faces of a
    pack carry the clamp force in series and their torques add, so the measure is taken on
    the pack's p r: the pressures of all faces summed at each radius (P), times r.  It is
    the area-weighted rms departure of P r from its uniform-wear value C = F / sum(A / r)
    at the same force F, over the departure of uniform pressure P = F / sum(A) from it.
    Unsigned, so unlike the capacity position xi (its signed first moment: xi = sum A (P r
    - C) / sum A (P_up r - C) on the mesh) it cannot vanish on a path that only crosses
    uniform wear.  Faces whose nodes lie at other radii than the first face's are read
    at its radii by linear interpolation (faces of one clutch share r1 and r2).  Not
    judged: differences from face to face whose torques cancel in the sum (the multi-plate
    demo is worn in by this measure while single faces still show 2 % spread of p r).
    """
    ref = interfaces[0]
    order = np.argsort(ref.r)
    r, area = ref.r[order], ref.tributary_area[order]
    keep = area > 1e-12 * area.max()
    r, area = r[keep], area[keep]
    pressure = np.zeros_like(r)
    for itf in interfaces:
        o = np.argsort(itf.r)
        pressure += np.interp(r, itf.r[o], itf.pressure[o])
    force = float(np.sum(area * pressure))
    worn_in = force / np.sum(area / r)                      # P r of uniform wear
    uniform = force / np.sum(area)                          # P of uniform pressure
    return float(np.sqrt(np.sum(area * (pressure * r - worn_in) ** 2)
                         / np.sum(area * (uniform * r - worn_in) ** 2)))


def p_r_change(before: InterfaceResult, after: InterfaceResult) -> float:
    """Largest change of p r in a step over the nodes carrying load, relative to its mean."""
    on = _carrying(before) | _carrying(after)
    pr0, pr1 = pressure_times_radius(before), pressure_times_radius(after)
    w = after.normal_force[_carrying(after)]
    mean = np.sum(w * pr1[_carrying(after)]) / np.sum(w)
    return float(np.max(np.abs(pr1[on] - pr0[on])) / mean)


class ArchardStepper:
    """Backward-Euler Archard steps on one condensed contact solver (call inside
    ``threadpool_limits(limits=1)``, as :func:`wear_in` does)."""

    def __init__(self, solver: ContactSolver, wear_coefficient: float, faces_per_interface: int = 1,
                 gaps: list[np.ndarray] | None = None, load_scale: float = 1.0):
        self.solver = solver
        self.k = float(wear_coefficient)
        self.faces = int(faces_per_interface)
        self.sizes = [xy.shape[1] for xy in solver.interface_nodes]
        self.r = np.concatenate([xy[0] for xy in solver.interface_nodes])
        area = np.concatenate([f.area for f in solver.faces])
        self.area = area
        self.has_area = area > 1e-12 * area.max()
        # the new interface: the initial gaps (the model's unless given) under the scaled load
        g0 = solver.g0 if gaps is None else np.concatenate([np.asarray(g, float) for g in gaps])
        self.g_base = g0 + load_scale * solver.g_load
        self.e = load_scale * solver.e

    def split(self, values: np.ndarray) -> list[np.ndarray]:
        return np.split(values, np.cumsum(self.sizes)[:-1])

    def solve(self, depth: np.ndarray, d_sliding: float, weight: float = 1.0):
        """Contact at the end of a step of ``d_sliding`` rad from wear ``depth`` whose end
        pressure wears ``weight`` x the backward-Euler amount: (lam, new depth, results)."""
        wear_compliance = np.where(self.has_area, weight * self.k * self.r * d_sliding * _MM_TO_M /
                                   np.where(self.has_area, self.area, 1.0), 0.0)
        C = self.solver.C + np.diag(wear_compliance)
        sol = solve_lcp(C, self.g_base + depth, self.solver.B, self.e)
        return sol.lam, depth + wear_compliance * sol.lam, _interfaces(self.solver.faces, sol)

    def wear_volume(self, depth: np.ndarray) -> float:
        """Volume worn off every face, mm^3: depth times ring area, times the faces."""
        return self.faces * float(np.sum(np.where(self.has_area, self.area, 0.0) * depth))

    def volume_rate(self, lam: np.ndarray) -> float:
        """Wear volume per rad of sliding, mm^3/rad: k sum(lam r) / 1000 on every face."""
        return self.faces * self.k * float(np.sum(lam * self.r)) * _MM_TO_M

    def depth_rate(self, interfaces: list[InterfaceResult]) -> float:
        """Largest wear depth per rad of sliding, mm/rad."""
        return max(self.k * float(np.max(pressure_times_radius(i))) * _MM_TO_M for i in interfaces)

    def face_approach(self, interfaces: list[InterfaceResult], depth: np.ndarray) -> float:
        """Mean pressure over the stiffness against a linear gap change along each face, mm."""
        ramps = []
        for xy in self.solver.interface_nodes:
            s = np.hypot(xy[0] - xy[0, 0], xy[1] - xy[1, 0])
            ramps.append(_PROBE_MM * (s / max(s[-1], 1e-300) - 0.5))
        ramp = np.concatenate(ramps)
        sol = solve_lcp(self.solver.C, self.g_base + depth + ramp, self.solver.B, self.e)
        lam0 = np.concatenate([i.normal_force for i in interfaces])
        on = self.has_area & (lam0 > 0) & (sol.lam > 0)
        dp = (sol.lam - lam0)[on] / self.area[on]
        w = self.area[on]
        # the probe's rigid part (a uniform gap) moves no pressure: take the ramp about its mean
        shape = ramp[on] - np.sum(w * ramp[on]) / np.sum(w)
        stiffness = np.sqrt(np.sum(w * dp ** 2) / np.sum(w * shape ** 2))
        mean_p = np.sum(lam0[on]) / np.sum(w)
        return float(mean_p / stiffness)


def wear_in(solver: ContactSolver, wear_coefficient: float, *, step_cap: float = 0.05,
            steady_tolerance: float = 1e-3, max_wear_depth: float = np.inf, max_steps: int = 400,
            sliding_limit_rad: float | None = None, volume_limit_mm3: float | None = None,
            faces_per_interface: int = 1, gaps: list[np.ndarray] | None = None,
            load_scale: float = 1.0) -> WearPath:
    """Wear the faces from the solver's initial gaps.

    Steady state (worn in): :func:`uniform_wear_departure` of a state at or below
    ``steady_tolerance``.  Without a duty (``sliding_limit_rad``, relative rotation
    slipped) or a target (``volume_limit_mm3``) the run stops at the first such state
    (the new state included); with one it goes on to it (uniform wear from steady state
    on, in steps doubling each time).  It always stops at the wear depth
    ``max_wear_depth`` (mm, lining worn to its limit) or after ``max_steps``.
    ``faces_per_interface``: faces each modelled interface stands for (the volume counts
    them all).  ``gaps`` and ``load_scale``: the new interface's initial gaps and load
    level, as for :meth:`ContactSolver.solve`.
    """
    # small dense solves: threaded BLAS is slower here (docs/solver-notes.md), and limiting the
    # threads once costs a library scan, so once for the whole run
    with threadpool_limits(limits=1):
        stepper = ArchardStepper(solver, wear_coefficient, faces_per_interface, gaps, load_scale)
        return _wear_path(stepper, step_cap,
                          steady_tolerance, max_wear_depth, max_steps, sliding_limit_rad, volume_limit_mm3)


def _wear_path(stepper: ArchardStepper, step_cap, steady_tolerance, max_wear_depth, max_steps,
               sliding_limit_rad, volume_limit_mm3) -> WearPath:
    depth = np.zeros_like(stepper.r)
    lam, _, interfaces = stepper.solve(depth, 0.0)
    probe = stepper.face_approach(interfaces, depth)
    departure = uniform_wear_departure(interfaces)
    path = WearPath([WearState(0.0, 0.0, stepper.split(depth), interfaces, np.inf, probe, departure)],
                    steady_tolerance=float(steady_tolerance))
    go_on = sliding_limit_rad is not None or volume_limit_mm3 is not None
    if departure <= steady_tolerance:
        path.converged, path.steady_step = True, 0
        if not go_on:
            path.stop_reason = "steady"
            return path
    approach, measures, d_last, previous = probe, _measures(interfaces), np.inf, None
    for _ in range(max_steps):
        state = path.states[-1]
        d_sliding = _GROWTH * d_last if path.converged else \
            min(step_cap * approach / stepper.depth_rate(interfaces), _GROWTH * d_last)
        step = _Step(stepper, depth, previous, lam, d_last)
        d_sliding, limit = _land_on_limits(stepper, step, state, lam, d_sliding, sliding_limit_rad,
                                           volume_limit_mm3)
        new_lam, new_depth, new_itf = step(d_sliding)
        if np.max(new_depth) > max_wear_depth:
            new_lam, new_depth, new_itf, d_sliding = _land_on_depth(step, d_sliding, max_wear_depth)
            limit = "depth limit"
        change = max(p_r_change(a, b) for a, b in zip(interfaces, new_itf))
        step_depth = float(np.max(new_depth - depth))
        departure = uniform_wear_departure(new_itf)
        path.states.append(WearState(state.sliding_rad + d_sliding, stepper.wear_volume(new_depth),
                                     stepper.split(new_depth), new_itf, change, approach, departure))
        new_measures = _measures(new_itf)
        approach = _next_approach(probe, measures, new_measures, step_depth)
        measures, previous, d_last = new_measures, depth, d_sliding
        depth, lam, interfaces = new_depth, new_lam, new_itf
        if not path.converged and departure <= steady_tolerance:
            path.converged, path.steady_step = True, path.steps
            if not go_on:
                path.stop_reason = "steady"
                return path
        if limit:
            path.stop_reason = limit
            return path
    path.stop_reason = "step limit"
    return path


class _Step:
    """The step from the present state as a function of its length: BDF2 from the last
    two states, backward Euler for the first step and when a node that carried load opens
    (so an unloaded node never wears: its last increment is zero, nothing to extrapolate)."""

    def __init__(self, stepper: ArchardStepper, depth, previous, lam, d_last):
        self.stepper, self.depth, self.previous, self.d_last = stepper, depth, previous, d_last
        self.loaded = stepper.has_area & (lam > 0)

    def __call__(self, d_sliding: float):
        if self.previous is not None:
            w = d_sliding / self.d_last
            start = self.depth + w * w / (1.0 + 2.0 * w) * (self.depth - self.previous)
            out = self.stepper.solve(start, d_sliding, (1.0 + w) / (1.0 + 2.0 * w))
            if not np.any(self.loaded & (out[0] <= 0)):
                return out
        return self.stepper.solve(self.depth, d_sliding)


def _measures(interfaces: list[InterfaceResult]) -> tuple[float, float]:
    """The departures whose decay sets the step: the faces' own p r and the pack's."""
    return max(p_r_departure(i) for i in interfaces), uniform_wear_departure(interfaces)


def _next_approach(probe: float, before, after, step_depth: float) -> float:
    # a departure from uniform wear decays over a wear depth that is the approach of the
    # mode still active (a departure that grows: the face's own approach); the faster
    # decay sets it, never below the face's own (stiffest relevant) approach
    lengths = [step_depth * a / (b - a) if a < b else probe for b, a in zip(before, after)]
    return max(probe, min(lengths))


def _land_on_limits(stepper: ArchardStepper, step: _Step, state: WearState, lam, d_sliding,
                    sliding_limit, volume_limit):
    """Shorten the step so it ends on the duty or on the target volume."""
    limit = ""
    if sliding_limit is not None and state.sliding_rad + d_sliding >= sliding_limit:
        d_sliding, limit = sliding_limit - state.sliding_rad, "sliding"
    # the step's volume follows its end state, which may wear faster than the start
    if volume_limit is not None and \
            state.wear_volume_mm3 + _SAFETY * stepper.volume_rate(lam) * d_sliding >= volume_limit:
        for k in range(_LANDING_TRIES):
            worn = stepper.wear_volume(step(d_sliding)[1]) - state.wear_volume_mm3
            d_new = d_sliding * (volume_limit - state.wear_volume_mm3) / worn
            if k == 0 and d_new >= d_sliding:
                break                                   # the step ends short of the target
            done = abs(d_new - d_sliding) <= 1e-10 * d_sliding
            d_sliding, limit = d_new, "volume"
            if done:
                break
    return d_sliding, limit


def _land_on_depth(step: _Step, d_sliding, max_depth):
    """The step whose deepest wear is the wear limit (depth grows with the step)."""
    lo, hi = 0.0, d_sliding
    while float(np.max(step(hi)[1])) < max_depth:
        lo, hi = hi, 2.0 * hi
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lam, new_depth, itf = step(mid)
        worst = float(np.max(new_depth))
        if abs(worst - max_depth) <= 1e-6 * max_depth:
            break
        lo, hi = (mid, hi) if worst < max_depth else (lo, mid)
    return lam, new_depth, itf, mid
