"""What the libraries now do for clutchfe gives what the hand-written code gave.

- report.html from jinja2 templates: the cone demo's page carries every number of summary.json
  (data-key / data-value), the same sections as the f-string page did, and no template syntax left;
- the Wilson score interval from scipy.stats.binomtest: the closed form and published values;
- the Latin hypercube from scipy.stats.qmc.LatinHypercube: one draw per stratum, fixed by the seed.
"""
import html
import math
import re
from html.parser import HTMLParser

import numpy as np
import markupsafe
import pytest
from rich.console import Console
from scipy import stats

from clutchfe import plan as run_plan
from clutchfe.case import load_case
from clutchfe.output.report_html import CSP
from clutchfe.study import load_study, plan, unit_draws, wilson_interval
from clutchfe.verification.store import CACHE_ENV

from tests.helpers.data import CASES, CONE, write_toml

# The headings of the cone demo's report.html as the f-string report wrote them, recorded from
# that code (commit b463342) before the templates replaced it.
CONE_HEADINGS = {
    ("h1", "Torque capacity check: cone_capstan"),
    ("h2", "Job"),
    ("h2", "Capacity: FE contact against the hand formulas"),
    ("h2", "Capacity margins"),
    ("h2", "Pressure against the lining"),
    ("h2", "Section, mesh and pressure"),
    ("h2", "Solution verification: mesh convergence"),
    ("h2", "Verification of the solver against closed forms"),
    ("h2", "Inputs (defaults filled in)"),
    ("h2", "Assumptions and limits of the model"),
    ("h2", "Provenance"),
}


class _Numbers(HTMLParser):
    """The data-key / data-value spans, the headings and the CSP of a page, as a parser reads them."""

    def __init__(self, page: str):
        super().__init__(convert_charrefs=True)
        self.numbers, self.missing, self.headings, self.csp = [], [], [], []
        self._span, self._heading = None, None
        self.feed(page)
        self.close()

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "span" and a.get("class") == "num":
            self._span = [a["data-key"], a["data-value"], a.get("data-scale", "1"), ""]
        elif tag == "span" and a.get("class") == "num-missing":
            self.missing.append(a["data-key"])
        elif tag in ("h1", "h2"):
            self._heading = [tag, ""]
        elif tag == "meta" and a.get("http-equiv") == "Content-Security-Policy":
            self.csp.append(a["content"])

    def handle_endtag(self, tag):
        if tag == "span" and self._span is not None:
            self.numbers.append(tuple(self._span))
            self._span = None
        elif tag in ("h1", "h2") and self._heading is not None:
            self.headings.append(tuple(self._heading))
            self._heading = None

    def handle_data(self, data):
        if self._span is not None:
            self._span[3] += data
        if self._heading is not None:
            self._heading[1] += data


def _lookup(summary: dict, dotted: str):
    value = summary
    for part in dotted.split("."):
        value = value[int(part)] if isinstance(value, list) else value[part]
    return value


@pytest.fixture(scope="module")
def cone_demo(tmp_path_factory):
    """The cone demo run as `clutchfe run` runs it (mesh study on), with a scratch verification
    cache (never the user's): the report then says the stored table is missing."""
    mp = pytest.MonkeyPatch()
    try:
        mp.setenv(CACHE_ENV, str(tmp_path_factory.mktemp("cache")))
        folder = tmp_path_factory.mktemp("parity") / "cone_capstan"
        case = load_case([p for p in CASES if p.stem == "cone_capstan"][0])
        with open(folder.parent / "log.txt", "w", encoding="utf-8") as log:
            summary = run_plan.run_case(case, folder, Console(file=log))
    finally:
        mp.undo()
    return (folder / "report.html").read_text(encoding="utf-8"), summary


@pytest.mark.slow
def test_every_number_on_the_templated_page_is_the_summary_value(cone_demo):
    page, summary = cone_demo
    parsed = _Numbers(page)
    assert len(parsed.numbers) > 60
    for key, value, scale, text in parsed.numbers:
        expected = _lookup(summary, key)
        assert float(value) == expected, key                     # the exact value of summary.json
        decimals = len(text.split(".")[1]) if "." in text else 0
        assert abs(float(text) - expected * float(scale)) <= 0.5001 * 10 ** -decimals, (key, text, expected)
    for key in parsed.missing:                                   # a dash only where summary.json has no number
        try:
            value = _lookup(summary, key)
        except (KeyError, IndexError, TypeError):
            continue
        assert value is None or isinstance(value, bool) or not math.isfinite(value), key
    shown = {key for key, *_ in parsed.numbers}
    for must in ("torque_fe_Nm", "capacity_position", "design_peak_over_allowable", "capacity_margin_fe",
                 "mesh_study.quantities.torque_fe_Nm.band_coarse", "mesh_study.meshes.2.triangles", "dofs"):
        assert must in shown, must


@pytest.mark.slow
def test_the_templated_page_has_the_sections_of_the_f_string_page(cone_demo):
    page, summary = cone_demo
    parsed = _Numbers(page)
    assert set(parsed.headings) == CONE_HEADINGS
    assert len(parsed.headings) == len(CONE_HEADINGS)            # each section once
    assert not re.search(r"\{\{|\{%|\{#|%\}|\}\}", page)         # no template syntax left on the page
    assert parsed.csp == [CSP]
    # the caution as escaped HTML text (either spelling of the apostrophe), at the top and the bottom
    cautions = {str(markupsafe.escape(summary["caution"])), html.escape(summary["caution"], quote=True)}
    assert sum(page.count(f'<p class="caution">Caution: {c}</p>') for c in cautions) == 2
    assert "The verification table is missing" in page          # the scratch cache holds no table


# ------------------------------------------------------------------ Wilson interval

def _wilson_closed_form(k: int, n: int, confidence: float) -> tuple[float, float]:
    """Wilson (1927), JASA 22:209, the score interval; Newcombe, Statistics in Medicine 17 (1998) 857,
    method 3: (2np + z² ± z sqrt(z² + 4np(1-p))) / (2(n + z²))."""
    z = stats.norm.ppf(0.5 + confidence / 2.0)
    p = k / n
    root = z * math.sqrt(z * z + 4 * n * p * (1 - p))
    return ((2 * n * p + z * z - root) / (2 * (n + z * z)), (2 * n * p + z * z + root) / (2 * (n + z * z)))


@pytest.mark.parametrize("confidence", [0.9, 0.95, 0.99])
def test_wilson_interval_is_scipys_and_the_closed_form(confidence):
    for n in (1, 2, 7, 40, 263, 1000):
        for k in sorted({0, 1, n // 3, n // 2, n - 1, n}):
            low, high = wilson_interval(k, n, confidence)
            ci = stats.binomtest(k, n).proportion_ci(confidence_level=confidence, method="wilson")
            assert (low, high) == (pytest.approx(ci.low, abs=1e-15), pytest.approx(ci.high, abs=1e-15))
            ref = _wilson_closed_form(k, n, confidence)
            assert (low, high) == (pytest.approx(max(0.0, ref[0]), abs=1e-12),
                                   pytest.approx(min(1.0, ref[1]), abs=1e-12)), (k, n)
            assert 0.0 <= low <= k / n <= high <= 1.0


def test_wilson_interval_published_values_and_no_samples():
    # Newcombe, Statistics in Medicine 17 (1998) 857, table I, score method (values from memory of
    # that table): 81/263 -> 0.2553 to 0.3662, 0/10 -> 0 to 0.2775 (95 %)
    assert wilson_interval(81, 263) == pytest.approx((0.2553, 0.3662), abs=1e-4)
    assert wilson_interval(0, 10) == pytest.approx((0.0, 0.2775), abs=1e-4)
    # the demo study's 57 of 1000 with the hand-written formula this replaced (clutchfe b463342)
    assert wilson_interval(57, 1000) == pytest.approx((0.04425344035871594, 0.07313706765948591), rel=1e-12)
    with pytest.raises(ValueError, match="no samples"):
        wilson_interval(0, 0)


# ------------------------------------------------------------------ Latin hypercube

@pytest.mark.parametrize("n,dims", [(1, 1), (2, 3), (50, 3), (997, 2)])
def test_latin_hypercube_one_draw_per_stratum(n, dims):
    u = unit_draws(n, dims, "latin_hypercube", seed=11)
    assert u.shape == (n, dims) and u.min() > 0.0 and u.max() < 1.0
    for d in range(dims):
        assert sorted(np.floor(u[:, d] * n).astype(int)) == list(range(n))
        # one point in each stratum [i/n, (i+1)/n): the column mean is within 1/(2n) of 1/2
        assert abs(u[:, d].mean() - 0.5) <= 0.5 / n + 1e-12


def test_latin_hypercube_follows_the_seed_and_is_scipys():
    u = unit_draws(40, 3, "latin_hypercube", seed=2024)
    assert np.array_equal(u, unit_draws(40, 3, "latin_hypercube", seed=2024))
    assert not np.array_equal(u, unit_draws(40, 3, "latin_hypercube", seed=2025))
    assert not np.array_equal(u, unit_draws(40, 3, "monte_carlo", seed=2024))
    lhs = stats.qmc.LatinHypercube(d=3, scramble=True, seed=np.random.Generator(np.random.PCG64(2024)))
    assert np.array_equal(u, lhs.random(40))      # no draw lands within 1e-12 of an edge here
    # the columns are not the same permutation (each input has its own strata order)
    strata = np.floor(u * 40).astype(int)
    assert not np.array_equal(strata[:, 0], strata[:, 1])


def test_plan_keeps_its_ids_and_common_draws(tmp_path):
    write_toml(tmp_path / "base.toml", {**CONE, "support": {"type": "springs", "axial_stiffness": 1.0e5,
                                                             "radial_stiffness": 1.0e5}})
    path = write_toml(tmp_path / "s.study.toml", {
        "base_case": "base.toml", "name": "s", "samples": 5, "seed": 7, "vary": [
            {"key": "load.axial_force", "values": [800.0, 1000.0, 1200.0]},
            {"key": "interface.friction_coefficient", "distribution": "uniform", "low": 0.15, "high": 0.25},
            {"key": "support.axial_stiffness", "distribution": "normal", "mean": 1.0e5, "std_dev": 5.0e3}]})
    study = load_study(path)
    samples = plan(study)
    assert samples == plan(load_study(path))                     # deterministic
    assert [i for i, _ in samples] == list(range(15))            # grid_index * draws + draw_index
    assert [s["load.axial_force"] for _, s in samples] == [800.0] * 5 + [1000.0] * 5 + [1200.0] * 5
    mu = [s["interface.friction_coefficient"] for _, s in samples]
    assert mu[:5] == mu[5:10] == mu[10:] and len(set(mu[:5])) == 5     # common random numbers
    # one draw in each fifth of the uniform's range (a Latin hypercube of the inputs)
    assert sorted(int((m - 0.15) / 0.1 * 5) for m in mu[:5]) == list(range(5))
    k = [s["support.axial_stiffness"] for _, s in samples][:5]
    assert sorted(int(stats.norm.cdf(x, 1.0e5, 5.0e3) * 5) for x in k) == list(range(5))
