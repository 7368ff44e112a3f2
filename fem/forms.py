"""Weak forms of axisymmetric linear elasticity in the (r, z) half-plane.

Every integral carries the ring weight 2 pi r so that forces and areas are
those of the full revolution (N, mm^2), not per radian.
"""
import numpy as np
from skfem import BilinearForm, LinearForm


def lame(E, nu):
    lam = E * nu / ((1.0 + nu) * (1.0 - 2.0 * nu))
    mu = E / (2.0 * (1.0 + nu))
    return lam, mu


def strain(u, r):
    """[eps_rr, eps_zz, eps_tt, gamma_rz]; the hoop term u_r / r is what
    distinguishes the ring from a plane section."""
    du = u.grad
    return (du[0, 0], du[1, 1], u[0] / r, du[0, 1] + du[1, 0])


def stress(eps, E, nu):
    lam, mu = lame(E, nu)
    tr = eps[0] + eps[1] + eps[2]
    return (lam * tr + 2.0 * mu * eps[0],
            lam * tr + 2.0 * mu * eps[1],
            lam * tr + 2.0 * mu * eps[2],
            mu * eps[3])


@BilinearForm
def elasticity(u, v, w):
    r = w.x[0]
    s = stress(strain(u, r), w.E, w.nu)
    e = strain(v, r)
    return 2.0 * np.pi * r * (s[0] * e[0] + s[1] * e[1] + s[2] * e[2] + s[3] * e[3])


@BilinearForm
def face_spring(u, v, w):
    """Robin term k/A int u_d v_d dA: a uniform face displacement d meets the
    total force k d, i.e. ``k`` is the face's total stiffness."""
    return w.k_area * u[w.d] * v[w.d] * 2.0 * np.pi * w.x[0]


@LinearForm
def axial_traction(v, w):
    return w.t * v[1] * 2.0 * np.pi * w.x[0]


@LinearForm
def normal_pressure(v, w):
    # pressure acts against the outward facet normal
    return -w.p * (w.n[0] * v[0] + w.n[1] * v[1]) * 2.0 * np.pi * w.x[0]


@LinearForm
def ring_area(v, w):
    """Tributary ring area of each scalar node: row sums of the weighted
    boundary mass matrix, so a uniform pressure is recovered exactly."""
    return v * 2.0 * np.pi * w.x[0]


@LinearForm
def axial_moment(v, w):
    """int u_z dV, to average a body's axial displacement."""
    return v[1] * 2.0 * np.pi * w.x[0]
