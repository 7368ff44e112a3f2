"""Small valid cases built in code and the demo case files (demo data only, invented)."""
from pathlib import Path

from clutchfe.case import with_tables

ROOT = Path(__file__).resolve().parents[2]
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


def write_toml(path: Path, data: dict) -> Path:
    import tomli_w
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    return path

# a small plate on a coarse mesh, no mesh study: a whole run in about a second (tests of the stages
# around the solve, not of its accuracy)
SMALL_PLATE = {
    "kind": "plate",
    "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3, "friction_surfaces": 2},
    "load": {"axial_force": 3000.0},
    "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8},
    "verification": {"mesh_study": False},
}


__all__ = ["CASES", "CONE", "PLATE", "ROOT", "SMALL_PLATE", "with_tables", "write_toml"]
