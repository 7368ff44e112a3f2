"""Archard wear-in: the steady state against uniform wear, the wear volume against its
integral, step independence, limits and the files of a run."""
import csv
import json
import math
import tomllib

import numpy as np
import pytest

from clutchfe import plan
from clutchfe.case import case_from_dict, load_case
from clutchfe._cli import main
from clutchfe.comparison import compare
from clutchfe.fem.wear import wear_in
from tests.helpers.solving import solved_case
from clutchfe.analyses.wear import WEAR_CSV_COLUMNS, sliding_per_engagement_rad

from tests.helpers.data import PLATE, ROOT, with_tables, write_toml

DEMO = ROOT / "cases" / "cone_capstan_wearin.toml"
K = 2e-6        # mm^3/(N m); the worn-in state does not depend on it, only the path's scale


@pytest.fixture(scope="module")
def cone():
    return solved_case(load_case(ROOT / "cases" / "cone_capstan.toml"))


@pytest.fixture(scope="module")
def cone_path(cone):
    return wear_in(cone.solver, K, step_cap=0.05, max_steps=1000)


# ---------------------------------------------------------------- Winkler lining, rigid backs

def test_winkler_lining_wears_to_uniform_wear_outer_radius_first():
    # A thin lining between bodies 1e5 x stiffer is a Winkler foundation (Johnson, Contact
    # Mechanics 1985, §5.8).  Worn in under constant force, Archard wear (Archard, J. Appl.
    # Phys. 1953) is uniform when p r is constant: p = W / (2 pi (r2 - r1) r) on every face of
    # a plate (uniform-wear method, Shigley's clutch chapter).  On a Winkler layer each node
    # relaxes at a rate proportional to its sliding speed, so the outer radius settles first.
    stiff = {"youngs_modulus": 4e7}
    data = with_tables(PLATE, lining={"youngs_modulus": 400.0, "thickness": 1.0}, pressure_plate=stiff,
                 disc=stiff, counter_plate=stiff)
    solved = solved_case(case_from_dict(data))
    path = wear_in(solved.solver, K, max_steps=1000)
    assert path.converged and path.stop_reason == "steady"
    r1, r2, W = 80.0, 120.0, 4000.0
    final = path.states[-1].interfaces
    for itf in final:
        on = itf.tributary_area > 0
        exact = W / (2 * math.pi * (r2 - r1) * itf.r[on])
        assert np.max(np.abs(itf.pressure[on] / exact - 1)) < 0.01
    # first step after which the pressure stays within 1 % of its worn-in value
    itf_path = [s.interfaces[0] for s in path.states]
    inner, outer = np.argmin(itf_path[0].r), np.argmax(itf_path[0].r)

    def settled(node):
        err = np.array([abs(i.pressure[node] / final[0].pressure[node] - 1) for i in itf_path])
        return int(np.flatnonzero(err >= 0.01).max()) + 1

    assert settled(outer) < settled(inner), (settled(outer), settled(inner))


# ---------------------------------------------------------------- elastic bodies: the demos

@pytest.mark.parametrize("name", ["cone_capstan", "plate_tractor", "multiplate_gearbox"])
def test_demo_wears_in_to_uniform_wear(name, cone):
    # Worn in, Archard wear is uniform: p r const, T -> T_uw, xi -> 0 (Archard 1953; uniform-wear
    # method, Shigley's clutch chapter).  Checked away from the lining ends (one lining
    # thickness), where the edge nodes carry tributary areas of a different shape.
    solved = cone if name == "cone_capstan" else solved_case(load_case(ROOT / "cases" / f"{name}.toml"))
    faces = solved.case.interface.friction_surfaces // len(solved.fe.interfaces)
    path = wear_in(solved.solver, K, max_steps=1000, faces_per_interface=faces)
    assert path.converged, path.stop_reason
    res = compare(path.states[-1].interfaces, solved.hand)
    assert abs(res["capacity_position"]) <= 0.05
    assert abs(res["torque_fe_Nm"] / solved.hand.torque_uniform_wear_Nm - 1) <= 1e-3
    t = solved.case.lining.thickness
    sin_a = math.sin(math.radians(solved.case.interface.semi_cone_angle))
    for itf in path.states[-1].interfaces:
        s = (itf.r - itf.r.min()) / sin_a
        inside = (s > t) & (s < s.max() - t)
        pr = itf.pressure[inside] * itf.r[inside]
        assert (pr.max() - pr.min()) / pr.mean() <= 0.02
    # the new state was far from it (the check above is not met trivially)
    assert compare(path.states[0].interfaces, solved.hand)["capacity_position"] > 0.5


def test_halving_the_step_cap_keeps_the_path(cone, cone_path):
    # Backward Euler is first order (Hairer & Wanner, Solving ODEs II, §IV.3): halving the
    # step halves the path error, and the worn-in state does not depend on the step.
    paths = {0.05: cone_path}
    for cap in (0.025, 0.0125):
        paths[cap] = wear_in(cone.solver, K, step_cap=cap, max_steps=2000)
    torque = {c: compare(p.states[-1].interfaces, cone.hand)["torque_fe_Nm"] for c, p in paths.items()}
    assert abs(torque[0.025] / torque[0.05] - 1) < 0.002
    # torque on the path at a fixed wear volume, a third of the way to the first steady state
    v = cone_path.states[cone_path.steady_step].wear_volume_mm3 / 3
    mid = {}
    for c, p in paths.items():
        vols = [s.wear_volume_mm3 for s in p.states]
        mid[c] = np.interp(v, vols, [compare(s.interfaces, cone.hand)["capacity_position"] for s in p.states])
    coarse, fine = abs(mid[0.05] - mid[0.025]), abs(mid[0.025] - mid[0.0125])
    assert coarse < 0.02
    assert 3.0 > coarse / fine > 1.5, (coarse, fine)


# ---------------------------------------------------------------- wear volume and limits

def test_target_volume_and_lining_limit_stop_the_run(cone, cone_path):
    steady_volume = cone_path.states[cone_path.steady_step].wear_volume_mm3
    short = wear_in(cone.solver, K, volume_limit_mm3=0.4 * steady_volume)
    assert short.stop_reason == "volume" and not short.converged
    assert abs(short.states[-1].wear_volume_mm3 / (0.4 * steady_volume) - 1) < 1e-6
    limit = 0.5 * max(d.max() for d in cone_path.states[-1].depth_mm)
    worn_out = wear_in(cone.solver, K, max_wear_depth=limit)
    assert worn_out.stop_reason == "depth limit" and not worn_out.converged
    assert abs(max(d.max() for d in worn_out.states[-1].depth_mm) / limit - 1) < 1e-5


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory, monkeypatch_module):
    # a shorter duty than the demo's so the run ends before steady state
    data = with_tables(tomllib.loads(DEMO.read_text(encoding="utf-8")), wear={"engagements": 8000})
    folder = tmp_path_factory.mktemp("wear")
    case = write_toml(folder / "wear_case.toml", data)
    assert main(["run", str(case), "--out", str(folder / "out")]) == 0
    return data, folder / "out"


@pytest.fixture(scope="module")
def monkeypatch_module():
    mp = pytest.MonkeyPatch()
    yield mp
    mp.undo()


def _read_csv(path):
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def test_wear_volume_equals_archard_integral(demo_run):
    # Archard (1953): volume = k x normal load x sliding distance.  Over the face and the slip
    # time that is k int (T / mu) dTheta with T = mu int p r dA (torque from the normal
    # pressure) and Theta the relative rotation: omega0 t_s / 2 per engagement for a speed
    # falling linearly to zero.  Integrated here by the trapezoid rule from wear.csv.
    data, out = demo_run
    rows = _read_csv(out / "wear.csv")
    w, mu = data["wear"], data["interface"]["friction_coefficient"]
    per_engagement = w["slip_speed"] * 2 * math.pi / 60 * w["slip_time"] / 2
    theta = np.array([float(r["engagements"]) for r in rows]) * per_engagement
    torque = np.array([float(r["torque_Nm"]) for r in rows])
    integral = w["wear_coefficient"] * np.sum(0.5 * (torque[1:] + torque[:-1]) / mu * np.diff(theta))
    volume = float(rows[-1]["wear_volume_mm3"])
    assert abs(volume / integral - 1) < 0.005
    assert float(rows[-1]["engagements"]) == pytest.approx(8000)
    # and the worn profile holds that volume: sum of depth x ring area over the face
    profile = _read_csv(out / "worn_profile.csv")
    held = sum(float(p["wear_depth_mm"]) * float(p["tributary_area_mm2"]) for p in profile)
    assert abs(held / volume - 1) < 0.005
    assert sliding_per_engagement_rad(w["slip_speed"], w["slip_time"]) == pytest.approx(per_engagement)


def test_run_with_a_wear_table_writes_the_wear_results(demo_run):
    data, out = demo_run
    summary = json.loads((out / "summary.json").read_text())
    for key in ("torque_worn_in_Nm", "capacity_position_worn_in", "effective_radius_worn_in_mm",
                "peak_pressure_worn_in_MPa", "worn_in_converged", "wear_steps"):
        assert key in summary
    assert summary["wear_stop_reason"] == "sliding" and summary["worn_in_converged"] is False
    assert any("had not worn in" in w for w in summary["warnings"])
    rows = _read_csv(out / "wear.csv")
    assert tuple(rows[0]) == WEAR_CSV_COLUMNS and len(rows) == summary["wear_steps"] + 1
    assert float(rows[-1]["torque_Nm"]) == pytest.approx(summary["torque_worn_in_Nm"])
    # the torque falls from the new to the worn state on this clutch (xi starts above 1)
    assert float(rows[0]["capacity_position"]) > summary["capacity_position_worn_in"] > 0
    assert all(math.isfinite(float(v)) for r in rows for v in r.values() if v != "")
    for picture in ("wear_path.png", "wear_pressure.png", "worn_profile.png"):
        assert (out / picture).stat().st_size > 10_000


def test_run_without_a_wear_table_does_no_wear():
    result = plan.analyse(case_from_dict(PLATE), fields=False)
    assert result.wear is None
    assert not any(k.endswith("worn_in") or k.startswith("wear_") for k in plan.summary_of(result))
