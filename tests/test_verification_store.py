"""The stored verification table: `clutchfe verify` writes it once per installed version and code
hash, a run only reads it, and a run without a current table says so plainly (summary.json, report,
warnings) and names the command that makes it, instead of running the suite.

Every test points CLUTCHFE_CACHE_DIR at its own scratch folder: the user's cache is never touched.
The tables here are small fakes (the real suite is test_verify.py's)."""
import copy
import hashlib
import io
import json
import math
import os

import pytest
from rich.console import Console

from clutchfe import plan
from clutchfe.case import case_from_dict
from clutchfe.output.report import report_html
from clutchfe.verification import load_table, store_table
from clutchfe.verification import store as vstore
from clutchfe.verification import table as vtable
from clutchfe.verification.checks import Check, relative

SOURCE = "Johnson, Contact Mechanics 1985, §4.2 (Hertz)"
FAKE = [relative("fake case", "peak pressure [MPa]", 1.001, 1.0, 0.01, SOURCE),
        Check("broken case", "case did not run: RuntimeError: x", math.nan, math.nan, math.inf, "relative", 0.0,
              "—")]
SMALL_PLATE = {
    "kind": "plate", "name": "small_plate",
    "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3, "friction_surfaces": 2},
    "load": {"axial_force": 3000.0},
    "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8},
    "verification": {"mesh_study": False},
}


@pytest.fixture
def cache(monkeypatch, tmp_path):
    folder = tmp_path / "cache"
    monkeypatch.setenv(vstore.CACHE_ENV, str(folder))
    return folder


def _rewrite(path, **changes):
    data = json.loads(path.read_text(encoding="utf-8"))
    data.update(changes)
    path.write_text(json.dumps(data), encoding="utf-8")


def test_cache_folder_follows_the_environment(monkeypatch, tmp_path):
    monkeypatch.setenv(vstore.CACHE_ENV, str(tmp_path / "mine"))
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert vstore.table_path() == tmp_path / "mine" / vstore.FILE_NAME
    monkeypatch.delenv(vstore.CACHE_ENV)
    assert vstore.cache_dir() == tmp_path / "xdg" / "clutchfe"          # XDG base directory layout
    monkeypatch.delenv("XDG_CACHE_HOME")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    assert vstore.cache_dir() == tmp_path / "home" / ".cache" / "clutchfe"


def test_code_hash_covers_every_source_file_and_only_those(tmp_path):
    pkg = tmp_path / "pkg"
    (pkg / "sub").mkdir(parents=True)
    (pkg / "__pycache__").mkdir()
    (tmp_path / "linked").mkdir()
    (pkg / "a.py").write_text("A = 1\n")
    (pkg / "sub" / "b.py").write_text("B = 2\n")
    (tmp_path / "linked" / "c.py").write_text("C = 3\n")
    (pkg / "linked").symlink_to(tmp_path / "linked")         # as clutchfe/fem -> fem/
    # the SHA-256 of (relative path, NUL, bytes, NUL) per file in sorted order, written out by hand
    expected = hashlib.sha256(b"a.py\0A = 1\n\0linked/c.py\0C = 3\n\0sub/b.py\0B = 2\n\0").hexdigest()
    assert vstore.code_hash(pkg) == expected
    (pkg / "__pycache__" / "a.cpython-311.pyc").write_bytes(b"\0")
    (pkg / "notes.txt").write_text("not source")
    vstore._code_hash.cache_clear()
    assert vstore.code_hash(pkg) == expected                 # compiled files and other files do not count
    (tmp_path / "linked" / "c.py").write_text("C = 4\n")
    vstore._code_hash.cache_clear()
    assert vstore.code_hash(pkg) != expected                 # a linked stage's edit does
    real = vstore.code_hash()
    assert len(real) == 64 and real == vstore.code_hash(vstore.PACKAGE)


def test_stored_table_round_trips_and_is_written_atomically(cache):
    path = store_table(FAKE, False, 1.5)
    assert path == cache / vstore.FILE_NAME
    assert sorted(p.name for p in cache.iterdir()) == [vstore.FILE_NAME]      # no temporary file left
    data = json.loads(path.read_text(encoding="utf-8"))
    assert data["code_hash"] == vstore.code_hash() and data["versions"]["clutchfe"] and data["made"]
    assert data["rows"][1]["error"] is None                  # no NaN in JSON
    rows, passed = load_table()
    assert rows.origin.state == "stored" and passed is False
    assert [vstore.json_row(r) for r in rows] == [vstore.json_row(r) for r in FAKE]
    assert rows[0] == FAKE[0] and not rows[1].passed and not math.isfinite(rows[1].error)
    store_table(FAKE[:1], True)                               # replaced, not appended
    rows, passed = load_table()
    assert len(rows) == 1 and passed is True


def test_missing_unreadable_and_stale_tables_give_no_rows_and_say_why(cache):
    rows, passed = load_table()
    assert (rows.origin.state, list(rows), passed) == ("missing", [], False)
    assert str(cache / vstore.FILE_NAME) in rows.origin.reason and rows.origin.command == "clutchfe verify"
    path = store_table(FAKE[:1], True)
    path.write_text("{ half a fi", encoding="utf-8")
    rows, _ = load_table()
    assert rows.origin.state == "missing" and "cannot be read" in rows.origin.reason

    store_table(FAKE[:1], True)
    versions = dict(json.loads(path.read_text())["versions"], numpy="0.0.1")
    _rewrite(path, versions=versions)
    rows, passed = load_table()
    assert (rows.origin.state, list(rows), passed) == ("stale", [], False)
    assert "numpy 0.0.1" in rows.origin.reason and "installed:" in rows.origin.reason

    store_table(FAKE[:1], True)
    _rewrite(path, code_hash="0" * 64)
    rows, _ = load_table()
    assert rows.origin.state == "stale" and "other code" in rows.origin.reason
    assert "000000000000" in rows.origin.reason and vstore.code_hash()[:12] in rows.origin.reason

    store_table(FAKE[:1], True)
    _rewrite(path, format=0)
    assert load_table()[0].origin.state == "stale"


@pytest.fixture(scope="module")
def analysed():
    case = case_from_dict(copy.deepcopy(SMALL_PLATE))
    service = plan.SolveService()
    return case, service, plan.analyse(case, service)


def _evidence(analysed, monkeypatch):
    # a run reads the table and never runs the suite: a suite that ran would fail this test
    def no_suite(*args, **kwargs):
        raise AssertionError("a run ran the verification suite")
    monkeypatch.setattr(vtable, "run_cases", no_suite)
    _, service, result = analysed
    return plan.gather_evidence(result, service)


def test_a_run_without_a_table_says_it_is_missing_and_how_to_make_it(analysed, cache, monkeypatch, tmp_path):
    case, _, result = analysed
    evidence = _evidence(analysed, monkeypatch)
    summary = plan.summary_of(result, evidence)
    v = summary["verification"]
    assert (v["state"], v["all_passed"], v["checks"], v["command"]) == ("missing", None, 0, "clutchfe verify")
    assert str(cache) in v["reason"]
    assert any("verification table is missing" in w and "clutchfe verify" in w for w in summary["warnings"])
    page = report_html(case, summary, tmp_path, evidence.verification_rows, evidence.verification_passed)
    assert "The verification table is missing" in page and "<code>clutchfe verify</code>" in page
    assert "Warning: the solver&#x27;s verification table is missing" in page or \
        "Warning: the solver's verification table is missing" in page        # beside the verdict
    assert "All 0 checks pass" not in page and SOURCE not in page


def test_a_stale_table_is_not_shown_and_the_reason_is(analysed, cache, monkeypatch, tmp_path):
    case, _, result = analysed
    path = store_table(FAKE[:1], True)
    _rewrite(path, code_hash="f" * 64)
    evidence = _evidence(analysed, monkeypatch)
    summary = plan.summary_of(result, evidence)
    v = summary["verification"]
    assert v["state"] == "stale" and "other code" in v["reason"] and v["command"] == "clutchfe verify"
    assert v["code_hash"] == "f" * 64 and v["all_passed"] is None
    assert any("stale" in w for w in summary["warnings"])
    page = report_html(case, summary, tmp_path, evidence.verification_rows, evidence.verification_passed)
    assert "The verification table is stale" in page and "other code" in page and SOURCE not in page


def test_a_current_table_is_embedded_with_its_origin(analysed, cache, monkeypatch, tmp_path):
    case, _, result = analysed
    store_table(FAKE[:1], True)
    evidence = _evidence(analysed, monkeypatch)
    summary = plan.summary_of(result, evidence)
    v = summary["verification"]
    assert (v["state"], v["all_passed"], v["checks"], v["failed"]) == ("stored", True, 1, 0)
    assert "reason" not in v and v["code_hash"] == vstore.code_hash()
    assert not any("verification table" in w for w in summary["warnings"])
    page = report_html(case, summary, tmp_path, evidence.verification_rows, evidence.verification_passed)
    assert SOURCE in page and "All 1 checks pass" in page and vstore.code_hash()[:16] in page
    assert "<code>clutchfe verify</code> stored it on this installation" in page


def test_a_whole_run_without_a_table_writes_the_missing_state(cache, tmp_path):
    folder = tmp_path / "run"
    buf = io.StringIO()
    plan.run_case(case_from_dict(copy.deepcopy(SMALL_PLATE)), folder, Console(file=buf, width=200))
    summary = json.loads((folder / "summary.json").read_text(encoding="utf-8"))
    assert summary["verification"]["state"] == "missing"
    assert "clutchfe verify" in (folder / "report.html").read_text(encoding="utf-8")
    assert "verification table is missing" in buf.getvalue()            # on the terminal too
    assert not os.path.exists(cache / vstore.FILE_NAME)                  # a run never writes the table
