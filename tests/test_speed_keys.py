"""The case keys of the speed analysis: [speed] and every material's strengths (and density).

Defaults, ranges (through `clutchfe check`, exit 2, key, value and range in the message), the rule that a
material of the user's own needs its own density and strengths, the relations ([speed] alone on the
axisymmetric section, a plausible rim speed, tensile ≥ yield), the stiffness group and the study keys.  No
solve here: the analysis itself is tested with its stage.
"""
from __future__ import annotations

import math

import pytest

from clutchfe.case import CaseError, case_from_dict, with_tables
from clutchfe.schema import SCHEMA, STRENGTH_KEYS, describe_range
from clutchfe.solve import stiffness_key
from clutchfe.speed_checks import MAX_RIM_SPEED
from clutchfe.study.spec import OUTPUTS, Grid, study_from_dict

from tests.helpers.case_checks import (check_answer as _check, drawn_cone as _drawn, outside as _outside,
                                       problems_of as _problems)
from tests.helpers.data import CONE, PLATE, write_toml

SPEED = {"running_speed": 3000.0}
FAST_PLATE = with_tables(PLATE, speed=SPEED)
FAST_CONE = with_tables(CONE, speed=SPEED)
BODY_TABLES = ("cone", "cup", "pressure_plate", "disc", "counter_plate", "separator_plate")


# --- defaults --------------------------------------------------------------------------------------


def test_without_a_speed_table_there_is_no_speed_analysis():
    case = case_from_dict(PLATE)
    assert case.speed is None
    assert not any(k.startswith("speed.") for k in case.flat())
    assert case_from_dict(FAST_PLATE).speed.running_speed == 3000.0


@pytest.mark.parametrize("table, expected", [
    # (yield MPa, tensile MPa)
    ("disc", (355.0, 470.0)),              # structural steel S355, EN 10025-2 (values from memory)
    ("separator_plate", (355.0, 470.0)),   # the same steel
    ("pressure_plate", (165.0, 250.0)),    # grey iron EN-GJL-250, EN 1561 Rm ≥ 250; 0.1 % proof from memory
    ("counter_plate", (165.0, 250.0)),     # the same iron
])
def test_strength_defaults_of_the_known_plate_materials(table, expected):
    case = case_from_dict(FAST_PLATE)
    assert tuple(getattr(getattr(case, table), k) for k in STRENGTH_KEYS) == expected


def test_cone_bodies_and_the_lining_have_the_strengths_of_their_materials():
    case = case_from_dict(FAST_CONE)
    # the cone is steel, the cup grey cast iron (as their moduli's defaults, 210 and 110 GPa)
    assert (case.cone.yield_strength, case.cone.tensile_strength) == (355.0, 470.0)     # S355, from memory
    assert (case.cup.yield_strength, case.cup.tensile_strength) == (165.0, 250.0)       # EN-GJL-250
    assert 20.0 <= case.lining.tensile_strength <= 40.0       # moulded organic facing 20–40 MPa, from memory
    assert not hasattr(case.lining, "yield_strength")          # a lining is not judged by yielding


def test_the_default_strengths_are_plausible_by_a_handbook_check():
    # grey iron is brittle: its 0.1 % proof stress is about 0.6–0.7 of its tensile strength; a structural
    # steel's yield ratio Re/Rm is 0.6–0.8 (both from memory): the defaults must lie inside those bands
    case = case_from_dict(FAST_PLATE)
    assert 0.6 <= case.pressure_plate.yield_strength / case.pressure_plate.tensile_strength <= 0.7
    assert 0.6 <= case.disc.yield_strength / case.disc.tensile_strength <= 0.8


def test_flat_holds_the_new_keys():
    flat = case_from_dict(with_tables(FAST_PLATE, disc={"yield_strength": 300.0})).flat()
    assert flat["speed.running_speed"] == 3000.0
    assert flat["disc.yield_strength"] == 300.0 and flat["disc.tensile_strength"] == 470.0
    assert flat["lining.tensile_strength"] == 30.0
    for table in ("pressure_plate", "disc", "counter_plate", "separator_plate"):
        assert {f"{table}.{k}" for k in STRENGTH_KEYS} <= set(flat), table


# --- ranges through the command line -----------------------------------------------------------------


NEW_KEYS = [("speed", "running_speed"), ("lining", "tensile_strength")] + \
           [(t, k) for t in ("disc", "pressure_plate", "counter_plate", "separator_plate") for k in STRENGTH_KEYS]
CONE_KEYS = [(t, k) for t in ("cone", "cup") for k in STRENGTH_KEYS]


@pytest.mark.parametrize("table, key", NEW_KEYS + CONE_KEYS, ids=[f"{t}.{k}" for t, k in NEW_KEYS + CONE_KEYS])
def test_every_new_key_refuses_a_value_out_of_its_range(tmp_path, capsys, table, key):
    spec = SCHEMA[table][key]
    assert spec.why                  # every range says why it is what it is
    base = FAST_CONE if table in ("cone", "cup") else FAST_PLATE
    for value in (_outside(spec), spec.high * 1.5):
        code, err = _check(tmp_path, capsys, with_tables(base, **{table: {key: value}}))
        assert code == 2, err
        assert "Traceback" not in err
        line = next(line for line in err.splitlines() if f"{table}.{key} = " in line)
        assert f"{value!r}" in line or f"{value:g}" in line, line
        assert describe_range(spec) in line, line


@pytest.mark.parametrize("table, key, value, allowed", [
    ("speed", "running_speed", 0.0, "0 < value ≤ 30000 rpm"),              # a standing clutch is the cold case
    ("speed", "running_speed", 30001.0, "0 < value ≤ 30000 rpm"),
    ("disc", "yield_strength", 10.0, "20 ≤ value ≤ 2500 MPa"),
    ("disc", "tensile_strength", 4000.0, "50 ≤ value ≤ 3000 MPa"),
    ("lining", "tensile_strength", 0.5, "1 ≤ value ≤ 500 MPa"),
])
def test_ranges_read_as_written(tmp_path, capsys, table, key, value, allowed):
    code, err = _check(tmp_path, capsys, with_tables(FAST_PLATE, **{table: {key: value}}))
    assert code == 2 and f"{table}.{key} = " in err and allowed in err, err


def test_a_strength_typed_in_gpa_gets_a_hint():
    # S355's 355 MPa typed as 0.355 (GPa): common practice
    problems = _problems(with_tables(FAST_PLATE, disc={"yield_strength": 0.355}))
    assert any("disc.yield_strength = 0.355" in p and "0.355 GPa is 355 MPa" in p for p in problems), problems


def test_running_speed_is_required_only_with_the_table(tmp_path, capsys):
    code, err = _check(tmp_path, capsys, with_tables(PLATE, speed={}))
    assert code == 2
    assert "speed.running_speed: missing; required (0 < value ≤ 30000 rpm)" in err, err
    code, _ = _check(tmp_path, capsys, PLATE)
    assert code == 0


# --- a material of the user's own needs its own density and strengths ------------------------------------


@pytest.mark.parametrize("base, table, typed", [
    (FAST_PLATE, "disc", {"youngs_modulus": 120000.0}),
    (FAST_PLATE, "counter_plate", {"poissons_ratio": 0.33}),
    (FAST_CONE, "cup", {"youngs_modulus": 100000.0}),
    (FAST_CONE, "cone", {"poissons_ratio": 0.29}),
])
def test_a_typed_body_material_needs_density_and_both_strengths(tmp_path, capsys, base, table, typed):
    code, err = _check(tmp_path, capsys, with_tables(base, **{table: dict(typed, yield_strength=300.0)}))
    assert code == 2
    name, value = next(iter(typed.items()))
    for key in ("density", "tensile_strength"):
        assert (f"{table}.{key}: missing; the {table.replace('_', ' ')}'s material was given ({name} = {value:g}), "
                f"so with [speed] its {key.replace('_', ' ')} must be given too") in err, err
        assert describe_range(SCHEMA[table][key]) in err
    assert f"{table}.yield_strength: missing" not in err             # typed
    full = dict(typed, density=8800.0, yield_strength=300.0, tensile_strength=450.0)
    case = case_from_dict(with_tables(base, **{table: full}))
    assert getattr(case, table).tensile_strength == 450.0
    bare = {k: v for k, v in base.items() if k != "speed"}
    case_from_dict(with_tables(bare, **{table: typed}))             # without [speed] nothing is needed


def test_a_typed_lining_needs_its_density_and_tensile_strength_only():
    problems = _problems(with_tables(FAST_PLATE, lining={"youngs_modulus": 600.0}))
    assert sorted(p.split(":")[0] for p in problems) == ["lining.density", "lining.tensile_strength"], problems
    case_from_dict(with_tables(FAST_PLATE, lining={"youngs_modulus": 600.0, "density": 2300.0,
                                                   "tensile_strength": 25.0}))


def test_a_drawn_region_needs_density_and_strengths_with_a_speed_table():
    data = _drawn()
    case = case_from_dict(data)                # without [speed] no strength is needed
    drawn = {r.name: r for r in case.section_file.regions}
    assert all(drawn[n].yield_strength is None and drawn[n].tensile_strength is None for n in ("cone", "cup"))
    assert drawn["cone_lining"].tensile_strength == SCHEMA["lining"]["tensile_strength"].default   # [lining]'s
    data["speed"] = dict(SPEED)
    problems = _problems(data)
    for region in ("cone", "cup"):
        for key in ("density", *STRENGTH_KEYS):
            assert any(p.startswith(f"section_file.regions.{region}.{key}: missing; the region's material was "
                                    "given") for p in problems), (region, key, problems)
    # the drawn demo's lining has its own youngs_modulus: [lining] needs density and tensile_strength
    assert any(p.startswith("lining.density: missing") for p in problems)
    assert any(p.startswith("lining.tensile_strength: missing") for p in problems)
    assert not any("cone_lining" in p for p in problems)          # a lining region takes [lining]'s
    data["section_file"]["regions"]["cone"].update(density=7850.0, yield_strength=355.0, tensile_strength=510.0)
    data["section_file"]["regions"]["cup"].update(density=7200.0, yield_strength=165.0, tensile_strength=250.0)
    data["lining"].update(density=2100.0, tensile_strength=28.0)
    regions = {r.name: r for r in case_from_dict(data).section_file.regions}
    assert (regions["cup"].yield_strength, regions["cup"].tensile_strength) == (165.0, 250.0)
    assert regions["cone"].density == 7850.0
    assert regions["cone_lining"].tensile_strength == 28.0 and regions["cone_lining"].yield_strength is None


def test_a_drawn_region_refuses_a_bad_strength_and_a_lining_region_any():
    data = _drawn()
    data["section_file"]["regions"]["cup"]["yield_strength"] = 5000.0
    data["section_file"]["regions"]["cone"].update(yield_strength=400.0, tensile_strength=300.0)
    data["section_file"]["regions"]["cone_lining"]["tensile_strength"] = 30.0
    problems = _problems(data)
    assert any(p.startswith("section_file.regions.cup.yield_strength = 5000.0: allowed: 20 ≤ value ≤ 2500 MPa")
               for p in problems), problems
    assert any(p.startswith("section_file.regions.cone.tensile_strength = 300: below "
                            "section_file.regions.cone.yield_strength = 400 MPa") for p in problems), problems
    assert any(p.startswith("section_file.regions.cone_lining.tensile_strength = 30.0: a lining region takes its "
                            "material from the [lining] table") for p in problems), problems


# --- relations ---------------------------------------------------------------------------------------


@pytest.mark.parametrize("data, text", [
    (with_tables(FAST_PLATE, misalignment={"axis_tilt": 0.1}),
     "misalignment.axis_tilt = 0.1: the speed analysis runs on the axisymmetric section in this version; "
     "allowed: 0, or remove [speed]"),
    (with_tables(FAST_CONE, misalignment={"radial_offset": 0.05}),
     "misalignment.radial_offset = 0.05: the speed analysis runs on the axisymmetric section"),
    (with_tables(FAST_PLATE, engagement={"slip_speed": 1500.0, "slip_time": 0.5}),
     "[speed]: given with [engagement], but a case runs one extra analysis of this kind"),
    (with_tables(FAST_PLATE, wear={"target_wear_volume": 100.0}),
     "[speed]: given with [wear], but a case runs one extra analysis of this kind"),
    (with_tables(FAST_PLATE, disc={"yield_strength": 600.0}),
     "disc.tensile_strength = 470 (the default material's): below disc.yield_strength = 600 MPa; allowed: "
     "tensile_strength ≥ yield_strength (600 MPa)"),
    (with_tables(PLATE, counter_plate={"yield_strength": 200.0, "tensile_strength": 180.0}),
     "counter_plate.tensile_strength = 180: below counter_plate.yield_strength = 200 MPa"),
])
def test_relations_are_refused_naming_key_value_and_what_to_do(tmp_path, capsys, data, text):
    code, err = _check(tmp_path, capsys, data)
    assert code == 2 and text in err, err
    assert "Traceback" not in err


def test_tensile_equal_to_yield_is_accepted():
    # a material with no strain hardening (Re = Rm) is a limit, not a contradiction (common practice)
    case = case_from_dict(with_tables(FAST_PLATE, disc={"yield_strength": 500.0, "tensile_strength": 500.0}))
    assert case.disc.yield_strength == case.disc.tensile_strength == 500.0


def test_the_rim_speed_bound_is_beyond_a_steel_ring_s_tensile_strength():
    # thin rotating ring: σ_θ = ρ v² (Timoshenko & Goodier, Theory of Elasticity, the rotating ring): at the
    # bound a steel ring (7850 kg/m³, common practice) carries more than S355's and grey iron's tensile strengths
    hoop_mpa = 7850.0 * MAX_RIM_SPEED ** 2 / 1e6
    assert hoop_mpa == pytest.approx(706.5, rel=1e-12)
    assert hoop_mpa > SCHEMA["disc"]["tensile_strength"].default > SCHEMA["counter_plate"]["tensile_strength"].default


def test_a_rim_speed_no_body_survives_is_refused():
    # the largest rim of the default plate is the counter plate: r2 + 0.1 (r2 − r1) = 124 mm; v = ω r, so the
    # bound is 300 / 0.124 rad/s = 23 104 rpm
    limit = MAX_RIM_SPEED / 0.124 * 60.0 / (2.0 * math.pi)
    (message,) = _problems(with_tables(PLATE, speed={"running_speed": 1.02 * limit}))
    assert message.startswith(f"speed.running_speed = {1.02 * limit:g}: gives a rim speed of 306 m/s at "
                              "counter_plate.outer_radius = 124 mm"), message
    assert f"0 < running_speed ≤ {limit:.4g} rpm" in message
    case_from_dict(with_tables(PLATE, speed={"running_speed": 0.98 * limit}))
    # a larger pressure plate is the fastest rim: 150 mm gives 300 / 0.15 rad/s = 19 099 rpm
    (message,) = _problems(with_tables(PLATE, pressure_plate={"outer_radius": 150.0},
                                       speed={"running_speed": 20000.0}))
    assert "at pressure_plate.outer_radius = 150 mm" in message and "running_speed ≤ 1.91e+04 rpm" in message


# --- the stiffness group -------------------------------------------------------------------------------


def test_speed_and_strength_keys_leave_the_stiffness_group_alone():
    base = stiffness_key(case_from_dict(PLATE))
    fast = with_tables(FAST_PLATE, disc={"yield_strength": 300.0, "tensile_strength": 450.0},
                       pressure_plate={"tensile_strength": 300.0}, lining={"tensile_strength": 20.0})
    assert stiffness_key(case_from_dict(fast)) == base
    assert stiffness_key(case_from_dict(with_tables(fast, speed={"running_speed": 6000.0}))) == base
    # a modulus is a stiffness (the disc's own material, so with its density and strengths)
    own = {"youngs_modulus": 200000.0, "density": 7800.0, "yield_strength": 300.0, "tensile_strength": 450.0}
    assert stiffness_key(case_from_dict(with_tables(fast, disc=own))) != base


# --- studies ---------------------------------------------------------------------------------------------


def _study(tmp_path, base: dict, *vary) -> dict:
    write_toml(tmp_path / "base.toml", base)
    return {"base_case": "base.toml", "vary": list(vary)}


@pytest.mark.parametrize("key, values", [
    ("speed.running_speed", [1000.0, 5000.0]), ("disc.yield_strength", [300.0, 355.0]),
    ("pressure_plate.tensile_strength", [250.0, 300.0]), ("lining.tensile_strength", [20.0, 40.0]),
    ("disc.density", [7800.0, 7900.0]),
])
def test_speed_keys_vary_like_any_other_key(tmp_path, key, values):
    study = study_from_dict(_study(tmp_path, FAST_PLATE, {"key": key, "values": values}), tmp_path / "s.study.toml")
    assert study.grids == (Grid(key, tuple(values)),)


@pytest.mark.parametrize("key, values, text", [
    ("speed.running_speed", [1000.0, 2000.0], "the base case has no [speed] table"),
    ("disc.yield_strength", [300.0, 355.0], "the base case has no [speed] table"),
    ("lining.tensile_strength", [20.0, 30.0], "the base case has no [speed] table"),
    ("disc.density", [7800.0, 7900.0], "the base case has no [engagement] table and no [speed] table"),
])
def test_a_study_refuses_speed_keys_its_base_would_not_use(tmp_path, key, values, text):
    data = _study(tmp_path, PLATE, {"key": key, "values": values})
    with pytest.raises(CaseError) as exc:
        study_from_dict(data, tmp_path / "s.study.toml")
    assert any(p.startswith(f"vary[0].key = '{key}': ") and text in p for p in exc.value.problems), exc.value.problems


def test_a_sweep_value_outside_a_speed_range_is_refused(tmp_path):
    data = _study(tmp_path, FAST_PLATE, {"key": "speed.running_speed", "values": [1000.0, 40000.0]})
    with pytest.raises(CaseError) as exc:
        study_from_dict(data, tmp_path / "s.study.toml")
    assert "vary[0].values: speed.running_speed = 40000 out of range; allowed: 0 < value ≤ 30000 rpm" \
        in exc.value.problems


def test_the_speed_outputs_can_be_chosen(tmp_path):
    assert {"speed_burst_margin", "peak_pressure_at_speed_MPa"} <= set(OUTPUTS)
    data = _study(tmp_path, FAST_PLATE, {"key": "speed.running_speed", "values": [1000.0, 2000.0]})
    study = study_from_dict(dict(data, outputs=["speed_burst_margin", "peak_pressure_at_speed_MPa"]),
                            tmp_path / "s.study.toml")
    assert study.outputs[-2:] == ("speed_burst_margin", "peak_pressure_at_speed_MPa")


def test_a_speed_key_is_no_limit_key(tmp_path):
    data = _study(tmp_path, with_tables(FAST_PLATE, requirement={"required_torque": 100.0}),
                  {"key": "interface.friction_coefficient", "values": [0.25, 0.3]})
    data["limit"] = {"key": "speed.running_speed", "low": 1000.0, "high": 5000.0}
    with pytest.raises(CaseError) as exc:
        study_from_dict(data, tmp_path / "s.study.toml")
    assert any(p.startswith("limit.key = 'speed.running_speed': the limit criteria are read on the cold case")
               for p in exc.value.problems), exc.value.problems
