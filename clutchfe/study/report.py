"""What a study tells: tables, statistics, shortfall probability, drivers, study.json.

Each file is written beside the store under a scratch name and renamed into
place, so a reader never sees half a file.
"""
from __future__ import annotations

import csv
import math
import os
from pathlib import Path

import numpy as np
from scipy import stats

from ..output.folders import clean_json, write_json
from ..comparison import hand_of
from ..provenance import CAUTION, __version__, versions
from .plots import draw_all
from .spec import OUTPUTS, Study, input_column

CONFIDENCE = 0.95
QUANTILES = (0.05, 0.5, 0.95)


def wilson_interval(k: int, n: int, confidence: float = CONFIDENCE) -> tuple[float, float]:
    """Score interval for a binomial proportion (Wilson 1927, JASA 22:209): sound at k = 0 or k = n.
    scipy.stats.binomtest(k, n).proportion_ci(method="wilson"), two-sided."""
    if n == 0:
        raise ValueError("no samples")
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=confidence, method="wilson")
    return float(ci.low), float(ci.high)


def table_rows(study: Study, rows: list[dict]) -> tuple[list[str], list[dict]]:
    """One flat row per stored sample: id, status, inputs, outputs, shortfall, reason."""
    keys = study.varied_keys
    columns = ["sample_id", "status", *(input_column(k) for k in keys), *study.outputs, "shortfall", "reason"]
    flat = []
    for r in rows:
        out = r["outputs"] or {}
        row = {"sample_id": r["sample_id"], "status": r["status"], "reason": r["reason"] or ""}
        row.update({input_column(k): r["inputs"].get(k) for k in keys})
        row.update({k: out.get(k) for k in study.outputs})
        row["shortfall"] = out.get("shortfall")
        flat.append(row)
    return columns, flat


def statistics(values: np.ndarray) -> dict:
    if values.size == 0:
        return {"count": 0}
    q = np.quantile(values, QUANTILES)
    return {"count": int(values.size), "mean": float(values.mean()),
            "std_dev": float(values.std(ddof=1)) if values.size > 1 else 0.0,
            "min": float(values.min()), "p05": float(q[0]), "p50": float(q[1]), "p95": float(q[2]),
            "max": float(values.max())}


def drivers(study: Study, done: list[dict], output: str = "torque_fe_Nm") -> list[dict]:
    """Varied inputs ranked by |Spearman rank correlation| with the output (scipy.stats.spearmanr)."""
    y = np.array([r["outputs"][output] for r in done])
    ranked = []
    for key in study.varied_keys:
        x = np.array([r["inputs"][key] for r in done], dtype=float)
        if x.size < 3 or np.ptp(x) == 0 or np.ptp(y) == 0:
            continue
        rho = float(stats.spearmanr(x, y).statistic)
        if math.isfinite(rho):
            ranked.append({"key": key, "rank_correlation": rho})
    return sorted(ranked, key=lambda d: -abs(d["rank_correlation"]))


def shortfall(done: list[dict]) -> dict:
    flags = [r["outputs"]["shortfall"] for r in done if r["outputs"]["shortfall"] is not None]
    if not flags:
        return {"probability_below_required": None, "probability_below_required_low": None,
                "probability_below_required_high": None}
    k, n = int(sum(flags)), len(flags)
    low, high = wilson_interval(k, n)
    return {"probability_below_required": k / n, "probability_below_required_low": low,
            "probability_below_required_high": high, "samples_below_required": k,
            "confidence_level": CONFIDENCE,
            "probability_method": "share of solved samples with torque_fe_Nm < design_torque_Nm (required torque "
                                  "x service factor); bounds: Wilson score interval (Wilson 1927)"}


def _replace(path: Path, write) -> None:
    tmp = path.with_name(f".{path.name}.writing-{os.getpid()}")
    write(tmp)
    os.replace(tmp, path)


def write_csv(path: Path, columns: list[str], rows: list[dict]) -> None:
    def write(tmp):
        with open(tmp, "w", newline="", encoding="utf-8") as fh:
            w = csv.DictWriter(fh, fieldnames=columns)
            w.writeheader()
            w.writerows({c: ("" if row.get(c) is None else row.get(c)) for c in columns} for row in rows)
    _replace(path, write)


def write_parquet(path: Path, columns: list[str], rows: list[dict]) -> None:
    import pyarrow as pa
    import pyarrow.parquet as pq
    table = pa.table({c: [row.get(c) for row in rows] for c in columns})
    _replace(path, lambda tmp: pq.write_table(table, tmp))


def summary_of(study: Study, rows: list[dict], run: dict, limit) -> dict:
    done = [r for r in rows if r["status"] == "done"]
    failed = [r for r in rows if r["status"] == "failed"]
    base = study.base_case
    hand = hand_of(base)
    req = base.requirement
    summary = {
        "study_name": study.name, "description": study.description, "input_sha256": study.input_sha256,
        "base_case": base.source, "base_case_sha256": base.input_sha256, "version": __version__,
        "method": study.method if study.distributions else "sweep", "seed": study.seed,
        "varied": {"grids": {g.key: list(g.values) for g in study.grids},
                   "distributions": {d.key: {"distribution": d.kind, **d.params} for d in study.distributions}},
        "samples_planned": study.planned, "samples_done": len(done), "samples_failed": len(failed),
        "samples_missing": study.planned - len(rows), "complete": len(rows) == study.planned,
    }
    summary.update(shortfall(done))
    summary["base_case_design_torque_Nm"] = req.required_torque * req.service_factor if req.required_torque else None
    summary["base_case_torque_uniform_pressure_Nm"] = hand.torque_uniform_pressure_Nm
    summary["base_case_torque_uniform_wear_Nm"] = hand.torque_uniform_wear_Nm
    summary["statistics"] = {k: statistics(np.array([r["outputs"][k] for r in done
                                                     if r["outputs"][k] is not None], dtype=float))
                             for k in study.outputs}
    summary["drivers_of_torque_fe_Nm"] = drivers(study, done)
    summary["tolerance_limit"] = limit
    reasons: dict[str, int] = {}
    for r in failed:
        reasons[r["reason"]] = reasons.get(r["reason"], 0) + 1
    summary["failure_reasons"] = [{"reason": k, "samples": v} for k, v in sorted(reasons.items(), key=lambda i: -i[1])]
    summary["run"] = {**run, "samples_per_second": (len(rows) - run.get("resumed_with", 0))
                      / max(run.get("seconds", 0.0), 1e-9)}
    summary["output_meanings"] = {k: OUTPUTS[k] for k in study.outputs}
    summary["versions"] = versions()
    summary["caution"] = CAUTION
    return summary


def write_results(folder: Path, study: Study, store, run: dict, console) -> dict:
    rows = store.rows()
    columns, flat = table_rows(study, rows)
    write_csv(folder / "samples.csv", columns, flat)
    write_parquet(folder / "samples.parquet", columns, flat)
    summary = summary_of(study, rows, run, store.meta("limit"))
    summary["pictures"] = draw_all(folder, study, rows, summary)
    summary["files"] = ["samples.sqlite", "samples.csv", "samples.parquet", "study.json", *summary["pictures"]]
    _replace(folder / "study.json", lambda tmp: write_json(tmp, clean_json(summary)))
    print_summary(console, summary, folder)
    return summary


def print_summary(console, s: dict, folder: Path) -> None:
    line = (f"study {s['study_name']!r}: {s['samples_done']} done, {s['samples_failed']} failed, "
            f"{s['samples_missing']} missing of {s['samples_planned']} planned")
    console.print(line, markup=False)
    t = s["statistics"].get("torque_fe_Nm", {})
    if t.get("count"):
        console.print(f"FE torque capacity: mean {t['mean']:.4g} N·m, 5 % {t['p05']:.4g}, 95 % {t['p95']:.4g} N·m "
                      f"(hand at the base case: uniform pressure {s['base_case_torque_uniform_pressure_Nm']:.4g}, "
                      f"uniform wear {s['base_case_torque_uniform_wear_Nm']:.4g} N·m)", markup=False)
    if s["probability_below_required"] is not None:
        console.print(f"probability below the required torque x service factor: {s['probability_below_required']:.4g} "
                      f"({CONFIDENCE:.0%} interval {s['probability_below_required_low']:.4g} … "
                      f"{s['probability_below_required_high']:.4g})", markup=False)
    lim = s.get("tolerance_limit")
    if lim:
        if lim["found"]:
            console.print(f"tolerance limit of {lim['key']} ({lim['criterion'].replace('_', ' ')}): {lim['limit']:.6g} "
                          f"in [{lim['bracket'][0]:.6g}, {lim['bracket'][1]:.6g}], acceptable {lim['acceptable_side']}",
                          markup=False)
        else:
            console.print(f"tolerance limit of {lim['key']}: {lim['note']}", markup=False)
    if not s["complete"]:
        console.print("the study is not complete: run it again to finish the missing samples", markup=False)
    console.print(f"results: {folder}/ ({', '.join(s['files'])})", markup=False)
    console.print(f"caution: {s['caution']}", markup=False)
