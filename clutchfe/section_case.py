"""The ``[section_file]`` table of a case: the user's own drawing of the (r, z) half-section.

A case names the file, its units and axis, which outline is which region of which body, and the
curves later stages need, in plain TOML::

    [section_file]
    path = "sections/cone_cup.dxf"        # relative to the case file
    units = "mm"                          # what one drawing unit is: "mm", "m" or "inch"
    r_along = "x"                         # the drawing coordinate r grows along ("-x": the other way)
    z_along = "y"
    axis_at = 0.0                         # drawing coordinate of the axis along r_along (drawing units)

    [section_file.bodies]
    cone = { role = "pressed", label = "inner cone" }
    cup = { role = "supported" }

    [section_file.regions.cone]
    body = "cone"
    layer = "CONE"
    youngs_modulus = 210000.0
    poissons_ratio = 0.3

    [section_file.regions.cone_lining]
    body = "cone"
    layer = "LINING"
    lining = true                         # material: the [lining] table

    [section_file.friction.s1]
    body_a = "cone"
    body_b = "cup"
    layer = "FRICTION"

    [section_file.load]
    layer = "LOAD"

Every curve choice is exactly one of ``layer``, ``named``, ``curve_index``, ``box`` or ``through``
(a friction face's mate, when it is chosen apart, by the same keys with ``mate_`` in front).  This
module turns the table into :class:`geometry.section_spec.SectionFileSpec` plain data and reports
each problem as the other tables do: the key as the file spells it, the value, what is allowed.
Nothing is read from the drawing here: that is the geometry stage's (:mod:`geometry.case_section`).
"""
from __future__ import annotations

import hashlib
import math
from pathlib import Path
from typing import Any

from .geometry.section_spec import (ROLES, UNITS, Axis, BodySpec, FaceSpec, FrictionSpec, RegionSpec, Select,
                                    SectionFileSpec, spec_problems)
from .schema import (BODY_MODULUS_RANGE, BODY_POISSON_RANGE, BODY_STRENGTH_RANGES, BODY_THERMAL_RANGES,
                     STRENGTH_KEYS, STRENGTH_UNITS, THERMAL_KEYS, THERMAL_UNITS)
from .toml_input import key_text, shown

TABLE = "section_file"
# the parametric tables that a drawing replaces: their shapes and materials are in the file
DRAWN_TABLES = ("cone", "cup", "pressure_plate", "disc", "counter_plate", "separator_plate")
DRAWN_KEYS = ("lining.thickness", "lining.bonded_to", "lining.end_shape")
MAX_FILE_BYTES = 64 * 2**20     # a section drawing is kilobytes; a larger file is not a section

TOP_KEYS = {
    "path": "the drawing (.dxf, .step/.stp, .iges/.igs, .brep/.brp), relative to the case file",
    "units": "what one drawing unit is: " + ", ".join(map(repr, UNITS)),
    "r_along": "the drawing coordinate r grows along: 'x' or 'y' ('z' too for STEP/IGES/BREP), '-x' … the other way",
    "z_along": "the drawing coordinate z grows along",
    "axis_at": "drawing coordinate of the axis (r = 0) along r_along, in drawing units",
    "z_zero_at": "drawing coordinate of z = 0 along z_along, in drawing units",
    "tolerance": "mm: ends this close join, points merge, friction faces must coincide",
    "chord_tolerance": "mm: the largest distance between a drawn curve and its polygon",
    "pick_distance": "mm: how near a 'through' point must be to its curve",
    "bodies": "table: one entry per body, { role = 'supported' | 'pressed' | 'floating', label = … }",
    "regions": "table: one sub-table per outline (body, layer or label/index/inside, material or lining = true)",
    "friction": "table: one sub-table per friction face (body_a, body_b and the curve choice)",
    "load": "table: the face of the pressed body that takes the axial force (a curve choice)",
    "axial_support": "table: the face of the supported body held axially by the housing (a curve choice)",
    "radial_support": "table: the face of the supported body held radially (a curve choice)",
    "faces": "table: further named faces (free faces), one sub-table each (a curve choice)",
}
SELECT_KEYS = ("layer", "named", "curve_index", "box", "through")
REGION_KEYS = ("body", "layer", "label", "index", "inside", "lining", "youngs_modulus", "poissons_ratio",
               *THERMAL_KEYS, *STRENGTH_KEYS)
FRICTION_KEYS = ("body_a", "body_b", "lining_body", *SELECT_KEYS, *(f"mate_{k}" for k in SELECT_KEYS))
FACE_KEYS = (*SELECT_KEYS, "body", "face_name")
DEFAULT_FACE_NAMES = {"load": "load_face", "axial_support": "axial_support_face",
                      "radial_support": "radial_support_face"}
TOLERANCES = {"tolerance": (1e-3, 1e-5, 1.0), "chord_tolerance": (1e-2, 1e-4, 1.0), "pick_distance": (0.1, 1e-3, 50.0)}


def _entries(read, where: str, value: Any) -> dict:
    """A table of named entries (bodies, regions, friction faces, faces): any names, each a table."""
    if not isinstance(value, dict):
        read.problems.append(f"{where} = {shown(value)}: must be a table of named entries")
        return {}
    return value


class _Reader:
    """Typed reads of one table's keys; each bad value becomes one problem naming the key."""

    def __init__(self, problems: list[str]):
        self.problems = problems

    def table(self, where: str, value: Any, allowed: tuple) -> dict:
        if not isinstance(value, dict):
            self.problems.append(f"{where} = {shown(value)}: must be a table; allowed keys: {', '.join(allowed)}")
            return {}
        for key in value:
            if key not in allowed:
                self.problems.append(f"{where}.{key_text(key)}: unknown key; allowed in [{where}]: {', '.join(allowed)}")
        return value

    def text(self, where: str, value: Any, choices: tuple = ()) -> str | None:
        if not isinstance(value, str) or not value.strip() or (choices and value not in choices):
            allowed = "one of " + ", ".join(map(repr, choices)) if choices else "a non-empty text"
            self.problems.append(f"{where} = {shown(value)}: allowed: {allowed}")
            return None
        return value

    def number(self, where: str, value: Any, low: float, high: float, unit: str = "", why: str = "") -> float | None:
        ok = isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)
        if not ok or not (low <= value <= high):
            unit_text = f" {unit}" if unit else ""
            reason = f" ({why})" if why else ""
            self.problems.append(f"{where} = {shown(value)}: allowed: {low:g} ≤ value ≤ {high:g}{unit_text}{reason}")
            return None
        return float(value)

    def point(self, where: str, value: Any, size: int) -> tuple | None:
        ok = (isinstance(value, list) and len(value) == size
              and all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) for v in value))
        if not ok:
            shape = "[r, z]" if size == 2 else "[r_min, z_min, r_max, z_max]"
            self.problems.append(f"{where} = {shown(value)}: allowed: {size} numbers {shape} in mm (section coordinates)")
            return None
        return tuple(float(v) for v in value)


def _select(read: _Reader, where: str, entry: dict, prefix: str = "", body: str | None = None) -> Select | None:
    given = [k for k in SELECT_KEYS if f"{prefix}{k}" in entry]
    if len(given) != 1:
        choices = ", ".join(prefix + k for k in SELECT_KEYS)
        what = "no curve chosen" if not given else "both " + " and ".join(prefix + k for k in given)
        read.problems.append(f"{where}: {what}; choose the curves by exactly one of {choices}")
        return None
    key = given[0]
    value = entry[prefix + key]
    at = f"{where}.{prefix}{key}"
    if key in ("layer", "named"):
        value = read.text(at, value)
        return None if value is None else Select(layer=value, body=body) if key == "layer" else Select(name=value, body=body)
    if key == "curve_index":
        if not isinstance(value, int) or isinstance(value, bool) or not 1 <= value <= 10**6:
            read.problems.append(f"{at} = {shown(value)}: allowed: a whole number 1 … 1000000 (the curve's number "
                                 f"in the STEP/IGES/BREP file)")
            return None
        return Select(index=value, body=body)
    point = read.point(at, value, 4 if key == "box" else 2)
    if point is None:
        return None
    return Select(box=point, body=body) if key == "box" else Select(through=point, body=body)


def _region(read: _Reader, name: str, entry: dict, lining_layers: int, lining_material, lining_thermal: dict,
            engagement: bool, speed: bool = False, lining_tensile: float | None = None) -> RegionSpec | None:
    where = f"{TABLE}.regions.{name}"
    entry = read.table(where, entry, REGION_KEYS)
    body = read.text(f"{where}.body", entry.get("body"))
    is_lining = entry.get("lining", False)
    if not isinstance(is_lining, bool):
        read.problems.append(f"{where}.lining = {shown(is_lining)}: allowed: true or false")
        is_lining = False
    properties = {}
    if is_lining:
        properties = dict(lining_thermal, tensile_strength=lining_tensile)
        for key in ("youngs_modulus", "poissons_ratio", *THERMAL_KEYS, *STRENGTH_KEYS):
            if key in entry:
                read.problems.append(f"{where}.{key} = {shown(entry[key])}: a lining region takes its material from "
                                     f"the [lining] table (lining.{key}); remove it here")
        modulus, poisson = lining_material
    else:
        modulus = poisson = None
        for key, rng, unit in (("youngs_modulus", BODY_MODULUS_RANGE, "MPa"), ("poissons_ratio", BODY_POISSON_RANGE, "")):
            if key not in entry:
                read.problems.append(f"{where}.{key}: missing; required for a region that is not a lining "
                                     f"({rng['low']:g} ≤ value ≤ {rng['high']:g}{' ' + unit if unit else ''})")
                continue
            value = read.number(f"{where}.{key}", entry[key], rng["low"], rng["high"], unit, rng["why"])
            modulus, poisson = (value, poisson) if key == "youngs_modulus" else (modulus, value)
        # a drawn region's material is always the user's own: the hot engagement needs its heat data, the
        # speed analysis its density and strengths (with both tables the case is refused, density reported once)
        properties = _given_numbers(read, where, entry, BODY_THERMAL_RANGES, THERMAL_UNITS,
                                 "[engagement]" if engagement else "", "thermal properties")
        if speed and not engagement and "density" not in entry:
            _given_numbers(read, where, entry, {"density": BODY_THERMAL_RANGES["density"]}, THERMAL_UNITS,
                           "[speed]", "density")
        properties.update(_strengths(read, where, entry, speed and not engagement))
    choice = {}
    for key in ("layer", "label"):
        if key in entry:
            choice[key] = read.text(f"{where}.{key}", entry[key])
    if "index" in entry:
        value = entry["index"]
        if not isinstance(value, int) or isinstance(value, bool) or not 1 <= value <= 10**6:
            read.problems.append(f"{where}.index = {shown(value)}: allowed: a whole number 1 … 1000000 (the face's "
                                 f"number in the STEP/IGES/BREP file)")
        else:
            choice["index"] = value
    if "inside" in entry:
        choice["inside"] = read.point(f"{where}.inside", entry["inside"], 2)
    if not any(k in entry for k in ("layer", "label", "index", "inside")):
        read.problems.append(f"{where}: no outline chosen; give layer (DXF), or label, index or inside (STEP/IGES/BREP)")
        return None
    if None in (body, modulus, poisson) or None in choice.values():
        return None
    return RegionSpec(name, body, modulus, poisson, lining_layers=lining_layers if is_lining else 0, **choice,
                      **{k: v for k, v in properties.items() if v is not None})


def _given_numbers(read: _Reader, where: str, entry: dict, ranges: dict, units: dict, needed_with: str,
                   what: str) -> dict:
    """The keys of ``ranges`` a drawn region gives, each read against its range; with ``needed_with`` (the
    analysis table that reads them) a missing one is a problem naming it."""
    out = {}
    for key, rng in ranges.items():
        if key in entry:
            out[key] = read.number(f"{where}.{key}", entry[key], rng["low"], rng["high"], units[key], rng["why"])
        elif needed_with:
            read.problems.append(f"{where}.{key}: missing; the region's material was given (youngs_modulus), so "
                                 f"with {needed_with} its {what} must be given too ({rng['low']:g} ≤ value ≤ "
                                 f"{rng['high']:g} {units[key]})")
    return out


def _strengths(read: _Reader, where: str, entry: dict, speed: bool) -> dict:
    """A drawn (non-lining) region's yield and tensile strengths, required with [speed] (its material is the
    user's own: no default material's strength applies), and tensile ≥ yield."""
    out = _given_numbers(read, where, entry, BODY_STRENGTH_RANGES, STRENGTH_UNITS, "[speed]" if speed else "",
                         "strengths")
    low, high = out.get("yield_strength"), out.get("tensile_strength")
    if low is not None and high is not None and high < low:
        read.problems.append(f"{where}.tensile_strength = {high:g}: below {where}.yield_strength = {low:g} MPa; "
                             f"allowed: tensile_strength ≥ yield_strength ({low:g} MPa)")
    return out


def _face(read: _Reader, where: str, name: str, entry: Any) -> FaceSpec | None:
    entry = read.table(where, entry, FACE_KEYS)
    if not entry:
        return None
    body = read.text(f"{where}.body", entry["body"]) if "body" in entry else None
    face_name = read.text(f"{where}.face_name", entry["face_name"]) if "face_name" in entry else name
    select = _select(read, where, entry, body=body)
    return None if select is None or face_name is None else FaceSpec(face_name, select)


def _friction(read: _Reader, name: str, entry: Any) -> FrictionSpec | None:
    where = f"{TABLE}.friction.{name}"
    entry = read.table(where, entry, FRICTION_KEYS)
    if not entry:
        return None
    body_a = read.text(f"{where}.body_a", entry.get("body_a"))
    body_b = read.text(f"{where}.body_b", entry.get("body_b"))
    lining_body = read.text(f"{where}.lining_body", entry["lining_body"]) if "lining_body" in entry else None
    select = _select(read, where, entry)
    mate = _select(read, where, entry, prefix="mate_") if any(k.startswith("mate_") for k in entry) else None
    if None in (body_a, body_b, select) or ("lining_body" in entry and lining_body is None):
        return None
    return FrictionSpec(name, body_a, body_b, select, mate, lining_body=lining_body)


def section_file_of(data: dict, source: str, lining_layers: int, lining_material,
                    lining_thermal: dict | None = None,
                    lining_tensile: float | None = None) -> tuple[SectionFileSpec | None, str, list[str]]:
    """The case's section-file spec (None when it has no ``[section_file]``), the drawing's SHA-256 and the
    problems found (each names its key).  ``source`` is the case file (relative paths start beside it);
    ``lining_material`` (E, ν), ``lining_thermal`` (THERMAL_KEYS -> value) and ``lining_tensile`` (MPa) are
    the [lining] table's, which the lining regions take."""
    engagement = isinstance(data.get("engagement"), dict)       # the hot engagement needs every region's heat data
    speed = isinstance(data.get("speed"), dict)                 # the speed analysis: density and strengths
    problems: list[str] = []
    if TABLE not in data:
        return None, "", problems
    read = _Reader(problems)
    table = read.table(TABLE, data[TABLE], tuple(TOP_KEYS))
    if not table:
        return None, "", problems or [f"[{TABLE}]: empty; it needs at least path, units, bodies, regions, friction, "
                                      f"load, axial_support and radial_support"]
    for drawn in DRAWN_TABLES:
        if drawn in data:
            problems.append(f"[{drawn}]: the section file draws the parts and gives their materials; remove the "
                            f"table (or the [{TABLE}] table to use the parametric shapes)")
    for full in DRAWN_KEYS:
        tab, _, key = full.partition(".")
        if isinstance(data.get(tab), dict) and key in data[tab]:
            problems.append(f"{full} = {shown(data[tab][key])}: the section file draws the lining; remove the key")
    for key in ("path", "units", "bodies", "regions", "friction", "load", "axial_support", "radial_support"):
        if key not in table:
            problems.append(f"{TABLE}.{key}: missing; required ({TOP_KEYS[key]})")

    path = sha = None
    if "path" in table:
        text = read.text(f"{TABLE}.path", table["path"])
        if text is not None:
            path = Path(text).expanduser()
            if not path.is_absolute():
                path = (Path(source).resolve().parent if source else Path.cwd()) / path
            sha = _file_hash(f"{TABLE}.path", text, path, problems)
    units = read.text(f"{TABLE}.units", table["units"], tuple(UNITS)) if "units" in table else None
    axis = {}
    for key, field, default in (("r_along", "r", "x"), ("z_along", "z", "y")):
        value = read.text(f"{TABLE}.{key}", table.get(key, default), ("x", "y", "z", "-x", "-y", "-z"))
        axis[field] = value if value is not None else default
    for key, field in (("axis_at", "axis_at"), ("z_zero_at", "z_at")):
        value = read.number(f"{TABLE}.{key}", table.get(key, 0.0), -1e7, 1e7, "drawing units")
        axis[field] = value if value is not None else 0.0
    sizes = {}
    for key, (default, low, high) in TOLERANCES.items():
        value = read.number(f"{TABLE}.{key}", table.get(key, default), low, high, "mm")
        sizes[key] = value if value is not None else default

    bodies = []
    for name, entry in _entries(read, f"{TABLE}.bodies", table.get("bodies", {})).items():
        entry = read.table(f"{TABLE}.bodies.{name}", entry, ("role", "label"))
        role = read.text(f"{TABLE}.bodies.{name}.role", entry.get("role"), ROLES) if entry else None
        label = read.text(f"{TABLE}.bodies.{name}.label", entry["label"]) if "label" in entry else name
        if role is not None and label is not None:
            bodies.append(BodySpec(name, role, label))
    regions = []
    for name, entry in _entries(read, f"{TABLE}.regions", table.get("regions", {})).items():
        region = _region(read, name, entry, lining_layers, lining_material, lining_thermal or {}, engagement,
                         speed, lining_tensile)
        if region is not None:
            regions.append(region)
    friction = [f for name, entry in _entries(read, f"{TABLE}.friction", table.get("friction", {})).items()
                if (f := _friction(read, name, entry)) is not None]
    named = {key: _face(read, f"{TABLE}.{key}", DEFAULT_FACE_NAMES[key], table[key])
             for key in DEFAULT_FACE_NAMES if key in table}
    faces = [f for name, entry in _entries(read, f"{TABLE}.faces", table.get("faces", {})).items()
             if (f := _face(read, f"{TABLE}.faces.{name}", name, entry)) is not None]
    if problems or None in (path, units) or len(named) < 3 or None in named.values():
        return None, "", problems
    spec = SectionFileSpec(path=path, units=units, axis=Axis(**axis), bodies=tuple(bodies), regions=tuple(regions),
                           friction=tuple(friction), load=named["load"], support_axial=named["axial_support"],
                           support_radial=named["radial_support"], faces=tuple(faces), **sizes)
    problems += [f"[{TABLE}]: {p}" for p in spec_problems(spec)]
    return (None, "", problems) if problems else (spec, sha, problems)


def _file_hash(key: str, text: str, path: Path, problems: list[str]) -> str | None:
    """The drawing's SHA-256 (it is an input: the run records it beside the case file's)."""
    if not path.is_file():
        problems.append(f"{key} = {shown(text)}: no such file ({path})")
        return None
    size = path.stat().st_size
    if size > MAX_FILE_BYTES:
        problems.append(f"{key} = {shown(text)}: {size / 2**20:.0f} MiB; allowed: at most "
                        f"{MAX_FILE_BYTES // 2**20} MiB (a section drawing is kilobytes)")
        return None
    return hashlib.sha256(path.read_bytes()).hexdigest()


def describe_keys() -> list[tuple[str, str]]:
    """The table's keys and what each means (the README's section-file key list)."""
    out = [(f"{TABLE}.{k}", v) for k, v in TOP_KEYS.items()]
    out.append((f"{TABLE}.regions.NAME", "body; layer (DXF) or label / index / inside (STEP/IGES/BREP); "
                                          "youngs_modulus (MPa) and poissons_ratio, or lining = true; "
                                          "thermal_conductivity, density, specific_heat, expansion_coefficient "
                                          "(required with [engagement], ranges as the body tables'); "
                                          "yield_strength, tensile_strength (MPa) and density (required with "
                                          "[speed])"))
    out.append((f"{TABLE}.friction.NAME", "body_a, body_b, optional lining_body; the curve choice; optional "
                                           "mate_… choice for body_b's side"))
    out.append(("curve choice", "exactly one of layer, named (DXF group / CAD name), curve_index (CAD), "
                                "box = [r_min, z_min, r_max, z_max] mm, through = [r, z] mm"))
    return out


__all__ = ["DRAWN_KEYS", "DRAWN_TABLES", "TABLE", "TOP_KEYS", "describe_keys", "section_file_of"]
