"""Read a case file (TOML) into typed, validated, defaulted plain data.

Every problem is collected (not just the first), one line each, naming the key,
the value and what is allowed; the command line prints them and exits 2.
"""
from __future__ import annotations

import copy
import difflib
import hashlib
import math
import os
from dataclasses import dataclass, field, make_dataclass, replace
from pathlib import Path
from typing import Any

from .case_checks import BASE, RELATIONS, CaseValues, run_checks
from .errors import CaseError
from .names import label_problem, safe_label
from .schema import ANALYSIS_TABLES, SCHEMA, THERMAL_KEYS, Key, describe_range
from .curve_case import CURVE_TABLES, CurvePoints, check_curves, curve_points_of, split_curve_lists
from .section_case import DRAWN_KEYS, DRAWN_TABLES, TABLE as SECTION_TABLE, section_file_of
from .toml_input import MAX_KEYS, key_count, key_text as _key_text, read_toml, shown


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
EngagementTable, CoolingTable = _TABLE_CLASSES["engagement"], _TABLE_CLASSES["cooling"]
SpeedTable, SplinesTable = _TABLE_CLASSES["speed"], _TABLE_CLASSES["splines"]
LiningCurveTable, CushionTable = _TABLE_CLASSES["lining_curve"], _TABLE_CLASSES["cushion"]


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
    # the hot engagement: None when the case has no [engagement] table (it asks for the analysis);
    # [cooling] is always filled in (defaults), used only by the hot engagement
    engagement: EngagementTable | None
    cooling: CoolingTable
    # the speed analysis (centrifugal load at the running speed): None when the case has no [speed] table
    speed: SpeedTable | None
    # the spline drag of a plate pack: None when the case has no [splines] table
    splines: SplinesTable | None
    # the measured compression curves (their scale; the points below): None without the table
    lining_curve: LiningCurveTable | None
    cushion: CushionTable | None
    input_sha256: str = ""
    source: str = ""
    warnings: tuple = ()
    tables_given: frozenset = frozenset()     # tables present in the file (e.g. [wear] asks for wear-in)
    # the user's own drawing of the section (geometry.section_spec.SectionFileSpec), instead of the
    # parametric tables; None: the parametric shapes.  Its SHA-256 is an input hash like the case file's.
    section_file: Any = None
    section_file_sha256: str = ""
    lining_curve_points: CurvePoints | None = None
    cushion_points: CurvePoints | None = None

    @property
    def disc_count(self) -> int:
        return self.interface.friction_surfaces // 2 if self.kind == "plate" else 0

    def flat(self) -> dict[str, Any]:
        """All keys as ``table.key -> value`` (the inputs table of a report)."""
        out = {"kind": self.kind, "name": self.name}
        for table in _TABLE_CLASSES:
            obj = getattr(self, table)
            if obj is None:         # an analysis table the case does not give ([engagement], [speed])
                continue
            for key in SCHEMA[table]:
                value = getattr(obj, key)
                if value is not None:
                    out[f"{table}.{key}"] = value
        for table, points in (("lining_curve", self.lining_curve_points), ("cushion", self.cushion_points)):
            if points is not None:
                x, y, _ = CURVE_TABLES[table]
                out[f"{table}.{x}"], out[f"{table}.{y}"] = list(points.deflection_mm), list(points.values)
        if self.section_file is not None:
            # as seen from the case file, so that the same case gives the same report in any checkout
            folder = Path(self.source).resolve().parent if self.source else Path.cwd()
            out["section_file.path"] = Path(os.path.relpath(self.section_file.path, folder)).as_posix()
            out["section_file.sha256"] = self.section_file_sha256
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
        The case file (a regular file of at most 1 MiB, UTF-8 with or without a byte-order mark).

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
    data, raw = read_toml(path, "case file")
    return case_from_dict(data, default_name=safe_label(path.stem), sha256=hashlib.sha256(raw).hexdigest(),
                          source=str(path))


def case_from_dict(data: dict, default_name: str = "case", sha256: str = "", source: str = "",
                   limit_case: bool = False) -> Case:
    """Validate and default a case given as nested tables (the parsed TOML of a case file).

    Every problem of the case is reported at once: each key's type and range, then the
    relations between the keys whose own values are valid.

    Parameters
    ----------
    data : dict
        ``{"kind": ..., "interface": {...}, "load": {...}, ...}`` as in a case file.
    default_name : str
        The case name when ``data`` has none (it names the results folder).
    limit_case : bool
        True for a limit case of the physics rather than a clutch (the verification suite's
        near-rigid bodies): the moduli may then take any value > 0 instead of the plausible
        range.  A case file never is one.

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
    if not isinstance(data, dict):
        raise CaseError([f"case: {shown(data)}: allowed: tables of keys (a parsed case file)"])
    count = key_count(data)
    if count > MAX_KEYS:
        raise CaseError([f"case: holds {count} keys; allowed: at most {MAX_KEYS} (clutchfe keys lists them)"])
    problems: list[str] = []
    drawing = {k: v for k, v in data.items() if k == SECTION_TABLE}
    scalars, curve_lists = split_curve_lists({k: v for k, v in data.items() if k != SECTION_TABLE})
    flat = _flatten(scalars, problems)
    kind = flat.get("kind")
    if kind not in ("cone", "plate"):
        problems.append(f"kind = {shown(kind)}: allowed: 'cone' or 'plate'" if kind is not None
                        else "kind: missing; allowed: 'cone' or 'plate'")
        flat.pop("kind", None)          # reported once, here
        kind = None
    given = frozenset(k for k, v in data.items() if isinstance(v, dict))
    values, invalid = _typed_values(flat, kind, problems, limit_case, given)
    name = values.get("name", default_name)
    if "name" not in invalid:
        # the name becomes the results folder: a case file must not be able to point it elsewhere
        bad_name = label_problem("name", name)
        if bad_name:
            problems.append(bad_name)
    warnings: list[str] = []
    spec, spec_sha = None, ""
    if kind is not None:
        values = CaseValues(values, invalid=invalid, tables_given=given, typed=flat)
        derived = _fill_defaults(values, kind)
        if drawing:
            spec, spec_sha, drawing_problems = section_file_of(
                data, source, values.get("mesh.lining_layers", 4),
                (values.get("lining.youngs_modulus"), values.get("lining.poissons_ratio")),
                lining_thermal={k: values.get(f"lining.{k}") for k in THERMAL_KEYS},
                lining_tensile=values.get("lining.tensile_strength"))
            problems += drawing_problems
            # the drawing replaces the parametric parts: their defaults would describe parts not drawn
            for full in [k for k in values if k.partition(".")[0] in DRAWN_TABLES or k in DRAWN_KEYS]:
                values.pop(full)
            derived = [k for k in derived if k in values]
        base_problems = len(problems)
        run_checks(BASE, values, kind, problems, warnings)
        if len(problems) > base_problems:
            # a default computed from a wrong radius or angle would be reported against a key the user
            # never set, and a relation with the wrong radii would give a range made of wrong numbers:
            # check the other given values only
            for full in (*derived, "interface.inner_radius", "interface.outer_radius"):
                values.pop(full, None)
        run_checks(RELATIONS, values, kind, problems, warnings)
        curves = curve_points_of(curve_lists, values, kind, problems)
        check_curves(curves, values, kind, problems, warnings)
    if problems:
        raise CaseError(problems)
    tables = {t: cls(**{k: values.get(f"{t}.{k}") for k in SCHEMA[t]}) for t, cls in _TABLE_CLASSES.items()}
    for table in ANALYSIS_TABLES:
        if table not in given:
            tables[table] = None
    return Case(kind=kind, name=name, description=values.get("description") or "", input_sha256=sha256,
                source=source, warnings=tuple(warnings), tables_given=given, section_file=spec,
                section_file_sha256=spec_sha, lining_curve_points=curves.get("lining_curve"),
                cushion_points=curves.get("cushion"), **tables)


def _flatten(data: dict, problems: list[str]) -> dict[str, Any]:
    flat: dict[str, Any] = {}
    tables = [t for t in SCHEMA if t]
    for key, value in data.items():
        if isinstance(value, dict):
            if key not in SCHEMA or not key:
                problems.append(f"[{_key_text(key)}]: unknown table{_hint(key, tables)}; allowed tables: "
                                + ", ".join([*tables, SECTION_TABLE]))
                continue
            allowed = [*CURVE_TABLES.get(key, ())[:2], *SCHEMA[key]]       # a curve's lists, then the keys
            for sub, subval in value.items():
                if sub not in SCHEMA[key]:
                    problems.append(f"{key}.{_key_text(sub)}: unknown key{_hint(sub, allowed, key)}; "
                                    f"allowed in [{key}]: " + ", ".join(allowed))
                    continue
                flat[f"{key}.{sub}"] = subval
        elif key in SCHEMA[""]:
            flat[key] = value
        elif key in SCHEMA:
            problems.append(f"{_key_text(key)} = {shown(value)}: must be a table; allowed: a [{key}] table of "
                            f"keys (clutchfe keys)")
        else:
            where = [t for t in tables if key in SCHEMA[t]]
            table, _, sub = key.partition(".")
            if where:
                hint = f" (did you mean [{where[0]}] {key}?)"
            elif sub in SCHEMA.get(table, {}) and table:
                hint = f" (did you mean {sub} in the [{table}] table?)"
            else:
                hint = _hint(key, list(SCHEMA[""]))
            problems.append(f"{_key_text(key)}: unknown top-level key{hint}; allowed at top level: "
                            + ", ".join(SCHEMA[""]))
    return flat


def _hint(word: str, options: list[str], table: str = "") -> str:
    if len(word) > 60:          # no near match is that long; difflib is quadratic in it
        return ""
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


def _typed_values(flat: dict, kind: str | None, problems: list[str], limit_case: bool = False,
                  given: frozenset = frozenset()) -> tuple[dict[str, Any], set[str]]:
    """The keys valid on their own (type, range, case kind), and the set of those given but invalid."""
    values: dict[str, Any] = {}
    invalid: set[str] = set()
    for full, value in flat.items():
        spec = _spec(full)
        if limit_case and spec.limit_range:
            spec = replace(spec, low=spec.limit_range[0], high=spec.limit_range[1], low_inclusive=False,
                           high_inclusive=False)
        if kind is not None and kind not in spec.kinds:
            other = "plate" if kind == "cone" else "cone"
            problems.append(f"{full} = {shown(value)}: belongs to {other} cases only; this case is kind = {kind!r}")
            invalid.add(full)
            continue
        checked = _check_value(full, value, spec, problems)
        if checked is None:
            invalid.add(full)
        else:
            values[full] = checked
    for table, keys in SCHEMA.items():
        for key, spec in keys.items():
            full = f"{table}.{key}" if table else key
            needed = spec.required or (spec.table_required and table in given)
            if needed and kind is not None and kind in spec.kinds and full not in flat:
                problems.append(f"{full}: missing; required ({describe_range(spec)})")
                invalid.add(full)
    if kind == "cone" and "interface.semi_cone_angle" not in flat:
        problems.append("interface.semi_cone_angle: missing; required for a cone (2 ≤ value ≤ 80 deg)")
        invalid.add("interface.semi_cone_angle")
    return values, invalid


def _check_value(full: str, value: Any, spec: Key, problems: list[str]):
    allowed = describe_range(spec)
    if spec.kind is str:
        if not isinstance(value, str):
            problems.append(f"{full} = {shown(value)}: must be text; allowed: {allowed}")
            return None
    elif spec.kind is bool:
        if not isinstance(value, bool):
            problems.append(f"{full} = {shown(value)}: must be true or false")
            return None
        return value
    elif isinstance(value, bool) or not isinstance(value, (int, float)):
        problems.append(f"{full} = {shown(value)}: must be a number; allowed: {allowed}")
        return None
    elif spec.kind is int:
        if not (isinstance(value, int) or (math.isfinite(value) and float(value) == int(value))):
            problems.append(f"{full} = {shown(value)}: must be a whole number; allowed: {allowed}")
            return None
        value = int(value)
    else:
        try:
            number = float(value)
        except OverflowError:               # an integer of hundreds of digits
            number = math.inf
        if not math.isfinite(number):
            problems.append(f"{full} = {shown(value)}: must be a finite number; allowed: {allowed}")
            return None
        value = number
    if spec.choices and value not in spec.choices:
        problems.append(f"{full} = {shown(value)}: not allowed{_hint(str(value), [str(c) for c in spec.choices])}; "
                        f"allowed: {allowed}")
        return None
    if not _in_range(value, spec):
        problems.append(f"{full} = {shown(value)}: out of range; allowed: {allowed}{_unit_hint(value, spec)}")
        return None
    return value


def _unit_hint(value, spec: Key) -> str:
    """A hint when the value would be in range in the unit a user may have typed it in."""
    if spec.unit == "1/K" and spec.high is not None and value > spec.high and _in_range(value * 1e-6, spec):
        # 12 for steel: the coefficient typed in µm/(m·K)
        return f" (1/K expected: {value:g} µm/(m·K) is {value * 1e-6:g} 1/K)"
    for unit, other, factor in (("mm", "m", 1000.0), ("MPa", "GPa", 1000.0), ("kg/m³", "g/cm³", 1000.0)):
        # only for a value far below the range: 0.1 for a 0.2 mm minimum is a thin part, not metres
        if spec.unit == unit and 0 < value * 10 < spec.low and _in_range(value * factor, spec):
            return f" ({spec.unit} expected: {value:g} {other} is {value * factor:g} {unit})"
    return ""


def _in_range(value, spec: Key) -> bool:
    if spec.kind in (str, bool):
        return True
    if spec.low is not None and (value < spec.low or (value == spec.low and not spec.low_inclusive)):
        return False
    if spec.high is not None and (value > spec.high or (value == spec.high and not spec.high_inclusive)):
        return False
    return True


def _fill_defaults(values: dict, kind: str) -> list[str]:
    """Fill in every default that can be computed; returns the keys derived from other keys."""
    values["kind"] = kind
    derived = []
    for table, keys in SCHEMA.items():
        for key, spec in keys.items():
            full = f"{table}.{key}" if table else key
            if full in values or full in values.invalid or kind not in spec.kinds:
                continue
            if table in ANALYSIS_TABLES and table not in values.tables_given:
                continue            # an analysis the case does not ask for: no defaults to check
            try:
                default = spec.default(values) if callable(spec.default) else spec.default
            except (KeyError, ZeroDivisionError, ValueError, OverflowError):
                default = None      # depends on a key that is itself invalid: reported elsewhere
            if default is not None:
                values[full] = default
                if callable(spec.default) and not _kind_only(spec, kind):
                    derived.append(full)
    return derived


def _kind_only(spec: Key, kind: str) -> bool:
    """Whether a default depends on the case kind alone (a plate's 90° face), not on other values."""
    try:
        spec.default({"kind": kind})
    except (KeyError, TypeError):
        return False
    return True
