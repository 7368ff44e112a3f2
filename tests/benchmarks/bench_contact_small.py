"""Contact solve versus one linear elastic solve of the same mesh (docs/solver-notes.md,
speed targets: ratio <= 1.5).  Prints ratios measured in this run; run from the repository root with
``python3 -m tests.benchmarks.bench_contact_small [h]``."""
import sys
import time

from clutchfe.fem import FaceLoad, SpringSupport, linear_solve, solve

from tests.helpers.models import Section, graded


def hertz_model(h):
    R, E, nu, P = 100.0, 210000.0, 0.3, 1500.0
    r = graded(0.0, 1.5, 40.0, h)
    s = Section().add_block("low", r, -r[::-1]).add_block("up", r, r)
    pair = s.pair("hertz", "low_top", "up_bottom", (0.0, 1.0))
    pair.initial_gap_function = lambda rr, zz: rr**2 / (2 * R)
    return s.model([E, E], [nu, nu], [False, True],
                   supports=[SpringSupport("low_bottom", None, 0.0)],
                   loads=[FaceLoad("up_top", -P)], contacts=[pair])


def best_of(fn, n=3):
    out = []
    for _ in range(n):
        t = time.perf_counter()
        res = fn()
        out.append((time.perf_counter() - t, res))
    return min(out, key=lambda x: x[0])


if __name__ == "__main__":
    h = float(sys.argv[1]) if len(sys.argv) > 1 else 0.05
    model = hertz_model(h)
    t_lin, (_, lin_timings) = best_of(lambda: linear_solve(model))
    t_con, res = best_of(lambda: solve(model))
    print(f"dofs {res.dofs}, contact nodes {res.interfaces[0].r.size}")
    print("linear:", {k: round(v, 3) for k, v in lin_timings.items()})
    print("contact:", {k: round(v, 3) for k, v in res.timings.items()})
    print(f"contact / linear (total) = {t_con / t_lin:.2f}")
    print(f"contact / linear (factorisation+solves only) = "
          f"{(res.timings['factorisation'] + res.timings['condensation'] + res.timings['contact']) / (lin_timings['factorisation'] + lin_timings['solve']):.2f}")
