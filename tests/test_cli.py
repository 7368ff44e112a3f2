"""The command line as a practitioner uses it: --version, init, run on several cases, compare,
-q/-v, plain progress lines when piped, and `clutchfe keys` as plain Markdown."""
import contextlib
import csv
import io
import json
import os
import re
import subprocess
import sys
import tomllib
from html import escape as html_escape

import pytest
from rich.console import Console

from clutchfe import _cli
from clutchfe._cli import keys_text, main, run_line
from clutchfe.errors import PhysicsError
from clutchfe.output.compare_runs import CompareRow, RunRow, compare_html
from clutchfe.output.folders import MARKER
from clutchfe.provenance import CAUTION, __version__
from clutchfe.schema import SCHEMA
from clutchfe.starting_case import key_comment
from clutchfe.study import runner
from clutchfe.study.spec import (DISTRIBUTIONS, GRID_KEYS, LIMIT_KEY_MEANINGS, LIMIT_KEYS, TOP_KEY_MEANINGS,
                                 TOP_KEYS, VARY_KEY_MEANINGS)

from tests.helpers.data import SMALL_PLATE, write_toml

ANSI = re.compile(r"\x1b\[")
SMALL = SMALL_PLATE
# the steps of a run, as run_case names them (plan.py), in order
STEPS = ("meshing the section", "solving the contact", "mesh study", "verification table", "pictures and files",
         "report")


def _small(**top) -> dict:
    return {**json.loads(json.dumps(SMALL)), **top}


def _lines(text: str) -> list[str]:
    return [line for line in text.splitlines() if line.strip()]


# --------------------------------------------------------------------------- --version, keys


def test_version_prints_the_package_version(capsys):
    assert main(["--version"]) == 0
    assert capsys.readouterr().out == f"clutchfe {__version__}\n"


def test_keys_is_plain_markdown_with_the_study_keys(capsys):
    assert main(["keys"]) == 0
    text = capsys.readouterr().out
    assert text == keys_text()
    assert not ANSI.search(text)
    rows = [line for line in text.splitlines() if line.startswith("|")]
    # no wrapped line: every table line is whole, and there is one row per key
    assert all(line.endswith("|") for line in rows)
    case_keys = sum(len(keys) for keys in SCHEMA.values())
    study_keys = len(TOP_KEY_MEANINGS) + len(VARY_KEY_MEANINGS) + len(LIMIT_KEY_MEANINGS)
    assert len(rows) == 2 * 2 + case_keys + study_keys          # two tables, header and rule each
    for table, keys in SCHEMA.items():
        for name in keys:
            assert f"| `{table + '.' if table else ''}{name}` |" in text
    for key in TOP_KEYS:
        assert f"| `{key}` |" in text
    for key in LIMIT_KEYS:
        assert f"| `limit.{key}` |" in text


def test_the_study_key_table_names_exactly_the_keys_the_loader_accepts():
    assert tuple(TOP_KEY_MEANINGS) == TOP_KEYS
    assert tuple(LIMIT_KEY_MEANINGS) == LIMIT_KEYS
    params = {p for ps in DISTRIBUTIONS.values() for p in ps}
    assert set(VARY_KEY_MEANINGS) == {"key", "distribution", *GRID_KEYS, *params}
    for name in DISTRIBUTIONS:
        assert name in VARY_KEY_MEANINGS["distribution"]


# --------------------------------------------------------------------------- check: start-up

# what `clutchfe check` must not import: the plotting stack, the 3D pictures, the study runner, scipy's
# optimisation and statistics, the FE library (each a large part of a second of CPU at start-up)
NOT_FOR_CHECK = ("matplotlib", "pyvista", "vtk", "dask", "distributed", "scipy.optimize", "scipy.stats", "skfem")


def test_check_starts_without_the_plotting_and_solver_stack(tmp_path):
    case = write_toml(tmp_path / "small.toml", _small(name="startup"))
    code = ("import json, sys\n"
            "from clutchfe._cli import main\n"
            f"status = main(['-q', 'check', {str(case)!r}])\n"
            f"heavy = [m for m in {NOT_FOR_CHECK!r} if m in sys.modules]\n"
            "print(json.dumps({'status': status, 'heavy': heavy}))\n")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    said = json.loads(proc.stdout.splitlines()[-1])
    assert said == {"status": 0, "heavy": []}
    assert "case 'startup' (plate) is valid" in proc.stdout         # the check itself ran


# --------------------------------------------------------------------------- init


def _comment_before(lines: list[str], k: int) -> str:
    """The comment block right above line ``k``, its lines joined."""
    block = []
    while k > 0 and lines[k - 1].startswith("#") and not re.match(r"# \w+ = ", lines[k - 1]):
        k -= 1
        block.insert(0, lines[k])
    return " ".join(re.sub(r"^#\s*", "", b) for b in block)


@pytest.mark.parametrize("kind", ["cone", "plate"])
def test_init_writes_a_commented_case_that_checks(tmp_path, capsys, kind):
    path = tmp_path / "new.toml"
    assert main(["init", kind, str(path)]) == 0
    assert str(path) in capsys.readouterr().out
    assert main(["check", str(path)]) == 0
    text = path.read_text(encoding="utf-8")
    data = tomllib.loads(text)
    assert data["kind"] == kind
    required = [(t, n) for t, keys in SCHEMA.items() for n, k in keys.items() if k.required and kind in k.kinds]
    if kind == "cone":
        required.append(("interface", "semi_cone_angle"))       # required for a cone (case.py)
    for table, name in required:
        assert name in (data[table] if table else data), (table, name)
    # every key written carries the schema's own unit and meaning just above it
    written = [(t, n) for t, v in data.items() if isinstance(v, dict) for n in v]
    written += [("", n) for n, v in data.items() if not isinstance(v, dict)]
    assert len(written) >= len(required) + 5            # and the most used optional keys too
    current = ""
    lines = text.splitlines()
    for k, line in enumerate(lines):
        if line.startswith("["):
            current = line.strip("[]")
        m = re.match(r"^(?:# )?(\w+) = ", line)
        if m and m.group(1) in SCHEMA[current]:
            key = SCHEMA[current][m.group(1)]
            comment = _comment_before(lines, k)
            assert " ".join(key.meaning.split()) in comment, (current, m.group(1))
            if key.unit:
                assert f"[{key.unit}]" in comment
            assert comment == " ".join(re.sub(r"^#\s*", "", c) for c in
                                       key_comment(current, m.group(1)).splitlines())
    assert CAUTION.split(".")[0] in " ".join(text.split())


def test_init_refuses_an_existing_file_unless_replace(tmp_path, capsys):
    path = tmp_path / "mine.toml"
    path.write_text("keep me", encoding="utf-8")
    assert main(["init", "plate", str(path)]) == 2
    err = capsys.readouterr().err
    assert "PATH" in err and "mine.toml" in err and "--replace" in err and "Traceback" not in err
    assert path.read_text(encoding="utf-8") == "keep me"
    assert main(["init", "plate", str(path), "--replace"]) == 0
    assert tomllib.loads(path.read_text(encoding="utf-8"))["kind"] == "plate"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["mine.toml"]       # no scratch file left


def test_init_default_path_and_unknown_kind(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(["init", "cone"]) == 0
    assert (tmp_path / "cone.toml").is_file()
    assert main(["init", "drum"]) == 2
    err = capsys.readouterr().err
    assert "KIND" in err and "'drum'" in err and "cone" in err and "plate" in err
    assert not (tmp_path / "drum.toml").exists()


# --------------------------------------------------------------------------- run: several cases (no solve)


def _fake_summary(case) -> dict:
    force = case.load.axial_force
    return {"case_name": case.name, "torque_fe_Nm": force / 25.0, "capacity_position": 0.8,
            "effective_radius_mm": 62.0, "failed_criteria": ["required torque"] if force < 2000 else [],
            "torque_uniform_pressure_Nm": 1.0, "torque_uniform_wear_Nm": 1.0, "design_peak_pressure_MPa": 0.3,
            "dofs": 10, "mesh": {"nodes": 5, "triangles": 3, "element_order": 2}, "contact_iterations": 1,
            "solve_seconds": 0.0}


@pytest.fixture
def fake_run(monkeypatch):
    """run_case without a solve: a case named 'physics' cannot be solved, 'bug' is a bug, 'stop' is
    interrupted; the others come back with a summary and write nothing."""
    calls = []

    def run_case(case, folder, console, service=None, on_step=None):
        calls.append((case.name, folder))
        for step in (*STEPS, "done"):
            if on_step is not None:
                on_step(step)
        if case.name == "physics":
            raise PhysicsError("the interface cannot carry the force")
        if case.name == "bug":
            raise ZeroDivisionError("boom")
        if case.name == "stop":
            raise KeyboardInterrupt
        return _fake_summary(case)

    monkeypatch.setattr(_cli.plan, "run_case", run_case)
    return calls


def _cases(folder, *names, force=3000.0):
    folder.mkdir(exist_ok=True)
    paths = []
    for name in names:
        data = _small(name=name)
        data["load"]["axial_force"] = force
        paths.append(str(write_toml(folder / f"{name}.toml", data)))
    return paths


@pytest.mark.parametrize("names,expect", [(("a", "b"), 0), (("a", "physics"), 3), (("physics", "bad"), 2),
                                          (("bad", "bug"), 1), (("bug", "physics", "a"), 1)])
def test_run_exit_status_is_the_worst_of_the_cases(tmp_path, monkeypatch, capsys, fake_run, names, expect):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", *[n for n in names if n != "bad"])
    if "bad" in names:
        paths.insert(names.index("bad"), str(write_toml(tmp_path / "in" / "bad.toml", {"kind": "plate"})))
    assert main(["run", *paths]) == expect
    out, err = capsys.readouterr()
    result = [line for line in out.splitlines() if re.match(r"^\w+: .*exit \d$", line)]
    assert [line.split(":")[0] for line in result] == list(names)           # one line per case, in order
    statuses = {"bad": 2, "physics": 3, "bug": 1}
    for line, name in zip(result, names):
        assert line.endswith(f"exit {statuses.get(name, 0)}")
    assert "Traceback" not in err
    # the ones that could run all ran: a failed case does not stop the others
    assert [c[0] for c in fake_run] == [n for n in names if n != "bad"]
    rows = list(csv.DictReader((tmp_path / "results" / "runs" / "runs.csv").open(encoding="utf-8")))
    assert [(r["case"], int(r["exit_status"])) for r in rows] == [(n, statuses.get(n, 0)) for n in names]


def test_run_line_and_runs_table_give_the_units(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a") + _cases(tmp_path / "in2", "low", force=1000.0)
    assert main(["run", *paths, "--out", "many"]) == 0
    out = capsys.readouterr().out
    assert "a: FE torque 120.00 N·m, xi 0.800, R_eff 62.000 mm, ok, exit 0" in out
    assert "low: FE torque 40.00 N·m, xi 0.800, R_eff 62.000 mm, failed: required torque, exit 0" in out
    assert f"caution: {CAUTION}" in out
    assert fake_run == [("a", _cli.Path("many") / "a"), ("low", _cli.Path("many") / "low")]
    md = (tmp_path / "many" / "runs.md").read_text(encoding="utf-8")
    assert "torque_fe_Nm [N·m]" in md and "effective_radius_mm [mm]" in md and CAUTION in md
    assert json.loads((tmp_path / "many" / MARKER).read_text())["kind"] == "runs"
    # the same folder again: it is clutchfe's, so it is used again
    assert main(["run", *paths, "--out", "many"]) == 0


def test_one_case_writes_the_table_only_when_asked(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a")
    assert main(["run", *paths]) == 0
    assert not (tmp_path / "results" / "runs").exists()
    assert fake_run[-1] == ("a", _cli.Path("results") / "a")
    assert main(["run", *paths, "--out", "one"]) == 0                # one case: --out is its folder
    assert fake_run[-1] == ("a", _cli.Path("one"))
    assert main(["run", *paths, "--table", "--out", "grouped"]) == 0
    assert fake_run[-1] == ("a", _cli.Path("grouped") / "a")
    assert (tmp_path / "grouped" / "runs.csv").is_file() and (tmp_path / "grouped" / "runs.md").is_file()


def test_run_refuses_a_foreign_or_single_run_folder_as_parent(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a", "b")
    mine = tmp_path / "mine"
    mine.mkdir()
    (mine / "notes.txt").write_text("keep", encoding="utf-8")
    assert main(["run", *paths, "--out", "mine"]) == 2
    assert sorted(p.name for p in mine.iterdir()) == ["notes.txt"]
    single = tmp_path / "single"
    single.mkdir()
    (single / "summary.json").write_text("{}", encoding="utf-8")
    (single / MARKER).write_text(json.dumps({"written_by": "clutchfe", "kind": "run",
                                             "entries": ["summary.json"]}), encoding="utf-8")
    assert main(["run", *paths, "--out", "single"]) == 2
    err = capsys.readouterr().err
    assert "--out = 'single'" in err and "not a folder of several runs" in err
    assert fake_run == []                                       # refused before any solve


def test_two_cases_with_one_name_are_refused(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    first = _cases(tmp_path / "x", "same")
    second = _cases(tmp_path / "y", "same")
    assert main(["run", *first, *second]) == 2
    assert "name = 'same'" in capsys.readouterr().err
    assert [c[0] for c in fake_run] == ["same"]


def test_quiet_prints_only_the_result_lines_and_the_caution(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a", "b")
    assert main(["-q", "run", *paths]) == 0
    out, err = capsys.readouterr()
    assert _lines(out) == [run_line(RunRow("a", paths[0], 0, _fake_summary_named("a"))),
                           run_line(RunRow("b", paths[1], 0, _fake_summary_named("b"))), f"caution: {CAUTION}"]
    assert err == ""
    assert main(["run", "--quiet", *paths, "--verbose"]) == 2            # argparse: one parser
    assert "-v/--verbose: not allowed with argument -q/--quiet" in capsys.readouterr().err
    assert main(["-q", "run", *paths, "--verbose"]) == 2                  # before and after the command
    assert "-q/--quiet and -v/--verbose: both given" in capsys.readouterr().err


def _fake_summary_named(name):
    from clutchfe.case import case_from_dict
    return _fake_summary(case_from_dict(_small(name=name)))


def test_verbose_adds_step_times_and_model_size(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a")
    assert main(["run", "-v", *paths]) == 0
    out = capsys.readouterr().out
    assert re.search(r"^a: step times: meshing the section \d+\.\d\d s, solving the contact", out, re.M)
    assert "a: model: 10 unknowns, 5 nodes, 3 triangles (order 2)" in out


def test_piped_progress_names_each_step_with_the_case(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a", "b")
    assert main(["run", *paths]) == 0
    lines = capsys.readouterr().out.splitlines()
    for name in ("a", "b"):
        said = [line for line in lines if line.startswith(f"clutchfe: {name}: ")]
        assert said == [f"clutchfe: {name}: {step}" for step in STEPS]


def test_an_interrupt_keeps_the_finished_cases_and_says_so(tmp_path, monkeypatch, capsys, fake_run):
    monkeypatch.chdir(tmp_path)
    paths = _cases(tmp_path / "in", "a", "stop", "c")
    assert main(["run", *paths]) == 130
    out, err = capsys.readouterr()
    assert "interrupted" in err and "results/a" in err and "no runs table" in err
    assert [c[0] for c in fake_run] == ["a", "stop"]
    assert not (tmp_path / "results" / "runs").exists()


# --------------------------------------------------------------------------- real runs and compare


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory):
    """Two small plate cases solved by one `clutchfe run` into a parent folder (the only real solves)."""
    tmp = tmp_path_factory.mktemp("runs")
    low, high = _small(name="low"), _small(name="high")
    high["load"]["axial_force"] = 3600.0
    paths = [str(write_toml(tmp / "low.toml", low)), str(write_toml(tmp / "high.toml", high))]
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["run", *paths, "--out", str(tmp / "both")])
    return tmp, code, out.getvalue(), err.getvalue()


@pytest.mark.slow
def test_run_of_two_cases_writes_each_folder_and_the_table(two_runs):
    tmp, code, out, err = two_runs
    assert code == 0, err
    rows = list(csv.DictReader((tmp / "both" / "runs.csv").open(encoding="utf-8")))
    assert [r["case"] for r in rows] == ["low", "high"]
    for row in rows:
        summary = json.loads((tmp / "both" / row["case"] / "summary.json").read_text())
        assert float(row["torque_fe_Nm"]) == pytest.approx(summary["torque_fe_Nm"], rel=1e-12)
        assert f"{row['case']}: FE torque {summary['torque_fe_Nm']:.2f} N·m, xi {summary['capacity_position']:.3f}" \
            in out
    # same geometry, force ×1.2 in a linear model with full contact: torque ×1.2 (T = n μ W R_eff)
    assert float(rows[1]["torque_fe_Nm"]) / float(rows[0]["torque_fe_Nm"]) == pytest.approx(1.2, rel=1e-6)
    for name in ("low", "high"):
        said = [line.removeprefix(f"clutchfe: {name}: ") for line in out.splitlines()
                if line.startswith(f"clutchfe: {name}: ")]
        assert [s.split(" (")[0] for s in said] == list(STEPS)
    assert not ANSI.search(out + err)


@pytest.mark.slow
def test_compare_puts_two_runs_side_by_side(two_runs, capsys):
    tmp, code, _, _ = two_runs
    assert code == 0
    page = tmp / "cmp.html"
    assert main(["compare", str(tmp / "both" / "low"), str(tmp / "both" / "high"), "--html", str(page)]) == 0
    out = capsys.readouterr().out
    low = json.loads((tmp / "both" / "low" / "summary.json").read_text())
    high = json.loads((tmp / "both" / "high" / "summary.json").read_text())
    assert re.search(r"torque_fe_Nm \[N·m\]\s+" + re.escape(f"{low['torque_fe_Nm']:.5g}") + r"\s+"
                     + re.escape(f"{high['torque_fe_Nm']:.5g}"), out)
    assert re.search(r"axial_force_N \[N\]\s+3000\s+3600\s+\+600\s+\+20\.00", out)
    assert f"caution: {CAUTION}" in out
    html = page.read_text(encoding="utf-8")
    assert "<script" not in html.lower() and "http://" not in html and "https://" not in html
    assert html_escape(CAUTION) in html and "torque_fe_Nm" in html
    assert main(["-q", "compare", str(tmp / "both" / "low"), str(tmp / "both" / "high")]) == 0
    assert _lines(capsys.readouterr().out)[0].startswith(f"FE torque: A {low['torque_fe_Nm']:.6g} N·m")
    # its own page is replaced; somebody's file is not
    assert main(["compare", str(tmp / "both" / "low"), str(tmp / "both" / "high"), "--html", str(page)]) == 0
    theirs = tmp / "theirs.html"
    theirs.write_text("<p>mine</p>", encoding="utf-8")
    assert main(["compare", str(tmp / "both" / "low"), str(tmp / "both" / "high"), "--html", str(theirs)]) == 2
    assert theirs.read_text(encoding="utf-8") == "<p>mine</p>"
    # a folder of several runs is not a run
    assert main(["compare", str(tmp / "both"), str(tmp / "both" / "high")]) == 2
    assert "A = " in capsys.readouterr().err


def test_compare_refuses_folders_that_are_not_runs(tmp_path, capsys):
    plain = tmp_path / "plain"
    plain.mkdir()
    (plain / "summary.json").write_text(json.dumps({"torque_fe_Nm": 1.0}), encoding="utf-8")   # no marker
    mesh = tmp_path / "mesh"
    mesh.mkdir()
    (mesh / "mesh.json").write_text("{}", encoding="utf-8")
    (mesh / MARKER).write_text(json.dumps({"written_by": "clutchfe", "kind": "mesh", "entries": ["mesh.json"]}),
                               encoding="utf-8")
    empty_run = tmp_path / "empty_run"
    empty_run.mkdir()
    (empty_run / MARKER).write_text(json.dumps({"written_by": "clutchfe", "kind": "run", "entries": []}),
                                    encoding="utf-8")
    for a, b, words in ((plain, mesh, "A = "), (mesh, mesh, "not a run"), (empty_run, empty_run, "no summary.json"),
                        (tmp_path / "nowhere", mesh, "does not exist")):
        assert main(["compare", str(a), str(b)]) == 2
        err = capsys.readouterr().err
        assert words in err and str(a) in err and "allowed:" in err and "Traceback" not in err


def test_compare_page_escapes_what_it_shows():
    a = {"case_name": "<b>x</b>", "torque_fe_Nm": 1.0, "version": "0"}
    b = {"case_name": "y & z", "torque_fe_Nm": 2.0, "version": "0"}
    rows = [CompareRow("case_name", "", a["case_name"], b["case_name"]), CompareRow("torque_fe_Nm", "N·m", 1.0, 2.0)]
    html = compare_html(rows, "<a>", "b", a, b)
    assert "<b>x</b>" not in html and "&lt;b&gt;x&lt;/b&gt;" in html and "y &amp; z" in html
    assert "&lt;a&gt;" in html and "+100.000" in html and "N·m" in html


# --------------------------------------------------------------------------- piped output


def test_study_progress_is_plain_lines_when_piped():
    text = io.StringIO()
    console = Console(file=text, highlight=False)             # a file: not a terminal
    with runner._bar(console, 3) as bar:
        bar.advance([{"status": "done"}, {"status": "failed"}])
        bar.advance([{"status": "done"}])
    lines = text.getvalue().splitlines()
    assert lines[0] == "clutchfe: study: 3 samples to solve"
    assert lines[1].startswith("clutchfe: study: 1 done · 1 failed · 1 remaining")
    assert lines[2].startswith("clutchfe: study: 2 done · 1 failed · 0 remaining")
    assert len(lines) == 3 and not ANSI.search(text.getvalue())
    tty = io.StringIO()
    with runner._bar(Console(file=tty, force_terminal=True), 1) as bar:      # a terminal: the bar
        bar.advance([{"status": "done"}])
    assert "clutchfe: study:" not in tty.getvalue()


@pytest.mark.slow
def test_a_piped_run_prints_plain_step_lines_and_no_ansi(tmp_path):
    case = write_toml(tmp_path / "piped.toml", SMALL)
    env = {k: v for k, v in os.environ.items() if k not in ("FORCE_COLOR", "TTY_COMPATIBLE", "TTY_INTERACTIVE")}
    proc = subprocess.run([sys.executable, "-m", "clutchfe._cli", "run", str(case), "--out", str(tmp_path / "r")],
                          capture_output=True, text=True, env=env, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    said = [line.removeprefix("clutchfe: ") for line in proc.stdout.splitlines() if line.startswith("clutchfe: ")]
    assert [s.split(" (")[0] for s in said] == list(STEPS)
    assert not ANSI.search(proc.stdout + proc.stderr)
    assert "piped: FE torque" in proc.stdout and "caution:" in proc.stdout
