"""The case keys of the hot engagement: [engagement], [cooling] and every material's thermal properties.

Defaults, ranges (through `clutchfe check`, exit 2, key, value and range in the message), the rule that a
material of the user's own needs its own thermal data, the relations between the keys, the stiffness
group and the study keys.  No solve here: the analysis itself is tested with its stage.
"""
from __future__ import annotations

import copy
import math

import pytest

from clutchfe.case import CaseError, case_from_dict, with_tables
from clutchfe.engagement_checks import MAX_HEAT_FLUX, MAX_RIM_SPEED, MAX_SLIP_ENERGY
from clutchfe.schema import SCHEMA, THERMAL_KEYS, describe_range
from clutchfe.solve import stiffness_key
from clutchfe.study.evaluate import sample_case
from clutchfe.study.spec import Grid, study_from_dict

from tests.helpers.case_checks import (check_answer as _check, drawn_cone as _drawn, outside as _outside,
                                       problems_of as _problems)
from tests.helpers.data import CONE, PLATE, write_toml

DUTY = {"slip_speed": 1500.0, "slip_time": 0.5}
HOT_PLATE = with_tables(PLATE, engagement=DUTY)
HOT_CONE = with_tables(CONE, engagement=DUTY)
NEW_TABLES = ("engagement", "cooling")


# --- defaults --------------------------------------------------------------------------------------


def test_without_an_engagement_table_there_is_no_engagement_and_cooling_has_its_defaults():
    case = case_from_dict(PLATE)
    assert case.engagement is None
    assert "engagement.slip_speed" not in case.flat()
    assert case.cooling.ambient_temperature == 20.0          # a room-temperature housing, common practice
    assert case.cooling.film_coefficient == 30.0             # a dry clutch in a ventilated housing, from memory
    # the three face groups take film_coefficient unless given
    cool = case_from_dict(with_tables(PLATE, cooling={"film_coefficient": 80.0, "film_coefficient_rims": 150.0}))
    assert (cool.cooling.film_coefficient_rims, cool.cooling.film_coefficient_bores,
            cool.cooling.film_coefficient_sides) == (150.0, 80.0, 80.0)


def test_engagement_defaults():
    eng = case_from_dict(with_tables(HOT_PLATE, cooling={"ambient_temperature": 35.0})).engagement
    assert (eng.slip_speed, eng.slip_time) == (1500.0, 0.5)
    assert eng.speed_law == "linear" and eng.engagements == 1
    assert (eng.dwell_time, eng.cool_down_time, eng.drag_torque) == (0.0, 0.0, 0.0)
    assert eng.driven_inertia is None and eng.heat_partition is None and eng.contact_conductance is None
    assert (eng.steps_per_engagement, eng.dwell_steps, eng.snapshots, eng.pressure_curves) == (100, 20, 20, 4)
    assert (eng.coupling_tolerance, eng.max_coupling_iterations) == (1e-6, 30)
    assert eng.initial_temperature == 35.0                   # default: the ambient


@pytest.mark.parametrize("table, expected", [
    # (k W/(m·K), ρ kg/m³, c J/(kg·K), α 1/K)
    ("disc", (50.0, 7850.0, 460.0, 12e-6)),                  # carbon steel, common practice
    ("separator_plate", (50.0, 7850.0, 460.0, 12e-6)),       # carbon steel, common practice
    ("pressure_plate", (50.0, 7200.0, 500.0, 11e-6)),        # grey cast iron, from memory
    ("counter_plate", (50.0, 7200.0, 500.0, 11e-6)),         # grey cast iron, from memory
    ("lining", (0.8, 2000.0, 1200.0, 20e-6)),                # moulded organic facing, from memory
])
def test_thermal_defaults_of_the_known_materials(table, expected):
    case = case_from_dict(HOT_PLATE)
    assert tuple(getattr(getattr(case, table), k) for k in THERMAL_KEYS) == pytest.approx(expected, rel=1e-12)


def test_cone_bodies_have_the_thermal_defaults_of_their_materials():
    case = case_from_dict(HOT_CONE)
    # the cone is steel, the cup grey cast iron (the moduli's defaults: 210 and 110 GPa)
    assert (case.cone.density, case.cup.density) == (7850.0, 7200.0)       # common practice / from memory
    assert (case.cone.expansion_coefficient, case.cup.expansion_coefficient) == (12e-6, 11e-6)


def test_the_defaults_are_plausible_by_a_handbook_check():
    # thermal diffusivity k/(ρ c) of carbon steel is about 1.2–1.4e-5 m²/s (from memory) and of grey cast
    # iron 1.2–1.5e-5; an organic facing ~3e-7 (from memory): the defaults must give these to ±30 %
    case = case_from_dict(HOT_PLATE)
    for table, diffusivity in (("disc", 1.3e-5), ("pressure_plate", 1.35e-5), ("lining", 3.3e-7)):
        t = getattr(case, table)
        assert t.thermal_conductivity / (t.density * t.specific_heat) == pytest.approx(diffusivity, rel=0.3), table


def test_flat_holds_the_new_keys():
    flat = case_from_dict(with_tables(HOT_PLATE, engagement={"heat_partition": 0.6})).flat()
    assert flat["engagement.slip_speed"] == 1500.0 and flat["engagement.heat_partition"] == 0.6
    assert flat["engagement.initial_temperature"] == 20.0 and flat["cooling.film_coefficient_sides"] == 30.0
    assert flat["disc.thermal_conductivity"] == 50.0 and flat["lining.specific_heat"] == 1200.0
    # every key of both tables that has a value (the optional ones not given have none)
    given = {f"engagement.{k}" for k, spec in SCHEMA["engagement"].items() if spec.default is not None
             or spec.table_required} | {"engagement.heat_partition"} | {f"cooling.{k}" for k in SCHEMA["cooling"]}
    assert given <= set(flat)


# --- ranges through the command line -----------------------------------------------------------------


NEW_KEYS = [(t, k) for t in NEW_TABLES for k, spec in SCHEMA[t].items()
            if spec.kind in (int, float) and not spec.choices] + \
           [(t, k) for t in ("disc", "pressure_plate", "lining") for k in THERMAL_KEYS]


@pytest.mark.parametrize("table, key", NEW_KEYS, ids=[f"{t}.{k}" for t, k in NEW_KEYS])
def test_every_new_key_refuses_a_value_out_of_its_range(tmp_path, capsys, table, key):
    spec = SCHEMA[table][key]
    assert spec.why                  # every range says why it is what it is
    value = _outside(spec)
    code, err = _check(tmp_path, capsys, with_tables(HOT_PLATE, **{table: {key: value}}))
    assert code == 2, err
    assert "Traceback" not in err
    line = next(line for line in err.splitlines() if f"{table}.{key} = " in line)
    assert f"{value!r}" in line or f"{value:g}" in line, line
    assert describe_range(spec) in line, line


@pytest.mark.parametrize("table, key, value, allowed", [
    ("engagement", "heat_partition", 1.2, "0 ≤ value ≤ 1"),                       # a fraction
    ("engagement", "speed_law", "exponential", "one of 'constant', 'linear', 'inertia'"),
    ("engagement", "engagements", 2.5, "1 ≤ value ≤ 1000"),                       # whole numbers
    ("cooling", "film_coefficient", -1.0, "0 ≤ value ≤ 20000 W/(m²·K)"),         # 0 = adiabatic
    ("cooling", "ambient_temperature", 500.0, "-60 ≤ value ≤ 200 °C"),
    ("disc", "thermal_conductivity", 0.0, "0.1 ≤ value ≤ 450 W/(m·K)"),
])
def test_ranges_read_as_written(tmp_path, capsys, table, key, value, allowed):
    code, err = _check(tmp_path, capsys, with_tables(HOT_PLATE, **{table: {key: value}}))
    assert code == 2 and f"{table}.{key} = " in err and allowed in err, err


def test_units_typed_the_usual_wrong_way_get_a_hint():
    # steel's 12e-6 /K typed as 12 (µm/(m·K)) and its 7850 kg/m³ as 7.85 (g/cm³): common practice
    problems = _problems(with_tables(HOT_PLATE, disc={"expansion_coefficient": 12.0, "density": 7.85}))
    assert any("disc.expansion_coefficient = 12.0" in p and "12 µm/(m·K) is 1.2e-05 1/K" in p for p in problems)
    assert any("disc.density = 7.85" in p and "7.85 g/cm³ is 7850 kg/m³" in p for p in problems)


def test_the_required_engagement_keys_are_required_only_with_the_table(tmp_path, capsys):
    code, err = _check(tmp_path, capsys, with_tables(PLATE, engagement={"speed_law": "constant"}))
    assert code == 2
    assert "engagement.slip_speed: missing; required (0 < value ≤ 30000 rpm)" in err
    assert "engagement.slip_time: missing; required (0 < value ≤ 600 s)" in err
    code, _ = _check(tmp_path, capsys, PLATE)
    assert code == 0


# --- a material of the user's own needs its own thermal data ---------------------------------------------


@pytest.mark.parametrize("base, table, typed", [
    (HOT_PLATE, "disc", {"youngs_modulus": 120000.0}),
    (HOT_PLATE, "counter_plate", {"poissons_ratio": 0.33}),
    (HOT_CONE, "cup", {"youngs_modulus": 100000.0}),
    (HOT_CONE, "lining", {"youngs_modulus": 600.0}),
])
def test_a_typed_material_needs_every_thermal_key_it_did_not_type(tmp_path, capsys, base, table, typed):
    data = with_tables(base, **{table: dict(typed, density=8500.0)})
    code, err = _check(tmp_path, capsys, data)
    assert code == 2
    name, value = next(iter(typed.items()))
    for key in ("thermal_conductivity", "specific_heat", "expansion_coefficient"):
        assert (f"{table}.{key}: missing; the {table.replace('_', ' ')}'s material was given ({name} = {value:g}), "
                "so its thermal properties must be given too") in err, err
        assert describe_range(SCHEMA[table][key]) in err
    assert f"{table}.density: missing" not in err                 # typed
    # all four given: valid; without [engagement]: not needed at all
    full = dict(typed, thermal_conductivity=40.0, density=8500.0, specific_heat=430.0, expansion_coefficient=13e-6)
    case = case_from_dict(with_tables(base, **{table: full}))
    assert getattr(case, table).specific_heat == 430.0
    bare = {k: v for k, v in base.items() if k != "engagement"}
    case_from_dict(with_tables(bare, **{table: typed}))


LINING_HEAT = {"thermal_conductivity": 0.6, "density": 2100.0, "specific_heat": 1100.0, "expansion_coefficient": 25e-6}
STEEL_HEAT = {"thermal_conductivity": 48.0, "density": 7850.0, "specific_heat": 470.0, "expansion_coefficient": 12e-6}


def test_a_drawn_region_needs_its_thermal_properties_with_an_engagement():
    data = _drawn()
    case_from_dict(data)                      # without [engagement] nothing thermal is needed
    data["engagement"] = dict(DUTY)
    problems = _problems(data)
    for region in ("cone", "cup"):
        for key in THERMAL_KEYS:
            assert any(p.startswith(f"section_file.regions.{region}.{key}: missing; the region's material was "
                                    "given") for p in problems), (region, key, problems)
    # the drawn demo's lining has its own youngs_modulus: [lining] needs its thermal keys too
    assert any(p.startswith("lining.thermal_conductivity: missing") for p in problems)
    assert not any("cone_lining" in p for p in problems)          # a lining region takes [lining]'s
    data["section_file"]["regions"]["cone"].update(STEEL_HEAT)
    data["section_file"]["regions"]["cup"].update(STEEL_HEAT, density=7200.0)
    data["lining"].update(LINING_HEAT)
    case = case_from_dict(data)
    regions = {r.name: r for r in case.section_file.regions}
    assert regions["cup"].density == 7200.0 and regions["cone"].thermal_conductivity == 48.0
    assert regions["cone_lining"].specific_heat == 1100.0          # from [lining]
    assert regions["cone_lining"].expansion_coefficient == 25e-6


def test_a_drawn_region_refuses_a_bad_thermal_value_and_a_lining_region_any():
    data = _drawn()
    data["section_file"]["regions"]["cup"]["expansion_coefficient"] = 1e-3
    data["section_file"]["regions"]["cone_lining"]["density"] = 2000.0
    problems = _problems(data)
    assert any(p.startswith("section_file.regions.cup.expansion_coefficient = 0.001: allowed: 5e-07 ≤ value ≤ "
                            "4e-05 1/K") for p in problems), problems
    assert any(p.startswith("section_file.regions.cone_lining.density = 2000.0: a lining region takes its "
                            "material from the [lining] table") for p in problems), problems


# --- relations ---------------------------------------------------------------------------------------


def _hot(**engagement):
    return with_tables(HOT_PLATE, engagement=engagement)


@pytest.mark.parametrize("data, text", [
    (with_tables(HOT_PLATE, misalignment={"axis_tilt": 0.1}),
     "misalignment.axis_tilt = 0.1: the hot engagement runs on the axisymmetric section in this version"),
    (with_tables(HOT_PLATE, misalignment={"radial_offset": 0.05}),
     "misalignment.radial_offset = 0.05: the hot engagement runs on the axisymmetric section"),
    (with_tables(HOT_PLATE, mesh={"friction_face_nodes": "independent"}),
     "mesh.friction_face_nodes = 'independent': the hot engagement needs the friction faces meshed node to node"),
    (_hot(speed_law="inertia"), "engagement.driven_inertia: missing; required with speed_law = 'inertia'"),
    (_hot(driven_inertia=0.5), "engagement.driven_inertia = 0.5: only used with engagement.speed_law = 'inertia'"),
    (_hot(speed_law="constant", drag_torque=5.0),
     "engagement.drag_torque = 5: only used with engagement.speed_law = 'inertia' (this case has 'constant')"),
    (_hot(heat_partition=0.5, contact_conductance=5000.0),
     "engagement.contact_conductance = 5000: with engagement.heat_partition no heat crosses the interface"),
    (_hot(initial_temperature=350.0), "engagement.initial_temperature = 350: 330 K from "
                                      "cooling.ambient_temperature = 20 °C; allowed: -280 ≤ value ≤ 320 °C"),
    (_hot(engagements=1000, steps_per_engagement=200, dwell_time=5.0),
     "engagement.engagements = 1000: with steps_per_engagement = 200 and dwell_steps = 20 the run has 219980 "
     "time steps; allowed: at most 100000"),
])
def test_relations_are_refused_naming_key_value_and_what_to_do(tmp_path, capsys, data, text):
    code, err = _check(tmp_path, capsys, data)
    assert code == 2 and text in err, err
    assert "Traceback" not in err


def test_a_rim_speed_no_facing_survives_is_refused():
    # r2 = 120 mm: 200 m/s is 200 / 0.12 rad/s = 15 915 rpm (v = ω r)
    limit = MAX_RIM_SPEED / 0.12 * 60.0 / (2.0 * math.pi)
    (message,) = _problems(_hot(slip_speed=16000.0, slip_time=0.01))
    assert message.startswith("engagement.slip_speed = 16000: gives a sliding speed of 201.1 m/s at r2")
    assert f"slip_speed ≤ {limit:.4g} rpm" in message


def test_a_frictional_power_no_clutch_survives_is_refused():
    # q = μ p ω r_m (uniform pressure at the mean radius): at 18 MPa mean, μ = 0.3, r_m = 0.1 m, the
    # 50 MW/m² bound is reached at ω = 50e6 / (0.3 × 18e6 × 0.1) = 92.6 rad/s, 884 rpm
    area = math.pi * (120.0 ** 2 - 80.0 ** 2)
    force = 18.0 * area
    omega = MAX_HEAT_FLUX / (0.3 * 18e6 * 0.1)
    rpm = omega * 60.0 / (2.0 * math.pi)
    (message,) = _problems(with_tables(HOT_PLATE, load={"axial_force": force},
                                       engagement={"slip_speed": 1.05 * rpm, "slip_time": 0.01}))
    assert "frictional power per face area at the start of slip is 52.5 MW/m²" in message, message
    case_from_dict(with_tables(HOT_PLATE, load={"axial_force": force},
                               engagement={"slip_speed": 0.95 * rpm, "slip_time": 0.01}))


def test_a_slip_energy_no_clutch_survives_is_refused():
    # linear law: E/A = q0 t / 2; the demo plate at 1500 rpm: q0 = 0.3 × 4000/(π(120² − 80²)) MPa × 157.08 rad/s
    # × 0.1 m, and the 100 MJ/m² bound gives t = 2 × 100e6 / q0
    q0 = 0.3 * 4000.0 / (math.pi * (120.0 ** 2 - 80.0 ** 2)) * 1e6 * 1500.0 * 2.0 * math.pi / 60.0 * 0.1
    t = 2.0 * MAX_SLIP_ENERGY / q0
    assert t < 600.0                           # inside slip_time's own range, so the relation is what refuses
    (message,) = _problems(_hot(slip_time=1.02 * t))
    assert message.startswith(f"engagement.slip_time = {1.02 * t:g}: the slip energy of one engagement is "
                              "about 102 MJ/m² of face"), message
    case_from_dict(_hot(slip_time=0.98 * t))
    # "constant" slips at full speed: twice the heat, refused at the same time
    assert _problems(_hot(slip_time=0.98 * t, speed_law="constant"))


def test_an_inertia_duty_is_checked_against_the_clutch_torque():
    # T = μ W r_m n = 0.3 × 4000 N × 0.1 m × 2 faces = 240 N·m (uniform pressure at the mean radius)
    (message,) = _problems(_hot(speed_law="inertia", driven_inertia=1.0, drag_torque=250.0))
    assert message.startswith("engagement.drag_torque = 250: the clutch's torque is about 240 N·m, so the slip "
                              "would never end; allowed: 0 ≤ value < 240 N·m")
    # lock-up t = I ω / (T − drag) = 1 × 157.08 / 240 = 0.65 s > slip_time 0.5: a warning, the run goes on
    case = case_from_dict(_hot(speed_law="inertia", driven_inertia=1.0))
    assert any("estimated lock-up takes 0.654 s" in w for w in case.warnings), case.warnings
    assert case.engagement.driven_inertia == 1.0


def test_wear_and_engagement_both_run_and_a_lone_cooling_table_is_a_warning():
    both = case_from_dict(with_tables(HOT_PLATE, wear={"target_wear_volume": 100.0}))
    assert "wear" in both.tables_given and both.engagement is not None
    assert any(w.startswith("[engagement] with [wear]: both run") for w in both.warnings)
    lone = case_from_dict(with_tables(PLATE, cooling={"film_coefficient": 50.0}))
    assert lone.engagement is None
    assert any(w.startswith("[cooling]: unused without an [engagement] table") for w in lone.warnings)


# --- the stiffness group -------------------------------------------------------------------------------


def test_engagement_cooling_and_thermal_keys_leave_the_stiffness_group_alone():
    base = stiffness_key(case_from_dict(PLATE))
    hot = with_tables(HOT_PLATE, engagement={"engagements": 5, "dwell_time": 30.0, "heat_partition": 0.5},
                      cooling={"ambient_temperature": 60.0, "film_coefficient_rims": 200.0},
                      disc={"thermal_conductivity": 30.0, "expansion_coefficient": 13e-6},
                      lining={"density": 2400.0}, pressure_plate={"specific_heat": 520.0})
    assert stiffness_key(case_from_dict(hot)) == base
    # a modulus is a stiffness (the disc's own material, so with its thermal data)
    other_disc = dict(STEEL_HEAT, youngs_modulus=200000.0)
    assert stiffness_key(case_from_dict(with_tables(hot, disc=other_disc))) != base
    assert stiffness_key(case_from_dict(with_tables(PLATE, lining={"youngs_modulus": 500.0}))) != base


# --- studies ---------------------------------------------------------------------------------------------


def _study(tmp_path, base: dict, *vary) -> dict:
    write_toml(tmp_path / "base.toml", base)
    return {"base_case": "base.toml", "vary": list(vary)}


@pytest.mark.parametrize("key, values", [
    ("engagement.slip_speed", [1000.0, 2000.0]), ("engagement.slip_time", [0.3, 0.6]),
    ("engagement.dwell_time", [0.0, 10.0]), ("engagement.engagements", [1, 3]),
    ("cooling.film_coefficient", [10.0, 100.0]), ("cooling.ambient_temperature", [0.0, 40.0]),
    ("disc.thermal_conductivity", [30.0, 50.0]), ("lining.expansion_coefficient", [15e-6, 30e-6]),
])
def test_engagement_keys_vary_like_any_other_key(tmp_path, key, values):
    study = study_from_dict(_study(tmp_path, HOT_PLATE, {"key": key, "values": values}), tmp_path / "s.study.toml")
    assert study.grids == (Grid(key, tuple(values)),)
    dist = study_from_dict(_study(tmp_path, HOT_PLATE, {"key": "engagement.slip_speed", "distribution": "normal",
                                                        "mean": 1500.0, "std_dev": 50.0}) | {"samples": 8},
                           tmp_path / "s.study.toml")
    assert dist.distributions[0].key == "engagement.slip_speed"


@pytest.mark.parametrize("base, key, values, text", [
    (PLATE, "engagement.slip_speed", [1000.0, 2000.0], "the base case has no [engagement] table"),
    (PLATE, "cooling.film_coefficient", [10.0, 50.0], "the base case has no [engagement] table"),
    (PLATE, "disc.density", [7800.0, 7900.0], "the base case has no [engagement] table"),
    (HOT_PLATE, "engagement.driven_inertia", [0.5, 1.0], "only used with engagement.speed_law = 'inertia'"),
    (HOT_PLATE, "engagement.drag_torque", [0.0, 5.0], "only used with engagement.speed_law = 'inertia'"),
])
def test_a_study_refuses_engagement_keys_its_base_would_not_use(tmp_path, base, key, values, text):
    data = _study(tmp_path, base, {"key": key, "values": values})
    with pytest.raises(CaseError) as exc:
        study_from_dict(data, tmp_path / "s.study.toml")
    assert any(p.startswith(f"vary[0].key = '{key}': ") and text in p for p in exc.value.problems), exc.value.problems


def test_a_sweep_value_outside_an_engagement_range_is_refused(tmp_path):
    data = _study(tmp_path, HOT_PLATE, {"key": "engagement.heat_partition", "values": [0.5, 1.5]})
    with pytest.raises(CaseError) as exc:
        study_from_dict(data, tmp_path / "s.study.toml")
    assert "vary[0].values: engagement.heat_partition = 1.5 out of range; allowed: 0 ≤ value ≤ 1" in exc.value.problems


def test_the_sample_cases_carry_the_varied_engagement_key():
    # a sample is the base file's tables with the varied key put in (clutchfe.study.evaluate.sample_case)
    case = sample_case(copy.deepcopy(HOT_PLATE), {"engagement.slip_speed": 900.0, "cooling.film_coefficient": 55.0},
                       "s")
    assert case.engagement.slip_speed == 900.0 and case.cooling.film_coefficient_bores == 55.0
