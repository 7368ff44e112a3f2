"""Solve study samples: each one is ``plan.analyse`` of the sample's case, on the worker's solve service.

Runs on the workers.  Samples of one stiffness group (same mesh and stiffness: they differ
only in force, μ, misalignment, requirement, wear duty …) share the service's prepared
model, so the mesh, assembly and factorisation are done once per group and worker; every
sample still runs exactly what ``clutchfe run`` runs for its case (tilt, offset and wear-in
included), so a sample equals the single run of the same case.
"""
from __future__ import annotations

import copy
import math
import os
import socket
import time

from ..case import Case, CaseError, case_from_dict
from ..errors import PhysicsError
from ..plan import analyse, summary_of
from ..solve import SolveService, stiffness_key
from .spec import OUTPUTS

# One service per worker process: its cache holds the prepared models of the recent groups.
_service = SolveService()
_stats = {"solves": 0}


def sample_case(base_data: dict, overrides: dict, name: str) -> Case:
    """The base case with the sample's values put in (validated like any case file)."""
    data = copy.deepcopy(base_data)
    for full, value in overrides.items():
        table, _, key = full.partition(".")
        data.setdefault(table, {})[key] = value
    return case_from_dict(data, default_name=name)


def group_key(case: Case) -> str:
    """Same key = same mesh, same stiffness: one prepared model serves them all."""
    return stiffness_key(case)


def clear_solvers() -> None:
    """Forget this process's prepared models."""
    _service.clear()


def outputs_of(summary: dict, case: Case) -> dict:
    """The recorded outputs of one solved sample, read from its run summary (units in the names)."""
    out = {k: (None if summary.get(k) is None else float(summary[k])) for k in OUTPUTS
           if k not in ("design_torque_Nm",)}
    req = case.requirement
    design = req.required_torque * req.service_factor if req.required_torque else None
    out["design_torque_Nm"] = design
    # the capacity the clutch can count on: after a wear-in the worn-in one too
    capacity = min(v for v in (out["torque_fe_Nm"], out.get("torque_worn_in_Nm")) if v is not None)
    out["shortfall"] = None if design is None else int(capacity < design)
    bad = [k for k, v in out.items() if v is not None and not math.isfinite(v)]
    if bad:
        raise ValueError(f"non-finite output {bad[0]}")
    return out


def evaluate(base_data: dict, name: str, overrides: dict, key: str | None = None) -> dict:
    """Outputs of one sample; raises CaseError / PhysicsError for a sample that cannot be solved.
    (``key``, the group key the planner computed, is accepted for the workers' bookkeeping.)"""
    case = sample_case(base_data, overrides, name)
    result = analyse(case, _service, fields=False)
    _stats["solves"] += 1
    return outputs_of(summary_of(result), case)


def failure_reason(exc: BaseException) -> str:
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
    return {"factorisations": _service.preparations, **_stats}
