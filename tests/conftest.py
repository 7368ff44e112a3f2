"""Shared fixtures: small valid cases built in code (demo data only, invented)."""
import copy
import os
from pathlib import Path

import pytest
from hypothesis import settings

# CI explores the same examples every run (same input, same output); local runs keep exploring
settings.register_profile("ci", derandomize=True, deadline=None)
if os.environ.get("CI"):
    settings.load_profile("ci")

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted(p for p in (ROOT / "cases").glob("*.toml") if not p.name.endswith(".study.toml"))

CONE = {
    "kind": "cone",
    "interface": {"inner_radius": 60.0, "outer_radius": 75.0, "semi_cone_angle": 14.0,
                  "friction_coefficient": 0.22, "friction_surfaces": 1},
    "load": {"axial_force": 2500.0},
}
PLATE = {
    "kind": "plate",
    "interface": {"inner_radius": 80.0, "outer_radius": 120.0, "friction_coefficient": 0.3,
                  "friction_surfaces": 2},
    "load": {"axial_force": 4000.0},
}


@pytest.fixture
def cone_dict():
    return copy.deepcopy(CONE)


@pytest.fixture
def plate_dict():
    return copy.deepcopy(PLATE)


def write_toml(path: Path, data: dict) -> Path:
    import tomli_w
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    return path
