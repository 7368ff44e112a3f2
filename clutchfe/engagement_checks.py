"""Checks that relate the keys of the hot engagement ([engagement], [cooling], the thermal keys of the
materials) to each other and to the rest of the case; the conventions are case_checks.py's (each check
``(values, kind, problems, warnings)`` appends one line per problem naming key, value and what is allowed).
"""
from __future__ import annotations

import math

from .schema import SCHEMA, describe_range

# the hot engagement ([engagement]); see the checks below
THERMAL_KEYS = ("thermal_conductivity", "density", "specific_heat", "expansion_coefficient")
MAX_HEAT_FLUX = 50e6                  # W/m², see check_engagement_power
MAX_SLIP_ENERGY = 100e6               # J/m² per face and engagement, see check_engagement_power
MAX_RIM_SPEED = 200.0                 # m/s
MAX_START_OFFSET = 300.0              # K: |initial_temperature − ambient_temperature|
MAX_TIME_STEPS = 100_000
RPM = 2.0 * math.pi / 60.0            # rad/s per rpm


def check_thermal_materials(v, kind, problems, warnings):
    """With [engagement], a material the user typed (its own youngs_modulus or poissons_ratio) needs its own
    thermal properties: the defaults are the default material's (steel, grey iron, organic facing), and
    a bronze cup with cast iron's conductivity would give a wrong temperature without a word."""
    if "engagement" not in v.tables_given:
        return
    from_table = {"cone": CONE_TABLES, "plate": PLATE_TABLES}[kind]
    for table in from_table:
        given = [k for k in ("youngs_modulus", "poissons_ratio") if f"{table}.{k}" in v.typed]
        if not given or not any(k.startswith(f"{table}.") for k in v):
            continue            # the default material, or a table a section file replaces (reported there)
        full = f"{table}.{given[0]}"
        shown = f"{given[0]} = {v[full]:g}" if full in v else f"{given[0]} given"
        for key in THERMAL_KEYS:
            if f"{table}.{key}" not in v.typed:
                problems.append(f"{table}.{key}: missing; the {table.replace('_', ' ')}'s material was given "
                                f"({shown}), so its thermal properties must be given too "
                                f"({describe_range(SCHEMA[table][key])})")


CONE_TABLES = ("cone", "cup", "lining")
PLATE_TABLES = ("pressure_plate", "disc", "counter_plate", "separator_plate", "lining")


def check_engagement_model(v, kind, problems, warnings):
    """What the hot engagement runs on in this version: the axisymmetric section, friction faces meshed
    node to node (the heat crosses the interface between paired nodes)."""
    if "engagement" not in v.tables_given:
        return
    for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
        if v.get(key):
            problems.append(f"{key} = {v[key]:g}: the hot engagement runs on the axisymmetric section in this "
                            "version; allowed: 0, or remove [engagement]")
    if v.get("mesh.friction_face_nodes") == "independent":
        problems.append("mesh.friction_face_nodes = 'independent': the hot engagement needs the friction faces "
                        "meshed node to node; allowed: 'matching', or remove [engagement]")
    if "wear" in v.tables_given:
        warnings.append("[engagement] with [wear]: both run, each from the new lining (the hot engagement does not "
                        "start from the worn-in face; wear.engagements and engagement.engagements are two duties)")
    partition, conductance = v.get("engagement.heat_partition"), v.get("engagement.contact_conductance")
    if partition is not None and conductance is not None:
        problems.append(f"engagement.contact_conductance = {conductance:g}: with engagement.heat_partition no heat "
                        "crosses the interface; allowed: one of the two keys, not both")


def check_engagement_duty(v, kind, problems, warnings):
    if "engagement" not in v.tables_given:
        return
    law = v["engagement.speed_law"]
    inertia = v.get("engagement.driven_inertia")
    if law == "inertia":
        if inertia is None and "engagement.driven_inertia" not in v.invalid:
            problems.append("engagement.driven_inertia: missing; required with speed_law = 'inertia' "
                            "(1e-06 ≤ value ≤ 1e+07 kg·m²)")
    else:
        for key in ("engagement.driven_inertia", "engagement.drag_torque"):
            if key in v.typed and key in v:
                problems.append(f"{key} = {v[key]:g}: only used with engagement.speed_law = 'inertia' (this case "
                                f"has {law!r}); allowed: remove it, or speed_law = 'inertia'")
    start, ambient = v["engagement.initial_temperature"], v["cooling.ambient_temperature"]
    if abs(start - ambient) > MAX_START_OFFSET:
        # the section is stress-free at the ambient: a start this far off is a clutch that has already
        # failed (organic facings fade past ~250–300 °C, from memory), not a starting state
        problems.append(f"engagement.initial_temperature = {start:g}: {abs(start - ambient):.0f} K from "
                        f"cooling.ambient_temperature = {ambient:g} °C; allowed: {ambient - MAX_START_OFFSET:g} ≤ "
                        f"value ≤ {ambient + MAX_START_OFFSET:g} °C (within {MAX_START_OFFSET:g} K of the ambient)")


def _face_estimate(v):
    """Mean pressure MPa, mean radius mm and the area of one face mm² (uniform pressure): the estimates the
    duty bounds are read against."""
    r1, r2 = v["interface.inner_radius"], v["interface.outer_radius"]
    area = math.pi * (r2 * r2 - r1 * r1) / math.sin(math.radians(v["interface.semi_cone_angle"]))
    # a cone's normal force is W / sin α (the wedge), spread over the slant face
    normal = v["load.axial_force"] / math.sin(math.radians(v["interface.semi_cone_angle"]))
    return normal / area, 0.5 * (r1 + r2), area


def check_engagement_power(v, kind, problems, warnings):
    """An absurd duty is refused before the run: the frictional power per face area at the start of slip,
    μ p ω r_m, above 50 MW/m² (racing and aircraft brakes peak at ~10–20 MW/m² for fractions of a
    second, from memory); the slip energy of one engagement per face area above 100 MJ/m² (it would heat
    25 mm of steel on each side of the face by ~550 K with no loss at all); a rim speed above 200 m/s
    (organic facings are burst-tested to ~100 m/s, steel discs of high-speed machinery run to ~150,
    from memory).  The estimates use uniform pressure at the mean radius."""
    if "engagement" not in v.tables_given or v["interface.inner_radius"] >= v["interface.outer_radius"]:
        return
    omega = v["engagement.slip_speed"] * RPM
    rim = omega * v["interface.outer_radius"] / 1000.0
    if rim > MAX_RIM_SPEED:
        problems.append(f"engagement.slip_speed = {v['engagement.slip_speed']:g}: gives a sliding speed of "
                        f"{rim:.4g} m/s at r2; allowed: at most {MAX_RIM_SPEED:g} m/s, i.e. slip_speed ≤ "
                        f"{MAX_RIM_SPEED * 1000.0 / v['interface.outer_radius'] / RPM:.4g} rpm")
        return
    mu = v["interface.friction_coefficient"]
    pressure, r_m, area = _face_estimate(v)
    flux = mu * pressure * 1e6 * omega * r_m / 1000.0          # W/m²
    if flux > MAX_HEAT_FLUX:
        problems.append(f"engagement.slip_speed = {v['engagement.slip_speed']:g}: with load.axial_force = "
                        f"{v['load.axial_force']:g} N the frictional power per face area at the start of slip is "
                        f"{flux / 1e6:.3g} MW/m²; allowed: at most {MAX_HEAT_FLUX / 1e6:g} MW/m² (a lower slip "
                        f"speed or force)")
        return
    law, t = v["engagement.speed_law"], v["engagement.slip_time"]
    if law == "inertia":
        inertia = v.get("engagement.driven_inertia")
        if inertia is None:
            return
        faces = v["interface.friction_surfaces"]
        torque = mu * pressure * area * r_m * faces / 1000.0           # N·m, uniform pressure at r_m
        drag = v["engagement.drag_torque"]
        if drag >= torque:
            problems.append(f"engagement.drag_torque = {drag:g}: the clutch's torque is about {torque:.4g} N·m, "
                            f"so the slip would never end; allowed: 0 ≤ value < {torque:.4g} N·m")
            return
        lock = inertia * omega / (torque - drag)
        # slip energy with the driving side at slip speed: ½ I ω² T / (T − drag)
        energy = 0.5 * inertia * omega ** 2 * torque / (torque - drag) / (faces * area * 1e-6)
        if lock > t:
            warnings.append(f"engagement.slip_time = {t:g} s: the estimated lock-up takes {lock:.3g} s; the "
                            "slip stops at slip_time before the faces lock up")
    else:
        energy = flux * t * (0.5 if law == "linear" else 1.0)
    if energy > MAX_SLIP_ENERGY:
        problems.append(f"engagement.slip_time = {t:g}: the slip energy of one engagement is about "
                        f"{energy / 1e6:.3g} MJ/m² of face; allowed: at most {MAX_SLIP_ENERGY / 1e6:g} MJ/m² (a "
                        "shorter slip, a lower speed, force or inertia)")


def check_engagement_steps(v, kind, problems, warnings):
    if "engagement" not in v.tables_given:
        return
    n, per, dwell = v["engagement.engagements"], v["engagement.steps_per_engagement"], v["engagement.dwell_steps"]
    total = n * per + (n - 1) * dwell * (v["engagement.dwell_time"] > 0) + dwell * (v["engagement.cool_down_time"] > 0)
    if total > MAX_TIME_STEPS:
        # each step is a heat solve and at least one contact solve: the bound keeps a run within hours
        problems.append(f"engagement.engagements = {n}: with steps_per_engagement = {per} and dwell_steps = {dwell} "
                        f"the run has {total} time steps; allowed: at most {MAX_TIME_STEPS} (fewer engagements or "
                        "steps)")


def check_cooling(v, kind, problems, warnings):
    if "cooling" in v.tables_given and "engagement" not in v.tables_given:
        warnings.append("[cooling]: unused without an [engagement] table (only the hot engagement uses it)")


ENGAGEMENT_CHECKS = (check_thermal_materials, check_engagement_model, check_engagement_duty, check_engagement_power,
                     check_engagement_steps, check_cooling)
