"""Tolerance limit of one input: where the capacity falls to the design torque
(required torque x service factor), or the design peak pressure (the band mean, mesh-converged)
reaches the lining's allowable.

A scan over [low, high] brackets the first change of sign of the margin, then
bisection narrows the bracket.  Inputs that only move gaps or loads reuse one
condensed solver for every evaluation (evaluate.group_solver).
"""
from __future__ import annotations

import numpy as np

from .evaluate import evaluate, failure_reason

# Bisection stops when the bracket is this share of [low, high] wide.
BRACKET_SHARE = 1e-4
MAX_BISECTIONS = 40


def margin(outputs: dict, criterion: str) -> float:
    """> 0 acceptable, < 0 not: capacity over design torque, or allowable over peak pressure, minus 1."""
    if criterion == "required_torque":
        return outputs["torque_fe_Nm"] / outputs["design_torque_Nm"] - 1.0
    # the mesh-converged design peak, not the nodal edge value (which grows with refinement)
    return 1.0 / outputs["design_peak_over_allowable"] - 1.0


def find_limit(payload: dict, limit: dict) -> dict:
    """Worker task: the limit value of ``limit['key']`` with its bracket (plain dict for study.json)."""
    key, criterion = limit["key"], limit["criterion"]
    evaluations = []

    def at(x: float):
        try:
            m = margin(evaluate(payload["base_data"], payload["name"], {key: float(x)}), criterion)
        except Exception as exc:  # noqa: BLE001 - reported, the bracket skips it
            evaluations.append({"value": float(x), "margin": None, "reason": failure_reason(exc)})
            return None
        evaluations.append({"value": float(x), "margin": m})
        return m

    xs = np.linspace(limit["low"], limit["high"], limit["steps"])
    scan = [(float(x), at(x)) for x in xs]
    out = {"key": key, "criterion": criterion, "low": limit["low"], "high": limit["high"],
           "found": False, "limit": None, "bracket": None, "acceptable_side": None}
    known = [(x, m) for x, m in scan if m is not None]
    pair = next(((a, b) for a, b in zip(known, known[1:]) if (a[1] > 0) != (b[1] > 0)), None)
    if pair is None:
        side = "whole range acceptable" if known and all(m > 0 for _, m in known) else \
            "whole range short" if known else "no point of the range could be solved"
        out["note"] = f"no crossing in [{limit['low']:g}, {limit['high']:g}]: {side}"
    else:
        (a, ma), (b, mb) = pair
        for _ in range(MAX_BISECTIONS):
            if b - a <= BRACKET_SHARE * (limit["high"] - limit["low"]):
                break
            mid = 0.5 * (a + b)
            mm = at(mid)
            if mm is None:
                break                       # report the bracket reached so far
            if (mm > 0) == (ma > 0):
                a, ma = mid, mm
            else:
                b, mb = mid, mm
        out.update(found=True, limit=0.5 * (a + b), bracket=[a, b], margin_at_bracket=[ma, mb],
                   acceptable_side="below" if ma > 0 else "above")
    out["evaluations"] = evaluations
    return out
