"""The run plan: the stages of one run, called in order, and the summary written once at the end.

    case ──► geometry (section) ──► solve service (mesh, condense, solve) ──► comparison
         ──► analyses (tilt, wear-in) ──► evidence (mesh study, verification table)
         ──► files and pictures ──► report ──► summary.json

:func:`analyse` is everything that is computed for a case (no files); a study sample is
exactly that call on the sample's case.  :func:`run_case` adds the evidence and writes the
results folder atomically.  No stage registers itself anywhere: this module is the list.

Start-up: the solve service, the analyses and the verification stage (scikit-fem, scipy's
sparse solvers, optimisation and quadrature: over a second of CPU to import) are imported in
the functions that call them, so ``clutchfe check``, which needs only :func:`section_of` and
:func:`print_check`, starts without them (DEVELOPERS.md, "Start-up").
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from rich.progress import Progress
from rich.table import Table

from .case import Case
from .comparison import Comparison, HandCapacity, compare_solved, hand_of
from .errors import CaseError, PhysicsError
from .budget import check_mesh_budget, contact_nodes, finest_factor
from .geometry import build_section, estimate_triangles, mesh_section, section_picture, write_mesh
from .output import atomic_folder, print_table, write_all, write_json
from .provenance import CAUTION, __version__, versions

if TYPE_CHECKING:       # the types only; the stages themselves where they run (start-up, see above)
    from .analyses.tilt import TiltResult
    from .analyses.wear import WearRun
    from .analyses.engagement import EngagementRun
    from .analyses.speed import SpeedResult
    from .analyses.pack import PackResult
    from .analyses.compression import CompressionResult
    from .solve import SolvedCase, SolveService
    from .verification import TableOrigin


@dataclass(frozen=True)
class CaseResult:
    """Everything the stages found for one case, before any file is written."""

    solved: SolvedCase
    hand: HandCapacity
    comparison: Comparison
    tilt: TiltResult | None = None      # the case has an axis tilt or a radial offset
    wear: WearRun | None = None         # the case has a [wear] table
    engagement: EngagementRun | None = None     # the case has an [engagement] table (hot engagement)
    speed: SpeedResult | None = None            # the case has a [speed] table (running speed)
    pack: PackResult | None = None              # the case has a [splines] table (spline drag of the pack)
    compression: CompressionResult | None = None    # the case gives a [lining_curve] or a [cushion]

    @property
    def case(self) -> Case:
        return self.solved.case


@dataclass(frozen=True)
class Evidence:
    """What backs the numbers of a run: the mesh study and the solver's verification table.

    The table is the one ``clutchfe verify`` stored for this code and these versions; when it is
    missing or stale the rows are empty, ``verification_passed`` is False and
    ``verification_origin`` says which and why (a run never runs the suite itself)."""

    mesh_study: dict
    verification_rows: list
    verification_passed: bool

    @property
    def verification_origin(self) -> TableOrigin:
        from .verification import TableOrigin      # start-up (module docstring)

        return getattr(self.verification_rows, "origin", None) or TableOrigin("fresh")


def section_of(case: Case):
    """The case's (r, z) section (GeometryError, an input error, when it cannot be drawn; CaseError when
    its mesh controls would need a mesh larger than a run may: :mod:`clutchfe.budget`)."""
    section = build_section(case)
    check_mesh_budget(case, section)
    return section


def wants_wear(case: Case) -> bool:
    return "wear" in case.tables_given


def wants_engagement(case: Case) -> bool:
    return "engagement" in case.tables_given


def wants_speed(case: Case) -> bool:
    return "speed" in case.tables_given


def wants_pack(case: Case) -> bool:
    return "splines" in case.tables_given


def wants_compression(case: Case) -> bool:
    return case.lining_curve_points is not None or case.cushion_points is not None


def analyse(case: Case, service: SolveService | None = None, fields: bool = True, progress=None) -> CaseResult:
    """Solve, compare and run every analysis the case asks for (no files).

    Parameters
    ----------
    case : Case
        A validated case (:func:`clutchfe.load_case`, :func:`clutchfe.case_from_dict`).
    service : SolveService, optional
        The solve service to use; a study passes its worker's, so a stiffness group is
        prepared (meshed, condensed) once.  A new one by default.
    fields : bool
        False skips the displacement and stress fields (the interface results stay).

    Returns
    -------
    CaseResult
        The solved case, the hand methods, the comparison, and the tilt and wear-in
        results when the case asks for them.

    Examples
    --------
    >>> from clutchfe import analyse, case_from_dict
    >>> case = case_from_dict({"kind": "plate", "interface": {"inner_radius": 50.0, "outer_radius": 75.0,
    ...     "friction_coefficient": 0.3, "friction_surfaces": 2}, "load": {"axial_force": 3000.0},
    ...     "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8}})
    >>> result = analyse(case, fields=False)
    >>> 50.0 < result.comparison.effective_radius_mm < 75.0     # always inside [r1, r2]
    True
    >>> result.tilt is None and result.wear is None
    True
    """
    from .solve import SolveService      # start-up (module docstring)

    service = service if service is not None else SolveService()
    step = progress or (lambda description: None)
    step("solving the contact")
    solved = service.solve(case, fields=fields)
    hand = hand_of(case)
    comparison = compare_solved(solved, hand)
    tilt = wear = None
    if solved.tilted is not None:
        from .analyses.tilt import tilt_result      # start-up (module docstring)
        tilt = tilt_result(solved)
    if wants_wear(case):
        from .analyses.wear import wear_in_case     # start-up (module docstring)
        step("wearing the interface in")
        wear = wear_in_case(solved, hand)
    engagement = None
    if wants_engagement(case):
        from .analyses.engagement import engagement_of_case     # start-up (module docstring)
        step("hot engagement (time steps)")
        bar = getattr(progress, "time_steps", None)
        engagement = engagement_of_case(solved, hand, progress=bar("time steps of the engagement") if bar else None)
    speed = None
    if wants_speed(case):
        from .analyses.speed import speed_of_case       # start-up (module docstring)
        step("at the running speed")
        speed = speed_of_case(solved, hand)
    pack = None
    if wants_pack(case):
        from .analyses.pack import pack_of_case     # start-up (module docstring)
        step("spline drag of the pack")
        pack = pack_of_case(solved, hand)
    compression = None
    if wants_compression(case):
        from .analyses.compression import compression_of_case     # start-up (module docstring)
        step("operating point on the compression curve")
        compression = compression_of_case(solved, hand, comparison.torque_fe_Nm)
    return CaseResult(solved, hand, comparison, tilt, wear, engagement, speed, pack, compression)


def gather_evidence(result: CaseResult, service: SolveService, progress=None) -> Evidence:
    """The mesh study of the run's case (unless switched off) and the stored verification table
    (read, never run here: ``clutchfe verify`` makes it once per installed version and code hash)."""
    from .verification import load_table      # start-up (module docstring)

    step = progress or (lambda description: None)
    step("mesh study (two finer meshes)" if result.case.verification.mesh_study else "mesh study (switched off)")
    study = _mesh_study_or_reason(result, service)
    step("verification table")
    rows, passed = load_table()
    return Evidence(study, rows, passed)


def _mesh_study_or_reason(result: CaseResult, service: SolveService) -> dict:
    from .verification.mesh_study import mesh_study      # start-up (module docstring)

    if not result.case.verification.mesh_study:
        return {"skipped": "switched off in the case ([verification] mesh_study = false)"}
    try:
        return mesh_study(result.solved, result.comparison, service)
    except (CaseError, PhysicsError) as exc:
        # a coarser mesh that cannot be built or solved is a finding of the study, not a failed run
        reason = "; ".join(exc.problems) if isinstance(exc, CaseError) else str(exc)
        return {"skipped": f"a coarser mesh could not be solved: {reason}"}


def print_check(case: Case, section, console) -> None:
    itf = case.interface
    table = Table(title=f"case {case.name!r} ({case.kind}) is valid", show_header=False)
    table.add_row("friction surface", f"r1 = {itf.inner_radius:g} mm, r2 = {itf.outer_radius:g} mm, "
                  f"semi-cone angle = {itf.semi_cone_angle:g} deg")
    table.add_row("friction", f"mu = {itf.friction_coefficient:g} on {itf.friction_surfaces} surface(s)")
    table.add_row("axial force", f"{case.load.axial_force:g} N ({case.load.application})")
    table.add_row("bodies", ", ".join(f"{b.label} ({b.role})" for b in section.bodies))
    if case.section_file is not None:
        linings = sorted({r.body for r in section.regions if r.lining_layers})
        table.add_row("section file", f"{case.section_file.path} (sha256 {case.section_file_sha256[:16]}…), "
                      f"{len(section.regions)} regions, faces: {', '.join(sorted(section.face_names()))}")
        table.add_row("lining", f"drawn, E = {case.lining.youngs_modulus:g} MPa, on the "
                      f"{', '.join(linings) or 'no body (none drawn)'}")
    else:
        table.add_row("lining", f"{case.lining.thickness:g} mm, E = {case.lining.youngs_modulus:g} MPa, "
                      f"on the {case.lining.bonded_to}")
    triangles, factor = estimate_triangles(section), finest_factor(case)
    table.add_row("mesh (estimated)", f"about {triangles} triangles, {contact_nodes(section, case.mesh.element_order)} "
                  f"contact nodes" + (f"; the mesh study's finest about {triangles * factor:.0f} triangles"
                                      if factor > 1 else "") + " (within the limits of docs/limits.md)")
    table.add_row("input sha256", case.input_sha256[:16] + "…")
    console.print(table)



def mesh_case(case: Case, section, folder: Path, console) -> None:
    mesh = mesh_section(section, order=case.mesh.element_order)
    with atomic_folder(folder, kind="mesh") as tmp:
        write_mesh(mesh, tmp / "mesh.vtu")
        section_picture(section, mesh, tmp / "section.png",
                        title=f"{case.name}: {len(mesh.triangles)} triangles (order {mesh.order}), "
                              f"{len(mesh.points)} nodes")
        write_json(tmp / "mesh.json", {
            "case_name": case.name, "input_sha256": case.input_sha256, "versions": versions(),
            "element_order": mesh.order, "triangles": len(mesh.triangles), "nodes": len(mesh.points),
            "faces": {name: len(seg) for name, seg in sorted(mesh.faces.items())},
            "interface_node_pairs": {k: len(v) for k, v in mesh.interface_pairs.items()},
            "caution": CAUTION})
    console.print(f"mesh of {case.name!r}: {len(mesh.triangles)} triangles, {len(mesh.points)} nodes, "
                  f"{len(mesh.faces)} named faces -> {folder}/mesh.vtu, {folder}/section.png")



class _Steps:
    """The progress bar of one run, naming each step; ``listener`` (if any) hears each step too."""

    def __init__(self, progress: Progress, total: int, listener=None):
        self.progress, self.task = progress, progress.add_task("meshing the section", total=total)
        self.listener = listener
        self.say("meshing the section")

    def say(self, description: str) -> None:
        if self.listener is not None:
            self.listener(description)

    def __call__(self, description: str) -> None:
        self.progress.update(self.task, advance=1, description=description)
        self.say(description)

    def time_steps(self, description: str):
        """A second bar for a long analysis's own steps: returns its callback ``(done, total)``."""
        task = self.progress.add_task(description, total=None)

        def advance(done: int, total: int) -> None:
            self.progress.update(task, completed=done, total=total)
        return advance


def run_case(case: Case, folder: Path, console, service: SolveService | None = None, on_step=None) -> dict:
    """The whole run of one case: analyse, gather the evidence, write the results folder.

    Parameters
    ----------
    case : Case
        A validated case.
    folder : Path
        The results folder: new, empty, or one clutchfe wrote (anything else is refused
        with :class:`OutputFolderError`); replaced in one rename when everything is written.
    console : rich.console.Console
        Where the progress bar and the result table go.
    service : SolveService, optional
        The solve service (a new one by default).
    on_step : callable, optional
        Called with the name of each step as it starts (meshing, solving, mesh study, …).

    Returns
    -------
    dict
        summary.json as written (see README, "What summary.json holds").
    """
    from .output.report import write_report      # start-up (module docstring)
    from .solve import SolveService

    service = service if service is not None else SolveService()
    with Progress(transient=True, console=console) as progress:
        step = _Steps(progress, total=8 + wants_engagement(case) + wants_speed(case) + wants_pack(case)
                      + wants_compression(case), listener=on_step)
        service.prepare(case)
        result = analyse(case, service, progress=step)
        evidence = gather_evidence(result, service, progress=step)
        summary = summary_of(result, evidence)
        step("pictures and files")
        with atomic_folder(folder) as tmp:
            write_case_files(result, tmp)
            step("report")
            summary["report_pdf"] = write_report(case, summary, tmp, evidence.verification_rows,
                                                 evidence.verification_passed, report_sections(result, summary, tmp))
            write_json(tmp / "summary.json", summary)       # once, last: every stage has spoken
        step("done")
    extra_tables = []
    if result.wear is not None:
        from .analyses.wear import wear_table       # start-up (module docstring)
        extra_tables.append(wear_table(summary))
    if result.engagement is not None:
        from .analyses.engagement import engagement_table       # start-up (module docstring)
        extra_tables.append(engagement_table(summary))
    if result.speed is not None:
        from .analyses.speed import speed_table     # start-up (module docstring)
        extra_tables.append(speed_table(summary))
    if result.pack is not None:
        from .analyses.pack import pack_table       # start-up (module docstring)
        extra_tables.append(pack_table(summary))
    if result.compression is not None:
        from .analyses.compression import compression_table     # start-up (module docstring)
        extra_tables.append(compression_table(summary))
    print_table(console, case, summary, folder, extra_tables=extra_tables)
    return summary


def report_sections(result: CaseResult, summary: dict, folder: Path) -> dict:
    """The report section of each analysis that ran, by name."""
    sections = {}
    if result.tilt is not None:
        from .analyses.tilt.report import tilt_section      # start-up (module docstring)
        sections["tilt"] = tilt_section(summary, folder)
    if result.wear is not None:
        from .analyses.wear.report import wear_section      # start-up (module docstring)
        sections["wear"] = wear_section(summary, folder, result.wear.results[-1].verdict)
    if result.engagement is not None:
        from .analyses.engagement.report import engagement_section      # start-up (module docstring)
        sections["engagement"] = engagement_section(summary, folder, summary.get("engagement_warnings", []))
    if result.speed is not None:
        from .analyses.speed.report import speed_section        # start-up (module docstring)
        sections["speed"] = speed_section(summary, folder, summary.get("speed_warnings", []))
    if result.pack is not None:
        from .analyses.pack.report import pack_section      # start-up (module docstring)
        sections["pack"] = pack_section(summary, folder, summary.get("pack_warnings", []))
    if result.compression is not None:
        from .analyses.compression.report import compression_section    # start-up (module docstring)
        sections["compression"] = compression_section(summary, folder, summary.get("curve_warnings", []))
    return sections


def write_case_files(result: CaseResult, folder: Path) -> None:
    """Every file of the stages and analyses except summary.json and the report."""
    solved = result.solved
    write_all(folder, result.case, solved.section, solved.mesh, solved.fe, result.comparison,
              axisymmetric=result.tilt is None)
    if result.tilt is not None:
        from .analyses.tilt import write_tilt_files     # start-up (module docstring)
        write_tilt_files(result.tilt, folder)
    if result.wear is not None:
        from .analyses.wear import write_wear_files     # start-up (module docstring)
        write_wear_files(result.wear, result.case, result.hand, folder)
    if result.engagement is not None:
        from .analyses.engagement import write_engagement_files     # start-up (module docstring)
        write_engagement_files(result.engagement, result.case, result.hand, solved.mesh, folder)
    if result.speed is not None:
        from .analyses.speed import write_speed_files       # start-up (module docstring)
        write_speed_files(result.speed, result.case, result.hand, solved.mesh, solved.fe, folder)
    if result.pack is not None:
        from .analyses.pack import write_pack_files     # start-up (module docstring)
        write_pack_files(result.pack, result.case, result.hand, folder)
    if result.compression is not None:
        from .analyses.compression import write_compression_files     # start-up (module docstring)
        write_compression_files(result.compression, solved.fe, result.hand, folder)


def _run_verdict(summary: dict, result: CaseResult, evidence: Evidence | None) -> None:
    """The verdict of the whole run: the comparison's, the worn-in state's, and every failed
    criterion of the run named (allowable pressure, partial contact, required torque, mesh
    convergence), in the verdict and in the warnings alike."""
    failed = list(result.comparison.failed_criteria)
    verdict = [result.comparison.verdict]
    if result.wear is not None:
        worn = result.wear.results[-1]
        verdict.append("Worn in: " + worn.verdict)
        failed += [f"{name} (worn in)" for name in worn.failed_criteria if f"{name} (worn in)" not in failed]
        for w in worn.warnings:
            if w.startswith("WARNING") and f"Worn in: {w}" not in summary["warnings"]:
                summary["warnings"].append(f"Worn in: {w}")
    if result.engagement is not None:
        hot = [w for w in summary.get("engagement_warnings", []) if w.startswith("WARNING")]
        verdict += [f"Hot engagement: {w}" for w in hot]
        failed += [name for name in summary.get("engagement_failed", []) if name not in failed]
    if result.speed is not None:
        verdict += [f"At speed: {w}" for w in summary.get("speed_warnings", []) if w.startswith("WARNING")]
        failed += [name for name in summary.get("speed_failed", []) if name not in failed]
    if result.pack is not None:
        verdict += [f"Spline drag: {w}" for w in summary.get("pack_warnings", [])]
        failed += [name for name in summary.get("pack_failed", []) if name not in failed]
    if result.compression is not None:
        verdict += [f"Compression curve: {w}" for w in summary.get("curve_warnings", [])]
        failed += [name for name in summary.get("curve_failed", []) if name not in failed]
    study = evidence.mesh_study if evidence is not None else {}
    if study and not study.get("skipped") and not study.get("converged", True):
        failed.append("mesh convergence")
        words = f"WARNING: THE MESH STUDY IS NOT CONVERGED: {study.get('verdict', '')}".strip()
        summary["warnings"].append(words)
        verdict.append(words)
    if evidence is not None:
        missing = evidence.verification_origin.warning()
        if missing:                       # no evidence for the solver on this installation: say so
            summary["warnings"].append(missing)
            verdict.append("Evidence: " + missing[0].upper() + missing[1:] + ".")
        elif evidence.verification_rows and not evidence.verification_passed:
            failed.append("solver verification")
            words = "WARNING: THE SOLVER FAILS ITS VERIFICATION TABLE ON THIS INSTALLATION: do not rely on this run."
            summary["warnings"].append(words)
            verdict.append(words)
    if failed:
        verdict.append("Failed criteria: " + ", ".join(failed) + ".")
    summary["failed_criteria"] = failed
    summary["verdict"] = " ".join(verdict)


def summary_of(result: CaseResult, evidence: Evidence | None = None) -> dict:
    """summary.json of a run: every stage's keys, in stage order (declared in clutchfe.summary_keys)."""
    case, fe, mesh, comparison = result.case, result.solved.fe, result.solved.mesh, result.comparison
    itf = case.interface
    summary = {
        "case_name": case.name, "kind": case.kind, "input_sha256": case.input_sha256,
        "section_file": case.flat().get("section_file.path"), "section_file_sha256": case.section_file_sha256,
        "version": __version__, "friction_coefficient": itf.friction_coefficient, "friction_surfaces": itf.friction_surfaces,
        "semi_cone_angle_deg": itf.semi_cone_angle, "inner_radius_mm": itf.inner_radius,
        "outer_radius_mm": itf.outer_radius, "axial_force_N": case.load.axial_force,
    }
    for key in ("torque_fe_Nm", "torque_uniform_pressure_Nm", "torque_uniform_wear_Nm", "capacity_position",
                "effective_radius_mm", "radius_uniform_pressure_mm", "radius_uniform_wear_mm",
                "peak_pressure_MPa", "mean_pressure_MPa", "contact_area_fraction", "engagement_force_N"):
        summary[key] = comparison[key]
    summary["axial_force_balance_error"] = max(abs(comparison.axial_force_balance_error),
                                               fe.axial_force_balance_error)
    summary["dofs"] = fe.dofs
    summary["solve_seconds"] = round(fe.timings.get("total", 0.0), 4)
    allowable = case.lining.allowable_pressure
    plain = comparison.as_dict()
    summary.update({k: v for k, v in plain.items() if k not in summary and k not in ("surfaces", "warnings")})
    summary["surfaces"] = plain["surfaces"]
    summary["peak_pressure_over_allowable"] = comparison.peak_pressure_MPa / allowable if allowable else None
    summary["rigid_approach_mm"] = fe.rigid_approach
    summary["contact_iterations"] = fe.contact_iterations
    summary["mesh"] = {"nodes": int(len(mesh.points)), "triangles": int(len(mesh.triangles)),
                       "element_order": case.mesh.element_order}
    summary["warnings"] = list(case.warnings) + list(comparison.warnings)
    if result.tilt is not None:
        from .analyses.tilt import tilt_summary_keys        # start-up (module docstring)
        summary.update(tilt_summary_keys(result.tilt))
    if result.wear is not None:
        from .analyses.wear import wear_summary     # start-up (module docstring)
        keys = wear_summary(result.wear, case)
        summary["warnings"] += keys.pop("wear_warnings")
        summary.update(keys)
    if result.engagement is not None:
        from .analyses.engagement import engagement_summary     # start-up (module docstring)
        keys = engagement_summary(result.engagement, case)
        summary["warnings"] += keys["engagement_warnings"]
        summary.update(keys)
    if result.speed is not None:
        from .analyses.speed import speed_summary       # start-up (module docstring)
        keys = speed_summary(result.speed, case)
        summary["warnings"] += keys["speed_warnings"]
        summary.update(keys)
    if result.pack is not None:
        from .analyses.pack import pack_summary     # start-up (module docstring)
        keys = pack_summary(result.pack, case, result.hand)
        summary["warnings"] += [w for w in keys["pack_warnings"] if w.startswith("WARNING")]
        summary.update(keys)
    if result.compression is not None:
        from .analyses.compression import compression_summary     # start-up (module docstring)
        keys = compression_summary(result.compression, case)
        summary["warnings"] += [w for w in keys["curve_warnings"] if w.startswith("WARNING")]
        summary.update(keys)
    summary["versions"] = versions()
    summary["caution"] = CAUTION
    if evidence is not None:
        from .verification.store import verification_summary        # start-up (module docstring)
        summary["mesh_study"] = evidence.mesh_study
        summary["verification"] = verification_summary(evidence.verification_rows, evidence.verification_passed)
    _run_verdict(summary, result, evidence)
    return summary


def __getattr__(name: str):
    # PEP 562: ``plan.SolveService``, the solve service a caller hands to analyse and run_case, stays
    # reachable here without importing the FE stack with this module (start-up, module docstring)
    if name == "SolveService":
        from .solve import SolveService
        return SolveService
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
