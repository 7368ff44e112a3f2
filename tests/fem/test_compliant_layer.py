"""The compliant layer (fem/compliant_layer.py): a measured compression curve between condensed bodies.

Sources: springs in series add their compliances (common practice); the Winkler foundation as the thin-layer
limit of an elastic layer with ν = 0, p = (E / t) d (Johnson, Contact Mechanics, Cambridge 1985, §5.8); the
convex problem and its optimality conditions (Nocedal & Wright, Numerical Optimization 2006, §16.1).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from clutchfe.fem import ContactSolver, compliant_layer
from clutchfe.fem.compliant_layer import SOLID_STIFFENING, CompressionCurve, NodeLayers, solve_layered_contact
from clutchfe.fem.lcp import solve_lcp
from clutchfe.verification.compression import (AREA, FACING, rigid_annulus, straight_curve_is_the_linear_lining,
                                               tangent_stiffness_is_the_slope, uniform_stack_on_the_curve)
from clutchfe.verification.tilted import W


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
    model = rigid_annulus(gap_slope=2e-4)
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
    solver = ContactSolver(rigid_annulus(gap_slope=1.5e-3))
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
    assert out.solution.iterations == out.steps             # reported as the solve's contact iterations
    assert np.max(lam / np.where(solver.faces[0].area > 0, solver.faces[0].area, 1.0)) > 0.8   # past a corner


# --- the verify rows (clutchfe.verification.compression) ---------------------------------------------------------


def test_verification_rows_of_the_layer_pass():
    rows = straight_curve_is_the_linear_lining() + uniform_stack_on_the_curve() + tangent_stiffness_is_the_slope()
    assert len(rows) == 6 and all(r.passed for r in rows), [r for r in rows if not r.passed]


def test_straight_curve_row_catches_a_stiffness_two_percent_off():
    rows = straight_curve_is_the_linear_lining(stiffness_factor=1.02)
    assert not all(r.passed for r in rows)


def test_uniform_stack_through_the_contact_solver_reports_the_layer():
    # the solver's results carry the layer: pressure W / A, deflection D(W / A), the ring's approach by it
    solver = ContactSolver(rigid_annulus())
    fe = solver.solve(layers=[FACING])
    itf = fe.interfaces[0]
    p = W / AREA
    assert np.max(np.abs(itf.layer_deflection / FACING.deflection(p) - 1.0)) <= 1e-6
    # the pressed ring moves by the layer's compression (its own strain is 1e-6 of it)
    assert abs(abs(fe.rigid_approach["top"]) / FACING.deflection(p) - 1.0) <= 1e-4
    assert np.all(solver.solve(fields=False).interfaces[0].layer_deflection == 0.0)    # no layer, no deflection


def test_cushion_pressed_flat_is_stiff_past_its_last_point():
    # a curve pressed flat goes on SOLID_STIFFENING times stiffer than its last segment; in series with a lining
    # the flat cushion adds almost nothing more (springs in series, common practice)
    cushion = CompressionCurve(np.array([0.1, 0.2]), np.array([0.1, 0.3]), solid_past_last=True)
    flat = (0.1 / 0.2) / SOLID_STIFFENING
    assert abs(cushion.compliance(0.5) - flat) <= 1e-15 and abs(cushion.deflection(0.5) - (0.2 + 0.2 * flat)) <= 1e-15
    assert cushion.last_measured_pressure_MPa == 0.3 and math.isfinite(cushion.stiffness(0.5))
    both = FACING.in_series(cushion)
    assert abs(both.compliance(1.0) - FACING.compliance(1.0) - flat) <= 1e-12
    assert abs(both.deflection(1.0) - (FACING.deflection(1.0) + cushion.deflection(1.0))) <= 1e-12
    # through the solver: a rigid stack pressed past the cushion's flat point lands on the two curves' sum
    itf = ContactSolver(rigid_annulus()).solve(layers=[both], fields=False).interfaces[0]
    p = W / AREA
    assert abs(np.mean(itf.layer_deflection) / (float(FACING.deflection(p)) + float(cushion.deflection(p))) - 1) <= 1e-6


@pytest.mark.parametrize("factor", [1.0 - 1e-13, 1.0, 1.0 + 1e-13])
def test_a_cushion_flat_right_at_the_load_settles(factor):
    # rigid bodies with a cushion whose flat point is W / A to round-off: every node sits on the corner; the
    # Newton steps must still end (they stop where a tangent answer meets the true conditions)
    cushion = CompressionCurve(np.array([0.004, 0.010]), np.array([0.2, factor * W / AREA]), solid_past_last=True)
    itf = ContactSolver(rigid_annulus()).solve(layers=[cushion], fields=False).interfaces[0]
    assert abs(np.mean(itf.pressure) / (W / AREA) - 1.0) <= 1e-6
    assert abs(np.mean(itf.layer_deflection) / 0.010 - 1.0) <= 1e-3


def test_point_and_slope_rows_catch_a_layer_two_percent_soft(monkeypatch):
    # the rows read the pressed ring's approach (the solve's balance), not the layer's own report: a layer whose
    # compression is 2 % more than its curve's fails both (the pressure row passes: balance alone fixes it)
    true = compliant_layer.NodeLayers.compression
    monkeypatch.setattr(compliant_layer.NodeLayers, "compression", lambda self, lam: 1.02 * true(self, lam))
    monkeypatch.setattr(compliant_layer.NodeLayers, "compliance",
                        lambda self, lam, f=compliant_layer.NodeLayers.compliance: 1.02 * f(self, lam))
    point = uniform_stack_on_the_curve()
    assert point[0].passed and not point[1].passed
    assert not all(r.passed for r in tangent_stiffness_is_the_slope())
