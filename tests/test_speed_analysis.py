"""The clutch at its running speed through the whole run: limits, superposition, files and the demo.

The FE pieces are verified elsewhere (tests/fem/test_centrifugal.py and `clutchfe verify`'s speed rows: the
rotating annular disc and the thin ring against Timoshenko & Goodier, the half-ring balance, the burst
estimate); here the analysis stage on a whole case.
"""
import copy
import csv
import json

import pytest

from clutchfe.analyses.speed import STRESS_COLUMNS, speed_summary
from clutchfe.case import case_from_dict, load_case
from clutchfe.plan import analyse

from tests.helpers.solving import run_quietly
from tests.helpers.data import ROOT, SMALL_PLATE, with_tables


def _summary(rpm):
    case = case_from_dict(copy.deepcopy(with_tables(SMALL_PLATE, speed={"running_speed": rpm})), default_name="spin")
    result = analyse(case)
    return result, speed_summary(result.speed, case)


def test_a_slow_turn_leaves_the_result_at_rest():
    # limit case: the centrifugal load grows with ω²; at 1e-3 rpm it is ~1e-13 of the load at 3000 rpm, so
    # the torque and R_eff at speed are those at rest to round-off (the FE solve with a zero extra load is
    # bit-identical: tests/fem/test_engagement.py)
    result, s = _summary(1e-3)
    assert s["torque_at_speed_Nm"] == pytest.approx(result.comparison["torque_fe_Nm"], rel=1e-9)
    assert s["effective_radius_shift_at_speed_mm"] == pytest.approx(0.0, abs=1e-9)
    assert s["speed_warnings"] == [] and s["speed_failed"] == []


def test_the_speed_effects_follow_the_square_of_the_speed():
    # linear elasticity, superposition (Timoshenko & Goodier 1970): while the contact stays closed, the spin's
    # share of every result is ∝ ω², so at 2ω it is 4 × that at ω: the mean hoop stress of the spin alone, the
    # change of torque and of R_eff (round-off and the contact solver's tolerance: 1e-6 relative)
    rest, s1 = _summary(2000.0)
    _, s2 = _summary(4000.0)
    assert s1["contact_area_fraction_at_speed"] == s2["contact_area_fraction_at_speed"] == 1.0
    for body, hoop in s1["mean_hoop_stress_spin_MPa"].items():
        assert s2["mean_hoop_stress_spin_MPa"][body] == pytest.approx(4.0 * hoop, rel=1e-9), body
    t0 = rest.comparison["torque_fe_Nm"]
    assert s2["torque_at_speed_Nm"] - t0 == pytest.approx(4.0 * (s1["torque_at_speed_Nm"] - t0), rel=1e-6)
    assert s2["effective_radius_shift_at_speed_mm"] == pytest.approx(4.0 * s1["effective_radius_shift_at_speed_mm"],
                                                                     rel=1e-6)
    # and the burst estimate does not depend on the speed it was computed at (ω_b = ω √(σ_uts / σ̄_θ), σ̄_θ ∝ ω²)
    for body, burst in s1["burst_speed_rpm"].items():
        if burst is not None:
            assert s2["burst_speed_rpm"][body] == pytest.approx(burst, rel=1e-9), body


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    return run_quietly(load_case(ROOT / "cases" / "cone_spindle_speed.toml"), tmp_path_factory.mktemp("speed") / "run")


@pytest.mark.slow
def test_demo_loses_pressure_at_speed_and_reports_its_burst_margin(demo):
    # the demo's point (invented scenario): the cast-iron cup, the outer ring, grows more at speed than the
    # cone inside it (the ring's radial growth ∝ ρ ω² r³ / E: Timoshenko & Goodier, rotating ring), most at
    # its wide end, so the pressure runs to the narrow end, the face opens and ξ falls below 0
    folder, s, terminal = demo
    assert s["capacity_position"] >= 1.0 and s["conservative_hand_method_at_speed"] == "neither"
    assert s["effective_radius_shift_at_speed_mm"] < -1.0
    assert s["contact_area_fraction_at_speed"] < 1.0 and "partial contact (at speed)" in s["failed_criteria"]
    assert s["torque_at_speed_Nm"] < s["torque_fe_Nm"]
    assert s["speed_burst_margin"] is not None and s["speed_burst_margin"] > 0.0
    assert set(s["burst_speed_rpm"]) == {"cone", "cup", "cone lining"}
    assert "AT SPEED THE CONSERVATIVE HAND FORMULA CHANGES" in " ".join(terminal.split())
    with open(folder / "speed_stresses.csv", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert tuple(rows[0]) == STRESS_COLUMNS and len(rows) == 3
    assert not any("nan" in v.lower() or "inf" in v.lower() for row in rows for v in row.values())
    report = (folder / "report.html").read_text(encoding="utf-8")
    section = report[report.index("<h2>At the running speed"):]
    assert section.count("data:image/png") >= 2 and "No centrifugal load" not in report
    assert json.loads((folder / "summary.json").read_text(encoding="utf-8"))["running_speed_rpm"] == 7000.0
