"""The verification suite behind `clutchfe verify`: every case passes, every row names its source,
a wrong or broken case fails the suite instead of passing or crashing it, and `clutchfe verify`
stores the table that runs read (in a scratch cache folder: CLUTCHFE_CACHE_DIR, never the user's)."""
import io
import json

import pytest
from rich.console import Console

from clutchfe.provenance import versions
from clutchfe.verification import CASES, Check, VerificationCase, load_table, print_verification, run_verification
from clutchfe.verification import store as vstore
from clutchfe.verification import table as vtable
from clutchfe.verification.checks import relative
from clutchfe.verification.mesh_study import refined_case


@pytest.fixture(scope="module")
def suite(tmp_path_factory):
    out = tmp_path_factory.mktemp("verify")
    mp = pytest.MonkeyPatch()
    mp.setenv(vstore.CACHE_ENV, str(tmp_path_factory.mktemp("cache")))
    try:
        rows, passed = run_verification(out_dir=out)
        stored = load_table()
    finally:
        mp.undo()
    return rows, passed, out, stored


@pytest.fixture
def cache(monkeypatch, tmp_path):
    monkeypatch.setenv(vstore.CACHE_ENV, str(tmp_path / "cache"))
    return tmp_path / "cache"


@pytest.mark.slow
def test_every_case_passes_with_a_named_source(suite):
    rows, passed, *_ = suite
    failed = [(r.case, r.quantity, r.error, r.tolerance) for r in rows if not r.passed]
    assert passed and not failed, failed
    covered = {r.case for r in rows}
    for name in ("Lamé", "Hertz", "flat punch", "thin lining", "angle mismatch", "full contact"):
        assert any(name in case for case in covered), name
    for r in rows:
        assert len(r.source) > 5 and r.source != "—", r
        assert "[" in r.quantity and r.quantity.endswith("]"), r.quantity          # unit in every label
    assert len(rows) >= 61          # 25 elastic and contact rows, 20 thermal, 16 speed (docs/verification.md)


@pytest.mark.slow
def test_table_files_match_the_rows(suite):
    rows, passed, out, _ = suite
    data = json.loads((out / "verification.json").read_text())
    assert data["all_passed"] is passed and len(data["rows"]) == len(rows)
    assert data["rows"][0]["computed"] == rows[0].computed
    csv_lines = (out / "verification.csv").read_text().splitlines()
    assert len(csv_lines) == len(rows) + 1 and csv_lines[0].startswith("case,quantity,computed")


@pytest.mark.slow
def test_printer_shows_every_row_and_the_count(suite):
    rows, passed, *_ = suite
    buf = io.StringIO()
    print_verification(rows, passed, Console(file=buf, width=250))
    text = buf.getvalue()
    assert f"{len(rows)} passed, 0 failed" in text
    assert text.count(" pass ") >= len(rows) - 1 and "Johnson" in text and "Timoshenko" in text


def _wrong_reference():
    # a deliberately wrong reference: 2 + 2 against 5 must fail at 1 %
    return [relative("arithmetic", "sum [-]", 2 + 2, 5, 0.01, "arithmetic")]


def _broken_case():
    raise RuntimeError("mesh file missing")


@pytest.mark.slow
def test_verify_stores_the_table_a_run_reads(suite):
    rows, passed, _, (stored, stored_passed) = suite
    assert rows.stored_at is not None and stored.origin.state == "stored" and stored_passed is passed
    assert stored == list(rows)                                   # the same rows, read back from JSON
    assert stored.origin.code_hash == vstore.code_hash() and stored.origin.made
    data = json.loads(rows.stored_at.read_text(encoding="utf-8"))
    assert data["versions"] == versions() and data["command"] == "clutchfe verify"
    buf = io.StringIO()
    print_verification(rows, passed, Console(file=buf, width=250))
    assert str(rows.stored_at) in buf.getvalue().replace("\n", "")


def test_a_wrong_or_broken_case_fails_the_suite(monkeypatch, tmp_path, cache):
    monkeypatch.setattr(vtable, "CASES", [VerificationCase("wrong", _wrong_reference),
                                          VerificationCase("broken", _broken_case)])
    rows, passed = run_verification(out_dir=tmp_path)
    assert passed is False and [r.passed for r in rows] == [False, False]
    assert "RuntimeError: mesh file missing" in rows[1].quantity
    data = json.loads((tmp_path / "verification.json").read_text())       # no NaN reaches JSON
    assert data["rows"][1]["error"] is None and data["all_passed"] is False
    buf = io.StringIO()
    print_verification(rows, passed, Console(file=buf, width=250))
    assert "FAIL" in buf.getvalue() and "0 passed, 2 failed" in buf.getvalue()
    assert not Check("c", "q [-]", 1.0, 1.0, float("nan"), "relative", 1.0, "s").passed
    # a test's stand-in registry is never stored for runs
    assert rows.stored_at is None and not (cache / vstore.FILE_NAME).exists()


def test_one_registry_entry_adds_a_case():
    # the registry is the single place a new case goes (uniform-wear limit, harmonics vs 3D, ...)
    assert all(isinstance(c, VerificationCase) and callable(c.run) for c in CASES)
    assert len({c.title for c in CASES}) == len(CASES)


def test_refined_meshes_scale_every_size_and_count():
    from clutchfe.case import case_from_dict
    from clutchfe.geometry import build_section

    from tests.helpers.data import CONE

    case = case_from_dict(CONE)
    fine = refined_case(case, 1.5 ** 2)
    base, refined = build_section(case), build_section(fine)
    for key in ("face_size", "edge_size", "body_size"):
        assert getattr(refined, key) == pytest.approx(getattr(base, key) / 2.25, rel=1e-12)
    assert refined.refinement == pytest.approx(2.25 * base.refinement)
    layers = [(a.lining_layers, b.lining_layers) for a, b in zip(base.regions, refined.regions) if a.lining_layers]
    assert layers and all(b == round(2.25 * a) for a, b in layers)
    assert fine.interface == case.interface and fine.input_sha256 == case.input_sha256
