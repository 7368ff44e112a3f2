"""report.html of the cone demo in headless Chromium: renders cleanly, every picture loads, and every
number on the page is the number in summary.json.  The mesh study and the escaping of user text."""
import copy
import dataclasses
import json
import math
import os
import re
import shutil
from html.parser import HTMLParser
from pathlib import Path

import pytest
from rich.console import Console

from clutchfe import plan
from clutchfe.errors import CaseError
from clutchfe.case import case_from_dict, load_case
from clutchfe.verification import run_verification
from clutchfe.verification.store import CACHE_ENV

from tests.helpers.data import CASES, CONE

PICTURES = 4          # section, pressure, effective radius bar, deformed section


def browser_paths() -> tuple[str, str]:
    """Headless Chromium and its driver: CLUTCHFE_CHROMIUM / CLUTCHFE_CHROMEDRIVER if set (e.g. a
    missing path, to check that the browser tests skip), else the ones on PATH or in /usr/bin."""
    return (os.environ.get("CLUTCHFE_CHROMIUM") or shutil.which("chromium") or "/usr/bin/chromium",
            os.environ.get("CLUTCHFE_CHROMEDRIVER") or shutil.which("chromedriver") or "/usr/bin/chromedriver")


def _run(case, folder: Path, monkeypatch) -> dict:
    with open(folder.parent / "log.txt", "w", encoding="utf-8") as log:
        plan.run_case(case, folder, Console(file=log))
    return json.loads((folder / "summary.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def verification_cache(tmp_path_factory):
    """A scratch cache folder (never the user's) holding the table `clutchfe verify` stores: the real
    suite, run once here, so the report embeds the table as a run on an installation that ran verify."""
    folder = tmp_path_factory.mktemp("cache")
    mp = pytest.MonkeyPatch()
    try:
        mp.setenv(CACHE_ENV, str(folder))
        run_verification(store=True)
    finally:
        mp.undo()
    return folder


@pytest.fixture(scope="module")
def cone_report(tmp_path_factory, verification_cache):
    mp = pytest.MonkeyPatch()
    try:
        mp.setenv(CACHE_ENV, str(verification_cache))
        folder = tmp_path_factory.mktemp("cone") / "cone_capstan"
        case = load_case([p for p in CASES if p.stem == "cone_capstan"][0])
        summary = _run(case, folder, mp)
    finally:
        mp.undo()
    return folder, summary


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    chromium, chromedriver = browser_paths()
    missing = [p for p in (chromium, chromedriver) if not Path(p).is_file()]
    if missing:
        pytest.skip(f"no headless Chromium + chromedriver: {', '.join(missing)} not found (.ci/run installs "
                    "the Debian packages chromium, chromium-driver; CLUTCHFE_CHROMIUM / CLUTCHFE_CHROMEDRIVER "
                    "give other paths)")
    webdriver = pytest.importorskip("selenium.webdriver", reason="selenium is not installed (pip install -e .[test])")
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = chromium
    for arg in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                "--disable-component-update", "--no-first-run", "--disable-sync", "--window-size=1280,2000",
                f"--user-data-dir={tmp_path_factory.mktemp('chromium-profile')}"):
        options.add_argument(arg)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(executable_path=chromedriver), options=options)
    yield driver
    driver.quit()


def _open(browser, path: Path):
    browser.get(path.resolve().as_uri())
    browser.execute_script("return document.readyState")
    return browser.get_log("browser")


class _Page(HTMLParser):
    """The tags, title and text of a page as an HTML parser reads them, entities decoded (no browser)."""

    def __init__(self, page: str):
        super().__init__(convert_charrefs=True)
        self.tags, self.title, self.text, self._where = [], "", [], None
        self.feed(page)
        self.close()

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag in ("title", "style"):
            self._where = tag

    def handle_endtag(self, tag):
        if tag == self._where:
            self._where = None

    def handle_data(self, data):
        if self._where == "title":
            self.title += data
        elif self._where is None:
            self.text.append(data)


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
    for words in ("Caution", "licensed engineer", "Verification of the solver", "stored it on this installation",
                  "mesh convergence",
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
                 "effective_radius_mm", "peak_pressure_MPa", "capacity_margin_fe", "design_peak_pressure_MPa",
                 "design_peak_over_allowable", "mesh_study.quantities.torque_fe_Nm.band_coarse",
                 "mesh_study.quantities.capacity_position.band_fine"):
        assert must in keys, must
    for key, value, scale, text in shown:
        expected = _lookup(summary, key)
        assert float(value) == expected, key                 # the page carries the exact summary value
        decimals = len(text.split(".")[1]) if "." in text else 0
        assert abs(float(text) - expected * float(scale)) <= 0.5001 * 10 ** -decimals, (key, text, expected)
    missing = browser.execute_script("return Array.from(document.querySelectorAll('.num-missing')).map(e => e.dataset.key)")
    assert "mesh_study.quantities.torque_fe_Nm.band_coarse" not in missing


def test_report_is_self_contained(cone_report):
    folder, _ = cone_report
    page = (folder / "report.html").read_text(encoding="utf-8")
    assert "<script" not in page.lower()
    assert not re.search(r"""(src|href)\s*=\s*["']?(https?:|//)""", page, re.I)
    assert "default-src 'none'" in page           # the browser itself refuses any network fetch
    images = [attrs for tag, attrs in _Page(page).tags if tag == "img"]
    assert len(images) == PICTURES and all(a["src"].startswith("data:image/png;base64,") for a in images)


def test_mesh_study_of_the_cone_demo(cone_report):
    _, summary = cone_report
    study = summary["mesh_study"]
    meshes = study["meshes"]
    assert [m["name"] for m in meshes] == ["this run", "refined ×1.5", "refined ×2.25"]
    assert meshes[0]["torque_fe_Nm"] == summary["torque_fe_Nm"]          # this run is the coarsest mesh
    assert meshes[0]["triangles"] < meshes[1]["triangles"] < meshes[2]["triangles"]
    # geometrically similar meshes: the face-spacing and element-count ratios both follow the requested ratio
    for measured in ("refinement_ratio_21", "refinement_ratio_32", "element_count_ratio_21", "element_count_ratio_32"):
        assert study[measured] == pytest.approx(study["refinement_ratio_nominal"], rel=0.05), measured
    assert study["geometrically_similar"] is True
    torque = study["quantities"]["torque_fe_Nm"]
    assert torque["band_coarse"] is not None and torque["band_coarse"] < 0.01 * summary["torque_fe_Nm"]
    # R_eff is T sin(alpha)/(n mu W): the same relative band as the torque
    reff = study["quantities"]["effective_radius_mm"]
    assert reff["band_coarse"] / summary["effective_radius_mm"] == pytest.approx(
        torque["band_coarse"] / summary["torque_fe_Nm"], rel=1e-6)
    assert study["converged"] is True and "does not converge" in study["peak_pressure_note"]
    assert summary["verification"]["all_passed"] is True and summary["verification"]["checks"] >= 15
    assert summary["verification"]["state"] == "stored"        # the table verify stored, not a suite run here


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


@pytest.fixture(scope="module")
def hostile_report(tmp_path_factory, verification_cache):
    """The report of a case whose name and description are HTML, mesh study switched off."""
    data = copy.deepcopy(CONE)
    data.update(description=HOSTILE_TEXT, verification={"mesh_study": False})
    case = dataclasses.replace(case_from_dict(data), name=HOSTILE_NAME)
    mp = pytest.MonkeyPatch()
    try:
        mp.setenv(CACHE_ENV, str(verification_cache))
        folder = tmp_path_factory.mktemp("hostile") / "hostile"
        summary = _run(case, folder, mp)
    finally:
        mp.undo()
    return folder, summary


def test_user_text_is_escaped_and_mesh_study_can_be_off(hostile_report):
    data = copy.deepcopy(CONE)
    data.update(description=HOSTILE_TEXT, verification={"mesh_study": False})
    with pytest.raises(CaseError):                      # a case file cannot give such a name …
        case_from_dict({**data, "name": HOSTILE_NAME})
    # … but the report escapes the name all the same (defence in depth)
    folder, summary = hostile_report
    assert summary["mesh_study"]["skipped"].startswith("switched off")
    page = (folder / "report.html").read_text(encoding="utf-8")
    assert "<script" not in page and "<img src=x" not in page
    assert "&lt;script&gt;" in page
    # what a browser's parser reads: the name and text literally, no script and no event handler
    parsed = _Page(page)
    assert parsed.title == f"clutchfe report: {HOSTILE_NAME}"
    assert HOSTILE_TEXT in "".join(parsed.text) and "Mesh study not run" in "".join(parsed.text)
    assert [t for t, attrs in parsed.tags if t == "script" or any(a.startswith("on") for a in attrs)] == []
    assert sum(t == "img" for t, _ in parsed.tags) == PICTURES
    assert not math.isnan(summary["torque_fe_Nm"])


def test_escaped_user_text_shows_literally_in_the_browser(hostile_report, browser):
    folder, _ = hostile_report
    log = _open(browser, folder / "report.html")
    assert [entry for entry in log if entry["level"] == "SEVERE"] == []
    assert browser.title == f"clutchfe report: {HOSTILE_NAME}"          # shown literally, nothing ran
    body = browser.find_element("tag name", "body").text
    assert HOSTILE_TEXT in body and "Mesh study not run" in body
    assert len(browser.execute_script("return document.images")) == PICTURES
