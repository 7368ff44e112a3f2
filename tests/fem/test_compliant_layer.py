"""The compliant layer (fem/compliant_layer.py): a measured compression curve between condensed bodies.

Sources: springs in series add their compliances (common practice); the Winkler foundation as the thin-layer
limit of an elastic layer with ν = 0, p = (E / t) d (Johnson, Contact Mechanics, Cambridge 1985, §5.9); the
convex problem and its optimality conditions (Nocedal & Wright, Numerical Optimization 2006, §16.1).
"""
from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from clutchfe.fem import ContactSolver
from clutchfe.fem.compliant_layer import CompressionCurve, NodeLayers, solve_layered_contact
from clutchfe.fem.lcp import solve_lcp
from clutchfe.verification.tilted import LINING_E, LINING_T, R1, R2, W, lined_annulus

# a stiffening facing curve (invented, demo-like): soft at first, four times stiffer at 3 MPa
FACING = CompressionCurve(np.array([0.004, 0.010, 0.016, 0.020]), np.array([0.2, 0.8, 1.8, 3.0]))
AREA = math.pi * (R2 ** 2 - R1 ** 2)


def _rigid_annulus(gap_slope: float = 0.0):
    """The lined annulus of the verify suite with every body numerically rigid (the lining too), and an
    optional coned gap g0 = s (r − r1) (the layer supplies all the compliance)."""
    model = lined_annulus(2e8, 2e8, 0.0, 15, 2)
    model = replace(model, element_youngs_modulus=np.full_like(model.element_youngs_modulus, 2e8))
    if gap_slope:
        pair = replace(model.contacts[0], initial_gap_function=lambda r, z: gap_slope * (r - R1))
        model = replace(model, contacts=[pair])
    return model


# --- the curve ------------------------------------------------------------------------------------------


def test_curve_inverse_energy_and_series():
    p = np.linspace(0.0, 4.0, 81)
    assert np.max(np.abs(FACING.pressure(FACING.deflection(p)) - p)) <= 1e-12
    # Ψ' = D (the complementary energy's derivative is the deflection), central differences on each segment
    h = 1e-6
    mid = np.array([0.1, 0.5, 1.3, 2.4, 3.5])
    assert np.max(np.abs((FACING.energy(mid + h) - FACING.energy(mid - h)) / (2 * h) - FACING.deflection(mid))) <= 1e-8
    # two straight layers in series: 1/k = 1/k1 + 1/k2 (springs in series, common practice)
    both = CompressionCurve.straight(100.0).in_series(CompressionCurve.straight(300.0))
    assert abs(both.stiffness(0.01) - 75.0) <= 1e-9
    assert abs(FACING.stiffness(0.012) - 1.0 / 0.006) <= 1e-9


def test_curve_refuses_what_is_not_a_compression_curve():
    with pytest.raises(ValueError, match="strictly increasing"):
        CompressionCurve(np.array([0.01, 0.005]), np.array([1.0, 2.0]))
    with pytest.raises(ValueError, match="strictly increasing"):
        CompressionCurve(np.array([0.01, 0.02]), np.array([1.0, 1.0]))


# --- the small problem ------------------------------------------------------------------------------------


def test_straight_curve_is_the_linear_layer_in_one_step():
    # p = k d is the compliance C + diag(1 / (k A)): one linear contact problem
    model = _rigid_annulus(gap_slope=2e-4)
    solver = ContactSolver(model)
    area = solver.faces[0].area
    k = 120.0
    layers = NodeLayers([CompressionCurve.straight(k, up_to_MPa=10.0)], [area])
    sol = solve_layered_contact(solver.C, solver.g0 + solver.g_load, solver.B, solver.e, layers)
    has = area > 0
    C = solver.C + np.diag(np.where(has, 1.0 / (k * np.where(has, area, 1.0)), 0.0))
    ref = solve_lcp(C, solver.g0 + solver.g_load, solver.B, solver.e)
    assert sol.steps == 1
    assert np.max(np.abs(sol.solution.lam - ref.lam)) <= 1e-9 * np.max(ref.lam)


def test_nonlinear_layer_meets_the_contact_conditions():
    # a coned gap that opens part of the face on the stiffening curve: gap ≥ 0, λ ≥ 0, λ·gap = 0 with the layer's
    # compression in the gap, the balance of the free body (Nocedal & Wright 2006, §16.1)
    solver = ContactSolver(_rigid_annulus(gap_slope=1.5e-3))
    g = solver.g0 + solver.g_load
    layers = NodeLayers([FACING], [solver.faces[0].area])
    out = solve_layered_contact(solver.C, g, solver.B, solver.e, layers)
    lam, delta = out.solution.lam, out.solution.delta
    w = g + solver.C @ lam + solver.B @ delta + layers.compression(lam)
    scale = np.max(np.abs(g))
    closed = lam > 0
    assert 0.2 < closed.mean() < 0.95                       # partial contact: the test reaches the active set
    assert np.max(np.abs(w[closed])) <= 1e-9 * scale
    assert np.min(w[~closed]) >= -1e-9 * scale
    assert abs(solver.B.T @ lam + solver.e).max() <= 1e-9 * W
    assert out.steps >= 2                                   # the stiffening curve needs more than its tangent
    assert np.max(lam / np.where(solver.faces[0].area > 0, solver.faces[0].area, 1.0)) > 0.8   # past a corner


# --- through the contact solver -----------------------------------------------------------------------------


def test_uniform_stack_lands_on_the_curve_at_W_over_A():
    # rigid bodies, uniform load: every node at p = W / A and the layer at D(W / A) (the curve's own point)
    solver = ContactSolver(_rigid_annulus())
    fe = solver.solve(layers=[FACING])
    itf = fe.interfaces[0]
    p = W / AREA
    assert np.max(np.abs(itf.pressure / p - 1.0)) <= 1e-6
    assert np.max(np.abs(itf.layer_deflection / FACING.deflection(p) - 1.0)) <= 1e-6
    # the pressed ring moves by the layer's compression (its own strain is 1e-6 of it)
    assert abs(abs(fe.rigid_approach["top"]) / FACING.deflection(p) - 1.0) <= 1e-4


def test_tangent_stiffness_seen_by_a_small_extra_load_is_the_curve_slope():
    solver = ContactSolver(_rigid_annulus())
    base = solver.solve(layers=[FACING], fields=False).interfaces[0]
    more = solver.solve(load_scale=1.0 + 1e-4, layers=[FACING], fields=False).interfaces[0]
    dp = np.mean(more.pressure) - np.mean(base.pressure)
    dd = np.mean(more.layer_deflection) - np.mean(base.layer_deflection)
    slope = float(FACING.stiffness(np.mean(base.layer_deflection)))
    assert abs(dp / dd / slope - 1.0) <= 1e-6


def test_straight_layer_matches_the_thin_linear_lining():
    # the ν = 0 lining of E, t between rigid bodies is the Winkler layer k = E / t (Johnson 1985, §5.9); with a
    # coned gap the pressure is k (δ − s (r − r1)) in both, and the layer needs no meshed lining
    s = 1e-4
    lined = lined_annulus(2e8, 2e8, 0.0, 15, 2)
    lined = replace(lined, contacts=[replace(lined.contacts[0], initial_gap_function=lambda r, z: s * (r - R1))])
    continuum = ContactSolver(lined).solve(fields=False).interfaces[0]
    layer = ContactSolver(_rigid_annulus(gap_slope=s)).solve(
        layers=[CompressionCurve.straight(LINING_E / LINING_T, 10.0)], fields=False).interfaces[0]
    # measured 1e-5 of the peak (the continuum's shear between nodes); 1e-4 leaves room for round-off
    assert np.max(np.abs(layer.pressure - continuum.pressure)) <= 1e-4 * continuum.pressure.max()
    r_eff = [float(np.sum(i.normal_force * i.r) / np.sum(i.normal_force)) for i in (layer, continuum)]
    assert abs(r_eff[0] / r_eff[1] - 1.0) <= 1e-6
    # and both are the closed form's straight line, dp/dr = −k s: to within the nodal pressure λ / A of a sloped
    # pressure on ring elements (8e-4 measured with 1 mm elements; 2e-3)
    slope = np.polyfit(layer.r, layer.pressure, 1)[0]
    assert abs(slope / (-LINING_E / LINING_T * s) - 1.0) <= 2e-3
