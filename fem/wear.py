"""Archard wear-in of the friction faces on a condensed contact solver.

Archard's law (Archard, J. Appl. Phys. 24, 1953): wear depth rate = k p v, with the
sliding speed v = omega r.  The path variable is the relative rotation Theta (rad) the
faces have slipped through, so the sliding distance at radius r is r Theta and

    dh = k p r dTheta / 1000          (h mm, k mm^3/(N m), p MPa, r mm; /1000: mm -> m)

The wear depth adds to the initial normal gap of the face and the contact is re-solved
on the compliance condensed once by :class:`ContactSolver` (no new factorisation).

Each step is taken at its end pressure (backward Euler): with dh = D lam, D_i =
k r_i dTheta / (1000 A_i), the worn gap g + h_n + D lam is the contact problem with the
compliance C + D.  So one step is one complementarity solve, and complementarity holds
with the wear: a node that opens in the step neither carries load nor wears.  Why not
forward Euler: the stiffest nodal modes of the condensed contact are 45-80 x stiffer
than the face's tilt mode on the demo clutches, so forward steps at a 5 % cap exceed
the stability limit (largest eigenvalue x step = 2.6 on the plate demo; forward
Euler needs < 2, Hairer & Wanner, Solving ODEs II, §IV.2).

Step size: the largest wear increment of a step is capped at ``step_cap`` times the
current elastic approach, the approach being the wear depth over which the present
departure of p r from uniform would wear off at the rate of the last step (on a
Winkler lining p/k, its compression).  It starts from the stiffness of the face
against a linear gap change (a probe solve) and grows at most 2 x per step.
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
_LANDING_TRIES = 6
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
    change_per_approach: float              # step_change per elastic approach worn: the steady-state measure


@dataclass
class WearPath:
    states: list[WearState] = field(default_factory=list)
    stop_reason: str = ""                   # steady | sliding | volume | depth limit | step limit
    converged: bool = False                 # steady state reached
    steady_step: int | None = None          # index of the first steady state

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

    def solve(self, depth: np.ndarray, d_sliding: float):
        """Contact at the end of a step of ``d_sliding`` rad from wear ``depth``: (lam, new depth, results)."""
        wear_compliance = np.where(self.has_area, self.k * self.r * d_sliding * _MM_TO_M /
                                   np.where(self.has_area, self.area, 1.0), 0.0)
        C = self.solver.C + np.diag(wear_compliance)
        sol = solve_lcp(C, self.g_base + depth, self.solver.B, self.e)
        return sol.lam, depth + wear_compliance * sol.lam, _interfaces(self.solver.faces, sol)

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

    Steady state: the largest relative change of p r over the contact in a step, per
    elastic approach worn in it, below ``steady_tolerance``.  Without a duty
    (``sliding_limit_rad``, relative rotation slipped) or a target (``volume_limit_mm3``)
    the run stops there; with one it goes on to it (uniform wear from steady state on,
    in steps doubling each time: the steady path does not depend on the step).  It
    always stops at the wear depth ``max_wear_depth`` (mm, lining worn to its limit)
    or after ``max_steps``.  ``faces_per_interface``: faces each modelled interface
    stands for (the volume counts them all).  ``gaps`` and ``load_scale``: the new
    interface's initial gaps and load level, as for :meth:`ContactSolver.solve`.
    """
    # small dense solves: threaded BLAS is slower here (design.md §6), and limiting the
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
    path = WearPath([WearState(0.0, 0.0, stepper.split(depth), interfaces, np.inf, probe, np.inf)])
    approach, departure, d_last = probe, _departure(interfaces), np.inf
    go_on = sliding_limit_rad is not None or volume_limit_mm3 is not None
    for _ in range(max_steps):
        state = path.states[-1]
        d_sliding = _GROWTH * d_last if path.converged else \
            min(step_cap * approach / stepper.depth_rate(interfaces), _GROWTH * d_last)
        d_sliding, limit = _land_on_limits(stepper, state, depth, lam, d_sliding, sliding_limit_rad,
                                           volume_limit_mm3)
        new_lam, new_depth, new_itf = stepper.solve(depth, d_sliding)
        if np.max(new_depth) > max_wear_depth:
            new_lam, new_depth, new_itf, d_sliding = _land_on_depth(stepper, depth, d_sliding, max_wear_depth)
            limit = "depth limit"
        change = max(p_r_change(a, b) for a, b in zip(interfaces, new_itf))
        step_depth = float(np.max(new_depth - depth))
        # per approach worn, so the measure does not shrink just because the steps do
        steadiness = change * approach / step_depth if step_depth > 0 else np.inf
        volume = state.wear_volume_mm3 + stepper.volume_rate(new_lam) * d_sliding
        path.states.append(WearState(state.sliding_rad + d_sliding, volume, stepper.split(new_depth),
                                     new_itf, change, approach, steadiness))
        approach = _next_approach(probe, departure, _departure(new_itf), step_depth)
        departure, depth, lam, interfaces, d_last = _departure(new_itf), new_depth, new_lam, new_itf, d_sliding
        if not path.converged and steadiness < steady_tolerance:
            path.converged, path.steady_step = True, path.steps
            if not go_on:
                path.stop_reason = "steady"
                return path
        if limit:
            path.stop_reason = limit
            return path
    path.stop_reason = "step limit"
    return path


def _departure(interfaces: list[InterfaceResult]) -> float:
    return max(p_r_departure(i) for i in interfaces)


def _next_approach(probe: float, before: float, after: float, step_depth: float) -> float:
    # the departure from uniform wear decays over a wear depth that is the approach of the
    # mode still active; never below the face's own (stiffest relevant) approach
    if after < before:
        return max(probe, step_depth * after / (before - after))
    return probe


def _land_on_limits(stepper: ArchardStepper, state: WearState, depth, lam, d_sliding,
                    sliding_limit, volume_limit):
    """Shorten the step so it ends on the duty or on the target volume."""
    limit = ""
    if sliding_limit is not None and state.sliding_rad + d_sliding >= sliding_limit:
        d_sliding, limit = sliding_limit - state.sliding_rad, "sliding"
    # a step books the volume rate of its end state, which may differ from the start's
    if volume_limit is not None and \
            state.wear_volume_mm3 + _SAFETY * stepper.volume_rate(lam) * d_sliding >= volume_limit:
        for k in range(_LANDING_TRIES):
            rate = stepper.volume_rate(stepper.solve(depth, d_sliding)[0])
            d_new = (volume_limit - state.wear_volume_mm3) / rate
            if k == 0 and d_new >= d_sliding:
                break                                   # the step ends short of the target
            done = abs(d_new - d_sliding) <= 1e-10 * d_sliding
            d_sliding, limit = d_new, "volume"
            if done:
                break
    return d_sliding, limit


def _land_on_depth(stepper: ArchardStepper, depth, d_sliding, max_depth):
    """The step whose deepest wear is the wear limit (depth grows with the step)."""
    lo, hi = 0.0, d_sliding
    while float(np.max(stepper.solve(depth, hi)[1])) < max_depth:
        lo, hi = hi, 2.0 * hi
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lam, new_depth, itf = stepper.solve(depth, mid)
        worst = float(np.max(new_depth))
        if abs(worst - max_depth) <= 1e-6 * max_depth:
            break
        lo, hi = (mid, hi) if worst < max_depth else (lo, mid)
    return lam, new_depth, itf, mid
