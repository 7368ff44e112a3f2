"""Plate clutch section: counter plate, friction disc(s), separator plates, pressure plate.

The stack is built upwards along z from the back face of the counter plate
(flywheel side, or the end plate of a pack).  With ``friction_surfaces = 2N`` there
are N discs and N − 1 separator plates between them.  The pressure plate is
pushed along −z; discs and separators float axially (splines), their position
set by the contact forces alone.

The friction faces are normal to the axis, so a lining end normal to the axis and one
normal to the face are the same square end (``lining.end_shape`` "normal_to_axis" or
"normal_to_face": a rectangle r1 … r2, the original section); "chamfer" cuts each end at
45° through the whole thickness (a trapezoid, see :func:`_lining`).
"""
from __future__ import annotations

from ._sketch import Sketch
from .section import Body, FrictionInterface, Section, check_section


def _plate(sk: Sketch, body, material, inner, outer, z0, z1, bottom_at, top_at, bottom, top, keys, top_ring=None):
    """A rectangle whose bottom and top edges are split at the radii bottom_at, top_at (the ends of a
    friction face or of a lining's bond) and at a ring-load radius on top."""
    bottom_pts = sorted({inner, *bottom_at, outer})
    top_pts = sorted({inner, *top_at, outer} | ({top_ring} if top_ring else set()), reverse=True)
    corners = [(r, z0) for r in bottom_pts] + [(r, z1) for r in top_pts]
    names = []
    for r, _ in zip(bottom_pts, bottom_pts[1:]):
        names.append(bottom.get(r))
    names.append(f"{body}_rim")                          # outer rim (an outer spline's edge)
    for r, _ in zip(top_pts, top_pts[1:]):
        names.append(top.get(r, top.get("*")))
    names.append(f"{body}_bore")                         # bore (an inner spline's edge)
    sk.region(body, body, material, corners, names, keys=keys)


def _lining(sk, body, material, r1, r2, z0, z1, face_name, face_on_top, layers, bond):
    """The lining between z0 and z1: friction face r1 … r2, bond bond[0] … bond[1] (= r1 … r2 for
    square ends; one thickness wider at each end for a 45° chamfer)."""
    # A chamfer through the whole thickness keeps the region four-cornered, as the mesher's structured
    # quad needs (face and bond opposite, same node count).  It makes the friction face shorter than the
    # bond; the friction face must stay r1 … r2 (the face that touches the mate, node for node), so
    # the bond is the wider side and the carrier's face is split at the bond's ends instead.
    if face_on_top:
        corners = [(r2, z1), (r1, z1), (bond[0], z0), (bond[1], z0)]
    else:
        corners = [(r1, z0), (r2, z0), (bond[1], z1), (bond[0], z1)]
    sk.region(f"{body}_lining_{'top' if face_on_top else 'bottom'}", body, material, corners,
              [face_name, None, None, None], lining_layers=layers, keys=("lining.thickness",))


def plate_section(case) -> Section:
    itf, lin = case.interface, case.lining
    r1, r2 = itf.inner_radius, itf.outer_radius
    n_discs = case.disc_count
    on_disc = lin.bonded_to == "disc"
    t = lin.thickness
    lining = (lin.youngs_modulus, lin.poissons_ratio)
    layers = case.mesh.lining_layers
    run = t if lin.end_shape == "chamfer" else 0.0      # the bond's run past each face end
    bond = (r1 - run, r2 + run)
    sk = Sketch()
    bodies, interfaces = [], []
    ring = case.load.ring_radius if case.load.application == "ring" else None

    # stack order bottom-up: counter plate, disc 1, separator 1, disc 2, …, disc N, pressure plate
    stack = [("counter_plate", "counter_plate", "counter plate" if n_discs == 1 else "end plate")]
    for k in range(1, n_discs + 1):
        stack.append((f"disc{k}", "disc", f"friction disc {k}" if n_discs > 1 else "friction disc"))
        if k < n_discs:
            stack.append((f"separator{k}", "separator_plate", f"separator plate {k}"))
    stack.append(("pressure_plate", "pressure_plate", "pressure plate"))

    z = 0.0
    surface = 0
    for pos, (body, table, label) in enumerate(stack):
        params = getattr(case, table)
        is_disc = table == "disc"
        carries_lining = is_disc == on_disc
        thickness = params.core_thickness if is_disc else params.thickness
        inner = params.core_inner_radius if is_disc else params.inner_radius
        outer = params.core_outer_radius if is_disc else params.outer_radius
        material = (params.youngs_modulus, params.poissons_ratio)
        keys = tuple(f"{table}.{k}" for k in (("core_thickness", "core_inner_radius", "core_outer_radius")
                                               if is_disc else ("thickness", "inner_radius", "outer_radius")))
        below = f"s{surface}_{body}_face" if pos > 0 else None
        above = f"s{surface + 1}_{body}_face" if pos < len(stack) - 1 else None
        lining_below = carries_lining and below is not None
        lining_above = carries_lining and above is not None
        if lining_below:
            _lining(sk, body, lining, r1, r2, z, z + t, below, False, layers, bond)
            z += t
        bottom_names = {r1: None if lining_below else below}
        top_names = {r2: None if lining_above else above}     # top edges run towards the axis
        if pos == 0:
            bottom_names = {r: "counter_plate_back" for r in (inner, r1, r2)}
        if body == "pressure_plate":
            top_names = {"*": "pressure_plate_back"}
        _plate(sk, body, material, inner, outer, z, z + thickness, bond if lining_below else (r1, r2),
               bond if lining_above else (r1, r2), bottom_names, top_names, keys,
               top_ring=ring if body == "pressure_plate" else None)
        if pos == 0:
            sk.regions[-1].edge_names[-1] = "counter_plate_bore"     # its radial seat
        z += thickness
        if lining_above:
            _lining(sk, body, lining, r1, r2, z, z + t, above, True, layers, bond)
            z += t
        role = "supported" if pos == 0 else ("pressed" if body == "pressure_plate" else "floating")
        bodies.append(Body(body, role, label))
        if above is not None:
            surface += 1
            upper = stack[pos + 1][0]
            interfaces.append(FrictionInterface(
                name=f"s{surface}", face_a=above, face_b=f"s{surface}_{upper}_face", body_a=body, body_b=upper,
                normal_a=(0.0, 1.0), lining_body=body if lining_above else upper,
                start=(r1, z), end=(r2, z)))

    # coning of the pressure plate opens the gap of the surface it presses on
    coning = case.misalignment.coning
    last = interfaces[-1]
    last.gap_start, last.gap_end = (0.0, coning) if coning >= 0 else (-coning, 0.0)

    refine = []
    for itf_ in interfaces:
        for body in (itf_.body_a, itf_.body_b):
            refine += [sk.point(body, r, itf_.start[1]) for r in (r1, r2)]
    section = Section(
        kind="plate", points=sk.points, regions=sk.regions, bodies=bodies, interfaces=interfaces,
        load_face="pressure_plate_back", axial_force=case.load.axial_force, ring_radius=ring,
        support_axial_face="counter_plate_back", support_radial_face="counter_plate_bore",
        semi_cone_angle=90.0, refine_points=refine, lining_end_shape=lin.end_shape)
    check_section(section)
    return section
