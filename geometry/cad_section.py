"""Read the planar faces of a STEP, IGES or BREP file into a :class:`~geometry._outline.Drawing`
through gmsh's OpenCASCADE kernel (``gmsh.model.occ.importShapes``).

Each face is one outline (a face with a hole is refused: a region is one closed loop).  Its
boundary curves are sampled at equal parameter steps, doubled until no chord is farther than the
chord tolerance from the curve at its middle; lines are their two ends.  STEP and IGES carry
their own length unit, which OpenCASCADE converts to ``units`` (gmsh's Geometry.OCCTargetUnit);
a STEP file that declares another unit than ``units`` is refused.  BREP has no unit: ``units``
says what it is.
"""
from __future__ import annotations

import contextlib
import os
import re
import sys

import numpy as np

from ._outline import Drawing, Piece, Strand, chain, outline_of
from .section import GeometryError
from .section_spec import SectionFileSpec

OCC_UNITS = {"mm": "MM", "m": "M", "inch": "INCH"}
STEP_UNITS = {"mm": r"SI_UNIT\s*\(\s*\.MILLI\.\s*,\s*\.METRE\.\s*\)", "m": r"SI_UNIT\s*\(\s*\$\s*,\s*\.METRE\.\s*\)",
              "inch": r"CONVERSION_BASED_UNIT\s*\(\s*'INCH'"}
MAX_DOUBLINGS = 12                     # at most 4096 chords per curve


@contextlib.contextmanager
def _quiet_stdout():
    """OpenCASCADE's readers print to the process's standard output; hold it for the import only."""
    sys.stdout.flush()
    try:
        fd = os.dup(1)
    except OSError:                    # no standard output at all
        yield
        return
    try:
        with open(os.devnull, "w") as null:
            os.dup2(null.fileno(), 1)
        yield
    finally:
        os.dup2(fd, 1)
        os.close(fd)


def step_declared_units(path) -> set[str]:
    """The length units a STEP file's text declares (empty if it says none this reader knows)."""
    text = path.read_text(encoding="latin-1", errors="replace")
    return {unit for unit, pattern in STEP_UNITS.items() if re.search(pattern, text, flags=re.I)}


def read_cad(spec: SectionFileSpec) -> Drawing:
    import gmsh       # here: gmsh starts a C++ runtime (as in the mesher)

    source = spec.path.name
    drawing = Drawing(source=source, kind="cad")
    if spec.path.suffix.lower() in (".step", ".stp"):
        declared = step_declared_units(spec.path)
        if declared and spec.units not in declared:
            raise GeometryError([f"section file {source}: the STEP file declares its lengths in "
                                 f"{' and '.join(sorted(declared))}, but units = {spec.units!r}; OpenCASCADE "
                                 f"converts the file's own unit, so say units = {sorted(declared)[0]!r}"])
        drawing.file_units = f"the file declares {', '.join(sorted(declared))}" if declared else ""
    third = ({"x", "y", "z"} - {spec.axis.r.lstrip("-"), spec.axis.z.lstrip("-")}).pop()
    gmsh.initialize(readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.option.setString("Geometry.OCCTargetUnit", OCC_UNITS[spec.units])
        gmsh.model.add("section_file")
        try:
            with _quiet_stdout():
                gmsh.model.occ.importShapes(str(spec.path))
            gmsh.model.occ.synchronize()
        except Exception as exc:          # gmsh raises a bare Exception with OpenCASCADE's message
            raise GeometryError([f"section file {source}: OpenCASCADE cannot read it ({exc})"]) from None
        problems = []
        if gmsh.model.getEntities(3):
            problems.append(f"section file {source}: holds {len(gmsh.model.getEntities(3))} solid(s); export the "
                            f"(r, z) section as planar faces (a sketch or a face in one plane)")
        names = _physical_names(gmsh)
        faces = [tag for _, tag in gmsh.model.getEntities(2)]
        if not faces and not problems:
            problems.append(f"section file {source}: holds no face; the section is read from planar faces")
        samples: dict[int, int] = {}
        plane = None
        for face in faces:
            name = gmsh.model.getEntityName(2, face)
            label = f"face {face}" + (f" ({name!r})" if name else "")
            if gmsh.model.getType(2, face) != "Plane":
                problems.append(f"section file {source}: {label} is a {gmsh.model.getType(2, face)} surface, not "
                                f"a plane; the section is a planar face in the (r, z) plane")
                continue
            _, loops = gmsh.model.occ.getCurveLoops(face)
            if len(loops) != 1:
                problems.append(f"section file {source}: {label} has {len(loops) - 1} hole(s); a region is one "
                                f"closed outline (split the face so that no hole remains)")
                continue
            strands = []
            for curve in loops[0]:
                curve = abs(int(curve))
                if curve not in samples:
                    xyz = _sample(gmsh, curve, spec.chord_tolerance / spec.scale)
                    level = xyz[:, "xyz".index(third)]
                    plane = level[0] if plane is None else plane
                    if np.abs(level - plane).max() > spec.tolerance / spec.scale:
                        problems.append(f"section file {source}: curve {curve} of {label} leaves the plane "
                                        f"{third} = {plane:.6g} of the section (it reaches {third} = "
                                        f"{level[np.argmax(np.abs(level - plane))]:.6g}); the axis keys say the "
                                        f"section lies in the {spec.axis.r.lstrip('-')}{spec.axis.z.lstrip('-')} plane")
                    curve_names = tuple(n for n in (gmsh.model.getEntityName(1, curve), *names.get((1, curve), ()))
                                        if n)
                    drawing.pieces.append(Piece(points=spec.to_section(xyz), where=f"curve {curve} of {label}",
                                                names=curve_names, index=curve))
                    samples[curve] = len(drawing.pieces) - 1
                strands.append(Strand([samples[curve]], [False]))
            loops_found, chain_problems = chain(strands, drawing.pieces, spec.tolerance,
                                                f"{label} of {source}")
            problems += chain_problems
            for loop in loops_found:
                drawing.outlines.append(outline_of([p for p, _ in loop], [f for _, f in loop], drawing.pieces,
                                                   f"{label} of {source}",
                                                   names=tuple(n for n in (name, *names.get((2, face), ())) if n),
                                                   index=face))
    finally:
        gmsh.finalize()
    if problems:
        raise GeometryError(problems)
    return drawing


def _physical_names(gmsh) -> dict[tuple[int, int], list[str]]:
    out: dict[tuple[int, int], list[str]] = {}
    for dim, tag in gmsh.model.getPhysicalGroups():
        name = gmsh.model.getPhysicalName(dim, tag)
        for entity in gmsh.model.getEntitiesForPhysicalGroup(dim, tag):
            out.setdefault((dim, int(entity)), []).append(name)
    return out


def _sample(gmsh, curve: int, chord: float) -> np.ndarray:
    """Points (k, 3) along a curve in its parameter's direction: a line's two ends; otherwise equal
    parameter steps, doubled until every chord's middle is within ``chord`` of the curve."""
    lo, hi = (float(v[0]) for v in gmsh.model.getParametrizationBounds(1, curve))
    if gmsh.model.getType(1, curve) == "Line":
        return np.asarray(gmsh.model.getValue(1, curve, [lo, hi]), float).reshape(-1, 3)
    n = 4
    for _ in range(MAX_DOUBLINGS):
        t = lo + (hi - lo) * np.arange(2 * n + 1) / (2 * n)
        xyz = np.asarray(gmsh.model.getValue(1, curve, t.tolist()), float).reshape(-1, 3)
        ends, mids = xyz[0::2], xyz[1::2]
        chords = 0.5 * (ends[:-1] + ends[1:])
        if np.linalg.norm(mids - chords, axis=1).max() <= chord:
            return ends
        n *= 2
    return xyz
