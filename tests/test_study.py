"""Design studies: study files, sampling, reused solves, runner, store, restart, cluster.

Cases here are small invented clutches on coarse meshes so every solve takes a fraction of
a second; clusters are local (LocalCluster, or a scheduler and workers on 127.0.0.1 started
and stopped by the test).
"""
import copy
import csv
import json
import math
import os
import signal
import subprocess
import sys
import threading
from pathlib import Path

import numpy as np
import pytest
from rich.console import Console
from scipy import stats

from clutchfe.case import CaseError
from tests.helpers.solving import solved_case
from clutchfe.study import (evaluate, find_limit, load_study, plan, read_store, run_study, sample_case,
                            unit_draws, wilson_interval)
from clutchfe.study.evaluate import solve_chunk
from clutchfe.study.sampling import frozen
from clutchfe.study.spec import Distribution

from tests.helpers.data import write_toml
from tests.helpers.processes import ended, stop_study, stored_samples, wait_until

COARSE = {"interface_element_size": 1.5, "element_size": 8.0, "edge_element_size": 0.6}
CONE = {"kind": "cone", "name": "small_cone",
        "interface": {"inner_radius": 40.0, "outer_radius": 50.0, "semi_cone_angle": 20.0,
                      "friction_coefficient": 0.2, "friction_surfaces": 1},
        "load": {"axial_force": 1000.0},
        "support": {"type": "springs", "axial_stiffness": 1.0e5, "radial_stiffness": 1.0e6},
        "mesh": COARSE}
PLATE = {"kind": "plate", "name": "small_plate",
         "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3,
                       "friction_surfaces": 2},
         "load": {"axial_force": 3000.0, "application": "ring", "ring_radius": 66.0},
         "lining": {"thickness": 1.2},
         "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8}}
QUIET = Console(file=open(os.devnull, "w"), width=100)


def _study(tmp_path: Path, base: dict, study: dict, name: str = "s") -> Path:
    write_toml(tmp_path / "base.toml", base)
    return write_toml(tmp_path / f"{name}.study.toml", {"base_case": "base.toml", "name": name, **study})


def _csv(path: Path) -> list[dict]:
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def _strict_json(path: Path) -> dict:
    def no_nan(token):
        raise AssertionError(f"{path.name} holds {token}")
    return json.loads(path.read_text(), parse_constant=no_nan)


# ------------------------------------------------------------------ study files

def test_bad_study_file_gives_one_line_per_problem(tmp_path):
    path = _study(tmp_path, CONE, {
        "sampels": 10, "samples": 10, "outputs": ["torque_fe_Nm", "torque_Nm"],
        "vary": [{"key": "interface.friction_coeficient", "distribution": "normal", "mean": 0.2, "std_dev": 0.01},
                 {"key": "interface.friction_coefficient", "distribution": "normal", "mean": 0.2, "std_dev": -1.0},
                 {"key": "load.axial_force", "values": [1000.0, -5.0]},
                 {"key": "misalignment.coning", "values": [0.1]},
                 {"key": "cone.rim_thickness", "distribution": "gaussian", "mean": 4.0, "std_dev": 0.1}]})
    with pytest.raises(CaseError) as err:
        load_study(path)
    problems = err.value.problems
    expected = ["sampels: unknown study key (did you mean samples?)",
                "vary[0].key = 'interface.friction_coeficient': not a case key (did you mean "
                "interface.friction_coefficient?)",
                "vary[1].std_dev = -1: allowed: value > 0",
                "vary[2].values: load.axial_force = -5 out of range; allowed: 0 < value ≤ 1e+08 N",
                "vary[3].key = 'misalignment.coning': belongs to plate cases",
                "vary[4].distribution = 'gaussian': not known",
                "outputs: 'torque_Nm' is not an output"]
    assert len(problems) == len(expected)
    for want, got in zip(expected, problems):
        assert got.startswith(want), got


def test_stiffness_sweep_needs_a_spring_support(tmp_path):
    rigid = copy.deepcopy(CONE)
    rigid["support"] = {"type": "rigid"}
    path = _study(tmp_path, rigid, {"vary": [{"key": "support.axial_stiffness", "values": [1e4, 1e5]}]})
    with pytest.raises(CaseError, match="support.type = 'rigid' ignores it"):
        load_study(path)


# ------------------------------------------------------------------ sampling

def test_latin_hypercube_fills_every_stratum_once_and_follows_the_seed():
    n = 50
    u = unit_draws(n, 3, "latin_hypercube", seed=11)
    for d in range(3):
        assert sorted(np.floor(u[:, d] * n).astype(int)) == list(range(n))
    assert np.array_equal(u, unit_draws(n, 3, "latin_hypercube", seed=11))
    assert not np.array_equal(u, unit_draws(n, 3, "latin_hypercube", seed=12))
    mc = unit_draws(n, 3, "monte_carlo", seed=11)
    assert mc.min() > 0.0 and mc.max() < 1.0


def test_distributions_have_the_quoted_moments_and_bounds():
    # reference: scipy.stats moments of the frozen distributions
    logn = frozen(Distribution("x", "lognormal", {"mean": 2.0e5, "std_dev": 5.0e4}))
    assert logn.mean() == pytest.approx(2.0e5, rel=1e-12) and logn.std() == pytest.approx(5.0e4, rel=1e-12)
    unif = frozen(Distribution("x", "uniform", {"low": -0.1, "high": 0.3}))
    assert unif.ppf(0.0) == pytest.approx(-0.1) and unif.ppf(1.0) == pytest.approx(0.3)
    trunc = frozen(Distribution("x", "truncated_normal", {"mean": 0.25, "std_dev": 0.05, "low": 0.2, "high": 0.28}))
    x = trunc.ppf(unit_draws(2000, 1, "monte_carlo", seed=1)[:, 0])
    assert x.min() >= 0.2 and x.max() <= 0.28
    # truncated normal on [mean - s, mean + s]: its variance is (1 - 2 phi(1) / (2 Phi(1) - 1)) s^2
    # (Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions vol. 1, truncated normal)
    sym = frozen(Distribution("x", "truncated_normal", {"mean": 0.0, "std_dev": 1.0, "low": -1.0, "high": 1.0}))
    closed = 1.0 - 2.0 * math.exp(-0.5) / math.sqrt(2 * math.pi) / (2 * 0.5 * (1 + math.erf(1 / math.sqrt(2))) - 1)
    assert sym.var() == pytest.approx(closed, rel=1e-10)


def test_plan_crosses_grid_points_with_common_draws(tmp_path):
    path = _study(tmp_path, CONE, {"samples": 4, "seed": 5, "vary": [
        {"key": "load.axial_force", "values": [800.0, 1200.0]},
        {"key": "interface.friction_coefficient", "distribution": "uniform", "low": 0.15, "high": 0.25}]})
    samples = plan(load_study(path))
    assert [i for i, _ in samples] == list(range(8))
    assert [s["load.axial_force"] for _, s in samples] == [800.0] * 4 + [1200.0] * 4
    mu = [s["interface.friction_coefficient"] for _, s in samples]
    assert mu[:4] == mu[4:] and len(set(mu[:4])) == 4


# ------------------------------------------------------------------ reuse

@pytest.mark.parametrize("base,overrides", [
    (CONE, {"misalignment.cone_angle_mismatch": 0.03, "load.axial_force": 1400.0,
            "interface.friction_coefficient": 0.17}),
    (CONE, {"misalignment.cone_angle_mismatch": -0.02, "load.axial_force": 700.0}),
    (PLATE, {"misalignment.coning": 0.03, "load.axial_force": 2500.0}),
    (PLATE, {"misalignment.coning": -0.02, "interface.friction_coefficient": 0.35}),
], ids=["cone_opens_at_r2", "cone_opens_at_r1", "plate_coning_up", "plate_coning_down"])
def test_reused_solve_equals_a_fresh_solve(base, overrides):
    evaluate(base, base["name"], {})          # the group's solver is built from the base case first
    reused = evaluate(base, base["name"], overrides)
    fresh = solved_case(sample_case(base, overrides, base["name"])).result
    for key in ("torque_fe_Nm", "capacity_position", "peak_pressure_MPa", "effective_radius_mm",
                "contact_area_fraction"):
        assert reused[key] == pytest.approx(fresh[key], rel=1e-9, abs=1e-12), key


def test_the_first_sample_of_a_group_does_not_shape_its_solver():
    from clutchfe.study.evaluate import clear_solvers
    odd = {"misalignment.cone_angle_mismatch": -0.05, "load.axial_force": 1234.0}
    clear_solvers()
    first = evaluate(CONE, "c", odd)             # builds the group's solver from this sample
    clear_solvers()
    evaluate(CONE, "c", {})
    assert evaluate(CONE, "c", odd) == first     # bit for bit: 1 or 2 workers give one table


def test_a_sample_that_cannot_be_solved_is_recorded_with_its_reason():
    records = solve_chunk({"base_data": PLATE, "name": "p"},
                          [(0, {"misalignment.coning": 5.0}, None), (1, {}, None)])
    assert records[0]["status"] == "failed" and "misalignment.coning" in records[0]["reason"]
    assert records[1]["status"] == "done" and records[1]["outputs"]["torque_fe_Nm"] > 0


# ------------------------------------------------------------------ whole studies

@pytest.mark.slow
def test_sweep_reproduces_torque_proportional_to_mu_and_force(tmp_path):
    base = copy.deepcopy(CONE)
    base["requirement"] = {"required_torque": 20.0, "service_factor": 1.25}
    path = _study(tmp_path, base, {"vary": [
        {"key": "interface.friction_coefficient", "values": [0.1, 0.2, 0.3]},
        {"key": "load.axial_force", "start": 500.0, "stop": 2000.0, "steps": 3}]})
    out = tmp_path / "res"
    summary = run_study(path, workers=1, console=QUIET, out=out)
    rows = _csv(out / "samples.csv")
    assert len(rows) == 9 and summary["samples_done"] == 9 and summary["complete"]
    # zero initial gap: unilateral contact is positively homogeneous in the load (linear
    # elasticity), and mu only multiplies the normal pressure (Shigley's clutch chapter; docs/physics.md): T / (mu W) is constant
    per = [float(r["torque_fe_Nm"]) / (float(r["interface.friction_coefficient"]) * float(r["load.axial_force_N"]))
           for r in rows]
    assert max(per) - min(per) <= 1e-10 * max(per)
    import pyarrow.parquet as pq
    table = pq.read_table(out / "samples.parquet").to_pylist()
    assert [r["sample_id"] for r in table] == [int(r["sample_id"]) for r in rows]
    assert [r["torque_fe_Nm"] for r in table] == [float(r["torque_fe_Nm"]) for r in rows]
    study = _strict_json(out / "study.json")
    for key in ("samples_planned", "samples_done", "samples_failed", "probability_below_required",
                "probability_below_required_low", "probability_below_required_high"):
        assert key in study
    below = sum(float(r["torque_fe_Nm"]) < 25.0 for r in rows)
    assert study["probability_below_required"] == below / 9
    assert {"capacity_histogram.png", "response_curves.png"} <= set(os.listdir(out))


@pytest.mark.slow
def test_shortfall_probability_matches_the_normal_cdf(tmp_path):
    base = copy.deepcopy(CONE)
    base["requirement"] = {"required_torque": 20.0, "service_factor": 1.25}
    n, mean, sd = 400, 0.2, 0.02
    path = _study(tmp_path, base, {"samples": n, "seed": 3, "vary": [
        {"key": "interface.friction_coefficient", "distribution": "normal", "mean": mean, "std_dev": sd}]})
    summary = run_study(path, workers=1, console=QUIET, out=tmp_path / "res")
    # T = k mu with everything else fixed, so P(T < T_design) = Phi((T_design / k - mean) / sd);
    # normal CDF: scipy.stats as reference library
    k = evaluate(base, "b", {})["torque_fe_Nm"] / 0.2
    exact = stats.norm.cdf((20.0 * 1.25 / k - mean) / sd)
    assert 0.05 < exact < 0.95                      # the check is not at a trivial tail
    p, low, high = (summary[f"probability_below_required{s}"] for s in ("", "_low", "_high"))
    assert low <= exact <= high
    assert (low, high) == pytest.approx(wilson_interval(round(p * n), n))
    # Latin hypercube in one input: the count below any threshold is within one of n * P
    assert abs(p * n - exact * n) <= 1.0
    assert summary["drivers_of_torque_fe_Nm"][0] == {"key": "interface.friction_coefficient",
                                                     "rank_correlation": pytest.approx(1.0)}


def test_wilson_interval_against_published_values():
    # Newcombe, Statistics in Medicine 17 (1998) 857, table I, score method (values from memory of
    # that table): 81/263 -> 0.2553 to 0.3662 (95 %)
    assert wilson_interval(81, 263) == pytest.approx((0.2553, 0.3662), abs=1e-4)
    # and 0/10 -> 0 to 0.2775
    assert wilson_interval(0, 10) == pytest.approx((0.0, 0.2775), abs=1e-4)


def test_invalid_samples_are_recorded_and_the_study_goes_on(tmp_path):
    path = _study(tmp_path, PLATE, {"samples": 12, "seed": 4, "vary": [
        {"key": "misalignment.coning", "distribution": "normal", "mean": 0.0, "std_dev": 1.5}]})
    summary = run_study(path, workers=1, console=QUIET, out=tmp_path / "res")
    rows = read_store(tmp_path / "res" / "samples.sqlite")
    failed = [r for r in rows if r["status"] == "failed"]
    assert failed and len(failed) < 12 and summary["samples_failed"] == len(failed)
    # coning is allowed within -1 … 1 mm (schema) and below the 1.2 mm lining thickness
    for r in rows:
        ok = abs(r["inputs"]["misalignment.coning"]) <= 1.0
        assert (r["status"] == "done") == ok
        assert ok or "misalignment.coning" in r["reason"]
    assert summary["samples_done"] + summary["samples_failed"] == summary["samples_planned"] == 12


def test_tolerance_limit_brackets_the_design_torque():
    base = copy.deepcopy(CONE)
    nominal = evaluate(base, "b", {})["torque_fe_Nm"]
    base["requirement"] = {"required_torque": 0.9 * nominal / 1.25, "service_factor": 1.25}
    limit = find_limit({"base_data": base, "name": "b"}, {"key": "misalignment.cone_angle_mismatch",
                                                         "low": 0.0, "high": 1.0, "criterion": "required_torque",
                                                         "steps": 6})
    assert limit["found"] and limit["acceptable_side"] == "below"
    a, b = limit["bracket"]
    assert 0.0 < a < b <= a + 1e-4
    # independent check through the full pipeline on both sides of the bracket
    for value, meets in ((a, True), (b, False)):
        data = copy.deepcopy(base)
        data["misalignment"] = {"cone_angle_mismatch": value}
        assert (solved_case(sample_case(data, {}, "b")).result["capacity_margin_fe"] >= 0) == meets


# ------------------------------------------------------------------ workers, restarts, lost workers

STIFF = {"vary": [{"key": "support.axial_stiffness", "start": 5.0e3, "stop": 5.0e6, "steps": 16,
                   "spacing": "log"}]}


@pytest.fixture(scope="module")
def stiffness_reference(tmp_path_factory):
    """One uninterrupted run with one worker: the table every other run must reproduce."""
    tmp = tmp_path_factory.mktemp("ref")
    path = _study(tmp, CONE, STIFF, name="stiff")
    run_study(path, workers=1, console=QUIET, out=tmp / "res")
    return path, _csv(tmp / "res" / "samples.csv")


@pytest.mark.slow
def test_same_table_with_two_workers(stiffness_reference, tmp_path):
    path, reference = stiffness_reference
    summary = run_study(path, workers=2, console=QUIET, out=tmp_path / "res")
    assert summary["run"]["workers"] == 2 and summary["run"]["solver_groups"] == 16
    assert _csv(tmp_path / "res" / "samples.csv") == reference


class _StudyThread(threading.Thread):
    """run_study in the background, keeping its summary or its exception."""

    def __init__(self, *args, **kwargs):
        super().__init__(daemon=True)           # never keeps the test session alive
        self.args, self.kwargs, self.summary, self.error = args, kwargs, None, None

    def run(self):
        try:
            self.summary = run_study(*self.args, **self.kwargs)
        except BaseException as exc:  # noqa: BLE001 - re-raised by the test
            self.error = exc

    def __repr__(self):
        return f"run_study (error: {self.error!r})"


def _scheduler_address(sched_file: Path):
    """The address in the scheduler file, or None while the file is missing or half written."""
    try:
        return json.loads(sched_file.read_text())["address"]
    except (OSError, ValueError, KeyError):
        return None


@pytest.mark.slow
def test_killed_worker_on_a_real_scheduler_loses_nothing(stiffness_reference, tmp_path):
    from distributed import Client

    path, reference = stiffness_reference
    procs = []
    try:
        sched_file = tmp_path / "scheduler.json"
        scheduler = subprocess.Popen([sys.executable, "-m", "distributed.cli.dask_scheduler", "--host",
                                      "127.0.0.1", "--port", "0", "--no-dashboard", "--scheduler-file",
                                      str(sched_file)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        procs.append(scheduler)
        wait_until(lambda: _scheduler_address(sched_file), "the scheduler file", needs=[scheduler])
        address = _scheduler_address(sched_file)
        for _ in range(2):
            procs.append(subprocess.Popen([sys.executable, "-m", "distributed.cli.dask_worker", address,
                                           "--nthreads", "1", "--no-nanny", "--host", "127.0.0.1",
                                           "--no-dashboard"], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL))
        client = None
        while client is None:           # the scheduler listens once its file is written; retry if slow
            try:
                client = Client(address)
            except (OSError, TimeoutError):
                assert not ended(scheduler), "the scheduler ended before a client could connect"
        with client:
            wait_until(lambda: len(client.scheduler_info()["workers"]) >= 2, "two workers", needs=procs)
        out = tmp_path / "res"
        runner = _StudyThread(path, scheduler=address, console=QUIET, out=out)
        runner.start()
        wait_until(lambda: stored_samples(out) >= 2, "the first samples", needs=[runner, *procs])
        procs[1].send_signal(signal.SIGKILL)
        killed_at = stored_samples(out)
        # the study ends once the survivor has taken over the lost work; it could not without the
        # scheduler or that worker, so the wait fails instead of hanging if either of them ends
        while runner.is_alive():
            runner.join(timeout=0.5)            # polling interval, not a limit
            assert not runner.is_alive() or not (ended(procs[0]) or ended(procs[2])), \
                "the scheduler or the surviving worker ended during the study"
        if runner.error is not None:
            raise runner.error
        assert killed_at < 16                        # the worker died mid-study
        rows = read_store(out / "samples.sqlite")
        assert [r["sample_id"] for r in rows] == list(range(16))      # the plan, each sample once
        assert runner.summary["complete"] and _csv(out / "samples.csv") == reference
    finally:
        for p in reversed(procs):       # SIGKILL always ends a process, so the waits return
            if p.poll() is None:
                p.kill()
            p.wait()


@pytest.mark.slow
def test_interrupted_study_continues_without_loss_or_repeat(stiffness_reference, tmp_path):
    path, reference = stiffness_reference
    out = tmp_path / "res"
    kept = stop_study(path, out, signal.SIGINT, 3, tmp_path / "child.err")       # Ctrl-C
    assert 3 <= kept < 16, "the interrupt came too late to test a restart"
    summary = run_study(path, workers=1, console=QUIET, out=out)
    assert summary["run"]["resumed_with"] == kept
    assert [r["sample_id"] for r in read_store(out / "samples.sqlite")] == list(range(16))
    assert _csv(out / "samples.csv") == reference
    # the store refuses a different plan instead of mixing two studies
    changed = _study(tmp_path, CONE, {"vary": [{"key": "support.axial_stiffness", "values": [1e4, 2e4]}]},
                     name="stiff")
    with pytest.raises(CaseError, match="different study plan"):
        run_study(changed, workers=1, console=QUIET, out=out)


@pytest.mark.slow
def test_study_command_runs_and_rejects_bad_files(tmp_path, capsys):
    from clutchfe._cli import main
    path = _study(tmp_path, CONE, {"vary": [{"key": "interface.friction_coefficient",
                                              "values": [0.15, 0.3]}]}, name="cli")
    out = tmp_path / "out"
    assert main(["study", str(path), "--workers", "1", "--out", str(out)]) == 0
    summary = _strict_json(out / "study.json")
    assert summary["samples_done"] == 2 and summary["samples_failed"] == 0
    rows = _csv(out / "samples.csv")
    torques = sorted(float(r["torque_fe_Nm"]) for r in rows)
    assert torques[1] == pytest.approx(2 * torques[0], rel=1e-9)       # T linear in mu (Shigley; docs/physics.md)
    bad = _study(tmp_path, CONE, {"vary": [{"key": "interface.friction_coefficent", "values": [0.2]}]}, name="bad")
    assert main(["study", str(bad), "--out", str(tmp_path / "bad")]) == 2
    err = capsys.readouterr().err
    assert "friction_coefficent" in err and "Traceback" not in err
