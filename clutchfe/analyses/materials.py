"""Which case table holds the material of a region of the section: what the analyses that need more of a
material than its stiffness (the hot engagement's thermal properties, the speed's density and strengths)
read, in one place.

A lining region has the [lining] table's material, a region of a parametric body its body's table (disc2 →
disc, separator1 → separator_plate), a drawn region (a [section_file] case) its own keys.
"""
from __future__ import annotations

import re

import numpy as np


def body_table(body: str) -> str:
    """The case table of a parametric body's material (disc2 -> disc, separator1 -> separator_plate)."""
    base = re.sub(r"\d+$", "", body)
    return {"separator": "separator_plate"}.get(base, base)


def material_table(case, region):
    """The table (or the drawn region's spec) whose keys give ``region``'s material."""
    if region.lining_layers:
        return case.lining
    if case.section_file is not None:
        return next(r for r in case.section_file.regions if r.name == region.name)
    return getattr(case, body_table(region.body))


def region_values(case, region, keys) -> tuple:
    """The values of ``keys`` for one region (None where a drawn region does not give one)."""
    table = material_table(case, region)
    return tuple(getattr(table, key, None) for key in keys)


def triangle_values(case, section, mesh, keys):
    """(triangles, len(keys)) array of the keys' values on every triangle of the mesh; a missing value
    (a drawn region without the key, refused by the case checks before a solve) raises ValueError."""
    regions = {reg.name: reg for reg in section.regions}
    rows = []
    for name in mesh.region_names:
        values = region_values(case, regions[name], keys)
        missing = [k for k, v in zip(keys, values) if v is None]
        if missing:
            raise ValueError(f"region {name!r}: {', '.join(missing)} not given")
        rows.append(values)
    return np.asarray(rows, dtype=float)[np.asarray(mesh.triangle_region)]
