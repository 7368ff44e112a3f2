"""The section of a case that names its own drawing (``[section_file]``): read, then held to the case.

The hand methods and the report work on the case's design values (``interface.inner_radius``,
``outer_radius``, ``semi_cone_angle``, ``friction_surfaces``); the FE stage works on the drawing.
A review needs both to describe the same clutch, so each friction face of the drawing is checked
against them here, and a difference is refused with what the drawing has (exit status 2): the user
copies the drawn values or corrects the drawing.  The case's initial-gap keys
(``misalignment.cone_angle_mismatch`` for a cone, ``misalignment.coning`` for a plate) open the
drawn faces exactly as they open the parametric ones.
"""
from __future__ import annotations

import math

from .section import GeometryError, Section
from .section_file import read_section

ANGLE_TOLERANCE_DEG = 0.01      # a drawn angle 0.01° off the case's changes tan α by < 0.1 % at 10°


def radius_tolerance(r2: float, tolerance: float) -> float:
    """How far a drawn face end may lie from the case's radius: 0.01 % of r2 (a review reads radii
    to 0.1 mm on a 1 m clutch), at least 10 × the drawing's own point tolerance and 0.005 mm."""
    return max(1e-4 * r2, 10.0 * tolerance, 0.005)


def section_from_file(case) -> Section:
    """The drawn section of ``case`` (``case.section_file`` is set), checked against its design values."""
    spec = case.section_file
    itf_keys = case.interface
    ring = case.load.ring_radius if case.load.application == "ring" else None
    section = read_section(spec, axial_force=case.load.axial_force, ring_radius=ring)
    r1, r2 = itf_keys.inner_radius, itf_keys.outer_radius
    tol = radius_tolerance(r2, spec.tolerance)
    problems = []
    if len(section.interfaces) != itf_keys.friction_surfaces:
        problems.append(f"interface.friction_surfaces = {itf_keys.friction_surfaces}: the drawing has "
                        f"{len(section.interfaces)} friction face(s) "
                        f"({', '.join(i.name for i in section.interfaces)}); give the drawn number")
    for itf in section.interfaces:
        inner, outer = sorted((itf.start[0], itf.end[0]))
        for key, case_value, drawn in (("inner_radius", r1, inner), ("outer_radius", r2, outer)):
            if abs(drawn - case_value) > tol:
                problems.append(f"interface.{key} = {case_value:g} mm: friction face {itf.name!r} of the drawing "
                                f"runs from r = {inner:.4f} to {outer:.4f} mm (allowed difference {tol:.3g} mm); "
                                f"give the drawn value, or correct the drawing")
    alpha = itf_keys.semi_cone_angle
    if abs(section.semi_cone_angle - alpha) > ANGLE_TOLERANCE_DEG:
        what = "a plate's faces are normal to the axis (90°)" if case.kind == "plate" else "give the drawn angle"
        problems.append(f"interface.semi_cone_angle = {alpha:g}°: the drawing's friction faces are at "
                        f"{section.semi_cone_angle:.4f}° (allowed difference {ANGLE_TOLERANCE_DEG:g}°); {what}")
    if case.kind == "cone" and section.semi_cone_angle > 80.0 + ANGLE_TOLERANCE_DEG:
        problems.append(f"kind = 'cone': the drawing's friction faces are at {section.semi_cone_angle:.4f}°; "
                        f"a cone is 2–80°, give kind = 'plate'")
    if problems:
        raise GeometryError(problems)
    section.kind = case.kind
    _open_gaps(case, section)
    return section


def _open_gaps(case, section: Section) -> None:
    """The case's initial gaps on the drawn faces, as the parametric builders put them."""
    mis = case.misalignment
    if case.kind == "cone" and mis.cone_angle_mismatch:
        mismatch = math.radians(mis.cone_angle_mismatch)
        for itf in section.interfaces:
            slant = math.dist(itf.start, itf.end)
            opening = slant * math.sin(abs(mismatch))
            itf.gap_start, itf.gap_end = (opening, 0.0) if mismatch < 0 else (0.0, opening)
    if case.kind == "plate" and mis.coning:
        pressed = next(b.name for b in section.bodies if b.role == "pressed")
        for itf in section.interfaces:
            if pressed in (itf.body_a, itf.body_b):
                itf.gap_start, itf.gap_end = (0.0, mis.coning) if mis.coning >= 0 else (-mis.coning, 0.0)


__all__ = ["ANGLE_TOLERANCE_DEG", "radius_tolerance", "section_from_file"]
