"""Study pictures: capacity histogram, capacity against its drivers, sweep response curves.

matplotlib's object interface on the Agg canvas (no pyplot state, no display).
"""
from __future__ import annotations

import itertools
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from .spec import Study, input_column

TORQUE_LABEL = "FE torque capacity [N·m]"
CURVE_OUTPUTS = (("torque_fe_Nm", TORQUE_LABEL), ("capacity_position", "capacity position ξ [-]"),
                 ("peak_pressure_MPa", "peak contact pressure [MPa]"))
MAX_CURVES = 8


def _figure(w: float, h: float) -> Figure:
    fig = Figure(figsize=(w, h), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _save(fig: Figure, folder: Path, name: str) -> str:
    tmp = folder / f".{name}.writing.png"
    fig.savefig(tmp, dpi=110)
    tmp.replace(folder / name)
    return name


def _axis_label(key: str) -> str:
    col = input_column(key)
    return f"{key} [{col[len(key) + 1:].replace('_per_', '/')}]" if col != key else key


def histogram(folder: Path, study: Study, done: list[dict], s: dict) -> str:
    t = np.array([r["outputs"]["torque_fe_Nm"] for r in done])
    fig = _figure(7.0, 4.2)
    ax = fig.add_subplot()
    ax.hist(t, bins=min(40, max(5, int(np.sqrt(t.size)))), color="0.6", edgecolor="0.3", label="FE samples")
    marks = [("base_case_torque_uniform_pressure_Nm", "uniform pressure (base case)", "tab:blue", "--"),
             ("base_case_torque_uniform_wear_Nm", "uniform wear (base case)", "tab:green", "-."),
             ("base_case_design_torque_Nm", "required x service factor", "tab:red", "-")]
    for key, label, colour, style in marks:
        if s.get(key) is not None:
            ax.axvline(s[key], color=colour, ls=style, lw=1.8, label=f"{label}: {s[key]:.4g} N·m")
    p = s.get("probability_below_required")
    note = "" if p is None else (f"; P(below required) = {p:.3g} "
                                 f"[{s['probability_below_required_low']:.3g}, {s['probability_below_required_high']:.3g}]")
    ax.set_title(f"{study.name}: {t.size} solved samples{note}", fontsize=9)
    ax.set_xlabel(TORQUE_LABEL)
    ax.set_ylabel("samples")
    ax.legend(fontsize=8)
    return _save(fig, folder, "capacity_histogram.png")


def drivers_scatter(folder: Path, study: Study, done: list[dict], s: dict) -> str | None:
    top = [d["key"] for d in s["drivers_of_torque_fe_Nm"][:3]]
    if not top:
        return None
    t = np.array([r["outputs"]["torque_fe_Nm"] for r in done])
    short = np.array([bool(r["outputs"]["shortfall"]) for r in done])
    fig = _figure(4.0 * len(top), 3.8)
    for k, key in enumerate(top):
        ax = fig.add_subplot(1, len(top), k + 1)
        x = np.array([r["inputs"][key] for r in done])
        ax.scatter(x[~short], t[~short], s=8, color="tab:blue", label="meets the requirement")
        if short.any():
            ax.scatter(x[short], t[short], s=8, color="tab:red", label="below required x service factor")
        if s.get("base_case_design_torque_Nm") is not None:
            ax.axhline(s["base_case_design_torque_Nm"], color="tab:red", lw=1)
        rho = s["drivers_of_torque_fe_Nm"][k]["rank_correlation"]
        ax.set_title(f"rank correlation {rho:+.2f}", fontsize=9)
        ax.set_xlabel(_axis_label(key), fontsize=8)
        ax.set_ylabel(TORQUE_LABEL if k == 0 else "")
        if k == 0:
            ax.legend(fontsize=7)
    return _save(fig, folder, "capacity_drivers.png")


def response_curves(folder: Path, study: Study, done: list[dict]) -> str | None:
    """Outputs against the first swept key; one line per combination of the other swept keys."""
    if not study.grids or len(study.grids[0].values) < 2:
        return None
    first, others = study.grids[0], study.grids[1:]
    fig = _figure(7.0, 8.0)
    axes = [fig.add_subplot(len(CURVE_OUTPUTS), 1, k + 1) for k in range(len(CURVE_OUTPUTS))]
    combos = list(itertools.product(*(g.values for g in others)))[:MAX_CURVES]
    x = np.array(first.values, dtype=float)
    for combo in combos:
        label = ", ".join(f"{g.key} = {v:g}" for g, v in zip(others, combo)) or None
        members = [r for r in done if all(r["inputs"][g.key] == v for g, v in zip(others, combo))]
        for ax, (out, ylabel) in zip(axes, CURVE_OUTPUTS):
            per = [[r["outputs"][out] for r in members if r["inputs"][first.key] == v] for v in first.values]
            has = np.array([bool(p) for p in per])
            if not has.any():
                continue
            mid = np.array([np.median(p) if p else 0.0 for p in per])
            line, = ax.plot(x[has], mid[has], "o-", ms=4, label=label)
            if study.distributions:
                lo = np.array([np.quantile(p, 0.05) if p else 0.0 for p in per])
                hi = np.array([np.quantile(p, 0.95) if p else 0.0 for p in per])
                ax.fill_between(x[has], lo[has], hi[has], color=line.get_color(), alpha=0.2)
            ax.set_ylabel(ylabel, fontsize=8)
    if x.min() > 0 and x.max() / x.min() > 20:
        for ax in axes:
            ax.set_xscale("log")
    axes[-1].set_xlabel(_axis_label(first.key))
    band = " (median, 5–95 % band of the tolerance samples)" if study.distributions else ""
    axes[0].set_title(f"{study.name}: response to {first.key}{band}", fontsize=9)
    if others:
        axes[0].legend(fontsize=7)
    return _save(fig, folder, "response_curves.png")


def draw_all(folder: Path, study: Study, rows: list[dict], summary: dict) -> list[str]:
    done = [r for r in rows if r["status"] == "done"]
    if len(done) < 2:
        return []
    names = [histogram(folder, study, done, summary), drivers_scatter(folder, study, done, summary),
             response_curves(folder, study, done)]
    return [n for n in names if n]
