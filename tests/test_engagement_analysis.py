"""The hot engagement through the whole run: files, summary keys, energy, limits and the demo.

The FE loop itself is verified in tests/fem/test_engagement.py (semi-infinite body, energy, time-step
order, inertia law, partition, coupling residual); here the analysis stage on top of it: what a run
writes and says, the energy of the slip against the energy of the rotating masses, the zero-heat limit,
the mesh convergence of the hot torque, and the demo whose verdict changes between cold and hot.
"""
import copy
import csv
import json
import math
import tomllib
import xml.etree.ElementTree as ET

import meshio
import numpy as np
import pytest

from clutchfe.analyses.engagement import THERMAL_CSV_COLUMNS, THERMAL_KEYS, engagement_summary
from clutchfe.case import case_from_dict, load_case
from clutchfe.plan import analyse
from clutchfe.study import evaluate, sample_case

from tests.helpers.solving import run_quietly
from tests.helpers.data import ROOT, SMALL_PLATE, with_tables

SHORT = {"slip_speed": 1200.0, "slip_time": 0.5, "engagements": 2, "dwell_time": 2.0,
         "steps_per_engagement": 12, "dwell_steps": 4, "snapshots": 5}
RPM = 2.0 * math.pi / 60.0


def _case(name="hot", mesh=None, **engagement):
    data = with_tables(SMALL_PLATE, engagement={**SHORT, **engagement})
    if mesh:
        data["mesh"] = {**data["mesh"], **mesh}
    return case_from_dict(copy.deepcopy(data), default_name=name)


@pytest.fixture(scope="module")
def hot_run(tmp_path_factory):
    return run_quietly(_case(), tmp_path_factory.mktemp("hot") / "run")


def test_a_run_writes_the_series_the_table_and_the_pictures(hot_run):
    folder, summary, terminal = hot_run
    for name in ("thermal.csv", "thermal_series.pvd", "temperature_hottest.png", "pressure_hot.png",
                 "engagement_history.png"):
        assert (folder / name).stat().st_size > 0, name
    with open(folder / "thermal.csv", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert tuple(rows[0]) == THERMAL_CSV_COLUMNS
    assert len(rows) == summary["engagement_steps"] + 1 == 2 * 12 + 4 + 1     # cold row + slips + one dwell
    assert not any("nan" in v.lower() for row in rows for v in row.values())
    # the PVD index lists frames meshio reads back; each frame's hottest vertex is that step's peak
    frames = ET.parse(folder / "thermal_series.pvd").getroot().iter("DataSet")
    times = np.array([float(r["time_s"]) for r in rows[1:]])
    peaks = [float(r["peak_temperature_C"]) for r in rows[1:]]
    n = 0
    for frame in frames:
        mesh = meshio.read(folder / frame.get("file"))
        temperature = mesh.point_data["temperature_C"]
        assert np.isfinite(temperature).all() and mesh.point_data["displacement_mm"].shape[1] == 3
        step = int(np.argmin(np.abs(times - float(frame.get("timestep")))))
        assert np.max(temperature) == pytest.approx(peaks[step], abs=1e-9)
        n += 1
    assert n >= 5
    report = (folder / "report.html").read_text(encoding="utf-8")
    section = report[report.index("<h2>Hot engagement"):]
    assert section.count("data:image/png") >= 3 and "No hot engagement" not in report
    assert "cold and hot (engagement)" in terminal, terminal
    assert json.loads((folder / "summary.json").read_text(encoding="utf-8"))["engagement_steps"] == len(rows) - 1


def test_the_heat_of_the_slip_is_the_work_of_the_friction_torque(hot_run):
    # energy conservation (Carslaw & Jaeger 1959): the heat put in is the work of the friction torque,
    # ∫ T ω dt, here the trapezoidal integral of thermal.csv's rows (the slip speed jumps to its initial
    # value at the start of each engagement, from the duty: 1200 rpm). Both are second order in the step:
    # measured 0.9 % apart at 12 steps an engagement; 2 % allowed. The heat account itself (stored +
    # convected against heat in) closes within 1 %.
    folder, summary, _ = hot_run
    with open(folder / "thermal.csv", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    work, (torque, speed, time) = 0.0, (float(rows[0]["torque_Nm"]), SHORT["slip_speed"] * RPM, 0.0)
    for row in rows[1:]:
        t, w = float(row["time_s"]), float(row["slip_speed_rpm"]) * RPM
        if row["slipping"] == "True" and speed == 0.0:
            speed = SHORT["slip_speed"] * RPM
        work += 0.5 * (torque * speed + float(row["torque_Nm"]) * w) * (t - time)
        torque, speed, time = float(row["torque_Nm"]), w, t
    heat = sum(float(r["heat_generated_J"]) for r in rows)
    assert heat == pytest.approx(work, rel=0.02)
    assert summary["slip_energy_J"] == pytest.approx(heat, rel=1e-9)
    assert abs(summary["engagement_energy_balance_error"]) < 0.01


def test_inertia_law_dissipates_the_kinetic_energy_of_the_slip():
    # a clutch that brings a driven inertia I from rest to the driving speed (or a rotating one to rest)
    # dissipates ½ I ω0² per engagement when no drag acts (energy of a rotating body; Newton's second
    # law I dω/dt = −T): the slip energy of two engagements is I ω0², to the time-step error (measured
    # 2.0e-3 at 20 steps, second order in the step; 5e-3 allowed)
    inertia = 0.05          # kg·m²
    case = _case(speed_law="inertia", driven_inertia=inertia, slip_time=5.0, steps_per_engagement=20)
    run = analyse(case).engagement
    s = engagement_summary(run, case)
    omega0 = SHORT["slip_speed"] * RPM
    assert s["slip_energy_J"] == pytest.approx(2 * 0.5 * inertia * omega0 ** 2, rel=5e-3)
    # lock-up after I ω0 / T: T is the hot torque, which lies between the least and the cold one
    torques = [st.torque / 1000.0 for st in run.history.steps if st.engagement == 2][:21]
    assert inertia * omega0 / max(torques) <= s["engagement_lock_up_time_s"] <= inertia * omega0 / min(torques)


def test_a_slip_with_no_heat_leaves_the_cold_result():
    # limit case: slip energy → 0 gives the cold contact back (the FE loop is exact at zero; here 1e-3 rpm
    # puts in about 1e-6 of a real slip's heat, so the hot torque is the cold one to well within 1e-6 and
    # R_eff, which moves by millimetres in a real slip, stays within 1e-4 mm)
    case = _case(slip_speed=1e-3)
    result = analyse(case)
    s = engagement_summary(result.engagement, case)
    assert s["torque_hot_worst_Nm"] == pytest.approx(result.comparison["torque_fe_Nm"], rel=1e-6)
    assert s["effective_radius_shift_worst_mm"] == pytest.approx(0.0, abs=1e-4)
    assert s["conservative_hand_method_hot"] == s["conservative_hand_method_cold"]
    assert s["engagement_warnings"] == [] and s["engagement_failed"] == []


@pytest.mark.slow
def test_hot_torque_converges_with_the_mesh():
    # observed order from three meshes refined by 1.5 (Roache 1998, p = ln(d12/d23)/ln 1.5): measured 3.1 for
    # the hot torque at the end of slip, an integral of the pressure (P2 elasticity: order 2 for the fields, up
    # to 4 for such integrals, Babuška & Miller 1984, from memory); 3 ± 1 allowed. The peak temperature is a
    # maximum over the nodes whose place moves with the mesh, so its differences are not monotone (measured
    # 0.05, 0.10 K): its spread must stay within 1 % of the rise.
    torque, peak = [], []
    for refinement in (1.0, 1.5, 2.25):
        case = _case(mesh={"refinement": refinement}, engagements=1, steps_per_engagement=20)
        s = engagement_summary(analyse(case).engagement, case)
        torque.append(s["torque_hot_end_of_slip_Nm"])
        peak.append(s["engagement_peak_temperature_C"])
    d12, d23 = torque[1] - torque[0], torque[2] - torque[1]
    assert d12 * d23 > 0                                    # monotone
    order = math.log(d12 / d23) / math.log(1.5)
    assert abs(order - 3.0) <= 1.0, (torque, order)
    rise = max(peak) - 20.0
    assert (max(peak) - min(peak)) <= 0.01 * rise, peak


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    return run_quietly(load_case(ROOT / "cases" / "plate_tractor_hot.toml"), tmp_path_factory.mktemp("demo") / "run")


@pytest.mark.slow
def test_demo_hot_engagement_changes_the_conservative_hand_formula(demo):
    # the demo's point (invented scenario): cold, the ring load gives ξ > 1 (both hand formulas are
    # conservative); hot, the slip heat cones the pressure plate and the flywheel face (Timoshenko &
    # Goodier: a face hotter than the back bends convex towards its mate), the pressure runs to the
    # inner edge, R_eff falls and ξ < 0: neither hand formula is conservative any more
    folder, s, terminal = demo
    assert s["conservative_hand_method_cold"] == "both" and s["capacity_position"] > 1.0
    assert s["conservative_hand_method_hot"] == "neither" and s["capacity_position_hot_worst"] < 0.0
    assert s["effective_radius_shift_worst_mm"] < -5.0
    metal = {face: mm for face, mm in s["thermal_coning_mm"].items() if "plate" in face}
    assert len(metal) == 2 and all(mm < -0.01 for mm in metal.values()), metal      # > 10 µm inwards
    assert "THE HOT ENGAGEMENT CHANGES WHICH HAND FORMULA IS CONSERVATIVE" in " ".join(terminal.split())
    assert "partial contact (hot)" in s["failed_criteria"]
    report = (folder / "report.html").read_text(encoding="utf-8")
    assert "THE HOT ENGAGEMENT CHANGES WHICH HAND FORMULA IS CONSERVATIVE" in report
    assert abs(s["engagement_energy_balance_error"]) < 0.01
    assert s["coupling_residual_max"] <= 1e-6
    # the front at the inner edge cycles in some steps: the run must say so, with the size of the jumps
    assert s["coupling_fallback_steps"] > 0 and s["peak_temperature_step_jump_K"] > 0.0
    assert any("cycling contact front" in w for w in s["warnings"])


@pytest.mark.slow
def test_a_drawn_section_heats_with_each_regions_own_properties(tmp_path):
    # a drawn case (cases/cone_cup_drawn.toml) with an [engagement]: every region carries its own thermal
    # keys (a lining region [lining]'s); the heat model's triangles must hold exactly those values
    # (unit conversions: 1 W/(m·K) = 1 mW/(mm·K), 1 J/(m³·K) = 1e3 mJ per 1e9 mm³ = 1e-6 mJ/(mm³·K); SI definitions)
    data = tomllib.loads((ROOT / "cases" / "cone_cup_drawn.toml").read_text(encoding="utf-8"))
    data["section_file"]["path"] = str(ROOT / "cases" / "sections" / "cone_cup.dxf")
    own = {"cone": (50.0, 7850.0, 460.0, 12e-6), "cup": (48.0, 7200.0, 500.0, 11e-6),
           "cone_lining": (0.8, 2000.0, 1200.0, 2e-5)}
    for name in ("cone", "cup"):
        data["section_file"]["regions"][name].update(zip(THERMAL_KEYS, own[name]))
    data["lining"].update(zip(THERMAL_KEYS, own["cone_lining"]))
    data["engagement"] = {"slip_speed": 600.0, "slip_time": 1.0, "steps_per_engagement": 10}
    data["verification"] = {"mesh_study": False}
    case = case_from_dict(data, default_name="drawn_hot")
    result = analyse(case)
    setup, mesh = result.engagement.setup, result.solved.mesh
    names = np.asarray(mesh.region_names)[np.asarray(mesh.triangle_region)]
    for region, (k, rho, c, alpha) in own.items():
        chosen = names == region
        assert chosen.any(), region
        assert np.allclose(np.asarray(setup.heat.conductivity)[chosen], k)
        assert np.allclose(np.asarray(setup.heat.heat_capacity)[chosen], rho * c * 1e-6)
        assert np.allclose(setup.expansion[chosen], alpha)
    s = engagement_summary(result.engagement, case)
    assert abs(s["engagement_energy_balance_error"]) < 0.01 and s["engagement_peak_temperature_C"] > 20.5


def test_a_study_sample_varies_the_duty_and_equals_its_single_run():
    # studies vary the duty like any other key (a sample is plan.analyse of its case on the worker's solve
    # service, fields off); a sample equals the single run of its case to round-off (the project's rule for
    # every analysis, DEVELOPERS.md), and a faster slip puts in more heat: with the linear law the slip
    # energy ∝ ω0 at a nearly constant torque (energy of the slip, ∫ T ω dt)
    base = with_tables(SMALL_PLATE, engagement={**SHORT, "engagements": 1})
    slow = evaluate(base, "study_hot", {"engagement.slip_speed": 600.0})
    fast = evaluate(base, "study_hot", {"engagement.slip_speed": 1200.0})
    case = sample_case(base, {"engagement.slip_speed": 1200.0}, "study_hot")
    single = engagement_summary(analyse(case).engagement, case)
    for key in ("torque_hot_worst_Nm", "engagement_peak_temperature_C", "effective_radius_shift_worst_mm"):
        assert fast[key] == pytest.approx(single[key], rel=1e-9, abs=1e-12), key
    assert fast["engagement_peak_temperature_C"] > slow["engagement_peak_temperature_C"]


def test_a_heat_partition_puts_its_share_into_the_metal_mates():
    # engagement.heat_partition: the hand method's fixed split (no heat across the interface): of the heat
    # put in, that fraction goes into the bodies the linings rub on (here the pressure and counter plates)
    # and the rest into the lined disc. Energy conservation (Carslaw & Jaeger 1959) per body: stored +
    # convected; over one short slip convection takes < 0.1 % of the heat, so 0.5 % tolerance.
    case = _case(engagements=1, heat_partition=0.8)
    energy = analyse(case).engagement.history.energy
    metal = energy.stored_by_body["pressure_plate"] + energy.stored_by_body["counter_plate"]
    assert sum(energy.convected.values()) < 1e-3 * energy.heat_in
    assert metal == pytest.approx(0.8 * energy.heat_in, rel=5e-3)
    assert energy.stored_by_body["disc1"] == pytest.approx(0.2 * energy.heat_in, rel=5e-3)
