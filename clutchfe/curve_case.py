"""The point lists of the measured compression curves: ``[lining_curve]`` and ``[cushion]``.

A supplier gives a friction lining's compression as a curve of pressure against deflection, and the cushion
(segment) springs between the two facings of a dry disc as force against deflection.  A case gives them as
lists, point by point from (0, 0) left out::

    [lining_curve]
    deflection = [0.010, 0.025, 0.040, 0.050]   # mm, compression of the whole lining thickness
    pressure = [0.3, 1.0, 2.2, 3.5]             # MPa

    [cushion]
    deflection = [0.15, 0.30, 0.45, 0.55]       # mm, of the cushion between a disc's two facings
    force = [1200.0, 3000.0, 5600.0, 8500.0]    # N on the whole disc

The lists are not single values, so they are read here (the way section_case.py reads its table), not by the
key table; the tables' single keys (the scales, ``deflection_scale`` and ``pressure_scale`` or ``force_scale``) are
in the schema like every other key.  Each
problem names the key, the value and what is allowed, as the other tables do.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from .schema import SCHEMA
from .toml_input import shown

# table -> (the list of deflections, the list of what they carry, its unit)
CURVE_TABLES = {"lining_curve": ("deflection", "pressure", "MPa"), "cushion": ("deflection", "force", "N")}
MAX_POINTS = 60             # a digitised datasheet curve has 5–30 points; more is not a curve read off a sheet
# A cushion compresses by its travel, 0.3–1.2 mm on dry clutch discs (from memory); 3 mm is beyond any.
CUSHION_TRAVEL_MM = 3.0
# Pressures a curve may reach: linings are rated up to ~3.5 MPa, sintered ~10 (from memory); a measured curve
# runs past the rating, but not past 50 MPa, where an organic lining is crushed and a sintered one yields.
CURVE_PRESSURE_MPA = 50.0
# A cushion is flat at its last point; below 1e-3 MPa on its facing it would be flat before any clutch is
# engaged (the least mean pressure of a clutch, case_checks.MEAN_PRESSURE_MPA): a force typed in kN.
CUSHION_LEAST_MPA = 1e-3
# The tables need the parametric section's linings and the axisymmetric solve; see check_curve_model.  The
# spline drag carries the layer (its solves are the case's own with a body load); these analyses do not.
OTHER_ANALYSES = ("engagement", "wear", "speed")


@dataclass(frozen=True)
class CurvePoints:
    """One measured curve as the case gives it: deflections (mm) and what each carries (MPa or N, by table)."""

    deflection_mm: tuple[float, ...]
    values: tuple[float, ...]


def split_curve_lists(data: dict) -> tuple[dict, dict]:
    """The case without the curves' lists (the key table reads the rest), and the lists by table."""
    rest, lists = dict(data), {}
    for table, (x, y, _) in CURVE_TABLES.items():
        given = data.get(table)
        if isinstance(given, dict):
            lists[table] = {k: given[k] for k in (x, y) if k in given}
            rest[table] = {k: v for k, v in given.items() if k not in (x, y)}
    return rest, lists


def curve_points_of(lists: dict, values, kind: str, problems: list[str]) -> dict[str, CurvePoints]:
    """The curves of the tables given, each checked point by point; problems appended (key, value, allowed)."""
    out = {}
    for table, (x, y, unit) in CURVE_TABLES.items():
        if table not in lists:
            continue
        if kind not in SCHEMA[table]["deflection_scale"].kinds:
            problems.append(f"[{table}]: belongs to plate cases only (the cushion springs between a disc's facings); "
                            f"this case is kind = {kind!r}")
            continue
        before = len(problems)
        d = _numbers(f"{table}.{x}", lists[table].get(x), problems)
        v = _numbers(f"{table}.{y}", lists[table].get(y), problems)
        if d is None or v is None:
            continue
        if len(d) != len(v):
            problems.append(f"{table}.{y}: {len(v)} values for {len(d)} deflections; allowed: one {y} per "
                            f"deflection")
            continue
        _increasing(f"{table}.{x}", d, "mm", problems)
        _increasing(f"{table}.{y}", v, unit, problems)
        if len(problems) == before:
            out[table] = CurvePoints(tuple(d), tuple(v))
    return out


def _numbers(key: str, value, problems: list[str]) -> list[float] | None:
    if value is None:
        problems.append(f"{key}: missing; allowed: a list of numbers, one per point of the curve (from (0, 0) left "
                        f"out)")
        return None
    if not isinstance(value, list) or not value or len(value) > MAX_POINTS:
        problems.append(f"{key} = {shown(value)}: allowed: a list of 1 to {MAX_POINTS} numbers")
        return None
    numbers = []
    for k, item in enumerate(value):
        if isinstance(item, bool) or not isinstance(item, (int, float)) or not _finite(item):
            problems.append(f"{key}[{k}] = {shown(item)}: must be a finite number; allowed: a number above the point "
                            "before (the curve rises from (0, 0))")
            return None
        numbers.append(float(item))
    return numbers


def _finite(item) -> bool:
    try:
        return math.isfinite(float(item))
    except OverflowError:               # an integer of hundreds of digits
        return False


def _increasing(key: str, numbers: list[float], unit: str, problems: list[str]) -> None:
    last = 0.0
    for k, x in enumerate(numbers):
        if x <= last:
            problems.append(f"{key}[{k}] = {x:g}: a compression curve rises from (0, 0); allowed: value > {last:g} "
                            f"{unit} (the point before)")
            return
        last = x


def check_curves(curves: dict, v, kind: str, problems: list[str], warnings: list[str]) -> None:
    """The curves against the rest of the case: what they run on, the lining's thickness, plausible sizes."""
    check_curve_model(curves, v, kind, problems)
    lining = curves.get("lining_curve")
    if lining is not None:
        scale = v.get("lining_curve.deflection_scale", 1.0)
        p_scale = v.get("lining_curve.pressure_scale", 1.0)
        thickness = v.get("lining.thickness")
        last = lining.deflection_mm[-1] * scale
        if thickness is not None and last >= thickness:
            problems.append(f"lining_curve.deflection[{len(lining.deflection_mm) - 1}] = "
                            f"{lining.deflection_mm[-1]:g} (× deflection_scale {scale:g}): a lining cannot compress by "
                            f"its whole lining.thickness = {thickness:g} mm; allowed: below it")
        if lining.values[-1] * p_scale > CURVE_PRESSURE_MPA:
            problems.append(f"lining_curve.pressure[{len(lining.values) - 1}] = {lining.values[-1]:g} (× pressure_scale "
                            f"{p_scale:g}): allowed: value ≤ {CURVE_PRESSURE_MPA:g} MPa (an organic lining is crushed, "
                            "a sintered one yields; pressures are in MPa)")
        if thickness is not None:
            _secant_modulus(lining, thickness, scale / p_scale, problems)
    cushion = curves.get("cushion")
    if cushion is not None:
        scale = v.get("cushion.deflection_scale", 1.0)
        f_scale = v.get("cushion.force_scale", 1.0)
        if cushion.deflection_mm[-1] * scale > CUSHION_TRAVEL_MM:
            problems.append(f"cushion.deflection[{len(cushion.deflection_mm) - 1}] = {cushion.deflection_mm[-1]:g} "
                            f"(× deflection_scale {scale:g}): allowed: at most {CUSHION_TRAVEL_MM:g} mm (cushion "
                            "travel of dry clutch discs is 0.3–1.2 mm, from memory; deflections are in mm)")
        r1, r2 = v.get("interface.inner_radius"), v.get("interface.outer_radius")
        if r1 is not None and r2 is not None and r2 > r1:
            area = math.pi * (r2 ** 2 - r1 ** 2)
            if cushion.values[-1] * f_scale / area < CUSHION_LEAST_MPA:
                problems.append(f"cushion.force[{len(cushion.values) - 1}] = {cushion.values[-1]:g} (× force_scale "
                                f"{f_scale:g}): on the facing of {area:.4g} mm² a cushion pressed flat by "
                                f"{cushion.values[-1] * f_scale / area:.3g} MPa; allowed: at least "
                                f"{CUSHION_LEAST_MPA * area / f_scale:.4g} N ({CUSHION_LEAST_MPA:g} MPa, the least "
                                "mean pressure of a clutch; forces are in N, not kN)")
            if cushion.values[-1] * f_scale / area > CURVE_PRESSURE_MPA:
                problems.append(f"cushion.force[{len(cushion.values) - 1}] = {cushion.values[-1]:g} (× force_scale "
                                f"{f_scale:g}): on the facing of {area:.4g} mm² that is "
                                f"{cushion.values[-1] * f_scale / area:.3g} MPa; allowed: at most "
                                f"{CURVE_PRESSURE_MPA * area / f_scale:.4g} N ({CURVE_PRESSURE_MPA:g} MPa; forces are in N)")


def check_curve_model(curves: dict, v, kind: str, problems: list[str]) -> None:
    """What the compression curves run on in this version."""
    for table in curves:
        for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
            if v.get(key):
                problems.append(f"{key} = {v[key]:g}: the compression curves run on the axisymmetric section in this "
                                f"version; allowed: 0, or remove [{table}]")
        for other in OTHER_ANALYSES:
            if other in v.tables_given:
                problems.append(f"[{table}]: given with [{other}], whose solve has a linear lining in this version; "
                                f"allowed: one of the two tables (a second case file for the other)")
        if "section_file" in v.tables_given:
            problems.append(f"[{table}]: given with [section_file]; the curves act on the parametric linings in this "
                            "version; allowed: the parametric tables, or remove it")
        if "lining.youngs_modulus" in v.typed and table == "lining_curve":
            problems.append(f"lining.youngs_modulus = {shown(v.get('lining.youngs_modulus'))}: the lining's "
                            "compression is its measured curve ([lining_curve]); allowed: one of the two")
    if "cushion" in curves and kind == "plate" and v.get("lining.bonded_to") not in (None, "disc"):
        problems.append(f"lining.bonded_to = {v.get('lining.bonded_to')!r}: the cushion springs sit between the two "
                        "facings of a friction disc; allowed: 'disc' with [cushion]")


def _secant_modulus(curve: CurvePoints, thickness: float, scale: float, problems: list[str]) -> None:
    """p t / d at every point is the lining's secant modulus: it must be a lining's (the key table's range);
    ``scale``: the deflection scale over the pressure scale."""
    spec = SCHEMA["lining"]["youngs_modulus"]
    for k, (d, p) in enumerate(zip(curve.deflection_mm, curve.values)):
        modulus = p * thickness / (d * scale)
        if not spec.low <= modulus <= spec.high:
            problems.append(f"lining_curve.deflection[{k}] = {d:g} with pressure {p:g} MPa (deflection over pressure "
                            f"scale {scale:g}): the secant modulus p t / d = {modulus:.4g} MPa on lining.thickness "
                            f"{thickness:g} mm; allowed: "
                            f"{spec.low:g} ≤ value ≤ {spec.high:g} MPa ({spec.why}; deflections are in mm)")
            return
