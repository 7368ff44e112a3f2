"""The coupled thermo-elastic engagement loop (fem/engagement.py) and the extra load of the contact
solve (fem/solve.py), on small block models.

Steel: k = 50 W/(m·K), ρc = 3.611 mJ/(mm³·K), E = 210 GPa, ν = 0.3, α = 12e-6/K (common practice);
a compliant friction pad (E = 350 MPa, ν = 0.25, the verify suite's lining modulus) pressed on a
steel base keeps the contact stable under the heat (steel on steel blocks localise the pressure
within a step at these fluxes: thermoelastic instability).  docs/thermal.md lists the measured
values quoted beside each check.
"""
import math

import numpy as np
import pytest

from clutchfe.fem import ContactSolver, FaceLoad, SpringSupport
from clutchfe.fem.engagement import (CouplingError, FrictionHeating, SlipDuty, _Coupling, run_engagement)
from clutchfe.fem.extra_load import linear_solve_with
from clutchfe.fem.heat import (Convection, HeatModel, LoadResponse, Transient, film_coefficient_from_si,
                               heat_capacity_from_si)
from clutchfe.fem.thermal_strain import thermal_load_matrix

from tests.helpers.models import Section, graded

E, NU, ALPHA = 210000.0, 0.3, 12e-6
K, RC = 50.0, heat_capacity_from_si(7850.0, 460.0)
KAPPA = K / RC
E_PAD, NU_PAD = 350.0, 0.25
MU = 0.3
FORCE = 5000.0          # N


def pad_on_base(pad_thickness=4.0, r=(60.0, 80.0), cells=11, h=0.5, pad_alpha=ALPHA, depth=8.0):
    """A steel base (held at its bottom) and a free pad pressed on it by FORCE; pair 'face' with
    face A the base's top.  Returns the solver, a heat model and α per body."""
    s = Section().add_block("base", np.linspace(*r, cells), -graded(0.0, 2.0, depth, h)[::-1])
    s.add_block("pad", np.linspace(*r, cells), graded(0.0, min(2.0, pad_thickness), pad_thickness, h))
    pair = s.pair("face", "base_top", "pad_bottom", (0.0, 1.0))
    model = s.model([E, E_PAD], [NU, NU_PAD], [False, True], contacts=[pair],
                    supports=[SpringSupport("base_bottom")], loads=[FaceLoad("pad_top", -FORCE)])
    cooled = [Convection(f, film_coefficient_from_si(100.0), 20.0)
              for f in ("base_inner", "base_outer", "pad_inner", "pad_outer")]
    return ContactSolver(model), HeatModel(model, [K, K], [RC, RC], 20.0, cooled), [ALPHA, pad_alpha]


def torque(fe):
    """μ Σ λ r (N·mm): the friction torque of the nodal contact forces."""
    return MU * float(sum(np.sum(i.normal_force * i.r) for i in fe.interfaces))


@pytest.fixture(scope="module")
def blocks():
    return pad_on_base()


# ---------------------------------------------------------------- the extra load of the contact solve

def test_extra_load_zero_is_bit_identical_and_a_thermal_load_is_one_linear_solve(blocks):
    solver, heat, alpha = blocks
    cold = solver.solve()
    zero = solver.solve(extra_load=np.zeros(solver.system.basis.N))
    for a, b in zip(cold.interfaces, zero.interfaces):
        assert np.array_equal(a.pressure, b.pressure) and np.array_equal(a.gap, b.gap)
    assert np.array_equal(cold.displacement, zero.displacement)
    assert all(np.array_equal(cold.stress[k], zero.stress[k]) for k in cold.stress)
    # a thermal load B θ (θ rising towards the face): its gap change Giᵀ K⁻¹ f is the gap change of a
    # fresh linear solve with the same load (fem.extra_load, linearity of K u = f), to round-off
    B = thermal_load_matrix(solver.system, alpha)
    x = solver.system.mesh.p
    f = B @ (50.0 * np.exp(x[1] / 2.0) * (x[0] / 70.0))
    _, u0 = linear_solve_with(solver.system.model, lambda s: np.zeros(s.basis.N))
    _, u1 = linear_solve_with(solver.system.model, lambda s: f)
    expected = solver.G.T @ (u1 - u0)
    assert np.max(np.abs(solver.extra_gap(f) - expected)) < 1e-9 * np.max(np.abs(expected))
    hot = solver.solve(extra_load=f)
    lam = np.concatenate([i.normal_force for i in hot.interfaces])
    with_f = solver.displacement_of(lam, [0.0], 1.0, f)
    without = solver.displacement_of(lam, [0.0], 1.0)
    assert np.max(np.abs(with_f - without - (u1 - u0))) < 1e-9 * np.max(np.abs(u1 - u0))
    # the thermal load has no axial resultant on the free pad (fem/thermal_strain.py), so the
    # balance e is unchanged and the pad still balances the applied force (to round-off)
    pad_z = solver.prep.T[:, 0] > 0
    assert abs(f[pad_z].sum()) < 1e-12 * np.abs(f[pad_z]).sum()
    assert hot.axial_force_balance_error < 1e-9
    assert sum(i.normal_force.sum() for i in hot.interfaces) == pytest.approx(FORCE, rel=1e-9)
    assert np.max(np.abs(hot.interfaces[0].pressure - cold.interfaces[0].pressure)) > 1e-3   # it acts


# ---------------------------------------------------------------- the loop

def test_zero_slip_energy_gives_exactly_the_cold_result(blocks):
    # no slip, every temperature at the reference: θ stays exactly 0 (fem/heat.py), so every step's
    # contact is the cold solve to the last bit (the cold state is solver.solve(fields=False))
    solver, heat, alpha = blocks
    duty = SlipDuty(0.0, 0.2, "constant", engagements=2, dwell_time=0.2, steps_per_engagement=5,
                    dwell_steps=3, cool_down_time=0.1)
    hist = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque)
    cold = solver.solve(fields=False)
    assert len(hist.steps) == 5 + 3 + 5 + 3
    for step in hist.steps:
        assert np.array_equal(step.fe.interfaces[0].pressure, cold.interfaces[0].pressure)
        assert step.torque == torque(cold) and step.heat_generated == 0.0 and step.peak_rise == 0.0
        assert step.coupling_iterations == 1
    assert np.array_equal(hist.cold.interfaces[0].pressure, cold.interfaces[0].pressure)
    assert np.all(hist.rise_at_vertices(-1) == 0.0)
    assert np.array_equal(hist.displacement_at_vertices(-1), solver.solve().displacement)


def test_energy_of_a_linear_decay_engagement(blocks):
    """Heat generated ∫∫ q dA dt = stored + convected within 1 % (conservation of energy, Carslaw &
    Jaeger, Conduction of Heat in Solids, 2nd ed. 1959, ch. 1; the account of fem/heat.py), and it
    is the friction work ∫ T ω dt of the recorded torques and speeds (the flux is built from the
    nodal friction power, fem/engagement.py).  Measured: balance −2.0e-4, work −4.0e-4 (the first,
    backward-Euler step books its end rate, 1/N² short)."""
    solver, heat, alpha = blocks
    duty = SlipDuty(300.0, 0.5, "linear", steps_per_engagement=50, cool_down_time=0.5, dwell_steps=10)
    hist = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque)
    generated = sum(s.heat_generated for s in hist.steps)
    acc = hist.energy
    assert generated == pytest.approx(acc.heat_in, rel=1e-12)
    assert acc.stored + acc.convected_total == pytest.approx(generated, rel=1e-2)
    t = np.array([0.0] + [s.time for s in hist.steps])
    power = np.array([0.0] + [s.torque * s.slip_speed for s in hist.steps])
    power[0] = torque(hist.cold) * duty.slip_speed
    work = float(np.sum(0.5 * (power[1:] + power[:-1]) * np.diff(t)))
    assert generated == pytest.approx(work, rel=1e-2)
    assert max(s.coupling_residual for s in hist.steps) <= 1e-6
    assert hist.steps[-1].slip_speed == 0.0 and hist.steps[0].slipping and not hist.steps[-1].slipping


def test_each_distinct_heat_matrix_is_factorised_once(blocks):
    # slips of Δt = 0.01 s, dwells of 0.1 s: backward Euler and BDF2 at each size, 4 matrices for any
    # number of engagements and coupling iterations (fem/heat.py keeps each one)
    solver, heat, alpha = blocks
    duty = SlipDuty(200.0, 0.1, "constant", engagements=3, dwell_time=0.5, steps_per_engagement=10,
                    dwell_steps=5)
    hist = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque)
    assert sum(s.coupling_iterations for s in hist.steps) > 2 * len(hist.steps)
    assert hist.heat_factorisations == 4
    assert [s.engagement for s in hist.steps] == [1] * 15 + [2] * 15 + [3] * 10


def test_partition_puts_its_fraction_into_face_a(blocks):
    # partition 0.7, no heat across the face, insulated bodies: the base (face A) stores 0.7 of the
    # heat (energy per body from the account; the definition of the partition), to round-off
    solver, heat, alpha = blocks
    insulated = HeatModel(heat.model, [K, K], [RC, RC], 20.0)
    duty = SlipDuty(300.0, 0.2, "linear", steps_per_engagement=20)
    hist = run_engagement(solver, insulated, alpha, [FrictionHeating("face", MU, partition=0.7)], duty, torque)
    by_body = hist.energy.stored_by_body
    assert by_body["base"] / hist.energy.stored == pytest.approx(0.7, rel=1e-9)
    # BDF2 books its heat by the trapezoid rule: with 20 steps it balances to 1.3e-3 (measured)
    assert hist.energy.stored == pytest.approx(hist.energy.heat_in, rel=5e-3)


def test_inertia_law_locks_up_at_the_newton_time(blocks):
    """I dω/dt = −T (Newton's second law for a rotating body): with a constant torque, lock-up at
    t = I ω0 / T (the implicit step is exact for a constant rate, to round-off), and the heat put in
    equals the kinetic energy ½ I ω0² within the time-step error (its first, backward-Euler step
    misses 1/N² of it: measured 4e-4 at N = 50; allowed 1e-3).  With the contact's own torque the
    slip energy ½ I ω0² = ∫ T ω dt as well (measured 4e-4)."""
    solver, heat, alpha = blocks
    t_cold = torque(solver.solve(fields=False))
    omega0, inertia = 300.0, 0.5 * t_cold / 300.0          # about 0.5 s of slip
    duty = SlipDuty(omega0, 2.0, "inertia", inertia=inertia, steps_per_engagement=50)
    const = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, lambda fe: t_cold)
    assert const.steps[-1].time == pytest.approx(inertia * omega0 / t_cold, rel=1e-12)
    assert const.steps[-1].slip_speed == 0.0 and const.steps[-2].slip_speed > 0.0
    kinetic = 0.5 * inertia * omega0 ** 2
    real = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque)
    heat_in = sum(s.heat_generated for s in real.steps)
    assert heat_in == pytest.approx(kinetic, rel=1e-3)
    speeds = np.array([omega0] + [s.slip_speed for s in real.steps])
    assert np.all(np.diff(speeds) < 0) and speeds[-1] == 0.0
    with pytest.raises(ValueError, match="has not locked after slip_time"):
        run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)],
                       SlipDuty(omega0, 0.2, "inertia", inertia=inertia, steps_per_engagement=10), torque)


# ---------------------------------------------------------------- against closed forms

def test_surface_temperature_of_a_thick_block_follows_the_semi_infinite_law():
    """Constant pressure and speed, all the heat into a thick steel block (partition 1): its mean
    surface rise (ring-area weighted) is (2 q/k) √(κ t/π) with q the friction power over the face
    area (Carslaw & Jaeger 1959, constant flux at the surface of a semi-infinite solid; with
    insulated sides the ring-weighted mean obeys the one-dimensional equation exactly), from 0.05 s
    to 0.5 s.  The pad, compliant and without expansion, keeps the friction power still: the torque
    moves by less than 1e-3 (measured 1.5e-5; the hot layer's bulge moves 11 % of the pressure at the
    rims, but symmetrically).  Measured worst error 0.066 % (the P1 mesh's and
    the steps', as in tests/fem/test_heat.py); allowed 0.5 %."""
    z = -graded(0.0, 3.0, 30.0, 0.05)[::-1]
    s = Section().add_block("slab", np.linspace(50.0, 51.0, 5), z)
    s.add_block("pad", np.linspace(50.0, 51.0, 5), np.linspace(0.0, 2.0, 3))
    pair = s.pair("face", "slab_top", "pad_bottom", (0.0, 1.0))
    model = s.model([E, E_PAD], [NU, NU_PAD], [False, True], contacts=[pair],
                    supports=[SpringSupport("slab_bottom")], loads=[FaceLoad("pad_top", -100.0)])
    solver = ContactSolver(model)
    heat = HeatModel(model, [K, K], [RC, RC], 20.0)
    omega = 200.0
    duty = SlipDuty(omega, 0.5, "constant", steps_per_engagement=100)
    hist = run_engagement(solver, heat, [ALPHA, 0.0], [FrictionHeating("face", MU, partition=1.0)], duty, torque)
    slab = np.zeros(hist.vertices.shape[1], dtype=bool)
    slab[np.unique(model.triangles[:, model.element_body == 0])] = True
    top = slab & (hist.vertices[1] == 0.0)
    r = hist.vertices[0, top]
    order = np.argsort(r)
    r = r[order]
    q = omega * torque(hist.cold) / (math.pi * (51.0 ** 2 - 50.0 ** 2))       # mW/mm²
    worst = 0.0
    for i, step in enumerate(hist.steps):
        assert abs(step.torque / torque(hist.cold) - 1) < 1e-3
        if step.time >= 0.05 - 1e-12:
            t_s = hist.rise_at_vertices(i)[top][order]
            mean = np.trapezoid(t_s * r, r) / np.trapezoid(r, r)
            worst = max(worst, abs(mean / (2 * q / K * np.sqrt(KAPPA * step.time / np.pi)) - 1))
    assert worst < 5e-3


def observed_order(values):
    """p = log2(|f(Δt) − f(Δt/2)| / |f(Δt/2) − f(Δt/4)|) (Roache, Verification and Validation in
    Computational Science and Engineering, 1998)."""
    a, b, c = values
    return math.log2(abs(a - b) / abs(b - c))


def test_time_step_convergence_of_the_coupled_loop(blocks):
    """Peak temperature and hot torque at the end of a 0.3 s linear-decay slip from 25, 50 and 100
    steps: observed order near BDF2's formal 2 (the first, backward-Euler step adds a first-order
    part of size 1/N², second order too).  Measured: peak 2.00, torque 2.13; allowed 1.7 to 2.3
    (the torque's differences, 2e-9 of it, still 20 x the coupling tolerance's effect)."""
    solver, heat, alpha = blocks
    peak, hot = [], []
    for n in (25, 50, 100):
        duty = SlipDuty(300.0, 0.3, "linear", steps_per_engagement=n)
        hist = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque,
                              tolerance=1e-10)
        peak.append(hist.steps[-1].peak_rise)
        hot.append(hist.steps[-1].torque)
    assert abs(hot[-1] / torque(solver.solve(fields=False)) - 1) > 2e-5     # the heat moved it (5e-5)
    for values in (peak, hot):
        order = observed_order(values)
        assert abs(order - 2.0) < 0.3, (values, order)     # BDF2's formal order 2; measured 2.00 and 2.13


def test_thermal_crowning_of_a_plate_heated_on_its_face():
    """A free steel plate pressed on a lining, all the heat into the plate (partition 1, no heat
    across).  The hot face layer expands and is held by the cold bulk, so the plate bends with the
    hot face convex (Timoshenko & Goodier, Theory of Elasticity, 3rd ed. 1970, ch. 13: a temperature
    falling through the thickness bends a free plate, hot side convex): the face crowns against the
    flat lining, its rims lift and the pressure leaves them for a band between them, the peak
    several times the cold, uniform pressure (measured: rims 0, peak 3.8 x).  Every step's
    coupling residual is at most the tolerance."""
    s = Section().add_block("lining", np.linspace(60.0, 100.0, 21), np.linspace(-2.0, 0.0, 3))
    s.add_block("plate", np.linspace(60.0, 100.0, 21), graded(0.0, 2.0, 6.0, 0.5))
    pair = s.pair("face", "plate_bottom", "lining_top", (0.0, -1.0))
    model = s.model([E_PAD, E], [NU_PAD, NU], [False, True], contacts=[pair],
                    supports=[SpringSupport("lining_bottom")], loads=[FaceLoad("plate_top", -FORCE)])
    solver = ContactSolver(model)
    heat = HeatModel(model, [0.5, K], [2.0, RC], 20.0)
    duty = SlipDuty(150.0, 0.5, "linear", steps_per_engagement=25)
    tol = 1e-7
    hist = run_engagement(solver, heat, [0.0, ALPHA], [FrictionHeating("face", MU, partition=1.0)], duty,
                          torque, tolerance=tol)
    assert max(s.coupling_residual for s in hist.steps) <= tol
    assert hist.steps[-1].peak_body == "plate"
    cold, hot = hist.cold.interfaces[0], hist.steps[-1].fe.interfaces[0]
    for rim in (np.argmin(hot.r), np.argmax(hot.r)):
        assert hot.pressure[rim] < 0.1 * cold.pressure[rim]
    band = hot.r[hot.pressure > 0.5 * hot.pressure.max()]
    assert band.min() > 62.0 and band.max() < 98.0
    assert hot.pressure.max() > 2.0 * cold.pressure.max()
    # the stresses of a step: the thermal-strain correction gives finite vertex values
    assert np.all(np.isfinite(hist.thermal_stress_at_vertices(-1)["von_mises"]))


def test_a_step_that_does_not_converge_is_refused(blocks):
    solver, heat, alpha = blocks
    with pytest.raises(CouplingError, match="max_iterations = 1"):
        run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], SlipDuty(300.0, 0.1), torque,
                       max_iterations=1)


def test_input_checks(blocks):
    solver, heat, alpha = blocks
    with pytest.raises(ValueError, match="slip_time = 0"):
        SlipDuty(100.0, 0.0)
    with pytest.raises(ValueError, match="speed_law = 'cubic'"):
        SlipDuty(100.0, 1.0, "cubic")
    with pytest.raises(ValueError, match="inertia = None"):
        SlipDuty(100.0, 1.0, "inertia")
    with pytest.raises(ValueError, match=r"partition of 'face' = 1.5"):
        FrictionHeating("face", MU, partition=1.5)
    with pytest.raises(ValueError, match="heating pair = 'nope'"):
        run_engagement(solver, heat, alpha, [FrictionHeating("nope", MU)], SlipDuty(1.0, 1.0), torque)
    with pytest.raises(ValueError, match="cannot lock"):
        run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)],
                       SlipDuty(1.0, 1.0, "inertia", inertia=1.0, drag_torque=1e12), torque)


# ---------------------------------------------------------------- the direct coupled solve

def test_warm_started_contact_solve_gives_the_same_state(blocks):
    # the active set's answer is the exact solve on the final closed set (fem/lcp.py), so a start
    # from all open, all closed or the answer's own set gives the same forces to round-off
    solver, _, _ = blocks
    cold = solver.solve(fields=False)
    lam = np.concatenate([i.normal_force for i in cold.interfaces])
    for start in (np.zeros(lam.size, bool), np.ones(lam.size, bool), lam > 0):
        warm = solver.solve(fields=False, start=start)
        other = np.concatenate([i.normal_force for i in warm.interfaces])
        assert np.max(np.abs(other - lam)) <= 1e-12 * np.max(lam)
    with pytest.raises(ValueError, match="one closed flag per contact node"):
        solver.solve(fields=False, start=np.ones(lam.size + 1, bool))


def test_heat_response_is_the_heat_step_of_the_load(blocks):
    """The heat step is linear in its load for a fixed interface state (superposition for the
    linear heat equation, Carslaw & Jaeger 1959, ch. 1), so LoadResponse's Z H x must be the
    change of Z θ of a trial with the friction load x, for a closed and a half-open interface
    and both schemes, to round-off (measured 4e-16 of the change; allowed 1e-9).  The load map L R λ is the assembled
    flux of the loop's fluxes (fem/engagement.py builds both from the same face matrices)."""
    solver, heat, alpha = blocks
    c = _Coupling(solver, heat, alpha, [FrictionHeating("face", MU)], None, 1.0)
    run = Transient(c.system)
    response = LoadResponse(run, c.L, c.Z, c.R)
    lam = np.concatenate([i.normal_force for i in solver.solve(fields=False).interfaces])
    fluxes = c.fluxes(np.split(lam, c.sizes), 1.0)
    assert np.max(np.abs(c.system.flux_vector(fluxes) - c.L @ (c.R @ lam))) < 1e-12 * np.abs(c.L @ (c.R @ lam)).max()
    run.advance(0.01, fluxes)                               # a history, so the next step is BDF2
    n = c.system.interfaces[0].dofs_a.size
    for closed in ({"face": np.ones(n, bool)}, {"face": np.arange(n) % 2 == 0}):
        for restart in (True, False):
            base = run.trial(0.01, None, closed, restart).rise
            hot = run.trial(0.01, c.fluxes(np.split(lam, c.sizes), 300.0), closed, restart).rise
            change = c.Z @ (hot - base)
            assert np.max(np.abs(response.matrix(0.01, closed, restart) @ (300.0 * lam) - change)) \
                < 1e-9 * np.max(np.abs(change))


def fixed_point_everywhere(monkeypatch):
    monkeypatch.setattr(_Coupling, "coupled", lambda self, *a: None)


def test_direct_coupled_solve_equals_the_fixed_point_iteration(blocks, monkeypatch):
    """The direct solve and the staggered iteration (its fallback, forced here) solve the same
    equations: a fixed point the iteration reaches within its tolerance (1e-8 here; the iteration
    contracts by 20-40 x per iteration, so it stops within about the tolerance of the fixed
    point).  Allowed: pressures 1e-7 of the peak pressure, torque 1e-8, peak rise 1e-6 relative
    (measured: 3.7e-10, 4e-15, 9e-10), over a slip, a dwell and a second slip."""
    solver, heat, alpha = blocks
    duty = SlipDuty(300.0, 0.2, "linear", engagements=2, dwell_time=0.2, steps_per_engagement=20,
                    dwell_steps=5)
    direct = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque, tolerance=1e-8)
    assert all(s.coupling == "direct" for s in direct.steps)
    fixed_point_everywhere(monkeypatch)
    staggered = run_engagement(solver, heat, alpha, [FrictionHeating("face", MU)], duty, torque,
                               tolerance=1e-8)
    assert all(s.coupling == "fixed-point" for s in staggered.steps if s.slipping)
    assert len(direct.steps) == len(staggered.steps)
    for a, b in zip(direct.steps, staggered.steps):
        pa, pb = a.fe.interfaces[0].pressure, b.fe.interfaces[0].pressure
        assert np.max(np.abs(pa - pb)) <= 1e-7 * np.max(pa)
        assert a.torque == pytest.approx(b.torque, rel=1e-8)
        assert a.peak_rise == pytest.approx(b.peak_rise, rel=1e-6, abs=1e-12)
        assert a.coupling_residual <= 1e-8
