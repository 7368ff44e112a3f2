"""summary.json holds exactly the declared keys (clutchfe/summary_keys.py) and the README shows them.

Six small plate runs through the whole run plan (plain, with a [wear] table worn to its steady
state, with an axis tilt, with an [engagement], with a [speed] and with a [splines] table): every key
each writes is declared, every always-present key is in all six, every tilt key in the tilted, every
wear-in key in the worn, every engagement key in the engaged, every speed key in the spinning one and
every spline drag key in the splined one, and a unit in a key's name is the unit it declares.
"""
import copy
import io
import json

import pytest
from rich.console import Console

from clutchfe.case import case_from_dict
from clutchfe.plan import run_case
from clutchfe.readme import readme_section
from clutchfe.summary_keys import (BY_KEY, MARKERS, OPTIONAL_STAGES, STAGES, SUMMARY_KEYS,
                                   reference_markdown)

from tests.helpers.data import ROOT, SMALL_PLATE, with_tables

# the unit each name ending stands for (longest ending first: _mm3 before _mm, _Nm before _N)
NAME_UNITS = (("_mm3_per_N_m", "mm³/(N·m)"), ("_MPa_per_mm", "MPa/mm"), ("_mm3", "mm³"), ("_mm", "mm"), ("_C", "°C"), ("_K", "K"), ("_rpm", "rpm"), ("_J", "J"), ("_s", "s"), ("_Nm", "N·m"), ("_N", "N"),
              ("_MPa", "MPa"), ("_deg", "deg"), ("_percent", "%"), ("_rad", "rad"), ("_seconds", "s"))

CASES = {
    "plain": SMALL_PLATE,
    # no duty: wear until p·r is steady; a large step cap gets there in a few steps
    "worn": with_tables(SMALL_PLATE, wear={"step_cap": 1.0, "max_steps": 40}),
    "tilted": with_tables(SMALL_PLATE, misalignment={"axis_tilt": 0.02}, mesh={"angular_divisions": 16}),
    # a short, coarse engagement: the keys are the point here, not the numbers
    "engaged": with_tables(SMALL_PLATE, engagement={"slip_speed": 1200.0, "slip_time": 0.5, "engagements": 2,
                                                    "dwell_time": 2.0, "steps_per_engagement": 10,
                                                    "dwell_steps": 4, "speed_law": "inertia",
                                                    "driven_inertia": 0.05}),
    "spinning": with_tables(SMALL_PLATE, speed={"running_speed": 3000.0}),
    "splined": with_tables(SMALL_PLATE, splines={"friction_coefficient": 0.1}),
    "curved": with_tables(SMALL_PLATE, lining_curve={"deflection": [0.01, 0.03], "pressure": [0.1, 0.5]},
                          cushion={"deflection": [0.2, 0.4], "force": [1500.0, 5000.0]}),
}


def _unit_in_name(key: str) -> str:
    return next((unit for ending, unit in NAME_UNITS if key.endswith(ending)), "")


@pytest.fixture(scope="module")
def summaries(tmp_path_factory):
    out = {}
    for name, data in CASES.items():
        folder = tmp_path_factory.mktemp("summary") / name
        returned = run_case(case_from_dict(copy.deepcopy(data), default_name=name), folder,
                            Console(file=io.StringIO()))
        written = json.loads((folder / "summary.json").read_text(encoding="utf-8"))
        assert set(written) == set(returned), name
        out[name] = written
    return out


def test_readme_table_is_current():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert all(readme.count(m) == 1 for m in MARKERS)
    assert readme_section(readme, MARKERS) == reference_markdown()


def test_the_table_is_well_formed():
    assert len(BY_KEY) == len(SUMMARY_KEYS)                         # no key declared twice
    assert {k.stage for k in SUMMARY_KEYS} <= set(STAGES)
    assert all(k.meaning.strip() and "|" not in k.meaning for k in SUMMARY_KEYS)
    # the README's sentence says which keys are optional: exactly the keys of these stages
    assert {k.key for k in SUMMARY_KEYS if not k.always} == \
        {k.key for k in SUMMARY_KEYS if k.stage in OPTIONAL_STAGES}


def test_every_key_written_is_declared(summaries):
    for name, summary in summaries.items():
        assert sorted(set(summary) - set(BY_KEY)) == [], name


def test_always_keys_are_in_every_summary(summaries):
    always = {k.key for k in SUMMARY_KEYS if k.always}
    for name, summary in summaries.items():
        assert sorted(always - set(summary)) == [], name


def test_each_analysis_writes_all_its_keys_and_only_when_asked(summaries):
    assert summaries["worn"]["worn_in_converged"] is True          # so the steady-state keys are there too
    for stage, run in (("tilt", "tilted"), ("wear-in", "worn"), ("engagement", "engaged"), ("speed", "spinning"),
                       ("spline drag", "splined")):
        keys = {k.key for k in SUMMARY_KEYS if k.stage == stage}
        assert sorted(keys - set(summaries[run])) == [], stage
        others = [n for n in summaries if n != run]
        assert all(not keys & set(summaries[n]) for n in others), stage


def test_a_unit_in_a_key_name_is_its_declared_unit():
    mismatched = [(k.key, k.unit) for k in SUMMARY_KEYS if _unit_in_name(k.key) != k.unit]
    assert mismatched == []


def test_declared_units_match_the_values_written(summaries):
    # a key with a unit holds numbers (null where the meaning says so; per body for a mapping)
    def number(x):
        return x is None or isinstance(x, (int, float)) and not isinstance(x, bool)
    for summary in summaries.values():
        for key, value in summary.items():
            if BY_KEY[key].unit:
                assert all(map(number, value.values())) if isinstance(value, dict) else number(value), key
