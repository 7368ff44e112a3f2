"""Unilateral contact against closed forms and the contact conditions themselves."""
import numpy as np
import pytest

from clutchfe.fem import ContactError, FaceLoad, RingLoad, SpringSupport, solve
from clutchfe.verification.contact import (HERTZ_DEPTH, HERTZ_H, HERTZ_R, axis_settlement_half_space,
                                          e_star, hertz_model, punch_model)

from tests.helpers.models import Section
from tests.helpers.solving import assert_hertz_pressure

E, NU = 210000.0, 0.3
RIGID_BASE = SpringSupport("low_bottom", axial_stiffness=None, radial_stiffness=0.0)


# ---------------------------------------------------------------- Hertz ----
# Two blocks of 40 contact radii: far boundaries change the local stresses by
# about (a/L)^2, but they add a bulk compliance of order a/L to the rigid
# translation.  So the approach is read locally, between axis points one
# contact radius deep in each block, and compared with the half-space value.
R, H, DEPTH = HERTZ_R, HERTZ_H, HERTZ_DEPTH


@pytest.fixture(scope="module")
def hertz():
    # the verify suite's Hertz blocks (clutchfe/verification/contact.py), checked here in more detail
    s, model, P, Es = hertz_model()
    return s, solve(model), P, Es


def test_hertz_reference_is_consistent():
    # surface centre of one body: (1-nu^2) pi p0 a / (2E)  (Johnson 1985 §3.4)
    p0, a = 700.0, 1.0
    w0 = axis_settlement_half_space(0.0, p0, a, E, NU)
    assert w0 == pytest.approx((1 - NU**2) * np.pi * p0 * a / (2 * E), rel=1e-6)


def test_hertz_contact_radius_and_peak_pressure(hertz):
    s, res, P, Es = hertz
    # a^3 = 3PR/(4E*), p0 = 3P/(2 pi a^2)  (Johnson 1985 §4.2), to 1 %
    a, p0 = assert_hertz_pressure(res.interfaces[0], P, Es, R, H)
    it = res.interfaces[0]
    assert np.all(it.pressure[it.r > a + H] == 0)


def test_hertz_approach(hertz):
    s, res, P, Es = hertz
    a = (3 * P * R / (4 * Es)) ** (1 / 3)
    p0 = 3 * P / (2 * np.pi * a**2)
    delta = a**2 / R            # Johnson 1985 §4.2
    local = delta - 2 * axis_settlement_half_space(DEPTH, p0, a, E, NU)
    low, up = s.vertex_at(0.0, -DEPTH), s.vertex_at(0.0, DEPTH)
    fe = res.displacement[1, low] - res.displacement[1, up]
    assert fe == pytest.approx(local, rel=2e-2)
    # the reported rigid approach carries the blocks' bulk compliance too
    assert -res.rigid_approach["up"] > local


def test_hertz_contact_conditions(hertz):
    s, res, P, Es = hertz
    it = res.interfaces[0]
    assert np.all(np.isfinite(it.pressure)) and np.all(it.pressure >= 0)
    assert np.all(it.normal_force >= 0) and np.all(it.gap >= 0)
    assert np.all(it.gap[it.in_contact] == 0) and np.all(it.gap[~it.in_contact] > 0)
    assert np.sum(it.normal_force) == pytest.approx(P, rel=1e-10)
    assert res.axial_force_balance_error < 1e-10
    assert np.all(np.diff(it.r) > 0)


# ------------------------------------------------------------ flat punch ----
def test_rigid_flat_punch_stiffness():
    a, P = 1.0, 1000.0
    s, model = punch_model(a, P)
    res = solve(model)
    # surface outside the punch sinks by (2 delta/pi) asin(a/r) (Johnson 1985
    # §3.8; Sneddon 1965), so the punch-to-surface settlement at r1 = 2a is
    # delta (1 - (2/pi) asin(a/r1)): local, free of the block's bulk compliance
    r1 = 2.0 * a
    at_r1 = s.vertex_at(r1, 0.0)
    centre = [i for i in s.vertices_on("punch_bottom") if s.points[0, i] == 0.0][0]
    settle = res.displacement[1, at_r1] - res.displacement[1, centre]
    delta = settle / (1 - 2 / np.pi * np.arcsin(a / r1))
    # P / delta = 2 a E*  (Johnson 1985 §3.8; Sneddon 1965)
    assert P / delta == pytest.approx(2 * a * e_star(E, NU, 1e4 * E, NU), rel=2e-2)
    it = res.interfaces[0]
    assert np.all(it.in_contact) and np.all(it.pressure >= 0)
    assert np.sum(it.normal_force) == pytest.approx(P, rel=1e-10)


# ---------------------------------------------------- stacks and failures ----
def stack(order=2, loads=None, free=(False, True, True), gap=0.0):
    """Base on a rigid floor, a floating disc, a pressure plate on top."""
    r = np.linspace(0.0, 5.0, 11)
    s = Section().add_block("low", r, np.linspace(-2.0, 0.0, 5))
    s.add_block("disc", r, np.linspace(0.0, 1.0, 3)).add_block("up", r, np.linspace(1.0, 3.0, 5))
    pairs = [s.pair("c1", "low_top", "disc_bottom", (0.0, 1.0)),
             s.pair("c2", "disc_top", "up_bottom", (0.0, 1.0), gap=lambda rr, zz: gap * rr)]
    loads = loads if loads is not None else [FaceLoad("up_top", -2000.0)]
    return s, s.model([E, E, E], [NU, NU, NU], list(free), supports=[RIGID_BASE],
                      loads=loads, contacts=pairs, element_order=order)


@pytest.mark.parametrize("order", [1, 2])
def test_conforming_stack_is_uniform(order):
    # flush identical cylinders under a uniform load: uniaxial uniform stress
    # sigma_z = -W/A everywhere (linear elasticity, simple compression), so the
    # recovered pressure must be uniform, including the node on the axis
    s, model = stack(order)
    res = solve(model)
    W, area = 2000.0, np.pi * 5.0**2
    for it in res.interfaces:
        assert np.allclose(it.pressure, W / area, rtol=1e-8)
        assert np.all(it.in_contact)
    # mean axial displacement of the plate: -W/(A E) (2 + 1 + 1) mm below z = 0..
    expected_up = -W / (area * E) * (2.0 + 1.0 + 1.0)
    assert res.rigid_approach["up"] == pytest.approx(expected_up, rel=1e-8)
    assert res.axial_force_balance_error < 1e-10


def test_ring_load_on_a_vertex():
    s, model = stack(loads=[RingLoad("up_top", 3.5, -1500.0)], gap=1e-3)
    res = solve(model)
    for it in res.interfaces:
        assert np.sum(it.normal_force) == pytest.approx(1500.0, rel=1e-10)
        assert np.all(it.pressure >= 0) and np.all(np.isfinite(it.pressure))
        lam, gap = it.normal_force, it.gap
        assert np.all(lam * gap <= 1e-9 * lam.max() * np.abs(gap).max())
    assert not np.all(res.interfaces[1].in_contact)     # the coned gap stays open outside
    assert res.axial_force_balance_error < 1e-10


def test_ring_load_needs_a_vertex():
    s, model = stack(loads=[RingLoad("up_top", 3.3, -1500.0)])
    with pytest.raises(ValueError, match="no vertex"):
        solve(model)


def test_free_body_pulled_away_cannot_be_balanced():
    s, model = stack(loads=[FaceLoad("up_top", +500.0)])
    with pytest.raises(ContactError):
        solve(model)


def test_free_body_without_contact_face():
    s, model = stack()
    model.contacts = model.contacts[:1]
    with pytest.raises(ContactError, match="up"):
        solve(model)


def test_body_without_support_or_free_flag():
    s, model = stack(free=(False, False, True))
    with pytest.raises(ValueError, match="disc"):
        solve(model)
