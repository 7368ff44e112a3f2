"""Read a case file (TOML) into typed, validated, defaulted plain data.

Every problem is collected (not just the first), one line each, naming the key,
the value and what is allowed; the command line prints them and exits 2.
"""
from __future__ import annotations

import copy
import difflib
import hashlib
import math
import tomllib
from dataclasses import dataclass, make_dataclass, field
from pathlib import Path
from typing import Any

from .errors import CaseError
from .names import label_problem, safe_label
from .schema import SCHEMA, Key, describe_range


def _table_class(table: str):
    """A frozen dataclass per case table, one field per key typed as the schema types it."""
    fields = [(name, spec.kind | None, field(default=None)) for name, spec in SCHEMA[table].items()]
    cls = make_dataclass(f"{table.title().replace('_', '')}Table", fields, frozen=True)
    cls.__module__ = __name__
    cls.__doc__ = f"The [{table}] table of a case (keys, units and ranges: clutchfe keys)."
    return cls


_TABLE_CLASSES = {t: _table_class(t) for t in SCHEMA if t}
InterfaceTable, LoadTable, LiningTable = (_TABLE_CLASSES[t] for t in ("interface", "load", "lining"))
ConeTable, CupTable = _TABLE_CLASSES["cone"], _TABLE_CLASSES["cup"]
PressurePlateTable, DiscTable = _TABLE_CLASSES["pressure_plate"], _TABLE_CLASSES["disc"]
CounterPlateTable, SeparatorPlateTable = _TABLE_CLASSES["counter_plate"], _TABLE_CLASSES["separator_plate"]
SupportTable, MisalignmentTable = _TABLE_CLASSES["support"], _TABLE_CLASSES["misalignment"]
RequirementTable, MeshTable = _TABLE_CLASSES["requirement"], _TABLE_CLASSES["mesh"]
WearTable, VerificationTable = _TABLE_CLASSES["wear"], _TABLE_CLASSES["verification"]


@dataclass(frozen=True)
class Case:
    """A validated case.  Tables are frozen dataclasses: ``case.interface.inner_radius``."""

    kind: str
    name: str
    description: str
    interface: InterfaceTable
    load: LoadTable
    lining: LiningTable
    cone: ConeTable
    cup: CupTable
    pressure_plate: PressurePlateTable
    disc: DiscTable
    counter_plate: CounterPlateTable
    separator_plate: SeparatorPlateTable
    support: SupportTable
    misalignment: MisalignmentTable
    requirement: RequirementTable
    mesh: MeshTable
    wear: WearTable
    verification: VerificationTable
    input_sha256: str = ""
    source: str = ""
    warnings: tuple = ()
    tables_given: frozenset = frozenset()     # tables present in the file (e.g. [wear] asks for wear-in)

    @property
    def disc_count(self) -> int:
        return self.interface.friction_surfaces // 2 if self.kind == "plate" else 0

    def flat(self) -> dict[str, Any]:
        """All keys as ``table.key -> value`` (the inputs table of a report)."""
        out = {"kind": self.kind, "name": self.name}
        for table in _TABLE_CLASSES:
            obj = getattr(self, table)
            for key in SCHEMA[table]:
                value = getattr(obj, key)
                if value is not None:
                    out[f"{table}.{key}"] = value
        return out


def with_tables(data: dict, **tables) -> dict:
    """A deep copy of case data (nested tables) with each named table updated by the given keys."""
    data = copy.deepcopy(data)
    for table, values in tables.items():
        data.setdefault(table, {}).update(values)
    return data


def load_case(path: str | Path) -> Case:
    """Read, validate and default a case file (TOML).

    Parameters
    ----------
    path : str or Path
        The case file.

    Returns
    -------
    Case
        Every table filled in (defaults included), with the file's SHA-256.

    Raises
    ------
    CaseError
        One message per problem, each naming the key, the value and the allowed range.

    Examples
    --------
    >>> from clutchfe import load_case
    >>> case = load_case("cases/plate_tractor.toml")      # doctest: +SKIP
    """
    path = Path(path)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise CaseError([f"{path}: cannot read the case file ({exc.strerror})"]) from None
    try:
        data = tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise CaseError([f"{path}: not a UTF-8 text file"]) from None
    except tomllib.TOMLDecodeError as exc:
        raise CaseError([f"{path}: malformed TOML: {exc}"]) from None
    return case_from_dict(data, default_name=safe_label(path.stem), sha256=hashlib.sha256(raw).hexdigest(),
                          source=str(path))


def case_from_dict(data: dict, default_name: str = "case", sha256: str = "", source: str = "") -> Case:
    """Validate and default a case given as nested tables (the parsed TOML of a case file).

    Parameters
    ----------
    data : dict
        ``{"kind": ..., "interface": {...}, "load": {...}, ...}`` as in a case file.
    default_name : str
        The case name when ``data`` has none (it names the results folder).

    Raises
    ------
    CaseError
        One message per problem (key, value, allowed range).

    Examples
    --------
    >>> from clutchfe import case_from_dict
    >>> case = case_from_dict({"kind": "plate", "interface": {"inner_radius": 80.0, "outer_radius": 120.0,
    ...     "friction_coefficient": 0.3, "friction_surfaces": 2}, "load": {"axial_force": 4000.0}})
    >>> case.interface.semi_cone_angle, case.support.type
    (90.0, 'rigid')
    """
    problems: list[str] = []
    flat = _flatten(data, problems)
    kind = flat.get("kind")
    if kind not in ("cone", "plate"):
        problems.append(f"kind = {kind!r}: allowed: 'cone' or 'plate'" if kind is not None
                        else "kind: missing; allowed: 'cone' or 'plate'")
        raise CaseError(problems)
    unknown = len(problems)
    values = _typed_values(flat, kind, problems)
    if len(problems) > unknown:             # relations between keys need every value valid
        raise CaseError(problems)
    _fill_defaults(values, kind, problems)   # unknown keys are left out, the rest is still checked
    if len(problems) > unknown:
        raise CaseError(problems)
    given = frozenset(k for k, v in data.items() if isinstance(v, dict))
    warnings = _cross_checks(values, kind, problems, given)
    name = values["name"] if "name" in values else default_name
    # the name becomes the results folder: a case file must not be able to point it elsewhere
    bad_name = label_problem("name", name)
    if bad_name:
        problems.append(bad_name)
    if problems:
        raise CaseError(problems)
    tables = {t: cls(**{k: values.get(f"{t}.{k}") for k in SCHEMA[t]}) for t, cls in _TABLE_CLASSES.items()}
    return Case(kind=kind, name=name, description=values.get("description") or "", input_sha256=sha256,
                source=source, warnings=tuple(warnings), tables_given=given, **tables)


def _flatten(data: dict, problems: list[str]) -> dict[str, Any]:
    flat: dict[str, Any] = {}
    tables = [t for t in SCHEMA if t]
    for key, value in data.items():
        if isinstance(value, dict):
            if key not in SCHEMA or not key:
                problems.append(f"[{key}]: unknown table{_hint(key, tables)}; allowed tables: "
                                + ", ".join(tables))
                continue
            for sub, subval in value.items():
                if sub not in SCHEMA[key]:
                    problems.append(f"{key}.{sub}: unknown key{_hint(sub, list(SCHEMA[key]), key)}; "
                                    f"allowed in [{key}]: " + ", ".join(SCHEMA[key]))
                    continue
                flat[f"{key}.{sub}"] = subval
        elif key in SCHEMA[""]:
            flat[key] = value
        else:
            where = [t for t in tables if key in SCHEMA[t]]
            hint = f" (did you mean [{where[0]}] {key}?)" if where else _hint(key, list(SCHEMA[""]))
            problems.append(f"{key}: unknown top-level key{hint}; allowed at top level: "
                            + ", ".join(SCHEMA[""]))
    return flat


def _hint(word: str, options: list[str], table: str = "") -> str:
    homes = [t for t, keys in SCHEMA.items() if t and t != table and word in keys]
    if table and homes:
        return f" (did you mean {' or '.join(f'{t}.{word}' for t in homes)}?)"
    close = difflib.get_close_matches(word, options, n=1, cutoff=0.6)
    if close:
        return f" (did you mean {table + '.' if table else ''}{close[0]}?)"
    return ""


def _spec(full: str) -> Key:
    table, _, key = full.rpartition(".")
    return SCHEMA[table][key]


def _typed_values(flat: dict, kind: str, problems: list[str]) -> dict[str, Any]:
    values: dict[str, Any] = {}
    for full, value in flat.items():
        spec = _spec(full)
        if kind not in spec.kinds:
            other = "plate" if kind == "cone" else "cone"
            problems.append(f"{full} = {value!r}: belongs to {other} cases only; this case is kind = {kind!r}")
            continue
        checked = _check_value(full, value, spec, problems)
        if checked is not None:
            values[full] = checked
    for table, keys in SCHEMA.items():
        for key, spec in keys.items():
            full = f"{table}.{key}" if table else key
            if spec.required and kind in spec.kinds and full not in flat:
                problems.append(f"{full}: missing; required ({describe_range(spec)})")
    return values


def _check_value(full: str, value: Any, spec: Key, problems: list[str]):
    allowed = describe_range(spec)
    if spec.kind is str:
        if not isinstance(value, str):
            problems.append(f"{full} = {value!r}: must be text; allowed: {allowed}")
            return None
    elif spec.kind is bool:
        if not isinstance(value, bool):
            problems.append(f"{full} = {value!r}: must be true or false")
            return None
        return value
    elif isinstance(value, bool) or not isinstance(value, (int, float)):
        problems.append(f"{full} = {value!r}: must be a number; allowed: {allowed}")
        return None
    elif spec.kind is int:
        if not (math.isfinite(value) and float(value) == int(value)):
            problems.append(f"{full} = {value!r}: must be a whole number; allowed: {allowed}")
            return None
        value = int(value)
    else:
        value = float(value)
        if not math.isfinite(value):
            problems.append(f"{full} = {value!r}: must be a finite number; allowed: {allowed}")
            return None
    if spec.choices and value not in spec.choices:
        problems.append(f"{full} = {value!r}: not allowed{_hint(str(value), [str(c) for c in spec.choices])}; "
                        f"allowed: {allowed}")
        return None
    if not _in_range(value, spec):
        problems.append(f"{full} = {value!r}: out of range; allowed: {allowed}")
        return None
    return value


def _in_range(value, spec: Key) -> bool:
    if spec.kind in (str, bool):
        return True
    if spec.low is not None and (value < spec.low or (value == spec.low and not spec.low_inclusive)):
        return False
    if spec.high is not None and (value > spec.high or (value == spec.high and not spec.high_inclusive)):
        return False
    return True


def _fill_defaults(values: dict, kind: str, problems: list[str]) -> None:
    values["kind"] = kind
    for table, keys in SCHEMA.items():
        for key, spec in keys.items():
            full = f"{table}.{key}" if table else key
            if full in values or kind not in spec.kinds:
                continue
            try:
                default = spec.default(values) if callable(spec.default) else spec.default
            except (KeyError, ZeroDivisionError, ValueError):
                default = None      # depends on a key that is itself invalid: reported elsewhere
            if default is not None:
                values[full] = default
    alpha = values.get("interface.semi_cone_angle")
    if kind == "cone" and alpha is None:
        problems.append("interface.semi_cone_angle: missing; required for a cone (0 < value < 90 deg)")


def _cross_checks(v: dict, kind: str, problems: list[str], given: frozenset = frozenset()) -> list[str]:
    """Checks that relate several keys.  Returns warnings; appends errors."""
    warnings: list[str] = []
    r1, r2 = v["interface.inner_radius"], v["interface.outer_radius"]
    alpha, mu, n = v["interface.semi_cone_angle"], v["interface.friction_coefficient"], \
        v["interface.friction_surfaces"]
    t = v["lining.thickness"]
    if r1 >= r2:
        problems.append(f"interface.inner_radius = {r1:g}: must be less than interface.outer_radius "
                        f"= {r2:g} mm; allowed: 0 < inner_radius < {r2:g} mm")
        return warnings
    if kind == "cone":
        if not 0.0 < alpha < 90.0:
            problems.append(f"interface.semi_cone_angle = {alpha:g}: allowed for a cone: 0 < value < 90 deg")
            return warnings
        if n != 1:
            problems.append(f"interface.friction_surfaces = {n}: a cone clutch has one friction face; allowed: 1")
        if math.tan(math.radians(alpha)) < mu:
            warnings.append(f"interface.semi_cone_angle = {alpha:g} deg: tan(alpha) = "
                            f"{math.tan(math.radians(alpha)):.3f} < friction_coefficient = {mu:g}: the cone "
                            "self-locks (it needs a pull to disengage)")
        body, body_key = ("cone.rim_thickness", v["cone.rim_thickness"]) if v["lining.bonded_to"] == "cone" \
            else ("cup.wall_thickness", v["cup.wall_thickness"])
        if v["lining.bonded_to"] not in ("cone", "cup"):
            problems.append(f"lining.bonded_to = {v['lining.bonded_to']!r}: allowed for a cone clutch: "
                            "'cone' or 'cup'")
        elif t >= body_key:
            problems.append(f"lining.thickness = {t:g}: the lining is thicker than its body ({body} = "
                            f"{body_key:g} mm); allowed: 0 < thickness < {body_key:g} mm")
        for part in ("cone", "cup"):
            bore, hub = v[f"{part}.bore_radius"], v[f"{part}.hub_outer_radius"]
            if bore >= hub:
                problems.append(f"{part}.bore_radius = {bore:g}: must be less than {part}.hub_outer_radius = "
                                f"{hub:g} mm; allowed: 0 < bore_radius < {hub:g} mm")
        mismatch = v["misalignment.cone_angle_mismatch"]
        if not 0.0 < alpha + mismatch < 90.0:
            problems.append(f"misalignment.cone_angle_mismatch = {mismatch:g}: the cup angle alpha + mismatch "
                            f"must stay within (0, 90) deg")
    else:
        if alpha != 90.0:
            problems.append(f"interface.semi_cone_angle = {alpha:g}: a plate clutch's faces are normal to "
                            "the axis; allowed: 90 (or leave it out)")
        if n % 2:
            problems.append(f"interface.friction_surfaces = {n}: a plate clutch has two faces per disc; "
                            "allowed: an even number 2, 4, 6 …")
        if v["lining.bonded_to"] not in ("disc", "plates"):
            problems.append(f"lining.bonded_to = {v['lining.bonded_to']!r}: allowed for a plate clutch: "
                            "'disc' or 'plates'")
        plates = ["pressure_plate", "counter_plate"] + (["separator_plate"] if n > 2 else [])
        for part in plates + ["disc"]:
            lo_key, hi_key = (("disc.core_inner_radius", "disc.core_outer_radius") if part == "disc"
                              else (f"{part}.inner_radius", f"{part}.outer_radius"))
            lo, hi = v[lo_key], v[hi_key]
            if lo > r1:
                problems.append(f"{lo_key} = {lo:g}: the friction surface must lie on the part; "
                                f"allowed: 0 < value ≤ interface.inner_radius = {r1:g} mm")
            if hi < r2:
                problems.append(f"{hi_key} = {hi:g}: the friction surface must lie on the part; "
                                f"allowed: value ≥ interface.outer_radius = {r2:g} mm")
        if v["lining.bonded_to"] == "disc":
            carriers = {"disc.core_thickness": v["disc.core_thickness"]}
        else:
            carriers = {f"{p}.thickness": v[f"{p}.thickness"] for p in plates}
        for key, thick in carriers.items():
            if t >= thick:
                problems.append(f"lining.thickness = {t:g}: the lining is thicker than its body ({key} = "
                                f"{thick:g} mm); allowed: 0 < thickness < {thick:g} mm")
        coning = v["misalignment.coning"]
        if abs(coning) >= t:
            problems.append(f"misalignment.coning = {coning:g}: must be smaller than the lining thickness; "
                            f"allowed: -{t:g} < coning < {t:g} mm")
    _check_lining_ends(v, kind, problems)
    _check_load(v, kind, problems)
    _check_support(v, problems)
    _check_tilt_pivot(v, problems)
    if "wear" in given:
        _check_wear(v, problems)
        for key in ("misalignment.axis_tilt", "misalignment.radial_offset"):
            if v[key]:
                problems.append(f"{key} = {v[key]:g}: wear-in runs on the axisymmetric face in this version; "
                                "remove [wear] or set it to 0")
    _check_mesh(v, kind, problems)
    return warnings


def _check_lining_ends(v: dict, kind: str, problems: list[str]) -> None:
    """A chamfered plate lining's bond runs one lining thickness past r1 and r2: its carriers must reach
    that far (a cone's rim and cup grow with the bond; cone.py checks the webs they may run into)."""
    if kind != "plate" or v["lining.end_shape"] != "chamfer" or v["lining.bonded_to"] not in ("disc", "plates"):
        return
    r1, r2, t = v["interface.inner_radius"], v["interface.outer_radius"], v["lining.thickness"]
    if v["lining.bonded_to"] == "disc":
        carriers = [("disc.core_inner_radius", "disc.core_outer_radius")]
    else:
        parts = ["pressure_plate", "counter_plate"] + (["separator_plate"] if v["interface.friction_surfaces"] > 2
                                                        else [])
        carriers = [(f"{p}.inner_radius", f"{p}.outer_radius") for p in parts]
    for lo_key, hi_key in carriers:
        lo, hi = v[lo_key], v[hi_key]
        if r1 - t < lo <= r1:           # lo > r1 is reported by the friction-surface check
            problems.append(f"{lo_key} = {lo:g}: with lining.end_shape = 'chamfer' the lining's bond runs one "
                            f"lining thickness inside r1; allowed: value ≤ interface.inner_radius − "
                            f"lining.thickness = {r1 - t:g} mm, or lining.end_shape = 'normal_to_face'")
        if r2 <= hi < r2 + t:
            problems.append(f"{hi_key} = {hi:g}: with lining.end_shape = 'chamfer' the lining's bond runs one "
                            f"lining thickness past r2; allowed: value ≥ interface.outer_radius + "
                            f"lining.thickness = {r2 + t:g} mm, or lining.end_shape = 'normal_to_face'")


def _check_load(v: dict, kind: str, problems: list[str]) -> None:
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
    if not lo < ring < hi:
        problems.append(f"load.ring_radius = {ring:g}: must lie on {where}; allowed: {lo:g} < value < {hi:g} mm")


def _check_wear(v: dict, problems: list[str]) -> None:
    duty = [k for k in ("wear.engagements", "wear.slip_speed", "wear.slip_time") if k in v]
    target = "wear.target_wear_volume" in v
    if duty and len(duty) < 3:
        missing = sorted({"wear.engagements", "wear.slip_speed", "wear.slip_time"} - set(duty))
        problems.append(f"{', '.join(missing)}: missing; the wear duty needs engagements, slip_speed and "
                        "slip_time together")
    if duty and target:
        problems.append(f"wear.target_wear_volume = {v['wear.target_wear_volume']:g}: give either a target "
                        "wear volume or the engagement duty, not both")
    if v["wear.max_wear_depth"] >= v["lining.thickness"]:
        problems.append(f"wear.max_wear_depth = {v['wear.max_wear_depth']:g}: must be less than the lining "
                        f"thickness; allowed: 0 < value < {v['lining.thickness']:g} mm")


def _check_tilt_pivot(v: dict, problems: list[str]) -> None:
    """The tilt pivot within two outer radii of the friction face: further away, a tilt of the
    pressed part is mostly a radial shift of its face (give that as misalignment.radial_offset)."""
    offset, limit = v["misalignment.tilt_pivot_offset"], 2.0 * v["interface.outer_radius"]
    if not abs(offset) <= limit:
        problems.append(f"misalignment.tilt_pivot_offset = {offset:g}: the pivot must lie within two outer radii "
                        f"of the middle of the friction face; allowed: -{limit:g} ≤ value ≤ {limit:g} mm")


def _check_support(v: dict, problems: list[str]) -> None:
    names = ("support.axial_stiffness", "support.radial_stiffness")
    if v["support.type"] == "springs":
        for key in names:
            if key not in v:
                problems.append(f"{key}: missing; required with support.type = 'springs' (value > 0 N/mm)")
    else:
        for key in names:
            if key in v:
                problems.append(f"{key} = {v[key]:g}: only used with support.type = 'springs'")


def _check_mesh(v: dict, kind: str, problems: list[str]) -> None:
    divisions = v["mesh.angular_divisions"]
    if divisions % 2:
        problems.append(f"mesh.angular_divisions = {divisions}: must be even (harmonics 0 … N on 2N "
                        "angles); allowed: 8, 10, … 256")
    t = v["lining.thickness"]
    alpha = math.radians(v["interface.semi_cone_angle"])
    slant = (v["interface.outer_radius"] - v["interface.inner_radius"]) / math.sin(alpha)
    face, edge, body = v["mesh.interface_element_size"], v["mesh.edge_element_size"], v["mesh.element_size"]
    if face > slant / 4.0:
        problems.append(f"mesh.interface_element_size = {face:g}: cannot resolve the friction face "
                        f"({slant:.3g} mm long); allowed: 0 < value ≤ {slant / 4.0:.4g} mm")
    if face > 2.0 * t:
        problems.append(f"mesh.interface_element_size = {face:g}: cannot resolve the lining "
                        f"({t:g} mm thick); allowed: 0 < value ≤ {2.0 * t:.4g} mm")
    if edge > t:
        problems.append(f"mesh.edge_element_size = {edge:g}: cannot resolve the lining at its ends "
                        f"({t:g} mm thick); allowed: 0 < value ≤ {t:g} mm")
    if edge > face:
        problems.append(f"mesh.edge_element_size = {edge:g}: must not exceed mesh.interface_element_size "
                        f"= {face:g} mm")
    if body < face:
        problems.append(f"mesh.element_size = {body:g}: must not be smaller than "
                        f"mesh.interface_element_size = {face:g} mm")
