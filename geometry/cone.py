"""Cone clutch section: inner (male) cone with rim, web and hub; outer cup with wall, back web and hub.

Coordinates: the friction face runs from (r1, 0) to (r2, H), H = (r2 − r1)/tan α, so
the cone opens towards +z.  The inner cone is pushed along −z into the cup; the
cup's hub is held by the housing (axially on its back face, radially in its bore).
The bodies' end faces are normal to the axis; the lining's thickness is measured
normal to the friction face and its two ends follow ``lining.end_shape`` (see
:func:`_bond_ends`): normal to the axis (a parallelogram, the default and the
original section), normal to the face (a rectangle) or a 45° chamfer (a trapezoid).
The carrier's face runs exactly from one bond end to the other.
"""
from __future__ import annotations

import math

from ._sketch import Sketch
from .section import Body, FrictionInterface, GeometryError, Section, check_section

CONE_KEYS = ("cone.rim_thickness", "cone.web_thickness", "cone.bore_radius", "cone.hub_outer_radius",
             "cone.hub_length")
CUP_KEYS = ("cup.wall_thickness", "cup.face_overrun", "cup.web_thickness", "cup.bore_radius",
            "cup.hub_outer_radius", "cup.hub_length")


def _bond_ends(r1, r2, height, cos_a, sin_a, t, side, shape):
    """The two ends of the lining's bond line, (at r1's end, at r2's end).

    The friction face runs from (r1, 0) to (r2, height) along d = (sin α, cos α); the bond is the
    face moved by t along m = side·(cos α, −sin α), from the face into the lining (side = −1: the
    lining sits on the cone, +1: on the cup).  The lining is the four-corner region face, end, bond,
    end, so the mesher's structured quad (face and bond opposite, same node count) fits every shape.
    """
    if shape == "normal_to_axis":          # ends in the planes z = 0 and z = height: a parallelogram
        shift = side * (t / cos_a)          # the original expression, so the default is point for point today's
        return (r1 + shift, 0.0), (r2 + shift, height)
    mr, mz = side * t * cos_a, -side * t * sin_a
    # A 45° chamfer through the whole thickness keeps the region four-cornered (a partial chamfer
    # would add a fifth corner and break the structured quad).  The cut makes the friction face one
    # thickness shorter than the bond at each end; the friction face must stay r1 … r2 (it is the
    # face that touches the mate, node for node), so the bond runs on one thickness past each face
    # end instead (trapezoid) and the carrier's face grows with it.
    run = t if shape == "chamfer" else 0.0       # "normal_to_face": square ends, a rectangle
    return ((r1 + mr - run * sin_a, mz - run * cos_a), (r2 + mr + run * sin_a, height + mz + run * cos_a))


def cone_section(case) -> Section:
    itf, lin, cone, cup = case.interface, case.lining, case.cone, case.cup
    r1, r2 = itf.inner_radius, itf.outer_radius
    alpha = math.radians(itf.semi_cone_angle)
    cos_a, tan_a = math.cos(alpha), math.tan(alpha)
    height = (r2 - r1) / tan_a
    on_cone = lin.bonded_to == "cone"
    shift_cone = lin.thickness / cos_a if on_cone else 0.0      # radial offset of the steel face
    shift_cup = 0.0 if on_cone else lin.thickness / cos_a
    rim = cone.rim_thickness / cos_a
    wall = cup.wall_thickness / cos_a
    gap = cup.face_overrun
    shape = lin.end_shape
    bond_r1, bond_r2 = _bond_ends(r1, r2, height, cos_a, math.sin(alpha), lin.thickness, -1.0 if on_cone else 1.0,
                                  shape)
    rim_bottom = bond_r1[1] if on_cone else 0.0          # the cone's rim ends where its bond ends

    hub_bottom = height + cone.web_thickness - cone.hub_length
    rim_inner_at_hub = r1 - shift_cone - rim + max(hub_bottom, rim_bottom) * tan_a
    cup_face_at_web = r1 + shift_cup - gap * tan_a
    cup_outer_at_web = r1 + shift_cup + wall - (gap + cup.web_thickness) * tan_a
    problems = []
    if cone.hub_length <= cone.web_thickness:
        problems.append(f"cone.hub_length = {cone.hub_length:g}: the hub must be longer than the web; "
                        f"allowed: value > cone.web_thickness = {cone.web_thickness:g} mm")
    if hub_bottom <= -gap:
        limit = height + cone.web_thickness + gap
        problems.append(f"cone.hub_length = {cone.hub_length:g}: the inner cone hub would hit the cup's web; "
                        f"allowed: value < {limit:.4g} mm")
    if cone.hub_outer_radius >= rim_inner_at_hub:
        problems.append(f"cone.hub_outer_radius = {cone.hub_outer_radius:g}: the hub must stay inside the "
                        f"rim; allowed: cone.bore_radius < value < {rim_inner_at_hub:.4g} mm")
    if cup.hub_length <= cup.web_thickness:
        problems.append(f"cup.hub_length = {cup.hub_length:g}: the hub must be longer than the web; "
                        f"allowed: value > cup.web_thickness = {cup.web_thickness:g} mm")
    limit = min(cup_face_at_web, cup_outer_at_web)
    if cup.hub_outer_radius >= limit:
        problems.append(f"cup.hub_outer_radius = {cup.hub_outer_radius:g}: the hub must stay inside the "
                        f"cup wall at its web; allowed: cup.bore_radius < value < {limit:.4g} mm")
    if bond_r1[1] <= -gap:
        problems.append(f"lining.end_shape = {shape!r}: the lining's bond would reach {-bond_r1[1]:.3g} mm "
                        f"axially past the narrow end of the face, into the cup's back web (cup.face_overrun = "
                        f"{gap:g} mm); allowed: cup.face_overrun > {-bond_r1[1]:.4g} mm, or "
                        f"lining.end_shape = 'normal_to_axis'")
    if on_cone and bond_r2[1] >= height + cone.web_thickness:
        rise = bond_r2[1] - height
        problems.append(f"lining.end_shape = {shape!r}: the lining's bond would reach {rise:.3g} mm axially past "
                        f"the wide end of the face, through the inner cone's web (cone.web_thickness = "
                        f"{cone.web_thickness:g} mm); allowed: cone.web_thickness > {rise:.4g} mm, or "
                        f"lining.end_shape = 'normal_to_axis'")
    if problems:
        raise GeometryError(problems)

    sk = Sketch()
    steel_cone = (cone.youngs_modulus, cone.poissons_ratio)
    steel_cup = (cup.youngs_modulus, cup.poissons_ratio)
    lining = (lin.youngs_modulus, lin.poissons_ratio)
    layers = case.mesh.lining_layers
    face_a, face_b = "s1_cone_face", "s1_cup_face"

    # inner cone: rim face (bond or friction face), web back face (load), bore, hub
    top = height + cone.web_thickness
    steel_r1, steel_r2 = (bond_r1, bond_r2) if on_cone else ((r1, 0.0), (r2, height))
    back_face = [(steel_r2[0], top)]
    ring = case.load.ring_radius if case.load.application == "ring" else None
    if ring is not None:
        back_face.append((ring, top))
    corners = [steel_r1, steel_r2, *back_face, (cone.bore_radius, top),
               (cone.bore_radius, hub_bottom), (cone.hub_outer_radius, hub_bottom),
               (cone.hub_outer_radius, height), (r2 - shift_cone - rim, height), (steel_r1[0] - rim, rim_bottom)]
    names = [None if on_cone else face_a, None, *["cone_back_face"] * len(back_face), "cone_bore",
             None, None, None, None, None]
    sk.region("cone", "cone", steel_cone, corners, names, keys=CONE_KEYS)
    if on_cone:
        sk.region("cone_lining", "cone", lining,
                  [(r1, 0.0), (r2, height), bond_r2, bond_r1],
                  [face_a, None, None, None], lining_layers=layers, keys=("lining.thickness",))

    # cup: face (bond or friction face) runs on past r1 by the overrun, then web, hub and outer wall
    base = -gap - cup.hub_length
    cup_r1, cup_r2 = (bond_r1, bond_r2) if not on_cone else ((r1, 0.0), (r2, height))
    corners = [cup_r2, cup_r1, (cup_face_at_web, -gap),
               (cup.bore_radius, -gap), (cup.bore_radius, base), (cup.hub_outer_radius, base),
               (cup.hub_outer_radius, -gap - cup.web_thickness), (cup_outer_at_web, -gap - cup.web_thickness),
               (cup_r2[0] + wall, cup_r2[1])]
    names = [face_b if on_cone else None, None, None, "cup_bore", "cup_hub_back", None, None, None, None]
    sk.region("cup", "cup", steel_cup, corners, names, keys=CUP_KEYS)
    if not on_cone:
        sk.region("cup_lining", "cup", lining,
                  [(r2, height), (r1, 0.0), bond_r1, bond_r2],
                  [face_b, None, None, None], lining_layers=layers, keys=("lining.thickness",))

    mismatch = math.radians(case.misalignment.cone_angle_mismatch)
    slant = (r2 - r1) / math.sin(alpha)
    opening = slant * math.sin(abs(mismatch))
    interface = FrictionInterface(
        name="s1", face_a=face_a, face_b=face_b, body_a="cone", body_b="cup",
        normal_a=(cos_a, -math.sin(alpha)), lining_body="cone" if on_cone else "cup",
        start=(r1, 0.0), end=(r2, height),
        gap_start=opening if mismatch < 0 else 0.0, gap_end=opening if mismatch > 0 else 0.0)
    refine = [sk.point(b, r, z) for b in ("cone", "cup") for r, z in ((r1, 0.0), (r2, height))]
    lining_body = "cone" if on_cone else "cup"
    refine += [sk.point(lining_body, r, z) for r, z in (bond_r1, bond_r2)]
    section = Section(
        kind="cone", points=sk.points, regions=sk.regions,
        bodies=[Body("cone", "pressed", "inner cone"), Body("cup", "supported", "outer cup")],
        interfaces=[interface], load_face="cone_back_face", axial_force=case.load.axial_force,
        ring_radius=ring, support_axial_face="cup_hub_back", support_radial_face="cup_bore",
        semi_cone_angle=itf.semi_cone_angle, refine_points=refine, lining_end_shape=shape)
    check_section(section)
    return section
