"""Thermal strain α ΔT as a load on the axisymmetric elasticity (fem/thermal_strain.py), no contact.

Steel: E = 210 GPa, ν = 0.3, α = 12e-6 /K; rectangular (r, z) blocks of the verify suite's builder,
P2 unless said.  docs/thermal.md lists the measured errors.
"""
import numpy as np
import pytest

from clutchfe.fem import FaceLoad, SpringSupport, linear_solve, vertex_stress
from clutchfe.fem.assembly import assemble, axial_dofs_of_body
from clutchfe.fem.thermal_strain import (STEEL_EXPANSION, linear_solve_with_temperature,
                                         quadrature_thermal_stress, rise_at_quadrature, thermal_load,
                                         thermal_load_matrix, vertex_thermal_stress)

from clutchfe.verification.thermal import PLATE_A, PLATE_B, PLATE_H, plate_coning
from tests.helpers.models import Section

E, NU, ALPHA = 210000.0, 0.3, STEEL_EXPANSION
K, RC = 50.0, 3.611                     # steel, mW/(mm·K) and mJ/(mm³·K) (tests/fem/test_heat.py)


def largest_stress(sig):
    return max(np.max(np.abs(sig[k])) for k in ("rr", "zz", "tt", "rz"))


@pytest.mark.parametrize("order", [2, 1])
@pytest.mark.parametrize("bore", [20.0, 0.0])
def test_free_body_under_uniform_rise(order, bore):
    """(f) A free body heated uniformly by ΔT expands freely, u_r = α ΔT r, u_z = α ΔT z (+ the rigid
    axial motion), without stress (Timoshenko & Goodier, Theory of Elasticity, 3rd ed. 1970, ch. 13:
    a uniform temperature in an unconstrained body produces no stress).  The field is linear, in both
    spaces: met to round-off (measured 1.6e-12 relative, stress 3e-12 of E α ΔT), also for a
    cylinder on the axis (bore 0)."""
    s = Section().add_block("ring", np.linspace(bore, bore + 20.0, 9), np.linspace(0.0, 5.0, 5))
    model = s.model([E], [NU], [True], element_order=order)
    dT = 50.0
    rise = np.full(s.points.shape[1], dT)
    system, u = linear_solve_with_temperature(model, rise, [ALPHA])
    ur, uz = u[system.basis.nodal_dofs]
    r, z = system.mesh.p
    scale = ALPHA * dT * 40.0
    assert np.max(np.abs(ur - ALPHA * dT * r)) < 1e-10 * scale
    rigid = np.mean(uz - ALPHA * dT * z)
    assert np.max(np.abs(uz - ALPHA * dT * z - rigid)) < 1e-10 * scale
    assert largest_stress(vertex_thermal_stress(system, u, rise, [ALPHA])) < 1e-10 * E * ALPHA * dT
    # without the correction the same field reads the full C ε: E α ΔT / (1 − 2ν) on rr, zz, tt
    assert np.allclose(vertex_stress(system, u)["tt"], E * ALPHA * dT / (1 - 2 * NU), rtol=1e-9)


def test_fully_constrained_body_is_hydrostatic():
    """A body held on every face cannot expand: u = 0 and σ_r = σ_z = σ_θ = −E α ΔT / (1 − 2ν),
    τ_rz = 0 (Timoshenko & Goodier 1970, ch. 13, the stress that prevents the free expansion).
    The load is zero at every interior node (its divergence vanishes): to round-off."""
    s = Section().add_block("blk", np.linspace(20.0, 40.0, 5), np.linspace(0.0, 10.0, 5))
    held = [SpringSupport(f) for f in ("blk_bottom", "blk_top", "blk_inner", "blk_outer")]
    model = s.model([E], [NU], [False], supports=held)
    dT = 100.0
    system, u = linear_solve_with_temperature(model, lambda r, z: dT + 0.0 * r, [ALPHA])
    assert np.max(np.abs(u)) < 1e-15
    sig = vertex_thermal_stress(system, u, lambda r, z: dT + 0.0 * r, [ALPHA])
    exact = -E * ALPHA * dT / (1 - 2 * NU)
    for key in ("rr", "zz", "tt"):
        assert np.allclose(sig[key], exact, rtol=1e-12), key
    assert np.max(np.abs(sig["rz"])) < 1e-12 * abs(exact)
    assert np.allclose(sig["von_mises"], 0.0, atol=1e-10 * abs(exact))


# thin annular plate: bore 20 mm, rim 100 mm, 2 mm thick (h / b = 0.02), mid-plane at z = 0; the model is
# the one of the verify suite's coning row (clutchfe/verification/thermal.py), faces held 20 and 20 + ΔT °C


def coning(order=2, cells=(40, 2), dT=50.0):
    """(curvature from the mid-plane u_z, axial offset of the rim against the bore, largest stress)."""
    return plate_coning(order, cells, rise_difference=dT)


def test_thermal_coning_of_a_free_plate():
    """(g) A free plate whose temperature varies linearly through its thickness h by ΔT bends into a
    sphere of curvature α ΔT / h, without stress (Timoshenko & Goodier 1970, ch. 13: a temperature
    linear in the coordinates produces no stress in a free body; the curvature of the plate from
    ε_r = α ΔT z / h; Timoshenko & Woinowsky-Krieger, Theory of Plates and Shells, 1959, §14, from
    memory).  The exact displacement u_r = α ΔT r z / h, u_z = α ΔT (z² − r²) / (2h) is quadratic,
    in the P2 space: met to round-off (measured: curvature 5.5e-11, rim offset 4.7e-11, stress
    4e-10 of E α ΔT).  The hot face turns convex: the rim moves away from it by α ΔT (b² − a²)/(2h)
    — the thermal coning of a clutch plate (0.288 mm here for 10 K).  Tolerance 1e-6."""
    dT = 10.0
    curvature, rim, stress = coning(dT=dT)
    exact = ALPHA * dT / PLATE_H
    assert curvature == pytest.approx(exact, rel=1e-6)
    assert rim == pytest.approx(-exact * (PLATE_B**2 - PLATE_A**2) / 2, rel=1e-6)
    assert rim == pytest.approx(-0.288, rel=1e-9)
    assert stress < 1e-6 * E * ALPHA * dT


def test_p1_locks_in_thermal_bending():
    # linear triangles cannot bend (shear locking): 14 % stiff on the 40 × 2 mesh, 1.1 % on
    # 160 × 8 (measured; second order) — why the elastic stage keeps P2
    exact = ALPHA * 50.0 / PLATE_H
    coarse, _, _ = coning(order=1)
    fine, _, _ = coning(order=1, cells=(160, 8))
    assert coarse / exact - 1 > 0.1
    assert fine == pytest.approx(exact, rel=2e-2)


def test_thin_disc_with_a_parabolic_temperature():
    """A thin solid disc, free, with ΔT = T0 r² / b² (Timoshenko & Goodier 1970, ch. 13, thin
    circular disc with a temperature symmetric about its centre: σ_r = α E (1/b² ∫₀ᵇ T r dr −
    1/r² ∫₀ʳ T r dr), σ_θ = α E (−T + 1/b² ∫₀ᵇ T r dr + 1/r² ∫₀ʳ T r dr)), here σ_r = α E T0/4 (1 − r²/b²),
    σ_θ = α E T0/4 (1 − 3 r²/b²): a load with stress.  Plane stress, so the disc is thin (2 mm on a
    radius of 100 mm, 100 × 2 cells).  Measured 2.4e-4 (σ_r) and 2.2e-4 (σ_θ) of α E T0 / 2, σ_z
    1e-4; the rise as vertex values instead of T(r, z) differs by 9e-5.  Tolerance 1e-3."""
    b, t0 = 100.0, 100.0
    s = Section().add_block("disc", np.linspace(0.0, b, 101), np.linspace(-1.0, 1.0, 3))
    model = s.model([E], [NU], [True])

    def rise(r, z):
        return t0 * r**2 / b**2

    system, u = linear_solve_with_temperature(model, rise, [ALPHA])
    sig = vertex_thermal_stress(system, u, rise, [ALPHA])
    r = system.mesh.p[0]
    scale = ALPHA * E * t0 / 2
    assert np.max(np.abs(sig["rr"] - ALPHA * E * t0 / 4 * (1 - r**2 / b**2))) < 1e-3 * scale
    assert np.max(np.abs(sig["tt"] - ALPHA * E * t0 / 4 * (1 - 3 * r**2 / b**2))) < 1e-3 * scale
    assert np.max(np.abs(sig["zz"])) < 1e-3 * scale
    at_vertices = vertex_thermal_stress(system, u, rise(*system.mesh.p), [ALPHA])
    assert np.max(np.abs(at_vertices["tt"] - sig["tt"])) < 1e-3 * scale
    # the quadrature stress the projection comes from is the same field
    q = quadrature_thermal_stress(system, u, rise, [ALPHA])
    rq = np.asarray(system.basis.global_coordinates())[0]
    assert np.max(np.abs(q[2] - ALPHA * E * t0 / 4 * (1 - 3 * rq**2 / b**2))) < 1e-3 * scale


def test_load_is_self_equilibrated_and_linear():
    # no axial resultant on any body (a rigid translation has no strain), so the free bodies'
    # force balance is unchanged; the load is linear in ΔT and α per body
    s = Section().add_block("a", np.linspace(20.0, 40.0, 6), np.linspace(0.0, 4.0, 3))
    s.add_block("b", np.linspace(50.0, 60.0, 4), np.linspace(0.0, 4.0, 3))
    model = s.model([E, E / 3], [NU, 0.25], [True, True])
    system = assemble(model)
    rise = 30.0 + 20.0 * s.points[0] / 60.0 + 5.0 * s.points[1]
    f = thermal_load(system, rise, [ALPHA, 2 * ALPHA])
    for j in range(2):
        axial = f[axial_dofs_of_body(system, j)]
        assert abs(axial.sum()) < 1e-12 * np.abs(axial).sum()
    assert np.array_equal(thermal_load(system, 2 * rise, [ALPHA, 2 * ALPHA]), 2 * f)
    only_a = thermal_load(system, rise, [ALPHA, 0.0])
    assert np.all(only_a[system.dof_body == 1] == 0.0)
    # per-triangle α (a lining region) gives the same as per body when it is the body's value
    per_triangle = np.where(np.asarray(model.element_body) == 0, ALPHA, 2 * ALPHA)
    assert np.array_equal(thermal_load(system, rise, per_triangle), f)
    # the operator form: B @ rise is the same load, for P1 and P2 temperature fields
    B = thermal_load_matrix(system, [ALPHA, 2 * ALPHA])
    assert B.shape == (system.basis.N, s.points.shape[1])
    assert np.max(np.abs(B @ rise - f)) < 1e-13 * np.abs(f).max()
    B2 = thermal_load_matrix(system, [ALPHA, 2 * ALPHA], order=2)
    rise2 = np.random.default_rng(3).normal(size=B2.shape[1])
    f2 = thermal_load(system, rise2, [ALPHA, 2 * ALPHA])
    assert np.max(np.abs(B2 @ rise2 - f2)) < 1e-13 * np.abs(f2).max()


def test_zero_rise_gives_exactly_the_cold_solve():
    # ΔT = 0: an exactly zero load, and a loaded model solves to linear_solve's u to the last bit
    s = Section().add_block("col", np.linspace(0.0, 5.0, 6), np.linspace(0.0, 4.0, 5))
    model = s.model([E], [NU], [False], supports=[SpringSupport("col_bottom")],
                    loads=[FaceLoad("col_top", -3000.0)])
    system = assemble(model)
    zero = np.zeros(s.points.shape[1])
    assert np.all(thermal_load(system, zero, [ALPHA]) == 0.0)
    cold, _ = linear_solve(model)
    _, u = linear_solve_with_temperature(model, zero, [ALPHA])
    assert np.array_equal(u, cold)
    assert all(np.array_equal(a, b) for a, b in zip(vertex_thermal_stress(system, u, zero, [ALPHA]).values(),
                                                    vertex_stress(system, u).values()))


def test_input_checks():
    s = Section().add_block("col", np.linspace(0.0, 5.0, 3), np.linspace(0.0, 4.0, 3))
    system = assemble(s.model([E], [NU], [False], supports=[SpringSupport("col_bottom")]))
    with pytest.raises(ValueError, match="per vertex"):
        rise_at_quadrature(system, np.zeros(7))
    with pytest.raises(ValueError, match="finite"):
        thermal_load(system, np.full(s.points.shape[1], np.nan), [ALPHA])
    with pytest.raises(ValueError, match="one value per body"):
        thermal_load(system, np.zeros(s.points.shape[1]), [ALPHA, ALPHA])
