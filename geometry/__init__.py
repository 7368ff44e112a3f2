"""Parametric (r, z) clutch sections, meshed with gmsh and read through meshio.

Public API: :func:`build_section` (case -> Section), :func:`mesh_section`
(Section -> SectionMesh), :func:`write_mesh` and :func:`section_picture`.
A new case kind is one function ``case -> Section`` added to ``SECTION_BUILDERS``.
"""
from .case_section import section_from_file
from .cone import cone_section
from .mesh_size import estimate_triangles
from .mesher import SectionMesh, face_node_count, mesh_section
from .output import section_picture, write_mesh
from .plates import plate_section
from .section import Body, FrictionInterface, GeometryError, Region, Section, check_section
from .section_file import SectionFileSpec, read_section

SECTION_BUILDERS = {"cone": cone_section, "plate": plate_section}


def build_section(case) -> Section:
    """The section of a validated case, with the case's mesh controls attached."""
    # a case that names its own drawing is read from it; otherwise its kind's parametric builder
    section = section_from_file(case) if case.section_file is not None else SECTION_BUILDERS[case.kind](case)
    # mesh.refinement scales every size and count alike, so refined meshes are geometrically similar
    refinement = case.mesh.refinement
    section.face_size = case.mesh.interface_element_size / refinement
    section.edge_size = case.mesh.edge_element_size / refinement
    section.body_size = case.mesh.element_size / refinement
    section.refinement = refinement
    for region in section.regions:
        if region.lining_layers:
            region.lining_layers = max(1, round(region.lining_layers * refinement))
    section.element_order = case.mesh.element_order
    for itf in section.interfaces:
        itf.matching_nodes = case.mesh.friction_face_nodes == "matching"
    return section


__all__ = ["Body", "FrictionInterface", "GeometryError", "Region", "Section", "SectionMesh",
           "SECTION_BUILDERS", "build_section", "check_section", "cone_section", "estimate_triangles", "face_node_count",
           "mesh_section", "plate_section", "read_section", "section_from_file", "SectionFileSpec", "section_picture", "write_mesh"]
