"""A user's own (r, z) section read from a file into the same :class:`Section` plain data the
parametric builders make, so that meshing and every later stage work on it unchanged.

* DXF (:mod:`geometry.dxf_section`, with ezdxf): closed outlines, one per region, on the layers
  the spec maps to regions; LINE/ARC loops are chained; arcs become chords within the chord
  tolerance.
* STEP, IGES, BREP (:mod:`geometry.cad_section`, through gmsh's OpenCASCADE kernel): planar faces
  in the (r, z) plane, one per region, their boundary curves sampled to the chord tolerance.

Then :func:`geometry.section_assembly.assemble` checks the outlines (closed, simple, not across the
axis, a clutch's size), makes the regions of one body meet point for point, finds the named faces
(:mod:`geometry.section_faces`) and builds each friction face's :class:`FrictionInterface`; the
two sides must coincide at zero load within the tolerance in this version.  Every problem is one
line of a :class:`GeometryError` saying what was found where.

The demo files and their specs: ``examples/make_demo_sections.py`` (it draws them) and
``tests/test_section_file.py`` (it reads them); docs/section-files.md lists every spec field.
"""
from __future__ import annotations

from .section import GeometryError, Section
from .section_assembly import assemble
from .section_spec import (UNITS, Axis, BodySpec, FaceSpec, FrictionSpec, RegionSpec, Select, SectionFileSpec,
                           spec_problems)


def read_drawing(spec: SectionFileSpec):
    """The file's outlines and curves as read (a :class:`geometry._outline.Drawing`), before assembly."""
    problems = spec_problems(spec)
    if problems:
        raise GeometryError(problems)
    if spec.file_kind == "dxf":
        from .dxf_section import read_dxf      # ezdxf only for DXF files
        return read_dxf(spec)
    from .cad_section import read_cad          # gmsh's OpenCASCADE only for STEP/IGES/BREP
    return read_cad(spec)


def read_section(spec: SectionFileSpec, axial_force: float, ring_radius: float | None = None) -> Section:
    """The section the file draws, as :class:`Section` plain data.

    Parameters
    ----------
    spec : SectionFileSpec
        The file, its units and axis, the regions, bodies and named faces.
    axial_force : float
        W in N on the load face (along −z), as the case's ``load.axial_force``.
    ring_radius : float, optional
        The ring-load radius in mm (a corner is put on the load face there); None: uniform load.

    Raises
    ------
    GeometryError
        One message per problem (the file, its outlines, the named faces, the friction faces).
    """
    drawing = read_drawing(spec)
    return assemble(spec, drawing, axial_force, ring_radius)


__all__ = ["UNITS", "Axis", "BodySpec", "FaceSpec", "FrictionSpec", "RegionSpec", "Select", "SectionFileSpec",
           "read_drawing", "read_section", "spec_problems"]
