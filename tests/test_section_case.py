"""Cases that name their own drawing ([section_file]): the keys, their errors, the check against the
case's design values, and the drawn demo cases end to end.

The reader itself (outlines, arcs, face selection, bad drawings) is tested in test_section_file.py.
"""
import copy
import json
import tomllib

import numpy as np
import pytest

from clutchfe._cli import main
from clutchfe.case import CaseError, case_from_dict, load_case
from clutchfe.geometry import GeometryError, build_section
from clutchfe.plan import analyse, section_of

from tests.helpers.data import CONE, PLATE, ROOT, write_toml
from tests.test_section_file import _write_section_dxf

CASES = ROOT / "cases"
DRAWN = {"cone": CASES / "cone_cup_drawn.toml", "plate": CASES / "pressure_plate_drawn.toml"}


def _drawn(kind="cone") -> dict:
    """The drawn demo's tables, its drawing named by absolute path (the tests write their copies elsewhere)."""
    data = tomllib.loads(DRAWN[kind].read_text(encoding="utf-8"))
    data["section_file"]["path"] = str(CASES / data["section_file"]["path"])
    return data


def _problems(data) -> list[str]:
    with pytest.raises(CaseError) as err:
        case_from_dict(data)
    return err.value.problems


# --- the keys --------------------------------------------------------------------------------------


def test_the_drawing_path_is_read_beside_the_case_file(tmp_path):
    case = load_case(DRAWN["cone"])
    assert case.section_file.path == CASES / "sections" / "cone_cup.dxf"
    assert case.flat()["section_file.path"] == "sections/cone_cup.dxf"      # as the case file says it
    assert len(case.section_file_sha256) == 64
    # the parametric tables the drawing replaces carry no values (their defaults would describe parts not drawn)
    assert case.cone.rim_thickness is None and case.cup.wall_thickness is None and case.lining.thickness is None
    moved = tmp_path / "elsewhere" / "case.toml"
    moved.parent.mkdir()
    moved.write_text(DRAWN["cone"].read_text(encoding="utf-8"), encoding="utf-8")
    with pytest.raises(CaseError, match=r"section_file.path = 'sections/cone_cup.dxf': no such file"):
        load_case(moved)


def test_the_drawing_is_an_input_a_changed_drawing_changes_the_stiffness_group(tmp_path):
    from clutchfe.solve import stiffness_key
    source = CASES / "sections" / "cone_cup.dxf"
    copy_ = tmp_path / "cup.dxf"
    copy_.write_bytes(source.read_bytes())
    data = _drawn()
    data["section_file"]["path"] = str(copy_)
    first = case_from_dict(data)
    copy_.write_bytes(source.read_bytes() + b"999\nchanged\n")     # a DXF comment: same geometry, new bytes
    second = case_from_dict(data)
    assert first.section_file_sha256 != second.section_file_sha256
    assert stiffness_key(first) != stiffness_key(second)


BAD = [
    # (change, text the message must hold)
    (lambda d: d["section_file"].pop("units"), "section_file.units: missing"),
    (lambda d: d["section_file"].update(units="cm"), "section_file.units = 'cm': allowed: one of 'mm', 'm', 'inch'"),
    (lambda d: d["section_file"].update(path="nowhere.dxf"), "section_file.path = 'nowhere.dxf': no such file"),
    (lambda d: d["section_file"].update(colour="red"), "section_file.colour: unknown key"),
    (lambda d: d["section_file"].update(tolerance=5.0), "section_file.tolerance = 5.0: allowed: 1e-05 ≤ value ≤ 1 mm"),
    (lambda d: d["section_file"]["regions"]["cup"].pop("youngs_modulus"),
     "section_file.regions.cup.youngs_modulus: missing; required"),
    (lambda d: d["section_file"]["regions"]["cup"].update(youngs_modulus=110.0),
     "section_file.regions.cup.youngs_modulus = 110.0: allowed: 10000 ≤ value ≤ 700000 MPa"),
    (lambda d: d["section_file"]["regions"]["cone_lining"].update(youngs_modulus=400.0),
     "section_file.regions.cone_lining.youngs_modulus = 400.0: a lining region takes its material from the [lining]"),
    (lambda d: d["section_file"]["friction"]["s1"].update(box=[50.0, 0.0, 80.0, 60.0]),
     "section_file.friction.s1: both layer and box; choose the curves by exactly one of"),
    (lambda d: d["section_file"]["radial_support"].update(through=[18.0]),
     "section_file.radial_support.through = [18.0]: allowed: 2 numbers [r, z] in mm"),
    (lambda d: d["section_file"]["bodies"]["cup"].update(role="fixed"),
     "section_file.bodies.cup.role = 'fixed': allowed: one of 'supported', 'pressed', 'floating'"),
    (lambda d: d["section_file"]["bodies"]["cup"].update(role="floating"), "0 supported bodies"),
    (lambda d: d.update(cup={"wall_thickness": 7.0}), "[cup]: the section file draws the parts"),
    (lambda d: d["lining"].update(thickness=3.0), "lining.thickness = 3.0: the section file draws the lining"),
]


@pytest.mark.parametrize("change, text", BAD, ids=[t.split(":")[0][:40] for _, t in BAD])
def test_a_bad_section_key_is_named_with_its_value_and_range(change, text):
    data = _drawn()
    change(data)
    problems = _problems(data)
    assert any(text in p for p in problems), problems


def test_a_bad_section_key_exits_2_without_a_traceback(tmp_path, capsys):
    data = _drawn()
    data["section_file"]["units"] = "furlong"
    code = main(["check", str(write_toml(tmp_path / "case.toml", data))])
    err = capsys.readouterr().err
    assert code == 2
    assert "section_file.units = 'furlong'" in err and "Traceback" not in err


# --- the drawing held to the case's design values ----------------------------------------------------


@pytest.mark.parametrize("key, value, text", [
    ("inner_radius", 57.0, "interface.inner_radius = 57 mm: friction face 's1' of the drawing runs from "
                           "r = 58.0000 to 72.0000 mm"),
    ("semi_cone_angle", 14.0, "interface.semi_cone_angle = 14°: the drawing's friction faces are at 15.0000°"),
])
def test_a_drawing_that_is_not_the_case_s_clutch_is_refused(key, value, text, tmp_path, capsys):
    data = _drawn()
    data["interface"][key] = value
    with pytest.raises(GeometryError) as err:
        build_section(case_from_dict(data))
    assert any(text in p for p in err.value.problems), err.value.problems
    code = main(["check", str(write_toml(tmp_path / "case.toml", data))])
    assert code == 2 and "Traceback" not in capsys.readouterr().err


def test_a_plate_drawing_with_another_face_count_is_refused():
    data = _drawn("plate")
    data["interface"]["friction_surfaces"] = 4
    with pytest.raises(GeometryError) as err:
        build_section(case_from_dict(data))
    assert any("interface.friction_surfaces = 4: the drawing has 2 friction face(s) (s1, s2)" in p
               for p in err.value.problems), err.value.problems


def test_the_plate_drawing_keeps_the_case_s_face_count_and_a_plate_s_angle():
    case = case_from_dict(_drawn("plate"))
    section = section_of(case)
    assert [i.name for i in section.interfaces] == ["s1", "s2"]
    assert section.semi_cone_angle == pytest.approx(90.0, abs=1e-9)
    assert section.ring_radius == 108.0 and section.kind == "plate"


def test_a_cone_angle_mismatch_opens_the_drawn_face_as_it_opens_the_parametric_one():
    # geometry of the gap (common practice): an angle error δ opens the far end of a face of slant length s by s·sin δ
    data = _drawn()
    data["misalignment"] = {"cone_angle_mismatch": 0.05}
    itf = build_section(case_from_dict(data)).interfaces[0]
    slant = np.hypot(72.0 - 58.0, (72.0 - 58.0) / np.tan(np.radians(15.0)))
    assert itf.gap_start == 0.0 and itf.gap_end == pytest.approx(slant * np.sin(np.radians(0.05)), rel=1e-9)


# --- the same clutch drawn or built -------------------------------------------------------------------


def _as_drawn_case(data: dict, tmp_path) -> dict:
    """The parametric case's section written to a DXF (a layer per region and per named face) and a case
    that reads it, with the same design values and materials."""
    case = case_from_dict(data)
    section = build_section(case)
    path = _write_section_dxf(section, tmp_path / "section.dxf")
    drawn = {k: copy.deepcopy(v) for k, v in data.items() if k not in ("cone", "cup", "pressure_plate", "disc",
                                                                          "counter_plate", "separator_plate")}
    drawn["lining"] = {k: v for k, v in drawn.get("lining", {}).items() if k not in ("thickness", "bonded_to",
                                                                                     "end_shape")}
    regions = {}
    for r in section.regions:
        entry = {"body": r.body, "layer": r.name}
        if r.lining_layers:
            entry["lining"] = True
        else:
            entry.update(youngs_modulus=r.youngs_modulus, poissons_ratio=r.poissons_ratio)
        regions[r.name] = entry
    drawn["section_file"] = {
        "path": str(path), "units": "mm",
        "bodies": {b.name: {"role": b.role, "label": b.label} for b in section.bodies},
        "regions": regions,
        "friction": {i.name: {"body_a": i.body_a, "body_b": i.body_b, "layer": i.face_a, "mate_layer": i.face_b}
                     for i in section.interfaces},
        "load": {"face_name": section.load_face, "layer": section.load_face},
        "axial_support": {"face_name": section.support_axial_face, "layer": section.support_axial_face},
        "radial_support": {"face_name": section.support_radial_face, "layer": section.support_radial_face}}
    return drawn


@pytest.mark.parametrize("data", [CONE, PLATE], ids=["cone", "plate"])
def test_the_same_clutch_drawn_gives_the_parametric_answer(data, tmp_path):
    # a limit case of the import (common practice): the drawing of the built section is the same clutch, so
    # every result equals the built one but for round-off in the drawing's coordinates and gmsh's meshing of
    # them (measured: 2e-8 relative on the plate, below 1e-9 on the cone); 1e-7 is 100 × below the mesh
    # error of these meshes (the mesh study's bands, ~1e-5), so a drawn section read wrong cannot pass
    built = analyse(case_from_dict(data), fields=False).comparison
    drawn = analyse(case_from_dict(_as_drawn_case(data, tmp_path)), fields=False).comparison
    for key in ("torque_fe_Nm", "effective_radius_mm"):
        assert getattr(drawn, key) == pytest.approx(getattr(built, key), rel=1e-7), key
    # ξ is a difference of torques over a small difference (T_up − T_uw is ~2 % of T): its round-off is
    # ~50 × larger (measured 1.5e-6 on the plate); its mesh band is ~3e-3
    assert drawn.capacity_position == pytest.approx(built.capacity_position, abs=1e-5)


# --- the drawn demos end to end -----------------------------------------------------------------------


@pytest.mark.parametrize("kind", ["cone", "plate"])
def test_the_drawn_demo_runs_end_to_end(kind, tmp_path, capsys):
    # a copy of the demo beside its drawing's copy: the results folder goes to tmp_path
    folder = tmp_path / "cases"
    (folder / "sections").mkdir(parents=True)
    for dxf in (CASES / "sections").glob("*.dxf"):
        (folder / "sections" / dxf.name).write_bytes(dxf.read_bytes())
    case_file = folder / DRAWN[kind].name
    case_file.write_text(DRAWN[kind].read_text(encoding="utf-8"), encoding="utf-8")
    code = main(["run", str(case_file), "--out", str(tmp_path / "results" / DRAWN[kind].stem)])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    name = DRAWN[kind].stem
    summary = json.loads((tmp_path / "results" / name / "summary.json").read_text(encoding="utf-8"))
    assert summary["section_file_sha256"] == load_case(DRAWN[kind]).section_file_sha256
    assert summary["section_file"] == f"sections/{'cone_cup' if kind == 'cone' else 'pressure_plate'}.dxf"
    r1, r2 = (58.0, 72.0) if kind == "cone" else (85.0, 120.0)
    assert r1 < summary["effective_radius_mm"] < r2
    assert summary["contact_area_fraction"] > 0.99


@pytest.mark.parametrize("change, text", [
    (lambda d: d["section_file"]["friction"]["s1"].update(layer="NOPE"), "NOPE"),
    (lambda d: d["section_file"].update(units="m"), "wrong units suspected"),                       # a 72 m cone: refused by size
    (lambda d: d["section_file"].update(axis_at=40.0), "the outline crosses the axis"),                     # the cone then crosses the axis
    (lambda d: d["section_file"]["regions"]["cup"].update(layer="CONE"), "CONE"),   # one outline claimed twice
])
def test_a_drawing_that_does_not_read_exits_2_naming_the_problem(change, text, tmp_path, capsys):
    data = _drawn()
    change(data)
    code = main(["check", str(write_toml(tmp_path / "case.toml", data))])
    err = capsys.readouterr().err
    assert code == 2, err
    assert text in err and "Traceback" not in err, err


def test_a_step_drawing_of_the_pressure_plate_gives_the_dxf_answer(tmp_path):
    # the same outlines through gmsh's OpenCASCADE kernel (faces by their product names, r = x, z = y):
    # the same clutch, so the same answer to the chord tolerance's effect (arcs sampled, not drawn as bulges)
    from tests.test_section_file import DEMO, PLATE_REGIONS, PRESSURE_PLATE, _write_occ
    names = [next(n for n, layer in PLATE_REGIONS.items() if layer == lay) for lay in PRESSURE_PLATE["regions"]]
    path = _write_occ(PRESSURE_PLATE, tmp_path / "plate.step", names=names)
    dxf = _drawn("plate")
    step = copy.deepcopy(dxf)
    table = step["section_file"]
    table.update(path=str(path), r_along="x", z_along="y")
    for name, entry in table["regions"].items():
        entry.pop("layer")
        entry["label"] = name
    table["load"] = {"face_name": "fulcrum", "box": [105.0, DEMO["FULCRUM_TOP"] - 2.55, 111.0, 30.0]}
    a = analyse(case_from_dict(dxf), fields=False).comparison
    b = analyse(case_from_dict(step), fields=False).comparison
    # 2e-5: the fulcrum's round top is sampled to 0.01 mm in both readers, but not at the same points
    # (measured 2.5e-6 relative); a face read 0.1 mm off would move R_eff by ~1e-3
    assert b.torque_fe_Nm == pytest.approx(a.torque_fe_Nm, rel=2e-5)
    assert b.effective_radius_mm == pytest.approx(a.effective_radius_mm, rel=2e-5)


def test_a_fillet_moved_in_the_drawing_is_what_the_next_run_solves(tmp_path):
    # what a user does in a CAD program: the fillet at the outer foot of the cup's hub grows from 1.5 to
    # 6 mm; the case is unchanged, so the run reads the new drawing (a new SHA-256) and solves it
    from tests.test_section_file import CONE_CUP, DEMO
    design = copy.deepcopy(CONE_CUP)
    kind, corners = design["regions"]["CUP"]
    k = next(i for i, (r, _, fillet) in enumerate(corners) if r == 30.0 and fillet == 1.5)   # the hub's foot
    corners[k] = (*corners[k][:2], 6.0)
    path = DEMO["write_dxf"](design, tmp_path / "cone_cup.dxf")
    data = _drawn()
    before = case_from_dict(data)
    data["section_file"]["path"] = str(path)
    after = case_from_dict(data)
    assert after.section_file_sha256 != before.section_file_sha256
    area = {}
    for name, case in (("before", before), ("after", after)):
        section = build_section(case)
        cup = next(r for r in section.regions if r.name == "cup")
        area[name] = section.region_area_and_moment(cup)[0]
    # a right-angle convex corner: a fillet of radius ρ cuts off ρ²(1 − π/4) (plane geometry, common
    # practice), so the cup loses (6² − 1.5²)(1 − π/4); each drawing's arcs are within the chord tolerance
    # (0.05 mm) of their chords, so the areas are within 0.05 mm × the arcs' length (π/2 · ρ) each
    lost = (6.0**2 - 1.5**2) * (1.0 - np.pi / 4.0)
    assert area["before"] - area["after"] == pytest.approx(lost, abs=0.05 * np.pi / 2 * (6.0 + 1.5))
    result = analyse(after, fields=False).comparison
    assert 58.0 < result.effective_radius_mm < 72.0
