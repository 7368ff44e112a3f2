"""Axisymmetric elasticity against closed forms (no contact)."""
import numpy as np
import pytest

from clutchfe.fem import FaceLoad, SpringSupport, solve
from clutchfe.verification.solids import LAME_BORE, LAME_OUTER, LAME_PRESSURE, lame_closed_form, lame_model

from tests.helpers.models import Section, graded

E, NU = 210000.0, 0.3


def lame_cylinder(order):
    # the verify suite's cylinder (clutchfe/verification/solids.py), checked here in more detail
    s, model = lame_model(order)
    return s, model, (LAME_BORE, LAME_OUTER, LAME_PRESSURE)


@pytest.mark.parametrize("order", [2, 1])
def test_lame_thick_cylinder_plane_strain(order):
    s, model, (a, b, p) = lame_cylinder(order)
    res = solve(model)
    r = s.points[0]
    # Lame, internal pressure: sigma_r = A - B/r^2, sigma_t = A + B/r^2 with
    # A = p a^2/(b^2-a^2), B = p a^2 b^2/(b^2-a^2); plane strain
    # u_r = (1+nu)/E ((1-2nu) A r + B/r)  (Timoshenko & Goodier, Theory of
    # Elasticity 1970, §28 thick cylinder)
    A = p * a**2 / (b**2 - a**2)
    B = p * a**2 * b**2 / (b**2 - a**2)
    u_exact = (1 + NU) / E * ((1 - 2 * NU) * A * r + B / r)
    hoop_exact = A + B / r**2
    assert np.allclose(lame_closed_form(r)[0], u_exact, rtol=1e-12)     # the verify suite's reference
    assert np.max(np.abs(res.displacement[0] / u_exact - 1)) < 5e-3
    # no axial motion in plane strain, up to discretisation error
    assert np.max(np.abs(res.displacement[1])) < 1e-3 * np.max(np.abs(u_exact))
    tol = 5e-3 if order == 2 else 3e-2   # P1: constant-strain triangles, stress one order less accurate
    assert np.max(np.abs(res.stress["tt"] / hoop_exact - 1)) < tol
    assert np.max(np.abs(res.stress["rr"] - (A - B / r**2))) < tol * p
    # axial stress of plane strain: nu (sigma_r + sigma_t) = 2 nu A
    assert np.max(np.abs(res.stress["zz"] - 2 * NU * A)) < tol * p


def test_spring_support_takes_total_stiffness():
    # uniform axial load on a column standing on an elastic face of total
    # stiffness k: the stress is uniaxial and uniform, so the face sinks by P/k
    # (equilibrium of the Robin term k/A int u dA; common practice for housings)
    s = Section().add_block("col", graded(0.0, 5.0, 5.0, 0.5), np.linspace(0, 4, 5))
    k, P = 2.0e5, 3000.0
    model = s.model([E], [NU], [False],
                    supports=[SpringSupport("col_bottom", axial_stiffness=k, radial_stiffness=0.0)],
                    loads=[FaceLoad("col_top", -P)])
    res = solve(model)
    bottom = s.vertices_on("col_bottom")
    assert np.allclose(res.displacement[1, bottom], -P / k, rtol=1e-8)
    area = np.pi * 5.0**2
    assert np.allclose(res.stress["zz"], -P / area, rtol=1e-8, atol=1e-8 * P / area)
