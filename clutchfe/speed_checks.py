"""Checks that relate the keys of the speed analysis ([speed], the density and strengths of the materials) to
each other and to the rest of the case; the conventions are case_checks.py's (each check
``(values, kind, problems, warnings)`` appends one line per problem naming key, value and what is allowed).
"""
from __future__ import annotations

import math

from .engagement_checks import CONE_TABLES, PLATE_TABLES
from .schema import SCHEMA, STRENGTH_KEYS, describe_range

# A thin rotating ring carries the hoop stress σ = ρ v² at its rim speed v (the closed form of any strength
# of materials text): at 300 m/s a steel ring (7850 kg/m³) carries 707 MPa, beyond the tensile strength of
# structural steel (S355: 470–630 MPa) and nearly three times grey iron's (250); clutch rims run at a few tens
# of m/s and organic facings are burst-tested to ~100 m/s (from memory).  A faster rim is a typing error.
MAX_RIM_SPEED = 300.0                 # m/s
RPM = 2.0 * math.pi / 60.0            # rad/s per rpm
# the materials the speed analysis reads (the material tables: engagement_checks' CONE_TABLES, PLATE_TABLES):
# the bodies' density and strengths, the lining's density and tensile strength (a lining is not judged by
# yielding)
BODY_SPEED_KEYS = ("density", *STRENGTH_KEYS)
LINING_SPEED_KEYS = ("density", "tensile_strength")
# the outer radius keys of the parametric bodies (the largest is the rim that turns fastest)
OUTER_RADII = {"plate": ("pressure_plate.outer_radius", "disc.core_outer_radius", "counter_plate.outer_radius",
                         "separator_plate.outer_radius")}


def check_speed_materials(v, kind, problems, warnings):
    """With [speed], a material the user typed (its own youngs_modulus or poissons_ratio) needs its own density
    and strengths: the defaults are the default material's (steel, grey iron, organic facing), and a bronze cup
    judged by grey iron's strength would pass or fail without a word."""
    if "speed" not in v.tables_given:
        return
    for table in {"cone": CONE_TABLES, "plate": PLATE_TABLES}[kind]:
        given = [k for k in ("youngs_modulus", "poissons_ratio") if f"{table}.{k}" in v.typed]
        if not given or not any(k.startswith(f"{table}.") for k in v):
            continue            # the default material, or a table a section file replaces (reported there)
        full = f"{table}.{given[0]}"
        shown = f"{given[0]} = {v[full]:g}" if full in v else f"{given[0]} given"
        for key in LINING_SPEED_KEYS if table == "lining" else BODY_SPEED_KEYS:
            if f"{table}.{key}" not in v.typed:
                problems.append(f"{table}.{key}: missing; the {table.replace('_', ' ')}'s material was given "
                                f"({shown}), so with [speed] its {key.replace('_', ' ')} must be given too "
                                f"({describe_range(SCHEMA[table][key])})")


def check_strength_order(v, kind, problems, warnings):
    """A material's tensile strength is at least its yield strength (the stress–strain curve rises to it)."""
    tables = {"cone": CONE_TABLES, "plate": PLATE_TABLES}[kind]
    for table in tables:
        low, high = v.get(f"{table}.yield_strength"), v.get(f"{table}.tensile_strength")
        if low is None or high is None or high >= low:
            continue
        default = "" if f"{table}.tensile_strength" in v.typed else " (the default material's)"
        problems.append(f"{table}.tensile_strength = {high:g}{default}: below {table}.yield_strength = {low:g} MPa; "
                        f"allowed: tensile_strength ≥ yield_strength ({low:g} MPa)")


def check_speed_model(v, kind, problems, warnings):
    """What the speed analysis runs on in this version: the axisymmetric section, as the only extra analysis of
    the case."""
    if "speed" not in v.tables_given:
        return
    for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
        if v.get(key):
            problems.append(f"{key} = {v[key]:g}: the speed analysis runs on the axisymmetric section in this "
                            "version; allowed: 0, or remove [speed]")
    for table in ("engagement", "wear"):
        if table in v.tables_given:
            problems.append(f"[speed]: given with [{table}], but a case runs one extra analysis of this kind (hot "
                            "engagement, wear-in or speed) in this version; allowed: one of the two tables (a second "
                            "case file for the other)")


def _largest_radius(v, kind) -> tuple[str, float]:
    """The largest outer radius the case's keys give at check time, and its key: the parametric plate bodies'
    outer radii, else (a cone, whose rim radii are drawn from the wall thicknesses, or a drawn section)
    interface.outer_radius."""
    radii = [(key, v[key]) for key in OUTER_RADII.get(kind, ()) if key in v]
    if kind == "plate" and v.get("interface.friction_surfaces", 4) <= 2:
        radii = [(k, r) for k, r in radii if not k.startswith("separator_plate.")]   # no separator in the section
    radii.append(("interface.outer_radius", v["interface.outer_radius"]))
    return max(radii, key=lambda item: item[1])


def check_rim_speed(v, kind, problems, warnings):
    if "speed" not in v.tables_given or "speed.running_speed" not in v or "interface.outer_radius" not in v:
        return
    rpm = v["speed.running_speed"]
    key, radius = _largest_radius(v, kind)
    rim = rpm * RPM * radius / 1000.0
    if rim > MAX_RIM_SPEED:
        problems.append(f"speed.running_speed = {rpm:g}: gives a rim speed of {rim:.4g} m/s at {key} = {radius:g} "
                        f"mm; allowed: at most {MAX_RIM_SPEED:g} m/s (a steel ring's hoop stress ρv² would pass its "
                        f"tensile strength), i.e. 0 < running_speed ≤ {MAX_RIM_SPEED * 1000.0 / radius / RPM:.4g} rpm")


SPEED_CHECKS = (check_speed_materials, check_strength_order, check_speed_model, check_rim_speed)
