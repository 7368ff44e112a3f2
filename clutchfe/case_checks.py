"""Checks that relate several keys of a case (each key's own range is checked against the schema).

Every check is a small function ``(values, kind, problems, warnings)``; it reads the
values it needs and appends one line per problem naming the key, the value and what is
allowed.  A check whose values are missing (invalid themselves, so already reported) is
skipped rather than run on stand-ins: that is what lets a file's problems all be reported
in one round without messages about values the user never gave.  The ``BASE`` checks
relate the keys every derived default is computed from (radii, angle, lining); when one of
them fails, the derived defaults are dropped before the other checks run.
"""
from __future__ import annotations

import math

from .engagement_checks import ENGAGEMENT_CHECKS
from .speed_checks import SPEED_CHECKS
from .spline_checks import SPLINE_CHECKS
from .schema import SCHEMA, describe_range

MEAN_PRESSURE_MPA = (1e-3, 20.0)      # see check_mean_pressure
MIN_PLATE_RADIUS_RATIO = 0.1
MIN_FACE_WIDTH = 0.02                 # slant face width / r2
MAX_CONE_ANGLE = 80.0                 # deg


def check_radii(v, kind, problems, warnings):
    r1, r2 = v["interface.inner_radius"], v["interface.outer_radius"]
    if r1 >= r2:
        problems.append(f"interface.inner_radius = {r1:g}: must be less than interface.outer_radius "
                        f"= {r2:g} mm; allowed: 2 ≤ inner_radius < {r2:g} mm")
        return
    if kind == "plate" and r1 / r2 < MIN_PLATE_RADIUS_RATIO:
        problems.append(f"interface.inner_radius = {r1:g}: a plate face reaching to {r1 / r2:.3g} of r2 carries "
                        f"little torque near the axis and no plate clutch is built so; allowed: inner_radius ≥ "
                        f"{MIN_PLATE_RADIUS_RATIO:g} × outer_radius = {MIN_PLATE_RADIUS_RATIO * r2:.4g} mm")


def check_angle_and_faces(v, kind, problems, warnings):
    alpha, n = v["interface.semi_cone_angle"], v["interface.friction_surfaces"]
    if kind == "cone":
        if alpha > MAX_CONE_ANGLE:
            problems.append(f"interface.semi_cone_angle = {alpha:g}: beyond {MAX_CONE_ANGLE:g}° a cone clutch "
                            f"is a plate clutch (the wedge gains < 2 %); allowed for a cone: 2 ≤ value ≤ "
                            f"{MAX_CONE_ANGLE:g} deg, or kind = 'plate'")
        if n != 1:
            problems.append(f"interface.friction_surfaces = {n}: a cone clutch has one friction face; allowed: 1")
        mu = v["interface.friction_coefficient"]
        if math.tan(math.radians(alpha)) < mu:
            warnings.append(f"interface.semi_cone_angle = {alpha:g} deg: tan(alpha) = "
                            f"{math.tan(math.radians(alpha)):.3f} < friction_coefficient = {mu:g}: the cone "
                            "self-locks (it needs a pull to disengage)")
    else:
        if alpha != 90.0:
            problems.append(f"interface.semi_cone_angle = {alpha:g}: a plate clutch's faces are normal to "
                            "the axis; allowed: 90 (or leave it out)")
        if n % 2:
            problems.append(f"interface.friction_surfaces = {n}: a plate clutch has two faces per disc; "
                            "allowed: an even number 2, 4, 6 … 40")


def check_face_width(v, kind, problems, warnings):
    r1, r2, alpha = v["interface.inner_radius"], v["interface.outer_radius"], v["interface.semi_cone_angle"]
    if r1 >= r2:
        return
    # a face this narrow is a ring seal or a thrust collar, not a friction face: plate faces have
    # r1/r2 = 0.45–0.85, even synchroniser cones are ~20 % of their radius wide (common practice)
    width = (r2 - r1) / math.sin(math.radians(alpha))
    if width < MIN_FACE_WIDTH * r2:
        problems.append(f"interface.outer_radius = {r2:g}: the friction face is {width:.3g} mm wide, less than "
                        f"{MIN_FACE_WIDTH:.0%} of its radius; allowed: a face at least {MIN_FACE_WIDTH * r2:.3g} mm "
                        f"wide (outer_radius − inner_radius ≥ {MIN_FACE_WIDTH * r2 * math.sin(math.radians(alpha)):.3g} mm)")


def check_mean_pressure(v, kind, problems, warnings):
    """Linings are rated 0.1–3.5 MPa mean (from memory); 20 MPa crushes any of them, and below
    1 kPa the faces are not engaged.  The same W passes every face of a pack."""
    r1, r2, force = v["interface.inner_radius"], v["interface.outer_radius"], v["load.axial_force"]
    if r1 >= r2:
        return
    area = math.pi * (r2 * r2 - r1 * r1)
    low, high = MEAN_PRESSURE_MPA
    mean = force / area
    if not low <= mean <= high:
        problems.append(f"load.axial_force = {force:g}: gives a mean face pressure of {mean:.3g} MPa; allowed: "
                        f"{low:g}–{high:g} MPa, i.e. {low * area:.3g} ≤ value ≤ {high * area:.4g} N")


def check_lining_carrier(v, kind, problems, warnings):
    t, bonded = v["lining.thickness"], v["lining.bonded_to"]
    if kind == "cone":
        if bonded not in ("cone", "cup"):
            problems.append(f"lining.bonded_to = {bonded!r}: allowed for a cone clutch: 'cone' or 'cup'")
            return
        carriers = {"cone.rim_thickness": v["cone.rim_thickness"]} if bonded == "cone" \
            else {"cup.wall_thickness": v["cup.wall_thickness"]}
    else:
        if bonded not in ("disc", "plates"):
            problems.append(f"lining.bonded_to = {bonded!r}: allowed for a plate clutch: 'disc' or 'plates'")
            return
        carriers = {"disc.core_thickness": v["disc.core_thickness"]} if bonded == "disc" \
            else {f"{p}.thickness": v[f"{p}.thickness"] for p in _plates(v)}
    for key, thick in carriers.items():
        if t >= thick:
            problems.append(f"lining.thickness = {t:g}: the lining is thicker than its body ({key} = "
                            f"{thick:g} mm); allowed: 0.1 ≤ thickness < {thick:g} mm")


def _radius_keys(part: str) -> tuple[str, str]:
    """The inner and outer radius keys of a plate-clutch part (the disc's are its core's)."""
    return (("disc.core_inner_radius", "disc.core_outer_radius") if part == "disc"
            else (f"{part}.inner_radius", f"{part}.outer_radius"))


def _plates(v) -> list[str]:
    return ["pressure_plate", "counter_plate"] + (["separator_plate"] if v["interface.friction_surfaces"] > 2
                                                  else [])


def check_cone_parts(v, kind, problems, warnings):
    if kind != "cone":
        return
    for part in ("cone", "cup"):
        bore, hub = v[f"{part}.bore_radius"], v[f"{part}.hub_outer_radius"]
        if bore >= hub:
            problems.append(f"{part}.bore_radius = {bore:g}: must be less than {part}.hub_outer_radius = "
                            f"{hub:g} mm; allowed: 0 < bore_radius < {hub:g} mm")
    alpha, mismatch = v["interface.semi_cone_angle"], v["misalignment.cone_angle_mismatch"]
    if not 0.0 < alpha + mismatch < 90.0:
        problems.append(f"misalignment.cone_angle_mismatch = {mismatch:g}: the cup angle alpha + mismatch "
                        f"must stay within (0, 90) deg")


def check_plate_parts(v, kind, problems, warnings):
    if kind != "plate":
        return
    r1, r2 = v["interface.inner_radius"], v["interface.outer_radius"]
    for lo_key, hi_key in map(_radius_keys, _plates(v) + ["disc"]):
        lo, hi = v[lo_key], v[hi_key]
        if lo > r1:
            problems.append(f"{lo_key} = {lo:g}: the friction surface must lie on the part; "
                            f"allowed: 0 < value ≤ interface.inner_radius = {r1:g} mm")
        if hi < r2:
            problems.append(f"{hi_key} = {hi:g}: the friction surface must lie on the part; "
                            f"allowed: value ≥ interface.outer_radius = {r2:g} mm")


def check_coning(v, kind, problems, warnings):
    if kind != "plate":
        return
    coning, t = v["misalignment.coning"], v["lining.thickness"]
    if abs(coning) >= t:
        problems.append(f"misalignment.coning = {coning:g}: must be smaller than the lining thickness; "
                        f"allowed: -{t:g} < coning < {t:g} mm")


def check_lining_ends(v, kind, problems, warnings):
    """A chamfered plate lining's bond runs one lining thickness past r1 and r2: its carriers must reach
    that far (a cone's rim and cup grow with the bond; the cone geometry checks the webs they may reach)."""
    if kind != "plate" or v["lining.end_shape"] != "chamfer" or v["lining.bonded_to"] not in ("disc", "plates"):
        return
    r1, r2, t = v["interface.inner_radius"], v["interface.outer_radius"], v["lining.thickness"]
    carriers = ["disc"] if v["lining.bonded_to"] == "disc" else _plates(v)
    for lo_key, hi_key in map(_radius_keys, carriers):
        lo, hi = v[lo_key], v[hi_key]
        if r1 - t < lo <= r1:           # lo > r1 is reported by the friction-surface check
            problems.append(f"{lo_key} = {lo:g}: with lining.end_shape = 'chamfer' the lining's bond runs one "
                            f"lining thickness inside r1; allowed: value ≤ interface.inner_radius − "
                            f"lining.thickness = {r1 - t:g} mm, or lining.end_shape = 'normal_to_face'")
        if r2 <= hi < r2 + t:
            problems.append(f"{hi_key} = {hi:g}: with lining.end_shape = 'chamfer' the lining's bond runs one "
                            f"lining thickness past r2; allowed: value ≥ interface.outer_radius + "
                            f"lining.thickness = {r2 + t:g} mm, or lining.end_shape = 'normal_to_face'")


def check_load(v, kind, problems, warnings):
    ring = v.get("load.ring_radius")
    if v["load.application"] != "ring":
        if ring is not None:
            problems.append(f"load.ring_radius = {ring:g}: only used with load.application = 'ring'")
        return
    if kind == "plate":
        lo, hi = v["pressure_plate.inner_radius"], v["pressure_plate.outer_radius"]
        where = "the pressure plate's back face"
    else:
        lo = v["cone.bore_radius"]
        alpha = math.radians(v["interface.semi_cone_angle"])
        lining_on_cone = v["lining.bonded_to"] == "cone"
        hi = v["interface.outer_radius"] - (v["lining.thickness"] if lining_on_cone else 0.0) / math.cos(alpha)
        where = "the inner cone's back face"
    if ring is None:        # the default ring depends on a value that is itself reported
        return
    if not lo < ring < hi:
        problems.append(f"load.ring_radius = {ring:g}: must lie on {where}; allowed: {lo:g} < value < {hi:g} mm")


def check_support(v, kind, problems, warnings):
    names = ("support.axial_stiffness", "support.radial_stiffness")
    if v["support.type"] == "springs":
        for key in names:
            if key not in v and key not in v.invalid:
                problems.append(f"{key}: missing; required with support.type = 'springs' (10 ≤ value ≤ 1e10 N/mm)")
    else:
        for key in names:
            if key in v:
                problems.append(f"{key} = {v[key]:g}: only used with support.type = 'springs'")


def check_tilt_pivot(v, kind, problems, warnings):
    """The tilt pivot within two outer radii of the friction face: further away, a tilt of the
    pressed part is mostly a radial shift of its face (give that as misalignment.radial_offset)."""
    offset, limit = v["misalignment.tilt_pivot_offset"], 2.0 * v["interface.outer_radius"]
    if not abs(offset) <= limit:
        problems.append(f"misalignment.tilt_pivot_offset = {offset:g}: the pivot must lie within two outer radii "
                        f"of the middle of the friction face; allowed: -{limit:g} ≤ value ≤ {limit:g} mm")


def check_wear(v, kind, problems, warnings):
    if "wear" not in v.tables_given:
        return
    duty = [k for k in ("wear.engagements", "wear.slip_speed", "wear.slip_time") if k in v]
    target = "wear.target_wear_volume" in v
    if duty and len(duty) < 3:
        missing = sorted({"wear.engagements", "wear.slip_speed", "wear.slip_time"} - set(duty)
                         - set(v.invalid))
        if missing:
            problems.append(f"{', '.join(missing)}: missing; the wear duty needs engagements, slip_speed and "
                            "slip_time together")
    if duty and target:
        problems.append(f"wear.target_wear_volume = {v['wear.target_wear_volume']:g}: give either a target "
                        "wear volume or the engagement duty, not both")
    for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
        if v[key]:
            problems.append(f"{key} = {v[key]:g}: wear-in runs on the axisymmetric face in this version; "
                            "remove [wear] or set it to 0")
    if v["wear.max_wear_depth"] >= v["lining.thickness"]:
        problems.append(f"wear.max_wear_depth = {v['wear.max_wear_depth']:g}: must be less than the lining "
                        f"thickness; allowed: 0 < value < {v['lining.thickness']:g} mm")


def check_mesh(v, kind, problems, warnings):
    divisions = v["mesh.angular_divisions"]
    if divisions % 2:
        problems.append(f"mesh.angular_divisions = {divisions}: must be even (harmonics 0 … N on 2N "
                        "angles); allowed: 8, 10, … 256")
    t = v.get("lining.thickness")       # None when a section file draws the lining
    alpha = math.radians(v["interface.semi_cone_angle"])
    slant = (v["interface.outer_radius"] - v["interface.inner_radius"]) / math.sin(alpha)
    face, edge, body = v["mesh.interface_element_size"], v["mesh.edge_element_size"], v["mesh.element_size"]
    if slant > 0 and face > slant / 4.0:
        problems.append(f"mesh.interface_element_size = {face:g}: cannot resolve the friction face "
                        f"({slant:.3g} mm long); allowed: 0 < value ≤ {slant / 4.0:.4g} mm")
    if t is not None and face > 2.0 * t:
        problems.append(f"mesh.interface_element_size = {face:g}: cannot resolve the lining "
                        f"({t:g} mm thick); allowed: 0 < value ≤ {2.0 * t:.4g} mm")
    if t is not None and edge > t:
        problems.append(f"mesh.edge_element_size = {edge:g}: cannot resolve the lining at its ends "
                        f"({t:g} mm thick); allowed: 0 < value ≤ {t:g} mm")
    if edge > face:
        problems.append(f"mesh.edge_element_size = {edge:g}: must not exceed mesh.interface_element_size "
                        f"= {face:g} mm")
    if body < face:
        problems.append(f"mesh.element_size = {body:g}: must not be smaller than "
                        f"mesh.interface_element_size = {face:g} mm")
    if v["mesh.friction_face_nodes"] == "independent":
        for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
            if v[key]:
                problems.append(f"{key} = {v[key]:g}: the tilted solve pairs the friction faces node to node; "
                                "give mesh.friction_face_nodes = \"matching\" or set it to 0")


class CaseValues(dict):
    """``table.key -> value`` of the keys that are valid on their own, with what was given: the keys
    given but invalid (reported already), the tables present in the file and every key it typed."""

    def __init__(self, *args, invalid=frozenset(), tables_given=frozenset(), typed=frozenset()):
        super().__init__(*args)
        self.invalid, self.tables_given = frozenset(invalid), frozenset(tables_given)
        # every key the file typed (valid or not): what the user chose, not a default
        self.typed = frozenset(typed)


# the keys every derived default is computed from, checked first
BASE = (check_radii, check_angle_and_faces, check_face_width)
RELATIONS = (check_mean_pressure, check_lining_carrier, check_cone_parts, check_plate_parts, check_coning,
             check_lining_ends, check_load, check_support, check_tilt_pivot, check_wear, check_mesh,
             *ENGAGEMENT_CHECKS, *SPEED_CHECKS, *SPLINE_CHECKS)


def run_checks(checks, values: dict, kind: str, problems: list[str], warnings: list[str]) -> None:
    """Run each check whose values are all present; a missing one is an invalid key already reported."""
    for check in checks:
        try:
            check(values, kind, problems, warnings)
        except KeyError:
            continue
