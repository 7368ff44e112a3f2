"""Faults lose nothing: a run killed at any step leaves the previous complete results (or none),
and a study interrupted or killed at any point, then run again, has every planned sample once.

The child processes say which step they are at and wait there (on their standard input), so the
kill lands exactly at that step: the tests wait on those events, never on the clock.
"""
import csv
import json
import signal
import subprocess
import sys
from pathlib import Path

import pytest
import tomli_w
from rich.console import Console

from clutchfe.study import read_store, run_study

from tests.helpers.data import CONE
from tests.helpers.processes import read_until, stop_study

SMALL_PLATE = {
    "kind": "plate", "name": "small_plate",
    "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3, "friction_surfaces": 2},
    "load": {"axial_force": 3000.0},
    "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8},
}
# a child that runs the case and, at the step named on its command line, says so and waits
CHILD = """
import sys
from rich.console import Console
from clutchfe import load_case, run_case

target = sys.argv[3]

def on_step(name):
    print(name, flush=True)
    if name.startswith(target):
        sys.stdin.readline()        # wait here until the test kills this process

run_case(load_case(sys.argv[1]), sys.argv[2], Console(file=open("/dev/null", "w")), on_step=on_step)
print("finished", flush=True)
"""
# before any work, in the solve, in the evidence, and inside the scratch folder while the report is written
STEPS = ("meshing the section", "solving the contact", "mesh study", "report")


def _tree(folder: Path) -> dict:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def _kill_at(case: Path, out: Path, step: str, tmp_path: Path) -> list[str]:
    script = tmp_path / "child.py"
    script.write_text(CHILD, encoding="utf-8")
    proc = subprocess.Popen([sys.executable, str(script), str(case), str(out), step], stdin=subprocess.PIPE,
                            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    try:
        said = read_until(proc, step)
        proc.kill()                                      # SIGKILL: no clean-up of any kind
        proc.wait()
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert proc.returncode == -signal.SIGKILL
    return said


@pytest.fixture(scope="module")
def previous(tmp_path_factory):
    """A complete results folder from an earlier run of the same case."""
    tmp = tmp_path_factory.mktemp("previous")
    case = tmp / "c.toml"
    case.write_text(tomli_w.dumps(SMALL_PLATE), encoding="utf-8")
    out = tmp / "res"
    from clutchfe import load_case, run_case
    run_case(load_case(case), out, Console(file=open("/dev/null", "w")))
    return case, _tree(out)


@pytest.mark.slow
@pytest.mark.parametrize("step", STEPS)
def test_a_run_killed_at_any_step_keeps_the_previous_results(previous, tmp_path, step):
    case, before = previous
    out = tmp_path / "res"
    out.mkdir()
    for name, data in before.items():
        (out / name).parent.mkdir(parents=True, exist_ok=True)
        (out / name).write_bytes(data)
    said = _kill_at(case, out, step, tmp_path)
    assert said[-1].startswith(step)
    assert _tree(out) == before                          # the previous complete folder, byte for byte
    # the next run cleans the dead run's scratch and replaces the folder whole
    from clutchfe import load_case, run_case
    run_case(load_case(case), out, Console(file=open("/dev/null", "w")))
    assert not [p for p in tmp_path.iterdir() if ".writing-" in p.name or ".old-" in p.name]
    assert json.loads((out / "summary.json").read_text())["case_name"] == "small_plate"


@pytest.mark.slow
@pytest.mark.parametrize("step", ["solving the contact", "report"])
def test_a_first_run_killed_leaves_no_folder(previous, tmp_path, step):
    case, _ = previous
    out = tmp_path / "res"
    _kill_at(case, out, step, tmp_path)
    assert not out.exists()                              # none, never a half one


# ------------------------------------------------------------------ studies

STIFF_STUDY = {"name": "stiff", "base_case": "base.toml",
               "vary": [{"key": "support.axial_stiffness", "start": 5.0e3, "stop": 5.0e6, "steps": 16,
                         "spacing": "log"}]}


def _table(folder: Path) -> list[dict]:
    with open(folder / "samples.csv", newline="", encoding="utf-8") as fh:
        return [{k: v for k, v in row.items()} for row in csv.DictReader(fh)]


@pytest.fixture(scope="module")
def stiff_study(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("study")
    base = {**CONE, "support": {"type": "springs", "axial_stiffness": 1e5, "radial_stiffness": 1e5}}
    (tmp / "base.toml").write_text(tomli_w.dumps(base), encoding="utf-8")
    path = tmp / "stiff.study.toml"
    path.write_text(tomli_w.dumps(STIFF_STUDY), encoding="utf-8")
    run_study(path, workers=1, console=Console(file=open("/dev/null", "w")), out=tmp / "reference")
    return path, _table(tmp / "reference")


@pytest.mark.slow
@pytest.mark.parametrize("sig, after", [(signal.SIGINT, 3), (signal.SIGKILL, 3), (signal.SIGKILL, 9)],
                         ids=["interrupt-early", "kill-early", "kill-late"])
def test_a_study_stopped_at_any_point_then_rerun_has_every_sample_once(stiff_study, tmp_path, sig, after):
    path, reference = stiff_study
    out = tmp_path / "res"
    kept = stop_study(path, out, sig, after, tmp_path / "child.err")
    assert after <= kept <= 16
    summary = run_study(path, workers=1, console=Console(file=open("/dev/null", "w")), out=out)
    assert summary["run"]["resumed_with"] == kept
    ids = [r["sample_id"] for r in read_store(out / "samples.sqlite")]
    assert ids == list(range(16))                         # every planned sample, exactly once
    assert _table(out) == reference                       # with unchanged values
