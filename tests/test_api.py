"""The public API: documented, its examples run, and one solve path for runs and studies.

A study sample must be the same computation as `clutchfe run` of that sample's case:
tilt, offset and wear-in included (an earlier version silently solved the plain
axisymmetric new interface for every sample of a tilted or worn-in base case).
"""
import csv
import doctest
import io
import pydoc
import runpy
from pathlib import Path

import pytest
import tomli_w

import clutchfe
from clutchfe.study import evaluate, run_study, sample_case

ROOT = Path(__file__).resolve().parents[1]
SMALL_PLATE = {
    "kind": "plate", "name": "small_plate",
    "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3, "friction_surfaces": 2},
    "load": {"axial_force": 3000.0, "application": "ring", "ring_radius": 66.0},
    "lining": {"thickness": 1.2},
    "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8,
             "angular_divisions": 16},
    "verification": {"mesh_study": False},
}
TILTED = {**SMALL_PLATE, "misalignment": {"axis_tilt": 0.02}}
WORN = {**SMALL_PLATE, "wear": {"wear_coefficient": 2.0e-6, "max_steps": 6}}


def test_help_documents_every_public_name():
    text = pydoc.render_doc(clutchfe, renderer=pydoc.plaintext)
    assert "VERSION" in text and clutchfe.__version__ in text
    for name in (n for n in clutchfe.__all__ if n != "__version__"):
        assert name in text, name
        obj = getattr(clutchfe, name)
        if callable(obj):
            assert (obj.__doc__ or "").strip(), f"{name} has no docstring"
    assert "licensed engineer" in text


@pytest.mark.parametrize("module", ["clutchfe", "clutchfe.case", "clutchfe.plan"])
def test_the_docstring_examples_run(module):
    import importlib
    failed, attempted = doctest.testmod(importlib.import_module(module), verbose=False)
    assert attempted >= 2 and failed == 0


def test_example_script_gives_its_regression_numbers():
    # regression numbers of this version (not an external reference): the script's own output
    rows = runpy.run_path(str(ROOT / "examples" / "housing_stiffness.py"))["housing_study"]()
    torques = [t for _, t, _, _ in rows]
    assert torques == pytest.approx([115.8244, 116.3743, 117.5901], abs=2e-4)
    assert torques == sorted(torques)               # a stiffer housing pushes the load outwards here


@pytest.mark.parametrize("base", [SMALL_PLATE, TILTED, WORN], ids=["plain", "tilted", "worn_in"])
def test_a_study_sample_equals_the_single_run_of_its_case(base):
    overrides = {"load.axial_force": 2600.0, "interface.friction_coefficient": 0.27}
    evaluate(base, base["name"], {})                    # the worker's service is prepared by another sample
    sample = evaluate(base, base["name"], overrides)
    alone = clutchfe.summary_of(clutchfe.analyse(sample_case(base, overrides, base["name"])))
    for key in ("torque_fe_Nm", "capacity_position", "peak_pressure_MPa", "contact_area_fraction"):
        assert sample[key] == pytest.approx(alone[key], rel=1e-10, abs=1e-12), key
    if base is TILTED:
        assert sample["tilt_moment_Nm"] == pytest.approx(alone["tilt_moment_Nm"], rel=1e-10)
        assert sample["open_area_fraction"] == pytest.approx(alone["open_area_fraction"], rel=1e-10, abs=1e-12)
    if base is WORN:
        assert sample["torque_worn_in_Nm"] == pytest.approx(alone["torque_worn_in_Nm"], rel=1e-10)
        assert sample["torque_worn_in_Nm"] != pytest.approx(sample["torque_fe_Nm"], rel=1e-9)


@pytest.mark.slow
def test_a_study_over_the_axis_tilt_matches_single_runs(tmp_path):
    (tmp_path / "base.toml").write_text(tomli_w.dumps(TILTED), encoding="utf-8")
    study = {"name": "tilt_sweep", "base_case": "base.toml",
             "vary": [{"key": "misalignment.axis_tilt", "values": [0.01, 0.03]}]}
    path = tmp_path / "tilt.study.toml"
    path.write_text(tomli_w.dumps(study), encoding="utf-8")
    summary = run_study(path, workers=1, console=clutchfe_console(), out=tmp_path / "out")
    assert summary["samples_done"] == 2 and summary["samples_failed"] == 0
    with open(tmp_path / "out" / "samples.csv", newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    service = clutchfe.SolveService()
    for row in rows:
        tilt = float(row["misalignment.axis_tilt_deg"])
        case = sample_case(TILTED, {"misalignment.axis_tilt": tilt}, "s")
        alone = clutchfe.compare_solved(service.solve(case, fields=False))
        assert float(row["torque_fe_Nm"]) == pytest.approx(alone.torque_fe_Nm, rel=1e-9)
        assert float(row["peak_pressure_MPa"]) == pytest.approx(alone.peak_pressure_MPa, rel=1e-9)
    peaks = sorted((float(r["misalignment.axis_tilt_deg"]), float(r["peak_pressure_MPa"])) for r in rows)
    assert peaks[1][1] > peaks[0][1]                    # more tilt, a higher peak


def clutchfe_console():
    from rich.console import Console
    return Console(file=io.StringIO())
