"""Every key a case file may hold: type, unit, allowed range, default, meaning.

This table is the single source for validation, defaults and the case-file
reference in the README (``clutchfe keys`` prints it), so the three cannot drift.
A default may depend on the required keys (``r1``, ``r2``, ``alpha`` …): those are
given as functions of the partially filled case.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Callable

from .readme import write_between_markers

STEEL_E, STEEL_NU = 210000.0, 0.30      # MPa; common practice for carbon steel
CAST_IRON_E, CAST_IRON_NU = 110000.0, 0.26   # grey cast iron, from memory (90–140 GPa by grade)
LINING_E, LINING_NU = 400.0, 0.25       # moulded organic facing, from memory (a few hundred MPa)


@dataclass(frozen=True)
class Key:
    unit: str
    meaning: str
    kind: type = float
    default: Any = None                 # value, callable(case) -> value, or None = required/optional
    required: bool = False
    low: float | None = None            # open bounds unless *_inclusive
    high: float | None = None
    low_inclusive: bool = False
    high_inclusive: bool = False
    choices: tuple = ()
    kinds: tuple = ("cone", "plate")    # case kinds the key belongs to
    why: str = ""                       # why the range is what it is (shown by clutchfe keys)
    # the range the equations accept (open bounds), used instead of the plausible one for limit
    # cases of the physics (a rigid body in a verification model): None = the same
    limit_range: tuple | None = None


def _w(c):
    return c["interface.outer_radius"] - c["interface.inner_radius"]


def _r1(c):
    return c["interface.inner_radius"]


def _r2(c):
    return c["interface.outer_radius"]


def _cone_height(c):
    """Axial length of the friction face of a cone."""
    return _w(c) / math.tan(math.radians(c["interface.semi_cone_angle"]))


def _r(x, nd=2):
    """``x`` rounded to ``nd`` decimals, or to 3 significant figures where that keeps more: a derived
    size is never rounded to 0 (a 0.004 mm edge size stays 0.004, not 0.0)."""
    x = float(x)
    if x == 0.0 or not math.isfinite(x):
        return x
    return round(x, max(nd, 2 - math.floor(math.log10(abs(x)))))


def _closed(low: float, high: float, why: str) -> dict:
    """A plausible range ``low ≤ value ≤ high`` and its reason, as Key arguments."""
    return dict(low=low, high=high, low_inclusive=True, high_inclusive=True, why=why)


# Plausible ranges (the reason goes with each key).  Lengths in mm: the smallest clutch parts are
# fractions of a millimetre (a wet lining, a thin separator), the largest clutches a few metres across.
RADIUS_RANGE = _closed(2.0, 2500.0, "from a 2 mm instrument clutch to a 5 m marine or mill clutch (common "
                       "practice); radii are in mm, so a value below 2 is often one typed in metres")
PART_RADIUS_RANGE = _closed(0.01, 3000.0, "a part radius within 3 m of the axis (the largest clutches, common "
                            "practice), at least 0.01 mm (below machining tolerance)")
THICKNESS_RANGE = _closed(0.2, 2000.0, "no clutch part is thinner than 0.2 mm (thin separator plates are ~1 mm, "
                          "common practice); a value below is often one typed in metres")
LENGTH_RANGE = _closed(0.01, 3000.0, "a length within 3 m (the largest clutches, common practice), at least "
                       "0.01 mm (below machining tolerance)")
BODY_MODULUS_RANGE = _closed(10000.0, 700000.0, "metals and fibre composites the bodies are made of: from ~10 GPa "
                             "(glass-fibre composite) over magnesium ~45, aluminium ~70, cast iron 90–170, steel "
                             "~210 to cemented carbide ~600 GPa (from memory); moduli are in MPa, so 210 means GPa")
BODY_POISSON_RANGE = _closed(0.05, 0.45, "metals and composites 0.1–0.4 (from memory)")


CONE = ("cone",)
PLATE = ("plate",)


def _material(what: str, modulus: float, poisson: float, kinds: tuple) -> dict:
    """Young's modulus and Poisson's ratio of one body: the same two keys in every body table."""
    return {"youngs_modulus": Key("MPa", what, default=modulus, kinds=kinds, limit_range=(0.0, None),
                                  **BODY_MODULUS_RANGE),
            "poissons_ratio": Key("", what, default=poisson, kinds=kinds, **BODY_POISSON_RANGE)}

SCHEMA: dict[str, dict[str, Key]] = {
    "": {
        "kind": Key("", "case kind: a cone clutch or a (single or multi) plate clutch", str,
                    required=True, choices=("cone", "plate")),
        "name": Key("", "case name, used for the results folder (default: the file name)", str),
        "description": Key("", "free text shown in reports", str, default=""),
    },
    "interface": {
        "inner_radius": Key("mm", "r1, inner radius of the friction surface", required=True, **RADIUS_RANGE),
        "outer_radius": Key("mm", "r2, outer radius of the friction surface", required=True, **RADIUS_RANGE),
        "semi_cone_angle": Key("deg", "alpha, angle between the friction face and the axis (a plate is 90)",
                               default=lambda c: 90.0 if c["kind"] == "plate" else None,
                               low=2.0, high=90.0, low_inclusive=True, high_inclusive=True,
                               why="a cone of less than 2° self-locks with any usable friction coefficient "
                                   "(tan 2° = 0.035 is below 0.04, the least friction coefficient allowed); a cone "
                                   "clutch is 2–80° (beyond, give it as a plate), a plate 90"),
        "friction_coefficient": Key("", "mu, dynamic friction coefficient of the lining on its mate",
                                    required=True, low=0.04, high=0.8, low_inclusive=True, high_inclusive=True,
                                    why="clutch linings run at 0.05–0.15 (wet) to 0.25–0.6 (dry organic, "
                                        "sintered, ceramic), from memory; below 0.04 no lining transmits torque "
                                        "reliably, above 0.8 none is rated"),
        "friction_surfaces": Key("", "number of sliding faces carrying torque (a plate pack: 2 per disc)",
                                 int, required=True, low=1, low_inclusive=True, high=40, high_inclusive=True,
                                 why="wet multi-plate packs have up to ~20 discs, 40 faces (common practice)"),
    },
    "load": {
        "axial_force": Key("N", "W, engagement (clamp) force along the axis", required=True, low=0.0,
                           high=1e8, high_inclusive=True,
                           why="any force that gives a mean face pressure W/(π(r2²−r1²)) of 0.001–20 MPa "
                               "(checked with the radii)"),
        "application": Key("", "how W reaches the pressed part: spread uniformly over its back face, "
                           "or on a ring (diaphragm or coil spring contact)", str, default="uniform",
                           choices=("uniform", "ring")),
        "ring_radius": Key("mm", "radius of the ring load (application = \"ring\"); must lie on the back face",
                           default=lambda c: _r((_r1(c) + _r2(c)) / 2) if c["load.application"] == "ring" else None,
                           **PART_RADIUS_RANGE),
    },
    "lining": {
        "thickness": Key("mm", "friction lining thickness",
                         default=lambda c: _r(0.04 * _r2(c)) if c["kind"] == "cone" else _r(0.02 * _r2(c)),
                         low=0.1, high=30.0, low_inclusive=True, high_inclusive=True,
                         why="wet paper linings 0.3–1 mm, sintered 0.5–3, moulded facings 3–8, thick cone "
                             "linings up to ~15 mm (from memory)"),
        "youngs_modulus": Key("MPa", "lining Young's modulus", default=LINING_E, low=1.0, high=150000.0,
                              limit_range=(0.0, None),
                              low_inclusive=True, high_inclusive=True,
                              why="from a few MPa (wet paper, compressed) over a few hundred (organic) to "
                                  "~100 GPa (sintered metal), from memory"),
        "poissons_ratio": Key("", "lining Poisson's ratio", default=LINING_NU, low=0.0, high=0.45,
                              low_inclusive=True, high_inclusive=True,
                              why="porous and fibrous linings 0–0.35 (from memory); towards 0.5 a material is "
                                  "rubber-like, not a lining"),
        "bonded_to": Key("", "the body carrying the lining: cone clutch \"cone\" (inner cone) or \"cup\"; "
                         "plate clutch \"disc\" (both disc faces) or \"plates\" (the faces of the plates)", str,
                         default=lambda c: "cone" if c["kind"] == "cone" else "disc",
                         choices=("cone", "cup", "disc", "plates")),
        "end_shape": Key("", "how the two ends of the lining are cut across its thickness (a modelling choice "
                         "that moves the pressure at the ends): \"normal_to_axis\" (end faces in planes normal "
                         "to the axis; on a cone a parallelogram section), \"normal_to_face\" (square to the "
                         "friction face, a rectangle) or \"chamfer\" (a 45° chamfer through the whole "
                         "thickness: the friction face still spans r1 … r2 and the bond runs on one lining "
                         "thickness past each end, a trapezoid; the carrier must reach that far). On a plate "
                         "the face is itself normal to the axis, so \"normal_to_axis\" and \"normal_to_face\" "
                         "are the same square end", str, default="normal_to_axis",
                         choices=("normal_to_axis", "normal_to_face", "chamfer")),
        "allowable_pressure": Key("MPa", "allowable contact pressure of the lining (manufacturer's data); "
                                  "optional, compared with the peak pressure", low=0.01, high=50.0,
                                  low_inclusive=True, high_inclusive=True,
                                  why="linings are rated 0.1–3.5 MPa, sintered up to ~10 (from memory)"),
    },
    "cone": {
        **_material("inner (male) cone material", STEEL_E, STEEL_NU, CONE),
        "rim_thickness": Key("mm", "conical rim under the lining, measured normal to the face",
                             default=lambda c: _r(0.1 * _r2(c)), **THICKNESS_RANGE, kinds=CONE),
        "web_thickness": Key("mm", "axial thickness of the web joining rim and hub (at the wide end)",
                             default=lambda c: _r(0.12 * _r2(c)), **THICKNESS_RANGE, kinds=CONE),
        "bore_radius": Key("mm", "shaft bore radius of the inner cone hub",
                           default=lambda c: _r(0.25 * _r1(c)), **PART_RADIUS_RANGE, kinds=CONE),
        "hub_outer_radius": Key("mm", "outer radius of the inner cone hub",
                                default=lambda c: _r(0.45 * _r1(c)), **PART_RADIUS_RANGE, kinds=CONE),
        "hub_length": Key("mm", "axial length of the inner cone hub (from the web's outer face)",
                          default=lambda c: _r(0.6 * _cone_height(c) + 0.12 * _r2(c)), **LENGTH_RANGE, kinds=CONE),
    },
    "cup": {
        **_material("outer cup material", CAST_IRON_E, CAST_IRON_NU, CONE),
        "wall_thickness": Key("mm", "conical wall of the cup, measured normal to the face",
                              default=lambda c: _r(0.12 * _r2(c)), **THICKNESS_RANGE, kinds=CONE),
        "face_overrun": Key("mm", "axial length the cup face runs on past the narrow end of the lining "
                            "(clearance to the cup's back web)",
                            default=lambda c: _r(0.05 * _r2(c)), **LENGTH_RANGE, kinds=CONE),
        "web_thickness": Key("mm", "axial thickness of the back web at the narrow end",
                             default=lambda c: _r(0.12 * _r2(c)), **THICKNESS_RANGE, kinds=CONE),
        "bore_radius": Key("mm", "shaft bore radius of the cup hub",
                           default=lambda c: _r(0.25 * _r1(c)), **PART_RADIUS_RANGE, kinds=CONE),
        "hub_outer_radius": Key("mm", "outer radius of the cup hub",
                                default=lambda c: _r(0.45 * _r1(c)), **PART_RADIUS_RANGE, kinds=CONE),
        "hub_length": Key("mm", "axial length of the cup hub (from the web's inner face)",
                          default=lambda c: _r(0.4 * _r1(c)), **LENGTH_RANGE, kinds=CONE),
    },
    "pressure_plate": {
        **_material("pressure plate material", CAST_IRON_E, CAST_IRON_NU, PLATE),
        "thickness": Key("mm", "axial thickness", default=lambda c: _r(0.12 * _r2(c)), **THICKNESS_RANGE, kinds=PLATE),
        "inner_radius": Key("mm", "inner radius", default=lambda c: _r(_r1(c) - 0.05 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
        "outer_radius": Key("mm", "outer radius", default=lambda c: _r(_r2(c) + 0.05 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
    },
    "disc": {
        **_material("friction disc core material", STEEL_E, STEEL_NU, PLATE),
        "core_thickness": Key("mm", "axial thickness of the steel core", default=lambda c: _r(0.025 * _r2(c)),
                              **THICKNESS_RANGE, kinds=PLATE),
        "core_inner_radius": Key("mm", "inner radius of the core (towards the splined hub)",
                                 default=lambda c: _r(0.5 * _r1(c)), **PART_RADIUS_RANGE, kinds=PLATE),
        "core_outer_radius": Key("mm", "outer radius of the core", default=lambda c: _r2(c), **PART_RADIUS_RANGE,
                                 kinds=PLATE),
    },
    "counter_plate": {
        **_material("counter plate (flywheel side, or the end plate of a pack)", CAST_IRON_E, CAST_IRON_NU,
                    PLATE),
        "thickness": Key("mm", "axial thickness", default=lambda c: _r(0.15 * _r2(c)), **THICKNESS_RANGE, kinds=PLATE),
        "inner_radius": Key("mm", "inner radius (bore)", default=lambda c: _r(0.3 * _r1(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
        "outer_radius": Key("mm", "outer radius", default=lambda c: _r(_r2(c) + 0.1 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
    },
    "separator_plate": {
        **_material("separator plates between the discs of a pack", STEEL_E, STEEL_NU, PLATE),
        "thickness": Key("mm", "axial thickness", default=lambda c: _r(0.025 * _r2(c)), **THICKNESS_RANGE, kinds=PLATE),
        "inner_radius": Key("mm", "inner radius", default=lambda c: _r(_r1(c) - 0.05 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
        "outer_radius": Key("mm", "outer radius (towards the splined drum)",
                            default=lambda c: _r(_r2(c) + 0.1 * _w(c)), **PART_RADIUS_RANGE, kinds=PLATE),
    },
    "support": {
        "type": Key("", "housing support of the fixed part (cup hub, or counter plate): \"rigid\", or "
                    "\"springs\" with the stiffnesses below", str, default="rigid", choices=("rigid", "springs")),
        "axial_stiffness": Key("N/mm", "total axial stiffness of the housing behind the fixed part "
                               "(type = \"springs\")", low=10.0, high=1e10,
                               low_inclusive=True, high_inclusive=True,
                               why="from a rubber-mounted seat (~1e3 N/mm) to a solid housing (~1e8 N/mm), "
                                   "common practice; stiffer is rigid (give type = \"rigid\")"),
        "radial_stiffness": Key("N/mm", "total radial stiffness of the seat in the bore (type = \"springs\")",
                                low=10.0, high=1e10,
                               low_inclusive=True, high_inclusive=True,
                               why="from a rubber-mounted seat (~1e3 N/mm) to a solid housing (~1e8 N/mm), "
                                   "common practice; stiffer is rigid (give type = \"rigid\")"),
    },
    "misalignment": {
        "cone_angle_mismatch": Key("deg", "cup semi-cone angle minus cone semi-cone angle; > 0 touches first "
                                   "at r1, < 0 at r2", default=0.0, low=-2.0, high=2.0, low_inclusive=True,
                                   high_inclusive=True, kinds=CONE,
                                   why="machining tolerances of cone angles are minutes of arc; 2° is a wrong "
                                       "part, not a mismatch (common practice)"),
        "coning": Key("mm", "initial axial out-of-flatness of the pressure plate face at r2 relative to r1; "
                      "> 0 touches first at r1", default=0.0, low=-1.0, high=1.0, low_inclusive=True,
                      high_inclusive=True, kinds=PLATE,
                      why="flatness tolerances are hundredths of a mm; it must also stay below the lining "
                          "thickness (checked)"),
        "axis_tilt": Key("deg", "tilt between the pressed part's axis and its mate's (solved with Fourier "
                         "harmonics and contact on the (r, θ) face)",
                         default=0.0, low=0.0, high=2.0, low_inclusive=True, high_inclusive=True,
                         why="shaft and bearing misalignments are minutes of arc; the harmonic solve is "
                             "verified to 2°"),
        "radial_offset": Key("mm", "offset between the axes of the two halves (solved with Fourier harmonics "
                             "and contact on the (r, θ) face)",
                             default=0.0, low=0.0, high=5.0, low_inclusive=True, high_inclusive=True,
                             why="axis offsets of machined fits are hundredths to tenths of a mm"),
        "guidance": Key("", "how the pressed part's tilt is held: \"held\" by its guidance (shaft, splines, "
                        "bearings; the tilting moment is reported) or \"self_aligning\" (free tilt, zero moment)",
                        str, default="held", choices=("held", "self_aligning")),
        "tilt_pivot_offset": Key("mm", "where on the axis the pressed part tilts about (with self_aligning: "
                                 "the centre it swivels about), as the axial distance from the middle of "
                                 "its friction face; > 0 towards the part's loaded back face, < 0 into the "
                                 "mate; 0 = the middle of the friction face. Allowed: within two outer "
                                 "radii (|value| ≤ 2 × interface.outer_radius); further away a tilt is "
                                 "mostly a radial offset", default=0.0, low=-6000.0, high=6000.0,
                                 low_inclusive=True, high_inclusive=True,
                                 why="within two outer radii of the face (checked with interface.outer_radius)"),
        "guided_at": Key("", "where the guidance holds the pressed part across the axis: \"load_ring\" "
                         "(where its axial load enters: the ring-load radius on its back face, or the "
                         "middle of the back face) or \"bore\" (the middle of its bore: a splined shaft "
                         "or a bearing seat)", str, default="load_ring", choices=("load_ring", "bore")),
    },
    "requirement": {
        "required_torque": Key("N·m", "torque the clutch must transmit (optional)", low=0.0,
                                 high=1e7, high_inclusive=True,
                                 why="up to the largest ship and mill clutches, ~10 MN·m (common practice)"),
        "service_factor": Key("", "factor on the required torque for shocks and duty (common practice 1.2–3)",
                              default=1.0, low=1.0, high=10.0, low_inclusive=True, high_inclusive=True,
                              why="service factors for clutches run 1.2–3 (common practice); beyond 10 the "
                                  "requirement itself is wrong"),
    },
    "mesh": {
        "interface_element_size": Key("mm", "element size along the friction face, mid-face",
                                      default=lambda c: _r(min(c["lining.thickness"],
                                                               _slant(c) / 30.0), 3), low=0.001, high=1000.0,
                                      low_inclusive=True, high_inclusive=True, why="a size in mm, at least 1 µm "
                                      "(no clutch feature needs finer); the elements it gives are estimated "
                                      "before meshing and bounded (docs/limits.md)"),
        "edge_element_size": Key("mm", "element size at the ends of the lining, where the pressure changes "
                                 "fastest", default=lambda c: _r(min(c["lining.thickness"] / 4.0,
                                                                     c["mesh.interface_element_size"] / 2.0), 4),
                                 low=0.001, high=1000.0,
                                      low_inclusive=True, high_inclusive=True, why="a size in mm, at least 1 µm "
                                      "(no clutch feature needs finer); the elements it gives are estimated "
                                      "before meshing and bounded (docs/limits.md)"),
        "element_size": Key("mm", "largest element size in the bodies (default: 4 × the face size, and at "
                            "least r2/40 so that a narrow face or a thin lining does not fill the bodies with "
                            "elements)",
                            default=lambda c: _r(max(4.0 * c["mesh.interface_element_size"], _r2(c) / 40.0), 3),
                            low=0.001, high=1000.0,
                                      low_inclusive=True, high_inclusive=True, why="a size in mm, at least 1 µm "
                                      "(no clutch feature needs finer); the elements it gives are estimated "
                                      "before meshing and bounded (docs/limits.md)"),
        "lining_layers": Key("", "elements through the lining thickness (4 by default, so that the mesh study's "
                             "two finer meshes at refinement ratio 1.5 have exactly 6 and 9)", int, default=4,
                             low=1, high=40, low_inclusive=True, high_inclusive=True,
                             why="1 is the least that models a layer; past 40 the element count, not the "
                                 "accuracy, grows (the mesh study says what the layers buy)"),
        "refinement": Key("", "refine the whole mesh by this factor: every element size divided by it, the lining "
                          "layers and the thin-part element counts multiplied by it (2 = twice as fine in every "
                          "direction, about 4 times the elements)", default=1.0, low=0.1, high=16.0,
                          low_inclusive=True, high_inclusive=True,
                          why="the element count grows with its square; the mesh budget refuses what would "
                              "not fit anyway"),
        "element_order": Key("", "1 = linear, 2 = quadratic triangles", int, default=2, choices=(1, 2)),
        "friction_face_nodes": Key("", "how the two sides of each friction face are meshed: \"matching\" (node "
                                   "for node, paired exactly) or \"independent\" (the mate's nodes 1.4 times "
                                   "as far apart, paired by a dual mortar projection; as imported drawings may "
                                   "need, docs/solver-notes.md)", str, default="matching",
                                   choices=("matching", "independent")),
        "angular_divisions": Key("", "angles of the contact grid around the axis for tilt and offset "
                                 "(harmonics 0 … half of it)", int, default=48, low=8, high=256,
                                 low_inclusive=True, high_inclusive=True,
                                 why="a tilt's pressure varies once round the axis; 8 angles resolve its first "
                                     "harmonics, 256 its sharpest contact edge (docs/verification.md)"),
    },
    "wear": {
        "wear_coefficient": Key("mm³/(N·m)", "Archard wear coefficient k of the lining (wear depth rate = "
                                "k p v); published values scatter widely, so wear results are relative",
                                default=2.0e-6, low=1e-10, high=1e-2, low_inclusive=True,
                                high_inclusive=True, why="published lining wear coefficients lie around "
                                "1e-7–1e-4 mm³/(N·m) (from memory); the range allows for their scatter"),
        "engagements": Key("", "number of engagements to simulate (with slip_speed and slip_time)", int,
                           low=1, low_inclusive=True, high=1e9, high_inclusive=True,
                           why="a clutch's whole life is up to ~1e7 engagements (common practice)"),
        "slip_speed": Key("rpm", "relative speed of the friction faces at the start of each engagement",
                          low=0.0, high=30000.0, high_inclusive=True,
                          why="up to the speeds of high-speed machinery, 30 000 rpm (common practice)"),
        "slip_time": Key("s", "slip duration of one engagement (speed falls linearly to zero)", low=0.0,
                         high=600.0, high_inclusive=True,
                         why="engagements slip for fractions of a second to ~1 min (slipping starts); 10 min "
                             "of slip burns any lining"),
        "target_wear_volume": Key("mm³", "or simply: wear until this volume is worn off the lining", low=0.0,
                                  high=1e10, high_inclusive=True,
                                  why="at most the lining's volume (the run stops at wear.max_wear_depth)"),
        "step_cap": Key("", "largest wear increment of a step, as a fraction of the current elastic approach "
                        "(the wear depth over which the present departure from uniform wear would wear off; "
                        "on a Winkler lining its compression); the steps are second order (BDF2): at 0.05 the "
                        "path is within 0.1 % of the exact Winkler path, and the error falls with the square "
                        "of the cap",
                        default=0.05, low=1e-3, high=1.0, low_inclusive=True, high_inclusive=True,
                        why="below 0.001 the steps buy no accuracy (the error at 0.05 is 0.1 %) and only cost "
                            "steps"),
        "steady_tolerance": Key("", "steady state (worn in): the rms departure of the pack's p·r (all faces' "
                                "pressures summed at each radius) from uniform wear, relative to that of uniform "
                                "pressure (1 new, 0 worn in), at or below this; it bounds the size of ξ (to within 2 % for "
                                "r1/r2 ≥ 0.5), so 0.001 puts the torque within 0.1 % of the gap between the "
                                "uniform-pressure and uniform-wear torques from its worn-in value",
                                default=1e-3, low=1e-6, high=0.5, low_inclusive=True,
                                why="below 1e-6 the wear path cannot tell it from the solver's own tolerance"),
        "max_wear_depth": Key("mm", "lining wear limit (default: 80 % of the lining thickness)",
                              default=lambda c: _r(0.8 * c["lining.thickness"], 4), low=0.0,
                              high=30.0, why="less than the lining thickness (checked with it)"),
        "max_steps": Key("", "most wear steps", int, default=400, low=1, low_inclusive=True, high=10000,
                         high_inclusive=True, why="a wear-in from new takes 50–300 steps at the default step cap; "
                         "10 000 bounds the run time"),
    },
    "verification": {
        "mesh_study": Key("", "solve on three meshes (refinement ratio below) and report observed order, "
                          "Richardson extrapolation and the grid convergence index", bool, default=True),
        "refinement_ratio": Key("", "refinement ratio between the three meshes of the mesh study: the run's mesh and "
                                "two finer ones with every size divided by the ratio and its square, every count "
                                "(lining layers included) multiplied: lining_layers times the ratio squared must be "
                                "whole for similar meshes, e.g. 4 layers at ratio 1.5 or 2", default=1.5,
                                low=1.3, high=3.0, low_inclusive=True, high_inclusive=True,
                                why="a grid-convergence study needs a ratio of at least 1.3 (Celik et al., J. "
                                    "Fluids Eng. 130, 2008); past 3 the finest mesh grows 81-fold"),
    },
}


def _slant(c):
    return _w(c) / math.sin(math.radians(c["interface.semi_cone_angle"]))


def table_applies(table: str, kind: str) -> bool:
    keys = SCHEMA[table].values()
    return any(kind in k.kinds for k in keys)


def describe_range(key: Key) -> str:
    if key.choices:
        return "one of " + ", ".join(repr(c) if isinstance(c, str) else str(c) for c in key.choices)
    unit = f" {key.unit}" if key.unit else ""
    if key.low is not None and key.high is None:
        return f"value {'≥' if key.low_inclusive else '>'} {key.low:g}{unit}"
    lo = "" if key.low is None else (f"{key.low:g} ≤ " if key.low_inclusive else f"{key.low:g} < ")
    hi = "" if key.high is None else (f" ≤ {key.high:g}" if key.high_inclusive else f" < {key.high:g}")
    if key.kind is bool:
        return "true or false"
    if not lo and not hi:
        return "any text" if key.kind is str else "any number"
    return f"{lo}value{hi}{unit}"


def reference_markdown() -> str:
    """The case-file reference as a Markdown table (used by the README and `clutchfe keys`)."""
    lines = ["| key | unit | allowed | default | meaning |", "|---|---|---|---|---|"]
    for table, keys in SCHEMA.items():
        for name, key in keys.items():
            full = f"{table}.{name}" if table else name
            if key.required:
                default = "required"
            elif isinstance(key.default, bool):
                default = str(key.default).lower()
            elif callable(key.default):
                default = "derived"
            elif key.default is None:
                default = "optional"
            else:
                default = repr(key.default) if isinstance(key.default, str) else f"{key.default:g}"
            scope = "" if key.kinds == ("cone", "plate") else f" ({key.kinds[0]} only)"
            why = f" Range: {key.why}." if key.why else ""
            lines.append(f"| `{full}` | {key.unit} | {describe_range(key)} | {default} | {key.meaning}{scope}.{why} |"
                         .replace("..", "."))
    return "\n".join(lines)


Default = Callable[[dict], Any]


MARKERS = ("<!-- case keys: start -->", "<!-- case keys: end -->")


def _update_readme(path="README.md") -> None:
    """Rewrite the key table of the README between its markers: ``python3 -m clutchfe.schema``."""
    write_between_markers(path, reference_markdown(), MARKERS)


if __name__ == "__main__":
    _update_readme()
