"""Case files: every invalid input exits 2 with one line naming the key; never a traceback."""
import copy
import subprocess
import sys

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from clutchfe.case import CaseError, case_from_dict, load_case
from clutchfe._cli import main
from clutchfe.schema import SCHEMA

from tests.helpers.data import CASES, CONE, PLATE, write_toml


def _run(tmp_path, data, capsys, command="check"):
    path = write_toml(tmp_path / "case.toml", data)
    code = main([command, str(path)])
    captured = capsys.readouterr()
    return code, captured.err


def _set(data, dotted, value):
    data = copy.deepcopy(data)
    table, _, key = dotted.rpartition(".")
    (data.setdefault(table, {}) if table else data)[key] = value
    return data


INVALID = [
    # (base, key, value, text that must appear in the message)
    (CONE, "interface.inner_radius", 80.0, "interface.inner_radius"),          # r1 >= r2
    (CONE, "interface.inner_radius", 75.0, "interface.inner_radius"),
    (PLATE, "interface.inner_radius", 130.0, "interface.inner_radius"),
    (CONE, "interface.outer_radius", -5.0, "interface.outer_radius"),
    (CONE, "lining.thickness", 0.0, "lining.thickness"),                       # non-positive sizes
    (CONE, "cone.rim_thickness", -1.0, "cone.rim_thickness"),
    (PLATE, "disc.core_thickness", 0.0, "disc.core_thickness"),
    (CONE, "load.axial_force", 0.0, "load.axial_force"),                       # non-positive force
    (PLATE, "load.axial_force", -100.0, "load.axial_force"),
    (CONE, "cup.youngs_modulus", 0.0, "cup.youngs_modulus"),                   # non-positive modulus
    (PLATE, "lining.youngs_modulus", -3.0, "lining.youngs_modulus"),
    (CONE, "lining.poissons_ratio", 0.5, "lining.poissons_ratio"),             # nu outside (-1, 0.5)
    (PLATE, "pressure_plate.poissons_ratio", -1.0, "pressure_plate.poissons_ratio"),
    (CONE, "interface.semi_cone_angle", 0.0, "interface.semi_cone_angle"),     # alpha outside (0, 90)
    (CONE, "interface.semi_cone_angle", 90.0, "interface.semi_cone_angle"),
    (CONE, "interface.semi_cone_angle", 120.0, "interface.semi_cone_angle"),
    (CONE, "interface.friction_coefficient", 0.0, "interface.friction_coefficient"),   # mu outside (0, 1]
    (CONE, "interface.friction_coefficient", 1.2, "interface.friction_coefficient"),
    (CONE, "interface.inner_radus", 60.0, "did you mean interface.inner_radius"),       # unknown keys
    (CONE, "lining.thicknes", 3.0, "did you mean lining.thickness"),
    (CONE, "cone.wall_thickness", 3.0, "did you mean"),
    (CONE, "lining.thickness", 8.0, "lining.thickness"),                       # lining thicker than its body
    (PLATE, "lining.thickness", 5.0, "lining.thickness"),
    (CONE, "cone.hub_length", 400.0, "cone.hub_length"),                       # overlapping bodies
    (CONE, "cone.hub_outer_radius", 58.0, "cone.hub_outer_radius"),
    (CONE, "cup.hub_outer_radius", 70.0, "cup.hub_outer_radius"),
    (CONE, "mesh.edge_element_size", 5.0, "mesh.edge_element_size"),          # mesh cannot resolve lining
    (CONE, "mesh.interface_element_size", 7.0, "mesh.interface_element_size"),
    (PLATE, "interface.friction_surfaces", 3, "interface.friction_surfaces"),  # plate needs pairs
    (CONE, "interface.friction_surfaces", 2, "interface.friction_surfaces"),
    (PLATE, "interface.semi_cone_angle", 30.0, "interface.semi_cone_angle"),
    (CONE, "interface.friction_coefficient", "0.3", "interface.friction_coefficient"),  # wrong types
    (CONE, "load.axial_force", True, "load.axial_force"),
    (CONE, "load.axial_force", float("nan"), "load.axial_force"),
    (CONE, "load.axial_force", float("inf"), "load.axial_force"),
    (PLATE, "interface.friction_surfaces", 2.5, "interface.friction_surfaces"),
    (CONE, "load.application", "rings", "did you mean ring"),
    (CONE, "load.ring_radius", 40.0, "load.ring_radius"),                      # ring radius without ring load
    (PLATE, "cup.wall_thickness", 5.0, "cup.wall_thickness"),                  # table of the other kind
    (CONE, "support.type", "springs", "support.axial_stiffness"),              # springs need stiffness
    (PLATE, "pressure_plate.inner_radius", 90.0, "pressure_plate.inner_radius"),
    (PLATE, "misalignment.coning", 5.0, "misalignment.coning"),
    (CONE, "kind", "drum", "kind"),
]


@pytest.mark.parametrize("base,key,value,expect", INVALID, ids=[f"{k}={v!r}" for _, k, v, _ in INVALID])
def test_invalid_input_exits_2_naming_the_key(tmp_path, capsys, base, key, value, expect):
    data = _set(base, key, value)
    for command in ("check", "run"):
        code, err = _run(tmp_path, data, capsys, command)
        assert code == 2, err
        assert expect in err
        assert "Traceback" not in err
        assert all(line.startswith("clutchfe: ") for line in err.strip().splitlines())


def test_every_problem_is_reported_one_line_each(tmp_path, capsys):
    data = _set(_set(_set(CONE, "lining.poissons_ratio", 0.7), "load.axial_force", -1.0), "cup.colour", "red")
    code, err = _run(tmp_path, data, capsys)
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 3
    assert any("lining.poissons_ratio = 0.7" in l and "0 ≤ value ≤ 0.45" in l for l in lines)
    assert any("load.axial_force = -1" in l and "0 < value ≤ 1e+08 N" in l for l in lines)


def test_malformed_toml_exits_2(tmp_path, capsys):
    path = tmp_path / "broken.toml"
    path.write_text('kind = "cone"\n[interface\ninner_radius = 3\n', encoding="utf-8")
    assert main(["check", str(path)]) == 2
    assert "malformed TOML" in capsys.readouterr().err


def test_missing_file_and_bad_usage_exit_2(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nothing.toml")]) == 2
    assert main(["frobnicate"]) == 2


def test_self_locking_cone_is_a_warning_not_an_error(tmp_path, capsys):
    # tan(12 deg) = 0.213 < mu = 0.3: self-locking (common practice: a cone locks when tan(alpha) < mu)
    data = _set(_set(CONE, "interface.semi_cone_angle", 12.0), "interface.friction_coefficient", 0.3)
    code, err = _run(tmp_path, data, capsys)
    assert code == 0
    assert "self-locks" in err


def test_required_keys_alone_make_a_sensible_clutch(cone_dict, plate_dict):
    cone = case_from_dict(cone_dict)
    assert cone.lining.thickness < cone.cone.rim_thickness
    assert cone.cone.bore_radius < cone.cone.hub_outer_radius < cone.interface.inner_radius
    plate = case_from_dict(plate_dict)
    assert plate.disc_count == 1
    assert plate.pressure_plate.inner_radius <= plate.interface.inner_radius
    assert plate.counter_plate.outer_radius >= plate.interface.outer_radius
    assert plate.interface.semi_cone_angle == 90.0


def test_schema_defaults_cover_every_optional_key_or_say_optional():
    optional = {"name", "load.ring_radius", "lining.allowable_pressure", "support.axial_stiffness",
                "support.radial_stiffness", "requirement.required_torque", "interface.semi_cone_angle",
                "wear.engagements", "wear.slip_speed", "wear.slip_time", "wear.target_wear_volume",
                "engagement.driven_inertia", "engagement.heat_partition", "engagement.contact_conductance"}
    for table, keys in SCHEMA.items():
        for name, key in keys.items():
            full = f"{table}.{name}" if table else name
            # a table_required key (engagement.slip_speed) is required whenever its table is given
            if not key.required and not key.table_required and key.default is None:
                assert full in optional, full


@pytest.mark.parametrize("path", CASES, ids=[p.stem for p in CASES])
def test_check_passes_on_every_demo_case(path, capsys):
    assert main(["check", str(path)]) == 0
    case = load_case(path)
    assert case.name == path.stem          # the results folder matches the file
    assert len(case.input_sha256) == 64


def test_console_script_exits_2_without_traceback(tmp_path):
    path = write_toml(tmp_path / "bad.toml", _set(CONE, "interface.friction_coefficient", 1.5))
    proc = subprocess.run([sys.executable, "-m", "clutchfe._cli", "run", str(path)], capture_output=True,
                          text=True, timeout=120)
    assert proc.returncode == 2
    assert "interface.friction_coefficient = 1.5" in proc.stderr
    assert "allowed: 0.04 ≤ value ≤ 0.8" in proc.stderr
    assert "Traceback" not in proc.stderr + proc.stdout


# random case parameters: check never raises, always answers 0 (valid) or 2 (invalid input)
_numbers = st.one_of(st.floats(allow_nan=True, allow_infinity=True, width=32),
                     st.floats(min_value=-10, max_value=300), st.integers(-5, 50))
_tables = {
    "interface": ["inner_radius", "outer_radius", "semi_cone_angle", "friction_coefficient",
                  "friction_surfaces"],
    "load": ["axial_force", "ring_radius"],
    "lining": ["thickness", "youngs_modulus", "poissons_ratio"],
    "cone": ["rim_thickness", "web_thickness", "bore_radius", "hub_outer_radius", "hub_length"],
    "cup": ["wall_thickness", "face_overrun", "web_thickness", "bore_radius", "hub_outer_radius", "hub_length"],
    "disc": ["core_thickness", "core_inner_radius", "core_outer_radius"],
    "pressure_plate": ["thickness", "inner_radius", "outer_radius"],
    "mesh": ["interface_element_size", "edge_element_size", "element_size"],
    "misalignment": ["cone_angle_mismatch", "coning"],
}


@st.composite
def _random_case(draw):
    kind = draw(st.sampled_from(["cone", "plate"]))
    data = copy.deepcopy(CONE if kind == "cone" else PLATE)
    for _ in range(draw(st.integers(1, 6))):
        table = draw(st.sampled_from(sorted(_tables)))
        key = draw(st.sampled_from(_tables[table]))
        data.setdefault(table, {})[key] = draw(_numbers)
    if draw(st.booleans()):
        data["load"]["application"] = "ring"
    return data


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=_random_case())
def test_random_parameters_never_crash_check(data, capsys):
    try:
        case = case_from_dict(data)
    except CaseError as exc:
        assert exc.problems and all(isinstance(p, str) and p for p in exc.problems)
        return
    from clutchfe.plan import section_of
    try:
        section_of(case)
    except CaseError as exc:
        assert exc.problems
