"""report.html of the cone demo in headless Chromium: renders cleanly, every picture loads, and every
number on the page is the number in summary.json.  The mesh study and the escaping of user text."""
import copy
import dataclasses
import json
import math
import re
import shutil
from pathlib import Path

import pytest
from rich.console import Console

from clutchfe import pipeline
from clutchfe.errors import CaseError
from clutchfe.case import case_from_dict, load_case
from clutchfe.report import add_report_to_run

from conftest import CASES, CONE

CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"
CHROMEDRIVER = shutil.which("chromedriver") or "/usr/bin/chromedriver"
PICTURES = 4          # section, pressure, effective radius bar, deformed section


def _run(case, folder: Path, monkeypatch) -> dict:
    # exactly this report hook, whatever else is registered
    monkeypatch.setattr(pipeline, "REPORTS", [add_report_to_run])
    pipeline.run_case(case, pipeline.section_of(case), folder, Console(file=open(folder.parent / "log.txt", "w")))
    return json.loads((folder / "summary.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def cone_report(tmp_path_factory):
    mp = pytest.MonkeyPatch()
    try:
        folder = tmp_path_factory.mktemp("cone") / "cone_capstan"
        case = load_case([p for p in CASES if p.stem == "cone_capstan"][0])
        summary = _run(case, folder, mp)
    finally:
        mp.undo()
    return folder, summary


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    assert Path(CHROMIUM).exists() and Path(CHROMEDRIVER).exists(), \
        "headless Chromium and its driver are needed (.ci/run installs the Debian packages chromium, chromium-driver)"
    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for arg in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                "--disable-component-update", "--no-first-run", "--disable-sync", "--window-size=1280,2000",
                f"--user-data-dir={tmp_path_factory.mktemp('chromium-profile')}"):
        options.add_argument(arg)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(executable_path=CHROMEDRIVER), options=options)
    yield driver
    driver.quit()


def _open(browser, path: Path):
    browser.get(path.resolve().as_uri())
    browser.execute_script("return document.readyState")
    return browser.get_log("browser")


def _lookup(summary: dict, dotted: str):
    value = summary
    for part in dotted.split("."):
        value = value[int(part)] if isinstance(value, list) else value[part]
    return value


def test_report_renders_without_errors_and_every_picture_loads(cone_report, browser, tmp_path):
    folder, summary = cone_report
    log = _open(browser, folder / "report.html")
    assert [entry for entry in log if entry["level"] in ("SEVERE", "WARNING")] == []
    assert browser.title == "clutchfe report: cone_capstan"
    images = browser.execute_script(
        "return Array.from(document.images).map(i => [i.complete, i.naturalWidth, i.src.slice(0, 22)])")
    assert len(images) == PICTURES
    for complete, width, src in images:
        assert complete and width > 100 and src == "data:image/png;base64,"
    shot = tmp_path / "report_screenshot.png"
    browser.set_window_size(1280, browser.execute_script("return document.body.scrollHeight") + 100)
    assert browser.save_screenshot(str(shot)) and shot.stat().st_size > 50_000
    text = browser.find_element("tag name", "body").text
    for words in ("Caution", "licensed engineer", "Verification of the solver", "mesh convergence",
                  "Assumptions and limits", summary["input_sha256"], "Capacity margins"):
        assert words in text, words


def test_numbers_on_the_page_equal_summary_json(cone_report, browser):
    folder, summary = cone_report
    _open(browser, folder / "report.html")
    shown = browser.execute_script(
        "return Array.from(document.querySelectorAll('.num')).map("
        "e => [e.dataset.key, e.dataset.value, e.dataset.scale || '1', e.textContent])")
    assert len(shown) > 60
    keys = {key for key, *_ in shown}
    for must in ("torque_fe_Nm", "torque_uniform_pressure_Nm", "torque_uniform_wear_Nm", "capacity_position",
                 "effective_radius_mm", "peak_pressure_MPa", "capacity_margin_fe", "peak_pressure_over_allowable",
                 "mesh_study.quantities.torque_fe_Nm.gci_fine", "mesh_study.quantities.capacity_position.band_fine"):
        assert must in keys, must
    for key, value, scale, text in shown:
        expected = _lookup(summary, key)
        assert float(value) == expected, key                 # the page carries the exact summary value
        decimals = len(text.split(".")[1]) if "." in text else 0
        assert abs(float(text) - expected * float(scale)) <= 0.5001 * 10 ** -decimals, (key, text, expected)
    missing = browser.execute_script("return Array.from(document.querySelectorAll('.num-missing')).map(e => e.dataset.key)")
    assert "mesh_study.quantities.torque_fe_Nm.gci_fine" not in missing


def test_report_is_self_contained(cone_report):
    folder, _ = cone_report
    page = (folder / "report.html").read_text(encoding="utf-8")
    assert "<script" not in page.lower()
    assert not re.search(r"""(src|href)\s*=\s*["']?(https?:|//)""", page, re.I)
    assert "default-src 'none'" in page           # the browser itself refuses any network fetch


def test_mesh_study_of_the_cone_demo(cone_report):
    _, summary = cone_report
    study = summary["mesh_study"]
    meshes = study["meshes"]
    assert [m["name"] for m in meshes] == ["fine (this run)", "medium", "coarse"]
    assert meshes[0]["torque_fe_Nm"] == summary["torque_fe_Nm"]          # this run is the fine mesh
    assert meshes[0]["triangles"] > meshes[1]["triangles"] > meshes[2]["triangles"]
    # the measured face-spacing ratios follow the requested ratio (node counts are integers)
    for measured in (study["refinement_ratio_21"], study["refinement_ratio_32"]):
        assert measured == pytest.approx(study["refinement_ratio_nominal"], rel=0.05)
    torque = study["quantities"]["torque_fe_Nm"]
    assert torque["gci_fine"] is not None and torque["gci_fine"] < 0.01
    # R_eff is T sin(alpha)/(n mu W): the same relative index as the torque
    assert study["quantities"]["effective_radius_mm"]["gci_fine"] == pytest.approx(torque["gci_fine"], rel=1e-6)
    assert study["converged"] is True and "need not converge" in study["peak_pressure_note"]
    assert summary["verification"]["all_passed"] is True and summary["verification"]["checks"] >= 15


def test_pdf_when_weasyprint_is_there(cone_report):
    folder, summary = cone_report
    try:
        import weasyprint  # noqa: F401
    except (ImportError, OSError):
        assert summary["report_pdf"].startswith("not written") and not (folder / "report.pdf").exists()
        return
    assert summary["report_pdf"] == "report.pdf"
    assert (folder / "report.pdf").read_bytes()[:5] == b"%PDF-"


HOSTILE_NAME = 'cone <img src=x onerror="document.title=1"> & "quotes"'
HOSTILE_TEXT = "<script>document.title='owned'</script> bore < 40 mm & > 20 mm"


def test_user_text_is_escaped_and_mesh_study_can_be_off(tmp_path, browser, monkeypatch):
    data = copy.deepcopy(CONE)
    data.update(description=HOSTILE_TEXT, verification={"mesh_study": False})
    with pytest.raises(CaseError):                      # a case file cannot give such a name …
        case_from_dict({**data, "name": HOSTILE_NAME})
    # … but the report escapes the name all the same (defence in depth)
    case = dataclasses.replace(case_from_dict(data), name=HOSTILE_NAME)
    folder = tmp_path / "hostile"
    summary = _run(case, folder, monkeypatch)
    assert summary["mesh_study"]["skipped"].startswith("switched off")
    page = (folder / "report.html").read_text(encoding="utf-8")
    assert "<script" not in page and "<img src=x" not in page
    assert "&lt;script&gt;" in page
    log = _open(browser, folder / "report.html")
    assert [entry for entry in log if entry["level"] == "SEVERE"] == []
    assert browser.title == f"clutchfe report: {HOSTILE_NAME}"          # shown literally, nothing ran
    body = browser.find_element("tag name", "body").text
    assert HOSTILE_TEXT in body and "Mesh study not run" in body
    assert len(browser.execute_script("return document.images")) == PICTURES
    assert not math.isnan(summary["torque_fe_Nm"])
