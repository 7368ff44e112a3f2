"""The stages in order: case -> section -> mesh -> FE solve -> comparison -> results folder.

Each stage takes and returns plain data; this module only wires them and writes files.
"""
from __future__ import annotations

import math
from pathlib import Path

from rich.table import Table

from .case import Case, CaseError
from .results import atomic_folder, versions, write_json

CAUTION = ("Clutches can hurt people when they slip or burst. These results support, and never replace, "
           "the applicable codes, the manufacturer's data and the judgement of a licensed engineer.")


class PhysicsError(RuntimeError):
    """The case is valid input but cannot be solved as asked (exit 3)."""


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
    with atomic_folder(folder) as tmp:
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


def run_case(case: Case, section, folder: Path, console) -> None:
    raise PhysicsError("the contact solve is not available yet")
