"""The stages in order: case -> section -> mesh -> FE solve -> comparison -> results folder.

Each stage takes and returns plain data; this module only wires them and writes files.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from rich.table import Table

from .case import Case, CaseError
from .errors import PhysicsError
from .results import atomic_folder, versions, write_json

CAUTION = ("Clutches can hurt people when they slip or burst. These results support, and never replace, "
           "the applicable codes, the manufacturer's data and the judgement of a licensed engineer.")


def section_of(case: Case):
    from .geometry import GeometryError, build_section
    try:
        return build_section(case)
    except GeometryError as exc:
        raise CaseError(exc.problems) from None


def print_check(case: Case, section, console) -> None:
    itf = case.interface
    table = Table(title=f"case {case.name!r} ({case.kind}) is valid", show_header=False)
    table.add_row("friction surface", f"r1 = {itf.inner_radius:g} mm, r2 = {itf.outer_radius:g} mm, "
                  f"semi-cone angle = {itf.semi_cone_angle:g} deg")
    table.add_row("friction", f"mu = {itf.friction_coefficient:g} on {itf.friction_surfaces} surface(s)")
    table.add_row("axial force", f"{case.load.axial_force:g} N ({case.load.application})")
    table.add_row("bodies", ", ".join(f"{b.label} ({b.role})" for b in section.bodies))
    table.add_row("lining", f"{case.lining.thickness:g} mm, E = {case.lining.youngs_modulus:g} MPa, "
                  f"on the {case.lining.bonded_to}")
    table.add_row("input sha256", case.input_sha256[:16] + "…")
    console.print(table)


def mesh_case(case: Case, section, folder: Path, console) -> None:
    from .geometry import mesh_section, section_picture, write_mesh
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


def fe_model_of(case: Case, section, mesh):
    """The FE stage's plain input: bodies, materials, supports, load and friction interfaces."""
    import numpy as np

    from .fem import ContactPair, FaceLoad, FeModel, RingLoad, SpringSupport

    regions = {reg.name: reg for reg in section.regions}
    body_index = {b.name: k for k, b in enumerate(section.bodies)}
    by_region = np.array([body_index[regions[n].body] for n in mesh.region_names])
    modulus = np.array([regions[n].youngs_modulus for n in mesh.region_names])
    poisson = np.array([regions[n].poissons_ratio for n in mesh.region_names])
    sup = case.support
    springs = sup.type == "springs"
    supports = [SpringSupport(section.support_axial_face, axial_stiffness=sup.axial_stiffness if springs else None,
                              radial_stiffness=0.0),
                SpringSupport(section.support_radial_face, axial_stiffness=0.0,
                              radial_stiffness=sup.radial_stiffness if springs else None)]
    force = -section.axial_force            # the pressed body moves along -z
    load = (RingLoad(section.load_face, section.ring_radius, force) if section.ring_radius is not None
            else FaceLoad(section.load_face, force))
    contacts = []
    for itf in section.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        along = np.clip(np.linalg.norm(mesh.points[pairs[:, 0]] - np.asarray(itf.start), axis=1)
                        / itf.slant_length, 0.0, 1.0)      # round-off must not make a gap negative
        gap = itf.gap_start + (itf.gap_end - itf.gap_start) * along
        contacts.append(ContactPair(itf.name, itf.face_a, itf.face_b, itf.normal_a, pairs.T.copy(), gap))
    return FeModel(
        points=mesh.points.T.copy(), triangles=mesh.triangles[:, :3].T.copy(),
        element_body=by_region[mesh.triangle_region], element_youngs_modulus=modulus[mesh.triangle_region],
        element_poissons_ratio=poisson[mesh.triangle_region], body_names=[b.name for b in section.bodies],
        body_axially_free=[b.role != "supported" for b in section.bodies],
        faces={k: v[:, :2].T.copy() for k, v in mesh.faces.items()}, supports=supports, loads=[load],
        contacts=contacts, element_order=case.mesh.element_order)


@dataclass
class SolvedCase:
    """Everything one axisymmetric solve produced, for later stages (wear-in, reports, studies)."""

    case: Case
    section: object
    mesh: object
    model: object           # fem.FeModel
    solver: object          # fem.ContactSolver: condensed once, reusable for new gaps and load levels
    fe: object              # fem.FeResult
    hand: object            # comparison.HandCapacity
    result: dict            # comparison.compare(...)
    tilt: object = None     # tilt.TiltResult when the case has an axis tilt or radial offset


# Extra analyses of a run: each takes (solved case, summary dict, scratch results folder), adds
# summary keys and writes its files there.  ANALYSES run before the standard files are written,
# REPORTS after (they may read every file of the folder).
ANALYSES: list = []
REPORTS: list = []


def hand_of(case: Case):
    from .comparison import hand_capacity
    itf = case.interface
    return hand_capacity(itf.inner_radius, itf.outer_radius, itf.semi_cone_angle, itf.friction_coefficient,
                         itf.friction_surfaces, case.load.axial_force)


def solved_case(case: Case, section=None, mesh=None) -> SolvedCase:
    """Mesh (unless given), condense, solve and compare."""
    from . import fem
    from .comparison import compare
    from .geometry import mesh_section

    section = section if section is not None else section_of(case)
    mesh = mesh if mesh is not None else mesh_section(section, order=1)
    if case.misalignment.axis_tilt or case.misalignment.radial_offset:
        from .tilt import solve_tilted
        try:
            t = solve_tilted(case, section, mesh)
        except fem.ContactError as exc:
            raise PhysicsError(str(exc)) from None
        return SolvedCase(case, section, mesh, None, t.solver, t.fe, hand_of(case), t.result, tilt=t)
    model = fe_model_of(case, section, mesh)
    try:
        solver = fem.ContactSolver(model)
        fe = solver.solve()
    except fem.ContactError as exc:
        raise PhysicsError(str(exc)) from None
    hand = hand_of(case)
    result = compare(fe.interfaces, hand, case.requirement.required_torque, case.requirement.service_factor)
    return SolvedCase(case, section, mesh, model, solver, fe, hand, result)


def solve_case(case: Case, section=None, mesh=None):
    """Mesh (unless given), solve and compare: returns (mesh, FeResult, comparison dict)."""
    solved = solved_case(case, section, mesh)
    return solved.mesh, solved.fe, solved.result


def run_case(case: Case, section, folder: Path, console) -> dict:
    from rich.progress import Progress

    from . import outputs
    from .geometry import mesh_section

    with Progress(transient=True, console=console) as progress:
        task = progress.add_task("meshing the section", total=4)
        mesh = mesh_section(section, order=1)
        progress.update(task, advance=1, description=f"solving the contact ({len(mesh.points)} nodes)")
        solved = solved_case(case, section, mesh)
        progress.update(task, advance=1, description="writing results")
        summary = summary_of(case, solved.mesh, solved.fe, solved.result)
        with atomic_folder(folder) as tmp:
            for analysis in ANALYSES:
                analysis(solved, summary, tmp)
            outputs.write_all(tmp, case, section, solved.mesh, solved.fe, solved.result, summary,
                              axisymmetric=solved.tilt is None)
            progress.update(task, advance=1, description="reports")
            for report in REPORTS:
                report(solved, summary, tmp)
        progress.update(task, advance=1)
    outputs.print_table(console, case, summary, folder)
    return summary


def summary_of(case: Case, mesh, fe, result: dict) -> dict:
    from . import __version__

    itf = case.interface
    summary = {
        "case_name": case.name, "kind": case.kind, "input_sha256": case.input_sha256, "version": __version__,
        "friction_coefficient": itf.friction_coefficient, "friction_surfaces": itf.friction_surfaces,
        "semi_cone_angle_deg": itf.semi_cone_angle, "inner_radius_mm": itf.inner_radius,
        "outer_radius_mm": itf.outer_radius, "axial_force_N": case.load.axial_force,
    }
    for key in ("torque_fe_Nm", "torque_uniform_pressure_Nm", "torque_uniform_wear_Nm", "capacity_position",
                "effective_radius_mm", "radius_uniform_pressure_mm", "radius_uniform_wear_mm",
                "peak_pressure_MPa", "mean_pressure_MPa", "contact_area_fraction", "engagement_force_N"):
        summary[key] = result[key]
    summary["axial_force_balance_error"] = max(abs(result["axial_force_balance_error"]),
                                               fe.axial_force_balance_error)
    summary["dofs"] = fe.dofs
    summary["solve_seconds"] = round(fe.timings.get("total", 0.0), 4)
    allowable = case.lining.allowable_pressure
    summary.update({k: v for k, v in result.items() if k not in summary and k != "surfaces"})
    summary["surfaces"] = result["surfaces"]
    summary["peak_pressure_over_allowable"] = (result["peak_pressure_MPa"] / allowable if allowable else None)
    summary["rigid_approach_mm"] = fe.rigid_approach
    summary["contact_iterations"] = fe.contact_iterations
    summary["mesh"] = {"nodes": int(len(mesh.points)), "triangles": int(len(mesh.triangles)),
                       "element_order": case.mesh.element_order}
    summary["warnings"] = list(case.warnings) + list(result.get("warnings", []))
    summary["versions"] = versions()
    summary["caution"] = CAUTION
    return summary


def _tilt_files(solved: SolvedCase, summary: dict, folder: Path) -> None:
    if solved.tilt is not None:
        from .tilt import add_tilt_to_run
        add_tilt_to_run(solved.tilt, summary, folder)


def _register_stages() -> None:
    # imported here: the stage modules import this module
    from .report import add_report_to_run
    from .wear import add_wear_to_run
    ANALYSES.append(_tilt_files)
    ANALYSES.append(add_wear_to_run)
    REPORTS.append(add_report_to_run)


_register_stages()
