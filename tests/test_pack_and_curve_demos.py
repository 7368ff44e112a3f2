"""The two demo cases of the pack and lining effects, run whole as a user runs them (invented scenarios).

Regression numbers are this version's own answers (deterministic runs, 1e-3 relative: a change of the
model, not round-off); what each demo must show is checked apart from them.
"""
from __future__ import annotations

import csv
import json

import pytest

from clutchfe.analyses.compression import FILES as CURVE_FILES
from clutchfe.analyses.pack import FILES as PACK_FILES
from clutchfe.case import load_case

from tests.helpers.data import ROOT
from tests.helpers.solving import run_quietly


def _run(tmp_path, name):
    return run_quietly(load_case(ROOT / "cases" / f"{name}.toml"), tmp_path / name)


@pytest.mark.slow
def test_winch_pack_loses_capacity_to_spline_drag(tmp_path):
    folder, s, terminal = _run(tmp_path, "winch_pack_splines")
    # the point: the hand formula and the pack without spline friction hold the requirement, the pack with it not
    required = 440.0 * 1.1
    assert s["torque_without_spline_drag_Nm"] > required > s["torque_with_spline_drag_Nm"]
    assert "required torque (with spline drag)" in s["failed_criteria"]
    assert s["last_surface_force_over_clamp_force"] < 0.8
    assert abs(s["pack_efficiency"] / s["pack_efficiency_rigid_plates"] - 1.0) <= 0.01   # thick plates: near rigid
    assert abs(s["torque_with_spline_drag_Nm"] / 468.5 - 1.0) <= 1e-3                     # regression
    assert abs(s["torque_without_spline_drag_Nm"] / 560.2 - 1.0) <= 1e-3
    assert all((folder / f).stat().st_size > 0 for f in PACK_FILES)
    with open(folder / "pack_surfaces.csv", encoding="utf-8") as fh:
        assert len(list(csv.DictReader(fh))) == 12
    assert "spline drag" in terminal and "Spline drag in the pack" in (folder / "report.html").read_text("utf-8")
    assert json.loads((folder / "summary.json").read_text("utf-8"))["pack_failed"] == s["pack_failed"]


@pytest.mark.slow
def test_cart_clutch_cushion_spreads_the_coned_plates_pressure(tmp_path):
    folder, s, terminal = _run(tmp_path, "cart_clutch_cushion")
    # the point: without the cushion the coned plate crowds the bore past the allowable; with it the face is even
    allowable = 0.6
    assert s["peak_pressure_without_cushion_MPa"] > allowable > s["peak_pressure_MPa"]
    assert s["capacity_position_without_cushion"] < 0.0 < s["capacity_position"] < 1.0
    assert s["torque_fe_Nm"] > s["torque_without_cushion_Nm"]
    assert s["pressure_beyond_curve"] is False and s["failed_criteria"] == []
    assert abs(s["torque_fe_Nm"] / 228.30 - 1.0) <= 1e-3                                    # regression
    assert abs(s["curve_nominal_deflection_mm"] / 0.19080 - 1.0) <= 1e-3
    assert all((folder / f).stat().st_size > 0 for f in CURVE_FILES)
    assert "compression curve" in terminal
    assert "operating point on the compression curve" in (folder / "report.html").read_text("utf-8")
