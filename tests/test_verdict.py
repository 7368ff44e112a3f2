"""What the run tells a reviewer: the design peak, and a verdict that names every failed criterion."""
import math

import numpy as np
import pytest

import clutchfe
from clutchfe.comparison import compare, hand_capacity
from clutchfe.comparison.design_peak import DESIGN_BAND_FRACTION, design_peak

from tests.helpers.data import ROOT


def test_design_peak_of_the_uniform_wear_pressure_is_its_closed_form_band_mean():
    # p = c / r (uniform wear, Shigley): the ring-weighted mean over [r1, r1 + w] is
    # ∫ c dr / ∫ r dr = c w / ((r1 + w)² − r1²) / 2 — the band at r1 is the worst place
    r1, r2, c = 60.0, 75.0, 60.0
    r = np.linspace(r1, r2, 301)
    value, middle = design_peak(r, c / r, r1, r2, 90.0)
    w = DESIGN_BAND_FRACTION * (r2 - r1)
    assert value == pytest.approx(c * w / (((r1 + w) ** 2 - r1 ** 2) / 2.0), rel=1e-5)
    assert middle == pytest.approx(r1 + w / 2.0)
    # uniform pressure: the band mean is the pressure itself, on a cone too (ds = dr / sin α)
    assert design_peak(r, np.full_like(r, 0.7), r1, r2, 14.0)[0] == pytest.approx(0.7, rel=1e-12)


def test_the_design_peak_is_judged_against_the_allowable_and_the_nodal_edge_value_is_not():
    # invented face: uniform 1 MPa with one spike of 3 MPa at the inner edge node
    hand = hand_capacity(60.0, 75.0, 90.0, 0.3, 2, 1.0 * math.pi * (75.0 ** 2 - 60.0 ** 2))
    r = np.linspace(60.0, 75.0, 151)
    p = np.ones_like(r)
    p[0] = 3.0
    area = np.pi * np.diff(np.concatenate(([r[0]], 0.5 * (r[1:] + r[:-1]), [r[-1]])) ** 2)
    face = {"name": "s1", "r_mm": r, "pressure_MPa": p, "normal_force_N": p * area, "tributary_area_mm2": area}
    within = compare([face, face], hand, allowable_pressure_MPa=1.5)
    assert within.design_peak_pressure_MPa < 1.5 < within.peak_pressure_MPa
    assert "allowable pressure" not in within.failed_criteria and "edge concentration" in within.verdict
    above = compare([face, face], hand, allowable_pressure_MPa=0.9)
    assert "allowable pressure" in above.failed_criteria and "ALLOWABLE PRESSURE IS EXCEEDED" in above.verdict


@pytest.fixture(scope="module")
def service():
    return clutchfe.SolveService()


def _summary(name, service):
    return clutchfe.summary_of(clutchfe.analyse(clutchfe.load_case(ROOT / "cases" / name), service, fields=False))


def test_the_mismatch_demo_verdict_names_the_exceeded_allowable_and_the_open_face(service):
    s = _summary("cone_capstan_mismatch.toml", service)
    assert s["design_peak_over_allowable"] > 1.05                 # measured: 1.156
    assert {"allowable pressure", "partial contact"} <= set(s["failed_criteria"])
    for words in ("ALLOWABLE PRESSURE IS EXCEEDED", "CONTACT IS PARTIAL", "Failed criteria: allowable pressure"):
        assert words in s["verdict"], words
        assert any(words.split(":")[0] in w for w in s["warnings"]) or words.startswith("Failed")
    assert s["capacity_position"] < 0                              # below even uniform wear


def test_the_tilted_demo_verdict_names_the_open_face_and_the_edge_peak_above_the_allowable(service):
    s = _summary("cone_capstan_tilted.toml", service)
    assert "partial contact" in s["failed_criteria"]
    assert s["peak_pressure_MPa"] > s["allowable_pressure_MPa"] > s["design_peak_pressure_MPa"]
    assert "is above the allowable" in s["verdict"] and "edge concentration" in s["verdict"]
    # one meaning per key: the per-surface peak and contact are the (r, θ) grid's, as at the top level
    (surface,) = s["surfaces"]
    assert surface["peak_pressure_MPa"] == s["peak_pressure_MPa"]
    assert surface["contact_area_fraction"] == pytest.approx(s["contact_area_fraction"], rel=1e-12)
    assert surface["design_peak_pressure_MPa"] == s["design_peak_pressure_MPa"]


def test_the_worn_in_state_is_in_the_verdict(service):
    s = _summary("cone_capstan_wearin.toml", service)
    assert "Worn in:" in s["verdict"] and s["capacity_position_worn_in"] is not None
    # after the wear-in the uniform-pressure formula overestimates the worn-in capacity (ξ ≈ 0 < 1)
    assert s["capacity_position_worn_in"] < 0.5 < s["capacity_position"]


def test_a_pack_gives_every_surface_the_whole_clamp_force(service):
    # plates in series: each friction surface carries the full W (statics of the pack, common practice)
    s = _summary("multiplate_gearbox.toml", service)
    assert len(s["surfaces"]) == 8
    for surface in s["surfaces"]:
        assert surface["axial_force_over_clamp_force"] == pytest.approx(1.0, abs=1e-9)
        assert surface["axial_force_N"] == pytest.approx(s["axial_force_N"], rel=1e-9)
    assert sum(x["torque_Nm"] for x in s["surfaces"]) == pytest.approx(s["torque_fe_Nm"], rel=1e-12)
