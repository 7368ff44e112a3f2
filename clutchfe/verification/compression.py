"""The compression-curve rows: the compliant layer (fem/compliant_layer.py) on the verify suite's lined annulus
(clutchfe.verification.tilted: r1 = 60, r2 = 75 mm, lining 0.5 mm of E = 10 MPa, W = 2000 N).

Which row catches what:

* a straight curve p = (E / t) d against the meshed ν = 0 lining of E and t (the Winkler foundation, the thin
  layer's limit) with a coned gap, so the pressure varies: the layer's size (area, stiffness) and its place in
  the gap;
* a uniform stack (every body numerically rigid) on a stiffening curve lands on the curve's own point for W / A:
  the Newton steps' answer on the nonlinear curve, pressure and deflection;
* a small extra load sees the curve's slope as the tangent stiffness: the linearisation.
"""
from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from ..fem import CompressionCurve, ContactSolver
from .checks import Check, relative
from .tilted import LINING_E, LINING_T, R1, R2, W, lined_annulus

WINKLER_SOURCE = "Johnson 1985, §5.8 (elastic foundation): a thin ν = 0 layer is p = (E / t) d point by point"
POINT_SOURCE = ("Johnson 1985, §5.8 (elastic foundation) on rigid bodies: uniform p = W / A, the curve's "
                "deflection D(W / A)")
SLOPE_SOURCE = "Johnson 1985, §5.8 (elastic foundation): dp = (dp/dd) dd on the curve's segment"
# a stiffening facing curve (invented): soft at first, about four times stiffer at 3 MPa
FACING = CompressionCurve(np.array([0.004, 0.010, 0.016, 0.020]), np.array([0.2, 0.8, 1.8, 3.0]))
AREA = math.pi * (R2 ** 2 - R1 ** 2)
GAP_SLOPE = 8e-4            # coned gap s (r − r1): 12 µm across the face, 0.8 of the mean compression


def rigid_annulus(gap_slope: float = 0.0):
    """The lined annulus with every body numerically rigid, its lining too (the layer supplies all the
    compliance), and an optional coned gap g0 = s (r − r1)."""
    model = lined_annulus(2e8, 2e8, 0.0, 15, 2)
    model = replace(model, element_youngs_modulus=np.full_like(model.element_youngs_modulus, 2e8))
    return coned(model, gap_slope) if gap_slope else model


def coned(model, gap_slope: float):
    return replace(model, contacts=[replace(model.contacts[0], initial_gap_function=lambda r, z: gap_slope * (r - R1))])


def _r_eff(itf) -> float:
    return float(np.sum(itf.normal_force * itf.r) / np.sum(itf.normal_force))


def straight_curve_is_the_linear_lining(stiffness_factor: float = 1.0) -> list[Check]:
    """A straight curve of the lining's E / t (× ``stiffness_factor``, 1 but for the test that the row can fail)
    against the meshed linear lining."""
    continuum = ContactSolver(coned(lined_annulus(2e8, 2e8, 0.0, 15, 2), GAP_SLOPE)).solve(fields=False).interfaces[0]
    straight = CompressionCurve.straight(stiffness_factor * LINING_E / LINING_T, 10.0)
    layer = ContactSolver(rigid_annulus(GAP_SLOPE)).solve(layers=[straight], fields=False).interfaces[0]
    name = "compression curve: a straight curve is the linear ν = 0 lining (coned gap)"
    # measured 6e-5 at the bore, 1e-9 in R_eff (the continuum's shear between the nodes); 1e-3, the mesh band. A
    # stiffness 2 % off moves the bore pressure by 0.6 %: caught
    return [relative(name, "effective radius [mm]", _r_eff(layer), _r_eff(continuum), 1e-3, WINKLER_SOURCE),
            relative(name, "pressure at the bore [MPa]", float(layer.pressure[np.argmin(layer.r)]),
                     float(continuum.pressure[np.argmin(continuum.r)]), 1e-3, WINKLER_SOURCE),
            relative(name, "pressure at the rim [MPa]", float(layer.pressure[np.argmax(layer.r)]),
                     float(continuum.pressure[np.argmax(continuum.r)]), 1e-3, WINKLER_SOURCE)]


def uniform_stack_on_the_curve(curve: CompressionCurve = FACING) -> list[Check]:
    """Rigid bodies under a uniform load on a stiffening curve: p = W / A at every node, and the pressed ring moves
    by D(W / A) (its approach, from the contact solve's balance: not the layer's own report)."""
    fe = ContactSolver(rigid_annulus()).solve(layers=[curve], fields=False)
    itf = fe.interfaces[0]
    p = W / AREA
    name = "compression curve: a uniform stack lands on the curve's point for W / A"
    worst_p = itf.pressure[np.argmax(np.abs(itf.pressure - p))]
    # the rigid bodies' own strain is ~2e-6 of the layer's compression (5 mm of 2e8 MPa against the curve): 1e-5
    return [relative(name, "pressure farthest from W / A [MPa]", float(worst_p), p, 1e-6, POINT_SOURCE),
            relative(name, "approach of the pressed ring [mm]", abs(fe.rigid_approach["top"]),
                     float(curve.deflection(p)), 1e-5, POINT_SOURCE)]


def tangent_stiffness_is_the_slope(step: float = 1e-4, curve: CompressionCurve = FACING) -> list[Check]:
    """A load 1e-4 larger moves the pressure and the pressed ring along the curve's segment: Δp over the ring's
    extra approach is its slope."""
    solver = ContactSolver(rigid_annulus())
    base = solver.solve(layers=[curve], fields=False)
    more = solver.solve(load_scale=1.0 + step, layers=[curve], fields=False)
    dp = float(np.mean(more.interfaces[0].pressure) - np.mean(base.interfaces[0].pressure))
    dd = abs(more.rigid_approach["top"]) - abs(base.rigid_approach["top"])
    slope = float(curve.stiffness(abs(base.rigid_approach["top"])))
    name = "compression curve: the tangent stiffness under a small extra load is the curve's slope"
    # the bodies' strain as above: 1e-5
    return [relative(name, "Δp / Δ(approach) [MPa/mm]", dp / dd, slope, 1e-5, SLOPE_SOURCE)]
