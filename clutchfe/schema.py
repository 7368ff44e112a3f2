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
# thermal conductivity W/(m·K), density kg/m³, specific heat J/(kg·K), expansion coefficient 1/K
THERMAL_KEYS = ("thermal_conductivity", "density", "specific_heat", "expansion_coefficient")
STEEL_THERMAL = (50.0, 7850.0, 460.0, 12e-6)        # carbon steel, common practice
CAST_IRON_THERMAL = (50.0, 7200.0, 500.0, 11e-6)    # grey cast iron, from memory (k 45–55 by grade)
LINING_THERMAL = (0.8, 2000.0, 1200.0, 20e-6)      # moulded organic facing, from memory (k 0.5–1, α 15–30e-6)
# yield strength (a cast iron's 0.1 % proof stress) and tensile strength, MPa; read by the speed analysis
STRENGTH_KEYS = ("yield_strength", "tensile_strength")
STEEL_STRENGTH = (355.0, 470.0)         # structural steel S355, EN 10025-2 minima for 3–100 mm (from memory)
# grey cast iron EN-GJL-250 (EN 1561: Rm ≥ 250 MPa; its 0.1 % proof stress ~165, from memory)
CAST_IRON_STRENGTH = (165.0, 250.0)
LINING_TENSILE = 30.0                   # moulded organic facing, from memory (20–40 MPa)


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
    # required whenever its table is given (a table that asks for an analysis, e.g. [engagement]);
    # a case without the table does not need it
    table_required: bool = False
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
THERMAL_UNITS = dict(zip(THERMAL_KEYS, ("W/(m·K)", "kg/m³", "J/(kg·K)", "1/K")))
THERMAL_MEANINGS = dict(zip(THERMAL_KEYS, ("thermal conductivity", "density", "specific heat capacity",
                                           "linear thermal expansion coefficient (12e-6 for steel)")))
BODY_THERMAL_RANGES = {
    "thermal_conductivity": _closed(0.1, 450.0, "from glass-fibre composites (~0.3 W/(m·K)) over stainless steel "
                                    "~15, carbon steel and cast iron ~50, aluminium 120–240 to copper ~400 (from "
                                    "memory)"),
    "density": _closed(1000.0, 16000.0, "from fibre composites (~1500 kg/m³) over magnesium 1740, aluminium 2700, "
                       "steel 7850 to cemented carbide ~15 000 (from memory); a value near 7.85 is one typed in "
                       "g/cm³"),
    "specific_heat": _closed(100.0, 2000.0, "from cemented carbide (~200 J/(kg·K)) over steel ~460 and aluminium "
                             "~900 to magnesium and composites ~1000–1300 (from memory)"),
    "expansion_coefficient": _closed(0.5e-6, 40e-6, "from Invar and carbon-fibre composites (~1e-6 /K) over cast "
                                     "iron ~11e-6, steel ~12e-6, aluminium ~23e-6 to magnesium ~26e-6 (from "
                                     "memory); 12 typed for steel is 12e-6 /K in µm/(m·K)"),
}
LINING_THERMAL_RANGES = {
    "thermal_conductivity": _closed(0.05, 150.0, "from wet paper (~0.1 W/(m·K)) over moulded organic facings "
                                    "0.5–1 to sintered bronze (~30–60) and carbon–carbon (up to ~100), from memory"),
    "density": _closed(300.0, 12000.0, "from porous wet paper (~500 kg/m³) over organic facings ~2000 to sintered "
                       "bronze and iron (5000–9000), from memory"),
    "specific_heat": _closed(200.0, 2500.0, "from sintered metal (~400–500 J/(kg·K)) over organic facings "
                             "1000–1300 to wet paper (~1500), from memory"),
    "expansion_coefficient": _closed(0.5e-6, 80e-6, "from carbon–carbon (~1e-6 /K) over sintered metal "
                                     "(12–18e-6) to organic facings (15–30e-6, more through their thickness), "
                                     "from memory"),
}

BODY_STRENGTH_RANGES = {
    "yield_strength": _closed(20.0, 2500.0, "from cast magnesium and aluminium alloys and grey iron's 0.1 % proof "
                              "stress (~50–200 MPa) over structural steels 235–460 and quenched-and-tempered "
                              "steels 600–1000 to maraging steel ~2000 (from memory); strengths are in MPa, so "
                              "0.355 means GPa"),
    "tensile_strength": _closed(50.0, 3000.0, "from grey cast iron EN-GJL-150 (150 MPa) and cast light alloys over "
                                "structural steels 360–680 and quenched-and-tempered steels 800–1200 to maraging "
                                "steel ~2100 (from memory); strengths are in MPa, so 0.51 means GPa"),
}
STRENGTH_UNITS = {"yield_strength": "MPa", "tensile_strength": "MPa"}
STRENGTH_MEANINGS = {"yield_strength": "yield strength (for grey cast iron its 0.1 % proof stress), compared with "
                                       "the von Mises stress at speed",
                     "tensile_strength": "tensile strength, with the mean hoop stress the burst speed"}
LINING_TENSILE_RANGE = _closed(1.0, 500.0, "from wet paper (a few MPa) over moulded organic facings 20–40 to "
                               "sintered bronze and iron (~100–300) and carbon–carbon (up to ~300), from memory")
FILM_RANGE = _closed(0.0, 20000.0, "0 = adiabatic (a bound); still air 2–25, forced and rotating air 25–250, oil "
                     "spray and jets 500–20 000 W/(m²·K): the textbook ranges of convection coefficients, from "
                     "memory")
# tables whose presence asks for an analysis: their keys are defaulted (and their table_required keys
# required) only when the case gives the table; without it the case's attribute is None
ANALYSIS_TABLES = ("engagement", "speed", "splines", "lining_curve", "cushion")

CONE = ("cone",)
PLATE = ("plate",)


def _thermal(what: str, defaults: tuple, kinds: tuple, ranges: dict) -> dict:
    """The four thermal keys of one material (only the hot engagement, [engagement], uses them)."""
    return {key: Key(THERMAL_UNITS[key], f"{what}: {THERMAL_MEANINGS[key]} (used by the hot engagement"
                     f"{SPEED_USES_DENSITY if key == 'density' else ''}; the default is the default material's: "
                     "with your own youngs_modulus or poissons_ratio and an [engagement] table, give all four"
                     f"{SPEED_GIVES_DENSITY if key == 'density' else ''})",
                     default=value, kinds=kinds, **ranges[key])
            for key, value in zip(THERMAL_KEYS, defaults)}


# the speed analysis's centrifugal load is ρ ω² r: density is one of its material keys too
SPEED_USES_DENSITY = " and by the speed analysis's centrifugal load"
SPEED_GIVES_DENSITY = ", with a [speed] table density and the strengths"


def _strength(what: str, key: str, default: float, kinds: tuple, rng: dict,
              keys: str = "density, yield_strength and tensile_strength") -> Key:
    """One strength key of one material (only the speed analysis, [speed], uses them)."""
    return Key(STRENGTH_UNITS[key], f"{what}: {STRENGTH_MEANINGS[key]} (used by the speed analysis; the default is "
               "the default material's: with your own youngs_modulus or poissons_ratio and a [speed] table, give "
               f"{keys})", default=default, kinds=kinds, **rng)


def _material(what: str, modulus: float, poisson: float, kinds: tuple, thermal: tuple, strength: tuple) -> dict:
    """Young's modulus, Poisson's ratio, the thermal properties and the strengths of one body: the same keys
    in every body table."""
    return {"youngs_modulus": Key("MPa", what, default=modulus, kinds=kinds, limit_range=(0.0, None),
                                  **BODY_MODULUS_RANGE),
            "poissons_ratio": Key("", what, default=poisson, kinds=kinds, **BODY_POISSON_RANGE),
            **_thermal(what, thermal, kinds, BODY_THERMAL_RANGES),
            **{key: _strength(what, key, value, kinds, BODY_STRENGTH_RANGES[key])
               for key, value in zip(STRENGTH_KEYS, strength)}}

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
        **_thermal("lining", LINING_THERMAL, ("cone", "plate"), LINING_THERMAL_RANGES),
        "tensile_strength": _strength("lining", "tensile_strength", LINING_TENSILE, ("cone", "plate"),
                                      LINING_TENSILE_RANGE, keys="density and tensile_strength"),
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
        **_material("inner (male) cone material", STEEL_E, STEEL_NU, CONE, STEEL_THERMAL, STEEL_STRENGTH),
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
        **_material("outer cup material", CAST_IRON_E, CAST_IRON_NU, CONE, CAST_IRON_THERMAL, CAST_IRON_STRENGTH),
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
        **_material("pressure plate material", CAST_IRON_E, CAST_IRON_NU, PLATE, CAST_IRON_THERMAL,
                    CAST_IRON_STRENGTH),
        "thickness": Key("mm", "axial thickness", default=lambda c: _r(0.12 * _r2(c)), **THICKNESS_RANGE, kinds=PLATE),
        "inner_radius": Key("mm", "inner radius", default=lambda c: _r(_r1(c) - 0.05 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
        "outer_radius": Key("mm", "outer radius", default=lambda c: _r(_r2(c) + 0.05 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
    },
    "disc": {
        **_material("friction disc core material", STEEL_E, STEEL_NU, PLATE, STEEL_THERMAL, STEEL_STRENGTH),
        "core_thickness": Key("mm", "axial thickness of the steel core", default=lambda c: _r(0.025 * _r2(c)),
                              **THICKNESS_RANGE, kinds=PLATE),
        "core_inner_radius": Key("mm", "inner radius of the core (towards the splined hub)",
                                 default=lambda c: _r(0.5 * _r1(c)), **PART_RADIUS_RANGE, kinds=PLATE),
        "core_outer_radius": Key("mm", "outer radius of the core", default=lambda c: _r2(c), **PART_RADIUS_RANGE,
                                 kinds=PLATE),
    },
    "counter_plate": {
        **_material("counter plate (flywheel side, or the end plate of a pack)", CAST_IRON_E, CAST_IRON_NU,
                    PLATE, CAST_IRON_THERMAL, CAST_IRON_STRENGTH),
        "thickness": Key("mm", "axial thickness", default=lambda c: _r(0.15 * _r2(c)), **THICKNESS_RANGE, kinds=PLATE),
        "inner_radius": Key("mm", "inner radius (bore)", default=lambda c: _r(0.3 * _r1(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
        "outer_radius": Key("mm", "outer radius", default=lambda c: _r(_r2(c) + 0.1 * _w(c)), **PART_RADIUS_RANGE,
                            kinds=PLATE),
    },
    "separator_plate": {
        **_material("separator plates between the discs of a pack", STEEL_E, STEEL_NU, PLATE, STEEL_THERMAL,
                    STEEL_STRENGTH),
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
    "cooling": {
        # used only by the hot engagement; also the stress-free temperature of the section
        "ambient_temperature": Key("°C", "temperature of the air or oil around the clutch, and the stress-free "
                                   "temperature of the section (used by the hot engagement)", default=20.0,
                                   **_closed(-60.0, 200.0, "from an arctic cold start (−40 °C) to hot "
                                             "transmission oil (~150 °C), common practice")),
        "film_coefficient": Key("W/(m²·K)", "heat transfer coefficient of the free faces to the ambient (default: "
                                "a dry clutch in a ventilated housing, about 30, from memory); 0 = adiabatic",
                                default=30.0, **FILM_RANGE),
        "film_coefficient_rims": Key("W/(m²·K)", "the same on the free faces whose outward normal is mostly +r "
                                     "(outer rims; default: film_coefficient)",
                                     default=lambda c: c["cooling.film_coefficient"], **FILM_RANGE),
        "film_coefficient_bores": Key("W/(m²·K)", "the same on the free faces whose outward normal is mostly −r "
                                      "(bores; default: film_coefficient)",
                                      default=lambda c: c["cooling.film_coefficient"], **FILM_RANGE),
        "film_coefficient_sides": Key("W/(m²·K)", "the same on the free faces whose outward normal is mostly ±z "
                                      "(sides; default: film_coefficient)",
                                      default=lambda c: c["cooling.film_coefficient"], **FILM_RANGE),
    },
    "engagement": {
        # the table asks for the hot engagement: slip heat q = μ p v at the friction faces, transient heat
        # conduction in the section, the thermal distortion moving the pressure, the hot torque
        "slip_speed": Key("rpm", "relative speed of the friction faces at the start of slip (the table asks for "
                          "the hot engagement: slip heat, heat conduction, thermal distortion, hot torque)",
                          table_required=True, low=0.0, high=30000.0, high_inclusive=True,
                          why="up to the speeds of high-speed machinery, 30 000 rpm (common practice); the rim "
                              "speed and the frictional power per face area are checked with the radii"),
        "slip_time": Key("s", "slip duration of each engagement with speed_law \"constant\" or \"linear\"; with "
                         "\"inertia\" the longest slip allowed", table_required=True, low=0.0, high=600.0,
                         high_inclusive=True,
                         why="engagements slip for fractions of a second to ~1 min (slipping starts); 10 min of "
                             "slip burns any lining"),
        "speed_law": Key("", "how the slip speed falls during an engagement: \"constant\" (a drag slip at "
                         "slip_speed), \"linear\" (to zero at slip_time) or \"inertia\" (the friction torque "
                         "minus drag_torque brings driven_inertia up to speed: lock-up when the slip ends)", str,
                         default="linear", choices=("constant", "linear", "inertia")),
        "engagements": Key("", "engagements in a row (each slip_time long, dwell_time apart)", int, default=1,
                           low=1, high=1000, low_inclusive=True, high_inclusive=True,
                           why="a duty of repeated engagements (hill starts, a shift sequence) is tens; past "
                               "1000 the run time grows, not the insight (common practice)"),
        "dwell_time": Key("s", "time between engagements, open and cooling only", default=0.0, low=0.0,
                          high=86400.0, low_inclusive=True, high_inclusive=True,
                          why="seconds to minutes in service; in a day any part is back at ambient (common "
                              "practice)"),
        "cool_down_time": Key("s", "cooling time after the last engagement", default=0.0, low=0.0, high=86400.0,
                              low_inclusive=True, high_inclusive=True,
                              why="in a day any part is back at ambient (common practice)"),
        "driven_inertia": Key("kg·m²", "moment of inertia the clutch brings up to speed (required with "
                              "speed_law = \"inertia\", not allowed otherwise)", low=1e-6, high=1e7,
                              low_inclusive=True, high_inclusive=True,
                              why="from a small instrument drive (~1e-5 kg·m²) to a mill or a ship's shaft line "
                                  "(~1e5–1e6 kg·m²), from memory"),
        "drag_torque": Key("N·m", "torque that resists the driven side while slipping (only with speed_law = "
                           "\"inertia\")", default=0.0, low=0.0, high=1e7, low_inclusive=True,
                           high_inclusive=True,
                           why="up to the largest ship and mill clutches, ~10 MN·m (common practice); it must "
                               "stay below the clutch's torque (checked)"),
        "steps_per_engagement": Key("", "time steps of each engagement's slip", int, default=100, low=10,
                                    high=10000, low_inclusive=True, high_inclusive=True,
                                    why="below 10 steps the slip heat's history is not resolved (the run's "
                                        "energy balance says what the steps buy); the total is bounded (checked)"),
        "dwell_steps": Key("", "time steps of each dwell and of the cool-down", int, default=20, low=1,
                           high=10000, low_inclusive=True, high_inclusive=True,
                           why="cooling is smooth: a few steps follow it; the total is bounded (checked)"),
        "heat_partition": Key("", "optional hand-method comparison: the fraction of the friction heat put into "
                              "the lining's metal mate (the body the lining rubs on), the rest into the lining "
                              "side, with no heat crossing the interface; omitted: the heat is shared by "
                              "conduction across the interface (the physics)", **_closed(
                                  0.0, 1.0, "a fraction of the heat (0: all into the lining side, 1: all into "
                                            "the mate)")),
        "contact_conductance": Key("W/(m²·K)", "thermal conductance of a closed friction interface (optional; "
                                   "omitted: one temperature across a closed interface)",
                                   **_closed(100.0, 1e8, "pressed metal and lining faces conduct ~1e3–1e5 "
                                             "W/(m²·K) (from memory); past 1e8 the interface is one "
                                             "temperature (leave the key out)")),
        "coupling_tolerance": Key("", "the staggered pressure–temperature iteration of a time step stops when "
                                  "max|Δp| / max p is at or below this", default=1e-6,
                                  **_closed(1e-12, 1e-2, "below 1e-12 round-off; above 1 % the hot pressure is "
                                            "not converged")),
        "max_coupling_iterations": Key("", "most pressure–temperature iterations of a time step", int, default=30,
                                       **_closed(1, 1000, "a step converges in a few iterations; 1000 bounds the "
                                                 "run time")),
        "snapshots": Key("", "frames of the VTU time series of temperature and displacement", int, default=20,
                         **_closed(1, 10000, "at least one frame; more than the time steps are not written")),
        "pressure_curves": Key("", "instants of the last engagement drawn in the hot p(r) picture", int, default=4,
                               **_closed(1, 20, "past 20 curves the picture cannot be read")),
        "initial_temperature": Key("°C", "temperature of the whole section at the start (default: "
                                   "cooling.ambient_temperature)", default=lambda c: c["cooling.ambient_temperature"],
                                   **_closed(-60.0, 400.0, "from an arctic cold start (−40 °C) to a clutch still "
                                             "hot from earlier duty (organic facings fade past ~250–300 °C, from "
                                             "memory); it is checked against the ambient")),
    },
    "speed": {
        # the table asks for the speed analysis: the centrifugal body force ρ ω² r in every body, the contact
        # pressure and the stresses at speed against the strengths, a burst-speed margin
        "running_speed": Key("rpm", "speed the whole clutch turns at, engaged (the table asks for the speed "
                             "analysis: centrifugal load, contact pressure and stresses at speed, burst margin)",
                             table_required=True, low=0.0, high=30000.0, high_inclusive=True,
                             why="up to the speeds of high-speed machinery, 30 000 rpm (common practice); the rim "
                                 "speed is checked with the radii"),
    },
    "splines": {
        # the table asks for the spline drag of a plate pack: friction on the splines the discs, separators
        # and pressure plate slide on holds back part of the clamp force from each further surface
        "friction_coefficient": Key("", "friction coefficient of the splines the plates slide on (the table asks "
                                    "for the spline drag of the pack: load and torque per surface with the plates' "
                                    "spline friction; 0 gives the pack without it)", table_required=True,
                                    kinds=("plate",), **_closed(0.0, 0.5, "lubricated steel splines about "
                                                                "0.05–0.15, dry or fretted ones up to ~0.3 (from "
                                                                "memory); above 0.5 a spline seizes")),
        **{f"{plate}_friction_coefficient": Key(
            "", f"spline friction coefficient of the {what} (default: splines.friction_coefficient; 0: it slides "
                "freely or is not on splines, e.g. a pressure plate on drive straps)", kinds=("plate",),
            default=lambda c: c["splines.friction_coefficient"],
            **_closed(0.0, 0.5, "as splines.friction_coefficient"))
           for plate, what in (("disc", "friction discs"), ("separator", "separator plates"),
                               ("pressure_plate", "pressure plate"))},
        **{f"{plate}_spline": Key(
            "", f"where the {what} carry their splines: \"inner\" (teeth in the bore, on a hub) or \"outer\" "
                "(teeth on the rim, in a basket or drum)", str, default=side, choices=("inner", "outer"),
            kinds=("plate",))
           for plate, what, side in (("disc", "friction discs", "inner"), ("separator", "separator plates", "outer"),
                                     ("pressure_plate", "pressure plate", "outer"))},
        **{f"{plate}_pitch_radius": Key(
            "mm", f"pitch radius of the {what}' splines (default: the radius of the edge they are cut on, the "
                  "bore or the rim)", kinds=("plate",),
            default=lambda c, t=table, i=inner, o=outer, pl=plate: c[f"{t}.{i if c[f'splines.{pl}_spline'] == 'inner' else o}"],
            low=0.5, high=5000.0, low_inclusive=True, high_inclusive=True,
            why="inside the sizes of clutch parts (0.5 mm … 5 m); checked against the edge it is cut on")
           for plate, what, table, inner, outer in (
               ("disc", "friction discs", "disc", "core_inner_radius", "core_outer_radius"),
               ("separator", "separator plates", "separator_plate", "inner_radius", "outer_radius"),
               ("pressure_plate", "pressure plate", "pressure_plate", "inner_radius", "outer_radius"))},
    },
    # the tables of the measured compression curves: their point lists (deflection, pressure or force) are read
    # by clutchfe.curve_case (lists, not single values); the scale here lets a study vary the curve as a whole
    "lining_curve": {
        "deflection_scale": Key("", "factor on every deflection of the lining's compression curve (the table "
                                "gives the lining by its measured curve: lists deflection (mm) and pressure "
                                "(MPa); the scale lets a study vary the curve within its tolerance)", default=1.0,
                                **_closed(0.5, 2.0, "compression curves of one facing grade scatter by about "
                                          "±20–30 % between batches (from memory); outside half to twice it is "
                                          "another material")),
        "pressure_scale": Key("", "factor on every pressure of the lining's compression curve (with "
                              "deflection_scale a study varies the curve along both axes)", default=1.0,
                              **_closed(0.5, 2.0, "as deflection_scale")),
    },
    "cushion": {
        "deflection_scale": Key("", "factor on every deflection of the cushion's force–deflection curve (the "
                                "table gives the cushion springs between the two facings of each disc: lists "
                                "deflection (mm) and force (N))", default=1.0, kinds=("plate",),
                                **_closed(0.5, 2.0, "cushion springs of one part number scatter by about ±20 % "
                                          "in travel (from memory); outside half to twice it is another part")),
        "force_scale": Key("", "factor on every force of the cushion's curve (with deflection_scale a study varies "
                           "the curve along both axes)", default=1.0, kinds=("plate",),
                           **_closed(0.5, 2.0, "as deflection_scale")),
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
            elif key.table_required:
                default = f"required with [{table}]"
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
