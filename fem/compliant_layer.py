"""A compliant layer with a measured compression curve between two condensed bodies.

A friction lining or the cushion (segment) springs of a dry disc do not follow Hooke's law: suppliers give a
compression curve, pressure against deflection.  Here such a layer sits on a contact interface as a
foundation of independent springs, one per contact node (the Winkler foundation; the thin-layer limit of an
elastic layer, Johnson, Contact Mechanics, Cambridge 1985, §5.8): the node's force λ_i compresses its layer by
d_i = D(λ_i / A_i), D the deflection the curve gives at a pressure (A_i the node's ring area).  The bodies on
either side stay the condensed linear ones, so the contact problem becomes

    w = g + C λ + B δ + D(λ / A) ≥ 0,   λ ≥ 0,   λ · w = 0,   Bᵀ λ = −e

(fem/lcp.py's problem with the layer's compression added to the gap).  D increases with the pressure, so
this is the optimality condition of the convex problem

    min f(λ) = ½ λᵀ C λ + gᵀ λ + Σ A_i Ψ(λ_i / A_i)   over λ ≥ 0, Bᵀ λ = −e,    Ψ(p) = ∫₀ᵖ D(s) ds

and it is solved by Newton's method on the small problem (the Josephy–Newton method for complementarity
problems, Facchinei & Pang, Finite-Dimensional Variational Inequalities and Complementarity Problems, Springer
2003, vol. II): at λ_k the curve is replaced by its tangent,
the linear contact problem with the compliance C + diag(D'(p_k) / A) is solved exactly (fem/lcp.py), and the step
to it is damped (halved until f decreases: the Armijo rule, Nocedal & Wright, Numerical Optimization 2006,
§3.1).  A feasible λ stays feasible along the step (λ ≥ 0 and the balance are convex), so the damping never
leaves the problem.  The curve is piecewise linear, so once every node's segment of the curve stops
changing the tangent problem is the problem itself and the step is exact: the method ends in finitely many
steps (two to six on the demo and test cases).  It also ends where a tangent answer already meets the true
problem's conditions at fem/lcp.py's gap tolerance (a node that sits on a corner of the curve to round-off
would otherwise flip between the segments on either side).

A straight curve p = k d is the linear layer, C + diag(1 / (k A)) in one linear solve (the first step is the
answer).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .lcp import GAP_TOLERANCE, ContactError, LcpSolution, solve_lcp

MAX_STEPS = 60
# a step is halved at most this many times; the descent is guaranteed, so this is never reached but by round-off
MAX_HALVINGS = 40


# A layer pressed flat (a cushion past its travel: its segments lie on each other) is not rigid: it takes the rest
# of the load as the steel of its segments would.  Past its last point it goes on SOLID_STIFFENING times stiffer
# than its last segment (a modelling choice: ~10³ is the ratio of a spring segment's stiffness to the steel
# under it, order of magnitude, from memory), which keeps the contact problem well posed where the bodies
# are stiff too.
SOLID_STIFFENING = 1e3


@dataclass(frozen=True)
class CompressionCurve:
    """Pressure (MPa) against deflection (mm) of a layer, piecewise linear through (0, 0) and the points given,
    pressure strictly increasing; past the last point it goes on with the last segment's slope (the caller
    reports an operating point there), or, ``solid_past_last``, it is pressed flat there: SOLID_STIFFENING times
    stiffer (a cushion past its travel; one more point at 10³ times the last pressure carries that)."""

    deflection_mm: np.ndarray
    pressure_MPa: np.ndarray
    solid_past_last: bool = False

    def __post_init__(self):
        d = np.asarray(self.deflection_mm, float)
        p = np.asarray(self.pressure_MPa, float)
        if not (d.size and d[0] == 0.0 and p.size and p[0] == 0.0):     # (0, 0) is implied
            d, p = np.concatenate([[0.0], d]), np.concatenate([[0.0], p])
        if d.size < 2 or d.shape != p.shape or not (np.all(np.isfinite(d)) and np.all(np.isfinite(p))):
            raise ValueError("compression curve: as many finite deflections as pressures, at least one point")
        if np.any(np.diff(d) <= 0) or np.any(np.diff(p) <= 0):
            raise ValueError("compression curve: deflection and pressure strictly increasing from (0, 0)")
        if self.solid_past_last:
            compliance = (d[-1] - d[-2]) / (p[-1] - p[-2]) / SOLID_STIFFENING
            far = 1e3 * p[-1]
            d, p = np.append(d, d[-1] + compliance * (far - p[-1])), np.append(p, far)
        object.__setattr__(self, "deflection_mm", d)
        object.__setattr__(self, "pressure_MPa", p)

    @classmethod
    def straight(cls, stiffness_MPa_per_mm: float, up_to_MPa: float = 1.0) -> "CompressionCurve":
        """The linear layer p = k d."""
        return cls(np.array([up_to_MPa / stiffness_MPa_per_mm]), np.array([up_to_MPa]))

    @property
    def last_measured_pressure_MPa(self) -> float:
        """The last point given (before the flat part of a layer pressed flat)."""
        return float(self.pressure_MPa[-2 if self.solid_past_last else -1])

    @property
    def largest_stiffness_MPa_per_mm(self) -> float:
        """The steepest segment's dp/dd over the points given."""
        n = self.pressure_MPa.size - (1 if self.solid_past_last else 0)
        return float(np.max(np.diff(self.pressure_MPa[:n]) / np.diff(self.deflection_mm[:n])))

    def _segment_of_pressure(self, p):
        return np.clip(np.searchsorted(self.pressure_MPa, p, side="right") - 1, 0, self.pressure_MPa.size - 2)

    def _segment_of_deflection(self, d):
        return np.clip(np.searchsorted(self.deflection_mm, d, side="right") - 1, 0, self.deflection_mm.size - 2)

    def compliance(self, p) -> np.ndarray:
        """dD/dp (mm/MPa) on the segment a pressure lies on (the right-hand one at a corner)."""
        k = self._segment_of_pressure(np.asarray(p, float))
        return np.diff(self.deflection_mm)[k] / np.diff(self.pressure_MPa)[k]

    def deflection(self, p) -> np.ndarray:
        """D(p), mm, for p ≥ 0 (MPa)."""
        p = np.asarray(p, float)
        k = self._segment_of_pressure(p)
        return self.deflection_mm[k] + (p - self.pressure_MPa[k]) * self.compliance(p)

    def pressure(self, d) -> np.ndarray:
        """p(d), MPa, for d ≥ 0 (mm)."""
        d = np.asarray(d, float)
        k = self._segment_of_deflection(d)
        return self.pressure_MPa[k] + (d - self.deflection_mm[k]) * self.stiffness(d)

    def stiffness(self, d) -> np.ndarray:
        """dp/dd (MPa/mm), the tangent of the curve at a deflection (the right-hand one at a corner)."""
        k = self._segment_of_deflection(np.asarray(d, float))
        return np.diff(self.pressure_MPa)[k] / np.diff(self.deflection_mm)[k]

    def energy(self, p) -> np.ndarray:
        """Ψ(p) = ∫₀ᵖ D(s) ds (N/mm, per unit area): the complementary energy of the layer."""
        p = np.asarray(p, float)
        k = self._segment_of_pressure(p)
        pieces = 0.5 * (self.deflection_mm[1:] + self.deflection_mm[:-1]) * np.diff(self.pressure_MPa)
        before = np.concatenate([[0.0], np.cumsum(pieces)])[k]
        return before + 0.5 * (self.deflection_mm[k] + self.deflection(p)) * (p - self.pressure_MPa[k])

    def in_series(self, other: "CompressionCurve") -> "CompressionCurve":
        """Two layers one on the other carry one pressure and add their deflections (at every corner of either:
        a flat part is a segment of its own already)."""
        p = np.union1d(self.pressure_MPa, other.pressure_MPa)[1:]
        return CompressionCurve(self.deflection(p) + other.deflection(p), p)

    def scaled(self, deflection_factor: float) -> "CompressionCurve":
        """The same curve with every deflection times a factor (half a cushion on each face of a disc)."""
        return CompressionCurve(self.deflection_mm[1:] * deflection_factor, self.pressure_MPa[1:])


@dataclass(frozen=True)
class LayerSolution:
    solution: LcpSolution           # lam, delta; gap: what is left open outside the layer (0 where closed)
    deflection: np.ndarray          # compression of the layer at every node, mm (0 where open or no layer)
    steps: int                      # Newton steps (tangent contact problems solved)


class NodeLayers:
    """The layer of every contact node: one curve per group of nodes (an interface), None for no layer."""

    def __init__(self, curves: list, areas: list):
        if len(curves) != len(areas):
            raise ValueError("one curve (or None) per interface expected")
        self.groups = []
        start = 0
        for curve, area in zip(curves, areas):
            area = np.asarray(area, float)
            idx = np.arange(start, start + area.size)
            start += area.size
            if curve is None:
                continue
            # a node without ring area (a vertex on the axis) carries no force: it gets no layer
            has = area > 1e-12 * max(area.max(initial=0.0), 1e-300)
            self.groups.append((curve, idx[has], area[has]))
        self.size = start

    def compression(self, lam) -> np.ndarray:
        d = np.zeros(self.size)
        for curve, idx, area in self.groups:
            d[idx] = curve.deflection(np.maximum(lam[idx], 0.0) / area)
        return d

    def compliance(self, lam) -> np.ndarray:
        """dD/dλ per node (mm/N)."""
        c = np.zeros(self.size)
        for curve, idx, area in self.groups:
            c[idx] = curve.compliance(np.maximum(lam[idx], 0.0) / area) / area
        return c

    def segments(self, lam) -> np.ndarray:
        s = np.full(self.size, -1)
        for curve, idx, area in self.groups:
            s[idx] = curve._segment_of_pressure(np.maximum(lam[idx], 0.0) / area)
        return s

    def energy(self, lam) -> float:
        return float(sum(np.sum(area * curve.energy(np.maximum(lam[idx], 0.0) / area))
                         for curve, idx, area in self.groups))


def solve_layered_contact(C, g, B, e, layers: NodeLayers, start=None) -> LayerSolution:
    """The contact problem with a compliant layer (module docstring), by damped Newton steps of exact tangent
    contact problems; ``start``: closed flags to warm-start the first tangent problem from."""
    if layers.size != g.size:
        raise ValueError(f"layers: one per contact node ({g.size}) expected, got {layers.size}")

    def residual_ok(sol) -> bool:
        # the true problem's conditions at a tangent problem's answer, at fem/lcp.py's tolerances: gap ≈ 0 where
        # closed, ≥ 0 where open (the balance and λ ≥ 0 hold for every tangent answer)
        w = g + C @ sol.lam + B @ sol.delta + layers.compression(sol.lam)
        tol = GAP_TOLERANCE * max(np.abs(g).max(initial=0.0), np.abs(layers.compression(sol.lam)).max(initial=0.0),
                                  np.abs(C).max(initial=0.0) * np.abs(sol.lam).max(initial=0.0), 1e-300)
        closed = sol.lam > 0
        return bool(np.all(np.abs(w[closed]) <= tol) and np.all(w[~closed] >= -tol))

    def decrease(lam, step):
        # f(λ + Δ) − f(λ) written as differences, so that a small decrease is not lost to f's own size
        quadratic = float(g @ step + lam @ (C @ step) + 0.5 * step @ (C @ step))
        return quadratic + layers.energy(lam + step) - layers.energy(lam)

    lam = np.zeros(g.size)
    closed = start
    for step in range(1, MAX_STEPS + 1):
        c = layers.compliance(lam)
        # the tangent problem: D(λ/A) ≈ D_k + c (λ − λ_k) added to the gap
        shift = layers.compression(lam) - c * lam
        trial = solve_lcp(C + np.diag(c), g + shift, B, e, start=closed)
        if np.array_equal(layers.segments(trial.lam), layers.segments(lam)) or residual_ok(trial):
            lam = trial.lam
            break               # the tangent problem was the problem on every node's segment, or its answer is
        if step == 1:
            lam = trial.lam     # the first iterate is feasible; every later one is a damped step from it
        else:
            t, direction = 1.0, trial.lam - lam
            for _ in range(MAX_HALVINGS):
                if decrease(lam, t * direction) <= 0.0:
                    break
                t *= 0.5
            else:               # no descent left at round-off: λ is the answer if it meets the conditions
                raise ContactError("the compliant layer's Newton steps found no descent (a curve with corners "
                                   "closer than round-off)")
            lam = lam + t * direction
        closed = lam > 0
    else:
        raise ContactError(f"the compliant layer did not settle in {MAX_STEPS} Newton steps")
    # δ and the gap of the final state: the tangent problem at λ is exact there
    sol = _final_state(C, g, B, e, layers, lam, trial, step)
    return LayerSolution(sol, layers.compression(sol.lam), step)


def _final_state(C, g, B, e, layers, lam, trial, steps: int) -> LcpSolution:
    # its iterations are the Newton steps (each an exact contact solve): what the run reports as contact iterations
    d = layers.compression(lam)
    gap = g + C @ lam + B @ trial.delta + d
    return LcpSolution(lam, trial.delta, np.where(lam > 0, 0.0, gap), steps, "layer newton")
