"""Spline drag in a plate pack ([splines]): the closed form, the FE pack against it, μ_s = 0, the keys.

The closed-form load decay of a pack of rigid plates is the one derived in clutchfe.analyses.pack.drag from the
axial force balance of each plate (the effect treated in "The Consequences of Spline Friction in Multiple Disk
Systems", ASME J. Lubrication Technology 90 (1968) 65).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from clutchfe.analyses.pack import pack_of_case, rigid_pack_forces, splined_plates
from clutchfe.case import case_from_dict, with_tables
from clutchfe.comparison import hand_of
from clutchfe.geometry import build_section
from clutchfe.schema import SCHEMA
from clutchfe.solve import SolveService, stiffness_key
from clutchfe.spline_checks import PITCH_TOLERANCE
from clutchfe.study.spec import Grid, study_from_dict
from clutchfe.verification.spline_drag import TEST_PACK, no_spline_friction, rigid_pack_decay

from tests.helpers.case_checks import check_answer, outside, problems_of
from tests.helpers.data import CONE, PLATE, write_toml

DECAY = "ASME J. Lubrication Technology 90 (1968) 65; force balance of each plate (clutchfe.analyses.pack.drag)"
PACK = with_tables(PLATE, interface={"friction_surfaces": 4},
                   mesh={"interface_element_size": 2.0, "edge_element_size": 0.8, "element_size": 8.0})
SPLINED = with_tables(PACK, splines={"friction_coefficient": 0.12})


# --- the closed form ----------------------------------------------------------------------------


def test_rigid_pack_with_equal_gains_is_a_geometric_series():
    # F_k = W q^(k-1) / (1 + a0), q = (1 - a)/(1 + a); Σ F_k = W (1 - q^n) / ((1 - q)(1 + a0))  [DECAY]
    W, a0, a, n = 5000.0, 0.04, 0.07, 10
    forces = rigid_pack_forces(W, [a0] + [a] * (n - 1))
    q = (1.0 - a) / (1.0 + a)
    expected = W * q ** np.arange(n) / (1.0 + a0)
    assert np.max(np.abs(forces / expected - 1.0)) <= 1e-14      # the same arithmetic, round-off only
    assert abs(forces.sum() - W * (1.0 - q ** n) / ((1.0 - q) * (1.0 + a0))) <= 1e-9 * W


def test_rigid_pack_balance_of_every_plate():
    # plate j: F_j − F_(j+1) = a_j (F_j + F_(j+1)); pressure plate: W − F_1 = a_0 F_1  [DECAY]
    gains = [0.05, 0.11, 0.03, 0.11, 0.03, 0.11]
    W = 2600.0
    f = rigid_pack_forces(W, gains)
    assert abs(W - f[0] - gains[0] * f[0]) <= 1e-12 * W
    for j, a in enumerate(gains[1:]):
        assert abs(f[j] - f[j + 1] - a * (f[j] + f[j + 1])) <= 1e-12 * W
    assert np.all(rigid_pack_forces(W, [0.0] * 6) == W)           # no spline friction: W everywhere


# --- the FE pack ------------------------------------------------------------------------------------


@pytest.mark.slow
def test_verification_rows_of_the_rigid_pack_pass():
    rows = rigid_pack_decay() + no_spline_friction()
    assert rows and all(r.passed for r in rows), [r for r in rows if not r.passed]


@pytest.mark.slow
def test_rigid_pack_rows_fail_for_a_drag_of_the_wrong_size():
    # a drag twice the friction (μ_s doubled in the FE, compared with the closed form at μ_s) is caught
    rows = rigid_pack_decay(0.3)
    reference = rigid_pack_forces(TEST_PACK["load"]["axial_force"], [r / 2 for r in _gains(0.3)])
    assert abs(rows[0].computed / reference[-1] - 1.0) > 10 * rows[0].tolerance


def _gains(mu_spline):
    case = case_from_dict(with_tables(TEST_PACK, splines={"friction_coefficient": mu_spline}), limit_case=True)
    r_up = hand_of(case).radius_uniform_pressure_mm
    mu = case.interface.friction_coefficient
    return [p.friction_coefficient * mu * r_up / p.pitch_radius_mm for p in splined_plates(case, build_section(case))]


def _pack(data):
    case = case_from_dict(data)
    solved = SolveService().solve(case, fields=False)
    return solved, pack_of_case(solved, hand_of(case))


def test_no_spline_friction_is_the_pack_without_it_exactly():
    # limit case: μ_s = 0 on every plate is today's solve, to the last bit (common practice)
    solved, pack = _pack(with_tables(PACK, splines={"friction_coefficient": 0.0}))
    for a, b in zip(pack.fe.interfaces, solved.fe.interfaces):
        assert np.array_equal(a.normal_force, b.normal_force)
    assert pack.efficiency == 1.0 and pack.iterations == 1
    assert all(s.axial_force_N == s.axial_force_without_drag_N for s in pack.surfaces)


def _assert_every_plate_in_balance(pack):
    # F_in − F_out = μ_s T / R_s (the plate's balance; the fixed point stops at 1e-10 W)
    W = PACK["load"]["axial_force"]
    forces = [W] + [s.axial_force_N for s in pack.surfaces]
    for j, plate in enumerate(pack.plates):
        drag = plate.friction_coefficient * 1000.0 * plate.torque_Nm / plate.pitch_radius_mm
        assert abs(forces[j] - forces[j + 1] - drag) <= 1e-8 * W
    assert pack.torque_Nm < pack.torque_without_drag_Nm


def test_elastic_pack_keeps_each_plate_in_balance_and_loses_torque():
    solved, pack = _pack(SPLINED)
    _assert_every_plate_in_balance(pack)
    # every further surface carries less: the drag only holds force back
    assert all(b.axial_force_N < a.axial_force_N for a, b in zip(pack.surfaces, pack.surfaces[1:]))
    # the closed form at R_up to within what the plates' dishing under the drag on their splined edges moves the
    # surfaces' radii (R_k off R_up by a few %, the efficiency by the gain times that: 1.2 % measured)
    assert abs(pack.efficiency_rigid_plates / pack.efficiency - 1.0) <= 0.03
    assert 80.0 < pack.effective_radius_mm < 120.0 and abs(pack.capacity_position) < 3.0


# --- keys --------------------------------------------------------------------------------------------


def test_splines_table_defaults():
    case = case_from_dict(SPLINED)
    sp = case.splines
    assert (sp.disc_spline, sp.separator_spline, sp.pressure_plate_spline) == ("inner", "outer", "outer")
    assert sp.disc_friction_coefficient == sp.separator_friction_coefficient == 0.12
    assert sp.disc_pitch_radius == case.disc.core_inner_radius
    assert sp.separator_pitch_radius == case.separator_plate.outer_radius
    assert sp.pressure_plate_pitch_radius == case.pressure_plate.outer_radius
    outer = case_from_dict(with_tables(SPLINED, splines={"disc_spline": "outer"}))
    assert outer.splines.disc_pitch_radius == outer.disc.core_outer_radius
    assert case_from_dict(PACK).splines is None


def test_spline_keys_leave_the_stiffness_group_alone():
    assert stiffness_key(case_from_dict(SPLINED)) == stiffness_key(case_from_dict(PACK))


@pytest.mark.parametrize("key", [k for k, spec in SCHEMA["splines"].items() if spec.kind is float])
def test_out_of_range_spline_key_exits_2_naming_it(tmp_path, capsys, key):
    value = outside(SCHEMA["splines"][key])
    code, err = check_answer(tmp_path, capsys, with_tables(SPLINED, splines={key: value}))
    assert code == 2 and f"splines.{key} = {value:g}" in err and "allowed" in err and "Traceback" not in err


def test_missing_friction_coefficient_and_unknown_side():
    problems = problems_of(with_tables(PACK, splines={"disc_spline": "middle"}))
    assert any(p.startswith("splines.friction_coefficient: missing") for p in problems)
    assert any(p.startswith("splines.disc_spline = 'middle'") and "'inner', 'outer'" in p for p in problems)


def test_pitch_radius_far_from_its_edge_is_refused():
    edge = case_from_dict(SPLINED).disc.core_inner_radius
    radius = edge * (1.0 + 2 * PITCH_TOLERANCE)
    problems = problems_of(with_tables(SPLINED, splines={"disc_pitch_radius": radius}))
    assert any(p.startswith(f"splines.disc_pitch_radius = {radius:g}") and "disc.core_inner_radius" in p
               for p in problems)


def test_a_plate_that_would_lock_on_its_splines_is_refused():
    # gain μ_s μ r2 / R_s = 0.5 · 0.6 · 120 / 34 = 1.06 ≥ 1: no force passes the plate (drag.py)
    data = with_tables(SPLINED, interface={"friction_coefficient": 0.6},
                       splines={"friction_coefficient": 0.5, "disc_pitch_radius": 34.0}, disc={"core_inner_radius": 40.0})
    problems = problems_of(data)
    assert any(p.startswith("splines.disc_friction_coefficient = 0.5") and "hold back all the force" in p
               and "value < 0.472" in p for p in problems), problems
    assert not any(p.startswith("splines.separator_friction_coefficient") for p in problems)   # 0.5·0.6·120/(r_out)


def test_splines_belong_to_plate_cases_and_run_alone():
    assert any("belongs to plate cases only" in p
               for p in problems_of(with_tables(CONE, splines={"friction_coefficient": 0.1})))
    both = problems_of(with_tables(SPLINED, speed={"running_speed": 2000.0}))
    assert any(p.startswith("[splines]: given with [speed]") for p in both)
    tilted = problems_of(with_tables(SPLINED, misalignment={"axis_tilt": 0.05}))
    assert any(p.startswith("misalignment.axis_tilt = 0.05") and "[splines]" in p for p in tilted)


def test_a_study_can_vary_every_spline_number(tmp_path):
    base = write_toml(tmp_path / "pack.toml", SPLINED)
    keys = [k for k, spec in SCHEMA["splines"].items() if spec.kind is float]
    vary = [{"key": f"splines.{k}", "values": [0.05, 0.1] if "friction" in k else [79.0, 80.0]} for k in keys]
    study = study_from_dict({"name": "s", "base_case": base.name, "vary": vary}, tmp_path / "s.study.toml")
    assert sorted(g.key for g in study.grids) == sorted(f"splines.{k}" for k in keys)


def test_a_study_refuses_spline_keys_on_a_base_without_splines(tmp_path):
    from clutchfe.case import CaseError
    base = write_toml(tmp_path / "pack.toml", PACK)
    with pytest.raises(CaseError) as exc:
        study_from_dict({"name": "s", "base_case": base.name,
                         "vary": [{"key": "splines.friction_coefficient", "values": [0.1, 0.2]}]},
                        tmp_path / "s.study.toml")
    assert any("splines.friction_coefficient" in p and "no [splines] table" in p for p in exc.value.problems)


def test_spline_drag_carries_a_measured_lining_curve():
    # a wet pack's lining given by its curve: the drag's solves carry the same layer as the case's own solve, so
    # μ_s = 0 is that solve to the last bit, and with friction every plate stays in balance (limit case; the
    # balance of ASME J. Lubrication Technology 90 (1968) 65)
    curve = {"deflection": [0.01, 0.03], "pressure": [0.1, 0.6]}
    solved, pack = _pack(with_tables(PACK, lining_curve=curve, splines={"friction_coefficient": 0.0}))
    assert solved.layer_curves is not None
    for a, b in zip(pack.fe.interfaces, solved.fe.interfaces):
        assert np.array_equal(a.normal_force, b.normal_force) and np.any(a.layer_deflection > 0)
    solved, pack = _pack(with_tables(PACK, lining_curve=curve, splines={"friction_coefficient": 0.12}))
    _assert_every_plate_in_balance(pack)
    assert all(np.any(itf.layer_deflection > 0) for itf in pack.fe.interfaces)
