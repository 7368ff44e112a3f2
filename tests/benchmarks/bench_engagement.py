"""The coupled thermo-elastic engagement (fem/engagement.py) against one cold contact solve.

On the mesh of the plate demo (cases/plate_tractor.toml, prepared by the solve service), with a heat
model built here (cast-iron plates, a steel disc core with its two facings; values from memory, as
in any handbook table: cast iron k 50 W/(m·K), 7200 kg/m³, 500 J/(kg·K), α 11e-6/K; steel 50,
7850, 460, 12e-6; facing 0.5 W/(m·K), 2000 kg/m³, 1000 J/(kg·K), α 20e-6/K), convection
50 W/(m²·K) on the plates' backs, both friction pairs slipping (μ = 0.30, tied faces).  Prints the
CPU time (time.process_time, best of the repeats) of

- one cold contact solve: ContactSolver(model) + solve(fields=False), the yardstick;
- a 1 s linear-decay engagement from 150 rad/s in 100 steps (target ≤ 5 x the cold solve);
- ten such engagements with 2 s dwells of 20 steps (target ≤ 30 x),

with the coupling iterations (contact solves per step), the largest residual, the energy balance
and the steps the direct coupled solve handed to the staggered iteration (its fallback).
Measured in this one run; nothing is asserted.

    python3 -m tests.benchmarks.bench_engagement [case.toml]      (from the repository root)
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

from clutchfe.case import load_case
from clutchfe.fem import ContactSolver
from clutchfe.fem.engagement import FrictionHeating, SlipDuty, run_engagement
from clutchfe.fem.heat import (Convection, HeatModel, conductivity_from_si, film_coefficient_from_si,
                               heat_capacity_from_si)
from clutchfe.solve import SolveService
from tests.benchmarks.timing import REPEATS, best

DEMO = Path(__file__).resolve().parents[2] / "cases" / "plate_tractor.toml"
MU = 0.30
MATERIALS = {   # k W/(m·K), ρ kg/m³, c J/(kg·K), α 1/K (from memory)
    "cast_iron": (50.0, 7200.0, 500.0, 11e-6),
    "steel": (50.0, 7850.0, 460.0, 12e-6),
    "facing": (0.5, 2000.0, 1000.0, 20e-6),
}


def heat_model(model, facing_modulus):
    """Per triangle: the disc's facings (the triangles of the facing's Young's modulus) against
    its steel core, cast iron for the plates."""
    disc = model.body_names.index("disc1")
    body = np.asarray(model.element_body)
    facing = (body == disc) & np.isclose(model.element_youngs_modulus, facing_modulus)
    kind = np.where(facing, "facing", np.where(body == disc, "steel", "cast_iron"))
    k = np.array([conductivity_from_si(MATERIALS[m][0]) for m in kind])
    rc = np.array([heat_capacity_from_si(MATERIALS[m][1], MATERIALS[m][2]) for m in kind])
    alpha = np.array([MATERIALS[m][3] for m in kind])
    h = film_coefficient_from_si(50.0)
    cooled = [Convection(f, h, 20.0) for f in ("counter_plate_back", "pressure_plate_back")]
    return HeatModel(model, k, rc, 20.0, cooled), alpha


def main(path=DEMO) -> None:
    case = load_case(path)
    model = SolveService().prepare(case).model
    heat, alpha = heat_model(model, case.lining.youngs_modulus)
    heating = [FrictionHeating(p.name, MU) for p in model.contacts]

    def torque(fe):      # N·mm, μ Σ λ r over both faces
        return MU * float(sum(np.sum(i.normal_force * i.r) for i in fe.interfaces))

    t_cold, (solver, cold) = best(lambda: (lambda s: (s, s.solve(fields=False)))(ContactSolver(model)))
    print(f"{path.name}: {cold.dofs} dofs, {solver.g0.size} contact nodes, "
          f"{heat.model.points.shape[1]} heat nodes; one cold contact solve {t_cold:.3f} s CPU "
          f"(best of {REPEATS})")
    runs = {
        "1 s engagement, 100 steps": (SlipDuty(150.0, 1.0, "linear"), 5.0),
        "10 engagements + dwells": (SlipDuty(150.0, 1.0, "linear", engagements=10, dwell_time=2.0), 30.0),
    }
    print(f"{'run':<27} {'steps':>5} {'CPU s':>7} {'/ cold':>7} {'target':>6} {'iterations':>10} "
          f"{'max residual':>12} {'peak K':>7} {'balance':>9} {'fixed-point':>11}")
    for name, (duty, target) in runs.items():
        t_run, hist = best(lambda: run_engagement(ContactSolver(model), heat, alpha, heating, duty, torque),
                           repeats=REPEATS if duty.engagements == 1 else 1)
        its = np.array([s.coupling_iterations for s in hist.steps])
        print(f"{name:<27} {len(hist.steps):>5} {t_run:>7.3f} {t_run / t_cold:>7.1f} {target:>6.0f} "
              f"{its.mean():>6.2f} avg {max(s.coupling_residual for s in hist.steps):>12.2e} "
              f"{max(s.peak_rise for s in hist.steps):>7.1f} {hist.energy.balance_error:>9.1e} "
              f"{sum(s.coupling == 'fixed-point' for s in hist.steps):>11d}")
        sys.stdout.flush()


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else DEMO)
