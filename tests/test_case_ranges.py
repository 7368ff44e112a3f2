"""Plausible ranges, one round of problems, and messages that blame only what the user wrote."""
from __future__ import annotations

import math

import pytest

from clutchfe.case import CaseError, case_from_dict, with_tables
from clutchfe.schema import SCHEMA, _r

from .helpers.data import CONE, PLATE


def _problems(data: dict) -> list[str]:
    with pytest.raises(CaseError) as exc:
        case_from_dict(data)
    return exc.value.problems


def test_every_bounded_number_says_why_its_range_is_what_it_is():
    for table, keys in SCHEMA.items():
        for name, key in keys.items():
            if key.kind in (int, float) and not key.choices and (key.low is not None or key.high is not None):
                assert key.why, f"{table}.{name}"


def test_a_cone_that_self_locks_with_any_usable_friction_is_refused():
    # self-locking when tan(alpha) < mu (wedge friction, common practice); the least friction coefficient
    # allowed is 0.04 and tan(2°) = 0.035, so below 2° every cone allowed would lock
    assert math.tan(math.radians(2.0)) < SCHEMA["interface"]["friction_coefficient"].low
    (message,) = _problems(with_tables(CONE, interface={"semi_cone_angle": 1.5}))
    assert message.startswith("interface.semi_cone_angle = 1.5: out of range; allowed: 2 ≤ value ≤ 90 deg")
    # a usable angle that locks with this lining is solved, with a warning
    locking = case_from_dict(with_tables(CONE, interface={"semi_cone_angle": 5.0, "friction_coefficient": 0.3}))
    assert any("self-locks" in w for w in locking.warnings)


def test_radii_typed_in_metres_get_a_hint():
    problems = _problems(with_tables(PLATE, interface={"inner_radius": 0.08, "outer_radius": 0.12}))
    assert len(problems) == 2
    assert "(mm expected: 0.12 m is 120 mm)" in problems[1]
    # and no message about a lining thickness derived from 0.12 mm (it would round to 0)
    assert not any(p.startswith("lining.") for p in problems)


def test_moduli_typed_in_gigapascal_get_a_hint():
    (message,) = _problems(with_tables(PLATE, disc={"youngs_modulus": 210.0}))
    assert "(MPa expected: 210 GPa is 210000 MPa)" in message


def test_every_problem_of_a_file_comes_in_one_round():
    data = with_tables(PLATE, interface={"inner_radius": 130.0}, lining={"poissons_ratio": 0.7},
                       disc={"core_thickness": 0.1}, counter_plate={"colour": "red"})
    problems = _problems(data)
    assert [p.split(" ")[0].rstrip(":") for p in problems] == [
        "counter_plate.colour", "lining.poissons_ratio", "disc.core_thickness", "interface.inner_radius"]
    # fixing the radius brings no new problems: the rest was checked already
    fixed = with_tables(data, interface={"inner_radius": 80.0})
    assert len(_problems(fixed)) == len(problems) - 1


def test_no_message_blames_a_default_derived_from_a_wrong_radius():
    # r1 > r2: the plate radii default from r1 and r2 (inner 0.05 (r2 − r1) inside r1, …): a check of them
    # would print ranges made of the wrong radii ("16 < value < -31.5 mm")
    problems = _problems(with_tables(PLATE, interface={"inner_radius": 130.0}))
    assert len(problems) == 1 and problems[0].startswith("interface.inner_radius = 130:")


def test_a_mean_face_pressure_no_lining_survives_is_refused():
    # 20 MPa mean is far above any lining's rating (0.1–3.5 MPa, from memory)
    area = math.pi * (120.0 ** 2 - 80.0 ** 2)
    (message,) = _problems(with_tables(PLATE, load={"axial_force": 25.0 * area}))
    assert message.startswith("load.axial_force =") and "mean face pressure of 25 MPa" in message
    case_from_dict(with_tables(PLATE, load={"axial_force": 19.0 * area}))


def test_limit_cases_of_the_physics_may_have_near_rigid_bodies():
    rigid = with_tables(PLATE, disc={"youngs_modulus": 4e11})
    (message,) = _problems(rigid)
    assert message.startswith("disc.youngs_modulus = 400000000000.0: out of range")
    assert case_from_dict(rigid, limit_case=True).disc.youngs_modulus == 4e11
    # the equations' own range still holds
    with pytest.raises(CaseError):
        case_from_dict(with_tables(PLATE, disc={"youngs_modulus": -1.0}), limit_case=True)


@pytest.mark.parametrize("value, expected", [(0.000123456, 0.000123), (2.5e-9, 2.5e-9), (1.8345, 1.83), (0.0, 0.0), (123.456, 123.46)])
def test_derived_sizes_keep_three_figures_and_are_never_rounded_to_zero(value, expected):
    assert _r(value) == pytest.approx(expected)
    assert (_r(value, 4) > 0) == (value > 0)


def test_a_huge_integer_is_refused_not_overflowed():
    (message,) = _problems(with_tables(PLATE, load={"axial_force": 10 ** 400}))
    assert message.startswith("load.axial_force = 1000") and "must be a finite number" in message


def test_thousands_of_problems_are_summarised():
    data = dict(PLATE, **{f"extra{k}": 1 for k in range(300)})
    problems = _problems(data)
    assert len(problems) == 51 and problems[-1] == "… and 250 more problems (fix these first)"
