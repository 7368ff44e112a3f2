"""Solve study samples, reusing one condensed solver per geometry and stiffness.

Runs on the workers.  Samples that differ only in loads, friction coefficient,
requirement or axisymmetric misalignment share a *group*: the worker builds the
group's :class:`clutchfe.fem.ContactSolver` (mesh, assembly, one factorisation)
once and re-solves the small contact problem per sample with the sample's
initial gaps and load scale.
"""
from __future__ import annotations

import copy
import dataclasses
import hashlib
import json
import math
import os
import socket
import threading
import time
from collections import OrderedDict

import numpy as np

from ..case import Case, CaseError, case_from_dict

# Keys that change neither geometry nor stiffness: how each reaches the reused solver.
COMPARISON_ONLY = ("interface.friction_coefficient", "requirement.required_torque", "requirement.service_factor",
                   "lining.allowable_pressure", "name", "description")
LOAD_LEVEL = ("load.axial_force",)
INITIAL_GAP = ("misalignment.cone_angle_mismatch", "misalignment.coning")
REUSABLE = COMPARISON_ONLY + LOAD_LEVEL + INITIAL_GAP
# The group's solver is built at this force with no misalignment, whichever sample comes first,
# so results do not depend on how samples were spread over workers.
REFERENCE_FORCE = 1000.0        # N
# Solvers kept per worker process; a group's solver of the default demo is a few MB.
CACHE_SIZE = 4

_cache: OrderedDict = OrderedDict()
_lock = threading.Lock()
_stats = {"factorisations": 0, "solves": 0}


def sample_case(base_data: dict, overrides: dict, name: str) -> Case:
    """The base case with the sample's values put in (validated like any case file)."""
    data = copy.deepcopy(base_data)
    for full, value in overrides.items():
        table, _, key = full.partition(".")
        data.setdefault(table, {})[key] = value
    return case_from_dict(data, default_name=name)


def group_key(case: Case) -> str:
    """Same key = same mesh, same stiffness: one solver serves them all."""
    fixed = {k: v for k, v in case.flat().items() if k not in REUSABLE}
    return hashlib.sha256(json.dumps(fixed, sort_keys=True, default=str).encode()).hexdigest()[:16]


def initial_gap_ends(case: Case, interfaces: int) -> list[tuple[float, float]]:
    """Initial normal gap (mm) at r1 and r2 of every interface, linear in between.

    Mirrors geometry/cone.py (cone-angle mismatch opens L sin|d alpha| at one end) and
    geometry/plates.py (coning opens the last interface, the pressure plate's);
    test_study checks the reused solve against a fresh solve of the same case.
    """
    m = case.misalignment
    if case.kind == "cone":
        itf = case.interface
        mismatch = math.radians(m.cone_angle_mismatch)
        slant = (itf.outer_radius - itf.inner_radius) / math.sin(math.radians(itf.semi_cone_angle))
        opening = slant * math.sin(abs(mismatch))
        return [(opening if mismatch < 0 else 0.0, opening if mismatch > 0 else 0.0)]
    ends = [(0.0, 0.0)] * interfaces
    ends[-1] = (0.0, m.coning) if m.coning >= 0 else (-m.coning, 0.0)
    return ends


def reference_case(case: Case) -> Case:
    """The group's case at the reference force with zero initial gaps (every sample passes its own)."""
    return dataclasses.replace(
        case, load=dataclasses.replace(case.load, axial_force=REFERENCE_FORCE),
        misalignment=dataclasses.replace(case.misalignment, cone_angle_mismatch=0.0, coning=0.0))


class GroupSolver:
    """The condensed solver of one group and the interface lines its gaps are measured on."""

    def __init__(self, case: Case):
        from .. import fem
        from ..geometry import mesh_section
        from ..pipeline import PhysicsError, fe_model_of, section_of

        self.case = case
        section = section_of(case)
        try:
            self.solver = fem.ContactSolver(fe_model_of(case, section, mesh_section(section, order=1)))
        except fem.ContactError as exc:
            raise PhysicsError(str(exc)) from None
        self.lines = [(np.asarray(i.start, float), i.slant_length) for i in section.interfaces]
        # position along each face (0 at r1, 1 at r2) of every FE node, as fe_model_of measures it
        # (clipped: a node a hair past r2 must not get a negative gap)
        self.along = [np.clip(np.linalg.norm(xy.T - start, axis=1) / length, 0.0, 1.0)
                      for xy, (start, length) in zip(self.solver.interface_nodes, self.lines)]

    def gaps(self, case: Case) -> list[np.ndarray]:
        ends = initial_gap_ends(case, len(self.along))
        return [gs + (ge - gs) * t for (gs, ge), t in zip(ends, self.along)]

    def solve(self, case: Case):
        from .. import fem
        from ..pipeline import PhysicsError
        scale = case.load.axial_force / self.case.load.axial_force
        try:
            return self.solver.solve(gaps=self.gaps(case), load_scale=scale, fields=False)
        except fem.ContactError as exc:
            raise PhysicsError(str(exc)) from None


def group_solver(case: Case, key: str) -> GroupSolver:
    with _lock:                                  # one build per group per worker
        if key in _cache:
            _cache.move_to_end(key)
            return _cache[key]
        solver = GroupSolver(reference_case(case))
        _stats["factorisations"] += 1
        _cache[key] = solver
        while len(_cache) > CACHE_SIZE:
            _cache.popitem(last=False)
        return solver


def clear_solvers() -> None:
    """Forget this process's cached solvers."""
    with _lock:
        _cache.clear()


def outputs_of(case: Case, fe) -> dict:
    """The recorded outputs of one solved sample (units in the names)."""
    from ..comparison import compare
    from ..pipeline import hand_of

    req = case.requirement
    result = compare(fe.interfaces, hand_of(case), req.required_torque, req.service_factor)
    out = {k: float(result[k]) for k in ("torque_fe_Nm", "capacity_position", "peak_pressure_MPa",
                                         "effective_radius_mm", "torque_uniform_pressure_Nm",
                                         "torque_uniform_wear_Nm", "contact_area_fraction", "engagement_force_N")}
    design = req.required_torque * req.service_factor if req.required_torque else None
    out["design_torque_Nm"] = design
    out["capacity_margin_fe"] = result["capacity_margin_fe"]
    allowable = case.lining.allowable_pressure
    out["peak_pressure_over_allowable"] = out["peak_pressure_MPa"] / allowable if allowable else None
    out["shortfall"] = None if design is None else int(out["torque_fe_Nm"] < design)
    bad = [k for k, v in out.items() if v is not None and not math.isfinite(v)]
    if bad:
        raise ValueError(f"non-finite output {bad[0]}")
    return out


def evaluate(base_data: dict, name: str, overrides: dict, key: str | None = None) -> dict:
    """Outputs of one sample; raises CaseError / PhysicsError for a sample that cannot be solved."""
    case = sample_case(base_data, overrides, name)
    solver = group_solver(case, key or group_key(case))
    fe = solver.solve(case)
    _stats["solves"] += 1
    return outputs_of(case, fe)


def failure_reason(exc: BaseException) -> str:
    from ..pipeline import PhysicsError
    if isinstance(exc, CaseError):
        return "invalid input: " + "; ".join(exc.problems)
    if isinstance(exc, PhysicsError):
        return f"cannot solve: {exc}"
    return f"internal error (a bug): {type(exc).__name__}: {exc}"


def solve_chunk(payload: dict, chunk: list) -> list[dict]:
    """Worker task: solve a list of (sample id, overrides, group key); never raises for one sample."""
    worker = f"{socket.gethostname()}:{os.getpid()}"
    out = []
    for sample_id, overrides, key in chunk:
        t0 = time.perf_counter()
        try:
            outputs, status, reason = evaluate(payload["base_data"], payload["name"], overrides, key), "done", None
        except Exception as exc:  # noqa: BLE001 - one failed sample must not stop the study
            outputs, status, reason = None, "failed", failure_reason(exc)
        out.append({"sample_id": sample_id, "status": status, "outputs": outputs, "reason": reason,
                    "seconds": time.perf_counter() - t0, "worker": worker})
    return out


def worker_stats() -> dict:
    return dict(_stats)
