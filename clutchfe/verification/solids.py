"""Elasticity without contact: the thick cylinder under internal pressure."""
from __future__ import annotations

import numpy as np

from ..fem import FacePressure, SpringSupport, solve
from .checks import Check, relative
from .meshes import BlockSection, graded

STEEL_E, STEEL_NU = 210000.0, 0.3       # MPa, -; any linear material serves, steel for familiarity
LAME_SOURCE = "Timoshenko & Goodier, Theory of Elasticity 1970, §28 (Lamé)"


LAME_BORE, LAME_OUTER, LAME_PRESSURE = 10.0, 20.0, 100.0        # mm, mm, MPa


def lame_model(order: int = 2):
    """Thick steel cylinder under internal pressure, ends held axially (plane strain): (blocks, FeModel)."""
    a, b = LAME_BORE, LAME_OUTER
    s = BlockSection().add_block("cyl", graded(a, a + 1.0, b, 0.125, growth=1.15), np.linspace(0.0, 2.0, 5))
    # both ends held axially, free radially: eps_zz = 0, the plane-strain cylinder of the closed form
    supports = [SpringSupport("cyl_bottom", axial_stiffness=None, radial_stiffness=0.0),
                SpringSupport("cyl_top", axial_stiffness=None, radial_stiffness=0.0)]
    model = s.model([STEEL_E], [STEEL_NU], [False], supports=supports,
                    loads=[FacePressure("cyl_inner", LAME_PRESSURE)], element_order=order)
    return s, model


def lame_closed_form(r, nu: float = STEEL_NU, E: float = STEEL_E):
    """Radial displacement, radial and hoop stress of the plane-strain cylinder at radii r:
    σ_r = A − B/r², σ_θ = A + B/r², A = p a²/(b²−a²), B = p a² b²/(b²−a²),
    u_r = (1+ν)/E ((1−2ν) A r + B/r)  (Timoshenko & Goodier 1970, §28)."""
    a, b, p = LAME_BORE, LAME_OUTER, LAME_PRESSURE
    A = p * a**2 / (b**2 - a**2)
    B = p * a**2 * b**2 / (b**2 - a**2)
    return (1 + nu) / E * ((1 - 2 * nu) * A * r + B / r), A - B / r**2, A + B / r**2


def lame_cylinder() -> list[Check]:
    """Plane-strain thick cylinder (a = 10 mm, b = 20 mm) under 100 MPa internal pressure, P2."""
    s, model = lame_model(2)
    res = solve(model)
    r = s.points[0]
    u_exact, _, hoop_exact = lame_closed_form(r)
    bore = np.argmin(r)
    worst_u = int(np.argmax(np.abs(res.displacement[0] / u_exact - 1)))
    worst_hoop = int(np.argmax(np.abs(res.stress["tt"] / hoop_exact - 1)))
    name = "Lamé thick cylinder"
    return [
        relative(name, "radial displacement at the bore [mm]", res.displacement[0, bore], u_exact[bore], 5e-3,
                 LAME_SOURCE),
        relative(name, f"radial displacement, worst node (r = {r[worst_u]:.2f} mm) [mm]",
                 res.displacement[0, worst_u], u_exact[worst_u], 5e-3, LAME_SOURCE),
        relative(name, f"hoop stress, worst node (r = {r[worst_hoop]:.2f} mm) [MPa]",
                 res.stress["tt"][worst_hoop], hoop_exact[worst_hoop], 5e-3, LAME_SOURCE),
    ]
