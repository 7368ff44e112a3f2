"""The verification cases, run as one table: quantity, computed, reference, error, tolerance, source.

A case is one entry of CASES: a title and a function returning its Check rows.  A new case
(uniform-wear limit, harmonics against a 3D solve, ...) is one more entry here.

:func:`run_verification` (``clutchfe verify``) always runs the suite afresh and stores the table
for runs (:mod:`.store`); a run reads the stored table and never runs the suite itself.
"""
from __future__ import annotations

import csv
import math
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from .checks import Check
from .store import VerificationRows, json_row, store_table
from .compression import straight_curve_is_the_linear_lining, tangent_stiffness_is_the_slope, uniform_stack_on_the_curve
from .contact import hertz_sphere_on_flat, rigid_flat_punch
from .limits import linear_gap, load_linearity, thin_lining_limit
from .solids import lame_cylinder
from .speed import mean_hoop_and_burst, omega_squared_law, rotating_disc, thin_ring
from .spline_drag import no_spline_friction, rigid_pack_decay
from .thermal import (energy_conservation, free_expansion, hollow_cylinder_log_law, plane_slab, semi_infinite_flux,
                      thermal_coning)
from .tilted import harmonic_vs_solid, winkler_small_tilt
from .wear_limit import uniform_wear_limit


@dataclass(frozen=True)
class VerificationCase:
    title: str
    run: Callable[[], list[Check]]


CASES: list[VerificationCase] = [
    VerificationCase("Lamé thick cylinder", lame_cylinder),
    VerificationCase("Hertz sphere on flat", hertz_sphere_on_flat),
    VerificationCase("rigid flat punch", rigid_flat_punch),
    VerificationCase("thin lining on rigid bodies (elastic-foundation limit)", thin_lining_limit),
    VerificationCase("rigid-backed lining with a linear gap", linear_gap),
    VerificationCase("linearity in force and friction coefficient", load_linearity),
    VerificationCase("uniform-wear limit (Archard wear-in of a Winkler lining)", uniform_wear_limit),
    VerificationCase("lining under a small axis tilt (elastic-foundation limit)", winkler_small_tilt),
    VerificationCase("axis tilt: harmonics against a 3D solve", harmonic_vs_solid),
    # heat (fem/heat.py) and the thermal-strain load (fem/thermal_strain.py): together 0.13-0.21 s CPU (measured)
    VerificationCase("semi-infinite body under a constant surface flux", semi_infinite_flux),
    VerificationCase("plane slab with a contact conductance (steady)", plane_slab),
    VerificationCase("hollow cylinder, steady radial conduction (log law)", hollow_cylinder_log_law),
    VerificationCase("energy of a slip transient with convection", energy_conservation),
    VerificationCase("free thermal expansion under a uniform rise", free_expansion),
    VerificationCase("thermal coning of a free plate (linear through-thickness rise)", thermal_coning),
    # speed (fem/centrifugal.py): together 0.08 s CPU (measured, the four cases in one process, imports apart)
    VerificationCase("rotating annular disc, plane stress, free edges", rotating_disc),
    VerificationCase("thin rotating ring", thin_ring),
    VerificationCase("mean hoop stress of a free spinning body and its burst speed", mean_hoop_and_burst),
    VerificationCase("stresses proportional to ω² (linearity in the load)", omega_squared_law),
    VerificationCase("spline drag: pack of rigid plates against the closed-form load decay", rigid_pack_decay),
    VerificationCase("spline drag: no spline friction gives the pack without it", no_spline_friction),
    VerificationCase("compression curve: a straight curve is the linear lining", straight_curve_is_the_linear_lining),
    VerificationCase("compression curve: a uniform stack lands on the curve at W / A", uniform_stack_on_the_curve),
    VerificationCase("compression curve: tangent stiffness under a small extra load", tangent_stiffness_is_the_slope),
]

_memo: dict[tuple, tuple] = {}
_SHIPPED = tuple((c.title, c.run) for c in CASES)     # only the shipped registry's table is stored for runs


def run_cases(cases: list[VerificationCase] | None = None) -> list[Check]:
    """Every case's rows; a case that raises gives one failed row naming the error (never a crash)."""
    rows: list[Check] = []
    for case in (CASES if cases is None else cases):
        try:
            rows.extend(case.run())
        except Exception as exc:  # noqa: BLE001 - a broken case is a failed verification, reported as such
            rows.append(Check(case.title, f"case did not run: {type(exc).__name__}: {exc}", math.nan, math.nan,
                              math.inf, "relative", 0.0, "—"))
    return rows


def run_verification(out_dir: str | Path | None = None, store: bool | None = None) -> tuple[list[Check], bool]:
    """Run the suite afresh; with ``out_dir`` also write verification.json and verification.csv there.

    ``store`` (default: when the registry is the shipped one, not a test's stand-in) also stores the
    table in the per-user cache for runs (:func:`.store.store_table`); the returned rows then carry
    ``stored_at``, the file written."""
    start = time.perf_counter()
    rows = VerificationRows(run_cases())
    passed = bool(rows) and all(r.passed for r in rows)
    _memo[_registry_key()] = (rows, passed)
    seconds = time.perf_counter() - start
    if out_dir is not None:
        write_table(Path(out_dir), rows, passed, seconds)
    rows.stored_at = None
    if store if store is not None else _registry_key() == _SHIPPED:
        rows.stored_at = store_table(rows, passed, seconds)
    return rows, passed


def verification_rows() -> tuple[list[Check], bool]:
    """The suite's rows, run once per process (``clutchfe verify`` and tests; a run reads the stored table)."""
    if _registry_key() not in _memo:
        run_verification()
    return _memo[_registry_key()]


def _registry_key() -> tuple:
    # a changed registry (a test's stand-in cases) must not hand its rows to a report
    return tuple((c.title, c.run) for c in CASES)


def write_table(folder: Path, rows: list[Check], passed: bool, seconds: float) -> None:
    from ..output.folders import write_json
    from ..provenance import versions

    folder.mkdir(parents=True, exist_ok=True)
    write_json(folder / "verification.json", {
        "all_passed": passed, "seconds": round(seconds, 2), "versions": versions(),
        "rows": [json_row(r) for r in rows]})
    with open(folder / "verification.csv", "w", newline="", encoding="utf-8") as fh:
        out = csv.writer(fh)
        out.writerow(["case", "quantity", "computed", "reference", "error", "error_kind", "tolerance", "source",
                      "passed"])
        for r in rows:
            out.writerow([r.case, r.quantity, f"{r.computed:.10g}", f"{r.reference:.10g}", f"{r.error:.6g}",
                          r.error_kind, f"{r.tolerance:.6g}", r.source, "pass" if r.passed else "FAIL"])


def format_error(r: Check) -> str:
    if not math.isfinite(r.error):
        return "—"
    return f"{100 * r.error:.3g} %" if r.error_kind == "relative" else f"{r.error:.3g}"


def format_tolerance(r: Check) -> str:
    return f"{100 * r.tolerance:.3g} %" if r.error_kind == "relative" else f"{r.tolerance:.3g}"


def print_verification(rows: list[Check], passed: bool, console=None) -> None:
    """The table on the terminal, one row per check, and a closing line."""
    from rich.console import Console
    from rich.markup import escape
    from rich.table import Table

    console = console or Console(highlight=False)
    table = Table(title="clutchfe verification: FE results against closed forms")
    for name, justify in (("quantity", "left"), ("computed", "right"), ("reference", "right"), ("error", "right"),
                          ("tolerance", "right"), ("source", "left"), ("result", "left")):
        table.add_column(name, justify=justify, overflow="fold")
    case = None
    for r in rows:
        if r.case != case:
            case = r.case
            table.add_row(escape(case), style="bold", end_section=False)
        cells = ("  " + r.quantity, f"{r.computed:.6g}", f"{r.reference:.6g}", format_error(r), format_tolerance(r),
                 r.source, "pass" if r.passed else "FAIL")
        table.add_row(*(escape(c) for c in cells), style=None if r.passed else "bold red")
    console.print(table)
    failed = sum(not r.passed for r in rows)
    console.print(f"{len(rows) - failed} passed, {failed} failed" if rows else "no verification rows ran",
                  markup=False, style=None if passed else "bold red")
    stored = getattr(rows, "stored_at", None)
    if stored is not None:
        console.print(f"table stored for runs of this code and these versions: {stored}", markup=False)
