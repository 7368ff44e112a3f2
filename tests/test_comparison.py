"""Comparison stage: hand methods, FE torque, capacity position and the verdict.

Every clutch below is a scenario invented for these tests.  Hand-method arithmetic is
written out step by step here, independently of clutchfe.comparison, following
Shigley's Mechanical Engineering Design, clutch chapter (disk and cone clutches, uniform-
pressure and uniform-wear methods) and Juvinall & Marshek, Fundamentals of Machine
Component Design, clutch chapter.
"""
import json
import math
from types import SimpleNamespace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from clutchfe.comparison import compare, hand_capacity

# ------------------------------------------------------------------ test helpers
# Ring discretisation of an (r, z) friction face, built here rather than taken from the
# module so a mistake in the module's own area rule cannot hide.


def ring_areas_mm2(r, semi_cone_angle_deg):
    """Lumped (tributary) ring areas: cells split half-way between nodes, slant ds = dr / sin(alpha)."""
    edges = np.concatenate(([r[0]], 0.5 * (r[1:] + r[:-1]), [r[-1]]))
    return np.pi * (edges[1:] ** 2 - edges[:-1] ** 2) / math.sin(math.radians(semi_cone_angle_deg))


def consistent_forces_N(r, pressure_of_r, semi_cone_angle_deg, gauss_points=4):
    """Nodal forces of a pressure on linear (P1) slant elements, F_i = int p N_i 2 pi r ds."""
    xg, wg = np.polynomial.legendre.leggauss(gauss_points)
    f = np.zeros_like(r)
    for a in range(len(r) - 1):
        ra, rb = r[a], r[a + 1]
        t = 0.5 * (xg + 1.0)
        rr = ra + t * (rb - ra)
        ds = 0.5 * (rb - ra) / math.sin(math.radians(semi_cone_angle_deg))   # Gauss weight scale on the slant
        integrand = pressure_of_r(rr) * 2.0 * math.pi * rr * ds
        f[a] += np.sum(wg * integrand * (1.0 - t))
        f[a + 1] += np.sum(wg * integrand * t)
    return f


def face(name, r, p, alpha, forces=None, in_contact=None):
    areas = ring_areas_mm2(r, alpha)
    return {
        "name": name,
        "r_mm": r,
        "pressure_MPa": p,
        "normal_force_N": p * areas if forces is None else forces,
        "in_contact": p > 0 if in_contact is None else in_contact,
        "tributary_area_mm2": areas,
    }


def balanced_face(name, r, profile, alpha, axial_force_N):
    """Scale a pressure profile so its lumped axial resultant is exactly W."""
    areas = ring_areas_mm2(r, alpha)
    scale = axial_force_N / (np.sum(profile * areas) * math.sin(math.radians(alpha)))
    return face(name, r, profile * scale, alpha)


def all_floats_finite(value):
    if isinstance(value, dict):
        return all(all_floats_finite(v) for v in value.values())
    if isinstance(value, list):
        return all(all_floats_finite(v) for v in value)
    if isinstance(value, float):
        return math.isfinite(value)
    return True


# Invented scenarios.
PLATE = dict(inner_radius_mm=55.0, outer_radius_mm=95.0, semi_cone_angle_deg=90.0,
             friction_coefficient=0.35, friction_surfaces=2, axial_force_N=4000.0)
CONE = dict(inner_radius_mm=40.0, outer_radius_mm=52.0, semi_cone_angle_deg=12.0,
            friction_coefficient=0.25, friction_surfaces=1, axial_force_N=1800.0)


# ------------------------------------------------------------------ hand methods

def test_plate_clutch_hand_method_worked_step_by_step():
    # Shigley's Mechanical Engineering Design, clutch chapter, disk clutch, both methods;
    # invented dry twin-face plate clutch r1 = 55 mm, r2 = 95 mm, mu = 0.35, n = 2, W = 4000 N.
    h = hand_capacity(**PLATE)
    # Uniform wear: T = n mu W (r1 + r2) / 2.
    r_uw = (55.0 + 95.0) / 2.0                      # 75 mm
    t_uw = 2 * 0.35 * 4000.0 * r_uw / 1000.0         # 2800 N * 75 mm = 210 N·m
    assert r_uw == 75.0 and t_uw == pytest.approx(210.0, rel=1e-12)
    # Uniform pressure: R = (2/3)(r2^3 - r1^3)/(r2^2 - r1^2).
    cubes = 95.0**3 - 55.0**3                        # 857375 - 166375 = 691000
    squares = 95.0**2 - 55.0**2                      # 9025 - 3025 = 6000
    r_up = 2.0 / 3.0 * cubes / squares               # 76.777... mm
    t_up = 2 * 0.35 * 4000.0 * r_up / 1000.0         # 214.98 N·m
    assert cubes == 691000.0 and squares == 6000.0
    assert h.radius_uniform_wear_mm == pytest.approx(r_uw, rel=1e-12)
    assert h.torque_uniform_wear_Nm == pytest.approx(t_uw, rel=1e-12)
    assert h.radius_uniform_pressure_mm == pytest.approx(r_up, rel=1e-12)
    assert h.torque_uniform_pressure_Nm == pytest.approx(t_up, rel=1e-12)
    # Pressures: p = W / (pi (r2^2 - r1^2)); uniform-wear peak at r1: W / (2 pi r1 (r2 - r1)).
    assert h.uniform_pressure_MPa == pytest.approx(4000.0 / (math.pi * 6000.0), rel=1e-12)
    assert h.peak_pressure_uniform_wear_MPa == pytest.approx(4000.0 / (2 * math.pi * 55.0 * 40.0), rel=1e-12)
    # A plate needs only the clamp force to engage and never self-locks.
    assert h.engagement_force_N == 4000.0
    assert h.self_locking is False


def test_cone_clutch_hand_method_worked_in_diameters():
    # Shigley's Mechanical Engineering Design, clutch chapter, cone clutch, written in
    # diameters D = 2 r2, d = 2 r1 (the diameter form is from memory):
    #   uniform wear      T = F f (D + d) / (4 sin alpha)
    #   uniform pressure  T = F f (D^3 - d^3) / (3 sin alpha (D^2 - d^2))
    # Invented cone: r1 = 40 mm, r2 = 52 mm, alpha = 12 deg, f = 0.25, F = 1800 N.
    h = hand_capacity(**CONE)
    big_d, small_d = 104.0, 80.0
    sin_a = math.sin(math.radians(12.0))            # 0.20791...
    t_uw = 1800.0 * 0.25 * (big_d + small_d) / (4.0 * sin_a) / 1000.0          # ~99.56 N·m
    t_up = 1800.0 * 0.25 * (big_d**3 - small_d**3) / (3.0 * sin_a * (big_d**2 - small_d**2)) / 1000.0
    assert t_uw == pytest.approx(99.56, abs=0.01)
    assert h.torque_uniform_wear_Nm == pytest.approx(t_uw, rel=1e-12)
    assert h.torque_uniform_pressure_Nm == pytest.approx(t_up, rel=1e-12)
    # The normal pressure on the slant has the plate value: int p sin(a) 2 pi r dr / sin(a) = W.
    assert h.uniform_pressure_MPa == pytest.approx(1800.0 / (math.pi * (52.0**2 - 40.0**2)), rel=1e-12)


def test_cone_engagement_force_and_self_locking_from_statics():
    # Free-body resolution of the slant (common practice): held engaged, the normal force is
    # N = W / sin(a).  While the cone still slides in, friction mu N acts up the slant against
    # the approach, adding mu N cos(a) axially; pulling it out, friction reverses.
    h = hand_capacity(**CONE)
    a = math.radians(12.0)
    normal = 1800.0 / math.sin(a)
    push_in = normal * (math.sin(a) + 0.25 * math.cos(a))
    pull_out = normal * (math.sin(a) - 0.25 * math.cos(a))
    assert h.engagement_force_N == pytest.approx(push_in, rel=1e-12)
    assert pull_out < 0.0 and h.self_locking is True   # tan 12 deg = 0.213 < 0.25
    steep = hand_capacity(**{**CONE, "semi_cone_angle_deg": 20.0})
    a20 = math.radians(20.0)
    assert 1800.0 / math.sin(a20) * (math.sin(a20) - 0.25 * math.cos(a20)) > 0.0
    assert steep.self_locking is False                  # tan 20 deg = 0.364 > 0.25


@settings(max_examples=200, deadline=None)
@given(k=st.floats(0.02, 0.99), r2=st.floats(5.0, 800.0), alpha=st.floats(3.0, 90.0))
def test_torque_ratio_identity(k, r2, alpha):
    # Shigley's clutch chapter (docs/physics.md): T_up / T_uw = (4/3)(1 + k + k^2)/(1 + k)^2, k = r1/r2; it exceeds 1
    # because 4(1 + k + k^2) - 3(1 + k)^2 = (1 - k)^2 > 0.
    h = hand_capacity(k * r2, r2, alpha, 0.3, 1, 1000.0)
    ratio = h.torque_uniform_pressure_Nm / h.torque_uniform_wear_Nm
    assert ratio == pytest.approx(4.0 / 3.0 * (1 + k + k * k) / (1 + k) ** 2, rel=1e-12)
    assert ratio > 1.0


def simpson(y, x):
    # Composite Simpson (odd sample count): exact for the cubic-or-lower integrands below.
    h = (x[-1] - x[0]) / (len(x) - 1)
    return h / 3.0 * (y[0] + y[-1] + 4.0 * y[1:-1:2].sum() + 2.0 * y[2:-1:2].sum())


@settings(max_examples=100, deadline=None)
@given(r1=st.floats(5.0, 300.0), width=st.floats(0.5, 200.0), alpha=st.floats(5.0, 90.0),
       w=st.floats(10.0, 1e5))
def test_pressure_curves_carry_W_and_give_the_hand_torques(r1, width, alpha, w):
    # Axial balance on the slant: int p sin(a) 2 pi r ds = W with ds = dr / sin(a);
    # torque: n mu int p r 2 pi r ds (Shigley's clutch chapter; docs/physics.md).
    h = hand_capacity(r1, r1 + width, alpha, 0.3, 1, w)
    c = h.pressure_curves(samples=201)
    r = c["r_mm"]
    sin_a = math.sin(math.radians(alpha))
    for key, torque in (("uniform_pressure_MPa", h.torque_uniform_pressure_Nm),
                        ("uniform_wear_MPa", h.torque_uniform_wear_Nm)):
        p = c[key]
        assert simpson(p * sin_a * 2 * math.pi * r / sin_a, r) == pytest.approx(w, rel=1e-9)
        assert 0.3 * simpson(p * r * 2 * math.pi * r / sin_a, r) / 1000.0 == pytest.approx(torque, rel=1e-9)


# ------------------------------------------------------------------ FE torque and xi

@pytest.mark.parametrize("scenario", [PLATE, CONE], ids=["plate", "cone"])
@pytest.mark.parametrize("intervals", [10, 60, 200])
def test_uniform_pressure_lumped_gives_xi_one_within_derived_error(scenario, intervals):
    # Lumped nodal forces F_i = p A_i on N equal radial intervals (h = (r2 - r1)/N).
    # Sum F_i r_i - int p r dA = (2 pi p / sin a) N h^3 / 24 (interior cells over-count by
    # -h^3/12 each, the two half-cells at r1, r2 by (r2 - r1) h^2 / 8 net), while sum F_i is
    # exact.  So R_eff is high by h^2 / (12 (r1 + r2)) and, with R_up - R_uw =
    # (r2 - r1)^2 / (6 (r1 + r2)), xi - 1 = 1 / (2 N^2) exactly, up to round-off.
    h = hand_capacity(**scenario)
    r1, r2, alpha = scenario["inner_radius_mm"], scenario["outer_radius_mm"], scenario["semi_cone_angle_deg"]
    r = np.linspace(r1, r2, intervals + 1)
    p = np.full_like(r, scenario["axial_force_N"] / (math.pi * (r2**2 - r1**2)))
    faces = [face(f"face {i}", r, p, alpha) for i in range(scenario["friction_surfaces"])]
    out = compare(faces, h)
    assert out["capacity_position"] - 1.0 == pytest.approx(1.0 / (2 * intervals**2), abs=1e-8)
    assert abs(out["axial_force_balance_error"]) < 1e-12


@pytest.mark.parametrize("scenario", [PLATE, CONE], ids=["plate", "cone"])
def test_uniform_pressure_consistent_loads_give_xi_one(scenario):
    # With P1 consistent loads, sum N_i(r) r_i = r exactly on linear elements, so
    # sum F_i r_i = int p r dA with no discretisation error: xi = 1 up to round-off.
    r1, r2, alpha = scenario["inner_radius_mm"], scenario["outer_radius_mm"], scenario["semi_cone_angle_deg"]
    p0 = scenario["axial_force_N"] / (math.pi * (r2**2 - r1**2))
    r = np.linspace(r1, r2, 13)
    forces = consistent_forces_N(r, lambda rr: np.full_like(rr, p0), alpha)
    faces = [face(f"face {i}", r, np.full_like(r, p0), alpha, forces=forces)
             for i in range(scenario["friction_surfaces"])]
    out = compare(faces, hand_capacity(**scenario))
    assert out["capacity_position"] == pytest.approx(1.0, abs=1e-8)
    assert "matches the uniform-pressure formula" in out["verdict"]


@pytest.mark.parametrize("scenario", [PLATE, CONE], ids=["plate", "cone"])
@pytest.mark.parametrize("intervals", [10, 200])
def test_uniform_wear_lumped_gives_xi_zero(scenario, intervals):
    # p r = C: sum F_i r_i = C sum A_i = C (total area), exact, so xi = 0 up to round-off.
    # The lumped axial resultant is off instead: the half-cells at r1, r2 add
    # h^2 / 8 (1/r1 - 1/r2) to (r2 - r1), a relative error of h^2 / (8 r1 r2).
    r1, r2, alpha = scenario["inner_radius_mm"], scenario["outer_radius_mm"], scenario["semi_cone_angle_deg"]
    w = scenario["axial_force_N"]
    r = np.linspace(r1, r2, intervals + 1)
    p = w / (2 * math.pi * r * (r2 - r1))
    faces = [face(f"face {i}", r, p, alpha) for i in range(scenario["friction_surfaces"])]
    out = compare(faces, hand_capacity(**scenario))
    assert out["capacity_position"] == pytest.approx(0.0, abs=1e-8)
    step = (r2 - r1) / intervals
    assert out["axial_force_balance_error"] == pytest.approx(step**2 / (8 * r1 * r2), rel=1e-6)
    assert "matches the uniform-wear formula" in out["verdict"]
    assert out["warnings"] == [] or all("self-locks" in w for w in out["warnings"])


profiles = st.lists(st.floats(0.0, 10.0), min_size=3, max_size=40).filter(lambda xs: max(xs) > 1e-3)


@settings(max_examples=200, deadline=None)
@given(profile=profiles, r1=st.floats(5.0, 300.0), k=st.floats(0.05, 0.98), alpha=st.floats(5.0, 90.0),
       mu=st.floats(0.05, 0.6), w=st.floats(1.0, 1e5))
def test_effective_radius_stays_on_the_annulus(profile, r1, k, alpha, mu, w):
    # Physics (docs/physics.md): with non-negative pressure balancing W, r1 <= R_eff <= r2.
    r2 = r1 / k
    r = np.linspace(r1, r2, len(profile))
    out = compare([balanced_face("face", r, np.array(profile), alpha, w)], hand_capacity(r1, r2, alpha, mu, 1, w))
    slack = 1e-9 * r2
    assert r1 - slack <= out["effective_radius_mm"] <= r2 + slack
    assert -1e-9 <= out["effective_radius_position"] <= 1.0 + 1e-9
    assert all_floats_finite(out)
    json.dumps(out.as_dict(), allow_nan=False)   # goes into summary.json: plain, NaN-free types


@settings(max_examples=60, deadline=None)
@given(scale=st.floats(0.01, 100.0))
def test_fe_torque_is_linear_in_mu_and_W(scale):
    # Linear elasticity with fixed contact state (docs/physics.md, modelling notes): p scales with W, T with mu.
    r = np.linspace(60.0, 75.0, 31)
    base = balanced_face("cone", r, 1.0 + 0.4 * np.sin(r / 4.0) ** 2, 12.5, 2500.0)
    ref = compare([base], hand_capacity(60.0, 75.0, 12.5, 0.3, 1, 2500.0))
    more_mu = compare([base], hand_capacity(60.0, 75.0, 12.5, 0.3 * scale, 1, 2500.0))
    scaled = {**base, "pressure_MPa": base["pressure_MPa"] * scale, "normal_force_N": base["normal_force_N"] * scale}
    more_w = compare([scaled], hand_capacity(60.0, 75.0, 12.5, 0.3, 1, 2500.0 * scale))
    for other in (more_mu, more_w):
        assert other["torque_fe_Nm"] == pytest.approx(scale * ref["torque_fe_Nm"], rel=1e-12)
        assert other["capacity_position"] == pytest.approx(ref["capacity_position"], rel=1e-9, abs=1e-9)
        assert other["effective_radius_mm"] == pytest.approx(ref["effective_radius_mm"], rel=1e-12)


def test_fe_torque_and_effective_radius_by_hand_on_three_nodes():
    # Invented three-node plate face, n = 1: T = mu sum F_i r_i; R_eff = T sin(a) / (n mu W).
    r = np.array([50.0, 60.0, 70.0])
    forces = np.array([300.0, 500.0, 200.0])          # sum 1000 N = W
    surf = {"name": "plate", "r_mm": r, "pressure_MPa": np.array([0.2, 0.3, 0.1]),
            "normal_force_N": forces, "in_contact": np.array([True, True, True])}
    out = compare([surf], hand_capacity(50.0, 70.0, 90.0, 0.4, 1, 1000.0))
    moment = 300 * 50 + 500 * 60 + 200 * 70            # 59000 N·mm
    assert out["torque_fe_Nm"] == pytest.approx(0.4 * moment / 1000.0, rel=1e-12)
    assert out["effective_radius_mm"] == pytest.approx(59.0, rel=1e-12)
    t_up = 0.4 * 1000.0 * (2 / 3) * (70**3 - 50**3) / (70**2 - 50**2) / 1000.0
    t_uw = 0.4 * 1000.0 * 60.0 / 1000.0
    assert out["capacity_position"] == pytest.approx((0.4 * moment / 1000.0 - t_uw) / (t_up - t_uw), rel=1e-9)
    # Peak 0.3 MPa at 60 mm against the uniform-wear peak W / (2 pi r1 (r2 - r1)).
    assert out["peak_pressure_MPa"] == 0.3 and out["peak_pressure_radius_mm"] == 60.0
    uniform_wear_peak = 1000 / (2 * math.pi * 50 * 20)
    assert out["peak_pressure_over_uniform_wear_peak"] == pytest.approx(0.3 / uniform_wear_peak, rel=1e-12)
    assert out["mean_pressure_MPa"] == pytest.approx(1000.0 / (math.pi * (70**2 - 50**2)), rel=1e-12)


# ------------------------------------------------------------------ verdict and margins

def blended_face(r, alpha, w, share_uniform):
    # Mix of the two hand pressures at the same W: T is linear in p, so xi = share_uniform.
    r1, r2 = r[0], r[-1]
    p = share_uniform * w / (math.pi * (r2**2 - r1**2)) + (1 - share_uniform) * w / (2 * math.pi * r * (r2 - r1))
    forces = consistent_forces_N(r, lambda rr: share_uniform * w / (math.pi * (r2**2 - r1**2))
                                 + (1 - share_uniform) * w / (2 * math.pi * rr * (r2 - r1)), alpha, gauss_points=8)
    return face("face", r, p, alpha, forces=forces)


@pytest.mark.parametrize("share", [-1.5, -0.4, 0.3, 0.97, 1.2, 2.2])
def test_verdict_names_the_conservative_assumption(share):
    h = hand_capacity(60.0, 75.0, 25.0, 0.3, 1, 2500.0)
    out = compare([blended_face(np.linspace(60.0, 75.0, 41), 25.0, 2500.0, share)], h)
    t_fe, t_up, t_uw = out["torque_fe_Nm"], h.torque_uniform_pressure_Nm, h.torque_uniform_wear_Nm
    assert out["capacity_position"] == pytest.approx(share, abs=1e-3)
    if share < 0:
        assert out["verdict"].startswith("WARNING")
        assert "even the uniform-wear formula overestimates the capacity" in out["verdict"].lower()
        assert f"{100 * (t_uw / t_fe - 1):.2f} %" in out["verdict"]
        assert out["warnings"] and out["warnings"][0].startswith("WARNING")
    elif share > 1:
        assert "underestimates" in out["verdict"]
        assert f"{100 * (t_fe / t_up - 1):.2f} % above T_up" in out["verdict"]
    else:
        assert out["verdict"].startswith("Uniform wear is conservative here")
        assert f"{100 * (t_fe / t_uw - 1):.2f} % above T_uw" in out["verdict"]
    # R_eff is always quoted on the whole annulus, since xi magnifies small shifts.
    assert f"R_eff = {out['effective_radius_mm']:.2f} mm" in out["verdict"]
    assert "[60.00, 75.00] mm" in out["verdict"]


def test_capacity_margins_against_required_torque():
    h = hand_capacity(**PLATE)
    r = np.linspace(55.0, 95.0, 41)
    faces = [balanced_face(f"face {i}", r, np.ones_like(r), 90.0, 4000.0) for i in range(2)]
    out = compare(faces, h, required_torque_Nm=150.0, service_factor=1.4)
    design = 150.0 * 1.4
    assert out["capacity_margin_fe"] == pytest.approx(out["torque_fe_Nm"] / design - 1, rel=1e-12)
    assert out["capacity_margin_uniform_pressure"] == pytest.approx(
        h.torque_uniform_pressure_Nm / design - 1, rel=1e-12)
    assert out["capacity_margin_uniform_wear"] == pytest.approx(h.torque_uniform_wear_Nm / design - 1, rel=1e-12)
    short = compare(faces, h, required_torque_Nm=200.0, service_factor=1.25)
    assert short["capacity_margin_fe"] < 0 and any("SLIPS" in w for w in short["warnings"])
    assert compare(faces, h)["capacity_margin_fe"] is None


def test_load_split_and_balance_between_two_faces():
    # Invented twin-face plate where one face carries 2 % more than W and the other 2 % less.
    h = hand_capacity(**PLATE)
    r = np.linspace(55.0, 95.0, 21)
    a = balanced_face("flywheel side", r, np.ones_like(r), 90.0, 4000.0 * 1.02)
    b = balanced_face("pressure plate side", r, r.copy(), 90.0, 4000.0 * 0.98)
    out = compare([a, b], h)
    sa, sb = out["surfaces"]
    # the two faces act in series: each should carry W, so each is given over W (not as a share)
    assert sa["axial_force_over_clamp_force"] == pytest.approx(1.02, rel=1e-12)
    assert sb["axial_force_over_clamp_force"] == pytest.approx(0.98, rel=1e-12)
    assert sa["axial_force_balance_error"] == pytest.approx(0.02, rel=1e-9)
    assert sb["axial_force_balance_error"] == pytest.approx(-0.02, rel=1e-9)
    assert abs(out["axial_force_balance_error"]) == pytest.approx(0.02, rel=1e-9)
    moments = [np.sum(s["normal_force_N"] * r) for s in (a, b)]
    assert sa["torque_share"] == pytest.approx(moments[0] / sum(moments), rel=1e-12)
    assert sa["torque_Nm"] + sb["torque_Nm"] == pytest.approx(out["torque_fe_Nm"], rel=1e-12)
    assert out["peak_pressure_surface"] == "pressure plate side"   # p grows with r there
    assert any("balance" in w for w in out["warnings"])             # 2 % moves xi by ~0.9 here


def test_contact_area_fraction_from_tributary_areas():
    r = np.linspace(60.0, 75.0, 16)
    p = np.where(r <= 70.0, 1.0, 0.0)
    surf = face("cone", r, p, 12.5)
    w = float(np.sum(surf["normal_force_N"])) * math.sin(math.radians(12.5))
    out = compare([surf], hand_capacity(60.0, 75.0, 12.5, 0.3, 1, w))
    areas = surf["tributary_area_mm2"]
    assert out["contact_area_fraction"] == pytest.approx(areas[r <= 70.0].sum() / areas.sum(), rel=1e-12)
    # Without areas the module rebuilds the same lumped rings from the node radii.
    bare = {k: v for k, v in surf.items() if k != "tributary_area_mm2"}
    assert compare([bare], hand_capacity(60.0, 75.0, 12.5, 0.3, 1, 1000.0))["contact_area_fraction"] == pytest.approx(
        out["contact_area_fraction"], rel=1e-12)


def test_fe_stage_names_and_single_representative_face():
    # The FE stage's interface result uses r / pressure / normal_force / tributary_area.
    r = np.linspace(55.0, 95.0, 21)
    surf = balanced_face("disc", r, np.ones_like(r), 90.0, 4000.0)
    fe_like = SimpleNamespace(name="disc", r=r, pressure=surf["pressure_MPa"], normal_force=surf["normal_force_N"],
                              tributary_area=surf["tributary_area_mm2"], in_contact=surf["in_contact"])
    one_face = hand_capacity(**{**PLATE, "friction_surfaces": 1})
    single = compare([fe_like], one_face)
    assert single["torque_fe_Nm"] == pytest.approx(compare([surf], one_face)["torque_fe_Nm"], rel=1e-15)
    # One modelled face standing for both faces of a twin-face plate doubles the torque.
    twin = compare([fe_like], hand_capacity(**PLATE))
    assert twin["torque_fe_Nm"] == pytest.approx(2 * single["torque_fe_Nm"], rel=1e-12)
    assert twin["effective_radius_mm"] == pytest.approx(single["effective_radius_mm"], rel=1e-12)
    # The hand data may come back as the plain mapping written to the summary.
    assert compare([surf], hand_capacity(**PLATE).as_dict())["torque_fe_Nm"] == pytest.approx(twin["torque_fe_Nm"])


# ------------------------------------------------------------------ impossible input

@pytest.mark.parametrize("change", [
    {"inner_radius_mm": 95.0}, {"inner_radius_mm": 100.0}, {"inner_radius_mm": 0.0},
    {"axial_force_N": 0.0}, {"axial_force_N": -5.0}, {"friction_coefficient": 0.0},
    {"semi_cone_angle_deg": 0.0}, {"semi_cone_angle_deg": 95.0}, {"friction_surfaces": 0},
    {"friction_surfaces": 1.5}, {"outer_radius_mm": float("nan")}, {"axial_force_N": "lots"},
])
def test_impossible_hand_inputs_are_refused(change):
    with pytest.raises(ValueError):
        hand_capacity(**{**PLATE, **change})


def _good_face():
    r = np.linspace(60.0, 75.0, 11)
    return balanced_face("cone", r, np.ones_like(r), 12.5, 2500.0)


@pytest.mark.parametrize("spoil", [
    lambda s: {**s, "pressure_MPa": s["pressure_MPa"][:-1]},
    lambda s: {**s, "normal_force_N": np.where(np.arange(11) == 3, np.nan, s["normal_force_N"])},
    lambda s: {**s, "normal_force_N": s["normal_force_N"] - 0.5 * s["normal_force_N"].max()},
    lambda s: {**s, "normal_force_N": np.zeros(11)},
    lambda s: {**s, "r_mm": s["r_mm"] + 1.0},
    lambda s: {k: v for k, v in s.items() if k != "normal_force_N"},
])
def test_impossible_surface_data_is_refused(spoil):
    with pytest.raises(ValueError):
        compare([spoil(_good_face())], hand_capacity(60.0, 75.0, 12.5, 0.3, 1, 2500.0))


def test_surface_count_and_required_torque_are_checked():
    h3 = hand_capacity(60.0, 75.0, 12.5, 0.3, 3, 2500.0)
    with pytest.raises(ValueError, match="friction_surfaces"):
        compare([_good_face(), _good_face()], h3)
    with pytest.raises(ValueError):
        compare([], h3)
    h1 = hand_capacity(60.0, 75.0, 12.5, 0.3, 1, 2500.0)
    with pytest.raises(ValueError):
        compare([_good_face()], h1, required_torque_Nm=0.0)
    with pytest.raises(ValueError):
        compare([_good_face()], h1, required_torque_Nm=100.0, service_factor=-1.0)
