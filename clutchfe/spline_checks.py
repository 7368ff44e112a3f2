"""Checks that relate the keys of the spline drag ([splines]) to each other and to the rest of the case; the
conventions are case_checks.py's (each check ``(values, kind, problems, warnings)`` appends one line per problem
naming key, value and what is allowed).
"""
from __future__ import annotations

# (plate key prefix, its table, inner-edge key, outer-edge key): the edge a spline is cut on
SPLINED_PLATES = (("disc", "disc", "core_inner_radius", "core_outer_radius"),
                  ("separator", "separator_plate", "inner_radius", "outer_radius"),
                  ("pressure_plate", "pressure_plate", "inner_radius", "outer_radius"))
# A spline's pitch circle lies within a tooth depth of the edge it is cut on: involute plate splines have
# module 1–5 mm on radii of 20–200 mm (common practice), a tooth depth of ~2.2 modules, so within 20 % of the
# edge radius; a pitch radius farther away belongs to another part.
PITCH_TOLERANCE = 0.2
# The gain a = μ_spline μ r2 / R_spline of a plate (the spline drag per unit of the clamp force it passes on,
# module pack.drag): at a ≥ 1 no force passes the plate (it locks on its splines); no real pack comes near.
MAX_GAIN = 1.0


def check_spline_model(v, kind, problems, warnings):
    """What the spline drag runs on in this version: the parametric, axisymmetric pack, as the only extra
    analysis of the case."""
    if "splines" not in v.tables_given:
        return
    for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
        if v.get(key):
            problems.append(f"{key} = {v[key]:g}: the spline drag runs on the axisymmetric section in this version; "
                            "allowed: 0, or remove [splines]")
    for table in ("engagement", "wear", "speed"):
        if table in v.tables_given:
            problems.append(f"[splines]: given with [{table}], but a case runs one extra analysis (hot engagement, "
                            f"wear-in, speed or spline drag) in this version; allowed: one of the two tables (a "
                            "second case file for the other)")
    if "section_file" in v.tables_given:
        problems.append("[splines]: given with [section_file]; the spline drag acts on the splined edges of the "
                        "parametric plates in this version; allowed: the parametric tables, or remove [splines]")


def check_pitch_radii(v, kind, problems, warnings):
    if "splines" not in v.tables_given or kind != "plate":
        return
    for plate, table, inner, outer in SPLINED_PLATES:
        if plate == "separator" and v.get("interface.friction_surfaces", 4) <= 2:
            continue                    # no separator in a single-disc clutch
        side, radius = v.get(f"splines.{plate}_spline"), v.get(f"splines.{plate}_pitch_radius")
        edge_key = f"{table}.{inner if side == 'inner' else outer}"
        edge = v.get(edge_key)
        if side is None or radius is None or edge is None:
            continue
        low, high = (1.0 - PITCH_TOLERANCE) * edge, (1.0 + PITCH_TOLERANCE) * edge
        if not low <= radius <= high:
            problems.append(f"splines.{plate}_pitch_radius = {radius:g}: the {side} spline is cut on {edge_key} = "
                            f"{edge:g} mm, so its pitch circle lies within a tooth depth of it; allowed: "
                            f"{low:.4g} ≤ value ≤ {high:.4g} mm")


def check_spline_gain(v, kind, problems, warnings):
    if "splines" not in v.tables_given or kind != "plate":
        return
    mu, r2 = v.get("interface.friction_coefficient"), v.get("interface.outer_radius")
    if mu is None or r2 is None:
        return
    for plate, _, _, _ in SPLINED_PLATES:
        mu_s, radius = v.get(f"splines.{plate}_friction_coefficient"), v.get(f"splines.{plate}_pitch_radius")
        if mu_s is None or not radius:
            continue
        gain = mu_s * mu * r2 / radius
        if gain >= MAX_GAIN:
            problems.append(f"splines.{plate}_friction_coefficient = {mu_s:g}: with mu = {mu:g}, r2 = {r2:g} mm and "
                            f"the pitch radius {radius:g} mm the spline friction would hold back all the force the "
                            f"plate passes on (gain {gain:.3g}); allowed: value < {MAX_GAIN * radius / (mu * r2):.4g}")


SPLINE_CHECKS = (check_spline_model, check_pitch_radii, check_spline_gain)
