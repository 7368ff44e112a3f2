"""Read a study file (TOML) into a validated :class:`Study`.

A study names a base case and the case keys to vary, as grids (a sweep) or as
distributions (tolerances).  Every problem is collected, one line each with the
key, the value and what is allowed; :class:`clutchfe.case.CaseError` carries them.
"""
from __future__ import annotations

import difflib
import hashlib
import math
from dataclasses import dataclass, field
from pathlib import Path

from ..case import Case, CaseError, load_case
from ..toml_input import read_toml, shown
from ..names import label_problem, safe_label
from ..schema import SCHEMA, STRENGTH_KEYS, THERMAL_KEYS, Key, describe_range

DISTRIBUTIONS = {                       # distribution -> its parameters
    "uniform": ("low", "high"),
    "normal": ("mean", "std_dev"),
    "truncated_normal": ("mean", "std_dev", "low", "high"),
    "lognormal": ("mean", "std_dev"),
}
GRID_KEYS = ("values", "start", "stop", "steps", "spacing")
METHODS = ("monte_carlo", "latin_hypercube")
CRITERIA = ("required_torque", "allowable_pressure")
# Outputs every sample records; statistics are always given for the first three.
OUTPUTS = {
    "torque_fe_Nm": "FE torque capacity",
    "capacity_position": "xi: 1 = uniform pressure, 0 = uniform wear",
    "peak_pressure_MPa": "peak contact pressure",
    "effective_radius_mm": "FE effective radius",
    "torque_uniform_pressure_Nm": "hand torque, uniform pressure",
    "torque_uniform_wear_Nm": "hand torque, uniform wear",
    "contact_area_fraction": "share of the friction face in contact",
    "capacity_margin_fe": "FE capacity over required torque x service factor, minus 1",
    "design_torque_Nm": "required torque x service factor",
    "peak_pressure_over_allowable": "nodal (edge) peak pressure / lining allowable pressure, for information",
    "design_peak_pressure_MPa": "design peak pressure: the highest mean over a band of 10 % of the face width",
    "design_peak_over_allowable": "design peak pressure / lining allowable pressure (the allowable criterion)",
    "engagement_force_N": "axial force to push the cone home",
    # the analyses a base case asks for run on every sample (blank where they do not apply)
    "torque_worn_in_Nm": "FE torque capacity after the wear-in ([wear] in the base case)",
    "capacity_position_worn_in": "xi after the wear-in",
    "peak_pressure_worn_in_MPa": "peak contact pressure after the wear-in",
    "tilt_moment_Nm": "moment on the guidance of a tilted or offset pressed part",
    "open_area_fraction": "share of the friction face open (tilted or offset case)",
    "torque_hot_worst_Nm": "least FE torque capacity while slipping ([engagement] in the base case)",
    "engagement_peak_temperature_C": "highest temperature of the section during the hot engagement",
    "effective_radius_shift_worst_mm": "hot minus cold FE effective radius at the worst instant",
    "speed_burst_margin": "least burst speed of the bodies over the running speed, minus 1 ([speed] in the base "
                          "case)",
    "peak_pressure_at_speed_MPa": "peak contact pressure at the running speed",
    "torque_with_spline_drag_Nm": "FE torque capacity of the pack with spline drag ([splines] in the base case)",
    "pack_efficiency": "torque with spline drag over the pack without it",
    "curve_nominal_deflection_mm": "deflection of a face's layer at W / A on the compression curve ([lining_curve] or "
                                   "[cushion] in the base case)",
    "torque_without_cushion_Nm": "torque of the same faces without the cushion springs ([cushion] in the base case)",
}
CORE_OUTPUTS = ("torque_fe_Nm", "capacity_position", "peak_pressure_MPa", "effective_radius_mm")
TOP_KEYS = ("name", "description", "base_case", "method", "samples", "seed", "outputs", "vary", "limit")
MAX_SAMPLES = 1_000_000

# The study-file reference (`clutchfe keys` prints it): one meaning per key, next to the keys the
# loader accepts, so the two cannot drift (tests/test_cli.py checks that they match).
TOP_KEY_MEANINGS = {
    "name": "study name, used for the results folder (default: the file name without .study.toml)",
    "description": "free text shown in the study's results",
    "base_case": "required: the case file whose keys are varied, relative to the study file",
    "method": "sampling of the distributions: \"latin_hypercube\" (default) or \"monte_carlo\"",
    "samples": "draws per grid point; required with distributions, not allowed without "
               f"(a whole number 2 … {MAX_SAMPLES})",
    "seed": "seed of the random draws (a whole number ≥ 0; default 0): the same seed, the same samples",
    "outputs": "extra output columns besides " + ", ".join(CORE_OUTPUTS) + "; allowed: " + ", ".join(OUTPUTS),
    "vary": "required: one [[vary]] table per case key to vary (keys below)",
    "limit": "optional [limit] table: scan and bisect one case key for the value where the criterion "
             "stops being met (keys below)",
}
VARY_KEY_MEANINGS = {
    "key": "required: the numeric case key to vary, \"table.key\" (see the case-file keys)",
    "values": "a sweep: the list of values to solve",
    "start": "a sweep from start …",
    "stop": "… to stop (both included) …",
    "steps": "… in this many values (a whole number 2 … 10000)",
    "spacing": "spacing of start … stop: \"linear\" (default) or \"log\"",
    "distribution": "a tolerance instead of a sweep: one of "
                    + ", ".join(f"{name} ({', '.join(params)})" for name, params in DISTRIBUTIONS.items()),
    "mean": "mean of the distribution (of the quantity itself for lognormal)",
    "std_dev": "standard deviation of the distribution, > 0 (of the quantity itself for lognormal)",
    "low": "lower bound: uniform, or where a truncated normal is cut",
    "high": "upper bound: uniform, or where a truncated normal is cut",
}
LIMIT_KEYS = ("key", "low", "high", "criterion", "steps")
LIMIT_KEY_MEANINGS = {
    "key": "required: the numeric case key whose limit is sought (of the base case's kind)",
    "low": "required: lower end of the range searched",
    "high": "required: upper end of the range searched",
    "criterion": "what must hold: " + " or ".join(f"\"{c}\"" for c in CRITERIA)
                 + " (default \"required_torque\"; the base case must give that requirement)",
    "steps": "scan points before the bisection (a whole number 2 … 200; default 9)",
}


def study_reference_markdown() -> str:
    """The study-file reference as a Markdown table (printed by `clutchfe keys`)."""
    lines = ["| key | meaning |", "|---|---|"]
    for prefix, table in (("", TOP_KEY_MEANINGS), ("vary.", VARY_KEY_MEANINGS), ("limit.", LIMIT_KEY_MEANINGS)):
        lines += [f"| `{prefix}{key}` | {meaning} |" for key, meaning in table.items()]
    return "\n".join(lines)


@dataclass(frozen=True)
class Grid:
    key: str
    values: tuple


@dataclass(frozen=True)
class Distribution:
    key: str
    kind: str                          # one of DISTRIBUTIONS
    params: dict


@dataclass(frozen=True)
class Limit:
    key: str
    low: float
    high: float
    criterion: str
    steps: int = 9                     # scan points before bisection


@dataclass(frozen=True)
class Study:
    name: str
    description: str
    source: Path
    base_case: Case
    base_data: dict                    # the base case file as read (overrides go on top)
    grids: tuple[Grid, ...]
    distributions: tuple[Distribution, ...]
    method: str
    samples: int                       # draws per grid point (1 for a pure sweep)
    seed: int
    outputs: tuple[str, ...]
    limit: Limit | None
    input_sha256: str = ""
    warnings: tuple = field(default=())

    @property
    def varied_keys(self) -> list[str]:
        return [g.key for g in self.grids] + [d.key for d in self.distributions]

    @property
    def grid_points(self) -> int:
        return math.prod(len(g.values) for g in self.grids)

    @property
    def planned(self) -> int:
        return self.grid_points * self.samples


def load_study(path: str | Path) -> Study:
    path = Path(path)
    data, raw = read_toml(path, "study file")      # the same limits as a case file
    return study_from_dict(data, path, hashlib.sha256(raw).hexdigest())


def study_from_dict(data: dict, path: Path, sha256: str = "") -> Study:
    problems: list[str] = []
    for key in data:
        if key not in TOP_KEYS:
            problems.append(f"{key}: unknown study key{_hint(key, TOP_KEYS)}; allowed: {', '.join(TOP_KEYS)}")
    base_case, base_data = _base_case(data, path, problems)
    grids, dists = [], []
    entries = data.get("vary", [])
    if not isinstance(entries, list) or not entries or not all(isinstance(e, dict) for e in entries):
        problems.append("vary: give at least one [[vary]] table with key = \"table.key\" and either values/"
                        "start-stop-steps (a sweep) or distribution = " + " | ".join(DISTRIBUTIONS))
        entries = []
    seen = set()
    for k, entry in enumerate(entries):
        item = _vary(entry, k, base_case, problems)
        if item is None:
            continue
        if item.key in seen:
            problems.append(f"vary[{k}].key = {shown(item.key)}: varied twice; allowed: each key once")
        seen.add(item.key)
        (grids if isinstance(item, Grid) else dists).append(item)
    method, samples, seed = _sampling(data, any("distribution" in e for e in entries), problems)
    outputs = _outputs(data, problems)
    limit = _limit(data.get("limit"), base_case, problems) if "limit" in data else None
    name = data.get("name", safe_label(path.name.removesuffix(".toml").removesuffix(".study"), "study"))
    bad_name = label_problem("name", name)      # the name becomes the results folder
    if bad_name:
        problems.append(bad_name)
    grid_points = math.prod(len(g.values) for g in grids) if grids else 1
    if grid_points * samples > MAX_SAMPLES:
        problems.append(f"samples: the plan has {grid_points * samples} samples; allowed: at most {MAX_SAMPLES}")
    if problems:
        raise CaseError(problems)
    return Study(name=name, description=str(data.get("description", "")), source=path, base_case=base_case,
                 base_data=base_data, grids=tuple(grids), distributions=tuple(dists), method=method,
                 samples=samples, seed=seed, outputs=outputs, limit=limit, input_sha256=sha256)


def _hint(word: str, options) -> str:
    if len(str(word)) > 60:         # no near match is that long; difflib is quadratic in it
        return ""
    close = difflib.get_close_matches(str(word), list(options), n=1, cutoff=0.6)
    return f" (did you mean {close[0]}?)" if close else ""


def _base_case(data: dict, path: Path, problems: list[str]):
    ref = data.get("base_case")
    if not isinstance(ref, str):
        problems.append(f"base_case = {shown(ref)}: required; the case file to vary, relative to the study file")
        return None, {}
    case_path = (path.parent / ref) if not Path(ref).is_absolute() else Path(ref)
    try:
        case = load_case(case_path)
    except CaseError as exc:
        problems.extend(f"base_case {ref}: {p}" for p in exc.problems)
        return None, {}
    data = read_toml(case_path)[0]
    if case.section_file is not None:
        # the samples are validated from these tables, not from the file: the drawing by its full path
        data["section_file"]["path"] = str(case.section_file.path)
    return case, data


def case_key(full: str) -> Key | None:
    table, _, key = full.rpartition(".")
    return SCHEMA.get(table, {}).get(key) if table else None


def _vary(entry: dict, k: int, base: Case | None, problems: list[str]):
    where = f"vary[{k}]"
    full = entry.get("key")
    spec = case_key(full) if isinstance(full, str) else None
    if spec is None:
        options = [f"{t}.{n}" for t in SCHEMA if t for n in SCHEMA[t]]
        problems.append(f"{where}.key = {shown(full)}: not a case key{_hint(full, options)}; allowed: a numeric "
                        "case key such as interface.friction_coefficient (see `clutchfe keys`)")
        return None
    if spec.kind not in (int, float) or spec.choices:
        problems.append(f"{where}.key = {shown(full)}: only numeric keys can be varied; this one is "
                        f"{describe_range(spec)}")
        return None
    if base is not None and base.kind not in spec.kinds:
        problems.append(f"{where}.key = {shown(full)}: belongs to {' or '.join(spec.kinds)} cases; the base case is "
                        f"kind = {shown(base.kind)}")
        return None
    unused = _unused_by_base(full, base)
    if unused:
        problems.append(f"{where}.key = {shown(full)}: {unused}")
        return None
    if full.endswith("_stiffness") and base is not None and base.support.type != "springs":
        problems.append(f"{where}.key = {shown(full)}: the base case's support.type = {shown(base.support.type)} ignores it; "
                        "allowed: set support.type = 'springs' in the base case")
        return None
    allowed = {"key", "distribution", *GRID_KEYS, *{p for ps in DISTRIBUTIONS.values() for p in ps}}
    for extra in sorted(set(entry) - allowed):
        problems.append(f"{where}.{extra}: unknown{_hint(extra, allowed)}; allowed: key, values | start, stop, "
                        "steps, spacing | distribution with its parameters")
    if "distribution" in entry:
        return _distribution(entry, where, full, spec, problems)
    return _grid(entry, where, full, spec, problems)


def _unused_by_base(full: str, base: Case | None) -> str:
    """Why the base case would not use the key (every sample would be the same, or invalid), or ''.
    The hot engagement's keys (its tables and every material's thermal properties) vary like any other
    key, on a base case that asks for it."""
    if base is None:
        return ""
    table, _, key = full.rpartition(".")
    if key == "density":
        # read by the hot engagement and by the speed analysis's centrifugal load
        if base.engagement is None and base.speed is None:
            return ("only the hot engagement and the speed analysis use it and the base case has no [engagement] "
                    "table and no [speed] table; allowed: add one of them to the base case")
    elif (table in ("engagement", "cooling") or key in THERMAL_KEYS) and base.engagement is None:
        return ("only the hot engagement uses it and the base case has no [engagement] table; allowed: add "
                "[engagement] to the base case")
    if (table == "speed" or key in STRENGTH_KEYS) and base.speed is None:
        return ("only the speed analysis uses it and the base case has no [speed] table; allowed: add [speed] to "
                "the base case")
    if table in ("lining_curve", "cushion") and getattr(base, table) is None:
        return (f"only the compression curves use it and the base case has no [{table}] table; allowed: add "
                f"[{table}] to the base case")
    if table == "splines" and base.splines is None:
        return ("only the spline drag uses it and the base case has no [splines] table; allowed: add [splines] to "
                "the base case")
    if key in ("driven_inertia", "drag_torque") and table == "engagement" \
            and base.engagement.speed_law != "inertia":
        return (f"only used with engagement.speed_law = 'inertia' (the base case has "
                f"{base.engagement.speed_law!r}); allowed: set speed_law = 'inertia' in the base case")
    if key in THERMAL_KEYS and base.section_file is not None and table != "lining":
        return "the base case draws its section: the bodies' thermal properties are in its [section_file] regions"
    if key in STRENGTH_KEYS and base.section_file is not None and table != "lining":
        return "the base case draws its section: the bodies' strengths are in its [section_file] regions"
    return ""


def _number(entry: dict, name: str, where: str, problems: list[str]) -> float | None:
    value = entry.get(name)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        problems.append(f"{where}.{name} = {shown(value)}: must be a finite number")
        return None
    return float(value)


def _inside(value: float, spec: Key) -> bool:
    low_ok = spec.low is None or value > spec.low or (spec.low_inclusive and value == spec.low)
    high_ok = spec.high is None or value < spec.high or (spec.high_inclusive and value == spec.high)
    return low_ok and high_ok


def _grid(entry: dict, where: str, full: str, spec: Key, problems: list[str]) -> Grid | None:
    if "values" in entry:
        values = entry["values"]
        if not isinstance(values, list) or not values:
            problems.append(f"{where}.values = {shown(values)}: must be a non-empty list of numbers")
            return None
        nums = [_number({"v": v}, "v", f"{where}.values", problems) for v in values]
        if None in nums:
            return None
    else:
        start, stop = _number(entry, "start", where, problems), _number(entry, "stop", where, problems)
        steps, spacing = entry.get("steps"), entry.get("spacing", "linear")
        if not isinstance(steps, int) or isinstance(steps, bool) or not 2 <= steps <= 10000:
            problems.append(f"{where}.steps = {shown(steps)}: allowed: a whole number 2 ≤ steps ≤ 10000")
            return None
        if spacing not in ("linear", "log"):
            problems.append(f"{where}.spacing = {shown(spacing)}: allowed: 'linear' or 'log'")
            return None
        if start is None or stop is None:
            return None
        if spacing == "log" and (start <= 0 or stop <= 0):
            problems.append(f"{where}: log spacing needs start > 0 and stop > 0 (start = {start:g}, stop = {stop:g})")
            return None
        nums = _spaced(start, stop, steps, spacing)
    if spec.kind is int:
        if any(v != int(v) for v in nums):
            problems.append(f"{where}.values: {full} takes whole numbers; allowed: {describe_range(spec)}")
            return None
        nums = [int(v) for v in nums]
    bad = [v for v in nums if not _inside(v, spec)]
    if bad:
        problems.append(f"{where}.values: {full} = {bad[0]:g} out of range; allowed: {describe_range(spec)}")
        return None
    return Grid(full, tuple(nums))


def _spaced(start: float, stop: float, steps: int, spacing: str) -> list[float]:
    import numpy as np
    if spacing == "log":
        return [float(v) for v in np.geomspace(start, stop, steps)]
    return [float(v) for v in np.linspace(start, stop, steps)]


def _distribution(entry: dict, where: str, full: str, spec: Key, problems: list[str]) -> Distribution | None:
    kind = entry["distribution"]
    if kind not in DISTRIBUTIONS:
        problems.append(f"{where}.distribution = {shown(kind)}: not known{_hint(kind, DISTRIBUTIONS)}; allowed: "
                        + ", ".join(DISTRIBUTIONS))
        return None
    if spec.kind is int:
        problems.append(f"{where}.key = {shown(full)}: takes whole numbers; vary it as a sweep (values = [...])")
        return None
    names = DISTRIBUTIONS[kind]
    for extra in sorted(set(entry) & (set(GRID_KEYS) | {p for ps in DISTRIBUTIONS.values() for p in ps})
                        - set(names)):
        problems.append(f"{where}.{extra}: not a parameter of a {kind} distribution; allowed: {', '.join(names)}")
    params = {n: _number(entry, n, where, problems) for n in names}
    if None in params.values():
        return None
    if "std_dev" in params and params["std_dev"] <= 0:
        problems.append(f"{where}.std_dev = {params['std_dev']:g}: allowed: value > 0")
        return None
    if "low" in params and not params["low"] < params["high"]:
        problems.append(f"{where}.low = {params['low']:g}: must be below high = {params['high']:g}")
        return None
    if kind == "truncated_normal" and not params["low"] <= params["mean"] <= params["high"]:
        problems.append(f"{where}.mean = {params['mean']:g}: allowed: low ≤ mean ≤ high "
                        f"({params['low']:g} … {params['high']:g})")
        return None
    if kind == "lognormal" and params["mean"] <= 0:
        problems.append(f"{where}.mean = {params['mean']:g}: a lognormal quantity is positive; allowed: value > 0")
        return None
    for bound in ("low", "high"):
        if bound in params and not _inside(params[bound], spec):
            problems.append(f"{where}.{bound} = {params[bound]:g}: outside the range of {full}; allowed: "
                            f"{describe_range(spec)}")
            return None
    return Distribution(full, kind, params)


def _sampling(data: dict, has_dists: bool, problems: list[str]) -> tuple[str, int, int]:
    method = data.get("method", "latin_hypercube")
    if method not in METHODS:
        problems.append(f"method = {shown(method)}: allowed: {', '.join(METHODS)}{_hint(method, METHODS)}")
    seed = data.get("seed", 0)
    if not isinstance(seed, int) or isinstance(seed, bool) or not 0 <= seed < 2**63:
        problems.append(f"seed = {shown(seed)}: allowed: a whole number 0 ≤ seed < 2^63")
        seed = 0
    if not has_dists:
        if "samples" in data:
            problems.append(f"samples = {shown(data['samples'])}: only used with distributions; a sweep solves each "
                            "grid point once")
        return method, 1, seed
    samples = data.get("samples")
    if not isinstance(samples, int) or isinstance(samples, bool) or not 2 <= samples <= MAX_SAMPLES:
        problems.append(f"samples = {shown(samples)}: required with distributions; allowed: a whole number "
                        f"2 ≤ samples ≤ {MAX_SAMPLES} (per grid point)")
        samples = 2
    return method, samples, seed


def _outputs(data: dict, problems: list[str]) -> tuple[str, ...]:
    chosen = data.get("outputs", [])
    if not isinstance(chosen, list):
        problems.append(f"outputs = {shown(chosen)}: must be a list of output names; allowed: {', '.join(OUTPUTS)}")
        return CORE_OUTPUTS
    for name in chosen:
        if name not in OUTPUTS:
            problems.append(f"outputs: {shown(name)} is not an output{_hint(name, OUTPUTS)}; allowed: "
                            + ", ".join(OUTPUTS))
    return CORE_OUTPUTS + tuple(n for n in OUTPUTS if n in chosen and n not in CORE_OUTPUTS)


def _limit(entry, base: Case | None, problems: list[str]) -> Limit | None:
    if not isinstance(entry, dict):
        problems.append("[limit]: must be a table with key, low, high and criterion")
        return None
    for extra in sorted(set(entry) - set(LIMIT_KEYS)):
        problems.append(f"limit.{extra}: unknown; allowed: {', '.join(LIMIT_KEYS)}")
    full = entry.get("key")
    spec = case_key(full) if isinstance(full, str) else None
    ignored = full.endswith("_stiffness") and base is not None and base.support.type != "springs" \
        if isinstance(full, str) else False
    if isinstance(full, str) and spec is not None and (full.partition(".")[0] in ("engagement", "cooling", "speed", "splines")
                                                       or full.rpartition(".")[2] in (*THERMAL_KEYS, *STRENGTH_KEYS)):
        # the limit criteria are the cold ones (required torque, allowable pressure): these keys do not move them
        problems.append(f"limit.key = {shown(full)}: the limit criteria are read on the cold case at rest, which "
                        "the hot engagement's, the speed analysis's and the spline drag's keys do not change; allowed: vary it with "
                        "[[vary]] instead")
        return None
    if spec is None or spec.kind is not float or (base is not None and base.kind not in spec.kinds) \
            or ignored:
        problems.append(f"limit.key = {shown(full)}: allowed: a numeric case key of this case kind, e.g. "
                        "misalignment.cone_angle_mismatch, misalignment.coning, support.axial_stiffness")
        return None
    low, high = _number(entry, "low", "limit", problems), _number(entry, "high", "limit", problems)
    criterion = entry.get("criterion", "required_torque")
    steps = entry.get("steps", 9)
    if criterion not in CRITERIA:
        problems.append(f"limit.criterion = {shown(criterion)}: allowed: {', '.join(CRITERIA)}")
        return None
    if not isinstance(steps, int) or isinstance(steps, bool) or not 2 <= steps <= 200:
        problems.append(f"limit.steps = {shown(steps)}: allowed: a whole number 2 ≤ steps ≤ 200")
        return None
    if low is None or high is None:
        return None
    if not low < high:
        problems.append(f"limit.low = {low:g}: must be below limit.high = {high:g}")
        return None
    for name, value in (("low", low), ("high", high)):
        if not _inside(value, spec):
            problems.append(f"limit.{name} = {value:g}: outside the range of {full}; allowed: {describe_range(spec)}")
            return None
    if base is not None:
        need = ("requirement.required_torque" if criterion == "required_torque" else "lining.allowable_pressure")
        table, _, key = need.partition(".")
        if getattr(getattr(base, table), key) is None:
            problems.append(f"limit.criterion = {shown(criterion)}: the base case gives no {need}; set it there")
            return None
    return Limit(full, low, high, criterion, steps)


def input_column(key: str) -> str:
    """CSV column of a varied case key, with its unit (N/mm -> N_per_mm, N·m -> Nm)."""
    unit = case_key(key).unit
    slug = unit.replace("/", "_per_").replace("·", "").replace("³", "3").replace("(", "").replace(")", "")
    return f"{key}_{slug}" if unit else key
