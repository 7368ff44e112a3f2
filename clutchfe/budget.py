"""The largest mesh a run may need, refused before meshing when the case's controls ask for more.

Every case ``clutchfe check`` accepts solves within bounded time and memory on the 2-core
machine the tool is made for.  The bound is the triangle count the mesh controls imply
(:func:`clutchfe.geometry.estimate_triangles`, within −15 %/+5 % of gmsh's on the demo
cases), on the run's finest mesh: the mesh study's last mesh is ``ratio⁴`` times the run's.
Measured on the 2-core machine (one solve, P2, after the in-place Schur read of fem/condense.py;
docs/limits.md):

* axisymmetric: 100 000 triangles (estimated) took 15.8 s CPU and 1.7 GB, 60 000 took 8.6 s and
  1.0 GB, so 100 000 keeps one solve under ~1.8 GB;
* tilt or offset (the (r, θ) contact grid): 15 500 triangles took 1.2 GB and about 1.1 s CPU per
  angular division before the shared harmonic ordering, so 20 000 keeps it under ~1.6 GB;
* contact nodes: the condensed contact holds dense matrices of their number squared: 4660 took
  1.76 GB (a 0.1 mm lining), 6160 took 2.6 GB (a 40-face pack).
"""
from __future__ import annotations

from .case import Case
from .errors import CaseError
from .geometry import Section, estimate_triangles, face_node_count

MAX_TRIANGLES = 100000          # one axisymmetric solve
MAX_TRIANGLES_TILTED = 20000    # one solve on the (r, θ) grid
# the contact solve condenses the stiffness onto the normal displacement of every friction-face
# node (fem/condense.py): dense m × m arrays; measured 1.76 GB peak at m = 4660 (a 0.1 mm lining)
MAX_CONTACT_NODES = 4700


def finest_factor(case: Case) -> float:
    """How many times the run's own mesh its finest mesh has (the mesh study's last one)."""
    return case.verification.refinement_ratio ** 4 if case.verification.mesh_study else 1.0


def check_mesh_budget(case: Case, section: Section, with_mesh_study: bool = True) -> int:
    """The estimated triangles of the run's mesh; :class:`CaseError` (exit 2) when its finest is too big.

    ``with_mesh_study=False`` checks this one mesh only (the solve service, which meshes the
    mesh study's finer cases one by one).
    """
    estimate = estimate_triangles(section)
    factor = finest_factor(case) if with_mesh_study else 1.0
    tilted = bool(case.misalignment.axis_tilt or case.misalignment.radial_offset)
    limit = MAX_TRIANGLES_TILTED if tilted else MAX_TRIANGLES
    finest = estimate * factor
    if finest <= limit:
        _check_contact_nodes(case, section, factor)
        return estimate
    where = (f"the mesh study's finest mesh (ratio {case.verification.refinement_ratio:g}⁴ = {factor:.3g} × the "
             f"run's {estimate:.3g} triangles)" if factor > 1 else "the run's mesh")
    solve = "a tilt or offset solve on the (r, θ) grid" if tilted else "an axisymmetric solve"
    raise CaseError([
        f"mesh.interface_element_size = {case.mesh.interface_element_size:g}: with mesh.edge_element_size = "
        f"{case.mesh.edge_element_size:g}, mesh.element_size = {case.mesh.element_size:g} mm and mesh.refinement "
        f"= {case.mesh.refinement:g} the mesh controls give about {finest:.3g} triangles on {where}; allowed: at "
        f"most {limit} for {solve} (about 1.8 GB on a 2-core machine): coarser sizes, a lower refinement"
        + (", or verification.mesh_study = false" if factor > 1 else "")
        + " (mesh sizes not given follow lining.thickness and the face width: clutchfe keys)"])


def contact_nodes(section: Section, order: int) -> int:
    """Nodes on the friction faces, both sides of every interface (the condensed unknowns)."""
    per_side = [face_node_count(itf.slant_length, section.face_size, section.edge_size)[0]
                for itf in section.interfaces]
    return sum(2 * ((n - 1) * order + 1) for n in per_side)


def _check_contact_nodes(case: Case, section: Section, factor: float) -> None:
    # along the faces the node count grows with the square root of the triangle factor (one direction)
    nodes = contact_nodes(section, case.mesh.element_order) * factor ** 0.5
    if nodes <= MAX_CONTACT_NODES:
        return
    faces = len(section.interfaces)
    raise CaseError([
        f"mesh.interface_element_size = {case.mesh.interface_element_size:g}: on {faces} friction face"
        f"{'s' if faces > 1 else ''} (interface.friction_surfaces = {case.interface.friction_surfaces}) it gives "
        f"about {nodes:.3g} contact nodes on the run's finest mesh; allowed: at most {MAX_CONTACT_NODES} (the "
        f"contact solve holds dense matrices of their number squared, about 1.8 GB at the limit): a coarser "
        f"mesh.interface_element_size, mesh.element_order = 1"
        + (", or verification.mesh_study = false" if factor > 1 else "")])
