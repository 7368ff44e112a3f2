"""Lining and cushion compression curves ([lining_curve], [cushion]): keys, the case-level solve, the analysis.

Sources: the Winkler foundation as the thin-layer limit of a ν = 0 lining, p = (E / t) d (Johnson, Contact
Mechanics, Cambridge 1985, §5.8); springs in series add their compliances (common practice); uniform pressure
W / A on a flat rigid stack (common practice).  Curve values are invented (demo-like).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from clutchfe.case import case_from_dict, with_tables
from clutchfe.comparison import compare_solved, hand_of
from clutchfe.plan import analyse, summary_of
from clutchfe.schema import SCHEMA
from clutchfe.solve import SolveService, stiffness_key
from clutchfe.study.spec import study_from_dict

from tests.helpers.case_checks import check_answer, outside, problems_of
from tests.helpers.data import CONE, PLATE, write_toml
from tests.helpers.solving import run_quietly

CURVE = {"deflection": [0.01, 0.025, 0.04, 0.05], "pressure": [0.05, 0.2, 0.5, 0.8]}
CUSHION = {"deflection": [0.15, 0.3, 0.45, 0.55], "force": [1200.0, 3000.0, 5600.0, 8500.0]}
QUICK = {"verification": {"mesh_study": False}}
LINED = with_tables(PLATE, lining_curve=CURVE, **QUICK)
CUSHIONED = with_tables(PLATE, lining_curve=CURVE, cushion=CUSHION, **QUICK)


# --- keys ------------------------------------------------------------------------------------------------------


def test_tables_give_the_points_and_a_scale():
    case = case_from_dict(CUSHIONED)
    assert case.lining_curve_points.deflection_mm == tuple(CURVE["deflection"])
    assert case.cushion_points.values == tuple(CUSHION["force"])
    assert case.lining_curve.deflection_scale == case.cushion.deflection_scale == 1.0
    flat = case.flat()
    assert flat["lining_curve.pressure"] == CURVE["pressure"] and flat["cushion.force"] == CUSHION["force"]
    plain = case_from_dict(PLATE)
    assert plain.lining_curve is None and plain.lining_curve_points is None and plain.cushion is None


@pytest.mark.parametrize("table, bad, expected", [
    ("lining_curve", {"deflection": [0.01, 0.005], "pressure": [0.1, 0.2]}, "lining_curve.deflection[1] = 0.005"),
    ("lining_curve", {"deflection": [0.01, 0.02], "pressure": [0.2, 0.2]}, "lining_curve.pressure[1] = 0.2"),
    ("lining_curve", {"deflection": [0.01], "pressure": [0.1, 0.2]}, "lining_curve.pressure: 2 values for 1"),
    ("lining_curve", {"deflection": "0.01", "pressure": [0.1]}, "lining_curve.deflection = '0.01'"),
    ("lining_curve", {"pressure": [0.1]}, "lining_curve.deflection: missing"),
    ("lining_curve", {"deflection": [0.01, float("nan")], "pressure": [0.1, 0.2]}, "lining_curve.deflection[1]"),
    ("lining_curve", {"deflection": [3.0], "pressure": [0.1]}, "cannot compress by its whole lining.thickness"),
    ("lining_curve", {"deflection": [1e-5], "pressure": [2.0]}, "secant modulus"),       # µm typed as mm
    ("lining_curve", {"deflection": [0.01], "pressure": [80.0]}, "lining_curve.pressure[0] = 80"),
    ("cushion", {"deflection": [5.0], "force": [100.0]}, "cushion.deflection[0] = 5"),
    ("cushion", {"deflection": [0.5], "force": [5e7]}, "cushion.force[0] = 5e+07"),
])
def test_bad_curve_exits_2_naming_the_key(tmp_path, capsys, table, bad, expected):
    code, err = check_answer(tmp_path, capsys, with_tables(PLATE, **{table: bad}))
    assert code == 2 and expected in err and "allowed" in err and "Traceback" not in err, err


def test_curves_refused_where_this_version_cannot_run_them():
    assert any("belongs to plate cases only" in p for p in problems_of(with_tables(CONE, cushion=CUSHION)))
    assert any(p.startswith("[lining_curve]: given with [speed]")
               for p in problems_of(with_tables(LINED, speed={"running_speed": 2000.0})))
    assert any(p.startswith("misalignment.axis_tilt = 0.05") and "[lining_curve]" in p
               for p in problems_of(with_tables(LINED, misalignment={"axis_tilt": 0.05})))
    assert any(p.startswith("lining.youngs_modulus = 300") and "[lining_curve]" in p
               for p in problems_of(with_tables(LINED, lining={"youngs_modulus": 300.0})))
    assert any(p.startswith("lining.bonded_to = 'plates'")
               for p in problems_of(with_tables(PLATE, cushion=CUSHION, lining={"bonded_to": "plates"})))
    assert any(p.startswith("lining_curve.colour: unknown key") and "deflection, pressure" in p
               for p in problems_of(with_tables(PLATE, lining_curve={**CURVE, "colour": 1})))


def test_the_points_leave_the_stiffness_group_alone_but_a_curve_does_not():
    # the meshed carrier's modulus follows the steepest segment (30 MPa/mm in CURVE): other points with it share
    other = with_tables(PLATE, lining_curve={"deflection": [0.02, 0.03], "pressure": [0.1, 0.4]}, **QUICK)
    assert stiffness_key(case_from_dict(LINED)) == stiffness_key(case_from_dict(other))
    steeper = with_tables(PLATE, lining_curve={"deflection": [0.02, 0.03], "pressure": [0.1, 0.5]}, **QUICK)
    assert stiffness_key(case_from_dict(LINED)) != stiffness_key(case_from_dict(steeper))
    assert stiffness_key(case_from_dict(LINED)) != stiffness_key(case_from_dict(with_tables(PLATE, **QUICK)))
    # a cushion alone keeps the linear lining: the case's own model
    assert stiffness_key(case_from_dict(with_tables(PLATE, cushion=CUSHION, **QUICK))) == \
        stiffness_key(case_from_dict(with_tables(PLATE, **QUICK)))


def test_a_study_can_vary_the_curves_along_both_axes(tmp_path):
    base = write_toml(tmp_path / "lined.toml", CUSHIONED)
    keys = [f"{t}.{k}" for t in ("lining_curve", "cushion") for k in SCHEMA[t]]
    vary = [{"key": key, "values": [0.8, 1.2]} for key in keys]
    study = study_from_dict({"name": "s", "base_case": base.name, "vary": vary}, tmp_path / "s.study.toml")
    assert sorted(g.key for g in study.grids) == sorted(keys) and len(keys) == 4


def test_the_scales_stretch_the_curves_the_solve_uses():
    case = case_from_dict(with_tables(CUSHIONED, lining_curve={**CURVE, "deflection_scale": 1.5, "pressure_scale": 0.8},
                                      cushion={**CUSHION, "force_scale": 1.25}))
    curves = SolveService().solve(case, fields=False).layer_curves
    assert np.allclose(curves.lining.deflection_mm[1:], 1.5 * np.array(CURVE["deflection"]), rtol=1e-15, atol=0)
    assert np.allclose(curves.lining.pressure_MPa[1:], 0.8 * np.array(CURVE["pressure"]), rtol=1e-15, atol=0)
    area = math.pi * (120.0 ** 2 - 80.0 ** 2)
    # the cushion: its points, then the flat part it gets past the last one (fem.compliant_layer.SOLID_STIFFENING)
    assert np.allclose(curves.cushion.pressure_MPa[1:-1] * area, 1.25 * np.array(CUSHION["force"]), rtol=1e-12, atol=0)


@pytest.mark.parametrize("table, key", [(t, k) for t in ("lining_curve", "cushion") for k in SCHEMA[t]])
def test_out_of_range_scale_exits_2_naming_it(tmp_path, capsys, table, key):
    value = outside(SCHEMA[table][key])
    code, err = check_answer(tmp_path, capsys, with_tables(CUSHIONED, **{table: {key: value}}))
    assert code == 2 and f"{table}.{key} = {value:g}" in err and "allowed" in err and "Traceback" not in err


# --- the case-level solve -----------------------------------------------------------------------------------------


def _solved(data):
    return SolveService().solve(case_from_dict(data), fields=False)


def _r_eff(fe):
    return sum(float(np.sum(i.normal_force * i.r)) for i in fe.interfaces) / \
        sum(float(np.sum(i.normal_force)) for i in fe.interfaces)


def test_a_straight_curve_reproduces_the_thin_linear_lining_of_the_case():
    # the default plate with a ν = 0 lining of E against the straight curve p = (E / t) d (Johnson 1985, §5.8);
    # coned so the pressure varies.  The case's continuum lining carries shear between neighbouring points and
    # bends with the core; the layer's meshed carrier (10 × stiffer, solve.model) bends a little more, the layer
    # itself carries no shear
    coned = {"misalignment": {"coning": 0.02}}
    linear = _solved(with_tables(PLATE, lining={"poissons_ratio": 0.0, "youngs_modulus": 400.0}, **coned, **QUICK))
    t = case_from_dict(PLATE).lining.thickness
    straight = {"deflection": [1.0 * t / 400.0], "pressure": [1.0]}
    curve = _solved(with_tables(PLATE, lining={"poissons_ratio": 0.0}, lining_curve=straight, **coned, **QUICK))
    gap_r = case_from_dict(PLATE).interface.outer_radius - case_from_dict(PLATE).interface.inner_radius
    shift = abs(_r_eff(curve.fe) - _r_eff(linear.fe)) / gap_r          # on the scale of ξ
    assert shift <= 5e-4, shift                     # measured 5.8e-5 (2 µm of 94 mm)
    peak = [max(float(i.pressure.max()) for i in s.fe.interfaces) for s in (curve, linear)]
    assert abs(peak[0] / peak[1] - 1.0) <= 0.005, peak     # measured 0.25 %


def test_rigid_stack_lands_on_the_curve_and_the_scale_stretches_it():
    # a flat plate pack under a uniform load: p = W / A everywhere; the layer at D(W / A); twice the scale, twice
    stiff = {"pressure_plate": {"youngs_modulus": 700000.0}, "counter_plate": {"youngs_modulus": 700000.0},
             "disc": {"youngs_modulus": 700000.0}}
    case = case_from_dict(with_tables(LINED, **stiff))
    solved = SolveService().solve(case, fields=False)
    area = math.pi * (case.interface.outer_radius ** 2 - case.interface.inner_radius ** 2)
    p = case.load.axial_force / area
    d = float(solved.layer_curves.face.deflection(p))
    for itf in solved.fe.interfaces:
        assert np.max(np.abs(itf.pressure / p - 1.0)) <= 0.02       # the bodies' own bending, 700 GPa
        assert abs(float(np.mean(itf.layer_deflection)) / d - 1.0) <= 0.02
    doubled = SolveService().solve(case_from_dict(with_tables(LINED, **stiff, lining_curve={**CURVE,
                                                                                          "deflection_scale": 2.0})),
                                   fields=False)
    ratio = np.mean(doubled.fe.interfaces[0].layer_deflection) / np.mean(solved.fe.interfaces[0].layer_deflection)
    assert abs(ratio - 2.0) <= 0.02


# --- the analysis ----------------------------------------------------------------------------------------------------


def _summary(data):
    result = analyse(case_from_dict(data))
    return result, summary_of(result)


def test_cushion_spreads_the_pressure_of_a_coned_plate():
    # a coned pressure plate crowds the pressure at the bore; the soft cushion in series evens it out
    data = with_tables(CUSHIONED, misalignment={"coning": 0.08})
    result, s = _summary(data)
    assert s["torque_without_cushion_Nm"] < s["torque_fe_Nm"]
    assert s["peak_pressure_without_cushion_MPa"] > 1.5 * s["peak_pressure_MPa"]
    assert abs(s["capacity_position"]) < abs(s["capacity_position_without_cushion"])
    # the nominal point: W / A and the layer's D there, lining plus half the cushion (springs in series)
    area = math.pi * (120.0 ** 2 - 80.0 ** 2)
    p = 4000.0 / area
    assert abs(s["curve_nominal_pressure_MPa"] / p - 1.0) <= 1e-9
    assert abs(s["curve_nominal_deflection_mm"] - s["lining_deflection_at_nominal_mm"]
               - 0.5 * s["cushion_deflection_at_nominal_mm"]) <= 1e-12
    assert s["pressure_beyond_curve"] is False and "pressure beyond the measured compression curve" not in \
        s["failed_criteria"]
    assert len(s["curve_faces"]) == 2 and all(0.0 < f["mean_deflection_mm"] for f in s["curve_faces"])


def test_pressure_past_the_last_measured_point_is_a_failed_criterion():
    short = {"deflection": [0.01, 0.02], "pressure": [0.05, 0.1]}          # measured to 0.1 MPa only
    result, s = _summary(with_tables(PLATE, lining_curve=short, **QUICK))
    assert s["pressure_beyond_curve"] is True
    assert "pressure beyond the measured compression curve" in s["failed_criteria"]
    assert any("PAST THE MEASURED CURVE" in w for w in s["warnings"])


@pytest.mark.parametrize("table, bad, expected", [
    ("lining_curve", {"deflection": [10 ** 400], "pressure": [0.1]}, "lining_curve.deflection[0]"),
    ("cushion", {"deflection": [0.2, 0.4], "force": [1.2, 3.0]}, "cushion.force[1] = 3 (× force_scale 1)"),  # kN
])
def test_absurd_curve_numbers_exit_2_without_a_traceback(tmp_path, capsys, table, bad, expected):
    code, err = check_answer(tmp_path, capsys, with_tables(PLATE, **{table: bad}))
    assert code == 2 and expected in err and "allowed" in err and "Traceback" not in err, err


def test_a_cushion_pressed_flat_at_the_clamp_load_runs_and_says_so(tmp_path):
    # the usual design: the cushion is flat at the clamp load; no lining curve (the linear lining stays)
    data = with_tables(PLATE, cushion={"deflection": [0.3, 0.5], "force": [1000.0, 2000.0]}, **QUICK)
    folder, s, terminal = run_quietly(case_from_dict(data), tmp_path / "flat")
    assert s["cushion_flat_share"] == 1.0 and math.isfinite(s["curve_tangent_stiffness_at_nominal_MPa_per_mm"])
    assert any("pressed flat over 100 %" in w for w in s["curve_warnings"])
    assert s["curve_last_measured_pressure_MPa"] is None and s["pressure_beyond_curve"] is False
